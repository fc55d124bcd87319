"""The model registry: one entry per model, each declaring its parameters once.

Add a model by writing a :class:`~network_models.models.base.Model` subclass in the family module it
belongs to and listing it in ``_CLASSES`` below; the generic tests then cover it automatically.
"""

from __future__ import annotations

from .base import Model, ModeNotSupportedError
from .chains import EightChain, ThreeChain
from .gaussian import Affine, ConstrainedJunction, MooneyRivlin, NeoHookean, Phantom
from .limited import Gent
from .tube import ExtendedTube, NonAffineTube, SlipTube

_CLASSES = (
    Affine, Phantom, EightChain, NonAffineTube, ExtendedTube, SlipTube,
    NeoHookean, MooneyRivlin, Gent, ConstrainedJunction, ThreeChain,
)

#: name -> model instance (models are stateless; parameters are passed per call)
MODELS: dict[str, Model] = {cls.name: cls() for cls in _CLASSES}


def get_model(name: str) -> Model:
    """The registered model called ``name`` (case and spaces forgiven); a clear error otherwise."""
    key = str(name).strip().lower().replace(" ", "-").replace("_", "-")
    try:
        return MODELS[key]
    except KeyError:
        raise KeyError(
            f"no model called {name!r}; available: {', '.join(MODELS)}"
        ) from None


__all__ = ["MODELS", "Model", "ModeNotSupportedError", "get_model"]

"""netstretch's computational core: rubber-network models, pure numpy/scipy, SI units inside.

    >>> from network_models import get_model, Network
    >>> net = Network(polymer="NR", nu=150.0, T=296.15)
    >>> m = get_model("eight-chain")
    >>> m.nominal_stress("uniaxial", [1.5, 2.0], net.model_params(m))   # Pa
"""

from .deformation import MODES, Mode, invariants, principal_stretches
from .langevin import inverse_langevin, langevin
from .models import MODELS, Model, ModeNotSupportedError, get_model
from .network import Network, get_polymer, guth_gold, polymers
from .params import Param, ParameterError

__version__ = "0.1.0"

__all__ = [
    "MODELS", "MODES", "Mode", "Model", "ModeNotSupportedError", "Network", "Param", "ParameterError",
    "get_model", "get_polymer", "guth_gold", "invariants", "inverse_langevin", "langevin",
    "polymers", "principal_stretches",
]

"""Design: from targets to a window of strand density ν, and what to change (see :mod:`.core`).

    >>> from network_models.design import design
    >>> r = design(["M100=1.7..1.9MPa", "lock>=6"], polymer="NR", temperature="23C", model="eight-chain")

Modules: :mod:`.targets` (the target grammar), :mod:`._scan` (private: the setup, the per-ν evaluator, the
grid scan, intersections, binding targets, compromise — every other module imports the scan from here),
:mod:`.core` (``design()``, ``DesignResult``), :mod:`.advice` (what to change in a measured compound),
:mod:`.map` (feasibility map and the report's HTML/SVG), :mod:`.compare` (several windows side by side: per
model, and along a second design variable).
"""

from ._scan import NU_RANGE, DesignSetup, Interval, TargetOutcome
from .compare import ModelWindows, compare_models, window_over
from .core import CAUTION, DesignResult, design
from .targets import Target, TargetError, parse_target, parse_targets

__all__ = ["NU_RANGE", "CAUTION", "DesignResult", "DesignSetup", "Interval", "ModelWindows", "Target",
           "TargetError", "TargetOutcome", "compare_models", "design", "parse_target", "parse_targets", "window_over"]

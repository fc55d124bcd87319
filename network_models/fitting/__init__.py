"""Fitting network models to lab curves, with uncertainty and plain-language diagnostics.

    >>> from network_models.fitting import fit
    >>> res = fit("eight-chain", curves)              # curves: list of TestCurve, one or several modes
    >>> res.params["mu"].value, res.params["mu"].ci95  # Pa, 95 % interval
    >>> res.predict("planar", [1.5, 2.0])              # fit one mode, predict another
    >>> res.warnings                                   # Notice objects: sentences with a .kind
    >>> derived(res, lambda v: get_model("eight-chain").small_strain_modulus(**v))  # value, 95 % interval

The package, in the order a fit runs through it:

``problem``      kinematics of all curves (once), start modulus, lock-aware bounds, coordinates, weights
``evaluate``     the model through its private pieces; the moduli it is linear in (unit responses cached)
``solver``       variable projection of the moduli; a small Levenberg–Marquardt loop; scipy as fallback
``uncertainty``  covariance, intervals, and :func:`derived` — the one delta method
``diagnostics``  the notices, computed once
``result``       :class:`FitResult`, :class:`ParamEstimate`, :class:`ModeStats`
``core``         :func:`fit`;  ``many``: :func:`fit_many`, :func:`fit_specimens` (the one orchestrator)

Method
------
* Least squares on the residual ``(model − data) / max(|data|, 2 % of the largest |stress| in that mode)``
  (``residual="relative"``, the default ``DEFAULT_RESIDUAL``: the small-strain points that fix G₀ and a soft
  mode get equal say) or ``model − data`` in Pa (``"absolute"``: the stiff high-stress points weigh most).
* Variable projection (Golub & Pereyra 1973, SIAM J. Numer. Anal. 10:413 [from memory]): every model here is
  linear in its moduli (checked numerically once per model), so the free moduli are solved exactly by a
  small bounded linear least squares for each trial of the other parameters; the optimiser only moves N,
  J_m, δ, κ … (tube and Mooney–Rivlin fits need no iteration at all) with a small Levenberg–Marquardt
  loop inside box bounds; scipy's ``least_squares`` (bounds folded into smooth transforms, as MINUIT and
  lmfit do) is the fallback.
* Start values from the data: G₀ from a neo-Hookean slope over 0.7 ≤ λ ≤ 1.5, ``model.guess(G₀)``, and for
  locking parameters seven candidates (1.05 … 8 ×) the value at which the largest data stretch
  reaches the lock.
* Finite extensibility: a locking parameter is bounded so that every data point stays inside the lock, so
  no prediction is NaN during the fit; a notice says when the optimum sits on or near that bound.
* Standard errors from the full Jacobian at the optimum, Student t with n − k degrees of freedom; for
  log-scaled parameters the interval is formed on the log scale.  AIC = n ln(RSS/n) + 2k,
  BIC = n ln(RSS/n) + k ln n (compare models only on the same curves and residual choice).
"""

from __future__ import annotations

from ..errors import FitError, Notice
from .core import fit
from .diagnostics import STRAIN_CRYSTALLISING
from .many import fit_many, fit_or_error, fit_specimens, specimen_groups
from .problem import DEFAULT_RESIDUAL, RESIDUALS, estimate_modulus
from .result import FitResult, ModeStats, ParamEstimate
from .solver import levenberg_marquardt
from .uncertainty import derived, derived_se

__all__ = ["DEFAULT_RESIDUAL", "RESIDUALS", "FitError", "FitResult", "ModeStats", "Notice", "ParamEstimate",
           "STRAIN_CRYSTALLISING", "derived",
           "derived_se", "estimate_modulus", "fit", "fit_many", "fit_or_error", "fit_specimens",
           "levenberg_marquardt", "specimen_groups"]

"""Physical constants and small statistical helpers used across the core — one definition of each.

R and the Celsius offset come from ``scipy.constants`` (CODATA); nothing else in the core writes 273.15
or 8.314 by hand.
"""

from __future__ import annotations

from functools import lru_cache

from scipy import constants as _c

#: molar gas constant, J/(mol·K) (scipy.constants, CODATA)
R: float = _c.R
#: 0 °C in kelvin (scipy.constants.zero_Celsius)
ZERO_CELSIUS: float = _c.zero_Celsius
#: the reference temperature a curve without one is assumed at: 23 °C (standard laboratory temperature,
#: common practice)
LAB_TEMPERATURE: float = ZERO_CELSIUS + 23.0


#: stretches of the trade moduli M100 and M300: nominal stress at 100 % and 300 % elongation, λ = 2 and 4
#: (docs/methods.md §trade-moduli) — the one definition
TRADE_MODULI: dict[str, float] = {"M100": 2.0, "M300": 4.0}

#: the caution every result that may feed a design decision carries — the one wording
CAUTION: str = ("Model results support design decisions; they do not replace validation testing of parts. "
                "For safety-relevant parts the applicable standards and licensed engineering practice govern.")

#: the project's method manual, cited by the report's reference list (every formula with its primary source)
METHOD_MANUAL_REFERENCE: str = ("netstretch method manual, docs/methods.md in the netstretch repository — every "
                                "model, correction and statistical procedure with its primary source, validity "
                                "range and check values")


def celsius(T_kelvin: float) -> float:
    return T_kelvin - ZERO_CELSIUS


def kelvin(T_celsius: float) -> float:
    return T_celsius + ZERO_CELSIUS


@lru_cache(maxsize=256)
def t_quantile(dof: int, level: float = 0.95) -> float:
    """Two-sided Student-t quantile for a ``level`` interval with ``dof`` degrees of freedom
    (scipy.stats.t.ppf((1 + level)/2, dof)); dof < 1 is clipped to 1."""
    return student_t_ppf(0.5 + level / 2.0, max(int(dof), 1))


# Student-t through scipy.special (the functions scipy.stats.t calls): the same numbers bit for bit
# (tests/test_benchmarks_fastpaths.py checks them against scipy.stats.t) without importing scipy.stats,
# which costs about half a second — most of a cold `netstretch compare`.
def student_t_ppf(q: float, dof: float) -> float:
    """Student-t quantile: ``scipy.stats.t.ppf(q, dof)``."""
    from scipy.special import stdtrit

    return float(stdtrit(dof, q))


def student_t_sf(x: float, dof: float) -> float:
    """Student-t upper tail: ``scipy.stats.t.sf(x, dof)``."""
    from scipy.special import stdtr

    return float(stdtr(dof, -x))


__all__ = ["CAUTION", "R", "ZERO_CELSIUS", "LAB_TEMPERATURE", "TRADE_MODULI", "celsius", "kelvin", "student_t_ppf",
           "student_t_sf", "t_quantile"]

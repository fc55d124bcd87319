"""Statistics of specimens: summaries, outlier flags and verdicts against a baseline — pure functions.

Specimens are the unit: a compound tested on five dumbbells gives five values of every quantity, and the
scatter between them — not the error of one fit — says how well the compound's value is known.

    >>> from network_models.statistics import summarize, verdict
    >>> s = summarize([0.61e6, 0.63e6, 0.60e6, 0.64e6, 0.62e6])      # n, mean, sd, median, ci95
    >>> v = verdict([0.66e6, 0.64e6, 0.65e6], [0.61e6, 0.63e6, 0.60e6])
    >>> v.verdict, v.percent, v.ci95, v.detectable

Conventions (stated once, used everywhere):

* Interval of a mean: mean ± t₀.₉₇₅,ₙ₋₁ · s/√n (Student t, n − 1 degrees of freedom).
* Difference of two means: Welch's interval, d ± t₀.₉₇₅,ν · √(s₁²/n₁ + s₂²/n₂), with the
  Welch–Satterthwaite degrees of freedom ν (Welch 1947, Biometrika 34:28; Satterthwaite 1946,
  Biometrics Bulletin 2:110).  Verdict ``different`` when that interval excludes zero (the same decision
  as Welch's two-sided t test at α = 0.05), else ``not distinguishable``; ``cannot judge`` when either side
  has fewer than two specimens — never a verdict from fit error alone.
* Smallest detectable difference at α = 0.05 (two-sided) and 80 % power:
  δ = (t₀.₉₇₅,ν + t₀.₈₀,ν) · √(s₁²/n₁ + s₂²/n₂) (Zar, Biostatistical Analysis, 4th ed. 1999, §8.4, the
  minimum detectable difference of the two-sample t test — from memory; checked in the tests against the
  power from the non-central t distribution).
* Outliers: modified z-score Mᵢ = 0.6745 (xᵢ − median)/MAD, flagged when |Mᵢ| > 3.5 (Iglewicz & Hoaglin,
  How to Detect and Handle Outliers, ASQC 1993).  A flag is a prompt to look at the specimen; excluding it
  is the user's decision, with a reason.
* Percentages are relative to the baseline mean (its uncertainty is not propagated into the % interval;
  the absolute interval is the exact Welch one).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .constants import student_t_ppf, student_t_sf, t_quantile

#: two-sided significance level of the verdicts
ALPHA = 0.05
#: power used for the smallest detectable difference
POWER = 0.80
#: modified z-score above which a specimen is flagged (Iglewicz & Hoaglin 1993)
OUTLIER_Z = 3.5
#: fewest values the MAD rule is applied to: with three or four, the MAD rests on one or two gaps and flags
#: ordinary scatter (a choice stated here, not from the source)
MIN_FOR_OUTLIERS = 5
#: 0.6745 = Φ⁻¹(0.75): makes the MAD a consistent estimate of σ for normal data (Iglewicz & Hoaglin 1993)
MAD_FACTOR = 0.6745

DIFFERENT = "different"
NOT_DISTINGUISHABLE = "not distinguishable"
CANNOT_JUDGE = "cannot judge"
VERDICTS = (DIFFERENT, NOT_DISTINGUISHABLE, CANNOT_JUDGE)

#: the wording of the verdicts, for summaries and reports (one place)
VERDICT_WORDING = (
    f"'{DIFFERENT}': the 95 % interval of the difference between specimen means (Welch) excludes zero; "
    f"'{NOT_DISTINGUISHABLE}': it includes zero — the difference is within the specimen-to-specimen scatter "
    "(it may still exist; see the smallest detectable difference); "
    f"'{CANNOT_JUDGE}': fewer than two specimens on one side, so the scatter is unknown.")


def _clean(values) -> np.ndarray:
    x = np.asarray([v for v in values if v is not None], dtype=float)
    return x[np.isfinite(x)]


@dataclass(frozen=True, kw_only=True)
class Summary:
    """Specimen statistics of one quantity: n, mean, sample sd (n − 1), median, the standard error of the
    mean and its 95 % interval (Student t, n − 1); sd/se/ci95 are None for n < 2 (scatter unknown)."""

    n: int
    mean: float | None
    sd: float | None
    median: float | None
    se: float | None
    ci95: tuple[float, float] | None

    @property
    def scatter_known(self) -> bool:
        return self.n >= 2

    @property
    def cv(self) -> float | None:
        """Coefficient of variation sd/|mean| (None when unknown)."""
        if self.sd is None or not self.mean:
            return None
        return self.sd / abs(self.mean)

    def to_dict(self) -> dict:
        return {"n": self.n, "mean": self.mean, "sd": self.sd, "median": self.median, "se": self.se,
                "ci95": None if self.ci95 is None else list(self.ci95),
                "scatter": "from specimens (Student t, n − 1)" if self.scatter_known else "scatter unknown (one "
                "specimen)" if self.n == 1 else "no specimen"}


def summarize(values, level: float = 0.95) -> Summary:
    """n, mean, sd, median and the ``level`` interval of the mean (Student t, n − 1) of ``values``
    (None/NaN left out)."""
    x = _clean(values)
    n = int(x.size)
    if n == 0:
        return Summary(n=0, mean=None, sd=None, median=None, se=None, ci95=None)
    mean, median = float(x.mean()), float(np.median(x))
    if n < 2:
        return Summary(n=1, mean=mean, sd=None, median=median, se=None, ci95=None)
    sd = float(x.std(ddof=1))
    se = sd / math.sqrt(n)
    half = t_quantile(n - 1, level) * se
    return Summary(n=n, mean=mean, sd=sd, median=median, se=se, ci95=(mean - half, mean + half))


def modified_z(values) -> list[float | None]:
    """Modified z-scores Mᵢ = 0.6745 (xᵢ − median)/MAD (Iglewicz & Hoaglin 1993); None for missing values;
    all zeros when the MAD is zero (half or more of the values equal: no robust scale to judge by) or when
    fewer than :data:`MIN_FOR_OUTLIERS` values are given."""
    vals = [None if v is None or not math.isfinite(float(v)) else float(v) for v in values]
    x = np.asarray([v for v in vals if v is not None], float)
    if x.size < MIN_FOR_OUTLIERS:
        return [None if v is None else 0.0 for v in vals]
    med = float(np.median(x))
    mad = float(np.median(np.abs(x - med)))
    if mad == 0:
        return [None if v is None else 0.0 for v in vals]
    return [None if v is None else MAD_FACTOR * (v - med) / mad for v in vals]


def outliers(values, threshold: float = OUTLIER_Z) -> list[int]:
    """Indices of values whose modified z-score exceeds ``threshold`` in size (needs n ≥ 3)."""
    return [i for i, z in enumerate(modified_z(values)) if z is not None and abs(z) > threshold]


def welch_dof(sd1: float, n1: int, sd2: float, n2: int) -> float:
    """Welch–Satterthwaite degrees of freedom of s₁²/n₁ + s₂²/n₂ (Welch 1947; Satterthwaite 1946)."""
    a, b = sd1 * sd1 / n1, sd2 * sd2 / n2
    den = (a * a / (n1 - 1) if n1 > 1 else 0.0) + (b * b / (n2 - 1) if n2 > 1 else 0.0)
    if den == 0:
        return float(n1 + n2 - 2)
    return (a + b) ** 2 / den


def _t(dof: float, level: float) -> float:
    """Two-sided Student-t quantile at a possibly non-integer dof (Welch)."""
    if float(dof).is_integer():
        return t_quantile(int(dof), level)
    return student_t_ppf(0.5 + level / 2.0, max(dof, 1.0))


def detectable_difference(se: float, dof: float, alpha: float = ALPHA, power: float = POWER) -> float:
    """Smallest true difference a two-sided test at ``alpha`` detects with probability ``power``:
    (t₁₋α/₂,ν + t_power,ν)·SE (Zar 1999, §8.4; from memory, checked against the non-central t in tests)."""
    dof = max(float(dof), 1.0)
    return (student_t_ppf(1.0 - alpha / 2.0, dof) + student_t_ppf(power, dof)) * se


@dataclass(frozen=True, kw_only=True)
class Verdict:
    """A compound against the baseline on one quantity (from specimen values)."""

    verdict: str
    n: int
    n_baseline: int
    difference: float | None  # mean − baseline mean, in the quantity's unit
    percent: float | None  # of the baseline mean
    ci95: tuple[float, float] | None  # of the difference (Welch), quantity's unit
    ci95_percent: tuple[float, float] | None
    dof: float | None
    detectable: float | None  # smallest detectable difference (α = 0.05, 80 % power), quantity's unit
    detectable_percent: float | None
    reason: str = ""

    def to_dict(self) -> dict:
        return {"verdict": self.verdict, "n": self.n, "n_baseline": self.n_baseline, "absolute": self.difference,
                "percent": self.percent, "ci95": None if self.ci95 is None else list(self.ci95),
                "ci95_percent": None if self.ci95_percent is None else list(self.ci95_percent),
                "welch_dof": self.dof, "detectable": self.detectable,
                "detectable_percent": self.detectable_percent, "reason": self.reason}


def verdict(values, baseline_values, level: float = 1.0 - ALPHA) -> Verdict:
    """Difference of the means of ``values`` and ``baseline_values`` with its Welch interval, the verdict
    and the smallest detectable difference (module docstring for the conventions)."""
    a, b = _clean(values), _clean(baseline_values)
    na, nb = int(a.size), int(b.size)
    if na == 0 or nb == 0:
        return Verdict(verdict=CANNOT_JUDGE, n=na, n_baseline=nb, difference=None, percent=None, ci95=None,
                       ci95_percent=None, dof=None, detectable=None, detectable_percent=None,
                       reason="no specimen value on one side")
    d = float(a.mean() - b.mean())
    base = float(b.mean())
    pct = d / abs(base) * 100.0 if base else None
    if na < 2 or nb < 2:
        who = "the compound" if na < 2 else "the baseline"
        return Verdict(verdict=CANNOT_JUDGE, n=na, n_baseline=nb, difference=d, percent=pct, ci95=None,
                       ci95_percent=None, dof=None, detectable=None, detectable_percent=None,
                       reason=f"{who} has one specimen: its scatter is unknown, so no verdict (a fit's own error is "
                       "not specimen scatter)")
    sa, sb = float(a.std(ddof=1)), float(b.std(ddof=1))
    se = math.sqrt(sa * sa / na + sb * sb / nb)
    dof = welch_dof(sa, na, sb, nb)
    if se == 0:  # identical specimens on both sides: any difference is exact
        v = DIFFERENT if d != 0 else NOT_DISTINGUISHABLE
        return Verdict(verdict=v, n=na, n_baseline=nb, difference=d, percent=pct, ci95=(d, d),
                       ci95_percent=None if pct is None else (pct, pct), dof=dof, detectable=0.0,
                       detectable_percent=0.0,
                       reason="no scatter at all on either side")
    half = _t(dof, level) * se
    ci = (d - half, d + half)
    v = DIFFERENT if (ci[0] > 0 or ci[1] < 0) else NOT_DISTINGUISHABLE
    mdd = detectable_difference(se, dof, 1.0 - level)
    scale = 100.0 / abs(base) if base else None
    return Verdict(verdict=v, n=na, n_baseline=nb, difference=d, percent=pct, ci95=ci,
                   ci95_percent=None if scale is None else (ci[0] * scale, ci[1] * scale), dof=dof, detectable=mdd,
                   detectable_percent=None if scale is None else mdd * scale)


def welch_p_value(values, baseline_values) -> float | None:
    """Two-sided p of Welch's t test of equal means (Welch 1947; the same decision as :func:`verdict`'s
    interval at α = 0.05); None when either side has fewer than two values or no scatter."""
    a, b = _clean(values), _clean(baseline_values)
    if a.size < 2 or b.size < 2:
        return None
    sa, sb = float(a.std(ddof=1)), float(b.std(ddof=1))
    se = math.sqrt(sa * sa / a.size + sb * sb / b.size)
    if se == 0:
        return None
    tstat = float(a.mean() - b.mean()) / se
    return float(2.0 * student_t_sf(abs(tstat), welch_dof(sa, int(a.size), sb, int(b.size))))


def holm_adjust(p_values) -> list[float | None]:
    """Holm's step-down adjusted p-values (Holm 1979, Scand. J. Statist. 6:65): sort the m p-values,
    p̃₍ᵢ₎ = max_{j ≤ i} min(1, (m − j + 1)·p₍ⱼ₎).  Rejecting where p̃ < α keeps the family-wise error rate —
    the chance of calling *any* quantity of the family different when none is — at most α, whatever the
    correlation between the quantities.  None entries (no test) stay None and do not count in m."""
    idx = [i for i, p in enumerate(p_values) if p is not None]
    m = len(idx)
    out: list[float | None] = [None] * len(p_values)
    running = 0.0
    for rank, i in enumerate(sorted(idx, key=lambda k: p_values[k])):
        running = max(running, min(1.0, (m - rank) * float(p_values[i])))
        out[i] = running
    return out


def combined_interval(summary: Summary, fit_se, level: float = 0.95) -> tuple[float, float] | None:
    """Interval of a compound's mean from specimen scatter *with* fit error: half-width
    t₀.₉₇₅,ₙ₋₁ · √(s²/n + Σseᵢ²/n²), seᵢ the fit standard error of each specimen's value.  Conservative: the
    scatter already holds part of the fit error.  None when the scatter is unknown (n < 2)."""
    if not summary.scatter_known:
        return None
    ses = [float(s) for s in (fit_se or []) if s is not None and math.isfinite(float(s))]
    fit_var = sum(s * s for s in ses) / (summary.n ** 2) if ses else 0.0
    assert summary.se is not None and summary.mean is not None  # scatter known: n ≥ 2
    half = t_quantile(summary.n - 1, level) * math.sqrt(summary.se ** 2 + fit_var)
    return (summary.mean - half, summary.mean + half)


__all__ = [
    "ALPHA", "CANNOT_JUDGE", "DIFFERENT", "MIN_FOR_OUTLIERS", "NOT_DISTINGUISHABLE", "OUTLIER_Z", "POWER",
    "Summary", "VERDICTS",
    "VERDICT_WORDING", "Verdict", "combined_interval", "detectable_difference", "modified_z", "outliers",
    "summarize", "verdict", "welch_dof", "welch_p_value", "holm_adjust",
]

"""Every table the app shows, formatted in one place (rows of strings in the session's display units) —
no Panel import.  States return core objects (FitResult, CrosslinkTable, SwellingEstimate); views pass them
here and put the HTML into panes.
"""

from __future__ import annotations

import html as _html
import re

import numpy as np

from network_models.errors import group_notices, merge_notices
from network_models.formatting import number as sig  # the report's formatter too

from .display_units import DisplayUnits

NOT_DETERMINED = "not determined"


def esc(x) -> str:
    return _html.escape(str(x))


def table_html(rows: list[dict], cls: str) -> str:
    """Rows of strings as an HTML table with the app's classes (cells escaped)."""
    if not rows:
        return ""
    head = "".join(f"<th>{esc(k)}</th>" for k in rows[0])
    body = "".join("<tr>" + "".join(f"<td>{esc(v)}</td>" for v in r.values()) + "</tr>" for r in rows)
    return f"<table class='ns-table {cls}'><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def _finite(*xs) -> bool:
    return all(x is not None and np.isfinite(x) for x in xs)


def _at_bound(model, p) -> bool:
    """The fitted value sits on a bound the model declares (the data do not fix it)."""
    decl = next((q for q in getattr(model, "params", ()) if q.name == p.name), None)
    if decl is None or p.fixed:
        return False
    return any(b is not None and np.isfinite(b) and abs(p.value - b) <= 1e-6 * max(abs(b), 1.0)
               for b in decl.bounds)


def _stress_param(p) -> bool:
    return (p.unit or "") == "Pa"


def parameter_rows(results: dict, units: DisplayUnits | None = None) -> list[dict]:
    """One row per fitted parameter with its 95 % interval; a value on a declared bound, or without an
    interval, reads 'not determined'.  Stress parameters follow the display unit."""
    units = units or DisplayUnits()
    rows = []
    for r in results.values():
        for p in r.params.values():
            is_stress = _stress_param(p)
            unit = units.stress if is_stress else (p.display_unit or p.unit)
            scale = p.display_scale or 1.0

            def conv(v, sc=scale, stress=is_stress):
                return units.s(v) if stress else v * sc

            lo, hi = p.ci95
            if p.fixed:
                value, ci = sig(conv(p.value), 4), "held fixed"
            elif _at_bound(r.model_obj, p):
                value, ci = NOT_DETERMINED, "ran to the edge of its allowed range: the data do not fix it"
            elif not _finite(lo, hi):
                value, ci = sig(conv(p.value), 4), NOT_DETERMINED
            else:
                value, ci = sig(conv(p.value), 4), f"{sig(conv(lo), 4)} … {sig(conv(hi), 4)}"
            rows.append({"model": r.title, "parameter": p.symbol or p.name, "meaning": p.meaning, "value": value,
                         "95 % interval": ci, "unit": "–" if unit in ("1", "") else unit})
        rows.append({"model": r.title, "parameter": "G₀", "meaning": "small-strain shear modulus (derived)",
                     "value": sig(units.s(r.small_strain_modulus), 4), "95 % interval": "see crosslink table",
                     "unit": units.stress})
    return rows


def fit_quality_rows(results: dict, units: DisplayUnits | None = None) -> list[dict]:
    """Fit statistics, apart from the parameter values: RMS residual per mode, AIC, points and parameters."""
    units = units or DisplayUnits()
    rows = []
    for r in results.values():
        row = {"model": r.title}
        for m, st in r.modes.items():
            row[f"RMS {m.value} ({units.stress})"] = sig(units.s(st.rms), 3)
        row.update({"AIC": f"{r.aic:.4g}", "points n": str(r.n), "parameters k": str(r.k)})
        rows.append(row)
    keys = []
    for row in rows:
        keys += [k for k in row if k not in keys]
    return [{k: row.get(k, "—") for k in keys} for row in rows]


def overall_rms(r) -> float:
    """Point-weighted RMS residual over every fitted mode, Pa (for the 'which fits best' chart)."""
    num = sum(st.n * st.rms**2 for st in r.modes.values())
    den = sum(st.n for st in r.modes.values())
    return float(np.sqrt(num / den)) if den else float("nan")


def crosslink_rows(t, units: DisplayUnits | None = None, rho: float | None = None) -> list[dict]:
    """The crosslink-density assumption table in the display density unit (intervals in brackets)."""
    units = units or DisplayUnits()
    du = units.density

    def num(v, d=4):
        return "—" if not _finite(v) else sig(units.d(v, rho), d) if units.d(v, rho) is not None else "—"

    def ci(c):
        if not c or not _finite(*c):
            return ""
        lo, hi = units.d(c[0], rho), units.d(c[1], rho)
        return "" if lo is None else f" ({sig(lo, 3)} … {sig(hi, 3)})"

    def mc(v, c):
        if not _finite(v):
            return "—"
        extra = f" ({sig(c[0] * 1000, 3)} … {sig(c[1] * 1000, 3)})" if c and _finite(*c) else ""
        return sig(v * 1000.0, 4) + extra

    return [{
        "assumption": r.label,
        f"strand density ν ({du})": num(r.nu) + ci(r.nu_ci),
        f"junction density μ_j = 2ν/f ({du})": num(r.junction_density) + ci(r.junction_ci),
        "M_c (g/mol)": mc(r.Mc, r.Mc_ci),
        "N": "—" if not _finite(r.N) else sig(r.N, 3),
        "assumes": r.assumes + (f" — {r.note}" if r.note else ""),
    } for r in t.rows]


def swelling_rows(est, units: DisplayUnits | None = None, rho: float | None = None) -> list[dict]:
    """The Flory–Rehner result rows (ν and μ_j with their χ ± 0.05 band) in the display density unit."""
    units = units or DisplayUnits()
    du = units.density

    def d(v, n=4):
        x = units.d(v, rho)
        return "—" if x is None or not np.isfinite(x) else sig(x, n)

    rows = []
    for r in est.rows():
        lo, hi = r["strand_density_band"]
        jlo, jhi = r["junction_density_band"]
        rows.append({"assumption": r["assumes"], f"strand density ν ({du})": d(r["strand_density"]),
                     "ν for χ ± 0.05": f"{d(hi, 3)} … {d(lo, 3)}" if lo is not None and hi is not None else "—",
                     f"junction density μ_j = 2ν/f ({du})": d(r["junction_density"]),
                     "μ_j for χ ± 0.05": f"{d(jhi, 3)} … {d(jlo, 3)}" if jlo is not None and jhi is not None else "—",
                     "M_c (g/mol)": sig(r["Mc"] * 1000.0, 4)})
    return rows


# ----- warnings, grouped ----------------------------------------------------------------------------
#: headings of the notice kinds the core uses (errors.Notice.kind); other kinds show their key
KIND_TITLES = {
    "extrapolated-mode": "Extrapolated modes",
    "lock-reached": "Near the locking stretch",
    "at-bound": "Parameters the data do not fix",
    "not-identifiable": "Parameters the data do not fix",
    "unstable": "Stability",
    "cleanup": "Data clean-up",
    "fit-failed": "Models not fitted",
    "note": "Notes",
}
# Fallback while the core still returns plain strings for this warning (drop once every fit returns
# Notice(kind="extrapolated-mode", subject=<mode>)).
_EXTRAPOLATED = re.compile(r"no (\w+) data were fitted")


def _extrapolated_mode(n) -> str | None:
    """The test mode an 'extrapolated mode' notice is about — read from its sentence first: a notice said of a
    model or compound (``errors.about``) carries that name as its subject, not the mode (issue #20)."""
    m = _EXTRAPOLATED.search(str(n))
    if m:
        return m.group(1)
    if getattr(n, "kind", None) == "extrapolated-mode":
        subject = getattr(n, "subject", None)
        return subject if subject in {"uniaxial", "equibiaxial", "planar"} else "other"
    return None


def grouped_warnings(notices) -> dict[str, list[str]]:
    """Notices grouped under readable headings; every 'no X data: extrapolation' notice — one per model,
    compound and mode — becomes one line naming the modes; exact repeats are shown once."""
    modes, rest = [], []
    for n in notices:
        mode = _extrapolated_mode(n)
        if mode is None:
            rest.append(n)
        elif mode not in modes:
            modes.append(mode)
    out: dict[str, list[str]] = {}
    if modes:
        named = " or ".join(m for m in modes if m != "other") or "some modes"
        out[KIND_TITLES["extrapolated-mode"]] = [f"no {named} data: those predictions are extrapolations"]
    for kind, items in group_notices(rest).items():
        title = KIND_TITLES.get(kind, kind.replace("-", " ").capitalize())
        lines = out.setdefault(title, [])
        for line in merge_notices(items):  # the same sentence from several models: one line naming them
            if line not in lines:
                lines.append(line)
    return out


def warnings_html(groups: dict[str, list[str]]) -> str:
    if not groups:
        return "<div class='ns-small ns-ok'>No warnings from the fits.</div>"
    parts = [f"<div class='ns-warn-group'><b>{esc(title)}</b><ul>" + "".join(f"<li>{esc(x)}</li>" for x in lines)
             + "</ul></div>" for title, lines in groups.items()]
    return "<div class='ns-small'><b>Warnings in plain words</b>" + "".join(parts) + "</div>"


def preview_rows(f, n: int = 4, units: DisplayUnits | None = None) -> list[dict]:
    """The first ``n`` points of each curve of one loaded file."""
    units = units or DisplayUnits()
    rows = []
    for c in f.curves:
        for lam, P in list(zip(c.stretch, c.stress, strict=True))[:n]:
            shown = (("elongation (%)", f"{units.x(lam):.2f}") if units.elongation  # (λ − 1)·100 %, issue #21
                     else ("stretch λ", f"{lam:.4f}"))
            rows.append({"curve": c.name, "mode": c.mode.value, shown[0]: shown[1],
                         f"nominal stress ({units.stress})": sig(units.s(P), 4)})
    return rows


def file_rows(files) -> list[dict]:
    return [{"file": f.name, "compound": f.group, "modes": ", ".join(f.modes), "curves": str(len(f.curves)),
             "points": str(f.n_points), "notes": "; ".join(f.notices()) or "—"} for f in files]

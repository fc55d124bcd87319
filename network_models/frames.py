"""Results as pandas tables and short notebook displays — one place, pandas imported only when asked.

``FitResult.to_frame()`` (one row per parameter), ``CrosslinkTable.to_frame()`` (one row per assumption),
``Comparison.to_frame()`` (one row per compound and quantity) and ``Comparison.differences_frame()`` (one
row per verdict) call the functions below; each result type also has a short ``repr`` and a
``_repr_html_`` (the same table as HTML) so a notebook shows a readable table, not a dump of arrays.
Numbers stay in SI with a ``unit`` column.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from .constants import celsius

if TYPE_CHECKING:
    import pandas as pd


def _pd():
    import pandas as pd

    return pd


def fit_frame(result: Any) -> pd.DataFrame:
    rows = []
    for name, p in result.params.items():
        lo, hi = p.ci95 if p.ci95 is not None else (None, None)
        rows.append({"parameter": name, "symbol": p.symbol, "value": p.value, "stderr": p.stderr,
                     "ci95_low": lo, "ci95_high": hi, "unit": p.unit, "fixed": p.fixed, "meaning": p.meaning,
                     "determined": None if p.fixed else getattr(p, "determined", True)})
    return _pd().DataFrame(rows).set_index("parameter")


def crosslink_frame(table: Any) -> pd.DataFrame:
    rows = []
    for r in table.rows:
        lo, hi = r.nu_ci if r.nu_ci else (None, None)
        rows.append({"key": r.key, "assumption": r.label, "strand_density": r.nu, "strand_density_ci95_low": lo,
                     "strand_density_ci95_high": hi, "junction_density": r.junction_density, "Mc": r.Mc, "N": r.N,
                     "modulus": r.modulus, "assumes": r.assumes})
    df = _pd().DataFrame(rows).set_index("key")
    df.attrs["units"] = {"strand_density": "mol/m³", "junction_density": "mol/m³", "Mc": "kg/mol",
                         "modulus": "Pa", "N": "1"}
    return df


def comparison_frame(cmp: Any) -> pd.DataFrame:
    rows = []
    for r in cmp.results:
        for key, q in r.quantities.items():
            rows.append({"compound": r.name, "quantity": key, "label": q.label, "value": q.value, "unit": q.unit,
                         "ci95_low": q.low, "ci95_high": q.high, "basis": q.basis})
    return _pd().DataFrame(rows).set_index(["compound", "quantity"])


def differences_frame(cmp: Any) -> pd.DataFrame:
    cols = ("compound", "quantity", "percent", "absolute", "ci95", "verdict", "detectable", "n", "n_baseline")
    return _pd().DataFrame([{k: d.get(k) for k in cols} for d in cmp.differences()], columns=list(cols))


def html_table(df, caption: str = "") -> str:
    cap = f"<p><b>{caption}</b></p>" if caption else ""
    return cap + df.to_html(float_format=lambda x: f"{x:.4g}", na_rep="—")


def fit_repr(r) -> str:
    return (f"<FitResult {r.model}: G₀ = {r.small_strain_modulus / 1e6:.4g} MPa, {len(r.params)} parameters, "
            f"n = {r.n}, {len(r.warnings)} notice(s)>")


def table_repr(t) -> str:
    return (f"<CrosslinkTable {t.polymer} at {celsius(t.T):.1f} °C, G = {t.G / 1e6:.4g} MPa: "
            f"{len(t.rows)} assumption rows>")


def comparison_repr(c) -> str:
    return (f"<Comparison {c.model}: {len(c.results)} compound(s), baseline {c.baseline or '—'}, "
            f"service {celsius(c.service_temperature):.1f} °C>")


__all__ = ["comparison_frame", "comparison_repr", "crosslink_frame", "differences_frame", "fit_frame", "fit_repr",
           "html_table", "table_repr"]

"""Finding compounds by design targets and following a quantity over time (individuals control chart).

**find** — a compound matches when, for every target, its headline 95 % interval of the target's quantity lies
inside the target's range; with one specimen (no interval) its value must, and the match is flagged ``n = 1``.
Matches are ranked nearest first: the smallest largest relative distance |x − c|/|c| of the compound's values
from the targets' centres c (a range's midpoint; a one-sided target such as ``lock>=6`` has no centre and adds no
distance once met); ties by date, then compound key.

**trend** — one point per compound (its latest import), in test-date order, all on ONE stated basis; an
individuals chart with moving-range limits: centre = mean of the points, MR̄ = mean of |xᵢ − xᵢ₋₁|,
UCL/LCL = centre ± 3·MR̄/d₂ with d₂ = 1.128 for moving ranges of two (Montgomery, *Introduction to Statistical
Quality Control*, the control chart for individual measurements; docs/methods.md).  A point outside the limits
is ``out_of_control``.
"""

from __future__ import annotations

import html
import math
from typing import Any

from . import schema as S
from .adapter import DEFAULT_MODEL
from .db import LibraryError, connect, masked
from .store import BASIS_KEYS, DEFAULT_BASIS, MODEL_BASIS

#: d₂ for subgroups of two (moving range of two successive individuals) — Montgomery, Appendix table of
#: control-chart constants
D2 = 1.128
#: target kind → (stored quantity, factor from the stored value to the target's quantity)
_FIND_QUANTITY = {"G": ("G0", 1.0), "E": ("G0", 3.0), "lock": ("lock", 1.0), "nu": ("strand_density", 1.0)}
#: the quantities trend follows, with their unit
TREND_QUANTITIES = {"strand_density": "mol/m³", "G0": "Pa", "lock": "1", "N": "1", "M100_measured": "Pa",
                    "M300_measured": "Pa"}


def _target_quantity(t) -> tuple[str, float]:
    if t.kind == "stress" and t.mode is not None and t.mode.value == "uniaxial" and t.temperature is None \
            and t.stretch in (2.0, 4.0):
        return ("M100_measured" if t.stretch == 2.0 else "M300_measured"), 1.0
    if t.kind in _FIND_QUANTITY and t.temperature is None and (t.kind != "lock" or t.mode.value == "uniaxial"):
        return _FIND_QUANTITY[t.kind]
    raise LibraryError(f"target {t.text!r}: the library stores G, E (= 3G), M100 and M300 (measured), the uniaxial "
                       "lock and the strand density nu of each compound at its test temperature; write a target "
                       "on one of those, e.g. 'nu=250..300mol/m3' or 'lock>=6'")


def _centre(t) -> float | None:
    """A range's midpoint; a one-sided target (``lock>=6``) has no centre and adds no distance once met."""
    if t.lo is not None and t.hi is not None:
        return (t.lo + t.hi) / 2.0
    return None


def _inside(t, x) -> bool:
    return (t.lo is None or x >= t.lo) and (t.hi is None or x <= t.hi)


def _passes(r, t, factor):
    """SQL form of the match rule for one target: the interval inside (n ≥ 2), else the value inside."""
    from sqlalchemy import and_, or_

    def inside(col):
        conds = []
        if t.lo is not None:
            conds.append(col * factor >= t.lo)
        if t.hi is not None:
            conds.append(col * factor <= t.hi)
        return and_(*conds)

    has_ci = and_(r.c.n >= 2, r.c.ci_low.is_not(None), r.c.ci_high.is_not(None))
    return or_(and_(has_ci, inside(r.c.ci_low), inside(r.c.ci_high)),
               and_(~has_ci, r.c.value.is_not(None), inside(r.c.value)))


def find(targets, db=None, *, polymer: str | None = None, model: str | None = None, engine=None,
         limit: int | None = None) -> dict:
    """Compounds whose headline values meet every target (see the module doc); ``{"matches": [...]}``.  ``model``
    None: each study's own model."""
    from sqlalchemy import and_, or_, select

    from ..design.targets import parse_targets
    from ..models import get_model

    tl = parse_targets(targets)
    wanted = [(t, *_target_quantity(t)) for t in tl]
    mname = get_model(model).name if model else None
    eng = engine or connect(db)
    r, c, st = S.results, S.compounds, S.studies
    q = (select(c.c.id, c.c.name, c.c.tested, c.c.date_source, c.c.polymer, st.c.id.label("study"),
                st.c.title, r.c.model, r.c.quantity, r.c.value, r.c.ci_low, r.c.ci_high, r.c.n, r.c.basis_label,
                r.c.unit)
         .select_from(r.join(c, c.c.id == r.c.compound_id).join(st, st.c.id == c.c.study_id))
         .where(r.c.quantity.in_({w[1] for w in wanted}))
         .where(or_(r.c.quantity != "strand_density", r.c.headline.is_(True)))
         .where(r.c.model == mname if mname else r.c.model == st.c.model))
    if polymer:
        q = q.where(and_(c.c.polymer == polymer))
    for t, qname, factor in wanted:  # the match rule in SQL first (fewer rows); checked again below
        q = q.where(c.c.id.in_(select(r.c.compound_id).where(r.c.quantity == qname, _passes(r, t, factor))))
    per: dict[int, dict] = {}
    with eng.connect() as conn:
        for row in conn.execute(q):
            d = per.setdefault(row.id, {"row": row, "q": {}})
            d["q"][row.quantity] = row
    matches = []
    for d in per.values():
        values, dist, one = {}, 0.0, False
        for t, qname, factor in wanted:
            x = d["q"].get(qname)
            if x is None or x.value is None:
                break
            v = x.value * factor
            lo, hi = (x.ci_low * factor, x.ci_high * factor) if x.ci_low is not None and x.ci_high is not None \
                else (None, None)
            if lo is not None and x.n >= 2:
                if not (_inside(t, lo) and _inside(t, hi)):
                    break
            else:
                if not _inside(t, v):
                    break
                one = True
            cen = _centre(t)
            if cen is not None:
                dist = max(dist, abs(v - cen) / abs(cen) if cen else abs(v))
            values[t.text] = {"quantity": t.name, "value": v, "ci95": None if lo is None else [lo, hi],
                              "n": x.n, "unit": "Pa" if t.unit == "MPa" else (t.unit or "1"),
                              "basis": x.basis_label if qname == "strand_density" else
                              ("3 × " if factor == 3.0 else "") + x.basis_label}
        else:
            row = d["row"]
            matches.append({"compound": row.name, "study": row.study, "study_title": row.title,
                            "date": row.tested.isoformat(), "date_source": row.date_source, "polymer": row.polymer,
                            "model": row.model, "n1": one, "distance": dist, "values": values})
    matches.sort(key=lambda m: (m["distance"], m["date"], m["compound"]))
    total = len(matches)
    if limit:
        matches = matches[:limit]
    notes = ["a compound matches when its 95 % interval of every target's quantity lies inside the target; with "
             "one specimen its value must (flagged n1); nearest first: the smallest largest relative distance from "
             "the centres of the range targets (a one-sided target adds none once met)"]
    if any(m["n1"] for m in matches):
        notes.append("matches flagged n1 rest on one specimen (or the pooled fit): their scatter is unknown")
    return {"targets": [t.to_dict() for t in tl], "model": mname or "each study's own model",
            "polymer": polymer, "matches": matches, "total": total, "notes": notes}


# ----- trend -------------------------------------------------------------------------------------------------------
def control_limits(values) -> dict:
    """Individuals chart from the moving range: centre, MR̄, UCL, LCL (None with fewer than two points)."""
    n = len(values)
    if n == 0:
        return {"centre": None, "mr_bar": None, "ucl": None, "lcl": None}
    centre = sum(values) / n
    if n < 2:
        return {"centre": centre, "mr_bar": None, "ucl": None, "lcl": None}
    mr = sum(abs(values[i] - values[i - 1]) for i in range(1, n)) / (n - 1)
    half = 3.0 * mr / D2
    return {"centre": centre, "mr_bar": mr, "ucl": centre + half, "lcl": centre - half}


def trend(quantity: str = "strand_density", db=None, *, compound_prefix: str = "", model: str | None = None,
          basis: str | None = None, engine=None) -> dict:
    """One point per compound (its latest import) in date order, on one basis, with individuals-chart limits."""
    from sqlalchemy import select

    from ..models import get_model

    if quantity not in TREND_QUANTITIES:
        raise LibraryError(f"--quantity {quantity!r}: the trend follows one of {', '.join(TREND_QUANTITIES)}")
    if quantity == "strand_density":
        basis = basis or DEFAULT_BASIS
        if basis not in BASIS_KEYS:
            raise LibraryError(f"--basis {basis!r}: the strand density is stored on {' or '.join(BASIS_KEYS)} "
                               f"(default {DEFAULT_BASIS}: affine, all of G read as strands — never negative)")
    else:
        if basis not in (None, MODEL_BASIS):
            raise LibraryError(f"--basis {basis!r}: {quantity} has one basis, the model's own ({MODEL_BASIS})")
        basis = MODEL_BASIS
    eng = engine or connect(db)
    r, c, st = S.results, S.compounds, S.studies
    notes = []
    with eng.connect() as conn:
        if model:
            mname: str | None = get_model(model).name
        else:
            q0 = select(st.c.model).select_from(st.join(c, c.c.study_id == st.c.id))
            if compound_prefix:
                q0 = q0.where(c.c.name.startswith(compound_prefix, autoescape=True))
            mname = conn.execute(q0.order_by(st.c.imported_at.desc(), st.c.id.desc()).limit(1)).scalar()
            if mname is None:
                mname = DEFAULT_MODEL
            else:
                notes.append(f"model: {mname}, the model of the latest study holding these compounds (--model to "
                             "choose another)")
        # each compound's latest import holding this model's results (on any basis) ...
        q = (select(c.c.id, c.c.name, st.c.id.label("study"), st.c.imported_at)
             .select_from(c.join(st, st.c.id == c.c.study_id))
             .where(c.c.id.in_(select(r.c.compound_id).where(r.c.quantity == quantity, r.c.model == mname))))
        if compound_prefix:
            q = q.where(c.c.name.startswith(compound_prefix, autoescape=True))
        latest: dict[str, Any] = {}
        for row in conn.execute(q):
            old = latest.get(row.name)
            if old is None or (row.imported_at, row.study) > (old.imported_at, old.study):
                latest[row.name] = row
        ids = {row.id for row in latest.values()}
        # ... and its value on the one basis asked for (an older import is never used in its place)
        q2 = (select(c.c.id, c.c.name, c.c.tested, c.c.date_source, st.c.id.label("study"), r.c.value, r.c.ci_low,
                     r.c.ci_high, r.c.n, r.c.basis_label)
              .select_from(r.join(c, c.c.id == r.c.compound_id).join(st, st.c.id == c.c.study_id))
              .where(r.c.quantity == quantity, r.c.basis == basis, r.c.model == mname))
        if compound_prefix:
            q2 = q2.where(c.c.name.startswith(compound_prefix, autoescape=True))
        found = {row.name: row for row in conn.execute(q2) if row.id in ids}
    missing = sorted(set(latest) - set(found))
    if missing:
        notes.append(f"left out (their latest import has no value on this basis; no other basis or import is "
                     f"substituted): {', '.join(missing)}")
    latest = found
    rows = sorted(latest.values(), key=lambda x: (x.tested, x.name))
    skipped = [x.name for x in rows if x.value is None or (quantity == "strand_density" and x.value <= 0)]
    if skipped:
        notes.append(f"left out (no positive value on this basis; no other basis is substituted): "
                     f"{', '.join(skipped)}")
    rows = [x for x in rows if x.name not in skipped]
    lim = control_limits([x.value for x in rows])
    lcl_note = None
    if lim["lcl"] is not None and lim["lcl"] < 0 and quantity in ("strand_density", "G0"):
        lcl_note = f"the lower limit {lim['lcl']:.4g} is below zero; a {quantity} cannot be negative, so it is 0"
        lim["lcl"] = 0.0
        notes.append(lcl_note)
    if len(rows) < 2:
        notes.append("fewer than two points: no moving range, so no control limits")
    undated = [x.name for x in rows if x.date_source == "import"]
    if undated:
        notes.append(f"dated by their import (no test date given): {', '.join(undated)}")
    points = []
    for x in rows:
        ooc = lim["ucl"] is not None and (x.value > lim["ucl"] or x.value < lim["lcl"])
        points.append({"compound": x.name, "date": x.tested.isoformat(), "value": x.value,
                       "ci95": None if x.ci_low is None or x.ci_high is None else [x.ci_low, x.ci_high],
                       "n": x.n, "study": x.study, "date_source": x.date_source, "out_of_control": bool(ooc)})
    label = rows[0].basis_label if rows else ""
    return {"quantity": quantity, "unit": TREND_QUANTITIES[quantity], "model": mname, "basis": basis,
            "basis_label": label, "points": points, "centre": lim["centre"], "mr_bar": lim["mr_bar"],
            "ucl": lim["ucl"], "lcl": lim["lcl"],
            "method": "individuals chart, moving range of two: limits = centre ± 3·MR̄/1.128 (Montgomery, "
                      "Introduction to Statistical Quality Control)",
            "notes": notes}


def trend_svg(tr: dict, width: int = 720, height: int = 320) -> str:
    """The trend as a self-contained SVG: points in date order, centre line, UCL/LCL dashed, points outside the
    limits drawn as red squares and named.  Every text is escaped."""
    pts = tr["points"]
    e = html.escape
    L, R, T, B = 70, 20, 30, 70
    W, H = width - L - R, height - T - B
    ys = [p["value"] for p in pts] + [v for v in (tr["ucl"], tr["lcl"], tr["centre"]) if v is not None]
    for p in pts:
        if p["ci95"]:
            ys += p["ci95"]
    lo, hi = (min(ys), max(ys)) if ys else (0.0, 1.0)
    if not hi > lo:
        lo, hi = lo - 1.0, hi + 1.0
    pad = 0.08 * (hi - lo)
    lo, hi = lo - pad, hi + pad

    def X(i):
        return L + (W * (i + 0.5) / max(len(pts), 1))

    def Y(v):
        return T + H * (1.0 - (v - lo) / (hi - lo))

    unit = tr.get("unit", "")
    title = f"{tr['quantity']} ({unit}), {tr['model']}, basis: {tr.get('basis_label') or tr['basis']}"
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
           f'viewBox="0 0 {width} {height}" font-family="sans-serif" font-size="11">',
           f'<rect x="0" y="0" width="{width}" height="{height}" fill="#ffffff"/>',
           f'<text x="{L}" y="18" font-size="12">{e(title)}</text>',
           f'<line x1="{L}" y1="{T}" x2="{L}" y2="{T + H}" stroke="#444"/>',
           f'<line x1="{L}" y1="{T + H}" x2="{L + W}" y2="{T + H}" stroke="#444"/>']
    for k in range(5):
        v = lo + (hi - lo) * k / 4
        out.append(f'<text x="{L - 6}" y="{Y(v) + 4:.1f}" text-anchor="end">{v:.4g}</text>')
    for name, v, dash, colour in (("UCL", tr["ucl"], "6 4", "#b2182b"), ("centre", tr["centre"], "", "#333333"),
                                  ("LCL", tr["lcl"], "6 4", "#b2182b")):
        if v is None:
            continue
        d = f' stroke-dasharray="{dash}"' if dash else ""
        out.append(f'<line x1="{L}" y1="{Y(v):.1f}" x2="{L + W}" y2="{Y(v):.1f}" stroke="{colour}"{d}/>')
        out.append(f'<text x="{L + W - 2}" y="{Y(v) - 3:.1f}" text-anchor="end" fill="{colour}">'
                   f'{e(name)} {v:.4g}</text>')
    if len(pts) > 1:
        path = " ".join(f"{X(i):.1f},{Y(p['value']):.1f}" for i, p in enumerate(pts))
        out.append(f'<polyline points="{path}" fill="none" stroke="#4d4d4d" stroke-width="1"/>')
    step = max(1, math.ceil(len(pts) / 12))
    for i, p in enumerate(pts):
        x, y = X(i), Y(p["value"])
        if p["ci95"]:
            out.append(f'<line x1="{x:.1f}" y1="{Y(p["ci95"][0]):.1f}" x2="{x:.1f}" y2="{Y(p["ci95"][1]):.1f}" '
                       'stroke="#999999"/>')
        tip = f"{p['compound']} {p['date']}: {p['value']:.4g} {unit}"
        if p["out_of_control"]:
            out.append(f'<rect x="{x - 5:.1f}" y="{y - 5:.1f}" width="10" height="10" fill="#b2182b">'
                       f'<title>{e(tip)} — outside the limits</title></rect>')
            out.append(f'<text x="{x:.1f}" y="{y - 8:.1f}" text-anchor="middle" fill="#b2182b">'
                       f'{e(p["compound"])}</text>')
        else:
            out.append(f'<circle cx="{x:.1f}" cy="{y:.1f}" r="4" fill="#2166ac"><title>{e(tip)}</title></circle>')
        if i % step == 0:
            out.append(f'<text x="{x:.1f}" y="{T + H + 14}" text-anchor="end" '
                       f'transform="rotate(-40 {x:.1f} {T + H + 14})">{e(p["date"])}</text>')
    if not pts:
        out.append(f'<text x="{L + W / 2}" y="{T + H / 2}" text-anchor="middle">no points</text>')
    out.append("</svg>")
    return "\n".join(out)


def studies(db=None, *, engine=None) -> list[dict]:
    """Every study: id, title, kind, model, when and by whom, compounds."""
    from sqlalchemy import func, select

    eng = engine or connect(db)
    st, c = S.studies, S.compounds
    q = (select(st.c.id, st.c.title, st.c.kind, st.c.model, st.c.imported_at, st.c.saved_by, st.c.source,
                func.count(c.c.id).label("compounds"))
         .select_from(st.outerjoin(c, c.c.study_id == st.c.id)).group_by(st.c.id).order_by(st.c.id))
    with eng.connect() as conn:
        return [{"study": r.id, "title": r.title, "kind": r.kind, "model": r.model,
                 "imported_at": r.imported_at.isoformat() if r.imported_at else None, "saved_by": r.saved_by,
                 "source": r.source, "compounds": r.compounds} for r in conn.execute(q)]


__all__ = ["D2", "control_limits", "find", "studies", "trend", "trend_svg", "masked"]

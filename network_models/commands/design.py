"""``netstretch design``: from targets to the window of strand density that meets them all, the target that
binds at each edge, conflicts and the closest compromise, and the change a measured compound needs.

    netstretch design --polymer NR --temperature 23C --model eight-chain \\
        --target "M100=1.7..1.9MPa" --target "lock>=6" --target "G@100C>=0.4MPa"
    netstretch design ... --current-nu 250 --current-ci 235..265      # what to change in today's compound
    netstretch design ... --current tensile.csv                          # today's compound from its curves
    netstretch design ... --compare-models --json

``--json`` prints one JSON object: ``feasible`` (bool), ``strand_density`` ({low, high} in mol/m³, null when
infeasible), ``binding`` ({low, high}: the target that sets each edge, null where none does) and ``why`` (a
sentence naming the conflicting targets when infeasible), plus M_c, junction density, per-target detail.
"""

from __future__ import annotations

import argparse
import math
import re

from ..design import CAUTION, compare_models, design
from ..design.targets import EXAMPLES
from ..errors import UserError
from ..jsonio import dumps
from ._options import add_functionality, add_json, add_polymer

_GRAMMAR = ("targets: G, E, M100/M200/M300, uniaxial@λ, planar@λ, equibiaxial@λ (each optionally @temperature, "
            "e.g. G@100C), lock, lock(planar), reserve, reserve@50%, Q(solvent); operators = (with ±tolerance or "
            "a..b range), >=, <=; e.g. " + ", ".join(f"'{v}'" for v in EXAMPLES.values()))


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("design", help="targets → the window of strand density that meets them (binding target, "
                                      "conflicts, what to change)",
                       description="Which strand density ν meets a set of targets with a chosen model, polymer, "
                                   "temperature and filler; which target binds at each edge; which targets "
                                   "conflict; what change brings a measured compound into the window.",
                       epilog=_GRAMMAR)
    add_polymer(p, "polymer from the polymer table (default NR, or the project "
                   "compound's)", default=None)
    p.add_argument("--temperature", default=None, metavar="T", help="design (test) temperature, e.g. 23C "
                                                                   "(default 23C, or the project compound's)")
    p.add_argument("--model", default=None, metavar="MODEL", help="model (default eight-chain, or the project's "
                                                                 "design model; see `netstretch models`)")
    p.add_argument("--target", action="append", default=None, metavar="TARGET",
                   help="a target such as 'M100=1.8MPa±5%%' (repeat for several; default: the project's targets)")
    p.add_argument("--filler", type=float, default=None, metavar="PHI",
                   help="filler volume fraction (default 0, or the project compound's)")
    add_functionality(p, "junction functionality f (default 4, or the project compound's)", default=None)
    p.add_argument("--project", metavar="FILE.zip",
                   help="a project file: its design targets and model, and the polymer, f, filler and test "
                        "temperature of --compound (default its baseline); options given here override them")
    p.add_argument("--compound", metavar="NAME", help="with --project: the compound whose recipe facts the design "
                                                     "uses (default the baseline)")
    p.add_argument("--current-compound", action="store_true",
                   help="with --project: today's compound is --compound, its headline ν (the study's comparison, "
                        "entanglements removed) converted to the design's basis")
    p.add_argument("--N", type=float, default=None, metavar="N",
                   help="fix the Kuhn segments per strand N (default: coupled to ν, N = M_c/M_K)")
    p.add_argument("--no-entanglements", action="store_true", help="leave out the entanglement contribution")
    p.add_argument("--compare-models", action="store_true",
                   help="also the window of every model that covers the targets' modes, and where they agree")
    p.add_argument("--over", choices=("filler", "N"),
                   help="also the ν window at each filler fraction 0–0.3 (or at each N 5–200, decoupled from ν)")
    p.add_argument("--current-nu", type=float, metavar="NU",
                   help="today's compound: its strand density ν in mol/m³ (under the same model)")
    p.add_argument("--current-basis", default="design", choices=("design", "entanglements-removed", "all-of-G"),
                   help="the basis --current-nu is given on: design (default: the basis this design counts ν on, "
                        "stated in its output), entanglements-removed (the crosslinks headline: affine, "
                        "G − G_e = νRT) or all-of-G (affine, G = νRT); converted to the design's basis or refused")
    p.add_argument("--current-ci", metavar="LO..HI", help="95 %% interval of --current-nu, e.g. 235..265")
    p.add_argument("--current", action="append", metavar="FILE",
                   help="today's compound from its lab curves (fitted with --model; repeat for several files)")
    p.add_argument("--manifest", metavar="FILE",
                   help="a compounds manifest with recipes in phr: with --dose, its dose ladder")
    p.add_argument("--dose", metavar="INGREDIENT",
                   help="invert the ν window into a window of this ingredient's phr (e.g. sulfur), from the "
                        "manifest's compounds that differ only in it (network_models.dose)")
    add_json(p, "print one JSON object (SI units)")
    p.set_defaults(run=run)


def _ci(text):
    parts = re.split(r"\.\.|,|…", str(text).strip())
    try:
        lo, hi = (float(x) for x in parts)
    except ValueError:
        raise UserError(f"--current-ci {text!r} is not an interval; write it like 235..265 (mol/m³).") from None
    if not (0 < lo < hi and math.isfinite(hi)):
        raise UserError(f"--current-ci {text!r} must run from a low to a high positive strand density.")
    return lo, hi


def _project_defaults(args):
    """Fill the design's unset options from ``--project`` (design targets and model; the compound's polymer, f,
    filler and test temperature) or the plain defaults; returns the study (or None)."""
    st = None
    if args.project:
        from ..study import Study

        st = Study.from_project(args.project)
        c = st[args.compound or st.settings.baseline or st.names[0]]
        args.compound = c.name
        args.target = args.target or list(st.settings.design_targets)
        args.model = args.model or st.settings.design_model
        args.polymer = args.polymer or c.polymer
        args.functionality = c.f if args.functionality is None else args.functionality
        args.filler = c.filler_fraction if args.filler is None else args.filler
        if args.temperature is None and c.temperature() is not None:
            args.temperature = c.temperature()
    elif args.compound or args.current_compound:
        raise UserError("--compound and --current-compound go with --project.")
    if not args.target:
        raise UserError("give at least one --target (or a --project that stores design targets).")
    args.model = args.model or "eight-chain"
    args.polymer = args.polymer or "NR"
    args.temperature = "23C" if args.temperature is None else args.temperature
    args.filler = 0.0 if args.filler is None else args.filler
    args.functionality = 4.0 if args.functionality is None else args.functionality
    return st


def _current(args, result, study=None):
    """(ν, interval, source sentence) of today's compound, or None."""
    if getattr(args, "current_compound", False):
        if args.current_nu is not None or args.current:
            raise UserError("give today's compound one way: --current-compound, --current-nu or --current.")
        r = study.comparison()[args.compound]
        g = r.stats.get("G0")
        if not r.ok or g is None or g.mean is None:
            raise UserError(f"{args.compound} has no fitted small-strain modulus in this study "
                            f"({r.error or 'no specimen fitted'}); give --current-nu instead.")
        from ..design.advice import nu_for_modulus

        s = result.setup
        nu = nu_for_modulus(s, g.mean)
        ci = None if not g.ci95 or g.ci95[0] is None or g.ci95[0] <= 0 else tuple(
            nu_for_modulus(s, x) for x in g.ci95)
        return nu, ci, (f"{args.compound}'s G₀ = {g.mean / 1e6:.4g} MPa (specimen mean of {g.n}, the study's "
                        f"{r.model} fits) read as the design network's ν — the compound and the window on one basis")
    if args.current:
        if args.current_nu is not None:
            raise UserError("give today's compound either as --current-nu or as --current files, not both.")
        from ..design.advice import compound_from_fit
        from ..fitting import fit
        from ..labfiles import read_curves

        curves = [c for path in args.current for c in read_curves(path)]
        if not curves:
            raise UserError("the --current files hold no test curves.")
        res = fit(result.setup.model, curves)
        nu, ci = compound_from_fit(result, res)
        return nu, ci, (f"from the {res.title} fit of {len(curves)} curve(s): ν under the design model "
                        f"(95 % interval from the fit)")
    if args.current_nu is None:
        if args.current_ci:
            raise UserError("--current-ci needs --current-nu.")
        return None
    ci = _ci(args.current_ci) if args.current_ci else None
    from ..design.advice import convert_current

    return convert_current(result.setup, args.current_nu, ci, getattr(args, "current_basis", "design"))


def _dose(args, result):
    """The ``dose`` object (network_models.dose) for --manifest/--dose, or None."""
    if not (args.dose or args.manifest):
        return None
    if not (args.dose and args.manifest):
        raise UserError("--dose and --manifest go together: --manifest FILE --dose INGREDIENT (e.g. sulfur)")
    from ..compounds import load_manifest
    from ..dose import dose_window

    return dose_window(result, load_manifest(args.manifest).compounds, args.dose)


def _dose_lines(d) -> list[str]:
    line = d["line"]
    se = "" if line["slope_se"] is None else f" ± {line['slope_se']:.3g}"
    pts = ", ".join(f"{p['compound']} {p['phr']:g} phr: ν {p['strand_density']:.4g}" for p in d["ladder"])
    out = [f"Dose ladder in {d['ingredient']} ({pts}):",
           f"  line ν = {line['intercept']:.4g} + {line['slope']:.4g}{se} mol/m³ per phr ({d['form']} used)"]
    if d.get("low") is None:
        out.append(f"  no dose window: {d.get('note', '')}")
    else:
        out.append(f"  dose window {d['ingredient']} {d['low']:.3g} – {d['high']:.3g} phr"
                   + (" (EXTRAPOLATED)" if d["extrapolated"] else "")
                   + f"; tested {d['tested'][0]:g}–{d['tested'][1]:g} phr")
        if d.get("note"):
            out.append(f"  note: {d['note']}")
    for p in d["ladder"]:
        if p.get("read") != "design model":
            out.append(f"  note: {p['compound']}: ν {p.get('read')}")
    for name, why in d["left_out"].items():
        out.append(f"  left out: {name} ({why})")
    return out


def _n(x, digits=4):
    return "—" if x is None or not (isinstance(x, float | int) and math.isfinite(x)) else f"{x:.{digits}g}"


def _basis_line(b) -> str:
    ge = (f"G_e = {b['G_e_Pa'] / 1e6:.3g} MPa from the {b['G_e_source']}" if b["entanglements"]
          else "no entanglement part (switched off)")
    return f"How ν is counted: {b['label']}; {ge}"


def _advice_json(advice) -> dict:
    """``advice`` {inside, change_percent [low, high] (negative = lower ν; [0, 0] inside), sentence}."""
    inside = advice.action == "keep"
    lo, hi = sorted(100.0 * x for x in advice.change_range)
    return {"inside": inside, "change_percent": [0.0, 0.0] if inside else [lo, hi], "sentence": advice.sentence}


def _table(r) -> list[str]:
    from ..design.advice import nu_basis

    out = [f"Design window: {r.setup.describe()}", _basis_line(nu_basis(r.setup))]
    if r.feasible:
        w, mc, mj = r.window, r.Mc_window(), r.junction_window()
        out.append(f"  FEASIBLE   strand density ν  {w.lo:.4g} – {w.hi:.4g} mol/m³")
        out.append(f"             M_c = ρ/ν         {1000 * mc[0]:.4g} – {1000 * mc[1]:.4g} g/mol")
        out.append(f"             junction density  μ_j = 2ν/f = {mj[0]:.4g} – {mj[1]:.4g} mol/m³ (f = {r.setup.f:g})")
        b = r.to_dict()["binding"]
        out.append(f"  binding    low edge: {b['low'] or 'none (scan limit)'};  high edge: "
                   f"{b['high'] or 'none (scan limit)'}")
    else:
        out.append("  NOT FEASIBLE")
        if r.conflicts:
            out.append("  conflicts  " + "; ".join(f"{a} × {b}" for a, b in r.conflicts))
        if r.unreachable:
            out.append("  unreachable with this model: " + ", ".join(r.unreachable))
        if r.compromise:
            out.append(f"  closest compromise ν = {r.compromise['strand_density']:.4g} mol/m³ (largest relative "
                       f"miss {100 * r.compromise['largest_miss']:.3g} %)")
    out.append("")
    out.append(f"  {'target':24s} {'wanted':>20s}  {'met for':34s} {'at low edge':>12s} {'at high edge':>12s}")
    for o in r.outcomes:
        t = o.target
        lo, hi = o.at_edges.get("low"), o.at_edges.get("high")
        out.append(f"  {t.text[:24]:24s} {t.bounds_text():>20s}  {o.needs()[:34]:34s} {t.fmt(lo):>12s} "
                   f"{t.fmt(hi):>12s}")
    out.append("")
    out.append("why: " + r.why)
    for n in r.notices:
        out.append(f"note: {n}")
    return out


def run(args: argparse.Namespace) -> int:
    study = _project_defaults(args)
    kw = dict(polymer=args.polymer, temperature=args.temperature, filler=args.filler, f=args.functionality,
              N=args.N, entanglements=not args.no_entanglements)
    r = design(args.target, model=args.model, **kw)
    cur = _current(args, r, study)
    advice = None
    if cur is not None:
        advice = r.advise(cur[0], cur[1])
    models = compare_models(r.targets, **kw) if args.compare_models else None
    over = None
    if args.over:
        from ..design.compare import window_over

        over = window_over(r.targets, args.over, model=args.model, **kw)
    dose = _dose(args, r)
    if args.json:
        from ..design.advice import nu_basis

        doc = {"command": "design", **r.to_dict(), "basis": nu_basis(r.setup)}
        if dose is not None:
            doc["dose"] = dose
        if advice is not None:
            doc["advice"] = {**_advice_json(advice), "basis": doc["basis"]["label"], "strand_density": cur[0],
                             "source": cur[2]}
            doc["current"] = {**advice.to_dict(), "source": cur[2]}  # alias of `advice` for one release
        if models is not None:
            doc["model_comparison"] = models.to_dict()
        if over is not None:
            doc["window_over"] = {"variable": args.over, "rows": over}
        print(dumps(doc))
        return 0
    lines = _table(r)
    if advice is not None:
        ci = "" if cur[1] is None else f" (95 % interval {cur[1][0]:.4g}–{cur[1][1]:.4g})"
        lines += ["", f"Today's compound: ν = {cur[0]:.4g} mol/m³{ci}, {cur[2]}", "  " + advice.sentence]
    if models is not None:
        lines += ["", "Window per model (same targets, polymer, temperature, filler):",
                  f"  {'model':22s} {'ν low':>9s} {'ν high':>9s}  binding (low / high)"]
        for name, mr in models.results.items():
            b = mr.to_dict()["binding"]
            lo = mr.window.lo if mr.window else None
            hi = mr.window.hi if mr.window else None
            bind = f"{b['low'] or '—'} / {b['high'] or '—'}" if mr.feasible else "no window"
            lines.append(f"  {name:22s} {_n(lo):>9s} {_n(hi):>9s}  {bind}")
        for name, why in models.left_out.items():
            lines.append(f"  {name:22s} left out: {why}")
        lines.append("  " + models.sentence)
    if over is not None:
        name = "filler φ" if args.over == "filler" else "N (set)"
        lines += ["", f"Window of ν at each {name}:",
                  f"  {name:10s} {'ν low':>9s} {'ν high':>9s}  binding (low / high)"]
        for row in over:
            bind = f"{row['binding_low'] or '—'} / {row['binding_high'] or '—'}" if row["feasible"] else "no window"
            lines.append(f"  {row[args.over]:<10.4g} {_n(row['low']):>9s} {_n(row['high']):>9s}  {bind}")
        ok = [row[args.over] for row in over if row["feasible"]]
        lines.append(f"  some ν meets every target for {name} {min(ok):.4g}–{max(ok):.4g} (on this grid)" if ok
                     else f"  no {name} on this grid has a window")
    if dose is not None:
        lines += ["", *_dose_lines(dose)]
    lines += ["", CAUTION]
    print("\n".join(lines))
    return 0

"""``netstretch fit``: fit one or more network models to lab curves; parameters with intervals, fit
statistics, warnings in plain words and the crosslink-density table.

    netstretch fit tensile.csv planar.csv --model eight-chain --model non-affine-tube --temperature 23C
    netstretch fit tensile.csv --model gent --json
"""

from __future__ import annotations

import argparse
import math
import re
from typing import cast

from ..constants import CAUTION as _CAUTION
from ..constants import celsius
from ..crosslinks import from_fit
from ..fitting import DEFAULT_RESIDUAL, RESIDUALS, FitResult, fit_many
from ..jsonio import dumps
from ..models import get_model
from ..ultimate import RULE as ULTIMATE_RULE
from ..ultimate import ultimate_rows
from ._options import add_functionality, add_json, add_polymer

CAUTION = "Caution: " + _CAUTION


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("fit", help="fit network models to lab curves (parameters ± 95 %% intervals, crosslink density)",
                       description="Fit network models to tensile, planar or equibiaxial curves.")
    p.add_argument("files", nargs="+", metavar="FILE", help="lab files (CSV/TSV/TXT, .xlsx, .xls or .ods)")
    p.add_argument("--model", action="append", metavar="NAME",
                   help="model to fit (repeat for several; default eight-chain; see `netstretch models`)")
    p.add_argument("--mode", choices=("uniaxial", "equibiaxial", "planar", "compression"),
                   help="test mode when the files do not state it (compression: uniaxial, λ < 1)")
    p.add_argument("--profile", metavar="FILE",
                   help="reading profile (TOML: columns, units, geometry, mode, decimal, skip) for files of one shape; "
                        "the options given here win over it")
    p.add_argument("--save-profile", metavar="FILE",
                   help="save the reading options given here (mode, temperature, geometry, merged over --profile) "
                        "as a reading profile for the next files of the same shape")
    p.add_argument("--temperature", metavar="T", help="test temperature, e.g. 23C (overrides the files)")
    p.add_argument("--gauge-length", metavar="L", help="gauge length for extension columns, e.g. 20mm")
    p.add_argument("--width", metavar="W", help="specimen width for force columns, e.g. 4mm")
    p.add_argument("--thickness", metavar="H", help="specimen thickness for force columns, e.g. 2mm")
    p.add_argument("--stretch-unit", default="stretch", choices=("stretch", "elongation"),
                   help="show stretch-valued numbers as stretch λ (default) or as elongation %% (λ − 1)·100")
    p.add_argument("--residual", choices=RESIDUALS, default=DEFAULT_RESIDUAL,
                   help=f"residual weighting: relative (each point weighs by its own stress, so the small-strain "
                        f"points that fix G₀ count) or absolute (Pa: the stiff high-stretch points weigh most); "
                        f"default {DEFAULT_RESIDUAL}, the same in compare, report, batch and the app")
    p.add_argument("--relative", dest="residual", action="store_const", const="relative",
                   help="alias of --residual relative")
    add_polymer(p, "polymer for the crosslink table and the fit's notices, e.g. strain crystallisation of NR "
                   "(default NR)")
    add_functionality(p, "junction functionality f for the crosslink table (default 4)")
    p.add_argument("--intervals", choices=("transformed", "profile"), default="transformed",
                   help="95 %% intervals: 'transformed' (default; linearised on log/logit of the parameter, always "
                        "inside its domain) or 'profile' (profile likelihood; slower)")
    add_json(p)
    p.set_defaults(run=run)


# ------------------------------------------------------------------------------------------------
# shared helpers (also used by the crosslinks and swell commands)
# ------------------------------------------------------------------------------------------------
def quantity(text, dimension, what, example) -> float:
    """Parse a command-line quantity that must carry a unit, e.g. '23C', '20mm', '0.55MPa'."""
    from ..units import parse_quantity

    s = str(text).strip()
    if not re.search(r"[A-Za-zµ%°℃]", s):
        raise ValueError(f"{what} {s!r} has no unit; write it with its unit, e.g. {example}")
    try:
        value = parse_quantity(s, dimension)
    except ValueError as exc:
        raise ValueError(f"{what}: {exc}") from None
    return physically_possible(value, dimension, what, s)


#: a shear or Young's modulus above this is not a rubber (10 GPa: stiffer than most glassy polymers;
#: common practice)
MAX_MODULUS_PA = 10e9


def physically_possible(value: float, dimension: str, what: str, text: str) -> float:
    """Refuse a command-line value no rubber test can have: a temperature at or below absolute zero (0 K),
    a modulus (pressure) above 10 GPa."""
    if dimension == "temperature" and not value > 0.0:
        raise ValueError(f"{what} {text} is at or below absolute zero (0 K = -273.15 °C); give the test temperature, "
                         "e.g. -20C or 23C")
    if dimension == "pressure" and abs(value) > MAX_MODULUS_PA:
        raise ValueError(f"{what} {text} is above {MAX_MODULUS_PA / 1e9:g} GPa, far stiffer than any rubber; check "
                         "the unit (e.g. 0.55MPa)")
    return value


def json_document(doc: dict) -> str:
    """One JSON object with no NaN/inf (kept for the commands that import it; the writer is jsonio.dumps)."""
    return dumps(doc)


def _num(x, scale=1.0, digits=4):
    """The project's one number formatter (:func:`network_models.formatting.number`): the CLI's tables print a
    value as the app and the report do."""
    from ..formatting import number

    if x is None or not math.isfinite(x):
        return "—"
    return number(x * scale, digits)


def _ci(ci, scale=1.0, digits=4):
    if not ci or ci[0] is None or ci[1] is None:
        return "—"
    return f"{_num(ci[0], scale, digits)} – {_num(ci[1], scale, digits)}"


def format_crosslink_table(table) -> list[str]:
    """Human table: ν (mol/m³ and 10⁻⁴ mol/cm³), μ_j, M_c (g/mol), N, with the assumption beside each row."""
    w = max([10] + [len(r.label) for r in table])
    lines = [f"  {'assumption':{w}s} {'ν mol/m³':>9s} {'95 % interval':>19s} {'ν 10⁻⁴mol/cm³':>14s} "
             f"{'μ_j mol/m³':>11s} {'M_c g/mol':>10s} {'N':>7s}"]
    for r in table.rows:
        lines.append(
            f"  {r.label:{w}s} {_num(r.nu):>9s} {_ci(r.nu_ci):>19s} "
            f"{_num(r.nu, 1e-2):>14s} {_num(r.junction_density):>11s} {_num(r.Mc, 1e3):>10s} {_num(r.N, 1, 3):>7s}")
        lines.append(f"  {'':4s}assumes: {r.assumes}" + (f"  ({r.note})" if r.note else ""))
    for n in table.notes:
        lines.append(f"  note: {n}")
    return lines


# ------------------------------------------------------------------------------------------------
def _read(args):
    from ..labfiles import read_curves

    opts = {}
    if args.profile:
        opts["profile"] = args.profile
    if args.mode:
        opts["mode"] = args.mode
    if args.temperature:
        opts["temperature"] = quantity(args.temperature, "temperature", "--temperature", "23C")
    for key, what in (("gauge_length", "--gauge-length"), ("width", "--width"), ("thickness", "--thickness")):
        v = getattr(args, key)
        if v:
            opts[key] = quantity(v, "length", what, "20mm")
    curves = []
    for path in args.files:
        curves.extend(read_curves(path, **opts))
    if args.save_profile:
        from ..labfiles import load_profile, save_profile

        given = {k: v for k, v in opts.items() if k != "profile"}
        base = load_profile(args.profile) if args.profile else {}
        save_profile(args.save_profile, {**base, **given}, note=f"saved by netstretch fit from {args.files[0]}")
    if not curves:
        raise ValueError("the files hold no test curves")
    return curves


def _format_result(res, table, stretch_unit="stretch") -> list[str]:
    out = [f"Model: {res.title}   ({res.n} points, {res.k} fitted parameter(s), {res.residual} residuals)"]
    out.append(f"  {'parameter':10s} {'value':>11s} {'± std. error':>13s} {'95 % interval':>25s}  unit")
    for p in res.params.values():
        scale = p.display_scale if p.display_unit else 1.0
        unit = p.display_unit or ("—" if p.unit == "1" else p.unit)
        tag = "  (fixed)" if p.fixed else ""
        ci = _ci(p.ci95, scale) if p.fixed or getattr(p, "determined", True) else "not determined"
        out.append(f"  {(p.symbol or p.name):10s} {_num(p.value, scale):>11s} {_num(p.stderr, scale, 2):>13s} "
                   f"{ci:>25s}  {unit}{tag}")
    out.append(f"  small-strain shear modulus G₀ = {res.small_strain_modulus / 1e6:.4g} MPa")
    from ..display_units import stretch_shown

    tested = "tested elongation %" if stretch_unit == "elongation" else "tested λ"
    out.append(f"  {'mode':12s} {'n':>4s} {'RMS / MPa':>10s} {'R²':>8s}   {tested}")
    for m, s in res.modes.items():
        lo, hi = (stretch_shown(x, stretch_unit) for x in s.tested_range)
        out.append(f"  {m.value:12s} {s.n:4d} {_num(s.rms, 1e-6, 3):>10s} {_num(s.r2, 1, 5):>8s}   "
                   f"{lo:.3g} – {hi:.3g}")
    out.append(f"  AIC {res.aic:.1f}   BIC {res.bic:.1f}   (converged after {res.nfev} model evaluations)")
    if res.warnings:
        out.append("  Warnings:")
        out.extend(f"   - {w}" for w in res.warnings)
    if table is not None:
        out.append(f"  Network estimate (polymer {table.polymer}, T = {celsius(table.T):.1f} °C, f = {table.f:g}):")
        out.extend(format_crosslink_table(table))
    return out


def run(args: argparse.Namespace) -> int:
    from ..network import get_polymer

    names = args.model or ["eight-chain"]
    models = [get_model(n) for n in names]  # KeyError with the list of models → exit 2
    get_polymer(args.polymer)  # an unknown polymer is a usage error before any work
    curves = _read(args)
    if not (args.functionality >= 3):
        raise ValueError(f"--functionality must be at least 3 (4 for a tetrafunctional crosslink); "
                         f"got {args.functionality:g}")
    results = fit_many(models, curves, residual=args.residual, polymer=args.polymer,
                       intervals=getattr(args, "intervals", "transformed"))
    tables = {}
    for name, r in results.items():
        if isinstance(r, Exception):
            continue
        try:
            tables[name] = from_fit(r, polymer=args.polymer, f=args.functionality)
        except (ValueError, KeyError) as exc:
            msg = exc.args[0] if isinstance(exc, KeyError) and exc.args else str(exc)
            r.warnings.append(f"no crosslink table: {msg}")
    ok = [n for n, r in results.items() if not isinstance(r, Exception)]
    notices = [f"{c.name}: {n}" for c in curves for n in c.notices]

    if args.json:
        doc = {
            "command": "fit", "files": list(args.files),
            "curves": [{"name": c.name, "mode": c.mode.value, "n": len(c), "source": c.source,
                        "temperature_K": c.temperature, "notices": list(c.notices)} for c in curves],
            "residual": args.residual,
            "ultimate": ultimate_rows(curves), "ultimate_rule": ULTIMATE_RULE,
            "models": {},
            "caution": CAUTION,
        }
        for name, r in results.items():
            if isinstance(r, Exception):
                doc["models"][name] = {"model": name, "error": str(r)}
            else:
                d = r.to_dict()
                d["network"] = tables[name].to_dict() if name in tables else None
                d["fit_basis"] = {"statistic": "pooled fit", "model": name, "residual": args.residual,
                                  "curves": len(curves),
                                  "label": f"one fit of {name} to all {len(curves)} curve(s), {args.residual} "
                                           "residuals (statistics.small_strain_modulus_Pa)"}
                doc["models"][name] = d
        if len(ok) > 1:
            doc["best_by_aic"] = min(ok, key=lambda n: cast(FitResult, results[n]).aic)
        print(dumps(doc))
    else:
        modes: dict = {}
        for c in curves:
            modes[c.mode.value] = modes.get(c.mode.value, 0) + 1
        print(f"{len(curves)} curve(s) from {len(args.files)} file(s): "
              + ", ".join(f"{k} {v}" for k, v in modes.items()))
        temps = sorted({c.temperature for c in curves if c.temperature is not None})
        print("test temperature: " + (", ".join(f"{celsius(t):.1f} °C" for t in temps) if temps
                                      else "not stated (23 °C assumed for the crosslink table)"))
        for n in notices:
            print(f"  file note: {n}")
        broke = ultimate_rows(curves)
        if broke:
            print("break properties (nominal stress; " + ULTIMATE_RULE + "):")
            for u in broke:
                print(f"  {u['specimen']}: tensile strength {u['tensile_strength_Pa'] / 1e6:.3g} MPa, elongation at "
                      f"break {u['elongation_at_break_percent']:.0f} %, stress at break "
                      f"{u['stress_at_break_Pa'] / 1e6:.3g} MPa")
        for name, r in results.items():
            print()
            if isinstance(r, Exception):
                print(f"Model: {get_model(name).title}: the fit failed — {r}")
                continue
            print("\n".join(_format_result(r, tables.get(name), args.stretch_unit)))
        if len(ok) > 1:
            best = cast(FitResult, results[min(ok, key=lambda n: cast(FitResult, results[n]).aic)])
            print(f"\nLowest AIC on these curves: {best.title} (compare AIC only on the same curves and "
                  "residual choice; a lower AIC is a better fit per parameter, not proof of the physics)")
        print()
        print(CAUTION)
    if not ok:
        first = next(iter(results.values()))
        raise ValueError(f"no model could be fitted: {first}")
    return 0

"""``netstretch report`` and ``netstretch compare``: fit one model to several compounds, compare them against
a baseline and (report) write the self-contained design-review HTML with CSV and JSON beside it.

    netstretch report --compound A=a_uni.csv,a_planar.csv --compound B=b_uni.csv --baseline A \\
        --model extended-tube --service-temperature 80C --purpose "Pick the cure dose" -o review.html
    netstretch report --manifest sample_sets/compounds.toml -o review.html
    netstretch compare --manifest sample_sets/compounds.toml --service-temperature 80C
    netstretch compare --manifest sample_sets/compounds.toml --exclude "QM-S1:S1-4:torn at the grip" --json
"""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import Any, cast

from ..display_units import DENSITY_UNITS, STRESS_UNITS, apply_to_comparison
from ..errors import merge_notices
from ..study import DEFAULT_MODEL  # the comparison's default model (one constant, in the study)
from ._options import add_functionality, add_json, add_polymer


def _common(p):
    p.add_argument("--compound", action="append", default=[], metavar="NAME=FILE[,FILE...]",
                   help="a compound and its lab files (repeat for each compound)")
    p.add_argument("--manifest", metavar="PATH",
                   help="a manifest listing compounds and files, e.g. sample_sets/compounds.toml")
    p.add_argument("--project", metavar="FILE.zip",
                   help="a project file (`netstretch project`): its inputs and settings; options given here "
                        "override the stored settings")
    p.add_argument("--baseline", metavar="NAME", help="compound the others are compared with (default: the "
                   "manifest's baseline, else the first)")
    p.add_argument("--model", default=None, metavar="NAME",
                   help=f"model fitted to every compound (default {DEFAULT_MODEL}, or the project's; see "
                        "`netstretch models`)")
    p.add_argument("--residual", choices=("relative", "absolute"), default=None,
                   help="residual weighting of every fit (default relative, the same as `fit`, or the project's)")
    p.add_argument("--service-temperature", metavar="T", help="service temperature, e.g. 80C (default: test "
                   "temperature)")
    p.add_argument("--mode", choices=("uniaxial", "equibiaxial", "planar"),
                   help="test mode for --compound files that do not state it")
    add_polymer(p, "polymer of --compound compounds (default NR)")
    add_functionality(p, "junction functionality f of --compound compounds (default 4)")
    p.add_argument("--exclude", action="append", default=[], metavar="COMPOUND:SPECIMEN[:REASON]",
                   help="keep a specimen out of the statistics, with the reason (repeat it); listed in the results")
    p.add_argument("--pool", action="store_true",
                   help="fit files that state different compounds together as one compound (off: they are refused)")
    p.add_argument("--stress-unit", default="MPa", choices=STRESS_UNITS,
                   help="unit stresses and moduli are shown in (tables, report; the CSV/JSON keep SI beside it)")
    p.add_argument("--density-unit", default="mol/m³", choices=DENSITY_UNITS,
                   help="unit strand and junction densities are shown in (mol/kg divides by the polymer density)")
    p.add_argument("--stretch-unit", default="stretch", choices=("stretch", "elongation"),
                   help="show stretch-valued numbers as stretch λ (default) or as elongation %% — the locking "
                        "stretch then reads as the elongation reserve (λ_lock − 1)·100 %%")
    p.add_argument("--spec", action="append", default=[], metavar="SPEC",
                   help="a specification in the design-target grammar, judged per compound (meets / fails / "
                        "uncertain / cannot judge), e.g. \"G=0.55..0.68MPa\", \"M100>=1.2MPa\", \"EB>=450%%\"; "
                        "repeat it")
    p.add_argument("--no-model-spread", action="store_true",
                   help="skip fitting the other models for the model spread beside the headline (faster)")
    p.add_argument("--holm", action="store_true",
                   help="family-wise verdicts: judge each compound's quantities together (Holm), so equal compounds "
                        "show any 'different' in at most 5 %% of comparisons (default: 5 %% per quantity)")


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("report", help="design-review report: compare compounds, write HTML + CSV + JSON",
                       description="Fit one model to every compound, compare with a baseline and write a "
                                   "self-contained HTML report with CSV and JSON beside it.")
    _common(p)
    p.add_argument("--title", default="", help="report title")
    p.add_argument("--purpose", default="", help="one line: what the review is for")
    p.add_argument("--pdf", action="store_true",
                   help="also print the report to FILE.pdf (A4) with a headless Chromium when one is installed "
                        "(NETSTRETCH_CHROMIUM or 'chromium' on PATH); otherwise says how to print it")
    p.add_argument("-o", "--output", default="review.html", metavar="FILE.html",
                   help="HTML file to write (the .csv and .json go beside it; default review.html)")
    p.set_defaults(run=run_report)
    c = sub.add_parser("compare", help="compare compounds on one model: table on screen (or --json)",
                       description="Fit one model to every compound and print the comparison.")
    _common(c)
    add_json(c)
    c.set_defaults(run=run_compare)


def _service_temperature(text):
    from ..cli import UserError
    from ..units import parse_quantity

    text = text.strip()
    if not any(ch.isalpha() or ch == "°" for ch in text):
        raise UserError(f"service temperature {text!r} has no unit; write e.g. 80C or 353K")
    try:
        return parse_quantity(text, "temperature")
    except ValueError as exc:
        raise UserError(f"service temperature: {exc}") from None


def settings_from_args(args: argparse.Namespace) -> dict:
    """The study settings the command line gives explicitly (they override a project's stored settings)."""
    out = {}
    if getattr(args, "model", None):
        out["model"] = args.model
    if getattr(args, "residual", None):
        out["residual"] = args.residual
    if getattr(args, "service_temperature", None):
        out["service_temperature"] = _service_temperature(args.service_temperature)
    if getattr(args, "baseline", None):
        out["baseline"] = args.baseline
    if getattr(args, "exclude", None):
        out["exclusions"] = parse_exclusions(args.exclude)
    if getattr(args, "pool", False):
        out["pool"] = True
    if getattr(args, "no_model_spread", False):
        out["spread_models"] = ()
    if getattr(args, "holm", False):
        out["holm"] = True
    return out


def build_study(args: argparse.Namespace) -> Any:
    """The study a command works on: from ``--project``, or ``--manifest`` and/or ``--compound`` files; the
    settings given on the command line override the stored ones."""
    from ..cli import UserError
    from ..study import Study

    sources = [x for x in (args.project, args.manifest) if x] + (["--compound"] if args.compound else [])
    if not sources:
        raise UserError("give compounds with --compound NAME=FILE[,FILE...] (repeat it), a --manifest file or a "
                        "--project file")
    if args.project and (args.manifest or args.compound):
        raise UserError("--project holds its own compounds; give it alone (without --manifest or --compound)")
    if args.project:
        st = Study.from_project(args.project)
    else:
        parts = []
        if args.manifest:
            parts.append(Study.from_manifest(args.manifest))
        if args.compound:
            opts = {"mode": args.mode} if args.mode else {}
            parts.append(Study.from_specs(args.compound, polymer=args.polymer, f=args.functionality,
                                          read_options=opts))
        if len(parts) == 1:
            st = parts[0]
        else:
            clash = set(parts[0].names) & set(parts[1].names)
            if clash:
                raise UserError(f"compound name(s) {', '.join(sorted(clash))} given twice (manifest and --compound)")
            st = Study(parts[0].compounds + parts[1].compounds, settings=parts[0].settings, title=parts[0].title,
                       purpose=parts[0].purpose, inputs=parts[0].inputs + parts[1].inputs,
                       force_temperature=parts[0].force_temperature)
    st.update(**settings_from_args(args))
    return st


def parse_exclusions(items) -> dict[str, dict[str, str]]:
    """``["C:S:reason", "C:S"]`` -> ``{"C": {"S": "reason"}}``, with a sentence for a malformed one."""
    from ..cli import UserError

    out: dict[str, dict[str, str]] = {}
    for item in items or []:
        parts = item.split(":", 2)
        if len(parts) < 2 or not parts[0].strip() or not parts[1].strip():
            raise UserError(f"--exclude {item!r}: write it as COMPOUND:SPECIMEN[:REASON], e.g. "
                            "'QM-S1:S1-4:torn at the grip'")
        reason = parts[2].strip() if len(parts) > 2 and parts[2].strip() else "excluded by the user"
        out.setdefault(parts[0].strip(), {})[parts[1].strip()] = reason
    return out


def _compare(args):
    from ..specs import parse_spec

    for text in getattr(args, "spec", []):  # a bad specification is refused before any fitting
        parse_spec(text)
    st = build_study(args)
    cmp = st.comparison()
    apply_to_comparison(cmp, stress=args.stress_unit, density=args.density_unit,
                        stretch=getattr(args, "stretch_unit", "stretch"))
    # the specifications given now, else those stored with the study (a project file)
    cmp.specs = list(getattr(args, "spec", [])) or list(st.settings.specifications)
    return cmp, st.title, st.purpose


def _fmt(q, scale=None):
    from ..report import fmt

    if q is None or q.value is None:
        return "—"
    s = q.display_scale if scale is None else scale
    txt = fmt(q.value * s)
    if q.has_interval:
        txt += f" [{fmt(q.low * s)}–{fmt(q.high * s)}]"
    return txt


def summary(cmp) -> str:
    """A tidy human summary of a comparison."""
    from ..constants import celsius
    from ..models import get_model

    m = get_model(cmp.model)
    lines = [f"Model: {m.title}; baseline {cmp.baseline}; "
             f"service temperature {celsius(cmp.service_temperature):.1f} °C",
             "ν = strand density, μ_j = junction (crosslink) density = 2ν/f; basis: the headline basis below; "
             "values are specimen means, [95 % interval] from specimen scatter with fit error", ""]
    su, du = cmp.display_units["stress"], cmp.display_units["density"]
    cols = (("G0", f"G₀ ({su})"), ("nu", f"ν ({du})"), ("mu_j", f"μ_j ({du})"), ("Mc", "M_c (g/mol)"),
            ("N", "N"), ("lock", "λ_lock uniaxial"), ("lock_elongation", "elongation reserve (%)"),
            ("ent_share", "entanglement (%)"),
            ("G0_service", f"G₀ at T_s ({su})"), ("M100_measured", f"M100 meas. ({su})"),
            ("M100_predicted", f"M100 fit ({su})"), ("M300_measured", f"M300 meas. ({su})"),
            ("M300_predicted", f"M300 fit ({su})"), ("nu_swelling", f"ν swelling ({du})"))
    table = [["quantity"] + [r.name + (" (base)" if r.name == cmp.baseline else "") for r in cmp.results],
             ["specimens (n)"] + [str(r.n) if r.ok else "—" for r in cmp.results]]
    for key, label in cols:
        if not any(key in r.quantities for r in cmp.results):
            continue
        table.append([label] + [_fmt(r.quantities.get(key)) if r.ok else "fit failed" for r in cmp.results])
    widths = [max(len(row[i]) for row in table) for i in range(len(table[0]))]
    for row in table:
        lines.append("  ".join(f"{c:<{w}s}" if i == 0 else f"{c:>{w}s}" for i, (c, w) in
                               enumerate(zip(row, widths, strict=True))).rstrip())
    lines += headline_lines(cmp) + verdict_lines(cmp)
    problems = [r.error for r in cmp.results if r.error] + merge_notices(w for r in cmp.results for w in r.warnings)
    if problems:
        lines.append("")
        lines.append("Warnings:")
        lines.extend(f"  - {w}" for w in problems)
    return "\n".join(lines)


def headline_lines(cmp) -> list[str]:
    """One line per compound: the headline ν with its basis, n and interval (or why there is none)."""
    from ..report import fmt

    out = ["", "Headline (strand density ν, mol/m³; interval: specimen scatter with fit error, 95 %):"]
    for r in cmp.results:
        h = r.headline
        if h is None:
            out.append(f"  {r.name}: no headline — {r.error or 'not fitted'}")
            continue
        ci = f"[{fmt(h.ci95[0])}–{fmt(h.ci95[1])}]" if h.ci95 else "scatter unknown"
        excl = [s.name for s in r.specimens if s.excluded]
        out.append(f"  {r.name}: ν = {fmt(h.value)} {ci}, n = {h.n} specimen(s); basis: {h.basis}"
                   + (f" ({h.note})" if h.note else "") + (f"; excluded: {', '.join(excl)}" if excl else ""))
    return out


def verdict_lines(cmp) -> list[str]:
    from ..report import fmt
    from ..statistics import VERDICT_WORDING

    diffs = [d for d in cmp.differences() if d["quantity"] in ("G0", "strand_density", "M100_measured")]
    if not diffs:
        return []
    width = max(len(r.name) for r in cmp.results) + 2
    out = ["", f"Against {cmp.baseline} (from the specimens; Welch 95 % interval of the difference):"]
    for d in diffs:
        ci = (f"[{d['ci95_percent'][0]:+.1f} … {d['ci95_percent'][1]:+.1f} %]" if d.get("ci95_percent") else "")
        mdd = f"; detectable ≥ {d['detectable_percent']:.1f} %" if d.get("detectable_percent") is not None else ""
        pct = "—" if d["percent"] is None else f"{d['percent']:+7.1f} %"
        absv = ("" if d["absolute"] is None or d["quantity"] != "strand_density"
                else f" (Δν {fmt(d['absolute'])} mol/m³)")
        out.append(f"  {d['compound']:{width}s} {d['label']:32s} {pct}{absv} {ci}  {d['verdict'].upper()}"
                   f" (n {d['n']} vs {d['n_baseline']}{mdd})")
    out.append("  " + VERDICT_WORDING)
    if getattr(cmp, "family_wise", None) == "holm":
        from ..compare.core import HOLM_NOTE

        out.append("  " + HOLM_NOTE)
    return out


def run_compare(args: argparse.Namespace) -> int:
    from ..constants import CAUTION
    from ..jsonio import dumps

    cmp, _title, _purpose = _compare(args)
    if args.json:
        doc = cmp.to_dict()
        doc["caution"] = CAUTION
        print(dumps(doc))
    else:
        print(summary(cmp))
        from ..specs import spec_lines

        print("\n".join(spec_lines(cmp)))
        print("\n" + CAUTION)
    return 0 if any(r.ok for r in cmp.results) else 2


def _print_pdf(html_path):
    """FILE.pdf beside the HTML, printed (A4, from the report's print style) by a headless Chromium
    (:func:`network_models.report.pdf.print_pdf`, shared with the app's Compare tab)."""
    from ..report.pdf import print_pdf

    how = (f"the HTML, CSV, JSON and charts were written — open {html_path} in a browser and print it to PDF "
           "(A4 portrait); the report has a print layout")
    return print_pdf(html_path, how=how)


def run_report(args: argparse.Namespace) -> int:
    from pathlib import Path

    from ..cli import UserError
    from ..report import Report

    suffix = Path(args.output).suffix.lower()
    if suffix not in (".html", ".htm"):
        raise UserError(f"-o {args.output}: the report is written as FILE.html (with FILE.csv, FILE.json and "
                        "FILE.xlsx beside it); give a name ending in .html")
    cmp, title, purpose = _compare(args)
    if not any(r.ok for r in cmp.results):
        errs = [r.error for r in cmp.results if r.error]
        raise UserError(f"no compound could be fitted, so no report was written ({errs[0]}"
                        + (f"; and {len(errs) - 1} more like it" if len(errs) > 1 else "") + ")")
    rep = Report(cmp, title=args.title or title or "Compound design review", purpose=args.purpose or purpose)
    try:
        paths = rep.write(args.output)
    except OSError as exc:
        raise UserError(f"cannot write {args.output}: {exc.strerror or exc}") from None
    from ..constants import CAUTION

    print(summary(cmp))
    if args.pdf:
        paths["pdf"] = _print_pdf(paths["html"])
    charts = cast("list[Path]", paths.pop("charts", []))
    print("\nWrote " + ", ".join(str(p) for p in paths.values())
          + (f" and {len(charts)} chart(s) as SVG in {charts[0].parent}" if charts else ""))
    print(CAUTION)
    return 0


"""``netstretch report`` and ``netstretch compare``: fit one model to several compounds, compare them against
a baseline and (report) write the self-contained design-review HTML with CSV and JSON beside it.

    netstretch report --compound A=a_uni.csv,a_planar.csv --compound B=b_uni.csv --baseline A \\
        --model extended-tube --service-temperature 80C --purpose "Pick the cure dose" -o review.html
    netstretch report --manifest sample_sets/compounds.toml -o review.html
    netstretch compare --manifest sample_sets/compounds.toml --service-temperature 80C
"""

from __future__ import annotations

#: default model of a comparison: separates crosslink (G_c) and entanglement (G_e) parts and locks
DEFAULT_MODEL = "extended-tube"


def _common(p):
    p.add_argument("--compound", action="append", default=[], metavar="NAME=FILE[,FILE...]",
                   help="a compound and its lab files (repeat for each compound)")
    p.add_argument("--manifest", metavar="PATH",
                   help="a manifest listing compounds and files, e.g. sample_sets/compounds.toml")
    p.add_argument("--baseline", metavar="NAME", help="compound the others are compared with (default: the "
                   "manifest's baseline, else the first)")
    p.add_argument("--model", default=DEFAULT_MODEL, metavar="NAME",
                   help=f"model fitted to every compound (default {DEFAULT_MODEL}; see `netstretch models`)")
    p.add_argument("--service-temperature", metavar="T", help="service temperature, e.g. 80C (default: test "
                   "temperature)")
    p.add_argument("--mode", choices=("uniaxial", "equibiaxial", "planar"),
                   help="test mode for --compound files that do not state it")
    p.add_argument("--polymer", default="NR", help="polymer of --compound compounds (default NR)")
    p.add_argument("--functionality", type=float, default=4.0, metavar="F",
                   help="junction functionality f of --compound compounds (default 4)")


def add_parser(sub):
    p = sub.add_parser("report", help="design-review report: compare compounds, write HTML + CSV + JSON",
                       description="Fit one model to every compound, compare with a baseline and write a "
                                   "self-contained HTML report with CSV and JSON beside it.")
    _common(p)
    p.add_argument("--title", default="", help="report title")
    p.add_argument("--purpose", default="", help="one line: what the review is for")
    p.add_argument("-o", "--output", default="review.html", metavar="FILE.html",
                   help="HTML file to write (the .csv and .json go beside it; default review.html)")
    p.set_defaults(run=run_report)
    c = sub.add_parser("compare", help="compare compounds on one model: table on screen (or --json)",
                       description="Fit one model to every compound and print the comparison.")
    _common(c)
    c.add_argument("--json", action="store_true", help="print one JSON document (SI units)")
    c.set_defaults(run=run_compare)


def _load(args):
    from ..cli import UserError
    from ..compounds import compounds_from_specs, load_manifest
    from ..units import parse_quantity

    if not args.compound and not args.manifest:
        raise UserError("give compounds with --compound NAME=FILE[,FILE...] (repeat it) or a --manifest file")
    comps, title, purpose, baseline = [], "", "", None
    if args.manifest:
        man = load_manifest(args.manifest)
        comps.extend(man.compounds)
        title, purpose, baseline = man.title, man.purpose, man.baseline
    if args.compound:
        opts = {"mode": args.mode} if args.mode else {}
        extra = compounds_from_specs(args.compound, polymer=args.polymer, f=args.functionality, read_options=opts)
        clash = {c.name for c in extra} & {c.name for c in comps}
        if clash:
            raise UserError(f"compound name(s) {', '.join(sorted(clash))} given twice (manifest and --compound)")
        comps.extend(extra)
    Ts = None
    if args.service_temperature:
        text = args.service_temperature.strip()
        if not any(ch.isalpha() or ch == "°" for ch in text):
            raise UserError(f"service temperature {text!r} has no unit; write e.g. 80C or 353K")
        try:
            Ts = parse_quantity(text, "temperature")
        except ValueError as exc:
            raise UserError(f"service temperature: {exc}") from None
    return comps, title, purpose, args.baseline or baseline, Ts


def _compare(args):
    from ..compare import compare

    comps, title, purpose, baseline, Ts = _load(args)
    cmp = compare(comps, model=args.model, baseline=baseline, service_temperature=Ts)
    return cmp, title, purpose


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
    from ..models import get_model

    m = get_model(cmp.model)
    lines = [f"Model: {m.title}; baseline {cmp.baseline}; "
             f"service temperature {cmp.service_temperature - 273.15:.1f} °C",
             "ν = strand density, μ_j = junction (crosslink) density = 2ν/f; basis: affine, entanglement part "
             "removed (and filler, by Guth–Gold, where a filler fraction is given); [95 % interval]", ""]
    cols = (("G0", "G₀ (MPa)"), ("nu", "ν (mol/m³)"), ("mu_j", "μ_j (mol/m³)"), ("Mc", "M_c (g/mol)"),
            ("N", "N"), ("lock", "λ_lock uniaxial"), ("ent_share", "entanglement (%)"),
            ("G0_service", "G₀ at T_s (MPa)"), ("M100_measured", "M100 meas. (MPa)"),
            ("M100_predicted", "M100 fit (MPa)"), ("M300_measured", "M300 meas. (MPa)"),
            ("M300_predicted", "M300 fit (MPa)"), ("nu_swelling", "ν swelling (mol/m³)"))
    table = [["quantity"] + [r.name + (" (base)" if r.name == cmp.baseline else "") for r in cmp.results]]
    for key, label in cols:
        if not any(key in r.quantities for r in cmp.results):
            continue
        table.append([label] + [_fmt(r.quantities.get(key)) if r.ok else "fit failed" for r in cmp.results])
    widths = [max(len(row[i]) for row in table) for i in range(len(table[0]))]
    for row in table:
        lines.append("  ".join(f"{c:<{w}s}" if i == 0 else f"{c:>{w}s}" for i, (c, w) in
                               enumerate(zip(row, widths, strict=True))).rstrip())
    width = max(len(r.name) for r in cmp.results) + 2
    diffs = [d for d in cmp.differences() if d["key"] in ("G0", "nu", "M100_measured", "nu_swelling")]
    if diffs:
        lines.append("")
        lines.append(f"Against {cmp.baseline}:")
        for d in diffs:
            ov = {True: "95 % intervals overlap", False: "95 % intervals apart", None: "no statistical interval"}[
                d["intervals_overlap"]]
            lines.append(f"  {d['compound']:{width}s} {d['label']:34s} {d['percent']:+7.1f} %   {ov}")
    problems = [r.error for r in cmp.results if r.error] + [w for r in cmp.results for w in r.warnings]
    if problems:
        lines.append("")
        lines.append("Warnings:")
        lines.extend(f"  - {w}" for w in problems)
    return "\n".join(lines)


def run_compare(args):
    cmp, _title, _purpose = _compare(args)
    if args.json:
        from ..jsonio import dumps

        print(dumps(cmp.to_dict()))  # one JSON object (was a JSON-encoded string)
    else:
        print(summary(cmp))
        print("\nModel results support design decisions; they do not replace validation testing of parts.")
    return 0 if any(r.ok for r in cmp.results) else 2


def run_report(args):
    from ..cli import UserError
    from ..report import Report

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
    print(summary(cmp))
    print("\nWrote " + ", ".join(str(p) for p in paths.values()))
    print("Model results support design decisions; they do not replace validation testing of parts.")
    return 0


"""``netstretch project``: write a study — a manifest's compounds with every input file byte for byte and
the analysis settings (model, weighting, service temperature, baseline, exclusions, design targets,
specifications) — into one project file that ``compare``, ``report`` and ``design`` read with ``--project``
and the app opens.

    netstretch project --manifest sample_sets/compounds.toml -o cure-study.zip
    netstretch project --manifest sample_sets/compounds.toml --service-temperature 80C \\
        --exclude "QM-S1:S1-4:torn at the grip" --target "M100=1.7..1.9MPa" --spec "M100=1.6..2.0MPa" -o s.zip
    netstretch compare --project s.zip --json
"""

from __future__ import annotations

import argparse
from pathlib import Path

from .report import _common, build_study


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("project", help="write a project file (the study: inputs byte for byte and settings)",
                       description="Write one project file (zip: project.toml and the input files) from a manifest "
                                   "or --compound files and the settings given here.")
    _common(p)
    p.add_argument("--title", default="", help="the study's title (default: the manifest's)")
    p.add_argument("--purpose", default="", help="one line: what the study is for (default: the manifest's)")
    p.add_argument("--target", action="append", default=[], metavar="TARGET",
                   help="a design target stored with the study, e.g. 'M100=1.7..1.9MPa' (repeat)")
    p.add_argument("--design-model", metavar="MODEL", help="model the design window uses (default affine)")
    # --spec comes with _common (compare/report judge it; here it is stored with the study)
    p.add_argument("--chi-source", choices=("manifest", "table"),
                   help="χ of the swelling tests: the manifest's (default) or the solvent table's")
    p.add_argument("-o", "--output", required=True, metavar="FILE.zip", help="project file to write")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from ..cli import UserError

    st = build_study(args)
    extra = {}
    if args.target:
        extra["design_targets"] = tuple(args.target)
    if args.design_model:
        extra["design_model"] = args.design_model
    if args.spec:
        extra["specifications"] = tuple(args.spec)
    if args.chi_source:
        extra["chi_source"] = args.chi_source
    st.update(**extra)
    if args.title:
        st.title = args.title
    if args.purpose:
        st.purpose = args.purpose
    if st.settings.design_targets:  # a target that does not parse is refused now, not when the project is opened
        from ..design.targets import parse_targets

        parse_targets(list(st.settings.design_targets))
    out = Path(args.output)
    try:
        out.write_bytes(st.to_project())
    except OSError as exc:
        raise UserError(f"cannot write {args.output}: {exc.strerror or exc}") from None
    print(f"Wrote {out} ({len(st.compounds)} compound(s), {len(st.inputs)} input file(s)); open it with "
          f"`netstretch compare --project {out}` or in the app")
    return 0

"""``netstretch crosslinks``: strand and junction density from one modulus a compounder has (G, E, M100,
M300 or Mooney 2C1), as a table of stated assumptions.

    netstretch crosslinks --modulus 0.55MPa --kind G --temperature 23C --polymer NR
    netstretch crosslinks --modulus 1.9MPa --kind M100 --polymer SBR --filler 0.15 --json
"""

from __future__ import annotations

import argparse

from ..constants import celsius
from ..crosslinks import KINDS, from_modulus
from ._options import add_functionality, add_json, add_polymer
from .fit import CAUTION, format_crosslink_table, json_document, quantity


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("crosslinks", help="crosslink density from a modulus (G, E, M100, M300, 2C1)",
                       description="Strand density ν and junction density μ_j = 2ν/f from one modulus, "
                                   "under each usual assumption.")
    p.add_argument("--modulus", required=True, metavar="VALUE",
                   help="the modulus with its unit, e.g. 0.55MPa; or a Shore A hardness, e.g. 62ShoreA (then the "
                        "kind is E, through Gent's 1958 hardness–modulus relation, approximate)")
    p.add_argument("--kind", default="G", type=str.upper, choices=KINDS,
                   help="G shear modulus, E Young's modulus, M100/M300 stress at 100 %%/300 %% elongation, "
                        "2C1 Mooney intercept (default G)")
    p.add_argument("--c2", metavar="VALUE", help="Mooney 2C2 with unit (with --kind 2C1): taken as entanglement share")
    p.add_argument("--range", nargs=2, metavar=("LOW", "HIGH"),
                   help="95 %% interval of the modulus, same kind, with units (gives intervals on every row)")
    p.add_argument("--temperature", default="23C", metavar="T", help="test temperature (default 23C)")
    add_polymer(p)
    add_functionality(p)
    p.add_argument("--filler", type=float, default=0.0, metavar="PHI",
                   help="filler volume fraction, adds a Guth–Gold row (default 0)")
    p.add_argument("--mn", metavar="M", help="primary-chain M_n before crosslinking, e.g. 250kg/mol (dangling ends)")
    p.add_argument("--sol-fraction", type=float, default=None, metavar="W",
                   help="sol (extractable) mass fraction 0…1 from extraction: adds rows with only the trapped "
                        "entanglements removed (Langley trapping factor)")
    add_json(p)
    p.set_defaults(run=run)


def _molar_mass(text):
    from ..units import parse_quantity

    s = str(text).strip().replace(" ", "")
    if not s.lower().endswith("/mol"):
        raise ValueError(f"--mn {text!r}: write the molar mass with its unit, e.g. 250kg/mol or 250000g/mol")
    try:
        v = parse_quantity(s)  # SI base units: kg/mol
    except ValueError as exc:
        raise ValueError(f"--mn: {exc}") from None
    if not (v > 0):
        raise ValueError(f"--mn must be positive; got {text!r}")
    return v


def run(args: argparse.Namespace) -> int:
    from ..hardness import CAUTION as HARD_CAUTION
    from ..hardness import SCATTER_POINTS, SOURCE, parse_shore_a, shore_a_band, shore_a_to_e

    shore = parse_shore_a(args.modulus)  # "62ShoreA": the unit sets the kind (Young's modulus via Gent 1958)
    if shore is not None:
        if args.range:
            raise ValueError("--range goes with a modulus; with a Shore A hardness the band is ±"
                             f"{SCATTER_POINTS:g} points")
        args.kind = "E"
        args.range = [f"{e}Pa" for e in shore_a_band(shore)]
        args.modulus = f"{shore_a_to_e(shore)}Pa"
    G = quantity(args.modulus, "pressure", "--modulus", "0.55MPa")
    T = quantity(args.temperature, "temperature", "--temperature", "23C")
    if not (0.0 <= args.filler < 0.5):
        raise ValueError(f"--filler is a volume fraction between 0 and 0.5; got {args.filler:g}")
    ci = None
    if args.range:
        lo = quantity(args.range[0], "pressure", "--range", "0.5MPa")
        hi = quantity(args.range[1], "pressure", "--range", "0.6MPa")
        if not (0 < lo <= G <= hi):
            raise ValueError("--range must bracket the modulus: LOW ≤ modulus ≤ HIGH, both positive")
        ci = (lo, hi)
    c2 = None
    if args.c2:
        if args.kind != "2C1":
            raise ValueError("--c2 goes with --kind 2C1 (the Mooney intercept)")
        c2 = quantity(args.c2, "pressure", "--c2", "0.1MPa")
    Mn = _molar_mass(args.mn) if args.mn else None
    if Mn is not None:  # a chain lighter than one repeat unit cannot exist
        from ..materials import get_polymer

        m0 = get_polymer(args.polymer).monomer_molar_mass
        if Mn < m0:
            raise ValueError(f"--mn {args.mn} is below the molar mass of one repeat unit of {args.polymer} "
                             f"({m0 * 1e3:.4g} g/mol); give the primary chains' M_n, e.g. 250kg/mol")
    if args.sol_fraction is not None and not (0.0 <= args.sol_fraction < 1.0):
        raise ValueError(f"--sol-fraction is a mass fraction between 0 and 1; got {args.sol_fraction:g}")
    table = from_modulus(G, args.kind, polymer=args.polymer, T=T, f=args.functionality,
                         filler_fraction=args.filler, Mn=Mn, ci95=ci, c2=c2, sol_fraction=args.sol_fraction)
    band = ci or (G, G)  # a Shore A value always comes with its band (set above)
    if args.json:
        doc = {"command": "crosslinks", **table.to_dict(), "caution": CAUTION}
        if shore is not None:
            doc["hardness"] = {"shore_a": shore, "E_Pa": G, "E_band_Pa": [band[0], band[1]],
                               "band": f"±{SCATTER_POINTS:g} Shore A", "source": SOURCE, "caution": HARD_CAUTION}
        print(json_document(doc))
        return 0
    if shore is not None:
        print(f"{shore:g} Shore A → E = {G / 1e6:.4g} MPa (band {band[0] / 1e6:.3g}–{band[1] / 1e6:.3g} MPa for "
              f"±{SCATTER_POINTS:g} points); {SOURCE}\n  caution: {HARD_CAUTION}")
    print(f"{args.kind} = {G / 1e6:.4g} MPa → small-strain shear modulus G = {table.G / 1e6:.4g} MPa; "
          f"polymer {table.polymer}, T = {celsius(T):.1f} °C, f = {args.functionality:g}")
    print("\n".join(format_crosslink_table(table)))
    h = table.headline()
    if h["value"] is not None:
        print(f"Headline ν = {h['value']:.4g} mol/m³ — basis: {h['basis']} (the comparison's headline rule; "
              "`design --model affine` counts ν on this basis)")
    print()
    print(CAUTION)
    return 0

"""``netstretch swell``: strand density from an equilibrium swelling test (Flory–Rehner), with the
χ ± 0.05 band, the junction density and, on request, a modulus-based estimate beside it.

    netstretch swell --dry 1.000g --swollen 3.20g --solvent toluene --polymer NR
    netstretch swell --dry 1.000g --swollen 3.20g --extracted 0.962g --chi 0.39 --json
"""

from __future__ import annotations

import re

from ..materials import add_polymers_option, apply_polymers_option
from ..swelling import CHI_BAND, compare_with_modulus, solvents, swelling_estimate
from .fit import CAUTION, json_document, quantity

_MASS_UNITS = {"g": 1e-3, "mg": 1e-6, "kg": 1.0}


def add_parser(sub):
    p = sub.add_parser("swell", help="crosslink density from a swelling test (Flory–Rehner)",
                       description="Strand density ν from dry and swollen masses (Flory–Rehner, affine and "
                                   "phantom), with the band for χ ± 0.05.")
    p.add_argument("--dry", required=True, metavar="MASS", help="mass before swelling, e.g. 1.000g")
    p.add_argument("--swollen", required=True, metavar="MASS", help="blotted swollen mass, e.g. 3.20g")
    p.add_argument("--extracted", metavar="MASS",
                   help="mass re-dried after swelling (sol removed); used as the network mass when given")
    p.add_argument("--solvent", default="toluene", help=f"solvent (default toluene; table: {', '.join(solvents())})")
    p.add_argument("--polymer", default="NR", help="polymer from the polymer table (default NR)")
    p.add_argument("--chi", type=float, metavar="CHI", help="polymer–solvent χ (default: the solvent table's value)")
    p.add_argument("--temperature", metavar="T", help="swelling temperature, e.g. 23C (recorded; χ is not rescaled)")
    p.add_argument("--functionality", type=float, default=4.0, metavar="F", help="junction functionality f (default 4)")
    p.add_argument("--rubber-fraction", type=float, metavar="W",
                   help="rubber mass fraction of the dry compound from the recipe (default: 1 for a gum, else "
                        "estimated from --filler with carbon-black density)")
    p.add_argument("--filler", type=float, default=0.0, metavar="PHI",
                   help="filler volume fraction of the dry compound: applies the Kraus correction (default 0)")
    p.add_argument("--modulus", metavar="G", help="shear modulus with unit, e.g. 0.55MPa: show the modulus-based "
                                                 "strand density beside the swelling one")
    add_polymers_option(p)
    p.add_argument("--json", action="store_true", help="print one JSON document (SI units)")
    p.set_defaults(run=run)


def _mass(text, what):
    s = str(text).strip()
    m = re.fullmatch(r"([-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?)\s*([a-zA-Z]*)", s)
    if not m:
        raise ValueError(f"{what} {s!r} is not a mass; write e.g. 1.000g")
    unit = m.group(2).lower()
    if not unit:
        raise ValueError(f"{what} {s!r} has no unit; write it with its unit, e.g. {s}g")
    if unit not in _MASS_UNITS:
        raise ValueError(f"{what} {s!r}: unknown mass unit {m.group(2)!r}; use g, mg or kg")
    v = float(m.group(1).replace(",", ".")) * _MASS_UNITS[unit]
    if not (v > 0):
        raise ValueError(f"{what} must be positive; got {s!r}")
    return v


def _n(x, scale=1.0):
    return "—" if x is None else f"{x * scale:.4g}"


def run(args):
    apply_polymers_option(args)
    dry = _mass(args.dry, "--dry")
    swollen = _mass(args.swollen, "--swollen")
    extracted = _mass(args.extracted, "--extracted") if args.extracted else None
    T = quantity(args.temperature, "temperature", "--temperature", "23C") if args.temperature else None
    if not (args.functionality >= 3):
        raise ValueError(f"--functionality must be at least 3; got {args.functionality:g}")
    est = swelling_estimate(dry, swollen, args.solvent, args.polymer, chi=args.chi, f=args.functionality, T=T,
                            extracted=extracted, rubber_fraction=args.rubber_fraction,
                            filler_fraction=args.filler)
    side = None
    if args.modulus:
        from ..crosslinks import from_modulus

        G = quantity(args.modulus, "pressure", "--modulus", "0.55MPa")
        table = from_modulus(G, "G", polymer=args.polymer, T=T or 296.15, f=args.functionality)
        side = compare_with_modulus(est, table)
    if args.json:
        doc = {"command": "swell", **est.to_dict(), "caution": CAUTION}
        if side is not None:
            doc["compared_with_modulus"] = side
        print(json_document(doc))
        return 0
    print(f"polymer {est.polymer} in {est.solvent.title} (V₁ = {est.solvent.molar_volume * 1e6:.2f} cm³/mol); "
          f"χ = {est.chi.chi:g} [{est.chi.status}], band χ ± {CHI_BAND:g}")
    extra = f" (measured {est.phi_measured:.4f}, Kraus-corrected)" if est.kraus else ""
    print(f"rubber volume fraction in the swollen gel φ = {est.phi:.4f}{extra}"
          + (f"; soluble fraction {100 * est.soluble_fraction:.1f} %" if est.soluble_fraction is not None else ""))
    print(f"  {'assumption':10s} {'ν mol/m³':>9s} {'χ−0.05 … χ+0.05':>19s} {'ν 10⁻⁴mol/cm³':>14s} "
          f"{'μ_j mol/m³':>11s} {'M_c g/mol':>10s}")
    for r in est.rows():
        lo, hi = r["strand_density_band"]
        print(f"  {r['assumption']:10s} {r['strand_density']:9.4g} {_n(lo) + ' … ' + _n(hi):>19s} "
              f"{r['strand_density'] / 100:14.4g} {r['junction_density']:11.4g} {r['Mc'] * 1000:10.4g}")
        print(f"  {'':4s}assumes: {r['assumes']}; μ_j = 2ν/f")
    for n in est.notes:
        print(f"  note: {n}")
    if side:
        print("\nBeside the modulus (same assumption; ratio = swelling / modulus):")
        for s in side:
            print(f"  {s['modulus_row'][:46]:46s} swelling {s['swelling_strand_density']:8.4g}   modulus "
                  f"{_n(s['modulus_strand_density']):>8s} mol/m³   ratio {_n(s['ratio'])}")
    print()
    print(CAUTION)
    return 0

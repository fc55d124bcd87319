"""``netstretch swell``: strand density from an equilibrium swelling test (Flory–Rehner), with the
χ ± 0.05 band, the junction density and, on request, a modulus-based estimate beside it.

    netstretch swell --dry 1.000g --swollen 3.20g --solvent toluene --polymer NR
    netstretch swell --dry 1.000g --swollen 3.20g --extracted 0.962g --chi 0.39 --json
    netstretch swell --dry 0.2340g --swollen 1.0384g --extracted 0.2249g --manifest sample_sets/compounds.toml \
        --compound QM-S2          # Ellis–Welding with QM-S2's recipe; here --compound is a manifest KEY
"""

from __future__ import annotations

import argparse
import re

from ..constants import LAB_TEMPERATURE
from ..materials import add_polymers_option, apply_polymers_option
from ..swelling import CHI_BAND, compare_with_modulus, solvents, swelling_estimate
from ._options import add_functionality, add_json, add_polymer
from .fit import CAUTION, json_document, quantity

_MASS_UNITS = {"g": 1e-3, "mg": 1e-6, "kg": 1.0}


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("swell", help="crosslink density from a swelling test (Flory–Rehner)",
                       description="Strand density ν from dry and swollen masses (Flory–Rehner, affine and "
                                   "phantom), with the band for χ ± 0.05.")
    p.add_argument("--dry", required=True, metavar="MASS", help="mass before swelling, e.g. 1.000g")
    p.add_argument("--swollen", required=True, metavar="MASS", help="blotted swollen mass, e.g. 3.20g")
    p.add_argument("--extracted", metavar="MASS",
                   help="mass re-dried after swelling (sol removed); used as the network mass when given")
    p.add_argument("--solvent", default="toluene", help=f"solvent (default toluene; table: {', '.join(solvents())})")
    add_polymer(p)
    p.add_argument("--chi", type=float, metavar="CHI", help="polymer–solvent χ (default: the solvent table's value)")
    p.add_argument("--temperature", metavar="T", help="swelling temperature, e.g. 23C (recorded; χ is not rescaled)")
    add_functionality(p)
    p.add_argument("--rubber-fraction", type=float, metavar="W",
                   help="rubber mass fraction of the dry compound from the recipe (default: 1 for a gum, else "
                        "estimated from --filler with carbon-black density)")
    p.add_argument("--filler", type=float, default=0.0, metavar="PHI",
                   help="filler volume fraction of the dry compound: applies the Kraus correction (default 0)")
    p.add_argument("--modulus", metavar="G", help="shear modulus with unit, e.g. 0.55MPa: show the modulus-based "
                                                 "strand density beside the swelling one")
    p.add_argument("--manifest", metavar="FILE",
                   help="a compounds manifest: with --compound KEY, that compound's recipe gives the Ellis–Welding "
                        "insoluble fraction, the filler fraction and the polymer (and the manifest's χ when given)")
    p.add_argument("--compound", metavar="KEY",
                   help="the manifest key of the compound the specimen belongs to (here a KEY of --manifest, unlike "
                        "compare's --compound NAME=FILES)")
    add_polymers_option(p)
    add_json(p)
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


def _manifest_compound(path, key):
    """(compound, χ of the manifest's [swelling] table or None) without reading its curve files."""
    import tomllib
    from pathlib import Path

    from ..compounds import Compound, _manifest_recipe
    from ..errors import DataError

    p = Path(path)
    try:
        doc = tomllib.loads(p.read_text("utf-8"))
    except OSError as exc:
        raise DataError(f"manifest {path}: cannot open it ({exc.strerror or exc})") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise DataError(f"manifest {p.name}: not valid TOML ({exc})") from None
    entries = doc.get("compound", [])
    entries = [dict(v, name=k) for k, v in entries.items()] if isinstance(entries, dict) else list(entries)
    for e in entries:
        if isinstance(e, dict) and str(e.get("key", e.get("name"))) == key:
            meta = {k: v for k, v in e.items() if not isinstance(v, (dict, list))}
            polymer = e.get("polymer", doc.get("scenario", {}).get("polymer", doc.get("polymer", "NR")))
            comp = Compound(key, metadata=meta, polymer=str(polymer), f=float(e.get("f", 4.0)),
                            recipe=_manifest_recipe(doc, e, key, p))
            sw = doc.get("swelling")
            return comp, (sw.get("chi") if isinstance(sw, dict) else None)
    keys = ", ".join(str(e.get("key", e.get("name"))) for e in entries if isinstance(e, dict))
    raise DataError(f"--compound {key!r} is not a compound of {p.name}; it lists {keys}")


def _n(x, scale=1.0):
    return "—" if x is None else f"{x * scale:.4g}"


def run(args: argparse.Namespace) -> int:
    apply_polymers_option(args)
    dry = _mass(args.dry, "--dry")
    swollen = _mass(args.swollen, "--swollen")
    extracted = _mass(args.extracted, "--extracted") if args.extracted else None
    T = quantity(args.temperature, "temperature", "--temperature", "23C") if args.temperature else None
    if not (args.functionality >= 3):
        raise ValueError(f"--functionality must be at least 3; got {args.functionality:g}")
    polymer, chi, filler, f, extra, recipe_notes = args.polymer, args.chi, args.filler, args.functionality, {}, []
    if bool(args.manifest) != bool(args.compound):
        raise ValueError("--manifest and --compound go together: --manifest FILE --compound KEY (a key of the "
                         "manifest's [[compound]] entries)")
    if args.manifest:
        comp, chi_m = _manifest_compound(args.manifest, args.compound)
        polymer = comp.polymer
        if chi is None and chi_m is not None:
            chi = chi_m
            recipe_notes.append(f"χ = {chi_m:g} from the manifest's [swelling] table")
        if comp.recipe is None:
            recipe_notes.append(f"compound {comp.name} has no [compound.recipe]: no Ellis–Welding correction")
        else:
            if args.rubber_fraction is not None or args.filler:
                raise ValueError("--rubber-fraction and --filler come from the recipe when --compound has one; "
                                 "leave them out")
            extra = comp.swelling_options()
            recipe_notes.append(f"recipe of {comp.name} from {args.manifest}")
        filler = args.filler or comp.filler_fraction
        recipe_notes += [str(n) for n in comp.recipe_notices]
    est = swelling_estimate(dry, swollen, args.solvent, polymer, chi=chi, f=f, T=T,
                            extracted=extracted, rubber_fraction=args.rubber_fraction,
                            filler_fraction=filler, **extra)
    est.notes[:0] = recipe_notes
    side = None
    if args.modulus:
        from ..crosslinks import from_modulus

        G = quantity(args.modulus, "pressure", "--modulus", "0.55MPa")
        table = from_modulus(G, "G", polymer=args.polymer, T=T or LAB_TEMPERATURE, f=args.functionality)
        side = compare_with_modulus(est, table)
    if args.json:
        doc = {"command": "swell", **est.to_dict(), "caution": CAUTION}
        if side is not None:
            doc["compared_with_modulus"] = side
        print(json_document(doc))
        return 0
    print(f"polymer {est.polymer} in {est.solvent.title} (V₁ = {est.solvent.molar_volume * 1e6:.2f} cm³/mol); "
          f"χ = {est.chi.chi:g} [{est.chi.status}], band χ ± {CHI_BAND:g}")
    kraus_note = f" (measured {est.phi_measured:.4f}, Kraus-corrected)" if est.kraus else ""
    print(f"rubber volume fraction in the swollen gel φ = {est.phi:.4f}{kraus_note}"
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

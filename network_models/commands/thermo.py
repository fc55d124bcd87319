"""``netstretch thermo``: a force–temperature record at fixed length → how entropic the force is.

For an ideal entropic network the force at fixed length *and volume* is proportional to absolute
temperature.  A lab record is taken at constant (atmospheric) pressure: the rubber expands on heating, so
−T·∂ln(F/T)/∂T of the record is the constant-pressure value.  With the volume expansion coefficient β the
Flory–Ciferri–Hoeve correction −βT/(λ³ − 1) gives the constant-volume energetic fraction f_e/f, which is
≈ 0 for an ideal network.
"""

from __future__ import annotations

import argparse
import json

import numpy as np

from ..constants import CAUTION, celsius
from ..labfiles import read_force_temperature
from ..materials import add_polymers_option, apply_polymers_option, get_polymer
from ..thermo import DEPRECATED_KEYS, THERMOELASTIC_KEY, energetic_fraction, inversion_strain
from ._options import add_json, add_polymer


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("thermo", help="energetic fraction of the force from a force–temperature record")
    p.add_argument("file", help="CSV/TXT/xlsx with 'temperature (°C)' and 'force (N)' columns, '# stretch: λ' line")
    p.add_argument("--stretch", type=float, default=None, help="clamped stretch λ (wins over the file)")
    add_polymer(p, "take the volume expansion coefficient β from this polymer's table row", default=None)
    p.add_argument("--expansion", type=float, default=None,
                   help="volume expansion coefficient β in 1/K (wins over --polymer)")
    add_polymers_option(p)
    add_json(p, "print one JSON document")
    p.set_defaults(run=run)


def analyse(rec, expansion, polymer=None) -> dict:
    from ..materials import temperature_notices

    T, F = rec.temperature, rec.force
    slope, intercept = np.polyfit(T, F, 1)
    ep = energetic_fraction(T, F, rec.stretch)
    ev = energetic_fraction(T, F, rec.stretch, expansion=expansion) if expansion is not None else None
    at_p = {"value": ep.value, "stderr": ep.stderr, "method": ep.method,
            "meaning": "−T·∂ln(F/T)/∂T at constant pressure and length, as measured: includes thermal expansion; "
                       "not an energetic fraction"}
    inversion = None
    if ev is not None and expansion > 0 and -0.5 <= ev.value <= 0.85:  # a plausible share only
        Tm = float(T.mean())
        inversion = {"strain": inversion_strain(Tm, expansion, ev.value), "energetic_fraction_used": ev.value,
                     "temperature_K": Tm,
                     "strain_entropic_only": inversion_strain(Tm, expansion),
                     "method": "clamped strain where dF/dT = 0 with the entropic share (1 − f_e/f) ∝ T: "
                               "ε_inv ≈ β_lin·T/(1 − f_e/f)"}
    glass = []
    if polymer:
        seen = set()
        for t in (float(T.min()), float(T.max())):
            for n in temperature_notices(polymer, t, "force–temperature record"):
                if n.kind not in seen:
                    seen.add(n.kind)
                    glass.append(n)
    return {
        "file": rec.source or rec.name,
        "stretch": rec.stretch,
        "n_points": int(T.size),
        "temperature_range_K": [float(T.min()), float(T.max())],
        "force_line": {"slope_N_per_K": float(slope), "intercept_at_0K_N": float(intercept),
                       "intercept_share_of_mean_force": float(intercept / F.mean())},
        THERMOELASTIC_KEY: at_p,
        "energetic_fraction_constant_volume": None if ev is None else
        {"value": ev.value, "stderr": ev.stderr, "expansion_1_K": expansion, "correction": ev.correction,
         "method": ev.method},
        "inversion_strain": inversion,
        "notices": list(rec.notices) + ([] if ev is None else list(ev.notices)) + [str(n) for n in glass],
        # deprecated alias (one release): the same object under the old, misleading name
        **{old: at_p for old in DEPRECATED_KEYS},
        "deprecated_keys": {old: f"use {new}; removed after the next release" for old, new in DEPRECATED_KEYS.items()},
    }


#: no rubber is stretched beyond this (λ = 100; elongations at break are below ~10, common practice)
MAX_STRETCH = 100.0


def run(args: argparse.Namespace) -> int:
    apply_polymers_option(args)
    if args.stretch is not None and not (0.0 < args.stretch <= MAX_STRETCH):
        raise ValueError(f"--stretch {args.stretch:g} is not a clamped stretch a rubber can hold (0 < λ ≤ "
                         f"{MAX_STRETCH:g}); give λ = clamped length / original length, e.g. 2")
    rec = read_force_temperature(args.file, stretch=args.stretch)
    beta = args.expansion
    if beta is None and args.polymer:
        beta = get_polymer(args.polymer).expansion
    if beta is not None and not (0 <= beta < 0.01):
        raise ValueError(f"volume expansion coefficient β = {beta!r} 1/K is implausible; rubbers have ~6e-4 1/K")
    out = analyse(rec, beta, args.polymer)
    if args.json:
        print(json.dumps(out, indent=2, ensure_ascii=False))
        return 0
    fl = out["force_line"]
    lo, hi = (celsius(t) for t in out["temperature_range_K"])
    print(f"{out['file']}: {out['n_points']} points, {lo:.1f} … {hi:.1f} °C, clamped at λ = {rec.stretch:g}")
    print(f"  straight line F = a + bT: b = {fl['slope_N_per_K'] * 1000:.3f} mN/K, "
          f"a (force at 0 K) = {fl['intercept_at_0K_N']:.3f} N = {fl['intercept_share_of_mean_force'] * 100:.1f} % "
          "of the mean force")
    ep = out[THERMOELASTIC_KEY]
    print(f"  at constant pressure (as measured, uncorrected): −T·∂ln(F/T)/∂T = {ep['value']:.3f} ± "
          f"{ep['stderr']:.3f}  (includes thermal expansion; not the energetic fraction of the chains)")
    ev = out["energetic_fraction_constant_volume"]
    if ev:
        print(f"  energetic fraction at constant volume f_e/f = {ev['value']:.3f} ± {ev['stderr']:.3f}  "
              f"(β = {ev['expansion_1_K']:.3g} 1/K; Flory–Ciferri–Hoeve correction −βT/(λ³ − 1) = "
              f"−{ev['correction']:.3f} [from memory]; ≈ 0 for an ideal entropic network)")
    else:
        print("  give --polymer or --expansion for the constant-volume energetic fraction (thermal-expansion "
              "correction)")
    inv = out["inversion_strain"]
    if inv:
        print(f"  thermoelastic inversion near ε = {inv['strain'] * 100:.1f} % with this f_e/f "
              f"({inv['strain_entropic_only'] * 100:.1f} % for a purely entropic force)")
    for n in out["notices"]:
        print(f"  note: {n}")
    print("Caution: " + CAUTION)
    return 0

"""``netstretch thermo``: a force–temperature record at fixed length → how entropic the force is.

For an ideal entropic network the force at fixed length is proportional to absolute temperature: the
straight line through the points passes through zero kelvin.  The energetic fraction f_e/f says how far the
record departs from that (constant volume), with the usual constant-pressure correction for thermal
expansion when β is known.
"""

from __future__ import annotations

import json

import numpy as np

from ..network import get_polymer
from ..testdata import read_force_temperature
from ..thermo import energetic_fraction


def add_parser(sub):
    p = sub.add_parser("thermo", help="energetic fraction of the force from a force–temperature record")
    p.add_argument("file", help="CSV/TXT/xlsx with 'temperature (°C)' and 'force (N)' columns, '# stretch: λ' line")
    p.add_argument("--stretch", type=float, default=None, help="clamped stretch λ (wins over the file)")
    p.add_argument("--polymer", default=None,
                   help="take the volume expansion coefficient β from this polymer's table row")
    p.add_argument("--expansion", type=float, default=None,
                   help="volume expansion coefficient β in 1/K (wins over --polymer)")
    p.add_argument("--json", action="store_true", help="print one JSON document")
    p.set_defaults(run=run)


def analyse(rec, expansion):
    T, F = rec.temperature, rec.force
    slope, intercept = np.polyfit(T, F, 1)
    ev = energetic_fraction(T, F, rec.stretch)
    ep = energetic_fraction(T, F, rec.stretch, expansion=expansion) if expansion else None
    return {
        "file": rec.source or rec.name,
        "stretch": rec.stretch,
        "n_points": int(T.size),
        "temperature_range_K": [float(T.min()), float(T.max())],
        "force_line": {"slope_N_per_K": float(slope), "intercept_at_0K_N": float(intercept),
                       "intercept_share_of_mean_force": float(intercept / F.mean())},
        "energetic_fraction_constant_volume": {"value": ev.value, "stderr": ev.stderr,
                                               "method": ev.method},
        "energetic_fraction_constant_pressure": None if ep is None else
        {"value": ep.value, "stderr": ep.stderr, "expansion_1_K": expansion, "method": ep.method},
        "notices": list(rec.notices),
    }


def run(args):
    rec = read_force_temperature(args.file, stretch=args.stretch)
    beta = args.expansion
    if beta is None and args.polymer:
        beta = get_polymer(args.polymer).expansion
    if beta is not None and not (0 <= beta < 0.01):
        raise ValueError(f"volume expansion coefficient β = {beta!r} 1/K is implausible; rubbers have ~6e-4 1/K")
    out = analyse(rec, beta)
    if args.json:
        print(json.dumps(out, indent=2, ensure_ascii=False))
        return 0
    fl = out["force_line"]
    lo, hi = (t - 273.15 for t in out["temperature_range_K"])
    print(f"{out['file']}: {out['n_points']} points, {lo:.1f} … {hi:.1f} °C, clamped at λ = {rec.stretch:g}")
    print(f"  straight line F = a + bT: b = {fl['slope_N_per_K'] * 1000:.3f} mN/K, "
          f"a (force at 0 K) = {fl['intercept_at_0K_N']:.3f} N = {fl['intercept_share_of_mean_force'] * 100:.1f} % "
          "of the mean force (0 % for a purely entropic network)")
    ev = out["energetic_fraction_constant_volume"]
    print(f"  energetic fraction f_e/f = {ev['value']:.3f} ± {ev['stderr']:.3f}  "
          "(−T·d ln(F/T)/dT, no thermal-expansion correction)")
    ep = out["energetic_fraction_constant_pressure"]
    if ep:
        print(f"  corrected for constant pressure (β = {ep['expansion_1_K']:.3g} 1/K): f_e/f = {ep['value']:.3f} "
              f"± {ep['stderr']:.3f}  (Flory–Ciferri–Hoeve correction −βT/(λ³ − 1) [from memory])")
    else:
        print("  give --polymer or --expansion to apply the constant-pressure correction for thermal expansion")
    for n in out["notices"]:
        print(f"  note: {n}")
    print("Caution: model results support design decisions; they do not replace validation testing of parts.")
    return 0

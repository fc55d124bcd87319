"""``netstretch demo``: every model on a sample network, as a table (a quick look at the core)."""

from __future__ import annotations

import argparse

import numpy as np

from ..constants import CAUTION, kelvin
from ..models import MODELS
from ..network import Network
from ._options import add_polymer


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("demo", help="print every model's stress on a sample network")
    add_polymer(p)
    p.add_argument("--nu", type=float, default=150.0, help="strand density, mol/m³ (default 150)")
    p.add_argument("--temperature", type=float, default=23.0, help="°C (default 23)")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    net = Network(polymer=args.polymer, nu=args.nu, T=kelvin(args.temperature))
    assert net.Mc is not None and net.N is not None  # derived from ν
    print(f"Network: {net.poly.title}; strand density ν = {net.nu:.1f} mol/m³, "
          f"junction density μ_j = {net.junction_density:.1f} mol/m³ (f = {net.f:g}), "
          f"M_c = {net.Mc * 1000:.0f} g/mol, N = {net.N:.1f} ({net.N_source}), T = {args.temperature:g} °C")
    lams = np.array([1.5, 2.0, 3.0, 5.0])
    print(f"\n{'model':24s} {'G0 / MPa':>9s} {'lock λ':>8s}   nominal stress / MPa at uniaxial λ = "
          + ", ".join(f"{x:g}" for x in lams))
    for name, m in MODELS.items():
        p = net.model_params(m)
        lock = m.stretch_limit("uniaxial", p)
        P = m.nominal_stress("uniaxial", lams, p) / 1e6
        cells = "  ".join("  past lock" if not np.isfinite(v) else f"{v:9.3f}" for v in P)
        lock_text = "—" if lock is None else f"{lock:.2f}"
        print(f"{name:24s} {m.small_strain_modulus(**p) / 1e6:9.3f} {lock_text:>8s}   {cells}")
    print("\n" + CAUTION)
    return 0

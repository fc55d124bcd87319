"""Notebook and pandas views of results: the tables carry the result's numbers in SI with their units, the
reprs are one line, the HTML is a table.  Data made in the test from the neo-Hookean law P = G(λ − λ⁻²)
(Treloar 1975, ch. 4); ν = G/(RT) for the affine row, R from scipy.constants (CODATA)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import R, zero_Celsius

from network_models.compare import compare
from network_models.compounds import Compound
from network_models.crosslinks import from_fit
from network_models.curves import TestCurve
from network_models.fitting import fit

T = zero_Celsius + 23.0


def _curves(G, name, n=3, seed=0):
    rng = np.random.default_rng(seed)
    lam = np.linspace(1.05, 3.0, 30)
    return [TestCurve("uniaxial", lam, G * (1 + 0.03 * rng.standard_normal()) * (lam - lam**-2), name=f"{name}-{i}",
                      temperature=T, specimen=f"{name}-{i}", metadata={"cycle": "1st loading"}) for i in range(n)]


def test_fit_frame_and_repr():
    r = fit("neo-hookean", _curves(0.5e6, "A", n=1))
    df = r.to_frame()
    assert df.loc["G", "value"] == pytest.approx(0.5e6, rel=0.05) and df.loc["G", "unit"] == "Pa"
    assert "\n" not in repr(r) and "neo-hookean" in repr(r)
    assert r._repr_html_().count("<table") == 1


def test_crosslink_frame_gives_nu_over_rt():
    r = fit("neo-hookean", _curves(0.5e6, "A", n=1))
    df = from_fit(r, polymer="NR", T=T).to_frame()
    G = r.values["G"]
    assert df.loc["affine", "strand_density"] == pytest.approx(G / (R * T), rel=1e-9)
    assert df.attrs["units"]["strand_density"] == "mol/m³"


def test_comparison_frames():
    a, b = Compound("A", _curves(0.5e6, "A", n=4, seed=1)), Compound("B", _curves(0.65e6, "B", n=4, seed=2))
    cmp = compare([a, b], model="neo-hookean", baseline="A", spread_models=())
    df = cmp.to_frame()
    assert df.loc[("B", "G0"), "unit"] == "Pa" and df.loc[("B", "G0"), "value"] == pytest.approx(0.65e6, rel=0.05)
    d = cmp.differences_frame()
    row = d[(d.compound == "B") & (d.quantity == "G0")].iloc[0]
    assert row.verdict == "different"  # +30 % against ~3 % scatter with four specimens a side
    assert "\n" not in repr(cmp) and cmp._repr_html_().count("<table") == 2

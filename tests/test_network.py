"""The molecular picture: densities, M_c, N, filler, dangling ends, temperature, incompressibility."""

from __future__ import annotations

import subprocess
import sys

import pytest
from scipy.constants import R

from network_models import MODELS, Mode, Network, get_polymer, guth_gold, polymers


def test_strand_and_junction_density_and_Mc():
    # docs/methods.md §densities: μ_j = 2ν/f; M_c = ρ/ν
    net = Network(polymer="NR", nu=120.0, f=4)
    rho = get_polymer("NR").density
    assert net.junction_density == pytest.approx(60.0)
    assert net.Mc == pytest.approx(rho / 120.0)
    assert Network(polymer="NR", nu=120.0, f=6).junction_density == pytest.approx(40.0)
    # M_c in, ν out
    back = Network(polymer="NR", Mc=net.Mc)
    assert back.nu == pytest.approx(120.0)
    with pytest.raises(ValueError, match="either"):
        Network(nu=100.0, Mc=5.0)


def test_N_from_kuhn_molar_mass_or_direct():
    # docs/methods.md §mc-and-n: N ≈ M_c / M_K
    net = Network(polymer="BR", nu=150.0)
    assert net.N == pytest.approx(net.Mc / get_polymer("BR").kuhn_molar_mass)
    assert net.N_source.startswith("from")
    d = Network(polymer="BR", nu=150.0, N=12.0)
    assert d.N == 12.0 and d.N_source == "set directly"
    # changing ν keeps a derived N derived, and a direct N direct
    assert net.with_(nu=300.0).N == pytest.approx(net.N / 2)
    assert d.with_(nu=300.0).N == 12.0


@pytest.mark.parametrize(("phi", "value"), [(0.05, 1.1603), (0.10, 1.3910), (0.20, 2.0640)])
def test_guth_gold(phi, value):
    # Guth & Gold 1938 [from memory]: 1 + 2.5φ + 14.1φ²; values in docs/methods.md §guth-gold [derived]
    assert guth_gold(phi) == pytest.approx(value, abs=6e-5)  # values printed to 4 decimals


def test_filler_and_dangling_ends_scale_the_modulus():
    base = Network(polymer="NR", nu=150.0, T=300.0, entanglements=False)
    assert base.affine_modulus == pytest.approx(150.0 * R * 300.0)
    filled = base.with_(filler_fraction=0.1)
    assert filled.affine_modulus / base.affine_modulus == pytest.approx(guth_gold(0.1))
    # ν is the elastically active density (one definition): M_n does not change the modulus any more
    # (it used to subtract the dangling ends a second time); it gives the chemical density instead.
    de = base.with_(Mn=10 * base.Mc)
    assert de.affine_modulus == pytest.approx(base.affine_modulus, rel=1e-15)


def test_poisson_ratio_and_bulk_to_shear():
    # isotropic elasticity: ν_P = (3K − 2G)/(2(3K + G)); rubber K/G ~ 10³–10⁴ [common practice]
    net = Network(polymer="NR", nu=150.0)
    G, K = net.small_strain_modulus, net.bulk_modulus
    assert net.poisson_ratio == pytest.approx((3 * K - 2 * G) / (2 * (3 * K + G)))
    assert 0.499 < net.poisson_ratio < 0.5
    assert 1e3 < net.bulk_to_shear < 1e5


def test_locking_stretch_per_mode_orders():
    # (G ∝ T at fixed network is how the mapping is defined, so it is not tested here: such a test cannot fail)
    net = Network(polymer="NR", nu=150.0)
    u, e, p = (net.locking_stretch(m) for m in (Mode.UNIAXIAL, Mode.EQUIBIAXIAL, Mode.PLANAR))
    # equibiaxial locks first: I₁ grows fastest there [derived from the docs/methods.md §test-modes invariant table]
    assert e < p < u


def test_every_model_maps_from_a_network():
    net = Network(polymer="SBR", nu=180.0, filler_fraction=0.1, Mn=200.0)
    for _name, m in MODELS.items():
        p = net.model_params(m)
        assert set(p) == set(m.params.names())


def test_polymer_table_rows_name_their_source():
    for key, p in polymers().items():
        assert p.source and p.status in {"read", "memory"}, key
        # fluoroelastomers reach ~1.9 g/cm³ [common practice]
        assert 800 < p.density < 2200 and p.kuhn_molar_mass > p.monomer_molar_mass * 0.5


def test_bad_network_inputs_are_sentences():
    for kw, word in [({"nu": -5.0}, "positive"), ({"T": 0.0}, "absolute zero"), ({"f": 2}, "functionality"),
                     ({"polymer": "unobtainium"}, "unknown polymer"), ({"filler_fraction": 0.7}, "filler")]:
        with pytest.raises((ValueError, KeyError), match=word):
            Network(**kw)


def test_core_does_not_import_the_ui_stack():
    code = ("import sys, network_models, network_models.cli as c; c.build_parser(); "
            "bad=[m for m in ('panel','holoviews','bokeh') if m in sys.modules]; print(bad); sys.exit(1 if bad else 0)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert out.returncode == 0, out.stdout + out.stderr

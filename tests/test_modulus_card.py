"""The Design tab's modulus → strand density card and the design's explanation of a target below the
entanglements: the numbers against the affine relation written here, the card against `netstretch crosslinks
--json` (one answer per quantity and basis), bad input as a sentence beside the card."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest
from scipy.constants import R  # CODATA gas constant, J/(mol·K)

pn = pytest.importorskip("panel")

from app.modulus_card import ModulusCard, estimate  # noqa: E402
from network_models.formatting import number  # noqa: E402

T23 = 296.15  # 23 °C in K (ITS-90: 0 °C = 273.15 K)


def _cli_json(*args) -> dict:
    run = "import sys; from network_models.cli import main; sys.exit(main())"
    r = subprocess.run([sys.executable, "-c", run, "crosslinks", *args, "--json"], capture_output=True, text=True,
                       timeout=120)
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


def test_card_gives_the_affine_relation_for_an_M100():
    # M100 = G(λ − λ⁻²) at λ = 2 (neo-Hookean, Treloar 1975 ch. 4), then G = νRT (affine, Treloar 1975 ch. 4)
    est = estimate("1.8 MPa", "M100", polymer="NR", T_C=23.0)
    G = 1.8e6 / (2.0 - 2.0**-2)
    assert est.table.G == pytest.approx(G, rel=1e-12)
    assert est.table.row("affine").nu == pytest.approx(G / (R * T23), rel=1e-9)
    assert est.below is None  # 1.03 MPa is above NR's plateau modulus (0.35 MPa, polymers.toml)


def test_card_shows_the_rows_the_cli_prints():
    card = ModulusCard()
    card.state.param.update(text="0.9 MPa", kind="E", polymer="SBR", T_C=40.0, f=4.0, filler=0.1)
    assert card.messages.texts() == {}
    doc = _cli_json("--modulus", "0.9MPa", "--kind", "E", "--polymer", "SBR", "--temperature", "40C",
                    "--filler", "0.1")
    rows = {r.key: r for r in card.result_est.table.rows}
    assert [r["key"] for r in doc["rows"]] == list(rows)
    for r in doc["rows"]:
        if r["strand_density"] is not None:
            assert rows[r["key"]].nu == pytest.approx(r["strand_density"], rel=1e-12)
            # the card's table shows that value to four significant digits (mol/m³ is the default unit)
            assert number(r["strand_density"], 4) in card.result.object
    # E = 3G (incompressible, small strain), affine: ν = E/(3RT)
    assert rows["affine"].nu == pytest.approx(0.9e6 / 3.0 / (R * (273.15 + 40.0)), rel=1e-9)


def test_a_modulus_below_the_plateau_modulus_is_explained_not_refused():
    card = ModulusCard()
    card.state.param.update(polymer="NBR-33", text="0.62 MPa", kind="G")
    # polymers.toml: NBR-33 plateau modulus 0.68 MPa at 298 K, scaled ∝ T to 23 °C → 0.6755 MPa
    Ge = 0.68e6 * T23 / 298.0
    assert 0.62e6 < Ge
    assert card.result_est.below is not None
    assert f"{Ge / 1e6:.3g} MPa" in card.result_est.below
    assert "ns-mod-below" in card.result.object and "cannot be separated" in card.result.object
    assert "not feasible" not in card.result.object.lower()
    # the 'all of G' rows still give a number; the entanglement-removed rows none
    t = card.result_est.table
    assert t.row("affine").nu == pytest.approx(0.62e6 / (R * T23), rel=1e-9)
    assert t.row("affine-no-entanglement").nu is None
    # just above the plateau modulus: no such sentence
    card.state.text = "0.70 MPa"
    assert card.result_est.below is None and "ns-mod-below" not in card.result.object


def test_bad_modulus_is_a_sentence_beside_the_card_and_user_text_is_escaped():
    card = ModulusCard()
    card.state.text = "<b>7</b> furlongs"
    msg = card.messages.texts()["modulus"]
    assert "<b>7</b>" not in msg and "&lt;b&gt;7&lt;/b&gt;" in msg
    assert "Traceback" not in msg
    card.state.text = "0.62"  # no unit
    assert "unit" in card.messages.texts()["modulus"]
    card.state.text = "0.62 MPa"
    assert "modulus" not in card.messages.texts() and card.result_est is not None


def test_design_says_why_a_target_below_the_entanglements_is_not_feasible():
    from app.main import create_app

    page = create_app(load_samples=False)
    d = page.ns_design
    es = d.explorer_state
    es.param.update(polymer="NBR-33", entanglements=True, filler=0.0)
    for r in list(d.rows.objects):
        d._remove_row(r)
    d._add_row("G=0.62MPa±5%")
    res = d.compute()
    assert not res.feasible and d.messages.texts() == {}
    assert "ns-design-floor" in d.result.object and "cannot be separated" in d.result.object
    assert "0.676 MPa" in d.result.object  # NBR-33's G_N⁰ 0.68 MPa at 298 K scaled to 296.15 K (polymers.toml)
    # the entanglement share off: crosslinks alone can meet it, and the explanation is gone
    es.entanglements = False
    res = d.compute()
    assert res.feasible and "ns-design-floor" not in d.result.object


def test_the_card_is_on_the_design_tab():
    from app.main import create_app

    page = create_app(load_samples=False)
    tabs = page.select(pn.Tabs)[0]
    design = tabs.objects[tabs._names.index("Design")]
    assert design.select(lambda o: "ns-modulus-card" in (getattr(o, "css_classes", None) or []))

"""Shore A hardness → Young's modulus (network_models/hardness.py).

Independent value: Gent's 1958 relation written here from the paper's formula as commonly reprinted
(Gent, Trans. Inst. Rubber Ind. 34:46 [memory]): E(MPa) = 0.0981(56 + 7.62336 S)/(0.137505(254 − 2.54 S)).
"""

from __future__ import annotations

import json

import pytest

from network_models.design import design
from network_models.hardness import e_to_shore_a, parse_shore_a, shore_a_to_e


def gent_mpa(s):
    return 0.0981 * (56 + 7.62336 * s) / (0.137505 * (254 - 2.54 * s))


@pytest.mark.parametrize("s", [30.0, 50.0, 62.0, 75.0, 90.0])
def test_gent_relation_and_its_inverse(s):
    assert shore_a_to_e(s) == pytest.approx(gent_mpa(s) * 1e6, rel=1e-12)
    assert e_to_shore_a(gent_mpa(s) * 1e6) == pytest.approx(s, rel=1e-10)


def test_parsing_and_range():
    assert parse_shore_a("62ShoreA") == 62.0 and parse_shore_a("62 Shore A") == 62.0
    assert parse_shore_a("0.55MPa") is None
    with pytest.raises(ValueError, match="Shore A"):
        parse_shore_a("99ShoreA")


def test_crosslinks_cli_takes_shore_a(capsys):
    from network_models.cli import main

    assert main(["crosslinks", "--modulus", "62ShoreA", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    h = doc["hardness"]
    assert h["E_Pa"] == pytest.approx(gent_mpa(62) * 1e6, rel=1e-9)
    assert h["E_band_Pa"] == pytest.approx([gent_mpa(59) * 1e6, gent_mpa(65) * 1e6], rel=1e-9)
    assert "approximate" in h["caution"]


def test_hardness_design_target_is_the_e_window():
    r = design(["hardness=55..65ShoreA"], model="neo-hookean", entanglements=False)
    t = r.targets[0]
    assert t.kind == "E" and t.lo == pytest.approx(gent_mpa(55) * 1e6, rel=1e-5)
    assert t.hi == pytest.approx(gent_mpa(65) * 1e6, rel=1e-5)
    assert t.to_dict()["hardness"]["shore_a"] == [55.0, 65.0]

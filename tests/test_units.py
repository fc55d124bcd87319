"""Unit parsing at the edges (network_models.units) checked against the units' definitions.

Reference values come from scipy.constants (CODATA / NIST SP 811 definitions) or from the unit's
definition itself (named beside each check), never from this module's own output.
"""

from __future__ import annotations

import math

import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

from network_models.units import UnitError, parse_number, parse_quantity, split_header, unit_converter

# ---- pressure / stress ---------------------------------------------------------------------------

def test_kgf_per_cm2_from_standard_gravity():
    # 1 kgf = 1 kg × g_n, g_n = 9.80665 m/s² exactly (3rd CGPM 1901; scipy.constants.g), 1 cm² = 1e-4 m²
    # so 1 kgf/cm² = 98066.5 Pa = 0.0980665 MPa.
    expected = 1.0 * sc.g / (sc.centi**2)
    assert expected == pytest.approx(98066.5, rel=1e-15)
    for text in ("kgf/cm2", "kgf/cm²", "kgf/cm^2", "kg/cm2"):  # "kg/cm²" is the trade's kgf/cm² (common practice)
        assert unit_converter(text, "pressure").factor == pytest.approx(expected, rel=1e-12), text
    assert parse_quantity("1 kgf/cm²", "pressure") / 1e6 == pytest.approx(0.0980665, rel=1e-12)


def test_psi_against_scipy():
    # scipy.constants.psi = 6894.757293168361 Pa (lbf/in², NIST SP 811)
    assert unit_converter("psi", "pressure").factor == pytest.approx(sc.psi, rel=1e-12)
    assert parse_quantity("1 psi", "pressure") == pytest.approx(6894.757, rel=1e-6)
    assert unit_converter("lbf/in²", "pressure").factor == pytest.approx(sc.psi, rel=1e-12)


@pytest.mark.parametrize("text,pa", [
    ("MPa", sc.mega),            # SI prefix mega = 1e6 (scipy.constants.mega)
    ("N/mm²", 1 / sc.milli**2),  # 1 N/mm² = 1e6 Pa by definition
    ("N/mm2", 1 / sc.milli**2),
    ("kPa", sc.kilo),
    ("bar", sc.bar),             # scipy.constants.bar = 1e5 Pa
    ("ksi", 1e3 * sc.psi),
])
def test_pressure_units(text, pa):
    assert unit_converter(text, "pressure").factor == pytest.approx(pa, rel=1e-12)


@pytest.mark.parametrize("text,dim,si", [
    # lab spellings with the wrong case mean the trade unit, never milli-pascal or megametre (common practice)
    ("Mpa", "pressure", sc.mega), ("mpa", "pressure", sc.mega), ("MPA", "pressure", sc.mega),
    ("PSI", "pressure", sc.psi), ("N/MM2", "pressure", sc.mega), ("KGF/CM2", "pressure", sc.g / sc.centi**2),
    ("KN", "force", sc.kilo), ("daN", "force", 10.0), ("LBF", "force", sc.pound_force),
    ("MM", "length", sc.milli), ("Mm", "length", sc.milli),
])
def test_trade_spellings_any_case(text, dim, si):
    assert unit_converter(text, dim).factor == pytest.approx(si, rel=1e-12)


# ---- force, length, area, fraction -------------------------------------------------------------------

@pytest.mark.parametrize("text,si,dim", [
    ("N", 1.0, "force"),
    ("kN", sc.kilo, "force"),
    ("kgf", sc.g, "force"),           # kilogram-force = g_n newtons (scipy.constants.kgf)
    ("lbf", sc.pound_force, "force"),  # scipy.constants.pound_force
    ("mm", sc.milli, "length"),
    ("in", sc.inch, "length"),        # 1 in = 0.0254 m exactly (scipy.constants.inch)
    ("mm²", sc.milli**2, "area"),
    ("mm2", sc.milli**2, "area"),
    ("%", 0.01, "dimensionless"),     # per cent = 1/100 by definition
    ("mm/mm", 1.0, "dimensionless"),
])
def test_factors_against_definitions(text, si, dim):
    assert unit_converter(text, dim).factor == pytest.approx(si, rel=1e-12)


# ---- temperatures (offset units) ---------------------------------------------------------------------

@pytest.mark.parametrize("text,kelvin", [
    ("23C", 23 + sc.zero_Celsius),       # scipy.constants.zero_Celsius = 273.15 K
    ("23 °C", 23 + sc.zero_Celsius),
    ("23 degC", 23 + sc.zero_Celsius),
    ("23 Deg. C", 23 + sc.zero_Celsius),
    ("-10 °C", -10 + sc.zero_Celsius),
    ("296 K", 296.0),
    ("73F", float(sc.convert_temperature(73, "Fahrenheit", "Kelvin"))),  # (73 − 32)·5/9 + 273.15
    ("32 °F", sc.zero_Celsius),
])
def test_temperatures(text, kelvin):
    assert parse_quantity(text) == pytest.approx(kelvin, abs=1e-9)
    assert parse_quantity(text, "temperature") == pytest.approx(kelvin, abs=1e-9)


def test_temperature_converter_has_offset():
    conv = unit_converter("°C", "temperature")
    assert conv(100.0) == pytest.approx(373.15)  # boiling point of water at 1 atm, ITS-90 ≈ 373.124 K (common practice)
    assert conv.offset == pytest.approx(sc.zero_Celsius)


# ---- quantities as typed on the command line -------------------------------------------------------

def test_cli_style_quantities():
    assert parse_quantity("20mm", "length") == pytest.approx(0.020)
    assert parse_quantity("20 mm") == pytest.approx(0.020)
    assert parse_quantity("0.55MPa", "pressure") == pytest.approx(0.55e6)
    assert parse_quantity("0,55 MPa", "pressure") == pytest.approx(0.55e6)  # decimal comma
    assert parse_quantity("8 mm²", "area") == pytest.approx(8e-6)
    assert parse_quantity("150 %", "dimensionless") == pytest.approx(1.5)


def test_bare_number_default_unit():
    assert parse_quantity("20", "length", default_unit="mm") == pytest.approx(0.02)
    assert parse_quantity("0.02", "length") == pytest.approx(0.02)  # bare number: already SI
    assert parse_quantity(296.15, "temperature") == 296.15


def test_require_unit():
    with pytest.raises(UnitError, match="no unit"):
        parse_quantity("23", "temperature", require_unit=True)
    assert parse_quantity("23 C", "temperature", require_unit=True) == pytest.approx(23 + sc.zero_Celsius)


@pytest.mark.parametrize("text,dim,words", [
    ("3 MPa", "length", "not a length unit"),
    ("23 furlongsx", None, "unknown unit"),
    ("abc", "length", "20 mm"),
    ("", "pressure", "MPa"),
    ("inf MPa", "pressure", "could not read"),
    ("1e400 MPa", "pressure", "finite"),
    ("1e305 GPa", "pressure", "out of range"),
    ("12 N", "temperature", "not a temperature"),
])
def test_bad_quantities_say_what_to_write(text, dim, words):
    with pytest.raises(UnitError) as e:
        parse_quantity(text, dim)
    assert words in str(e.value)


def test_parse_number():
    assert parse_number("1,5") == 1.5
    assert parse_number("−2.5") == -2.5  # Unicode minus sign
    assert parse_number("1e3") == 1000.0
    with pytest.raises(UnitError):
        parse_number("1,2,3")


# ---- column headers ---------------------------------------------------------------------------------

@pytest.mark.parametrize("header,label,unit", [
    ("stress (MPa)", "stress", "MPa"),
    ("Stress [psi]", "Stress", "psi"),
    ("Force/N", "Force", "N"),
    ("Force, N", "Force", "N"),
    ("Standard force in N", "Standard force", "N"),
    ("Strain %", "Strain", "%"),
    ("Strain/%", "Strain", "%"),
    ("Extension mm", "Extension", "mm"),
    ("Stress N/mm²", "Stress", "N/mm²"),
    ("Nominal stress, MPa", "Nominal stress", "MPa"),
    ("Tensile strain", "Tensile strain", None),   # "strain" is not a unit here
    ("Stress at break", "Stress at break", None),  # nor "at"
    ("stretch", "stretch", None),
    ("Extension S2-1 (mm)", "Extension S2-1", "mm"),
])
def test_split_header(header, label, unit):
    assert split_header(header) == (label, unit)


# ---- fuzz: anything typed gives a float or a UnitError, nothing else --------------------------------

@settings(max_examples=150, deadline=None)
@given(st.text(alphabet=st.sampled_from(list("0123456789.,-+eE °CFKkmMNPa%/²^*()[]psixyz ")), max_size=20),
       st.sampled_from([None, "length", "pressure", "temperature", "force", "area", "dimensionless"]))
def test_parse_quantity_never_raises_anything_else(text, dim):
    try:
        v = parse_quantity(text, dim)
    except UnitError:
        return
    assert isinstance(v, float)
    assert math.isfinite(v)


@settings(max_examples=150, deadline=None)
@given(st.text(max_size=40))
def test_split_header_total(text):
    label, unit = split_header(text)
    assert isinstance(label, str)
    assert unit is None or isinstance(unit, str)


@pytest.mark.parametrize("text,dim,si", [
    ("kp", "force", sc.g),  # kilopond = kilogram-force = g_n N (scipy.constants.g, standard gravity)
    ("kp/cm2", "pressure", sc.g / sc.centi**2),
    ("％", "dimensionless", 0.01),  # full-width forms, as Chinese and Japanese exports write them
    ("ｍｍ", "length", sc.milli),
    ("Ｎ", "force", 1.0),
])
def test_trade_and_full_width_units(text, dim, si):
    assert unit_converter(text, dim).factor == pytest.approx(si, rel=1e-12)


def test_full_width_brackets_in_headers():
    assert split_header("荷重（N）") == ("荷重", "N")
    assert split_header("伸び［％］") == ("伸び", "％")


# ---- the exact SI table used before pint (cold commands never import pint) -----------------------

def _pint_kg_per(unit: str) -> float:
    from network_models.units import _registry

    return float(_registry().Quantity(1.0, unit).to("kilogram").magnitude)


def test_si_table_matches_pint():
    # pint (its own definitions file) stays the source of truth: every table entry must give exactly
    # pint's factor and offset, and every other dimension the same refusal sentence pint's path gives.
    from network_models.units import _SI_MASS, _SI_TABLE, DIMENSIONS, _pint_converter

    for text, (dim, factor, offset) in _SI_TABLE.items():
        for other in DIMENSIONS:
            fast_err = pint_err = None
            try:
                fast = unit_converter(text, other)
            except UnitError as exc:
                fast_err = str(exc)
            try:
                slow = _pint_converter(text, other)
            except UnitError as exc:
                pint_err = str(exc)
            assert fast_err == pint_err, (text, other)
            if other == dim:
                assert (fast.factor, fast.offset) == (slow.factor, slow.offset) == (factor, offset), text
    for text, kg in _SI_MASS.items():
        assert kg == _pint_kg_per(text), text


def test_si_table_against_definitions():
    # Independent of pint: psi = 0.45359237 kg × 9.80665 m/s² / (0.0254 m)² (international pound and inch,
    # 1959; g_n 3rd CGPM) — the table holds pint's double, within 2 ulp of the exact value; °C offset
    # 273.15 K (SI Brochure, 9th ed., 2.3.1); N/mm² = 1e6 Pa.
    from fractions import Fraction

    from network_models.units import _SI_TABLE

    exact_psi = Fraction("0.45359237") * Fraction("9.80665") / Fraction("0.0254") ** 2
    assert abs(_SI_TABLE["psi"][1] - float(exact_psi)) <= 2 * math.ulp(float(exact_psi))
    assert _SI_TABLE["psi"][1] == pytest.approx(sc.psi, rel=1e-15)
    assert _SI_TABLE["°C"][2] == sc.zero_Celsius == 273.15
    assert _SI_TABLE["N/mm²"][1] == 1e6 and _SI_TABLE["mm²"][1] == sc.milli**2


def test_never_units_agree_with_pint():
    # The cheap "never a unit" filters of _looks_like_unit only shortcut words pint also rejects.
    import itertools
    import string

    from network_models import units

    def pint_says(text: str) -> bool:
        try:
            unit = units._pint_unit(text, None)
            dim = units._registry().Quantity(1, unit).dimensionality
        except Exception:
            return False
        known = [units._dimensionality(d) for d in units.DIMENSIONS]
        return dim in known + [units._registry().Quantity(1, "second").dimensionality]

    for word in units._NEVER_UNITS:
        assert pint_says(word) is False, word
        assert units._looks_like_unit(word) is False
    ids = [f"{a}-{n}" for a in string.ascii_uppercase for n in (1, 2, 12)]
    ids += [f"{a}{b}-1" for a, b in itertools.product(string.ascii_uppercase, string.ascii_uppercase + "0123")]
    for text in ids:
        assert units._SPECIMEN_ID.fullmatch(text)
        assert pint_says(text) is False, text
    for text in units._SI_TABLE:
        if text.isdigit():  # a bare digit is never a header unit (an older rule, asked before pint)
            continue
        assert units._looks_like_unit(text) is pint_says(text) is True, text


def test_sample_compare_never_imports_pint():
    # A command that meets only the common units must not pay for pint's import (issue 18, cold compare).
    import subprocess
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    code = ("import sys, io, contextlib\n"
            "from network_models.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    try:\n"
            "        main(['compare', '--manifest', 'sample_sets/compounds.toml', '--json'])\n"
            "    except SystemExit:\n"
            "        pass\n"
            "print('pint' in sys.modules)\n")
    out = subprocess.run([sys.executable, "-c", code], cwd=root, capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip().splitlines()[-1] == "False"

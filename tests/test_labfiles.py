"""The lab-file reader (network_models.labfiles): languages, column order, everything missing at once,
workbooks (.xls, .ods), reading profiles, compression sign conventions and the invented raw exports.

Expected numbers follow from the definitions (λ = 1 + ΔL/L₀, nominal stress P = F/A₀ —
docs/methods.md §stress-strain) and
from the neo-Hookean law P = G(λ − λ⁻²) for uniaxial loading (docs/methods.md §compression, valid for λ < 1 as well);
unit factors from scipy.constants.
"""

from __future__ import annotations

import io
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from network_models import Mode
from network_models.curves import TestCurve
from network_models.errors import DataError, Notice
from network_models.fitting import fit
from network_models.labfiles import inspect_bytes, load_profile, read_curves, read_curves_bytes, save_profile

ROOT = Path(__file__).resolve().parent.parent

EXT = np.array([0.0, 5.0, 10.0, 20.0, 30.0])  # mm
FORCE = np.array([0.0, 1.1, 2.0, 3.6, 5.1])  # N


def _table(force_head, ext_head, rows_first="force", sep=";", comma=True):
    def num(v):
        s = f"{v:g}"
        return s.replace(".", ",") if comma else s
    head = [force_head, ext_head] if rows_first == "force" else [ext_head, force_head]
    lines = [sep.join(head)]
    for f, e in zip(FORCE, EXT, strict=True):
        lines.append(sep.join([num(f), num(e)] if rows_first == "force" else [num(e), num(f)]))
    return "\n".join(lines) + "\n"


# (language, force header, extension header, gauge key, width key, thickness key, temperature key, specimen key)
# — the words are the vocabulary's (network_models/labfiles/vocabulary.toml, with its sources)
LANGUAGES = [
    ("en", "Force (N)", "Extension (mm)", "Gauge length", "Width", "Thickness", "Test temperature", "Specimen"),
    ("de", "Kraft (N)", "Weg (mm)", "Messlänge", "Breite", "Dicke", "Prüftemperatur", "Probe"),
    ("fr", "Force (N)", "Allongement (mm)", "Longueur de référence", "Largeur", "Épaisseur", "Température",
     "Éprouvette"),
    ("es", "Fuerza (N)", "Desplazamiento (mm)", "Longitud de referencia", "Ancho", "Espesor", "Temperatura",
     "Probeta"),
    ("it", "Forza (N)", "Allungamento (mm)", "Lunghezza di riferimento", "Larghezza", "Spessore", "Temperatura",
     "Provino"),
    ("pt", "Força (N)", "Deslocamento (mm)", "Comprimento de referência", "Largura", "Espessura", "Temperatura",
     "Corpo de prova"),
    ("zh", "力 (N)", "位移 (mm)", "标距", "宽度", "厚度", "试验温度", "试样"),
    ("ja", "荷重 (N)", "変位 (mm)", "標線間距離", "幅", "厚さ", "試験温度", "試験片"),
]


@pytest.mark.parametrize("lang,force,ext,gauge,width,thick,temp,spec", LANGUAGES, ids=[x[0] for x in LANGUAGES])
@pytest.mark.parametrize("order", ["force", "extension"])
def test_each_language_with_preamble_geometry_in_either_column_order(lang, force, ext, gauge, width, thick, temp,
                                                                     spec, order):
    preamble = (f"{spec};P-{lang}\n{gauge};20;mm\n{width};4;mm\n{thick};2;mm\n{temp};40;°C\n")
    data = (preamble + _table(force, ext, rows_first=order)).encode("utf-8")
    (c,) = read_curves_bytes(data, f"{lang}.csv")
    np.testing.assert_allclose(c.stretch, 1 + EXT / 20.0)  # λ = 1 + ΔL/L₀
    np.testing.assert_allclose(c.stress, FORCE / (4e-3 * 2e-3))  # P = F/(w·t)
    assert c.specimen == f"P-{lang}"
    assert c.temperature == pytest.approx(40 + 273.15)  # 0 °C = 273.15 K (scipy.constants.zero_Celsius)


STRAIN_STRESS = [("en", "Strain (%)", "Stress (MPa)"), ("de", "Dehnung (%)", "Spannung (MPa)"),
                 ("fr", "Déformation (%)", "Contrainte (MPa)"), ("es", "Alargamiento (%)", "Tensión (MPa)"),
                 ("it", "Deformazione (%)", "Sollecitazione (MPa)"), ("pt", "Alongamento (%)", "Tensão (MPa)"),
                 ("zh", "伸长率 (%)", "拉伸应力 (MPa)"), ("ja", "伸び (%)", "引張応力 (MPa)")]


@pytest.mark.parametrize("lang,strain,stress", STRAIN_STRESS, ids=[x[0] for x in STRAIN_STRESS])
def test_strain_and_stress_words_in_each_language(lang, strain, stress):
    text = f"{stress};{strain}\n0;0\n0,4;50\n0,65;100\n1,05;200\n"  # stress column first, decimal commas
    (c,) = read_curves_bytes(text.encode("utf-8"), f"{lang}.txt")
    np.testing.assert_allclose(c.stretch, [1.0, 1.5, 2.0, 3.0])  # λ = 1 + ε
    np.testing.assert_allclose(c.stress, [0.0, 0.4e6, 0.65e6, 1.05e6])


def test_repeated_pairs_with_force_first():
    text = "Force S-1 (N),Extension S-1 (mm),Force S-2 (N),Extension S-2 (mm)\n0,0,0,0\n8,20,9,20\n16,40,18,40\n"
    curves = read_curves_bytes(text.encode(), "pairs.csv", gauge_length=0.02, area=8e-6)
    assert [c.specimen for c in curves] == ["S-1", "S-2"]
    np.testing.assert_allclose(curves[1].stress, np.array([0, 9, 18]) / 8e-6)
    np.testing.assert_allclose(curves[0].stretch, [1, 2, 3])


def test_specimen_is_read_from_metadata():
    c = TestCurve("uniaxial", [1, 2, 3], [0, 1, 2], specimen="S-9")
    assert c.specimen == "S-9" and c.metadata["specimen"] == "S-9"
    c.specimen = "S-10"
    assert c.metadata["specimen"] == "S-10"
    assert TestCurve("uniaxial", [1, 2, 3], [0, 1, 2]).specimen is None


# ---------------------------------------------------------------------------------------------------
# everything missing at once
# ---------------------------------------------------------------------------------------------------

_ITEMS = {"gauge_length": ("# gauge length: 20 mm", "gauge length"), "width": ("# width: 4 mm", "specimen width"),
          "thickness": ("# thickness: 2 mm", "specimen thickness")}


@settings(max_examples=30, deadline=None)
@given(st.sets(st.sampled_from(sorted(_ITEMS))))
def test_every_combination_of_missing_items_is_named_in_one_message(present):
    lines = [_ITEMS[k][0] for k in sorted(present)]
    data = ("\n".join(lines) + "\nextension (mm),force (N)\n0,0\n5,1\n10,2\n").encode()
    expected = [k for k in ("gauge_length",) if k not in present]
    if not {"width", "thickness"} <= present:
        expected += [k for k in ("width", "thickness") if k not in present]
    info = inspect_bytes(data, "geo.csv")
    assert info.needs == expected
    if not expected:
        (c,) = read_curves_bytes(data, "geo.csv")
        np.testing.assert_allclose(c.stretch, [1.0, 1.25, 1.5])
        return
    with pytest.raises(DataError) as exc:
        read_curves_bytes(data, "geo.csv")
    e = exc.value
    assert e.missing == expected and e.fields["missing"] == expected and e.to_dict()["missing"] == expected
    msg = str(e)
    for k in expected:
        assert _ITEMS[k][1] in msg, msg
    for k in set(_ITEMS) - set(expected):
        assert _ITEMS[k][1] not in msg, msg
    # giving exactly the missing items (SI) makes the file readable
    given_opts = {"gauge_length": 0.02, "width": 0.004, "thickness": 0.002}
    (c,) = read_curves_bytes(data, "geo.csv", **{k: given_opts[k] for k in expected})
    np.testing.assert_allclose(c.stress, np.array([0, 1, 2]) / 8e-6)
    assert any(n.kind == "assumed-geometry" for n in c.notices)


# ---------------------------------------------------------------------------------------------------
# workbooks through python-calamine
# ---------------------------------------------------------------------------------------------------

ROWS = [["Messlänge", 20, "mm"], ["Breite", 4, "mm"], ["Dicke", 2, "mm"], ["Kraft", "Weg", ""], ["N", "mm", ""],
        *[[float(f), float(e), ""] for f, e in zip(FORCE, EXT, strict=True)]]


def _check_workbook_curve(c):
    np.testing.assert_allclose(c.stretch, 1 + EXT / 20.0)
    np.testing.assert_allclose(c.stress, FORCE / 8e-6)


def test_ods_workbook():
    pd = pytest.importorskip("pandas")
    buf = io.BytesIO()
    with pd.ExcelWriter(buf, engine="odf") as xw:
        pd.DataFrame(ROWS).to_excel(xw, sheet_name="Messung", header=False, index=False)
    (c,) = read_curves_bytes(buf.getvalue(), "zug.ods")
    _check_workbook_curve(c)


def test_xls_workbook():
    import xlwt  # writes the old BIFF8 .xls format (dev dependency)

    wb = xlwt.Workbook()
    ws = wb.add_sheet("Messung")
    for i, row in enumerate(ROWS):
        for j, v in enumerate(row):
            ws.write(i, j, v)
    buf = io.BytesIO()
    wb.save(buf)
    data = buf.getvalue()
    assert data[:8] == b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"  # an OLE container, as .xls files are
    (c,) = read_curves_bytes(data, "zug.xls")
    _check_workbook_curve(c)


# ---------------------------------------------------------------------------------------------------
# reading profiles
# ---------------------------------------------------------------------------------------------------

BARE = "Messwert A;Messwert B\n" + "".join(f"{f:g};{e:g}\n".replace(".", ",") for f, e in zip(FORCE, EXT, strict=True))


def test_profile_round_trip_and_reuse(tmp_path):
    with pytest.raises(DataError, match="no stretch"):
        read_curves_bytes(BARE.encode(), "bare.csv")
    options = {"columns": {"Messwert A": "force", "Messwert B": "extension"},
               "units": {"Messwert A": "N", "Messwert B": "mm"}, "gauge_length": 0.02, "width": 0.004,
               "thickness": 0.002, "mode": "uniaxial", "decimal": "comma", "temperature": 296.15}
    p = save_profile(tmp_path / "tester.toml", options, note="hall 2 tester")
    back = load_profile(p)
    assert back["columns"] == options["columns"] and back["units"] == options["units"]
    for k in ("gauge_length", "width", "thickness", "temperature"):
        assert back[k] == pytest.approx(options[k], rel=1e-12)
    (c,) = read_curves_bytes(BARE.encode(), "bare.csv", profile=p)
    np.testing.assert_allclose(c.stretch, 1 + EXT / 20.0)
    np.testing.assert_allclose(c.stress, FORCE / 8e-6)
    (d,) = read_curves_bytes(BARE.encode(), "bare.csv", profile=p, width=0.008)  # an option wins over the profile
    np.testing.assert_allclose(d.stress, FORCE / 16e-6)


@pytest.mark.parametrize("text,words", [
    ("[geometry]\ngauge_length = \"20\"\n", "has no unit"),
    ("[geometry]\nlength = \"20 mm\"\n", "unknown entry"),
    ("[columns]\n\"A\" = \"forse\"\n", "unknown kind"),
    ("[read]\ndecimal = \"dot\"\n", "comma"),
    ("[reading]\n", "unknown section"),
    ("= broken", "not a valid TOML"),
])
def test_bad_profiles(tmp_path, text, words):
    p = tmp_path / "bad.toml"
    p.write_text(text, encoding="utf-8")
    with pytest.raises(DataError, match=words):
        load_profile(p)


def test_cli_fit_with_profile(tmp_path):
    f = tmp_path / "bare.csv"
    f.write_text(BARE, encoding="utf-8")
    p = save_profile(tmp_path / "t.toml", {"columns": {"Messwert A": "force", "Messwert B": "extension"},
                                            "units": {"Messwert A": "N", "Messwert B": "mm"}, "gauge_length": 0.02,
                                            "width": 0.004, "thickness": 0.002})
    out = subprocess.run([sys.executable, "-m", "network_models.cli", "fit", str(f), "--profile", str(p),
                          "--model", "neo-hookean", "--json"], capture_output=True, text=True, cwd=ROOT)
    assert out.returncode == 0, out.stderr
    doc = json.loads(out.stdout)
    assert doc["curves"][0]["n"] == len(EXT)


# ---------------------------------------------------------------------------------------------------
# compression (issue 10 item 1)
# ---------------------------------------------------------------------------------------------------

G = 0.5e6  # Pa
LAM_C = np.linspace(1.0, 0.62, 20)
P_C = G * (LAM_C - LAM_C**-2)  # neo-Hookean uniaxial nominal stress (docs/methods.md §compression); negative for λ < 1


def _compression_file(tester_signs: bool, marker="# mode: compression\n") -> bytes:
    eps = (1 - LAM_C) * 100 if tester_signs else (LAM_C - 1) * 100  # %
    sig = -P_C / 1e6 if tester_signs else P_C / 1e6  # MPa
    rows = "".join(f"{e!r},{s!r}\n" for e, s in zip(eps.tolist(), sig.tolist(), strict=True))
    return (marker + "strain (%),stress (MPa)\n" + rows).encode()


@pytest.mark.parametrize("tester_signs", [True, False], ids=["positive-compression", "core-convention"])
def test_compression_either_sign_convention_fits_back_G(tester_signs):
    (c,) = read_curves_bytes(_compression_file(tester_signs), "comp.csv")
    assert c.mode is Mode.UNIAXIAL and c.loading == "compression" and c.metadata["loading"] == "compression"
    np.testing.assert_allclose(c.stretch, LAM_C, rtol=1e-12)  # λ = 1 − ε_c
    np.testing.assert_allclose(c.stress, P_C, rtol=1e-12, atol=1e-9)
    signs = [n for n in c.notices if isinstance(n, Notice) and n.kind == "assumed-sign"]
    assert len(signs) == 1
    assert ("written positive" in signs[0]) is tester_signs
    res = fit("neo-hookean", [c])
    assert res.params["G"].value == pytest.approx(G, rel=1e-6)


def test_compression_words_in_other_languages():
    (c,) = read_curves_bytes(_compression_file(True, "# Prüfart: Druckversuch\n"), "druck.csv")
    assert c.loading == "compression"
    np.testing.assert_allclose(c.stretch, LAM_C, rtol=1e-12)
    text = "déformation de compression (%);contrainte de compression (MPa)\n0;0\n10;0,2\n20;0,45\n"
    (d,) = read_curves_bytes(text.encode(), "compression_fr.csv")
    assert d.loading == "compression" and np.all(d.stretch <= 1) and np.all(d.stress <= 0)


def test_compression_mixed_signs_refused():
    data = b"# mode: compression\nstrain (%),stress (MPa)\n0,0\n10,0.2\n20,-0.5\n30,0.9\n"
    with pytest.raises(DataError, match="both positive and negative"):
        read_curves_bytes(data, "mixed.csv")


def test_compression_option_and_cli(tmp_path):
    data = _compression_file(True, marker="")
    (c,) = read_curves_bytes(data, "c.csv", mode="compression")
    assert c.loading == "compression"
    f = tmp_path / "c.csv"
    f.write_bytes(data)
    out = subprocess.run([sys.executable, "-m", "network_models.cli", "fit", str(f), "--mode", "compression",
                          "--model", "neo-hookean", "--json"], capture_output=True, text=True, cwd=ROOT)
    assert out.returncode == 0, out.stderr
    g = json.loads(out.stdout)["models"]["neo-hookean"]["parameters"]["G"]["value"]
    assert g == pytest.approx(G, rel=1e-6)


# ---------------------------------------------------------------------------------------------------
# the invented raw exports in sample_sets/raw_exports (neo-Hookean, G = 0.48 MPa, ~0.5 % noise)
# ---------------------------------------------------------------------------------------------------

RAW = ROOT / "sample_sets" / "raw_exports"


def _generator():
    sys.path.insert(0, str(ROOT / "sample_sets"))
    try:
        import make_raw_exports
    finally:
        sys.path.pop(0)
    return make_raw_exports


def test_raw_exports_match_their_generator():
    gen = _generator()
    for name, data in gen.build().items():
        assert (RAW / name).read_bytes() == data, f"{name}: rerun sample_sets/make_raw_exports.py"


@pytest.mark.parametrize("name", ["QM-R7_zugversuch_de.csv", "QM-R7_traction_fr.csv"])
def test_raw_exports_fit_without_editing(name):
    g_true = _generator().G_MPA * 1e6
    curves = read_curves(RAW / name)
    assert len(curves) == 1 and curves[0].mode is Mode.UNIAXIAL
    assert curves[0].metadata["compound"] == "QM-R7"
    res = fit("neo-hookean", curves)
    g = res.params["G"]
    # 0.5 % noise on ~30 points moves G by about 0.1 %: within 1 % is "the modulus they were made with"
    assert g.value == pytest.approx(g_true, rel=0.01)
    out = subprocess.run([sys.executable, "-m", "network_models.cli", "fit", str(RAW / name), "--model", "neo-hookean",
                          "--json"], capture_output=True, text=True, cwd=ROOT)
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout)["models"]["neo-hookean"]["parameters"]["G"]["value"] == pytest.approx(g.value)


def test_compression_slack_before_contact_is_dropped_and_rezeroed():
    # the platen travels 0.5 mm of a 10 mm height before it bears load: the specimen's unloaded height is
    # where contact starts (λ₀ = 0.95), so λ' = λ/λ₀ (same rule as slack in tension)
    travel = np.array([0.0, 0.2, 0.5, 1.0, 1.5, 2.0])  # mm, compression written positive
    force = np.array([0.0, 0.01, 0.0, 3.0, 6.5, 10.5])  # N
    text = "# mode: compression\n# gauge length: 10 mm\n# diameter: 20 mm\ntravel (mm),force (N)\n" + "".join(
        f"{t:g},{f:g}\n" for t, f in zip(travel, force, strict=True))
    (c,) = read_curves_bytes(text.encode(), "slack_c.csv")
    lam_raw = 1 - travel[2:] / 10.0
    np.testing.assert_allclose(c.stretch, lam_raw / 0.95)
    area = np.pi * 0.020**2 / 4  # A₀ = π d²/4
    np.testing.assert_allclose(c.stress, -force[2:] / area)
    assert any(n.kind == "cleanup" and "re-zeroed" in n for n in c.notices)


def test_vocabulary_covers_every_language():
    # the data file names every column kind and geometry key in each of the eight languages the issue asks for
    from network_models.labfiles import vocabulary

    raw = vocabulary.all_words()
    langs = {"en", "de", "fr", "es", "it", "pt", "zh", "ja"}
    for kind in ("stress", "strain", "force", "extension", "specimen", "temperature"):
        assert set(raw["columns"][kind]) == langs, kind
    for key in ("gauge_length", "width", "thickness", "area", "temperature", "specimen", "speed", "mode"):
        assert set(raw["keys"][key]) == langs, key
    assert set(raw["modes"]["compression"]) == langs
    # a word must not name two preamble keys (the first would silently win)
    seen = {}
    for key, by_lang in raw["keys"].items():
        for words in by_lang.values():
            for w in words:
                f = vocabulary.fold(w)
                assert seen.setdefault(f, key) == key, f"{w!r} is listed under {seen[f]} and {key}"


def test_inspect_reports_compression():
    assert inspect_bytes(_compression_file(True), "c.csv").loading == "compression"
    assert inspect_bytes(b"compressive strain (%),compressive stress (MPa)\n0,0\n10,0.2\n", "h.csv").loading == \
        "compression"
    info = inspect_bytes(b"strain (%),stress (MPa)\n0,0\n10,0.2\n", "t.csv", mode="compression")
    assert info.loading == "compression" and info.mode is Mode.UNIAXIAL
    assert inspect_bytes(b"strain (%),stress (MPa)\n0,0\n10,0.2\n", "t.csv").loading == "tension"


def test_compression_curves_written_and_read_back():
    from network_models.labfiles import curves_to_csv

    (c,) = read_curves_bytes(_compression_file(True), "comp.csv")
    text = curves_to_csv([c])
    assert text.startswith("# mode: compression")
    (back,) = read_curves_bytes(text.encode(), "back.csv")
    assert back.loading == "compression"
    np.testing.assert_allclose(back.stretch, c.stretch, rtol=1e-12)
    np.testing.assert_allclose(back.stress, c.stress, rtol=1e-12)


def test_cli_saves_the_options_as_a_profile(tmp_path):
    f = tmp_path / "k.csv"
    f.write_text("Weg (mm);Kraft (N)\n" + "".join(f"{e:g};{x:g}\n".replace(".", ",")
                                                   for e, x in zip(EXT, FORCE, strict=True)), encoding="utf-8")
    prof = tmp_path / "saved.toml"
    cmd = [sys.executable, "-m", "network_models.cli", "fit", str(f), "--model", "neo-hookean", "--json"]
    out = subprocess.run(cmd + ["--gauge-length", "20mm", "--width", "4mm", "--thickness", "2mm",
                                "--save-profile", str(prof)], capture_output=True, text=True, cwd=ROOT)
    assert out.returncode == 0, out.stderr
    opts = load_profile(prof)
    assert opts["gauge_length"] == pytest.approx(0.02) and opts["width"] == pytest.approx(0.004)
    again = subprocess.run(cmd + ["--profile", str(prof)], capture_output=True, text=True, cwd=ROOT)
    assert again.returncode == 0, again.stderr
    assert json.loads(again.stdout)["models"] == json.loads(out.stdout)["models"]


def test_long_preamble_without_separators_above_a_semicolon_table():
    # 14 'Key: value' lines (no semicolons) above a semicolon table with decimal commas
    preamble = "".join(f"Bemerkung {i}: frei\n" for i in range(11)) + "Messlänge: 20 mm\nBreite: 4 mm\nDicke: 2 mm\n"
    rows = "".join(f"{f:g};{e:g}\n".replace(".", ",") for f, e in zip(FORCE, EXT, strict=True))
    (c,) = read_curves_bytes((preamble + "Kraft (N);Weg (mm)\n" + rows).encode(), "lang.txt")
    np.testing.assert_allclose(c.stretch, 1 + EXT / 20.0)
    np.testing.assert_allclose(c.stress, FORCE / 8e-6)


def test_full_width_forms_in_a_japanese_export():
    text = ("試験片：J-1\n標線間距離：20 mm\n幅：4 mm\n厚さ：2 mm\n荷重（N）,変位（ｍｍ）\n"
            + "".join(f"{f:g},{e:g}\n" for f, e in zip(FORCE, EXT, strict=True)))
    (c,) = read_curves_bytes(text.encode("utf-8"), "ja.csv")
    assert c.specimen == "J-1"
    np.testing.assert_allclose(c.stretch, 1 + EXT / 20.0)
    np.testing.assert_allclose(c.stress, FORCE / 8e-6)


def test_swelling_table_in_german():
    from network_models.labfiles import read_swelling

    text = ("Mischung;Probe;Trockenmasse (g);Gequollene Masse (g);Extrahierte Masse (g);Lösungsmittel;Temperatur (°C)\n"
            "QM-R7;1;0,2000;1,0000;0,1940;Toluol;23\n")
    (r,) = read_swelling(text.encode("utf-8"), "quellung.csv")
    assert (r.compound, r.specimen, r.solvent) == ("QM-R7", "1", "Toluol")
    assert r.dry_mass == pytest.approx(0.2e-3) and r.swollen_mass == pytest.approx(1.0e-3)  # g → kg
    assert r.extracted_mass == pytest.approx(0.194e-3) and r.temperature == pytest.approx(296.15)


def test_first_preamble_line_names_the_specimen_and_a_later_synonym_is_kept_as_text():
    # "test piece" is the ISO 37 word for the specimen; a lab may write both lines (common practice)
    text = ("# specimen: A-1\n# test piece: dumbbell type 2\n# mode: uniaxial\n"
            "stretch,stress (MPa)\n1.0,0\n1.2,0.2\n1.4,0.35\n1.6,0.47\n")
    (c,) = read_curves_bytes(text.encode(), "a1.csv")
    assert c.specimen == "A-1"
    assert "dumbbell type 2" in c.metadata.values()

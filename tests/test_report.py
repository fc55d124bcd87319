"""The review report: its numbers are the fit's numbers (read back from HTML, CSV and JSON), the files
round-trip, and the HTML opens offline in headless Chromium with visible plots and no network request."""

from __future__ import annotations

import json
import math
import re
from html.parser import HTMLParser

import numpy as np
import pytest

from network_models.cli import main
from network_models.compare import compare
from network_models.compounds import Compound
from network_models.curves import TestCurve
from network_models.report import CAUTIONS, Report, fmt, nice_ticks, read_csv, svg_line_chart

T23 = 296.15


def gent_uniaxial(lam, G, Jm):
    """Gent 1996 (Rubber Chem. Technol. 69:59, from memory): W = −(G J_m/2) ln(1 − (I₁ − 3)/J_m), so
    P = G(λ − λ⁻²) / (1 − (I₁ − 3)/J_m) in uniaxial tension with I₁ = λ² + 2/λ
    (docs/methods.md §stress-from-energy, §gent)."""
    lam = np.asarray(lam, float)
    I1 = lam**2 + 2 / lam
    return G * (lam - lam**-2) / (1 - (I1 - 3) / Jm)


def gent_planar(lam, G, Jm):
    """Planar tension: I₁ = λ² + 1 + λ⁻², P = G(λ − λ⁻³)/(1 − (I₁ − 3)/J_m)."""
    lam = np.asarray(lam, float)
    I1 = lam**2 + 1 + lam**-2
    return G * (lam - lam**-3) / (1 - (I1 - 3) / Jm)


def compound(name, G, Jm, seed, factors=(0.97, 1.0, 1.03)):
    """Uniaxial specimens at ``factors`` × G (one file, a specimen each) and one planar curve."""
    rng = np.random.default_rng(seed)
    lu = np.linspace(1.05, 4.5, 50)
    lp = np.linspace(1.05, 3.0, 30)
    cs = [TestCurve("uniaxial", lu, gent_uniaxial(lu, k * G, Jm) * (1 + 0.01 * rng.standard_normal(lu.size)),
                    name=f"{name}-u{i}", source=f"{name}_uniaxial.csv", temperature=T23, cycle="3rd loading",
                    specimen=f"{name}{i}") for i, k in enumerate(factors, 1)]
    cs.append(TestCurve("planar", lp, gent_planar(lp, G, Jm) * (1 + 0.01 * rng.standard_normal(lp.size)),
                        name=f"{name}-p", source=f"{name}_planar.csv", temperature=T23))
    return Compound(name, cs, metadata={"cure dose": f"{name} (invented)"}, notes="invented for a test")


@pytest.fixture(scope="module")
def report():
    cmp = compare([compound("A", 0.45e6, 60.0, 1), compound("B", 0.55e6, 50.0, 2, (0.98, 1.0, 1.02, 1.01))],
                  model="gent", baseline="A", service_temperature=353.15, exclude={"B": {"B4": "nicked edge"}},
                  spread_models=("gent", "neo-hookean"))
    assert all(r.ok for r in cmp.results)
    return Report(cmp, title="Test review (invented data)", purpose="Check the report numbers")


class Cells(HTMLParser):
    """Collect table cells carrying data-key/data-value, with their visible text."""

    def __init__(self):
        super().__init__()
        self.cells, self._cur, self.tags = [], None, []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        a = dict(attrs)
        if tag == "td" and "data-key" in a:
            self._cur = {"compound": a["data-compound"], "key": a["data-key"], "value": float(a["data-value"]),
                         "text": ""}

    def handle_endtag(self, tag):
        if tag == "td" and self._cur is not None:
            self.cells.append(self._cur)
            self._cur = None

    def handle_data(self, data):
        if self._cur is not None:
            self._cur["text"] += data


def first_number(text):
    m = re.search(r"[−-]?\d+(?:\.\d+)?(?:e[+-]?\d+)?", text)
    return float(m.group(0).replace("−", "-"))


def test_html_numbers_are_the_fit_results(report):
    p = Cells()
    p.feed(report.to_html())
    params = {(c["compound"], c["key"][6:]): c for c in p.cells if c["key"].startswith("param:")}
    for r in report.cmp.results:
        fr = r.fit
        for name, est in fr.params.items():
            cell = params[(r.name, name)]
            assert cell["value"] == est.value  # exact, full precision
            decl = r.params[[q.name for q in r.params].index(name)]
            shown = first_number(cell["text"])  # what a reader sees: 4 significant digits, trade unit
            assert shown == pytest.approx(est.value * decl.display_scale, rel=6e-4)
        # G₀ in the comparison table: the mean of the used specimens' own fits
        g0 = next(c for c in p.cells if c["compound"] == r.name and c["key"] == "G0")
        own = [s.values["G0"] for s in r.specimens if s.used]
        assert len(own) == 3 and g0["value"] == pytest.approx(np.mean(own), rel=1e-12)
        assert first_number(g0["text"]) == pytest.approx(np.mean(own) / 1e6, rel=6e-4)
        for s in r.specimens:  # every specimen listed with its own value
            if s.values.get("G0") is not None:
                cell = next(c for c in p.cells if c["compound"] == r.name and c["key"] == f"specimen:{s.name}:G0")
                assert cell["value"] == s.values["G0"]


def test_csv_and_json_hold_the_fit_results_and_round_trip(report, tmp_path):
    paths = report.write(tmp_path / "review.html")
    charts = paths.pop("charts")
    assert set(paths) == {"html", "csv", "json", "xlsx"} and all(p.exists() for p in paths.values())
    # each chart of the page is also its own SVG file: well-formed XML, styled inline (no <style> block
    # and no page stylesheet needed, so it reads the same when copied into another document)
    import xml.etree.ElementTree as ET

    page_svgs = paths["html"].read_text("utf-8").count("<svg ")
    assert len(charts) == page_svgs > 0
    for c in charts:
        root = ET.fromstring(c.read_text("utf-8").split("\n", 1)[1])
        assert root.tag.endswith("svg") and "<style" not in c.read_text("utf-8")
    # the workbook holds the same long table as the CSV (pandas reads both; openpyxl writes the xlsx)
    import pandas as pd

    xl, cs = pd.read_excel(paths["xlsx"], engine="openpyxl"), pd.read_csv(paths["csv"])
    assert list(xl.columns) == list(cs.columns) and len(xl) == len(cs)
    assert np.allclose(pd.to_numeric(xl["value"], errors="coerce").fillna(0),
                       pd.to_numeric(cs["value"], errors="coerce").fillna(0), rtol=1e-12)
    rows = read_csv(paths["csv"])
    doc = json.loads(paths["json"].read_text("utf-8"))
    by = {(r["section"], r["compound"], r["key"]): r for r in rows}
    for r in report.cmp.results:
        for name, est in r.fit.params.items():
            row = by[("parameter", r.name, name)]
            assert row["value"] == est.value  # repr() in the CSV: exact float round trip
            assert (row["ci95_low"], row["ci95_high"]) == tuple(est.ci95)
        jc = next(c for c in doc["compounds"] if c["name"] == r.name)
        for p in jc["parameters"]:
            assert p["value"] == r.fit.params[p["name"]].value
        # every quantity of the JSON is in the CSV with the same value and interval
        for key, q in jc["quantities"].items():
            row = by[("quantity", r.name, key)]
            assert row["value"] == q["value"] and row["ci95_low"] == q["ci95_low"]
            assert row["unit"] == q["unit"]
    # differences: CSV and JSON agree (absolute difference, its interval, the verdict)
    for d in doc["differences"]:
        row = by[("difference", d["compound"], d["quantity"])]
        assert row["value"] == d["absolute"] and [row["ci95_low"], row["ci95_high"]] == (d["ci95"] or [None, None])
        assert row["note"].startswith(d["verdict"])
    # specimens, statistics, headline and exclusions: the same in both
    for jc in doc["compounds"]:
        for sp in jc["specimens"]:
            if sp["G0"] is not None:
                assert by[("specimen", jc["name"], f"{sp['name']}:G0")]["value"] == sp["G0"]
        assert by[("statistics", jc["name"], "G0:n")]["value"] == jc["G0"]["n"]
        assert by[("statistics", jc["name"], "G0:mean")]["value"] == jc["G0"]["mean"]
        assert by[("headline", jc["name"], "strand_density")]["value"] == jc["headline"]["value"]
    assert doc["exclusions"] == [{"compound": "B", "specimen": "B4", "reason": "nicked edge"}]
    assert by[("exclusion", "B", "B4")]["note"] == "nicked edge"
    # the CSV re-written from what was read is identical (round trip of the file itself)
    assert paths["csv"].read_text("utf-8") == report.to_csv()
    assert all(v is None or math.isfinite(v) for r in rows for v in (r["value"], r["ci95_low"], r["ci95_high"]))


def test_html_is_self_contained_and_has_the_review_sections(report):
    html = report.to_html()
    p = Cells()
    p.feed(html)
    for tag, attrs in p.tags:
        assert tag not in ("script", "link", "img", "iframe", "object", "embed")
        for k in ("src", "href"):
            assert k not in attrs or attrs[k].startswith("#"), (tag, attrs)
    urls = set(re.findall(r"https?://[^\s\"'<>]+", html))
    assert urls <= {"http://www.w3.org/2000/svg"}  # the SVG namespace name, not a request
    assert "@import" not in html and "url(http" not in html
    for needed in ("Purpose:", "Data provenance", "Fitted parameters", "Crosslink density under stated",
                   "Comparison", "Warnings", "Model and references", "Gent 1996", "3rd loading", "A_uniaxial.csv"):
        assert needed in html, needed
    for c in CAUTIONS:
        assert c in html.replace("&#x27;", "'")
    assert html.count("<svg") >= 6  # specimens ×2, uniaxial, planar, crosslink bars, service temperature
    # the summary states n per compound and the verdict wording; exclusions are listed with their reason
    assert "n = 3 specimen(s)" in html and "not distinguishable" in html and "Welch" in html
    assert "Exclusions" in html and "nicked edge" in html
    assert "nan" not in re.sub(r"<[^>]+>", " ", html).lower().split()


def test_fmt_significant_digits():
    # 4 significant digits, plain notation in the usual range (common practice for review tables)
    assert fmt(0.45123) == "0.4512"
    assert fmt(1234.5) == "1234"  # half-to-even at the 4th digit is Python's format rule
    assert fmt(141.18) == "141.2"
    assert fmt(None) == "—" and fmt(float("nan")) == "—"
    assert fmt(2.5e-7) == "2.500e-07"


@pytest.mark.parametrize("lo,hi", [(0, 1), (1, 4.5), (0, 2.96), (0.2, 0.27), (1, 13.8), (0, 1234.0)])
def test_nice_ticks_cover_range_with_round_steps(lo, hi):
    # 1–2–2.5–5 × 10^k steps, ticks covering the data (common practice for axis labelling)
    t = nice_ticks(lo, hi)
    assert t[0] <= lo + 1e-12 and t[-1] >= hi - 1e-12
    steps = np.diff(t)
    assert np.allclose(steps, steps[0])
    mant = steps[0] / 10 ** math.floor(math.log10(steps[0]))
    assert any(math.isclose(mant, m) for m in (1, 2, 2.5, 5))
    assert 3 <= len(t) <= 12


def test_charts_carry_their_own_styles(report):
    # a chart copied out of the page has no stylesheet: white background, and every text and line styled inline
    from network_models.report import specimen_plot

    for svg in (specimen_plot(report.cmp, "G0"), svg_line_chart([{"label": "a", "x": [1, 2], "y": [0, 1]}], "x", "y")):
        assert '<rect x="0" y="0"' in svg and 'fill="#ffffff"' in svg
        for m in re.finditer(r"<text [^>]*>", svg):
            assert 'fill="' in m.group(0) and "font-size" in m.group(0), m.group(0)
        for m in re.finditer(r"<line [^>]*>", svg):
            assert "stroke=" in m.group(0) or "<g stroke" in svg, m.group(0)
        assert "class=\"grid\"" not in svg and "class=\"tk\"" not in svg


def test_svg_chart_skips_nan_and_labels_axes():
    svg = svg_line_chart([{"label": "a", "x": [1, 2, 3, 4], "y": [0, 1, float("nan"), 3], "color": "#123456"}],
                         "stretch λ (1)", "nominal stress P (MPa)", "t")
    assert "stretch λ (1)" in svg and "nominal stress P (MPa)" in svg and "nan" not in svg.lower()


def test_cli_report_writes_three_files(tmp_path, capsys):
    files = _two_compound_files(tmp_path)
    out = tmp_path / "rev.html"
    rc = main(["report", "--compound", files[0], "--compound", files[1], "--model", "gent", "--mode", "uniaxial",
               "--baseline", "A", "--service-temperature", "80C", "--purpose", "test", "-o", str(out)])
    text = capsys.readouterr().out
    assert rc == 0, text
    assert out.exists() and out.with_suffix(".csv").exists() and out.with_suffix(".json").exists()
    assert "Against A" in text and "ν (mol/m³)" in text
    doc = json.loads(out.with_suffix(".json").read_text("utf-8"))
    assert doc["service_temperature_K"] == pytest.approx(353.15)
    assert doc["report"]["purpose"] == "test"


@pytest.mark.parametrize("argv,words", [
    (["report"], "--compound"),
    (["report", "--compound", "A"], "NAME=FILE"),
    (["report", "--compound", "A=/no/such.csv"], "not found"),
    (["compare", "--compound", "A=/no/such.csv", "--model", "nosuch"], "not found"),
])
def test_cli_errors_are_one_sentence_exit_2(argv, words, capsys):
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert words in err and "Traceback" not in err and err.count("\n") == 1


# ----- browser -----------------------------------------------------------------------------------
@pytest.mark.ui
def test_report_opens_offline_with_visible_plots(report, tmp_path, chromium_browser):
    # the session's shared browser (tests/conftest.py): a skip without Chromium/Playwright, a failure under
    # NETSTRETCH_REQUIRE_BROWSER=1, and no second Playwright started beside it
    html = report.write(tmp_path / "review.html")["html"]
    requests = []
    ctx = chromium_browser.new_context(viewport={"width": 1200, "height": 900})
    try:
        page = ctx.new_page()
        page.on("request", lambda r: requests.append(r.url))
        page.goto(html.as_uri())
        page.wait_for_load_state("load")
        boxes = page.eval_on_selector_all(
            "svg.chart", "els => els.map(e => {const r = e.getBoundingClientRect(); "
            "return [r.width, r.height, e.querySelectorAll('polyline,rect,circle').length]})")
        title = page.title()
        page.screenshot(path=str(tmp_path / "report_ui.png"), full_page=True)
    finally:
        ctx.close()
    assert requests == [html.as_uri()], requests  # the file itself, nothing else
    assert title == "Test review (invented data)"
    assert len(boxes) >= 4
    for w, h, marks in boxes:
        assert w > 300 and h > 200 and marks > 3


@pytest.mark.ui
def test_app_compare_tab_shows_table_and_downloads_the_report(app_page, deep_text_js, tmp_path):
    # the Compare tab of the served app: the sample set is compared at start; the downloaded report holds
    # the same strand densities as the core run on the same manifest (one pipeline for app, CLI and Python)
    from network_models.compounds import load_manifest
    from network_models.labfiles import SAMPLE_MANIFEST

    page = app_page
    page.locator(".bk-tab", has_text="Compare").first.click()
    page.wait_for_function(f"() => ({deep_text_js})('.ns-cmp-table').includes('strand density')", timeout=60000)
    table = page.evaluate(deep_text_js, ".ns-cmp-table")
    assert "junction (crosslink) density" in table and "(baseline)" in table
    with page.expect_download(timeout=60000) as dl:
        page.locator(".ns-cmp-dl-html button, .ns-cmp-dl-html a").first.click()
    path = tmp_path / "tab_review.html"
    dl.value.save_as(path)
    parsed = Cells()
    parsed.feed(path.read_text("utf-8"))
    nu_tab = {c["compound"]: c["value"] for c in parsed.cells if c["key"] == "nu"}
    man = load_manifest(SAMPLE_MANIFEST)
    core = compare(man.compounds, model="extended-tube", baseline=man.baseline, service_temperature=353.15)
    for r in core.results:
        assert nu_tab[r.name] == pytest.approx(r.quantities["nu"].value, rel=1e-9)


def _two_compound_files(tmp_path):
    files = []
    for name, G in (("A", 0.45e6), ("B", 0.55e6)):
        lam = np.linspace(1.05, 4.0, 40)
        f = tmp_path / f"{name}.csv"
        f.write_text("# test: uniaxial\n# temperature: 23 °C\nstretch,nominal stress (MPa)\n" + "\n".join(
            f"{x:.5f},{y / 1e6:.6f}" for x, y in zip(lam, gent_uniaxial(lam, G, 60.0), strict=True)), "utf-8")
        files.append(f"{name}={f}")
    return files


@pytest.mark.ui
def test_cli_report_prints_an_a4_pdf_with_chromium(tmp_path, capsys, chromium_path, monkeypatch):
    files = _two_compound_files(tmp_path)
    out = tmp_path / "rev.html"
    monkeypatch.setenv("NETSTRETCH_CHROMIUM", chromium_path)
    rc = main(["report", "--compound", files[0], "--compound", files[1], "--model", "gent", "--baseline", "A",
               "--no-model-spread", "--pdf", "-o", str(out)])
    assert rc == 0, capsys.readouterr().err
    assert out.with_suffix(".pdf").read_bytes().startswith(b"%PDF")


def test_cli_report_pdf_without_chromium_says_how_to_print(tmp_path, capsys, monkeypatch):
    files = _two_compound_files(tmp_path)
    monkeypatch.setenv("NETSTRETCH_CHROMIUM", "")
    monkeypatch.setenv("PATH", str(tmp_path))  # no chromium anywhere on this PATH
    out = tmp_path / "rev.html"
    rc = main(["report", "--compound", files[0], "--compound", files[1], "--model", "gent", "--baseline", "A",
               "--no-model-spread", "--pdf", "-o", str(out)])
    err = capsys.readouterr().err
    assert rc == 2 and "print it to PDF" in err and out.exists()  # the HTML is still written

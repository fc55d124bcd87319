"""The Compare tab's downloads: the report as HTML, PDF (where Chromium is), xlsx, CSV, JSON and the charts as
a zip of SVGs, named after the study, all off while the comparison is out of date."""

from __future__ import annotations

import io
import xml.etree.ElementTree as ET
import zipfile

import pytest

pn = pytest.importorskip("panel")

from app.compare_view import DOWNLOADS, study_stem  # noqa: E402


@pytest.fixture(scope="module")
def page():
    from app.main import create_app

    return create_app()  # the invented sample set, compared once on load


def test_study_stem_is_a_safe_name_after_the_study():
    assert study_stem("Cure-dose ladder for the seal", "Compound design review") == "Cure-dose-ladder-for-the-seal"
    # the default title says nothing about the study: the compounds' keys instead
    assert study_stem("Compound design review", "Compound design review", ["QM-S1", "QM-S2"]) == "QM-S1_QM-S2"
    # user text is data: no path separators, markup or quotes reach a file name
    stem = study_stem('<b>x</b> "../../etc/passwd" ümlaut', "")
    assert set(stem) <= set("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789._-")
    assert not stem.startswith(".") and "<" not in stem and '"' not in stem
    assert len(study_stem("word " * 40, "")) <= 60
    assert study_stem("", "", []) == "review"


def test_downloads_are_named_after_the_manifest_title(page):
    cv = page.ns_compare
    title = page.ns_data.state.manifest_title
    assert title.startswith("Quillmere Elastomer Works")  # sample_sets/compounds.toml [scenario] title
    for kind, _label, _w in DOWNLOADS:
        name = cv.downloads[kind].filename
        assert name.startswith("Quillmere-Elastomer-Works-cure-dose"), name
        assert not name.startswith("review")
    assert cv.downloads["svg"].filename.endswith("_charts.zip")
    cv.state.title = "Seal cure ladder"
    assert cv.downloads["xlsx"].filename == "Seal-cure-ladder.xlsx"
    cv.state.title = title


def test_xlsx_holds_the_csv_numbers_and_the_zip_every_chart(page):
    import pandas as pd

    cv = page.ns_compare
    csv = pd.read_csv(io.BytesIO(cv._file("csv").getvalue()))
    xl = pd.read_excel(cv._file("xlsx"), sheet_name="netstretch", engine="openpyxl")
    assert list(xl.columns) == list(csv.columns) and len(xl) == len(csv)
    num = csv.select_dtypes("number").columns
    pd.testing.assert_frame_equal(xl[num].reset_index(drop=True), csv[num].reset_index(drop=True),
                                  check_dtype=False)
    html = cv._file("html").getvalue().decode("utf-8")
    with zipfile.ZipFile(io.BytesIO(cv._file("svg").getvalue())) as z:
        names = z.namelist()
        assert len(names) == html.count("<svg") and names
        for n in names:
            assert n.endswith(".svg") and n.startswith(cv.file_stem() + "_charts/")
            root = ET.fromstring(z.read(n))  # well-formed, standalone SVG
            assert root.tag.endswith("svg")


def test_stale_comparison_blocks_every_download(page):
    cv = page.ns_compare
    cv.state.service_C = cv.state.service_C + 5.0
    try:
        assert cv.state.stale
        assert all(cv.downloads[k].disabled for k, _l, _w in DOWNLOADS)
        assert cv._file("xlsx") is None and "out of date" in cv.messages.texts()["compare-download"]
    finally:
        cv.state.service_C = cv.state.service_C - 5.0
    assert not cv.state.stale and not cv.downloads["svg"].disabled


def test_pdf_button_only_with_chromium(page, monkeypatch, tmp_path):
    from app.compare_view import CompareView

    monkeypatch.setenv("NETSTRETCH_CHROMIUM", "")
    monkeypatch.setenv("PATH", str(tmp_path))  # no chromium anywhere on this PATH
    view = CompareView(page.ns_session.compare)
    assert not view.downloads["pdf"].visible and view.downloads["html"].visible


@pytest.mark.ui
def test_pdf_download_is_a_pdf(page, chromium_path, monkeypatch):
    import asyncio

    monkeypatch.setenv("NETSTRETCH_CHROMIUM", chromium_path)
    cv = page.ns_compare
    assert cv.downloads["pdf"].callback == cv._pdf_file  # the button prints off the event loop
    data = asyncio.run(cv._pdf_file()).getvalue()
    assert data.startswith(b"%PDF")


def test_pdf_download_while_stale_is_a_sentence(page):
    import asyncio

    cv = page.ns_compare
    cv.state.service_C += 5.0
    try:
        assert asyncio.run(cv._pdf_file()) is None
        assert "out of date" in cv.messages.texts()["compare-download"]
    finally:
        cv.state.service_C -= 5.0


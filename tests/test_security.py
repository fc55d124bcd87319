"""Issue #19: a server a lab can trust.  Every hostile input is BUILT IN THE TEST (names holding markup,
decompression bombs, oversized text, formula-leading cells, a second batch run, foreign hosts, wrong
passwords, hand-edited project files, absurd command-line values) and each test fails on the code before
the fix.

Sources: the HTML escaping rules are the WHATWG HTML standard's (a `<` in text starts a tag); the
formula-injection guard is the OWASP "CSV Injection" advice (cells starting with = + - @ tab CR);
DNS rebinding protection by a Host allowlist is common practice (RFC 7230 §5.4 defines Host); the
absolute zero of temperature (0 K) and SI prefixes are from scipy.constants.
"""

from __future__ import annotations

import io
import re
import subprocess
import sys
import time
import zipfile
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.constants import R, zero_Celsius

ROOT = Path(__file__).resolve().parent.parent
HOSTILE = "<img src=x onerror=alert(1)>"
#: what a live tag looks like in markup; escaped text reads "&lt;img"
LIVE = re.compile(r"<img\b|<script\b|onerror=alert\(1\)>(?!&)", re.I)


def _live(text: str) -> bool:
    return "<img" in text.lower() or "<script" in text.lower()


def hostile_csv(name: str = HOSTILE, nu: float = 120.0) -> bytes:
    """Two specimens of an affine network, P = νRT(λ − λ⁻²) (Treloar 1975, ch. 4; R from scipy.constants),
    whose compound and specimen names hold markup."""
    T = zero_Celsius + 23
    lam = np.linspace(1.0, 2.5, 15)
    lines = [f"# compound: {name}", "# temperature: 23 °C", "specimen,stretch,stress (MPa)"]
    for k, scale in enumerate((1.0, 1.03)):
        P = scale * nu * R * T * (lam - lam**-2) / 1e6
        cell = '"' + f"{name} {k}".replace('"', '""') + '"'  # quoted as CSV (RFC 4180)
        lines += [f"{cell},{a:.6f},{b:.8f}" for a, b in zip(lam, P, strict=True)]
    return ("\n".join(lines) + "\n").encode("utf-8")


# ----- 1. escaping at every sink --------------------------------------------------------------------------------
def test_hostile_names_are_text_in_every_view_and_the_report():
    pn = pytest.importorskip("panel")
    from app.main import create_app

    page = create_app(load_samples=False)
    dv, cmp = page.ns_data, page.ns_compare
    dv._on_upload(SimpleNamespace(new={f"{HOSTILE}.csv": hostile_csv()}))
    assert HOSTILE in cmp.state.data.compound_names(), "the hostile compound did not load"
    dv.fit.show_figures()
    cmp.open_specimens()  # the specimen card's plots are drawn only when it is opened
    cmp._run()
    design = page.ns_design  # a typed target holding markup, then a run: the refusal names it as text
    design.new_target.value = f"M100={HOSTILE}"
    design._add_clicked()
    design.compute()
    # every HTML sink of the page: panes' markup, alerts/markdown (rendered as HTML), choosers whose labels
    # the browser renders as HTML (the multi-choice widget)
    for pane in page.select(lambda o: isinstance(o, (pn.pane.HTML, pn.pane.Markdown, pn.pane.Alert))):
        text = str(pane.object or "")
        assert not _live(text), f"{type(pane).__name__} {pane.css_classes}: {text[:300]}"
    for w in page.select(pn.widgets.MultiChoice):
        labels = list(w.options) if isinstance(w.options, dict) else [str(o) for o in w.options]
        assert not any(_live(lbl) for lbl in labels), f"multi-choice labels are markup: {labels}"
        assert HOSTILE in (list(w.options.values()) if isinstance(w.options, dict) else w.options) or \
            "ns-cmp-chosen" not in w.css_classes  # the value stays the name itself
    # the name travels inside a saved project to the next colleague's page: shown as text there too
    other = create_app(load_samples=False)
    other.ns_project._open(page.ns_session.to_project())
    assert HOSTILE in other.ns_compare.state.data.compound_names()
    for w in other.select(pn.widgets.MultiChoice):
        labels = list(w.options) if isinstance(w.options, dict) else [str(o) for o in w.options]
        assert not any(_live(lbl) for lbl in labels), f"reopened project: multi-choice labels are markup: {labels}"
    for pane in other.select(lambda o: isinstance(o, (pn.pane.HTML, pn.pane.Markdown, pn.pane.Alert))):
        assert not _live(str(pane.object or "")), str(pane.object)[:300]
    rep = cmp.state.report()
    report_html = rep.to_html()
    assert HOSTILE.replace("<", "&lt;").replace(">", "&gt;") in report_html  # the name is there, as text
    assert not _live(report_html)
    # the login page's error text (from the URL) is escaped by its template
    import jinja2

    from app.server import LOGIN_TEMPLATE

    out = jinja2.Environment().from_string(LOGIN_TEMPLATE.read_text("utf-8")).render(
        login_endpoint="/login", errormessage=HOSTILE)
    assert not _live(out) and "&lt;img" in out


# ----- 2. one bounded reading layer ------------------------------------------------------------------------------
#: run the command line in a child and report its peak resident memory (kB, Linux ru_maxrss)
_CHILD = ("import resource, sys\nfrom network_models.cli import main\nrc = main(sys.argv[1:])\n"
          "print('MAXRSS', resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, file=sys.stderr)\nsys.exit(rc)")


def _cli_refuses(*argv, limit_text: str, name: str):
    """The command line refuses in one sentence naming the file and the limit, exit 2, within the issue's
    budget (20 s, 700 MB peak memory)."""
    r = subprocess.run([sys.executable, "-c", _CHILD, *map(str, argv)], cwd=ROOT, capture_output=True, text=True,
                       timeout=20)
    err = [ln for ln in r.stderr.splitlines() if not ln.startswith("MAXRSS")]
    rss_mb = int(next(ln for ln in r.stderr.splitlines() if ln.startswith("MAXRSS")).split()[1]) / 1024
    assert r.returncode == 2, r.stderr[-2000:]
    assert len(err) == 1 and name in err[0] and limit_text in err[0], err
    assert "Traceback" not in r.stderr
    assert rss_mb <= 700, f"peak memory {rss_mb:.0f} MB"


def _bomb_xlsx(path: Path, inflated: int):
    """A workbook whose one sheet inflates to ``inflated`` bytes (written in steps; a few MB on disk)."""
    row = b'<row><c t="inlineStr"><is><t>padding padding padding</t></is></c></row>'
    chunk = row * (1_000_000 // len(row))
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as z:
        z.writestr("[Content_Types].xml", '<?xml version="1.0"?><Types xmlns="http://schemas.openxmlformats.org/'
                   'package/2006/content-types"/>')
        z.writestr("xl/workbook.xml", '<?xml version="1.0"?><workbook/>')
        with z.open("xl/worksheets/sheet1.xml", "w", force_zip64=True) as fh:
            fh.write(b'<?xml version="1.0"?><worksheet><sheetData>')
            for _ in range(inflated // len(chunk)):
                fh.write(chunk)
            fh.write(b"</sheetData></worksheet>")


@pytest.mark.slow
def test_workbook_bomb_refused_by_the_command_line(tmp_path):
    f = tmp_path / "bomb.xlsx"
    _bomb_xlsx(f, 600_000_000)
    assert f.stat().st_size < 20_000_000  # it passes the file-size limit: the inflated size must be counted
    _cli_refuses("fit", f, limit_text="50 MB", name="bomb.xlsx")


def test_one_line_csv_with_millions_of_columns_refused(tmp_path):
    f = tmp_path / "wide.csv"
    f.write_bytes(b"stretch,stress (MPa)\n" + b"1.0," * 4_500_000 + b"1.0\n")  # 18 MB, 4.5 million columns
    _cli_refuses("fit", f, limit_text="1,000 columns", name="wide.csv")


def test_wide_workbook_refused_by_its_shape():
    from openpyxl import Workbook

    from network_models.labfiles.tables import load_table
    from network_models.limits import LimitError

    wb = Workbook()
    ws = wb.active
    ws.append(["stretch"] + [f"stress {i} (MPa)" for i in range(1500)])
    ws.append([1.0] * 1501)
    buf = io.BytesIO()
    wb.save(buf)
    with pytest.raises(LimitError, match="1,000 columns"):
        load_table(buf.getvalue(), "wide.xlsx")


def _read_project():
    if (ROOT / "network_models" / "project.py").exists():  # the project file moved into the core
        from network_models.project import ProjectFileError, read_project
    else:
        from app.project_file import ProjectFileError, read_project
    return ProjectFileError, read_project


def _manifest(extra: str = "", version: str = "1", options: str = '{ mode = "uniaxial" }') -> str:
    return (f'[project]\nformat = "netstretch-project"\nversion = {version}\ntitle = "t"\n{extra}\n'
            f'[[input]]\nfile = "inputs/a.csv"\nname = "a.csv"\ncompound = "A"\nselected = true\n'
            f"options = {options}\n")


def _understated_zip(member_bytes: int) -> bytes:
    """A project zip whose input member declares 1,000 bytes but inflates to ``member_bytes``."""
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as z:
        z.writestr("project.toml", _manifest())
        with z.open("inputs/a.csv", "w") as fh:
            block = b"0" * 1_000_000
            for _ in range(member_bytes // len(block)):
                fh.write(block)
    data = bytearray(buf.getvalue())
    name = b"inputs/a.csv"
    # local file header: uncompressed size at offset 22; central directory entry: at offset 24 (APPNOTE 4.3.7/12)
    for sig, size_at, name_at in ((b"PK\x03\x04", 22, 30), (b"PK\x01\x02", 24, 46)):
        i = data.find(sig)
        while i >= 0:
            if data[i + name_at:i + name_at + len(name)] == name:
                data[i + size_at:i + size_at + 4] = (1000).to_bytes(4, "little")
            i = data.find(sig, i + 4)
    return bytes(data)


def test_project_member_that_understates_its_size_is_refused_in_bounded_memory():
    import tracemalloc

    error, read_project = _read_project()
    data = _understated_zip(120_000_000)
    tracemalloc.start()
    try:
        with pytest.raises(error) as exc:
            read_project(data)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert "inputs/a.csv" in str(exc.value) and "declared size" in str(exc.value)
    assert peak < 30_000_000, f"{peak / 1e6:.0f} MB held while refusing a 120 MB member"  # inflated in steps


def test_huge_project_toml_in_a_small_zip_is_refused():
    error, read_project = _read_project()
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as z, z.open("project.toml", "w") as fh:
        fh.write(b'[project\n')
        for _ in range(60):
            fh.write(b"a" * 1_000_000)
    assert len(buf.getvalue()) < 1_000_000
    with pytest.raises(error) as exc:
        read_project(buf.getvalue())
    assert "project.toml" in str(exc.value) and "1 MB" in str(exc.value)


def test_workbook_members_counted_while_inflating(tmp_path):
    """In process: the reader refuses a workbook whose sheet inflates past 50 MB before any library reads it."""
    from network_models.labfiles.tables import load_table
    from network_models.limits import LimitError

    f = tmp_path / "b.xlsx"
    _bomb_xlsx(f, 60_000_000)
    with pytest.raises(LimitError, match="50 MB"):
        load_table(f.read_bytes(), "b.xlsx")


# ----- 8. command line: negative values, output suffixes, impossible values --------------------------------------
def _cli(*argv):
    from network_models.cli import main

    return main([str(a) for a in argv])


def test_negative_value_after_an_option_is_a_value(capsys):
    # a cold-test temperature: -20 °C = 253.15 K (scipy.constants.zero_Celsius)
    rc = _cli("swell", "--dry", "1g", "--swollen", "3g", "--temperature", "-20C", "--json")
    out = capsys.readouterr()
    assert rc == 0, out.err
    import json

    doc = json.loads(out.out)
    temps = [v for k, v in _flatten(doc) if "temperature" in k and isinstance(v, (int, float))]
    assert any(abs(t - (zero_Celsius - 20)) < 1e-6 for t in temps), temps


def _flatten(d, prefix=""):
    if isinstance(d, dict):
        for k, v in d.items():
            yield from _flatten(v, f"{prefix}.{k}")
    elif isinstance(d, list):
        for i, v in enumerate(d):
            yield from _flatten(v, f"{prefix}[{i}]")
    else:
        yield prefix, d


def test_report_output_with_another_suffix_is_refused(tmp_path, capsys):
    out = tmp_path / "r.txt"
    rc = _cli("report", "--compound", f"A={ROOT / 'sample_sets' / 'QM-S1_uniaxial.csv'}", "-o", out)
    err = capsys.readouterr().err
    assert rc == 2 and ".html" in err and "r.txt" in err, err
    assert not any(tmp_path.iterdir()), "nothing is written"


@pytest.mark.parametrize("argv, words", [
    (("swell", "--dry", "1g", "--swollen", "3g", "--temperature=-300C"), "absolute zero"),  # below 0 K
    (("crosslinks", "--modulus", "0.5MPa", "--mn", "1g/mol"), "repeat unit"),  # NR repeat unit C5H8 ≈ 68 g/mol
    (("crosslinks", "--modulus", "1e300MPa"), "10 GPa"),
    (("thermo", ROOT / "sample_sets" / "QM-S2_force_temperature.csv", "--stretch", "1e9"), "100"),
])
def test_impossible_values_refused_in_one_sentence(argv, words, capsys):
    rc = _cli(*argv)
    err = capsys.readouterr().err.strip()
    assert rc == 2 and words in err and len(err.splitlines()) == 1, err


@pytest.mark.parametrize("option", ["--profile", "--polymers"])
def test_empty_table_files_refused(option, tmp_path, capsys):
    empty = tmp_path / "empty.toml"
    empty.write_text("", "utf-8")
    argv = ("fit", ROOT / "sample_sets" / "QM-S1_uniaxial.csv", option, empty)
    rc = _cli(*argv)
    err = capsys.readouterr().err.strip()
    assert rc == 2 and "empty" in err and len(err.splitlines()) == 1, err


# ----- 3. formula injection: text cells written as text ---------------------------------------------------------
FORMULA_NAMES = ["=HYPERLINK(\"http://x.example\",\"a\")", "@SUM(1+1)", "+1+cmd", "-2+3", "\tTAB", "\rCR"]


def _formula_lab_file(tmp_path, name):
    f = tmp_path / "trial.csv"
    f.write_bytes(hostile_csv(name))
    return f


def test_report_csv_and_xlsx_hold_no_formula(tmp_path, capsys):
    import csv

    from openpyxl import load_workbook

    name = FORMULA_NAMES[0]  # the specimens' names (a compound name cannot hold '=' on the command line)
    f = _formula_lab_file(tmp_path, name)
    out = tmp_path / "r.html"
    rc = _cli("report", "--compound", f"@SUM(1+1)={f}", "--compound", f"+1+cmd={f}", "-o", out)
    assert rc == 0, capsys.readouterr().err
    rows = list(csv.reader(io.StringIO(out.with_suffix(".csv").read_text("utf-8"))))
    cells = [c for r in rows for c in r]
    assert not any(c.startswith(("=", "+", "@", "\t", "\r")) for c in cells)
    assert not any(c.startswith("-") and not _number(c) for c in cells)
    assert any(c.startswith("'" + name) for c in cells)  # the guard: a leading apostrophe, the name kept
    wb = load_workbook(out.with_suffix(".xlsx"))
    ws = wb.active
    formulas = [c.coordinate for r in ws.iter_rows() for c in r if c.data_type == "f"]
    assert formulas == [], f"{len(formulas)} formula cells"
    texts = [c.value for r in ws.iter_rows() for c in r if isinstance(c.value, str)]
    assert any(t.startswith(name) for t in texts) and "@SUM(1+1)" in texts  # the names, without the guard
    numbers = [c.value for r in ws.iter_rows() for c in r if isinstance(c.value, (int, float))]
    assert numbers, "numbers stay numbers"
    # the project's reader of that CSV strips the guard again
    from network_models.report.tables import read_csv

    assert {"@SUM(1+1)", "+1+cmd"} <= {r["compound"] for r in read_csv(out.with_suffix(".csv"))}


def _number(text):
    try:
        float(text)
    except ValueError:
        return False
    return True


def test_batch_output_guards_text_cells_and_resume_strips_the_guard(tmp_path):
    import csv

    from network_models.batch import read_results, run_batch

    folder = tmp_path / "in"
    folder.mkdir()
    for i, name in enumerate(FORMULA_NAMES[:4]):
        (folder / f"t{i}.csv").write_bytes(hostile_csv(name))
    out = tmp_path / "res.csv"
    run_batch([folder], model="neo-hookean", output=out, progress=False)
    rows = list(csv.DictReader(out.open(encoding="utf-8", newline="")))
    for r in rows:
        for k, v in r.items():
            assert not (v and v[0] in "=+@\t\r") and not (v.startswith("-") and not _number(v)), (k, v)
    assert {r["compound"] for r in read_results(out)} == set(FORMULA_NAMES[:4])  # resume reads the names back
    first = out.read_bytes()
    run_batch([folder], model="neo-hookean", output=out, progress=False)  # a resume: nothing new, same file
    assert out.read_bytes() == first


# ----- 4. one batch run per output ------------------------------------------------------------------------------------
def test_second_batch_run_on_the_same_output_is_refused(tmp_path):
    from network_models.batch import run_batch
    from network_models.errors import UserError

    folder = tmp_path / "in"
    folder.mkdir()
    for i in range(40):
        (folder / f"t{i:02d}.csv").write_bytes(hostile_csv(f"C{i}", nu=100 + i))
    out = tmp_path / "res.csv"
    code = ("import sys; from network_models.batch import run_batch; "
            f"run_batch([{str(folder)!r}], model='eight-chain', output={str(out)!r}, progress=False)")
    first = subprocess.Popen([sys.executable, "-c", code], cwd=ROOT)
    try:
        import time

        t0 = time.monotonic()
        while not (out.exists() and out.stat().st_size) and time.monotonic() - t0 < 60:
            time.sleep(0.05)
        assert first.poll() is None, "the first run ended before the second started; give it more files"
        with pytest.raises(UserError) as exc:
            run_batch([folder], model="eight-chain", output=out, progress=False)
        assert f"process {first.pid}" in str(exc.value) and "res.csv" in str(exc.value)
    finally:
        first.wait(timeout=120)
    assert first.returncode == 0
    import csv

    rows = list(csv.DictReader(out.open(encoding="utf-8", newline="")))
    keys = [(r["file"], r["curve"]) for r in rows]
    assert len(keys) == len(set(keys)) == 80  # 40 files × 2 specimens, no duplicates


# ----- 6./7. served: hosts, sign-in, cookies, autoload.js ----------------------------------------------------------
def _raw_http(url: str, request: str, headers_only: bool = False) -> bytes:
    """One request as typed (any Host header); the answer until the server closes (or its headers)."""
    import socket

    host = url.split("//", 1)[1].rstrip("/")
    h, port = host.rsplit(":", 1)
    with socket.create_connection((h, int(port)), timeout=120) as sock:
        sock.sendall(request.encode("latin-1"))
        out = b""
        while chunk := sock.recv(65536):
            out += chunk
            if headers_only and b"\r\n\r\n" in out:
                break
        return out


def _status(resp: bytes) -> int:
    return int(resp.split(b" ", 2)[1])


@pytest.fixture(scope="module")
def served_with_password():
    import os

    from app import server as srv
    from benchmarks import bench_server

    before = os.environ.get(srv.PASSWORD_ENV)
    debug = os.environ.get("NETSTRETCH_DEBUG")
    os.environ[srv.PASSWORD_ENV] = "lab-pass-phrase"
    os.environ["NETSTRETCH_DEBUG"] = "1"  # the server logs where it reads uploads

    def restore(key, value):
        if value is None:
            os.environ.pop(key, None)
        else:
            os.environ[key] = value

    try:
        with bench_server.served() as (proc, url, log_path):
            restore("NETSTRETCH_DEBUG", debug)  # the server has its copy; the tests' own process does not
            yield url, log_path
    finally:
        restore("NETSTRETCH_DEBUG", debug)
        if before is None:
            os.environ.pop(srv.PASSWORD_ENV, None)
        else:
            os.environ[srv.PASSWORD_ENV] = before


@pytest.mark.slow
def test_foreign_host_refused_even_with_matching_origin(served_with_password):
    """DNS rebinding: a foreign name resolving to this machine sends Host and Origin both naming it."""
    url, _log = served_with_password
    port = url.rstrip("/").rsplit(":", 1)[1]
    evil = f"rebind.example:{port}"
    page = _raw_http(url, f"GET /login HTTP/1.1\r\nHost: {evil}\r\nConnection: close\r\n\r\n")
    assert _status(page) == 403
    ws = _raw_http(url, f"GET /ws HTTP/1.1\r\nHost: {evil}\r\nOrigin: http://{evil}\r\nConnection: Upgrade\r\n"
                        "Upgrade: websocket\r\nSec-WebSocket-Version: 13\r\n"
                        "Sec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==\r\n\r\n", headers_only=True)
    assert _status(ws) == 403
    own = _raw_http(url, f"GET /login HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\nConnection: close\r\n\r\n")
    assert _status(own) == 200


@pytest.mark.slow
def test_failed_logins_logged_and_throttled_and_cookies_flagged(served_with_password):
    import time
    import urllib.parse

    url, log_path = served_with_password
    port = url.rstrip("/").rsplit(":", 1)[1]

    def post(password, extra=""):
        body = urllib.parse.urlencode({"username": "lab", "password": password})
        t0 = time.monotonic()
        r = _raw_http(url, f"POST /login HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\nConnection: close\r\n{extra}"
                           "Content-Type: application/x-www-form-urlencoded\r\n"
                           f"Content-Length: {len(body)}\r\n\r\n{body}")
        return r, time.monotonic() - t0

    waits = [post(f"wrong-{i}")[1] for i in range(5)]
    # the 5th failure in a row waits at least 0.5 · 2³ = 4 s (0.5 s doubling per failure)
    assert waits[-1] >= 3.5, waits
    log_text = log_path.read_text("utf-8", errors="replace")
    assert log_text.count("failed sign-in") >= 5 and "127.0.0.1" in log_text
    ok, _ = post("lab-pass-phrase")
    head = ok.split(b"\r\n\r\n", 1)[0].decode("latin-1")
    cookies = [ln for ln in head.split("\r\n") if ln.lower().startswith("set-cookie: user=")]
    assert cookies and all("samesite=lax" in c.lower() and "httponly" in c.lower() for c in cookies), head
    assert not any("secure" in c.lower().replace("set-cookie: user=", "").split(";", 1)[1] for c in cookies)
    # behind an HTTPS proxy (it says so with X-Forwarded-Proto): the cookies are marked Secure
    ok, _ = post("lab-pass-phrase", "X-Forwarded-Proto: https\r\n")
    head = ok.split(b"\r\n\r\n", 1)[0].decode("latin-1")
    cookies = [ln for ln in head.split("\r\n") if ln.lower().startswith("set-cookie: user=")]
    assert cookies and all("; secure" in c.lower() for c in cookies), head
    assert "Traceback" not in log_path.read_text("utf-8", errors="replace")


@pytest.mark.slow
def test_logout_page_has_nothing_remote_and_autoload_bad_argument_logs_no_traceback(served_with_password):
    url, log_path = served_with_password
    port = url.rstrip("/").rsplit(":", 1)[1]
    page = _raw_http(url, f"GET /logout HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\nConnection: close\r\n\r\n")
    body = page.split(b"\r\n\r\n", 1)[1].decode("utf-8", errors="replace")
    assert _status(page) == 200 and "http://" not in body and "https://" not in body, body[:500]
    import urllib.parse

    body = urllib.parse.urlencode({"username": "lab", "password": "lab-pass-phrase"})
    signed = _raw_http(url, f"POST /login HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\nConnection: close\r\n"
                            "Content-Type: application/x-www-form-urlencoded\r\n"
                            f"Content-Length: {len(body)}\r\n\r\n{body}", headers_only=True).decode("latin-1")
    cookie = "; ".join(ln.split(":", 1)[1].split(";")[0].strip() for ln in signed.split("\r\n")
                       if ln.lower().startswith("set-cookie:"))
    for query in ("bokeh-autoload-element=%3Cimg%3E&bokeh-absolute-url=javascript:1", "bokeh-autoload-element=",
                  "bokeh-app-path=/nowhere&bokeh-autoload-element=x"):
        for extra in ("", f"Cookie: {cookie}\r\n"):  # not signed in, and signed in
            _raw_http(url, f"GET /autoload.js?{query} HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\n{extra}"
                           "Connection: close\r\n\r\n")
    time.sleep(0.5)
    assert "Traceback" not in log_path.read_text("utf-8", errors="replace")


# ----- 5. every asset from this server, in every state (browser) -----------------------------------------------
#: JavaScript: how many <img src="x"> elements exist, shadow roots included (an injected tag that went live)
INJECTED_IMAGES_JS = """() => { let n = 0;
  const walk = (r) => { n += r.querySelectorAll('img[src="x"]').length;
    for (const e of r.querySelectorAll('*')) if (e.shadowRoot) walk(e.shadowRoot); };
  walk(document); return n; }"""


@pytest.mark.ui
@pytest.mark.slow
def test_every_request_goes_to_this_server_and_no_markup_runs(chromium_browser, served_with_password):
    """Sign in, upload a file whose names hold markup, fit, compare, design, sign out: every request the page
    makes goes to this server (no CDN, no remote image), and no injected script runs (no dialog opens, no
    <img src=x> appears)."""
    import urllib.parse

    from _browser import open_tab, wait_text

    url, log_path = served_with_password
    own = urllib.parse.urlsplit(url).netloc
    ctx = chromium_browser.new_context(viewport={"width": 1366, "height": 768})
    page = ctx.new_page()
    hosts, dialogs = [], []
    page.on("request", lambda r: hosts.append((urllib.parse.urlsplit(r.url).netloc, r.url)))
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    try:
        page.goto(url)
        page.fill("#username", "lab")
        page.fill("#password", "lab-pass-phrase")
        page.click("button[type=submit]")
        page.wait_for_selector(".ns-stress-plot canvas", timeout=90000)
        open_tab(page, "Test data & fits", ".ns-upload input[type=file]")
        page.locator("input[type=file]").last.set_input_files(  # the data upload box: the page's last file input
            files=[{"name": "TRIAL-9_uniaxial.csv", "mimeType": "text/csv", "buffer": hostile_csv()}])
        wait_text(page, ".ns-fit-summary", "TRIAL-9", timeout=90000)
        open_tab(page, "Compare", ".ns-cmp-run")
        page.locator(".ns-cmp-run button").first.click()
        wait_text(page, ".ns-cmp-chosen", "<img src=x", timeout=90000)  # the name shown as text
        open_tab(page, "Design", ".ns-design-add")
        page.locator(".ns-design-add button").first.click()
        page.wait_for_timeout(1500)
        found = page.evaluate(INJECTED_IMAGES_JS)
        page.goto(url.rstrip("/") + "/logout")
        page.wait_for_selector("text=signed out", timeout=30000)
    finally:
        ctx.close()
    foreign = sorted({u for h, u in hosts if h and h != own})
    assert foreign == [], foreign
    assert dialogs == [] and found == 0
    # the upload was read in a worker thread, not on the server's event loop (the main thread)
    reads = re.findall(r"reading upload\(s\) TRIAL-9_uniaxial\.csv in thread (\S+)", log_path.read_text("utf-8"))
    assert reads and "MainThread" not in reads, reads


# ----- 7. project files: unknown fields, wrong types, too large ----------------------------------------------------
def _project_zip(manifest: str) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("project.toml", manifest)
        z.writestr("inputs/a.csv", hostile_csv("A"))
    return buf.getvalue()


@pytest.fixture
def project_bar():
    pytest.importorskip("panel")
    from app.main import create_app

    return create_app(load_samples=False).ns_project


def test_project_unknown_fields_ignored_with_a_notice(project_bar):
    bar = project_bar
    data = _project_zip(_manifest(extra="colour = \"teal\"", options='{ mode = "uniaxial", speed = 3 }'))
    bar._open(data)
    text = bar.messages.texts().get("project", "")
    assert "Opened" in text and "colour" in text and "speed" in text and "ignored" in text, text
    assert [f.name for f in bar.session.data.files] == ["a.csv"]


@pytest.mark.parametrize("manifest, field", [
    (_manifest(version='"two"'), "version"),
    (_manifest(options='"fast"'), "options"),
    (_manifest(extra="title2 = 1").replace('title = "t"', "title = 5"), "title"),
    (_manifest() + '[[compound]]\nname = "A"\n[compound.recipe]\nNR = "lots"\n', "recipe NR"),
])
def test_project_wrong_types_refused_naming_the_field(project_bar, manifest, field):
    bar = project_bar
    bar._open(_project_zip(manifest))
    text = bar.messages.texts().get("project", "")
    assert field in text and "must be" in text, text
    assert "unexpected" not in text and "TypeError" not in text and "Traceback" not in text


def test_too_large_project_answered_in_the_page_and_the_log(project_bar, caplog):
    import logging

    from app.project_view import MAX_PROJECT_BYTES

    bar = project_bar
    big = b"PK" + b"\0" * (MAX_PROJECT_BYTES + 10)
    with caplog.at_level(logging.WARNING, logger="netstretch.app"):
        bar._open({"huge.nsproj.zip": big})
    text = bar.messages.texts().get("project", "")
    assert "huge.nsproj.zip" in text and "MB limit" in text, text
    assert any("huge.nsproj.zip" in r.getMessage() and "refused" in r.getMessage() for r in caplog.records)
    assert "MB" in str(getattr(bar.open, "max_file_size", "") or "20MB")  # refused in the browser before sending


@pytest.mark.slow
def test_project_bombs_refused_by_the_command_line(tmp_path):
    """`--project` reads through the same bounded layer: exit 2, one sentence naming the file and the limit."""
    f = tmp_path / "understated.nsproj.zip"
    f.write_bytes(_understated_zip(120_000_000))
    _cli_refuses("compare", "--project", f, limit_text="declared size", name="understated.nsproj.zip")
    g = tmp_path / "manifest.nsproj.zip"
    with zipfile.ZipFile(g, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as z, z.open("project.toml", "w") as fh:
        for _ in range(60):
            fh.write(b"# " + b"a" * 999_998)
    _cli_refuses("compare", "--project", g, limit_text="1 MB", name="manifest.nsproj.zip")

"""A server a lab can leave running: origins never '*', a password through Panel's basic auth, sample fits
shared per process, a session's page freed when it ends, memory that stops growing (soak), escaped names.

These check our own serving rules (common practice for a shared web app: list allowed origins, never a
wildcard; never render user-supplied names as HTML); the memory plateau uses the server's RSS from /proc.
"""

from __future__ import annotations

import gc
import json
import os
import socket
import urllib.request
import weakref

import pytest

from app import server, shared
from benchmarks import bench_server


# ----- origins and password -----------------------------------------------------------------------------------
def test_origins_never_any():
    assert server.websocket_origins("localhost", 5006) == ["localhost:5006", "127.0.0.1:5006"]
    assert server.websocket_origins("192.168.7.20", 5006) == ["192.168.7.20:5006"]
    shared_any = server.websocket_origins("0.0.0.0", 5006)
    assert "*" not in shared_any and all(o.endswith(":5006") for o in shared_any)
    assert server.websocket_origins("0.0.0.0", 5006, ["http://lab-pc-07:5006/", "lab-pc-07:5006", "lab"]) == [
        "lab-pc-07:5006", "lab"]
    for bad in ("*", "lab/*", "a b"):
        with pytest.raises(server.ServeError, match="allow-origin"):
            server.websocket_origins("0.0.0.0", 5006, [bad])


def test_password_sources(tmp_path):
    f = tmp_path / "pw.txt"
    f.write_text("correct horse battery\nsecond line ignored\n", encoding="utf-8")
    assert server.basic_auth_setting(f, env={}) == "correct horse battery"
    users = tmp_path / "users.json"
    users.write_text(json.dumps({"ana": "one long phrase", "ben": "another"}), encoding="utf-8")
    assert server.basic_auth_setting(users, env={}) == str(users.resolve())  # Panel reads the JSON file itself
    assert server.basic_auth_setting(None, env={server.PASSWORD_ENV: "from-env"}) == "from-env"
    assert server.basic_auth_setting(None, env={}) is None
    (tmp_path / "empty.txt").write_text("\n", encoding="utf-8")
    for bad, msg in ((tmp_path / "empty.txt", "empty"), (tmp_path / "missing.txt", "cannot read")):
        with pytest.raises(server.ServeError, match=msg):
            server.basic_auth_setting(bad, env={})
    (tmp_path / "bad.json").write_text('{"ana": ""}', encoding="utf-8")
    with pytest.raises(server.ServeError, match="map user names"):
        server.basic_auth_setting(tmp_path / "bad.json", env={})


def test_serve_refuses_wildcard_origin(capsys):
    from network_models.cli import main

    assert main(["serve", "--address", "0.0.0.0", "--allow-origin", "*"]) == 2
    assert "wildcards" in capsys.readouterr().err


# ----- sample fits shared by sessions -----------------------------------------------------------------------------
def test_sample_fits_made_once_and_read_only():
    from app.data_state import DataState

    shared.clear()
    a, b = DataState(), DataState()
    a.load_samples()
    a.run_fit()
    n = shared.stats()
    b.load_samples()
    b.run_fit()
    assert shared.stats() == n and n["fits"] >= 1  # the second session made no new fit
    assert a.results and all(b.results[k] is a.results[k] for k in a.results)  # the very same result objects
    assert a.files[0].curves[0] is b.files[0].curves[0]
    with pytest.raises(ValueError):
        a.files[0].curves[0].stress[0] = 0.0  # shared arrays are read-only
    # an upload is never shared: its fit is made for that session alone
    c = DataState()
    up = c.add_upload("mine.csv", b"stretch,stress (MPa)\n1.0,0\n1.5,0.3\n2.0,0.5\n2.5,0.7\n3.0,0.9\n")
    c.accept_uploads([up])
    c.run_fit()
    assert shared.stats()["fits"] == n["fits"]


# ----- a session's page is freed when it ends ------------------------------------------------------------------------
def test_released_page_is_collected():
    from panel.links import Callback

    from app.main import create_app

    page = create_app()
    state_ref = weakref.ref(page.ns_state)
    ids = {id(o) for o in page.select()}
    assert any(id(k) in ids for k in list(Callback.registry.keys()))  # Panel registered the page's JS links
    server._release(page)
    del page
    gc.collect()
    assert not any(id(k) in ids for k in list(Callback.registry.keys()))
    assert state_ref() is None, "the session's NetworkState outlived its page"


@pytest.mark.parametrize("open_tabs", [False, True])
def test_released_page_frees_its_views(open_tabs):
    """Every view of a session goes with its page, whether its hidden tabs were never opened (their figures
    and widgets not yet built) or all opened (built on first view)."""
    import panel as pn

    from app.main import create_app

    page = create_app()
    if open_tabs:
        tabs = page.select(pn.Tabs)[0]
        for i in range(len(tabs)):
            tabs.active = i
        del tabs
        assert page.ns_data.fit._figs is not None and "mod_nu" in page.ns_explorer._lazy
        page.ns_compare.open_specimens()  # Compare's specimen card, opened: its HoloViews plots drawn
        extra = [page.ns_compare.specimen_views]
    else:
        assert page.ns_data.fit._figs is None and not page.ns_explorer._lazy  # hidden tabs cost nothing yet
        assert page.ns_compare._specimen_views is None
        extra = []
    refs = [weakref.ref(o) for o in (page.ns_explorer, page.ns_data.fit, page.ns_data, page.ns_session, *extra)]
    del extra
    server._release(page)
    del page
    gc.collect()
    assert [r() is None for r in refs] == [True] * len(refs)


def test_names_in_messages_are_escaped():
    from app.messages import Messages, guarded

    m = Messages()

    def boom():
        raise ValueError("<img src=x onerror=alert(1)>.csv: the file is empty")

    guarded(m, "file", "Upload")(boom)()
    text = m.texts()["file"]
    assert "<img" not in text and "&lt;img" in text


# ----- served: soak, password, origin ------------------------------------------------------------------------------
def _ws_status(url: str, origin: str) -> int:
    """Status of a websocket handshake on the app's /ws sent from a page of ``origin``."""
    host = url.split("//", 1)[1].rstrip("/")
    h, port = host.rsplit(":", 1)
    with socket.create_connection((h, int(port)), timeout=60) as sock:
        sock.sendall((f"GET /ws HTTP/1.1\r\nHost: {host}\r\nOrigin: {origin}\r\nConnection: Upgrade\r\n"
                      "Upgrade: websocket\r\nSec-WebSocket-Version: 13\r\n"
                      "Sec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==\r\n\r\n").encode("ascii"))
        return int(sock.recv(200).split(b" ", 2)[1])


def _refused_from_elsewhere(url):
    """A page served from another host cannot open the app's websocket (origin not listed)."""
    assert _ws_status(url, "http://elsewhere.example:5006") == 403
    assert _ws_status(url, url.rstrip("/")) != 403


@pytest.mark.slow
def test_soak_memory_plateau():
    """Rounds of websocket sessions opened and closed: after the warm-up round the server's memory stays
    flat — at most 1 MiB kept per closed session (before the fix: about 3 MiB each, for ever)."""
    per_round = 3
    with bench_server.served() as (proc, url, log_path):
        bench_server.get_page(url)
        rss = bench_server.soak(proc, url, rounds=5, per_round=per_round)
        _refused_from_elsewhere(url)
        log_text = log_path.read_text("utf-8", errors="replace")
    kept = bench_server.kept_per_session(rss, per_round, warmup=2)  # the allocator settles over ~6 sessions
    assert kept <= 1.0, f"{kept:.2f} MiB kept per closed session; RSS after each round {rss}"
    assert "Traceback" not in log_text and " ERROR" not in log_text, log_text[-2000:]


@pytest.mark.slow
def test_password_when_served():
    env_before = os.environ.get(server.PASSWORD_ENV)
    os.environ[server.PASSWORD_ENV] = "lab-pass-phrase"
    try:
        with bench_server.served() as (_proc, url, _log):
            with urllib.request.urlopen(url, timeout=120) as r:  # redirected to the login page
                page = r.read().decode("utf-8")
                assert "/login" in r.url
            assert 'type="password"' in page and "http://" not in page and "https://" not in page  # no CDN
    finally:
        if env_before is None:
            os.environ.pop(server.PASSWORD_ENV, None)
        else:
            os.environ[server.PASSWORD_ENV] = env_before

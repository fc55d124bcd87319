"""The Library tab (shown only when a results library is configured: ``$NETSTRETCH_LIBRARY``): find past compounds
by design targets, list the studies and open one into this session, draw a quantity's control chart over time,
and save this session's study to the library with the login name of whoever saved it.

Every number and name from the library reaches the page through :func:`app.tables.esc` (data, never markup); the
chart is the core's SVG (:func:`network_models.library.trend_svg`, which escapes its texts itself).
"""

from __future__ import annotations

import getpass

import panel as pn

from network_models.library import export_study, find, import_study, trend, trend_svg
from network_models.library.query import TREND_QUANTITIES, studies

from .messages import Messages, guarded
from .tables import esc, table_html
from .ui import html


def _fmt(v, unit) -> str:
    if v is None:
        return "—"
    return f"{v / 1e6:.4g}" if unit == "Pa" else f"{v:.4g}"


def _raise(exc):
    raise exc


def _login() -> str | None:
    """The name the user logged in with on a shared server; else this machine's user."""
    user = getattr(pn.state, "user", None)
    if user:
        return str(user)
    try:
        return getpass.getuser()
    except (KeyError, OSError):
        return None


class LibraryView(pn.viewable.Viewer):
    def __init__(self, session, db: str | None = None, on_open=None, **params):
        super().__init__(**params)
        self.session = session
        self.db = db
        self.on_open = on_open  # called after a study was opened into the session (e.g. re-run the comparison)
        self.messages = Messages(area="library")
        self.targets = pn.widgets.TextAreaInput(name="Targets (one per line, design syntax)",
                                                value="nu=120..160mol/m3\nlock>=6", height=90, width=320,
                                                css_classes=["ns-lib-targets"])
        self.polymer = pn.widgets.TextInput(name="Polymer (blank: any)", value="", width=140)
        self.search_btn = pn.widgets.Button(name="Find compounds", button_type="primary", width=160,
                                            css_classes=["ns-lib-find"])
        self.matches = html("", css_classes=["ns-lib-matches"])
        self.study_id = pn.widgets.IntInput(name="Study number", value=1, start=1, width=140)
        self.open_btn = pn.widgets.Button(name="Open in this session", width=180, css_classes=["ns-lib-open"])
        self.list_btn = pn.widgets.Button(name="List studies", width=140)
        self.studies = html("", css_classes=["ns-lib-studies"])
        self.prefix = pn.widgets.TextInput(name="Compound key starts with", value="", width=200)
        self.quantity = pn.widgets.Select(name="Quantity", options=list(TREND_QUANTITIES), value="strand_density",
                                          width=180)
        self.basis = pn.widgets.Select(name="Strand-density basis", value="affine-all", width=220,
                                       options={"affine, all of G (never negative)": "affine-all",
                                                "affine, entanglement part removed": "affine-no-entanglement"})
        self.trend_btn = pn.widgets.Button(name="Draw trend", button_type="primary", width=140,
                                           css_classes=["ns-lib-trend"])
        self.chart = html("", css_classes=["ns-lib-chart"])
        self.points = html("", css_classes=["ns-lib-points"])
        self.save_btn = pn.widgets.Button(name="Save this session's study to the library", width=300,
                                          css_classes=["ns-lib-save"])
        # each action: the database work (and for Save the comparison) runs in a worker thread, the page is
        # updated back on the server's event loop; a user error becomes a message beside the form
        self._actions = {
            "search": ("library-find", "Find", self._search_work, self._search_show),
            "list_studies": ("library-list", "List studies", self._list_work, self._list_show),
            "draw_trend": ("library-trend", "Trend", self._trend_work, self._trend_show),
            "save_session": ("library-save", "Save to library", self._save_work, self._save_show),
        }
        self.open_study = guarded(self.messages, "library-open", "Open study")(self.open_study)
        self.search_btn.on_click(self._clicked("search"))
        self.open_btn.on_click(lambda e: self.open_study())
        self.list_btn.on_click(self._clicked("list_studies"))
        self.trend_btn.on_click(self._clicked("draw_trend"))
        self.save_btn.on_click(self._clicked("save_session"))

    def _clicked(self, name):
        key, what, work, show = self._actions[name]

        async def handler(event=None):
            import asyncio

            self.messages.clear(key)
            try:
                args = self._inputs(name)  # widget values read on the event loop
                result = await asyncio.to_thread(work, *args)
            except Exception as exc:  # the same sentence (or the logged fallback) as every guarded action
                guarded(self.messages, key, what)(_raise)(exc)
                return
            guarded(self.messages, key, what)(show)(result)

        return handler

    def _run(self, name):
        """The same action in the caller's thread (scripts, tests): work, then show; None after a message."""
        key, what, work, show = self._actions[name]

        def both():
            result = work(*self._inputs(name))
            show(result)
            return result

        return guarded(self.messages, key, what)(both)()

    def search(self):
        return self._run("search")

    def list_studies(self):
        return self._run("list_studies")

    def draw_trend(self):
        return self._run("draw_trend")

    def save_session(self):
        return self._run("save_session")

    def _inputs(self, name) -> tuple:
        if name == "search":
            return ([x.strip() for x in self.targets.value.splitlines() if x.strip()], self.polymer.value.strip())
        if name == "draw_trend":
            return (self.quantity.value, self.prefix.value.strip(), self.basis.value)
        if name == "save_session":
            return (self.session.to_project(), _login())
        return ()

    # ----- actions: work (any thread) and show (event loop) -------------------------------------------------
    def _search_work(self, lines, polymer):
        return find(lines, self.db, polymer=polymer or None, limit=100)

    def _search_show(self, res):
        rows = []
        for m in res["matches"]:
            row = {"compound": m["compound"], "study": m["study"], "date": m["date"], "model": m["model"]}
            for key, v in m["values"].items():
                u = v["unit"]
                ci = f" [{_fmt(v['ci95'][0], u)}–{_fmt(v['ci95'][1], u)}]" if v["ci95"] else " (n = 1)"
                shown = "MPa" if u == "Pa" else ("" if u == "1" else u)
                row[key] = f"{_fmt(v['value'], u)}{ci}" + (f" {shown}" if shown else "")
            row["specimens"] = "1: scatter unknown" if m["n1"] else "≥ 2"
            rows.append(row)
        texts = ", ".join(t["text"] for t in res["targets"])
        head = f"<p>{res['total']} compound(s) meet {esc(texts)}; nearest first.</p>"
        self.matches.object = head + (table_html(rows, "ns-lib-table") if rows else "<p>No compound matches.</p>")

    def _list_work(self):
        return [{"study": s["study"], "title": s["title"], "kind": s["kind"], "model": s["model"],
                 "compounds": s["compounds"], "saved": s["imported_at"] or "", "by": s["saved_by"] or ""}
                for s in studies(self.db)]

    def _list_show(self, rows):
        self.studies.object = table_html(rows, "ns-lib-table") if rows else "<p>The library holds no study yet.</p>"

    def open_study(self):
        sid = int(self.study_id.value)
        problems = self.session.load_project(export_study(sid, self.db))
        if self.on_open is not None:
            self.on_open()
        text = (f"Opened study {sid} from the library: {len(self.session.data.files)} input file(s); the fits are "
                "recomputed from them." + (" Not restored: " + " · ".join(esc(p) for p in problems)
                                           if problems else ""))
        self.messages.show("library-open", text, "warning" if problems else "success")

    def _trend_work(self, q, prefix, basis):
        tr = trend(q, self.db, compound_prefix=prefix, basis=basis if q == "strand_density" else None)
        return tr, trend_svg(tr)

    def _trend_show(self, result):
        tr, svg = result
        self.chart.object = svg
        rows = [{"date": p["date"], "compound": p["compound"], "value": _fmt(p["value"], tr["unit"]),
                 "95 % interval": (f"{_fmt(p['ci95'][0], tr['unit'])}–{_fmt(p['ci95'][1], tr['unit'])}"
                                   if p["ci95"] else "—"),
                 "control": "OUT OF CONTROL" if p["out_of_control"] else "in control"} for p in tr["points"]]
        lim = ("" if tr["ucl"] is None else
               f"<p>centre {_fmt(tr['centre'], tr['unit'])}, UCL {_fmt(tr['ucl'], tr['unit'])}, LCL "
               f"{_fmt(tr['lcl'], tr['unit'])} — {esc(tr['method'])}; basis: {esc(tr['basis_label'] or tr['basis'])}"
               f"</p>")
        notes = "".join(f"<p class='ns-small'>{esc(n)}</p>" for n in tr["notes"])
        self.points.object = lim + table_html(rows, "ns-lib-table") + notes

    def _save_work(self, data, user):
        return import_study("project", data, self.db, saved_by=user)

    def _save_show(self, res):
        self.messages.show("library-save", esc(res.sentence()).replace("\n", "<br>"),
                           "success" if res.created else "secondary")

    def __panel__(self):
        return pn.Column(
            self.messages,
            html("<div class='ns-side-h'>Find compounds by targets</div>"),
            pn.Row(self.targets, pn.Column(self.polymer, self.search_btn)),
            self.matches,
            html("<div class='ns-side-h'>Studies</div>"),
            pn.Row(self.list_btn, self.study_id, self.open_btn, self.save_btn),
            self.studies,
            html("<div class='ns-side-h'>Trend over time (individuals control chart)</div>"),
            pn.Row(self.prefix, self.quantity, self.basis, self.trend_btn),
            self.chart, self.points,
            sizing_mode="stretch_width", css_classes=["ns-library"], margin=(0, 10))


__all__ = ["LibraryView"]

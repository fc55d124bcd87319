"""Small Panel helpers shared by the views: HTML panes that carry the app's own stylesheet."""

from __future__ import annotations

from pathlib import Path

import panel as pn

CSS = Path(__file__).with_name("style.css").read_text("utf-8")


def html(text: str = "", **kw) -> pn.pane.HTML:
    """An HTML pane with the app stylesheet inside its shadow root (stretching by default)."""
    if "width" not in kw:
        kw.setdefault("sizing_mode", "stretch_width")
    kw.setdefault("stylesheets", [CSS])
    return pn.pane.HTML(text, **kw)


class Deferred:
    """A place on the page whose content is built the first time it is shown (a hidden tab's figures cost a
    new session nothing until the tab is opened).  ``slot`` goes into the layout; ``ensure()`` builds."""

    def __init__(self, build, **kw):
        self._build = build
        kw.setdefault("sizing_mode", "stretch_width")
        self.slot = pn.Column(**kw)

    @property
    def built(self) -> bool:
        return self._build is None

    def ensure(self):
        if self._build is not None:
            build, self._build = self._build, None
            self.slot.objects = list(build())
        return self.slot


def text_labels(widget):
    """Show a chooser's options as text: the multi-choice widget renders its labels as HTML in the browser,
    so each label is the escaped value (a compound named ``<img …>`` reads as that text, never as markup).
    Kept up to date when the options change (e.g. a ``from_param`` link to a parameter's objects)."""
    import html as _html

    def fix(*_):
        opts = widget.options
        values = list(opts.values()) if isinstance(opts, dict) else list(opts)
        safe = {_html.escape(str(v)): v for v in values}
        if not isinstance(opts, dict) or list(opts) != list(safe):
            widget.options = safe

    widget.param.watch(fix, "options")
    fix()
    return widget


def off_the_loop(work, done, seconds: float | None = None):
    """``work()`` in a worker thread, then ``done(result)`` back on the session's event loop: one user's
    file is read while every other session keeps answering.  ``seconds``: the time budget (``done`` gets a
    TimeoutError instead of a result past it).  Outside a served session (tests, scripts): both run now."""
    import asyncio

    doc = pn.state.curdoc
    if doc is None or getattr(doc, "session_context", None) is None:
        done(work())
        return

    from panel.io.state import set_curdoc

    async def task():
        try:
            result = await asyncio.wait_for(asyncio.to_thread(work), seconds)
        except TimeoutError as exc:
            result = exc

        def finish():  # a next-tick callback runs with the session's document lock held
            with set_curdoc(doc):
                done(result)

        doc.add_next_tick_callback(finish)

    pn.state.execute(task)

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

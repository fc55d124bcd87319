"""The page's message area (``ns-messages``) and the wrapper that keeps tracebacks off the page."""

from __future__ import annotations

import functools
import html
import logging

import panel as pn

log = logging.getLogger("netstretch.app")


class Messages(pn.viewable.Viewer):
    """Plain-language messages keyed by topic: a new message on a topic replaces the old one."""

    def __init__(self, **params):
        super().__init__(**params)
        self._items: dict[str, pn.pane.Alert] = {}
        self._col = pn.Column(css_classes=["ns-messages"], sizing_mode="stretch_width", margin=(0, 10))

    def show(self, key: str, text: str, kind: str = "warning"):
        alert = pn.pane.Alert(text, alert_type=kind, sizing_mode="stretch_width", margin=(4, 0),
                              css_classes=[f"ns-msg-{key}", f"ns-msg-{kind}"])
        self._items[key] = alert
        self._col.objects = list(self._items.values())

    def clear(self, key: str):
        if self._items.pop(key, None) is not None:
            self._col.objects = list(self._items.values())

    def texts(self) -> dict[str, str]:
        return {k: a.object for k, a in self._items.items()}

    def __panel__(self):
        return self._col


def guarded(messages: Messages, key: str, what: str):
    """Decorator for callbacks: a user error becomes a message under ``key``; anything unexpected is
    logged on the server and shown as one sentence (never a traceback in the page)."""

    def deco(fn):
        @functools.wraps(fn)
        def wrapper(*args, **kwargs):
            try:
                out = fn(*args, **kwargs)
            except (ValueError, KeyError, ArithmeticError) as exc:
                text = exc.args[0] if isinstance(exc, KeyError) and exc.args else str(exc)
                # the sentence may carry an uploaded file's name: escaped, so it shows as text, never as HTML
                messages.show(key, f"**{what}:** {html.escape(str(text), quote=False)}", "warning")
                return None
            except Exception as exc:
                log.exception("unexpected error while %s", what)
                messages.show(key, f"**{what}:** an unexpected problem occurred ({type(exc).__name__}). "
                                   "The previous results are kept; the server log has the details.", "danger")
                return None
            messages.clear(key)
            return out

        return wrapper

    return deco

"""Message areas (``ns-messages``) placed next to the controls they are about, and the wrapper that keeps
tracebacks off the page.

Each view owns a :class:`Messages` area and places it beside its controls, so a user scrolled down to a
button sees what the button did.  A message stays until the user closes it (its ×), until a new message on
the same topic replaces it, or until the same action succeeds again (an old error is then cleared *before*
the action runs, so a message the action itself posts — "compound added" — is kept).
"""

from __future__ import annotations

import functools
import html
import logging

import panel as pn

log = logging.getLogger("netstretch.app")


class Messages(pn.viewable.Viewer):
    """Plain-language messages keyed by topic: a new message on a topic replaces the old one."""

    def __init__(self, area: str = "page", **params):
        super().__init__(**params)
        self.area = area
        self._items: dict[str, tuple[str, str]] = {}
        self._rows: dict[str, pn.Row] = {}
        self._col = pn.Column(css_classes=["ns-messages", f"ns-messages-{area}"], sizing_mode="stretch_width",
                              margin=(0, 10))

    def show(self, key: str, text: str, kind: str = "warning"):
        alert = pn.pane.Alert(text, alert_type=kind, sizing_mode="stretch_width", margin=(4, 0),
                              css_classes=[f"ns-msg-{key}", f"ns-msg-{kind}"])
        close = pn.widgets.Button(name="×", width=34, height=30, margin=(8, 0, 0, 4), button_type="light",
                                  css_classes=["ns-msg-close"], description="close this message")
        close.on_click(lambda e, k=key: self.clear(k))
        self._items[key] = (text, kind)
        self._rows[key] = pn.Row(alert, close, sizing_mode="stretch_width", margin=0)
        self._col.objects = list(self._rows.values())

    def clear(self, key: str):
        self._items.pop(key, None)
        if self._rows.pop(key, None) is not None:
            self._col.objects = list(self._rows.values())

    def texts(self) -> dict[str, str]:
        return {k: t for k, (t, _kind) in self._items.items()}

    def kinds(self) -> dict[str, str]:
        return {k: kind for k, (_t, kind) in self._items.items()}

    def __panel__(self):
        return self._col


def guarded(messages: Messages, key: str, what: str):
    """Decorator for callbacks: a user error becomes a message under ``key``; anything unexpected is
    logged on the server and shown as one sentence (never a traceback in the page).  The old message
    under ``key`` is cleared before the callback runs, so whatever the callback posts there stays."""

    def deco(fn):
        @functools.wraps(fn)
        def wrapper(*args, **kwargs):
            messages.clear(key)
            try:
                return fn(*args, **kwargs)
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

        return wrapper

    return deco

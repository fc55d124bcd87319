"""Panel settings for every page this server builds: assets from this server only (no CDN, no remote fonts),
the websocket message cap, callback errors to the log.  Used by :mod:`.main` (the page) and :mod:`.server`
(``serve``) — it imports neither, so the two do not import each other."""

from __future__ import annotations

import logging

import panel as pn

log = logging.getLogger("netstretch.app")


#: Cap on one websocket message (a FileInput upload travels as one base64 message): 25 MB.  Files above
#: app.data_state.MAX_UPLOAD_BYTES (20 MB) are refused with a message before they are read.
WEBSOCKET_MAX_MESSAGE_SIZE = 25 * 1024 * 1024


def configure_panel():
    """Offline-safe Panel settings: every asset from this server, no CDN, no remote fonts."""
    pn.config.inline = False
    pn.config.design = None
    pn.config.raw_css = []
    pn.config.notifications = False
    local_stylesheets()  # no CDN fallback for stylesheets of components updated in callbacks
    pn.config.throttled = False
    # a callback error that slipped past guarded(): log it on the server, keep it off the page
    pn.config.exception_handler = lambda exc: log.error("callback error: %s", exc, exc_info=exc)
    try:
        pn.extension(design="native", inline=False)
    except Exception:
        pn.extension(inline=False)


def local_stylesheets():
    """Panel falls back to its internet CDN for a component's stylesheets (``loading.css``, the theme's
    ``default.css``/``native.css``) whenever the component's model is not (yet) in a document — e.g. a pane
    on a tab that is not open, updated by a callback (an upload refreshes the explorer's legends).  In a
    served session that fallback is replaced by this server's own copy; outside a session (a saved HTML
    file) nothing changes."""
    import panel.reactive as reactive
    from panel.io import resources

    if getattr(resources.patch_stylesheet, "_netstretch", False):
        return
    original = resources.patch_stylesheet

    def patch_stylesheet(stylesheet, dist_url):
        from panel.io.state import state

        doc = state.curdoc
        if dist_url == resources.CDN_DIST and doc is not None and getattr(doc, "session_context", None):
            rel = state.rel_path
            dist_url = doc._template_variables.get(
                "dist_url", f"{rel}/{resources.LOCAL_DIST}" if rel else resources.LOCAL_DIST)
        return original(stylesheet, dist_url)

    patch_stylesheet._netstretch = True
    resources.patch_stylesheet = patch_stylesheet  # read at call time by the theme code
    reactive.patch_stylesheet = patch_stylesheet  # imported once by the component code

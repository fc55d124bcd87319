"""Entry for Panel's own server, so every ``panel serve`` option works (processes, prefix, origins, basic
authentication, cookie secret, TLS ...):

    panel serve "$(netstretch serve --entry-file)" --port 5006 --allow-websocket-origin lab-pc-07:5006 \\
        --basic-auth /etc/netstretch/users.json --cookie-secret "$(cat /etc/netstretch/cookie-secret)"

Panel runs this file once per browser session; it builds that session's page.  Raise Panel's websocket
message cap for uploads: ``--websocket-max-message-size 26214400`` (25 MB, as ``netstretch serve`` does).
"""

import importlib

# Run as a file (not as a package module): import the installed package, or the checkout's folder.
try:
    _pkg = importlib.import_module("netstretch_app")
except ImportError:  # running from a source checkout without an install
    _pkg = importlib.import_module("app")
_main = importlib.import_module(f"{_pkg.__name__}.main")
_server = importlib.import_module(f"{_pkg.__name__}.server")

_main.configure_panel()
_server.session_page().servable(title="netstretch")

"""Serve the explorer: `serve()` behind `sub60 serve`.

Every browser session gets a fresh `Explorer` (its own settings, simulator and workers),
so sessions never share mutable state. The page's JavaScript and CSS come from this
server (Bokeh and Panel serve their bundles locally); nothing is fetched from outside
the machine. Only the served address may open the websocket.
"""

from __future__ import annotations

import ipaddress
import sys

import panel as pn

from sub60.app.layout import TITLE, create_app

_LOOPBACK_NAMES = {"localhost", "localhost.localdomain", "ip6-localhost"}

#: Largest websocket message accepted [bytes]: bounds an uploaded snapshot (20 MB limit,
#: base64-encoded by the browser, so about 27 MB on the wire).
MAX_MESSAGE_BYTES = 32 * 1024 * 1024


def is_loopback(host: str) -> bool:
    """True when host names this machine's loopback interface only."""
    if host in _LOOPBACK_NAMES:
        return True
    try:
        return ipaddress.ip_address(host).is_loopback
    except ValueError:
        return False


def loopback_warning(host: str, port: int) -> str | None:
    """The warning printed when serving beyond this machine, or None."""
    if is_loopback(host):
        return None
    return (f"sub60: WARNING: serving on {host}, which is not a loopback address — anyone "
            f"who can reach this machine on port {port} can use the explorer.")


def allowed_origins(host: str, port: int) -> list[str]:
    """Websocket origins accepted: the served address (and its loopback aliases)."""
    origins = [f"{host}:{port}"]
    if is_loopback(host):
        origins += [f"127.0.0.1:{port}", f"localhost:{port}"]
    return sorted(set(origins))


def configure() -> None:
    """Panel settings of the explorer: local resources, our stylesheet, no extras."""
    pn.extension(raw_css=[_page_css()], notifications=False)


def _page_css() -> str:
    return ("body { margin: 0; background: #f7f9fa; "
            "font-family: system-ui, -apple-system, 'Segoe UI', Roboto, Arial, sans-serif; }\n")


def build_server(port: int = 5006, host: str = "127.0.0.1", show: bool = False,
                 start: bool = True, threaded: bool = False):
    """The Panel/Bokeh server of the explorer (see `serve`); returned for tests."""
    configure()
    warning = loopback_warning(host, port)
    if warning:
        print(warning, file=sys.stderr)
    return pn.serve(
        {"/": create_app}, port=port, address=host, show=show, start=start,
        threaded=threaded, title=TITLE, websocket_origin=allowed_origins(host, port),
        verbose=False, admin=False, check_unused_sessions=5000, unused_session_lifetime=15000,
        websocket_max_message_size=MAX_MESSAGE_BYTES)


def serve(port: int = 5006, host: str = "127.0.0.1", show: bool = False) -> None:
    """Serve the explorer at http://host:port/ until interrupted.

    Parameters
    ----------
    port : TCP port [-]; host : address to listen on (loopback by default);
    show : open the page in the default browser.
    """
    print(f"sub60: serving the explorer at http://{host}:{port}/ (Ctrl+C to stop)",
          file=sys.stderr)
    build_server(port=port, host=host, show=show, start=True, threaded=False)

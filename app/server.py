"""Serve the explorer: `serve()` behind `sub60 serve`.

Every browser session gets a fresh `Explorer` (its own settings, simulator and workers),
so sessions never share mutable state. The page's JavaScript and CSS come from this
server (Bokeh and Panel serve their bundles locally); nothing is fetched from outside
the machine.

Safe to leave running while the same browser visits other sites (common practice for
locally served web tools, no source):

- **Host names**: every HTTP and websocket request must name the served address in its
  ``Host`` header (127.0.0.1, localhost or [::1] with the port, plus ``--host``);
  any other (a DNS-rebinding page) gets 403 before a handler runs. The websocket also
  checks ``Origin`` (Bokeh's allow-list).
- **Headers** on every response: a Content-Security-Policy (scripts only from this
  server, inline ``<script>`` blocks of the page template only with the response's
  nonce, no inline event handlers, no framing; eval only because Bokeh's JS tick
  formatters need it), ``X-Frame-Options: DENY``,
  ``X-Content-Type-Options: nosniff``, ``Referrer-Policy: no-referrer``.
- **Signed session ids**: ids are signed with a secret drawn at start-up, so a link
  cannot make two browsers join one chosen session.
- **Sessions end**: a session whose page is closed, or that never connected (a bare
  GET), ends after `UNUSED_SESSION_LIFETIME_MS`; its work stops and what it held is
  released (`app.layout.Explorer.close`).

This module imports Panel only when a server is built, so the command line stays light.
"""

from __future__ import annotations

import ipaddress
import os
import re
import secrets
import socket
import sys
from collections.abc import Iterable
from typing import Any

_LOOPBACK_NAMES = {"localhost", "localhost.localdomain", "ip6-localhost"}

#: Largest websocket message accepted [bytes]: bounds an uploaded snapshot (20 MB limit,
#: base64-encoded by the browser, so about 27 MB on the wire).
MAX_MESSAGE_BYTES = 32 * 1024 * 1024

#: A session whose page is not connected (closed, or a bare GET that never opened the
#: websocket) is ended after this long [ms]; its work stops and its memory is released.
UNUSED_SESSION_LIFETIME_MS = 8000

#: How often the server looks for such sessions [ms].
CHECK_UNUSED_SESSIONS_MS = 1000

#: Highest TCP port number [-] (RFC 793: 16-bit port field).
MAX_PORT = 65535

#: Longest value of one query parameter of the page address [characters]; sharing links
#: hold short numbers and names, so this only stops hostile links.
MAX_QUERY_VALUE_CHARS = 1000


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


def port_number(text: str) -> int:
    """A TCP port from the command line: a whole number 1–65535 [-].

    Raises `argparse.ArgumentTypeError` naming the allowed range otherwise."""
    import argparse

    try:
        port = int(text, 10)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number "
                                         f"(allowed: 1 to {MAX_PORT})") from None
    if not 1 <= port <= MAX_PORT:
        raise argparse.ArgumentTypeError(f"{port} is outside the allowed range 1 to {MAX_PORT}")
    return port


def _host_for_url(host: str) -> str:
    """host as written in a URL's authority: IPv6 literals in brackets, lower case."""
    host = host.strip().lower()
    if host.startswith("[") and host.endswith("]"):
        return host
    try:
        if ipaddress.ip_address(host).version == 6:
            return f"[{host}]"
    except ValueError:
        pass
    return host


def allowed_hosts(host: str, port: int) -> frozenset[str]:
    """``Host`` header values accepted: the loopback names and the served address, with
    the port (lower case). A wildcard address (0.0.0.0, ::) adds this machine's name."""
    names = {"127.0.0.1", "localhost", "[::1]", _host_for_url(host)}
    try:
        if ipaddress.ip_address(host.strip("[]")).is_unspecified:
            names |= {socket.gethostname().lower(), socket.getfqdn().lower()}
    except ValueError:
        pass
    return frozenset(f"{name}:{port}" for name in names)


def allowed_origins(host: str, port: int) -> list[str]:
    """Websocket origins accepted: the served address (and its loopback aliases)."""
    origins = [f"{host}:{port}"]
    if is_loopback(host):
        origins += [f"127.0.0.1:{port}", f"localhost:{port}"]
    return sorted(set(origins))


def query_problem(query: str) -> str | None:
    """Why the page address's query cannot be used, or None.

    Refused before Panel reads the query (it converts digit strings with `int`, which
    fails for over 4300 digits and for digits such as '²'): values longer than
    `MAX_QUERY_VALUE_CHARS` and digit strings `int` cannot read."""
    from urllib.parse import parse_qsl

    for key, value in parse_qsl(query, keep_blank_values=True):
        name = repr(key[:40])
        if len(value) > MAX_QUERY_VALUE_CHARS:
            return (f"the value of {name} in the page address has {len(value)} characters "
                    f"(at most {MAX_QUERY_VALUE_CHARS})")
        if value.isdigit():
            try:
                int(value)
            except ValueError:
                return f"the value of {name} in the page address is not a usable number"
    return None


def content_security_policy(nonce: str) -> str:
    """The page's Content-Security-Policy: scripts from this origin and the template's
    own inline blocks (carrying ``nonce``) only; no inline event handlers, no plugins,
    no framing, connections to this origin only (its websocket included). Eval stays
    allowed: Bokeh's CustomJSTickFormatter needs it (see below)."""
    return "; ".join([
        "default-src 'self'",
        # 'unsafe-eval': Bokeh compiles CustomJSTickFormatter code (the log-scale sliders'
        # labels) with `new Function`; no inline script or handler runs without the nonce
        f"script-src 'self' 'nonce-{nonce}' 'unsafe-eval'",
        "script-src-attr 'none'",
        # Bokeh and Panel style their components with inline <style> and style attributes
        "style-src 'self' 'unsafe-inline'",
        "img-src 'self' data: blob:",
        "font-src 'self' data:",
        "connect-src 'self'",
        "object-src 'none'",
        "base-uri 'none'",
        "form-action 'self'",
        "frame-ancestors 'none'",
    ])


_SCRIPT_OPEN = re.compile(rb"<script(?=[\s>])", re.IGNORECASE)


def security_headers(nonce: str) -> dict[str, str]:
    """Headers set on every response (see the module docstring)."""
    return {"Content-Security-Policy": content_security_policy(nonce),
            "X-Frame-Options": "DENY",
            "X-Content-Type-Options": "nosniff",
            "Referrer-Policy": "no-referrer",
            "Cross-Origin-Opener-Policy": "same-origin"}


def _tornado_guards(hosts: Iterable[str]) -> tuple[list[tuple[Any, type]], type]:
    """The (matcher, refusing handler) pairs and the header transform (tornado classes
    built on first use, so importing this module does not import tornado)."""
    from tornado.routing import Matcher
    from tornado.web import OutputTransform, RequestHandler

    accepted = frozenset(h.lower() for h in hosts)

    class ForeignHost(Matcher):
        """Matches a request whose Host header is not one of the served names."""

        def match(self, request) -> dict | None:
            return {} if (request.host or "").lower() not in accepted else None

    class Refuse(RequestHandler):
        """403 for any method: the request named a host this server was not started for."""

        def prepare(self) -> None:
            self.set_status(403)
            self.set_header("Content-Type", "text/plain; charset=utf-8")
            self.finish("403: this server answers only to the address it was started on\n")

    class BadQuery(Matcher):
        """Matches a request whose query `query_problem` refuses."""

        def match(self, request) -> dict | None:
            return {} if query_problem(request.query or "") else None

    class RefuseQuery(RequestHandler):
        """400 naming the query value that cannot be used."""

        def prepare(self) -> None:
            self.set_status(400)
            self.set_header("Content-Type", "text/plain; charset=utf-8")
            self.finish(f"400: {query_problem(self.request.query or '')}\n")

    class SecurityHeaders(OutputTransform):
        """Adds `security_headers` to every response and the response's nonce to the
        ``<script>`` tags of the server's own HTML pages (no user text is in them)."""

        def transform_first_chunk(self, status_code, headers, chunk, finishing):
            nonce = secrets.token_urlsafe(16)
            if headers.get("Content-Type", "").startswith("text/html") and chunk:
                chunk = _SCRIPT_OPEN.sub(b'<script nonce="' + nonce.encode() + b'"', chunk)
                if "Content-Length" in headers:
                    headers["Content-Length"] = str(len(chunk))
            for name, value in security_headers(nonce).items():
                headers[name] = value
            return status_code, headers, chunk

    return [(ForeignHost(), Refuse), (BadQuery(), RefuseQuery)], SecurityHeaders


def guard(tornado_app, hosts: Iterable[str]) -> None:
    """Install the host check, then the query check (the first rules of the router: they
    run before any handler), and the security headers (first output transform) on a
    tornado application."""
    from tornado.routing import Rule

    rules, headers = _tornado_guards(hosts)
    router = tornado_app.default_router
    for i, (matcher, handler) in enumerate(rules):
        router.rules.insert(i, router.process_rule(Rule(matcher, handler)))
    tornado_app.transforms.insert(0, headers)


#: Delay between a session's end and the release of freed heap memory to the system [s]:
#: long enough for Bokeh to drop the session's document (common practice, no source).
HEAP_RELEASE_DELAY_S = 2.0


def release_freed_memory() -> bool:
    """Collect unreachable Python objects, then hand the C heap's free pages back to the
    system (glibc ``malloc_trim(0)``, which walks every malloc arena). Without it the
    memory of ended sessions stays in the server's arenas: free for reuse, but still
    counted in its resident size. Returns False where glibc is absent (nothing trimmed)."""
    import ctypes
    import ctypes.util
    import gc

    gc.collect()
    name = ctypes.util.find_library("c")
    if not name or not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL(name)
        trim = libc.malloc_trim
    except (OSError, AttributeError):  # not glibc (e.g. musl has no malloc_trim)
        return False
    trim.argtypes = [ctypes.c_size_t]
    trim.restype = ctypes.c_int
    trim(0)
    return True


def _page_with_heap_release(create_app):
    """``create_app`` wrapped so that, once a session has ended and its own clean-up
    (`Explorer.close`) has run, the freed memory goes back to the system."""
    import panel as pn

    def page():
        viewable = create_app()  # registers the session's own clean-up first

        def ended(_context: Any) -> None:
            from tornado.ioloop import IOLoop

            IOLoop.current().call_later(HEAP_RELEASE_DELAY_S, release_freed_memory)

        pn.state.on_session_destroyed(ended)
        return viewable

    return page


def quiet_closed_sockets(io_loop: Any) -> None:
    """Drop asyncio's "Task exception was never retrieved" tracebacks for updates that
    were on their way to a page closed meanwhile (tornado's WebSocketClosedError and
    StreamClosedError): a closed browser tab is normal, and each such traceback filled
    the terminal with 40 lines. Every other unhandled error is reported as before."""
    from tornado.iostream import StreamClosedError
    from tornado.websocket import WebSocketClosedError

    loop = io_loop.asyncio_loop

    def handler(the_loop: Any, context: dict) -> None:
        if isinstance(context.get("exception"), (WebSocketClosedError, StreamClosedError)):
            return
        the_loop.default_exception_handler(context)

    loop.set_exception_handler(handler)


def configure() -> None:
    """Panel settings of the explorer: local resources, our stylesheet, no extras. Bokeh's
    integrity checks of each new page's document are off (they walked the ~650 models of
    every page opened, ≈ 10 % of building it, to log warnings only): the page's
    document passes them in the tests (`tests/app/test_state.py`)."""
    import panel as pn
    from bokeh.settings import settings

    pn.extension(raw_css=[_page_css()], notifications=False)
    settings.perform_document_validation.set_value(False)


def _page_css() -> str:
    return ("body { margin: 0; background: #f7f9fa; "
            "font-family: system-ui, -apple-system, 'Segoe UI', Roboto, Arial, sans-serif; }\n")


def build_server(port: int = 5006, host: str = "127.0.0.1", show: bool = False,
                 start: bool = True, threaded: bool = False,
                 unused_session_lifetime_ms: int = UNUSED_SESSION_LIFETIME_MS):
    """The Panel/Bokeh server of the explorer (see `serve`), listening once returned;
    started (blocking) when ``start``. Raises OSError when the address cannot be bound.
    Sessions not connected for ``unused_session_lifetime_ms`` [ms] are ended."""
    import panel as pn

    from sub60.app.layout import TITLE, create_app

    configure()
    server = pn.serve(
        {"/": _page_with_heap_release(create_app)}, port=port, address=host, show=show,
        start=threaded and start, threaded=threaded, title=TITLE,
        websocket_origin=allowed_origins(host, port),
        verbose=False, admin=False,
        # Bokeh's names: other spellings are silently taken as tornado settings
        check_unused_sessions_milliseconds=min(CHECK_UNUSED_SESSIONS_MS,
                                               unused_session_lifetime_ms),
        unused_session_lifetime_milliseconds=unused_session_lifetime_ms,
        websocket_max_message_size=MAX_MESSAGE_BYTES,
        sign_sessions=True, secret_key=secrets.token_urlsafe(32), generate_session_ids=True)
    warning = loopback_warning(host, port)
    if warning:
        print(warning, file=sys.stderr)
    if not threaded:
        guard(server._tornado, allowed_hosts(host, port))
        quiet_closed_sockets(server.io_loop)
        if start:
            server.start()
            server.io_loop.start()
    return server


def serve(port: int = 5006, host: str = "127.0.0.1", show: bool = False) -> None:
    """Serve the explorer at http://host:port/ until interrupted.

    "serving …" is printed once the server listens. A port or address that cannot be
    used (taken, absent, not permitted) is reported in one line and exits with status 1.

    Parameters
    ----------
    port : TCP port [-]; host : address to listen on (loopback by default);
    show : open the page in the default browser.
    """
    try:
        server = build_server(port=port, host=host, show=show, start=False, threaded=False)
    except (OSError, OverflowError) as exc:
        reason = getattr(exc, "strerror", None) or str(exc)
        print(f"sub60: error: cannot serve on {host}:{port}: {reason}", file=sys.stderr)
        raise SystemExit(1) from None
    from sub60.app.curve_process import stacks_on_signal, start_curve_process, stop_curve_process

    stacks_on_signal()
    if os.environ.get("SUB60_CURVE_PROCESS", "1") != "0":
        # the twin's transfer curve and output curves in a second process (README, "Curves
        # after a design change"); SUB60_CURVE_PROCESS=0 computes every curve in the
        # session's sweep thread
        start_curve_process()
    print(f"sub60: serving the explorer at http://{_host_for_url(host)}:{port}/ "
          "(Ctrl+C to stop)", file=sys.stderr, flush=True)
    server.start()
    try:
        server.io_loop.start()
    except KeyboardInterrupt:
        pass
    finally:
        stop_curve_process()

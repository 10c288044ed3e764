"""Safe serving (issue "Reliability"): loopback by default, a warning beyond it, the
websocket origin restricted to the served address, bounded messages, no eval of user
input. Common practice for locally served tools, no source."""

from __future__ import annotations

import http.client
import re
from pathlib import Path
from urllib.parse import urlsplit

import pytest

from sub60.app import cli, server

ROOT = Path(__file__).resolve().parents[2]


def test_serve_defaults_to_loopback():
    args = cli.build_parser().parse_args(["serve"])
    assert args.host == "127.0.0.1" and args.port == 5006
    assert server.serve.__defaults__[1] == "127.0.0.1"


@pytest.mark.parametrize("host, warns", [("127.0.0.1", False), ("localhost", False),
                                         ("::1", False), ("0.0.0.0", True),
                                         ("192.0.2.10", True), ("example.org", True)])
def test_non_loopback_host_prints_a_warning(host, warns):
    text = server.loopback_warning(host, 5006)
    assert (text is not None) == warns
    if warns:
        assert host in text and "not a loopback" in text


def test_cli_serve_passes_host_and_warns(monkeypatch, capsys):
    """`sub60 serve --host 0.0.0.0` warns before serving (serve itself is stubbed so no
    socket is opened beyond loopback)."""
    seen = {}

    class FakeServer:                 # started and stopped at once
        def start(self):
            self.io_loop = self

    def fake_build_server(port, host, show, start, threaded):
        seen.update(port=port, host=host)
        warning = server.loopback_warning(host, port)
        if warning:
            print(warning, file=__import__("sys").stderr)
        return FakeServer()

    monkeypatch.setattr(server, "build_server", fake_build_server)
    monkeypatch.setenv("SUB60_CURVE_PROCESS", "0")  # no second process for a stubbed server
    assert cli.main(["serve", "--host", "0.0.0.0", "--port", "5999"]) == 0
    err = capsys.readouterr().err
    assert seen == {"port": 5999, "host": "0.0.0.0"} and "WARNING" in err


def test_websocket_origins_are_the_served_address_only():
    assert server.allowed_origins("127.0.0.1", 5010) == ["127.0.0.1:5010", "localhost:5010"]
    assert server.allowed_origins("198.51.100.7", 5010) == ["198.51.100.7:5010"]


def _upgrade(url: str, origin: str) -> int:
    parts = urlsplit(url)
    conn = http.client.HTTPConnection(parts.hostname, parts.port, timeout=30)
    conn.request("GET", "/ws", headers={
        "Origin": origin, "Upgrade": "websocket", "Connection": "Upgrade",
        "Sec-WebSocket-Version": "13", "Sec-WebSocket-Key": "dGhlIHNhbXBsZSBub25jZQ=="})
    status = conn.getresponse().status
    conn.close()
    return status


@pytest.mark.browser
def test_served_websocket_refuses_a_foreign_origin(app_url):
    """The running server answers a websocket upgrade from another origin with 403 and
    accepts the upgrade (101) from its own address (the control)."""
    own = f"http://{urlsplit(app_url).netloc}"
    assert _upgrade(app_url, own) == 101
    assert _upgrade(app_url, "http://attacker.example") == 403


def test_message_size_is_bounded():
    assert 20 * 1024 * 1024 < server.MAX_MESSAGE_BYTES <= 64 * 1024 * 1024


def test_no_eval_or_exec_of_input_anywhere():
    """No eval/exec/pickle of anything in the packages (user input never becomes code)."""
    pattern = re.compile(r"(?<![\w.])(eval|exec)\s*\(|pickle\.loads|yaml\.load\(")
    offenders = []
    for path in list((ROOT / "app").rglob("*.py")) + list((ROOT / "physics").rglob("*.py")):
        for n, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
            if pattern.search(line) and not line.lstrip().startswith("#"):
                offenders.append(f"{path.relative_to(ROOT)}:{n}: {line.strip()}")
    assert offenders == []

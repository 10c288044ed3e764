"""Clean failures of the command line (subprocesses): a port or address that cannot be
served, and a stdout that cannot be written, end with one line on stderr and exit status
2 (bad option) or 1 (run-time failure), never a traceback; "serving …" is printed only
once the server listens. Common practice for command-line tools (exit status 2 for usage
errors as argparse does), no source.
"""

from __future__ import annotations

import os
import socket
import subprocess
import sys

import pytest

from .conftest import ROOT, free_port, stop_server

ENV = dict(os.environ, OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1")


def _sub60(*args: str, stdout=subprocess.PIPE, timeout: float = 180.0):
    return subprocess.run([sys.executable, "-m", "sub60.app", *args], cwd=ROOT, env=ENV,
                          stdout=stdout, stderr=subprocess.PIPE, text=True, timeout=timeout)


def _one_clean_line(proc) -> str:
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in proc.stderr, proc.stderr
    return lines[0]


@pytest.mark.parametrize("port", ["99999", "-1", "0", "65536", "abc", "80.5"])
def test_bad_port_is_a_usage_error(port):
    proc = _sub60("serve", "--port", port)
    assert proc.returncode == 2
    line = _one_clean_line(proc)
    assert "--port" in line and "65535" in line and "serving" not in proc.stderr


def test_taken_port_fails_in_one_line():
    with socket.socket() as taken:
        taken.bind(("127.0.0.1", 0))
        taken.listen(1)
        port = taken.getsockname()[1]
        proc = _sub60("serve", "--port", str(port))
    assert proc.returncode == 1
    line = _one_clean_line(proc)
    assert f"127.0.0.1:{port}" in line and "serving the explorer" not in proc.stderr


def test_absent_address_fails_in_one_line():
    # 192.0.2.1 is TEST-NET-1 (RFC 5737): no interface of this machine holds it
    proc = _sub60("serve", "--host", "192.0.2.1", "--port", str(free_port()))
    assert proc.returncode == 1
    line = _one_clean_line(proc)
    assert "192.0.2.1" in line and "serving the explorer" not in proc.stderr


def test_serving_is_printed_once_listening():
    port = free_port()
    proc = subprocess.Popen([sys.executable, "-m", "sub60.app", "serve", "--port", str(port)],
                            cwd=ROOT, env=ENV, stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE, text=True)
    try:
        line = proc.stderr.readline()            # blocks until the first line
        assert "serving the explorer" in line and f"127.0.0.1:{port}" in line, line
        with socket.create_connection(("127.0.0.1", port), timeout=5):
            pass                                 # already listening when announced
    finally:
        stop_server(proc)


@pytest.mark.skipif(not os.path.exists("/dev/full"), reason="needs /dev/full")
@pytest.mark.parametrize("args", [["--help"], ["snapshot", "--help"],
                                  ["bands", "--vg", "0.2", "--vd", "0.1"]])
def test_full_stdout_fails_in_one_line(args):
    with open("/dev/full", "w") as full:
        proc = _sub60(*args, stdout=full)
    assert proc.returncode == 1
    assert "No space left" in _one_clean_line(proc)


def test_closed_pipe_gives_no_traceback():
    """The reader has gone away before the output is written (like `| head -c 0`)."""
    proc = subprocess.Popen([sys.executable, "-m", "sub60.app", "bands", "--vg", "0.2",
                             "--vd", "0.1"], cwd=ROOT, env=ENV, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE)
    proc.stdout.close()                          # EPIPE on the child's first write
    _, err = proc.communicate(timeout=180)
    assert proc.returncode == 1 and err.decode().strip() == "", err.decode()


def test_closed_page_updates_are_not_reported_but_other_errors_are(caplog):
    """An update on its way to a closed tab (tornado's WebSocketClosedError) is dropped
    silently; any other unhandled task error still reaches asyncio's report (its default
    handler logs "... exception=..." on the 'asyncio' logger: Python docs, asyncio event
    loop, default_exception_handler)."""
    import asyncio
    import logging

    from tornado.websocket import WebSocketClosedError

    from sub60.app.server import quiet_closed_sockets

    loop = asyncio.new_event_loop()
    try:
        class Holder:  # stands for tornado's IOLoop, which carries its asyncio loop
            asyncio_loop = loop

        quiet_closed_sockets(Holder())
        with caplog.at_level(logging.ERROR, logger="asyncio"):
            loop.call_exception_handler({"message": "Task exception was never retrieved",
                                         "exception": WebSocketClosedError()})
            assert not caplog.records
            loop.call_exception_handler({"message": "Task exception was never retrieved",
                                         "exception": RuntimeError("a real failure")})
        assert any("a real failure" in (r.getMessage() + str(r.exc_info))
                   for r in caplog.records), caplog.records
    finally:
        loop.close()

"""The `sub60` entry point around `sub60.app.cli.main`: clean failures at the edges.

Whatever the command, the process ends with one line on stderr at most and an exit
status (0 success, 1 run-time failure, 2 bad option, 130 interrupted), never a traceback
for these cases:

- stdout cannot be written (a full disk or ``> /dev/full``: ENOSPC; a closed pipe as in
  ``sub60 transfer | head -1``: EPIPE) — the output is flushed here, inside the guard,
  and stdout is then pointed at the null device so the interpreter's own final flush
  cannot fail again;
- any other operating-system error reaching the top (a file that cannot be written, an
  address that cannot be served);
- Ctrl+C.
"""

from __future__ import annotations

import errno
import os
import sys


def _say(message: str) -> None:
    """One line on stderr; nothing when stderr itself cannot be written."""
    try:
        print(message, file=sys.stderr, flush=True)
    except (OSError, ValueError):
        pass


def _silence_stdout() -> None:
    """Point stdout at the null device (so no later flush fails) [-]."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError, AttributeError):
        pass


class _Watched:
    """A text stream that remembers its first OSError (argparse swallows errors when it
    prints help, so the failure would otherwise go unnoticed)."""

    def __init__(self, stream) -> None:
        self._stream = stream
        self.error: OSError | None = None

    def write(self, text: str) -> int:
        try:
            return self._stream.write(text)
        except OSError as exc:
            self.error = self.error or exc
            raise

    def flush(self) -> None:
        try:
            self._stream.flush()
        except OSError as exc:
            self.error = self.error or exc
            raise

    def __getattr__(self, name: str):
        return getattr(self._stream, name)


def _exit_status(code: object) -> int:
    if code is None:
        return 0
    if isinstance(code, int):
        return code
    _say(str(code))
    return 1


def main(argv: list[str] | None = None) -> int:
    """Run the command line (see `sub60.app.cli`) and return its exit status [-]."""
    original = sys.stdout
    out = _Watched(original)
    try:
        from sub60.app.cli import main as cli_main

        sys.stdout = out
        try:
            status = cli_main(argv)
        except SystemExit as exc:          # argparse --help, serve's bind failures
            status = _exit_status(exc.code)
        out.flush()
        if out.error is not None:
            raise out.error
        return status
    except KeyboardInterrupt:
        sys.stdout = original
        _say("sub60: interrupted")
        return 130
    except OSError as exc:
        sys.stdout = original
        stdout_failed = exc is out.error or exc.errno == errno.EPIPE
        if stdout_failed:
            _silence_stdout()
        if exc.errno == errno.EPIPE:        # the reader went away: nothing to say
            return 1
        where = ("cannot write the output: " if stdout_failed
                 else f"{exc.filename}: " if exc.filename else "")
        _say(f"sub60: error: {where}{exc.strerror or exc}")
        return 1
    finally:
        sys.stdout = original

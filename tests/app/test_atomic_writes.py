"""Files never half-written: a snapshot export that runs out of room (a file-size limit,
as `ulimit -f 200` or a full disk gives) leaves the earlier snapshot intact and no
temporary file behind, and fails in one line. Common practice, no source.
"""

from __future__ import annotations

import os
import resource
import subprocess
import sys
import zipfile

import pytest

from sub60.app.atomic import write_bytes_atomic

from .conftest import ROOT

ENV = dict(os.environ, OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1", PYTHONDONTWRITEBYTECODE="1")
#: `ulimit -f 200`: 200 blocks of 1024 bytes (bash's unit for -f) [bytes]
LIMIT_BYTES = 200 * 1024


def _limit_file_size() -> None:          # runs in the child before exec
    resource.setrlimit(resource.RLIMIT_FSIZE, (LIMIT_BYTES, LIMIT_BYTES))


def _export(out, *extra, limited=False):
    return subprocess.run([sys.executable, "-m", "sub60.app", "snapshot", "export", "--preset",
                           "low-power-switch", "--out", str(out), *extra],
                          cwd=ROOT, env=ENV, capture_output=True, text=True, timeout=300,
                          preexec_fn=_limit_file_size if limited else None)


def test_export_over_the_size_limit_keeps_the_earlier_snapshot(tmp_path):
    out = tmp_path / "snap.zip"
    first = _export(out)
    assert first.returncode == 0, first.stderr
    before = out.read_bytes()
    assert len(before) > LIMIT_BYTES          # so the limited run cannot fit it

    second = _export(out, "--force", "--title", "second", limited=True)
    assert second.returncode != 0
    lines = second.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in second.stderr, second.stderr
    assert "snap.zip" in lines[0] and "too large" in lines[0].lower()
    assert out.read_bytes() == before          # untouched, still the good zip
    assert zipfile.ZipFile(out).testzip() is None
    assert sorted(p.name for p in tmp_path.iterdir()) == ["snap.zip"]   # no temp left


def test_write_bytes_atomic_replaces_and_keeps_the_mode(tmp_path):
    target = tmp_path / "a.bin"
    target.write_bytes(b"old")
    os.chmod(target, 0o640)
    write_bytes_atomic(target, b"new content")
    assert target.read_bytes() == b"new content"
    assert target.stat().st_mode & 0o777 == 0o640
    write_bytes_atomic(tmp_path / "b.bin", b"x")
    umask = os.umask(0)
    os.umask(umask)
    assert (tmp_path / "b.bin").stat().st_mode & 0o777 == 0o666 & ~umask
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.bin", "b.bin"]


def test_write_bytes_atomic_failure_leaves_no_trace(tmp_path):
    target = tmp_path / "c.bin"
    target.write_bytes(b"keep")

    with pytest.raises(TypeError):
        write_bytes_atomic(target, object())   # fails inside the write
    assert target.read_bytes() == b"keep"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["c.bin"]
    with pytest.raises(OSError) as info:
        write_bytes_atomic(tmp_path / "no-such-dir" / "d.bin", b"x")
    assert "no-such-dir" in str(info.value)

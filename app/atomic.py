"""Files never half-written: `write_bytes_atomic` writes to a temporary file in the
target's folder and renames it into place.

A failure while writing (full disk, file-size limit, interrupted process) leaves the
previous file untouched (or no file) and no temporary file behind; readers never see a
partial file, because the rename within one file system is atomic (POSIX rename(2);
``os.replace`` on Windows). Common practice, no source.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path


def _default_mode() -> int:
    """Permission bits a newly created file gets under the current umask [-]."""
    mask = os.umask(0o022)
    os.umask(mask)
    return 0o666 & ~mask


def write_bytes_atomic(path: str | os.PathLike, data: bytes) -> None:
    """Write ``data`` to ``path`` all at once or not at all.

    Parameters
    ----------
    path : the file to create or replace; its folder must exist.
    data : the complete content [bytes].

    Raises
    ------
    OSError
        when the data cannot be written (``filename`` is ``path``); ``path`` is then as it
        was before the call.
    """
    path = Path(path)
    try:
        mode = path.stat().st_mode & 0o7777 if path.exists() else _default_mode()
    except OSError:
        mode = _default_mode()
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as f:
            f.write(data)
            f.flush()
            os.fsync(f.fileno())
        os.chmod(tmp, mode)
        os.replace(tmp, path)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        if isinstance(exc, OSError) and exc.filename is None:
            raise OSError(exc.errno, exc.strerror, str(path)) from None
        raise

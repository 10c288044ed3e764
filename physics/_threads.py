"""One BLAS thread while the solver runs, and only then.

The Poisson Newton loop factorises small banded matrices (bandwidth ~25, a few thousand
unknowns) with LAPACK; on two cores such factorisations run slower and erratically when
the BLAS library spreads them over several threads. Importing `sub60.physics` changes
nothing in the process: `single_blas_thread()` limits the BLAS pools to one thread for
the duration of a solve and restores the previous setting afterwards.

Cost: the `threadpoolctl.ThreadpoolController` (which scans the loaded libraries, ~1 ms)
is built once, on first use; each limit then costs ~10 us (measured by
``tests/bench_physics.py``, printed as "thread limit"). The limit is reference-counted
under a lock, because BLAS thread counts are process-wide: with several solver threads
the first to enter sets one thread, the last to leave restores the original count, and
nested entries (a `Simulator` bias point around its Poisson solves) cost only the
counter. While any solve runs, other BLAS calls of the process also see one thread.
"""

from __future__ import annotations

import contextlib
import threading
from collections.abc import Iterator
from typing import Any

_lock = threading.Lock()
_depth = 0
_limiter: Any = None
_controller: Any = None


def _get_controller() -> Any:
    """The cached controller of the BLAS libraries loaded now (None without threadpoolctl)."""
    global _controller
    if _controller is None:
        try:
            import scipy.linalg  # noqa: F401  (load the BLAS/LAPACK libraries the solver uses)
            from threadpoolctl import ThreadpoolController
        except ImportError:  # pragma: no cover - threadpoolctl is a declared dependency
            _controller = False
        else:
            _controller = ThreadpoolController()
    return _controller or None


@contextlib.contextmanager
def single_blas_thread() -> Iterator[None]:
    """Context: BLAS limited to one thread inside, the previous limits restored after."""
    global _depth, _limiter
    with _lock:
        if _depth == 0:
            controller = _get_controller()
            _limiter = controller.limit(limits=1, user_api="blas") if controller else None
        _depth += 1
    try:
        yield
    finally:
        with _lock:
            _depth -= 1
            if _depth == 0 and _limiter is not None:
                _limiter.restore_original_limits()
                _limiter = None

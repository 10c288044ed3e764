"""sub60 physics: electrostatics, confinement, band-to-band tunnelling and current of
thin-body tunnel FETs and their MOSFET twins. Pure numpy/scipy; no UI imports.

The banded LAPACK solvers used by the Poisson Newton loop are small (bandwidth ~25)
and run slower and erratically with several BLAS threads on two cores, so the BLAS
thread pool is limited to one thread when this package is imported.
"""

import scipy.linalg  # noqa: F401  (load every BLAS library before limiting them)

try:
    from threadpoolctl import threadpool_limits

    threadpool_limits(limits=1, user_api="blas")
except ImportError:  # pragma: no cover - threadpoolctl is a declared dependency
    pass

from sub60.physics.design import Design  # noqa: E402
from sub60.physics.electrostatics import Electrostatics, solve_electrostatics  # noqa: E402
from sub60.physics.simulate import (  # noqa: E402
    BiasPoint,
    Simulator,
    output_curve,
    solve_bias,
    transfer_curve,
)

__all__ = ["BiasPoint", "Design", "Electrostatics", "Simulator", "output_curve", "solve_bias",
           "solve_electrostatics", "transfer_curve"]

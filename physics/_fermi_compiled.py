"""Compiled (numba) kernels of the Fermi–Dirac integrals and of the carrier densities.

`log_pair_kernel` evaluates the spline logarithms of F_1/2 and F_-1/2 together, with the
same formulas and tables as `sub60.physics.statistics` (the tables are built there and
handed over as arguments); `densities_log_kernel` does the same for eq. (3) of
`sub60.physics.poisson` with a `BandParameters` of numbers (no heterojunction, no
interface node): eta_n, eta_p and the four logarithms in one pass over the grid. The
exponential is then numpy's (vectorised) exp of the whole buffer, and the Sommerfeld
series above the table is the reference's own code, so that every value equals the numpy
path's bit for bit: the kernels do each floating-point operation of the reference in its
order, only without the temporaries, the np.take/np.moveaxis table look-up and the
separate passes over the grid.

Imported on the first carrier-density evaluation, not with the package, because loading
numba takes ~0.2 s. The numpy paths (`statistics.fermi_half_and_minus_half`,
`BandParameters.densities_reference`) are the reference the kernels are tested against
(tests/physics/test_fermi_compiled.py).
"""

from __future__ import annotations

import numba as _nb
import numpy as np

from sub60.physics.statistics import _ETA_HIGH, _ETA_LOW, _STEPS_PER_UNIT, _orders


@_nb.njit(cache=True, nogil=True, inline="always")
def _log_spline(eta, table):  # pragma: no cover
    """ln F_j at eta by the cubic spline, with ln F_j = eta + const below the table
    (`statistics._FermiIntegral.evaluate` up to its exp); NaN for NaN. Above the table
    the value is that of its end (the caller replaces it by the Sommerfeld series)."""
    position = eta if eta >= _ETA_LOW else _ETA_LOW  # NaN -> the low end, as np.fmax
    if position > _ETA_HIGH:
        position = _ETA_HIGH
    position -= _ETA_LOW
    position *= _STEPS_PER_UNIT
    index = int(position)
    u = position - index
    below = eta - _ETA_LOW
    if below > 0.0:  # np.minimum(eta - low, 0): NaN stays NaN
        below = 0.0
    value = table[index, 3] * u
    value += table[index, 2]
    value *= u
    value += table[index, 1]
    value *= u
    value += table[index, 0]
    value += below
    return value


@_nb.njit(cache=True, nogil=True)
def log_pair_kernel(eta, table_half, table_minus_half, logs):  # pragma: no cover
    """ln F_1/2 and ln F_-1/2 by the spline of a 1D array eta [-] into logs (2, eta.size);
    returns the number of eta above the table (> 25, or +inf)."""
    high = 0
    for k in range(eta.size):
        logs[0, k] = _log_spline(eta[k], table_half)
        logs[1, k] = _log_spline(eta[k], table_minus_half)
        if eta[k] > _ETA_HIGH:
            high += 1
    return high


@_nb.njit(cache=True, nogil=True)
def densities_log_kernel(psi, efn, efp, chi, eg, kt, dec, dev, table_half,
                         table_minus_half):  # pragma: no cover
    """eta_n, eta_p (2, rows, cols) [-] of eq. (3) and the spline logarithms (4, rows, cols)
    of F_1/2(eta_n), F_-1/2(eta_n), F_1/2(eta_p), F_-1/2(eta_p), and the number of eta
    above the table.

    psi, efn, efp are 2D arrays whose each dimension is the grid's or 1 (broadcast);
    the material parameters are numbers.
    """
    rows = max(psi.shape[0], efn.shape[0], efp.shape[0])
    cols = max(psi.shape[1], efn.shape[1], efp.shape[1])
    eta = np.empty((2, rows, cols))
    logs = np.empty((4, rows, cols))
    high = 0
    for i in range(rows):
        ip = i if psi.shape[0] > 1 else 0
        i_n = i if efn.shape[0] > 1 else 0
        i_p = i if efp.shape[0] > 1 else 0
        for j in range(cols):
            ps = psi[ip, j if psi.shape[1] > 1 else 0]
            ec = -chi - ps + dec
            ev = -chi - eg - ps - dev
            eta_n = (efn[i_n, j if efn.shape[1] > 1 else 0] - ec) / kt
            eta_p = (ev - efp[i_p, j if efp.shape[1] > 1 else 0]) / kt
            eta[0, i, j] = eta_n
            eta[1, i, j] = eta_p
            logs[0, i, j] = _log_spline(eta_n, table_half)
            logs[1, i, j] = _log_spline(eta_n, table_minus_half)
            logs[2, i, j] = _log_spline(eta_p, table_half)
            logs[3, i, j] = _log_spline(eta_p, table_minus_half)
            if eta_n > _ETA_HIGH:
                high += 1
            if eta_p > _ETA_HIGH:
                high += 1
    return eta, logs, high


def _pair_from_logs(eta: np.ndarray, logs: np.ndarray, high: int
                    ) -> tuple[np.ndarray, np.ndarray]:
    """F_1/2 and F_-1/2 from the spline logarithms (2, ...) of `eta`: numpy's exp (the
    reference's, so the values are its own bit for bit) and the reference's Sommerfeld
    series above the table."""
    values = np.exp(logs, out=logs)
    if high:
        above = eta > _ETA_HIGH
        half, minus_half = _orders()
        values[0][above] = half._sommerfeld(eta[above])
        values[1][above] = minus_half._sommerfeld(eta[above])
    return values[0], values[1]


def fermi_half_and_minus_half_compiled(eta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """F_1/2 and F_-1/2 of an array eta [-] by the kernel, each of the shape of `eta`."""
    x = np.ascontiguousarray(eta, dtype=float)
    flat = x.reshape(-1)
    half, minus_half = _orders()
    logs = np.empty((2, flat.size))
    high = log_pair_kernel(flat, half.table, minus_half.table, logs)
    f_half, f_minus_half = _pair_from_logs(flat, logs, high)
    return f_half.reshape(x.shape), f_minus_half.reshape(x.shape)


def _as_2d(values: np.ndarray) -> np.ndarray:
    """A view of an array of at most two dimensions with leading 1s up to two."""
    return values.reshape((1,) * (2 - values.ndim) + values.shape)


def densities_compiled(chi: float, eg: float, nc: float, nv: float, kt: float, dec: float,
                       dev: float, psi_V: np.ndarray, efn_eV: np.ndarray, efp_eV: np.ndarray
                       ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray] | None:
    """n, p, dn/dpsi, dp/dpsi of eq. (3) with scalar parameters, of the broadcast shape of
    psi, efn and efp; None when that shape has more than two dimensions (the caller then
    takes the numpy path)."""
    psi = np.asarray(psi_V, dtype=float)
    efn = np.asarray(efn_eV, dtype=float)
    efp = np.asarray(efp_eV, dtype=float)
    shape = np.broadcast_shapes(psi.shape, efn.shape, efp.shape)
    if len(shape) > 2:
        return None
    half, minus_half = _orders()
    eta, logs, high = densities_log_kernel(_as_2d(psi), _as_2d(efn), _as_2d(efp), chi, eg, kt,
                                           dec, dev, half.table, minus_half.table)
    values = np.exp(logs, out=logs)
    if high:  # the Sommerfeld series of the reference above the table
        for k in range(2):
            above = eta[k] > _ETA_HIGH
            if above.any():
                values[2 * k][above] = half._sommerfeld(eta[k][above])
                values[2 * k + 1][above] = minus_half._sommerfeld(eta[k][above])
    fn, fn1, fp, fp1 = values
    n = nc * fn
    p = nv * fp
    dn = nc * fn1 / kt
    dp = -nv * fp1 / kt
    if not shape:  # numbers in, numbers out, as the numpy path
        return float(n[0, 0]), float(p[0, 0]), float(dn[0, 0]), float(dp[0, 0])
    return n.reshape(shape), p.reshape(shape), dn.reshape(shape), dp.reshape(shape)

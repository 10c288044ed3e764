"""Compiled (numba) kernels of the Fermi–Dirac integrals and of the carrier densities.

`fermi_pair_kernel` evaluates F_1/2 and F_-1/2 together with the same formulas, spline
tables and Sommerfeld coefficients as `sub60.physics.statistics` (the tables are built
there and handed over as arguments); `densities_kernel` is eq. (3) of
`sub60.physics.poisson` for a `BandParameters` of numbers (no heterojunction, no
interface node): eta_n, eta_p, n, p, dn/dpsi, dp/dpsi in one pass over the grid.

Imported on the first carrier-density evaluation, not with the package, because loading
numba takes ~0.2 s. The numpy paths (`statistics.fermi_half_and_minus_half`,
`BandParameters.densities` with arrays) are the reference the kernels are tested against
(tests/physics/test_fermi_compiled.py); each operation follows the reference's order, so
the results agree to a few units in the last place (only exp and pow may round
differently from numpy's vectorised versions).
"""

from __future__ import annotations

import numba as _nb
import numpy as np

from sub60.physics.statistics import _ETA_HIGH, _ETA_LOW, _STEPS_PER_UNIT, _orders


@_nb.njit(cache=True, nogil=True, inline="always")
def _log_spline(eta, table):  # pragma: no cover
    """exp of the cubic spline of ln F_j at eta, with ln F_j = eta + const below the table
    (`statistics._FermiIntegral.evaluate`); NaN for NaN."""
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
    return np.exp(value)


@_nb.njit(cache=True, nogil=True, inline="always")
def _sommerfeld_sum(eta, coefficients):  # pragma: no cover
    """(w, 1 + sum_n a_n w^n / w) of the Sommerfeld series, w = 1/eta^2 (Horner, the
    reference's order): returns w and the Horner total."""
    r = 1.0 / eta
    w = r * r
    m = coefficients.size
    total = coefficients[m - 1]
    for k in range(m - 2, -1, -1):
        total = coefficients[k] + w * total
    return w, total


@_nb.njit(cache=True, nogil=True, inline="always")
def _fermi_pair(eta, table_half, table_minus_half, sommerfeld_half, sommerfeld_minus_half,
                prefactor_half, prefactor_minus_half):  # pragma: no cover
    """(F_1/2(eta), F_-1/2(eta)) [-]: the spline below eta = 25, Sommerfeld above it."""
    if eta > _ETA_HIGH:
        w, total = _sommerfeld_sum(eta, sommerfeld_half)
        half = prefactor_half * eta ** 1.5 * (1.0 + w * total)
        w, total = _sommerfeld_sum(eta, sommerfeld_minus_half)
        minus_half = prefactor_minus_half * np.sqrt(eta) * (1.0 + w * total)
        return half, minus_half
    return _log_spline(eta, table_half), _log_spline(eta, table_minus_half)


@_nb.njit(cache=True, nogil=True)
def fermi_pair_kernel(eta, table_half, table_minus_half, sommerfeld_half,
                      sommerfeld_minus_half, prefactor_half,
                      prefactor_minus_half):  # pragma: no cover
    """F_1/2 and F_-1/2 of a 1D array eta [-] (two new arrays of its size)."""
    half = np.empty(eta.size)
    minus_half = np.empty(eta.size)
    for k in range(eta.size):
        half[k], minus_half[k] = _fermi_pair(
            eta[k], table_half, table_minus_half, sommerfeld_half, sommerfeld_minus_half,
            prefactor_half, prefactor_minus_half)
    return half, minus_half


@_nb.njit(cache=True, nogil=True)
def densities_kernel(psi, efn, efp, chi, eg, nc, nv, kt, dec, dev, table_half,
                     table_minus_half, sommerfeld_half, sommerfeld_minus_half, prefactor_half,
                     prefactor_minus_half):  # pragma: no cover
    """n, p [cm^-3], dn/dpsi, dp/dpsi [cm^-3/V] on a 2D grid, eq. (3) of `poisson`.

    psi, efn, efp are 2D arrays whose each dimension is the grid's or 1 (broadcast);
    the material parameters are numbers. Returns four (rows, cols) arrays.
    """
    rows = max(psi.shape[0], efn.shape[0], efp.shape[0])
    cols = max(psi.shape[1], efn.shape[1], efp.shape[1])
    n = np.empty((rows, cols))
    p = np.empty((rows, cols))
    dn = np.empty((rows, cols))
    dp = np.empty((rows, cols))
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
            fn, fn1 = _fermi_pair(eta_n, table_half, table_minus_half, sommerfeld_half,
                                  sommerfeld_minus_half, prefactor_half, prefactor_minus_half)
            fp, fp1 = _fermi_pair(eta_p, table_half, table_minus_half, sommerfeld_half,
                                  sommerfeld_minus_half, prefactor_half, prefactor_minus_half)
            n[i, j] = nc * fn
            p[i, j] = nv * fp
            dn[i, j] = nc * fn1 / kt
            dp[i, j] = -nv * fp1 / kt
    return n, p, dn, dp


def _table_arguments() -> tuple:
    """The statistics module's tables and Sommerfeld coefficients, as kernel arguments."""
    half, minus_half = _orders()
    return (half.table, minus_half.table, half.sommerfeld, minus_half.sommerfeld,
            float(half.sommerfeld_prefactor), float(minus_half.sommerfeld_prefactor))


def fermi_half_and_minus_half_compiled(eta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """F_1/2 and F_-1/2 of an array eta [-] by the kernel, each of the shape of `eta`."""
    x = np.ascontiguousarray(eta, dtype=float)
    half, minus_half = fermi_pair_kernel(x.reshape(-1), *_table_arguments())
    return half.reshape(x.shape), minus_half.reshape(x.shape)


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
    out = densities_kernel(_as_2d(psi), _as_2d(efn), _as_2d(efp), chi, eg, nc, nv, kt, dec,
                           dev, *_table_arguments())
    if not shape:  # numbers in, numbers out, as the numpy path
        return tuple(float(a[0, 0]) for a in out)
    return tuple(a.reshape(shape) for a in out)

"""Fermi–Dirac statistics: the normalised Fermi–Dirac integrals of order 1/2, -1/2 and 0.

The normalised complete Fermi–Dirac integral of order j is

    F_j(eta) = 1/Gamma(j+1) * int_0^inf t^j / (exp(t - eta) + 1) dt = -Li_{j+1}(-exp(eta)),

with Li_s the polylogarithm (NIST DLMF §25.12, the Fermi–Dirac integral as a polylogarithm),
and dF_j/deta = F_{j-1}. The reduced Fermi level eta = (E_F - E_c)/kT is dimensionless, and
so is F_j. In a parabolic band the electron density is n = N_c F_{1/2}(eta).

How the integrals are evaluated (relative error ~1e-10 on [-40, 80]; see the tests):

* -40 <= eta <= 25: a cubic spline of ln F_j on a uniform table with step 1/40. The
  table is computed on first use (not at import) by the trapezoidal rule after the
  substitution t = x^2, which turns the integrand into an even function of x, analytic
  in a strip around the real axis, on which the trapezoidal rule converges
  geometrically (Trefethen & Weideman, SIAM Rev. 56, 385 (2014)).
* eta < -40: F_j = exp(eta), the first term of the series
  sum_k (-1)^(k+1) exp(k eta) / k^(j+1) of -Li_{j+1}(-exp(eta)) (DLMF §25.12); the
  second term is below 2e-18 relative.
* eta > 25: the Sommerfeld expansion
  F_j = eta^(j+1)/Gamma(j+2) * [1 + sum_n 2(1 - 2^(1-2n)) zeta(2n) (j+1)j...(j+2-2n)
  eta^(-2n)], eight terms; the exponentially small remainder (of order exp(-eta)) is
  dropped (Blakemore, Semiconductor Statistics, Pergamon 1962, appendix; from memory).

One evaluation is a handful of whole-array numpy operations (a table look-up, a cubic
and an exponential), because these functions sit inside Newton loops on whole grids.
"""

from __future__ import annotations

import math
import threading

import numpy as np
import numpy.typing as npt
from scipy.special import expit, gamma, zeta

ArrayLike = npt.ArrayLike
FloatOrArray = float | np.ndarray

# Limits of the tabulated range of eta [-]. Below it F_j = exp(eta) to double precision
# (the next series term is exp(eta)/2^(j+1) < 2e-18 relative); above it the Sommerfeld
# remainder is of order exp(-25) ~ 1e-11 relative.
_ETA_LOW = -40.0
_ETA_HIGH = 25.0
_STEPS_PER_UNIT = 40  # table spacing 1/40 in eta [-]
_SOMMERFELD_TERMS = 8


def _quadrature(eta: np.ndarray, order: float) -> np.ndarray:
    """F_j(eta) by the trapezoidal rule in x, t = x^2 (accurate to ~1e-15 relative).

    int_0^inf t^j f(t) dt = int_0^inf 2 x^(2j+1) f(x^2) dx; for j = 1/2 and j = -1/2 the
    integrand is even in x and decays like exp(-x^2), so the half-line trapezoidal sum
    with the end weight 1/2 at x = 0 is spectrally accurate. The nearest poles of the
    Fermi factor lie at x^2 = eta + i pi, a distance >= 0.3 from the real axis for
    eta <= 25, so the step 0.04 leaves an error of order exp(-2 pi 0.3/0.04) ~ 1e-20.
    """
    step = 0.04
    x_max = math.sqrt(max(float(eta.max()), 0.0) + 60.0)  # exp(-60) tail dropped
    x = np.arange(0.0, x_max + step, step)
    weights = np.full(x.size, step)
    weights[0] = step / 2.0
    occupation = expit(eta[:, None] - x[None, :] ** 2)  # 1/(exp(x^2 - eta) + 1)
    integrand = 2.0 * x ** (2.0 * order + 1.0) * occupation
    return integrand @ weights / gamma(order + 1.0)


def _log_spline_table(order: float) -> np.ndarray:
    """Cubic-spline coefficients of ln F_j on the uniform table, one row per interval.

    Row k holds (a0, a1, a2, a3) of the local polynomial a0 + a1 u + a2 u^2 + a3 u^3,
    u in [0, 1] the position inside interval k. A last row repeats the end value, so
    that eta = _ETA_HIGH (u = 0 past the last interval) needs no special case.
    """
    n_intervals = round((_ETA_HIGH - _ETA_LOW) * _STEPS_PER_UNIT)
    nodes = np.linspace(_ETA_LOW, _ETA_HIGH, n_intervals + 1)
    from scipy.interpolate import CubicSpline  # loaded with the first table, not at import

    log_values = np.log(_quadrature(nodes, order))
    c3, c2, c1, c0 = CubicSpline(nodes, log_values, bc_type="not-a-knot").c
    h = 1.0 / _STEPS_PER_UNIT
    table = np.zeros((n_intervals + 1, 4))
    table[:-1] = np.column_stack([c0, c1 * h, c2 * h**2, c3 * h**3])
    table[-1, 0] = log_values[-1]
    return table


def _sommerfeld_coefficients(order: float) -> np.ndarray:
    """a_n in F_j = eta^(j+1)/Gamma(j+2) (1 + sum_n a_n eta^(-2n)), n = 1..N."""
    coefficients = []
    falling = 1.0
    for n in range(1, _SOMMERFELD_TERMS + 1):
        # (j+1) j ... (j+2-2n): two more factors of the falling factorial per n
        falling *= (order + 1.0 - (2 * n - 2)) * (order + 1.0 - (2 * n - 1))
        coefficients.append(2.0 * (1.0 - 2.0 ** (1 - 2 * n)) * zeta(2 * n) * falling)
    return np.array(coefficients)


class _FermiIntegral:
    """One order j: its spline table and Sommerfeld coefficients (built once, on first use)."""

    def __init__(self, order: float) -> None:
        self.order = order
        self.table = _log_spline_table(order)
        self.sommerfeld = _sommerfeld_coefficients(order)
        self.sommerfeld_prefactor = 1.0 / gamma(order + 2.0)

    def _sommerfeld(self, eta: np.ndarray) -> np.ndarray:
        w = (1.0 / eta) ** 2
        total = np.full_like(eta, self.sommerfeld[-1])
        for coefficient in self.sommerfeld[-2::-1]:
            total = coefficient + w * total
        return self.sommerfeld_prefactor * eta ** (self.order + 1.0) * (1.0 + w * total)

    def evaluate(self, grid: _TablePosition) -> np.ndarray:
        """F_j at the points described by `grid` (an array of at least one dimension)."""
        a0, a1, a2, a3 = np.moveaxis(np.take(self.table, grid.index, axis=0), -1, 0)
        u = grid.local
        log_value = a3 * u
        log_value += a2
        log_value *= u
        log_value += a1
        log_value *= u
        log_value += a0
        log_value += grid.below  # ln F_j = eta + const below the table
        out = np.exp(log_value, out=log_value)
        if grid.high.any():
            out[grid.high] = self._sommerfeld(grid.eta[grid.high])
        return out


class _TablePosition:
    """Where each eta falls in the table; shared by the orders evaluated at one eta."""

    def __init__(self, eta: np.ndarray) -> None:
        self.eta = eta
        # fmax/fmin drop NaN, so the index is always valid; NaN survives in `below`.
        position = np.fmin(np.fmax(eta, _ETA_LOW), _ETA_HIGH)
        position -= _ETA_LOW
        position *= _STEPS_PER_UNIT
        self.index = position.astype(np.intp)
        self.local = position - self.index
        # eta - _ETA_LOW below the table, 0 inside and above it, NaN for NaN:
        self.below = np.minimum(eta - _ETA_LOW, 0.0)
        self.high = eta > _ETA_HIGH


_F_HALF: _FermiIntegral | None = None
_F_MINUS_HALF: _FermiIntegral | None = None
_TABLE_LOCK = threading.Lock()


def _orders() -> tuple[_FermiIntegral, _FermiIntegral]:
    """F_1/2 and F_-1/2, their tables built on the first call (thread-safe)."""
    global _F_HALF, _F_MINUS_HALF
    if _F_MINUS_HALF is None:
        with _TABLE_LOCK:
            if _F_MINUS_HALF is None:
                _F_HALF = _FermiIntegral(0.5)
                _F_MINUS_HALF = _FermiIntegral(-0.5)  # assigned last: the flag of "built"
    return _F_HALF, _F_MINUS_HALF


def _as_array(values: ArrayLike) -> tuple[np.ndarray, bool]:
    x = np.asarray(values, dtype=float)
    return np.atleast_1d(x), x.ndim == 0


def fermi_half(eta: ArrayLike) -> FloatOrArray:
    """Normalised Fermi–Dirac integral of order 1/2.

    F_{1/2}(eta) = 2/sqrt(pi) int_0^inf sqrt(t) / (exp(t - eta) + 1) dt
    = -Li_{3/2}(-exp(eta)) (NIST DLMF §25.12).

    Parameters
    ----------
    eta : float or array_like
        reduced Fermi level (E_F - E_c)/kT [-].

    Returns
    -------
    float or numpy.ndarray
        F_{1/2}(eta) [-]; float64 array of the shape of `eta`, a float for a scalar.
        Tends to exp(eta) for eta -> -inf and to eta^(3/2)/Gamma(5/2) for eta -> +inf.

    Notes
    -----
    Relative error below 1e-8 on [-40, 80] against mpmath's polylogarithm (tests); finite
    and positive on [-700, 1e4], zero below about -745 (underflow). NaN in, NaN out.
    """
    x, scalar = _as_array(eta)
    out = _orders()[0].evaluate(_TablePosition(x))
    return float(out[0]) if scalar else out


def fermi_minus_half(eta: ArrayLike) -> FloatOrArray:
    """Normalised Fermi–Dirac integral of order -1/2, the derivative of F_{1/2}.

    F_{-1/2}(eta) = 1/sqrt(pi) int_0^inf t^(-1/2) / (exp(t - eta) + 1) dt
    = dF_{1/2}/deta = -Li_{1/2}(-exp(eta)) (NIST DLMF §25.12).

    Parameters
    ----------
    eta : float or array_like
        reduced Fermi level (E_F - E_c)/kT [-].

    Returns
    -------
    float or numpy.ndarray
        F_{-1/2}(eta) [-]; float64 array of the shape of `eta`, a float for a scalar.
        Tends to exp(eta) for eta -> -inf and to eta^(1/2)/Gamma(3/2) for eta -> +inf.
    """
    x, scalar = _as_array(eta)
    out = _orders()[1].evaluate(_TablePosition(x))
    return float(out[0]) if scalar else out


def fermi_half_and_minus_half(eta: ArrayLike) -> tuple[FloatOrArray, FloatOrArray]:
    """F_{1/2}(eta) and F_{-1/2}(eta) together, sharing the table look-up.

    The same values as `fermi_half` and `fermi_minus_half`, for about 2/3 of the cost
    of the two calls: meant for Newton iterations that need the carrier density and its
    derivative at once.

    Parameters
    ----------
    eta : float or array_like
        reduced Fermi level (E_F - E_c)/kT [-].

    Returns
    -------
    (float or numpy.ndarray, float or numpy.ndarray)
        F_{1/2}(eta) and F_{-1/2}(eta) [-], each of the shape of `eta`.
    """
    x, scalar = _as_array(eta)
    grid = _TablePosition(x)
    f_half, f_minus_half = _orders()
    half = f_half.evaluate(grid)
    minus_half = f_minus_half.evaluate(grid)
    if scalar:
        return float(half[0]), float(minus_half[0])
    return half, minus_half


def fermi_zero(eta: ArrayLike) -> FloatOrArray:
    """Normalised Fermi–Dirac integral of order 0, F_0(eta) = ln(1 + exp(eta)).

    F_0(eta) = int_0^inf 1/(exp(t - eta) + 1) dt = -Li_1(-exp(eta)) (NIST DLMF §25.12,
    with Li_1(z) = -ln(1 - z)). Evaluated as logaddexp(0, eta): no overflow for large eta
    and full relative precision for very negative eta. It is the areal density of a
    two-dimensional subband in units of m kT/(pi hbar^2).

    Parameters
    ----------
    eta : float or array_like
        reduced Fermi level (E_F - E_n)/kT [-].

    Returns
    -------
    float or numpy.ndarray
        F_0(eta) [-]; float64 array of the shape of `eta`, a float for a scalar.
    """
    x = np.asarray(eta, dtype=float)
    with np.errstate(invalid="ignore"):  # NaN in, NaN out, without a warning
        out = np.logaddexp(0.0, x)
    return float(out) if x.ndim == 0 else out


# Joyce & Dixon, Appl. Phys. Lett. 31, 354 (1977): eta = ln r + sum_i A_i r^i, r = F_{1/2}.
# A_1 = 1/sqrt(8) exactly; A_2..A_4 from memory. Only the starting guess uses them.
_JOYCE_DIXON = (1.0 / math.sqrt(8.0), -4.95009e-3, 1.48386e-4, -4.42563e-6)
_JOYCE_DIXON_MAX = 8.0  # F_{1/2} ~ 8 at eta ~ 4.7: switch to the Sommerfeld start above
_NEWTON_MIN = 1e-8  # below, Joyce–Dixon is exact to double precision (error ~ u^3)
_NEWTON_STEPS = 20


def inverse_fermi_half(u: ArrayLike) -> FloatOrArray:
    """Reduced Fermi level eta with F_{1/2}(eta) = u (the inverse of `fermi_half`).

    Starting guess: Joyce & Dixon (1977) for u < 8, eta ~ ln u + sum_i A_i u^i; for
    larger u the inverted leading Sommerfeld terms, eta ~ sqrt(y^2 - pi^2/6) with
    y = (3 sqrt(pi) u / 4)^(2/3). Then Newton steps on ln F_{1/2}(eta) = ln u, with
    d ln F_{1/2}/d eta = F_{-1/2}/F_{1/2}, until the step is below 1e-13 (1 + |eta|).
    For u < 1e-8 the Joyce–Dixon series is already exact to double precision.

    Parameters
    ----------
    u : float or array_like
        value of F_{1/2}, e.g. the carrier density over the effective density of
        states n/N_c [-]; every element finite and > 0.

    Returns
    -------
    float or numpy.ndarray
        eta [-]; float64 array of the shape of `u`, a float for a scalar.
        |F_{1/2}(eta) - u|/u is about 1e-15.

    Raises
    ------
    ValueError
        if any element of `u` is <= 0, NaN or infinite.
    """
    x = np.asarray(u, dtype=float)
    bad = ~(np.isfinite(x) & (x > 0.0))
    if bad.any():
        first_bad = float(x[bad].flat[0]) if x.ndim else float(x)
        raise ValueError(
            "inverse_fermi_half: u = F_1/2(eta) (e.g. n/Nc) must be finite and > 0; "
            f"got {first_bad!r} ({int(bad.sum())} bad value(s))"
        )
    x, scalar = _as_array(x)
    small = x < _JOYCE_DIXON_MAX
    xs = np.where(small, x, 0.0)
    a1, a2, a3, a4 = _JOYCE_DIXON
    joyce_dixon = np.log(np.where(small, x, 1.0)) + xs * (a1 + xs * (a2 + xs * (a3 + xs * a4)))
    y = (0.75 * math.sqrt(math.pi) * np.where(small, _JOYCE_DIXON_MAX, x)) ** (2.0 / 3.0)
    sommerfeld = y * np.sqrt(1.0 - (math.pi**2 / 6.0) * (1.0 / y) ** 2)
    eta = np.where(small, joyce_dixon, sommerfeld)

    refine = x >= _NEWTON_MIN
    if refine.any():
        target = np.log(x[refine])
        guess = eta[refine]
        for _ in range(_NEWTON_STEPS):
            value, slope = fermi_half_and_minus_half(guess)
            step = (np.log(value) - target) * value / slope
            guess = guess - step
            if np.all(np.abs(step) <= 1e-13 * (1.0 + np.abs(guess))):
                break
        eta[refine] = guess
    return float(eta[0]) if scalar else eta

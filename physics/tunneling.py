"""WKB band-to-band tunnelling through the forbidden gap.

For an electron of energy E inside the gap, E_v(x) < E < E_c(x), the wave-vector is
imaginary. Two models:

two-band (Kane) : kappa^2 = (2 m_t / hbar^2) (E_c - E)(E - E_v) / (E_c - E_v)       (1)
    m_t = 2 m_r, m_r the reduced mass of the electron and the hole; for equal
    masses this is the symmetric two-band model whose WKB integral in a uniform field
    gives Kane's exponent pi m_t^1/2 E_g^3/2 / (2 sqrt(2) q hbar F) exactly
    (E. O. Kane, J. Appl. Phys. 32, 83 (1961); Sze & Ng, Physics of Semiconductor
    Devices, 3rd ed., 2007, tunnel-diode section — from memory for the section).
    Unequal masses enter only through m_r (a simplification of Flietner's form,
    phys. stat. sol. (b) 54, 201 (1972)).
one-band (parabolic) : kappa^2 = 2 m_c (E_c - E) / hbar^2                         (2)
    which gives the triangular-barrier exponent 4 sqrt(2 m) E_g^3/2 / (3 q hbar F).

Transmission T = exp(-2 int kappa dx) over every x where the energy lies in the gap
(WKB; the integral runs between the classical turning points). Band edges are taken
linear between grid nodes; on each segment the in-gap part is found exactly and
integrated with 3-point Gauss–Legendre.
"""

from __future__ import annotations

import numpy as np
import scipy.constants as sc

# hbar^2 / (2 m0) [eV nm^2]
HBAR2_2M0_EV_NM2 = sc.hbar**2 / (2 * sc.m_e) / sc.e * 1e18
_GL_X, _GL_W = np.polynomial.legendre.leggauss(3)
MODELS = ("two-band", "one-band")


def kappa_per_nm(
    energy_eV: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray, mass_rel: float,
    model: str = "two-band",
) -> np.ndarray:
    """Imaginary wave-vector inside the gap, eqs. (1)-(2), zero outside [1/nm].

    Parameters
    ----------
    energy_eV : electron energy [eV]; ec_eV, ev_eV : local band edges [eV] (broadcast);
    mass_rel : m_t (two-band) or the conduction mass (one-band) [m0];
    model : "two-band" or "one-band".
    """
    gc = ec_eV - energy_eV
    gv = energy_eV - ev_eV
    inside = (gc > 0) & (gv > 0)
    if model == "two-band":
        arg = gc * gv / np.maximum(ec_eV - ev_eV, 1e-12)
    elif model == "one-band":
        arg = gc
    else:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {MODELS}")
    return np.where(inside, np.sqrt(np.abs(arg) * mass_rel / HBAR2_2M0_EV_NM2), 0.0)


def _positive_interval(g0: np.ndarray, g1: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Sub-interval [lo, hi] of t in [0, 1] where g0 + (g1 - g0) t > 0."""
    with np.errstate(divide="ignore", invalid="ignore"):
        cross = np.clip(g0 / (g0 - g1), 0.0, 1.0)
    lo = np.where(g0 > 0, 0.0, np.where(g1 > 0, cross, 1.0))
    hi = np.where(g0 > 0, np.where(g1 > 0, 1.0, cross), 1.0)
    return lo, hi


def wkb_exponent(
    x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray, energy_eV: np.ndarray,
    mass_rel: float, model: str = "two-band",
) -> np.ndarray:
    """2 int kappa dx over the in-gap part of a path, for each energy [-].

    Parameters
    ----------
    x_nm : (nx,) positions [nm]
    ec_eV, ev_eV : (..., nx) band edges along the path [eV] (leading axes broadcast,
        e.g. one row per transverse wave-vector)
    energy_eV : (nE,) energies [eV]
    mass_rel : tunnelling mass [m0]; model : "two-band" or "one-band"

    Returns
    -------
    (..., nE) WKB exponent (T = exp(-exponent)).
    """
    if model not in MODELS:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {MODELS}")
    x = np.asarray(x_nm, float)
    h = np.diff(x)
    e = np.asarray(energy_eV, float)[:, None]
    ec = np.asarray(ec_eV, float)[..., None, :]
    ev = np.asarray(ev_eV, float)[..., None, :]
    c0, c1 = ec[..., :-1], ec[..., 1:]
    v0, v1 = ev[..., :-1], ev[..., 1:]
    lo_c, hi_c = _positive_interval(c0 - e, c1 - e)
    lo_v, hi_v = _positive_interval(e - v0, e - v1)
    lo = np.maximum(lo_c, lo_v)
    length = np.maximum(np.minimum(hi_c, hi_v) - lo, 0.0)
    total = np.zeros(length.shape[:-1])
    active = length > 0
    if not np.any(active):
        return total
    for xi, wi in zip(_GL_X, _GL_W, strict=True):
        t = lo + 0.5 * (1.0 + xi) * length
        kap = kappa_per_nm(e, c0 + (c1 - c0) * t, v0 + (v1 - v0) * t, mass_rel, model)
        total += np.sum(np.where(active, wi * 0.5 * length * h * kap, 0.0), axis=-1)
    return 2.0 * total


try:  # compiled kernel (numba); the numpy version above is the reference it is tested against
    import numba as _nb
except ImportError:  # pragma: no cover - numba is a declared dependency
    _nb = None

if _nb is not None:

    @_nb.njit(cache=True, nogil=True, inline="always")
    def _segment_integral(c0, c1, v0, v1, h, two_band, gl_x, gl_w):  # pragma: no cover
        """int kappa dx / sqrt(2m/hbar^2) over the in-gap part of one segment, where
        c = E_c - E and v = E - E_v are linear between c0, c1 and v0, v1 [eV^1/2 nm]."""
        if (c0 <= 0 and c1 <= 0) or (v0 <= 0 and v1 <= 0):
            return 0.0
        lo, hi = 0.0, 1.0  # in-gap sub-interval of the segment
        if c0 <= 0:
            lo = max(lo, c0 / (c0 - c1))
        elif c1 <= 0:
            hi = min(hi, c0 / (c0 - c1))
        if v0 <= 0:
            lo = max(lo, v0 / (v0 - v1))
        elif v1 <= 0:
            hi = min(hi, v0 / (v0 - v1))
        length = hi - lo
        if length <= 0:
            return 0.0
        s = 0.0
        for g in range(gl_x.size):
            t = lo + 0.5 * (1.0 + gl_x[g]) * length
            gc = c0 + (c1 - c0) * t
            gv = v0 + (v1 - v0) * t
            if gc <= 0 or gv <= 0:
                continue
            if two_band:
                s += gl_w[g] * np.sqrt(gc * gv / (gc + gv))
            else:
                s += gl_w[g] * np.sqrt(gc)
        return 0.5 * length * h * s

    @_nb.njit(cache=True, nogil=True)
    def _wkb_kernel(x, ec, ev, energies, mass_rel, two_band, gl_x, gl_w, connected_only):  # pragma: no cover
        nk, nx = ec.shape
        ne = energies.size
        out = np.zeros((nk, ne))
        scale = np.sqrt(mass_rel / HBAR2_2M0_EV_NM2)
        for kk in range(nk):
            for ie in range(ne):
                e = energies[ie]
                if connected_only and (e >= ev[kk, 0] or e <= ec[kk, nx - 1]):
                    out[kk, ie] = np.inf  # no path from source valence to drain conduction
                    continue
                acc = 0.0
                for i in range(nx - 1):
                    c0, c1 = ec[kk, i] - e, ec[kk, i + 1] - e
                    v0, v1 = e - ev[kk, i], e - ev[kk, i + 1]
                    acc += _segment_integral(c0, c1, v0, v1, x[i + 1] - x[i], two_band, gl_x, gl_w)
                out[kk, ie] = 2.0 * scale * acc
        return out


def wkb_exponent_fast(
    x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray, energy_eV: np.ndarray,
    mass_rel: float, model: str = "two-band", connected_only: bool = False,
) -> np.ndarray:
    """Same as `wkb_exponent` for (nk, nx) edge arrays, compiled (numba) when available.

    With ``connected_only`` the exponent is +inf (T = 0) for energies that do not lie
    below the valence edge at the path's start and above the conduction edge at its end.
    """
    if model not in MODELS:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {MODELS}")
    ec = np.atleast_2d(np.asarray(ec_eV, float))
    ev = np.atleast_2d(np.asarray(ev_eV, float))
    if _nb is None:
        out = wkb_exponent(x_nm, ec, ev, energy_eV, mass_rel, model)
        if connected_only:
            e = np.asarray(energy_eV, float)[None, :]
            out = np.where((e < ev[:, :1]) & (e > ec[:, -1:]), out, np.inf)
        return out
    return _wkb_kernel(np.ascontiguousarray(x_nm, float), np.ascontiguousarray(ec),
                       np.ascontiguousarray(ev), np.ascontiguousarray(energy_eV, float),
                       float(mass_rel), model == "two-band", _GL_X, _GL_W, bool(connected_only))


if _nb is not None:

    @_nb.njit(cache=True, nogil=True)
    def _wkb_transverse_kernel(x, ec, ev, a, b, kvals, energies, mass_rel, two_band,
                               gl_x, gl_w):  # pragma: no cover
        nk, ne = kvals.shape
        nx = x.size
        out = np.empty((nk, ne))
        scale = np.sqrt(mass_rel / HBAR2_2M0_EV_NM2)
        for kk in range(nk):
            for ie in range(ne):
                e = energies[ie]
                up = a * kvals[kk, ie] ** 2
                down = b * kvals[kk, ie] ** 2
                if e >= ev[0] - down or e <= ec[nx - 1] + up:
                    out[kk, ie] = np.inf
                    continue
                acc = 0.0
                for i in range(nx - 1):
                    c0, c1 = ec[i] + up - e, ec[i + 1] + up - e
                    v0, v1 = e - ev[i] + down, e - ev[i + 1] + down
                    acc += _segment_integral(c0, c1, v0, v1, x[i + 1] - x[i], two_band, gl_x, gl_w)
                out[kk, ie] = 2.0 * scale * acc
        return out


def wkb_exponent_transverse(
    x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray, up_eV_nm2: float, down_eV_nm2: float,
    k_per_nm: np.ndarray, energy_eV: np.ndarray, mass_rel: float, model: str = "two-band",
) -> np.ndarray:
    """WKB exponent with a transverse wave-vector that may differ for every energy.

    The conduction edge is raised by ``up * k^2`` and the valence edge lowered by
    ``down * k^2`` (hbar^2/2m of each band [eV nm^2]); +inf (T = 0) where the energy
    does not lie below the source-end valence edge and above the drain-end conduction
    edge.

    Parameters
    ----------
    x_nm : (nx,) [nm]; ec_eV, ev_eV : (nx,) band edges at k = 0 [eV];
    k_per_nm : (nk, nE) transverse wave-vector of each (node, energy) [1/nm];
    energy_eV : (nE,) [eV]; mass_rel : tunnelling mass [m0]; model : kappa model.

    Returns
    -------
    (nk, nE) exponent.
    """
    if model not in MODELS:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {MODELS}")
    kv = np.atleast_2d(np.asarray(k_per_nm, float))
    e = np.asarray(energy_eV, float)
    ec = np.asarray(ec_eV, float)
    ev = np.asarray(ev_eV, float)
    if _nb is not None:
        return _wkb_transverse_kernel(np.ascontiguousarray(x_nm, float), np.ascontiguousarray(ec),
                                      np.ascontiguousarray(ev), float(up_eV_nm2),
                                      float(down_eV_nm2), np.ascontiguousarray(kv),
                                      np.ascontiguousarray(e), float(mass_rel),
                                      model == "two-band", _GL_X, _GL_W)
    out = np.empty(kv.shape)  # reference path: one energy at a time
    for kk in range(kv.shape[0]):
        for ie in range(e.size):
            ec_k = ec + up_eV_nm2 * kv[kk, ie] ** 2
            ev_k = ev - down_eV_nm2 * kv[kk, ie] ** 2
            if e[ie] >= ev_k[0] or e[ie] <= ec_k[-1]:
                out[kk, ie] = np.inf
            else:
                out[kk, ie] = wkb_exponent(x_nm, ec_k, ev_k, e[ie:ie + 1], mass_rel, model)[0]
    return out

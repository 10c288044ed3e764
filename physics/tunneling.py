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

from sub60.physics.constants import HBAR2_2M0_EV_NM2

_GL_X, _GL_W = np.polynomial.legendre.leggauss(3)
#: The imaginary wave-vector models, eqs. (1) and (2): the names every caller uses.
TUNNELLING_MODELS: tuple[str, ...] = ("two-band", "one-band")


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
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {TUNNELLING_MODELS}")
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
    if model not in TUNNELLING_MODELS:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {TUNNELLING_MODELS}")
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
    if model not in TUNNELLING_MODELS:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {TUNNELLING_MODELS}")
    kv = np.atleast_2d(np.asarray(k_per_nm, float))
    e = np.asarray(energy_eV, float)
    ec = np.asarray(ec_eV, float)
    ev = np.asarray(ev_eV, float)
    kernel = _compiled_kernel()
    if kernel is not None:
        return kernel(np.ascontiguousarray(x_nm, float), np.ascontiguousarray(ec),
                      np.ascontiguousarray(ev), float(up_eV_nm2), float(down_eV_nm2),
                      np.ascontiguousarray(kv), np.ascontiguousarray(e), float(mass_rel),
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


def _compiled_kernel():
    """The numba kernel of `wkb_exponent_transverse`, compiled on first use (so that
    importing this module does not load numba); None when numba is missing."""
    global _KERNEL
    if _KERNEL is None:
        try:
            from sub60.physics._wkb_compiled import wkb_transverse_kernel
        except ImportError:  # pragma: no cover - numba is a declared dependency
            _KERNEL = False
        else:
            _KERNEL = wkb_transverse_kernel
    return _KERNEL or None


_KERNEL = None

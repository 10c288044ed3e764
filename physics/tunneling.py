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

With a transverse wave-vector k (conserved), the two-band dispersion depends on
|k|^2 = k_x^2 + k^2 only, so at a fixed energy

    kappa_x^2(E, k) = kappa_0^2(E) + k^2                                            (3)

with kappa_0 of eq. (1) (continued outside the gap, where it is negative: the bands), the
two-band transverse penalty (E. O. Kane, J. Appl. Phys. 32, 83 (1961), transverse-energy
factor — from memory). In a uniform field it adds exactly pi hbar k^2 Eg^1/2 /
(q F sqrt(2 m_t)) to Kane's exponent (derived: int sqrt(a (c^2 - u^2)) du = pi sqrt(a)
c^2 / 2). Raising and lowering the band edges rigidly by hbar^2 k^2 / 2m instead gives
only half of that penalty at midgap.

Transmission T = exp(-2 int kappa dx) over every x where the energy lies in the gap
(WKB; the integral runs between the classical turning points). Band edges are taken
linear between grid nodes; on each segment the in-gap part is found exactly and
integrated with 3-point Gauss–Legendre.
"""

from __future__ import annotations

import numpy as np

from sub60.physics.constants import HBAR2_2M0_EV_NM2

_GL_X, _GL_W = np.polynomial.legendre.leggauss(3)
#: The WKB imaginary wave-vector models, eqs. (1) and (2).
WKB_MODELS: tuple[str, ...] = ("two-band", "one-band")
#: Every tunnelling model, the names every caller uses: the WKB ones and the exact
#: transmission of the two-band Hamiltonian (`physics.quantum`).
TUNNELLING_MODELS: tuple[str, ...] = (*WKB_MODELS, "two-band-exact")


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
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {WKB_MODELS}")
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
    if model not in WKB_MODELS:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {WKB_MODELS}")
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
    down_shift_eV: np.ndarray | None = None,
) -> np.ndarray:
    """WKB exponent with a transverse wave-vector that may differ for every energy.

    Two-band model: kappa^2 = kappa_0^2(E) + k^2, eq. (3), on the k = 0 edges. One-band
    model: the conduction edge raised by ``up * k^2`` (exactly the same thing for one
    parabolic band). In both, +inf (T = 0) where the energy does not lie below the
    source-end valence edge lowered by ``down * k^2`` and above the drain-end conduction
    edge raised by ``up * k^2`` (hbar^2/2m of each subband [eV nm^2]: the contacts' states
    with that transverse k).

    Parameters
    ----------
    x_nm : (nx,) [nm]; ec_eV, ev_eV : (nx,) band edges at k = 0 [eV];
    k_per_nm : (nk, nE) transverse wave-vector of each (node, energy) [1/nm];
    energy_eV : (nE,) [eV]; mass_rel : tunnelling mass [m0], a number or (nx-1,) one per
    segment (a heterojunction: each segment's material; k is conserved, so
    kappa^2 = kappa_0^2(m_t(x)) + k^2 segment by segment); model : kappa model;
    down_shift_eV : (nk, nE) the source valence edge's transverse shift E_v(0) - E_v(k) of
    each node [eV] (a tabulated, non-parabolic in-plane hole dispersion), used instead of
    ``down * k^2``; None (default): the parabolic shift, on the unchanged compiled path.

    Returns
    -------
    (nk, nE) exponent.
    """
    if model not in WKB_MODELS:
        raise ValueError(f"tunnelling model: {model!r} unknown; allowed {WKB_MODELS}")
    kv = np.atleast_2d(np.asarray(k_per_nm, float))
    e = np.asarray(energy_eV, float)
    ec = np.asarray(ec_eV, float)
    ev = np.asarray(ev_eV, float)
    if down_shift_eV is not None:
        down_shift = np.ascontiguousarray(np.broadcast_to(np.asarray(down_shift_eV, float),
                                                          kv.shape))
    else:
        down_shift = None
    if np.ndim(mass_rel) > 0:
        return _exponent_varying_mass(np.asarray(x_nm, float), ec, ev, float(up_eV_nm2),
                                      float(down_eV_nm2), kv, e, np.asarray(mass_rel, float),
                                      model, down_shift)
    if down_shift is not None:
        return _exponent_shifts(np.asarray(x_nm, float), ec, ev, float(up_eV_nm2) * kv**2,
                                down_shift, kv, e, float(mass_rel), model)
    kernel = _compiled_kernel()
    if kernel is not None:
        return kernel(np.ascontiguousarray(x_nm, float), np.ascontiguousarray(ec),
                      np.ascontiguousarray(ev), float(up_eV_nm2), float(down_eV_nm2),
                      np.ascontiguousarray(kv), np.ascontiguousarray(e), float(mass_rel),
                      model == "two-band", _GL_X, _GL_W)
    k2 = kv**2  # reference path: one energy at a time, the parabolic shifts per node
    return wkb_exponent_shifts_reference(x_nm, ec, ev, float(up_eV_nm2) * k2,
                                         float(down_eV_nm2) * k2, kv, e, float(mass_rel), model)


def _exponent_varying_mass(x, ec, ev, up, down, kv, e, mass_seg, model, down_shift=None):
    """`wkb_exponent_transverse` with one tunnelling mass per segment [-]."""
    if mass_seg.shape != (x.size - 1,):
        raise ValueError(f"mass_rel: {mass_seg.shape} masses for {x.size - 1} segments")
    try:
        from sub60.physics._wkb_compiled import wkb_transverse_kernel_varying
    except ImportError:  # pragma: no cover - numba is a declared dependency
        if down_shift is not None:
            raise
        return wkb_exponent_varying_reference(x, ec, ev, up, down, kv, e, mass_seg, model)
    k2 = kv**2
    return wkb_transverse_kernel_varying(
        np.ascontiguousarray(x), np.ascontiguousarray(ec), np.ascontiguousarray(ev),
        np.ascontiguousarray(up * k2),
        np.ascontiguousarray(down * k2 if down_shift is None else down_shift),
        np.ascontiguousarray(kv), np.ascontiguousarray(e), np.ascontiguousarray(mass_seg),
        model == "two-band", _GL_X, _GL_W)


def _exponent_shifts(x, ec, ev, up_shift, down_shift, kv, e, mass_rel, model):
    """`wkb_exponent_transverse` with every node's transverse edge shifts given [-]:
    the compiled kernel, or one node at a time in plain Python without numba."""
    try:
        from sub60.physics._wkb_compiled import wkb_transverse_kernel_shifts
    except ImportError:  # pragma: no cover - numba is a declared dependency
        return wkb_exponent_shifts_reference(x, ec, ev, up_shift, down_shift, kv, e, mass_rel,
                                             model)
    return wkb_transverse_kernel_shifts(
        np.ascontiguousarray(x), np.ascontiguousarray(ec), np.ascontiguousarray(ev),
        np.ascontiguousarray(up_shift), np.ascontiguousarray(down_shift),
        np.ascontiguousarray(kv), np.ascontiguousarray(e), float(mass_rel),
        model == "two-band", _GL_X, _GL_W)


def wkb_exponent_shifts_reference(
    x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray, up_shift_eV: np.ndarray,
    down_shift_eV: np.ndarray, k_per_nm: np.ndarray, energy_eV: np.ndarray, mass_rel: float,
    model: str = "two-band",
) -> np.ndarray:
    """Plain-Python reference of the exponent with given per-node transverse edge shifts
    ``up_shift_eV``, ``down_shift_eV`` (nk, nE) [eV] (what the compiled kernel is tested
    against); other arguments as `wkb_exponent_transverse` [-]."""
    x = np.asarray(x_nm, float)
    kv = np.atleast_2d(np.asarray(k_per_nm, float))
    e = np.asarray(energy_eV, float)
    ec, ev = np.asarray(ec_eV, float), np.asarray(ev_eV, float)
    up = np.broadcast_to(np.asarray(up_shift_eV, float), kv.shape)
    down = np.broadcast_to(np.asarray(down_shift_eV, float), kv.shape)
    scale = np.sqrt(mass_rel / HBAR2_2M0_EV_NM2)
    out = np.empty(kv.shape)
    for kk in range(kv.shape[0]):
        for ie in range(e.size):
            if e[ie] >= ev[0] - down[kk, ie] or e[ie] <= ec[-1] + up[kk, ie]:
                out[kk, ie] = np.inf
            elif model == "two-band":
                q = kv[kk, ie] ** 2 / scale**2
                out[kk, ie] = 2.0 * scale * sum(
                    segment_integral_transverse(ec[i] - e[ie], ec[i + 1] - e[ie], e[ie] - ev[i],
                                                e[ie] - ev[i + 1], q, x[i + 1] - x[i], _GL_X, _GL_W)
                    for i in range(x.size - 1))
            else:
                out[kk, ie] = wkb_exponent(x, ec + up[kk, ie], ev - down[kk, ie], e[ie:ie + 1],
                                           mass_rel, model)[0]
    return out


def wkb_exponent_varying_reference(
    x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray, up_eV_nm2: float,
    down_eV_nm2: float, k_per_nm: np.ndarray, energy_eV: np.ndarray, mass_seg: np.ndarray,
    model: str = "two-band",
) -> np.ndarray:
    """Plain-Python reference of the per-segment-mass exponent (what the compiled kernel
    is tested against); arguments as `wkb_exponent_transverse` [-]."""
    x = np.asarray(x_nm, float)
    kv = np.atleast_2d(np.asarray(k_per_nm, float))
    e = np.asarray(energy_eV, float)
    ec, ev = np.asarray(ec_eV, float), np.asarray(ev_eV, float)
    scale = np.sqrt(np.asarray(mass_seg, float) / HBAR2_2M0_EV_NM2)
    out = np.empty(kv.shape)
    for kk in range(kv.shape[0]):
        for ie in range(e.size):
            k2 = kv[kk, ie] ** 2
            if e[ie] >= ev[0] - down_eV_nm2 * k2 or e[ie] <= ec[-1] + up_eV_nm2 * k2:
                out[kk, ie] = np.inf
                continue
            acc = 0.0
            for i in range(x.size - 1):
                if model == "two-band":
                    acc += scale[i] * segment_integral_transverse(
                        ec[i] - e[ie], ec[i + 1] - e[ie], e[ie] - ev[i], e[ie] - ev[i + 1],
                        k2 / scale[i] ** 2, x[i + 1] - x[i], _GL_X, _GL_W)
                else:
                    seg = wkb_exponent(x[i:i + 2], ec[i:i + 2] + up_eV_nm2 * k2,
                                       ev[i:i + 2] - down_eV_nm2 * k2, e[ie:ie + 1],
                                       float(mass_seg[i]), model)[0]
                    acc += 0.5 * seg
            out[kk, ie] = 2.0 * acc
    return out


def segment_integral_transverse(c0, c1, v0, v1, q, h, gl_x, gl_w):  # pragma: no cover
    """int sqrt(c v / (c + v) + q) dx over the part of one segment where the argument is
    positive: the two-band kappa with transverse energy q = k^2 hbar^2/(2 m_t) [eV], eq. (3),
    divided by sqrt(2 m_t)/hbar [eV^1/2 nm].

    c = E_c - E and v = E - E_v are linear between c0, c1 and v0, v1 with c + v = E_g > 0,
    so the argument has the sign of the quadratic f(t) = c v + q (c + v); its roots in
    (0, 1) split the segment, and each positive piece gets 3-point Gauss-Legendre. Plain
    Python: the reference path runs it as is, `physics._wkb_compiled` compiles it.

    A segment inside the gap at both ends (c and v positive there, hence on the whole
    segment, and q >= 0) has f > 0 throughout: it is one piece, integrated at once with
    the same arithmetic as the general path's piece [0, 1].
    """
    dc, dv = c1 - c0, v1 - v0
    if c0 > 0.0 and c1 > 0.0 and v0 > 0.0 and v1 > 0.0 and q >= 0.0:
        s = 0.0
        for g in range(gl_x.size):
            t = 0.0 + 0.5 * (1.0 + gl_x[g]) * 1.0
            gc = c0 + dc * t
            gv = v0 + dv * t
            arg = gc * gv / (gc + gv) + q
            if arg > 0.0:
                s += gl_w[g] * np.sqrt(arg)
        return 0.0 + 0.5 * 1.0 * h * s
    qa = dc * dv
    qb = c0 * dv + v0 * dc + q * (dc + dv)
    qc = c0 * v0 + q * (c0 + v0)
    r1, r2 = 2.0, 2.0  # roots in (0, 1), or 2 (none)
    if qa != 0.0:
        disc = qb * qb - 4.0 * qa * qc
        if disc > 0.0:
            sq = np.sqrt(disc)
            w = -0.5 * (qb + sq if qb >= 0.0 else qb - sq)
            ra = w / qa
            rb = qc / w if w != 0.0 else 2.0
            r1, r2 = min(ra, rb), max(ra, rb)
    elif qb != 0.0:
        r1 = -qc / qb
    if not 0.0 < r1 < 1.0:
        r1 = 2.0
    if not 0.0 < r2 < 1.0:
        r2 = 2.0
    if r2 < r1:
        r1, r2 = r2, r1
    total = 0.0
    lo = 0.0
    for hi in (r1, r2, 1.0):
        if hi > 1.0:
            continue
        length = hi - lo
        if length > 0.0:
            tm = lo + 0.5 * length
            if (c0 + dc * tm) * (v0 + dv * tm) + q * (c0 + v0 + (dc + dv) * tm) > 0.0:
                s = 0.0
                for g in range(gl_x.size):
                    t = lo + 0.5 * (1.0 + gl_x[g]) * length
                    gc = c0 + dc * t
                    gv = v0 + dv * t
                    arg = gc * gv / (gc + gv) + q
                    if arg > 0.0:
                        s += gl_w[g] * np.sqrt(arg)
                total += 0.5 * length * h * s
        lo = hi
    return total


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

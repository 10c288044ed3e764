"""Compiled (numba) kernel of `sub60.physics.tunneling.wkb_exponent_transverse`.

Imported on the first tunnelling calculation, not with the package, because loading
numba takes ~0.2 s. The plain-numpy `wkb_exponent` is the reference it is tested
against (tests/physics/test_tunneling.py).
"""

from __future__ import annotations

import numba as _nb
import numpy as np

from sub60.physics.constants import HBAR2_2M0_EV_NM2
from sub60.physics.tunneling import segment_integral_transverse

_segment_integral_transverse = _nb.njit(cache=True, nogil=True)(segment_integral_transverse)

#: [eV] margin of the segment test `_outside`: a segment whose conduction (or valence)
#: side lies deeper than q + this inside the band at both ends adds exactly 0.0
_OUTSIDE_MARGIN_EV = 1e-9


@_nb.njit(cache=True, nogil=True, inline="always")
def _outside(c0, c1, v0, v1, q):  # pragma: no cover
    """True when kappa^2 = c v / (c + v) + q is negative on the whole segment, so that
    `segment_integral_transverse` returns exactly 0.0 there and need not run.

    With c + v > 0: c v + q (c + v) = (c + q)(v + q) - q^2, which is below -q^2 - margin
    (v + q) wherever c <= -q - margin (and the same with c and v exchanged); c and v are
    linear on the segment, so their ends bound them. The margin keeps the test far from
    round-off, so skipping changes no bit of the exponent (tested against the unskipped
    sum in tests/physics/test_tunneling.py)."""
    lim = -q - _OUTSIDE_MARGIN_EV
    return (c0 <= lim and c1 <= lim) or (v0 <= lim and v1 <= lim)


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


@_nb.njit(cache=True, nogil=True, inline="always")
def _node_exponent(x, ec, ev, e, kv, up, down, scale, two_band, gl_x, gl_w):  # pragma: no cover
    """The exponent of one (k, E) node: +inf outside the contacts' states (the drain
    conduction edge raised by ``up``, the source valence edge lowered by ``down`` [eV]),
    else 2 int kappa dx (two-band: kappa^2 = kappa_0^2 + k^2; one-band: the edges
    shifted rigidly)."""
    nx = x.size
    if e >= ev[0] - down or e <= ec[nx - 1] + up:
        return np.inf
    acc = 0.0
    if two_band:  # kappa^2 = kappa_0^2 + k^2 on the k = 0 edges (tunneling eq. (3))
        q = kv ** 2 / scale**2
        for i in range(nx - 1):
            c0, c1, v0, v1 = ec[i] - e, ec[i + 1] - e, e - ev[i], e - ev[i + 1]
            if _outside(c0, c1, v0, v1, q):
                continue
            acc += _segment_integral_transverse(c0, c1, v0, v1, q, x[i + 1] - x[i], gl_x, gl_w)
    else:  # one band: the rigid edge shift is exact
        for i in range(nx - 1):
            c0, c1 = ec[i] + up - e, ec[i + 1] + up - e
            v0, v1 = e - ev[i] + down, e - ev[i + 1] + down
            acc += _segment_integral(c0, c1, v0, v1, x[i + 1] - x[i], False, gl_x, gl_w)
    return 2.0 * scale * acc


@_nb.njit(cache=True, nogil=True)
def wkb_transverse_kernel(x, ec, ev, a, b, kvals, energies, mass_rel, two_band,
                          gl_x, gl_w):  # pragma: no cover
    """(nk, nE) WKB exponents, parabolic transverse shifts a k^2 (conduction) and b k^2
    (valence); see `wkb_exponent_transverse` for the arguments.

    Two-band: one energy at a time, segment by segment, every transverse k of that
    energy together (`_two_band_column`). One-band: node by node (`_node_exponent`)."""
    nk, ne = kvals.shape
    out = np.empty((nk, ne))
    scale = np.sqrt(mass_rel / HBAR2_2M0_EV_NM2)
    if two_band:
        _two_band_column(x, ec, ev, a, b, kvals, energies, scale, gl_x, gl_w, out)
        return out
    for kk in range(nk):
        for ie in range(ne):
            kv = kvals[kk, ie]
            out[kk, ie] = _node_exponent(x, ec, ev, energies[ie], kv, a * kv ** 2, b * kv ** 2,
                                         scale, two_band, gl_x, gl_w)
    return out


@_nb.njit(cache=True, nogil=True)
def wkb_transverse_kernel_shifts(x, ec, ev, up, down, kvals, energies, mass_rel, two_band,
                                 gl_x, gl_w):  # pragma: no cover
    """(nk, nE) WKB exponents with the transverse edge shifts of every node given,
    ``up`` and ``down`` (nk, nE) [eV] (a tabulated in-plane dispersion); see
    `wkb_exponent_transverse`."""
    nk, ne = kvals.shape
    out = np.empty((nk, ne))
    scale = np.sqrt(mass_rel / HBAR2_2M0_EV_NM2)
    for kk in range(nk):
        for ie in range(ne):
            out[kk, ie] = _node_exponent(x, ec, ev, energies[ie], kvals[kk, ie], up[kk, ie],
                                         down[kk, ie], scale, two_band, gl_x, gl_w)
    return out


@_nb.njit(cache=True, nogil=True)
def wkb_transverse_kernel_varying(x, ec, ev, up, down, kvals, energies, mass_seg, two_band,
                                  gl_x, gl_w):  # pragma: no cover
    """(nk, nE) WKB exponents with one tunnelling mass per segment (a heterojunction);
    see `wkb_exponent_transverse`. The transverse k is conserved: on segment i,
    kappa^2 = kappa_0^2(m_i) + k^2 (two-band); ``up``, ``down`` (nk, nE) are the contacts'
    transverse edge shifts of each node [eV] (parabolic: a k^2 and b k^2 with the
    contacts' masses)."""
    nk, ne = kvals.shape
    nx = x.size
    out = np.empty((nk, ne))
    scale = np.sqrt(mass_seg / HBAR2_2M0_EV_NM2)
    for kk in range(nk):
        for ie in range(ne):
            e = energies[ie]
            k2 = kvals[kk, ie] ** 2
            u = up[kk, ie]
            dn = down[kk, ie]
            if e >= ev[0] - dn or e <= ec[nx - 1] + u:
                out[kk, ie] = np.inf
                continue
            acc = 0.0
            for i in range(nx - 1):
                if two_band:
                    c0, c1, v0, v1 = ec[i] - e, ec[i + 1] - e, e - ev[i], e - ev[i + 1]
                    q = k2 / scale[i] ** 2
                    if _outside(c0, c1, v0, v1, q):
                        continue
                    acc += scale[i] * _segment_integral_transverse(
                        c0, c1, v0, v1, q, x[i + 1] - x[i], gl_x, gl_w)
                else:
                    c0, c1 = ec[i] + u - e, ec[i + 1] + u - e
                    v0, v1 = e - ev[i] + dn, e - ev[i + 1] + dn
                    acc += scale[i] * _segment_integral(c0, c1, v0, v1, x[i + 1] - x[i], False,
                                                        gl_x, gl_w)
            out[kk, ie] = 2.0 * acc
    return out


@_nb.njit(cache=True, nogil=True)
def _two_band_column(x, ec, ev, a, b, kvals, energies, scale, gl_x, gl_w,
                     out):  # pragma: no cover
    """The two-band exponents of `wkb_transverse_kernel` into ``out`` (nk, nE), with the
    same bits as `_node_exponent` node by node: each node's sum runs over the same
    segments in the same order and adds the same numbers.

    The nodes of one energy share c = E_c - E and v = E - E_v and differ only in q. On a
    segment inside the gap at both ends, the Gauss points' c v / (c + v) are therefore
    computed once for all of them (the in-gap branch of `segment_integral_transverse`,
    whose arithmetic this repeats); other segments go through the skip test and
    `segment_integral_transverse` node by node."""
    nk, ne = kvals.shape
    nx = x.size
    ng = gl_x.size
    acc = np.empty(nk)
    qs = np.empty(nk)
    live = np.empty(nk, np.bool_)
    tg = np.empty(ng)
    p = np.empty(ng)
    for g in range(ng):
        tg[g] = 0.0 + 0.5 * (1.0 + gl_x[g]) * 1.0
    for ie in range(ne):
        e = energies[ie]
        any_live = False
        for kk in range(nk):
            kv = kvals[kk, ie]
            # outside the contacts' states: +inf, as in `_node_exponent`
            live[kk] = not (e >= ev[0] - b * kv ** 2 or e <= ec[nx - 1] + a * kv ** 2)
            any_live = any_live or live[kk]
            qs[kk] = kv ** 2 / scale**2
            acc[kk] = 0.0
        if any_live:
            for i in range(nx - 1):
                c0, c1, v0, v1 = ec[i] - e, ec[i + 1] - e, e - ev[i], e - ev[i + 1]
                h = x[i + 1] - x[i]
                if c0 > 0.0 and c1 > 0.0 and v0 > 0.0 and v1 > 0.0:
                    dc, dv = c1 - c0, v1 - v0
                    for g in range(ng):
                        gc = c0 + dc * tg[g]
                        gv = v0 + dv * tg[g]
                        p[g] = gc * gv / (gc + gv)
                    for kk in range(nk):
                        q = qs[kk]
                        if not live[kk]:
                            continue
                        if q >= 0.0:
                            s = 0.0
                            for g in range(ng):
                                arg = p[g] + q
                                if arg > 0.0:
                                    s += gl_w[g] * np.sqrt(arg)
                            acc[kk] += 0.0 + 0.5 * 1.0 * h * s
                        else:
                            acc[kk] += _segment_integral_transverse(c0, c1, v0, v1, q, h,
                                                                    gl_x, gl_w)
                else:
                    for kk in range(nk):
                        q = qs[kk]
                        if not live[kk] or _outside(c0, c1, v0, v1, q):
                            continue
                        acc[kk] += _segment_integral_transverse(c0, c1, v0, v1, q, h,
                                                                gl_x, gl_w)
        for kk in range(nk):
            out[kk, ie] = 2.0 * scale * acc[kk] if live[kk] else np.inf

"""Exact transmission of the two-band k.p Hamiltonian along a subband pair's edge profiles.

Beside the WKB estimate (`physics.tunneling`), the same pair of band-edge profiles
E_c(x), E_v(x) is given the two-band Hamiltonian whose imaginary branch is the Kane kappa
of eq. (1) there:

    H = diag(E_c(x), E_v(x)) + P (k_x sigma_x + k sigma_y),   k_x = -i d/dx           (1)

with transverse wave-vector k, Pauli matrices sigma and P^2 = hbar^2 E_g / (2 m_t),
m_t = 2 m_r. At fixed E its dispersion is (E - E_c)(E - E_v) = P^2 (k_x^2 + k^2), i.e.
kappa_x^2 = (E_c - E)(E - E_v)/P^2 + k^2 in the gap — exactly the WKB model's kappa
with the transverse penalty (E. O. Kane, J. Appl. Phys. 32, 83 (1961) — from memory).
Where E_g varies with x the operator is symmetrised, sqrt(P) d/dx sqrt(P), so that
phi = sqrt(P) psi is continuous.

(E - H) psi = 0 is first order: d phi/dx = M phi with the traceless 2x2

    M = [[k, i (E - E_v)/P], [i (E - E_c)/P, -k]],   M^2 = kappa_x^2 I,                   (2)

so on a slice where E_c, E_v are constant, phi(x + h) = [cosh(kappa h) + sinh(kappa h)
M / kappa] phi(x) exactly (cos/sin where kappa_x^2 < 0). The profile is cut into slices
(at most `MAX_STEP_EV` of band-edge change and `MAX_SLICE_NM` long), with no spatial
derivative on a grid, so there is no fermion doubling. The current density is
J = (P/hbar) phi^dagger sigma_x phi, conserved by (2).

Transmission: start at the drain end with the outgoing (positive-flux) conduction wave
alone and integrate towards the source — in that direction the physical solution is the
growing one, so the decaying part is never lost to round-off — then split phi at the
source into the incident (positive-flux) and reflected valence waves:
T = J_out / J_in. Energies where either end has no propagating state give T = 0. The
ends of the profile continue as flat contacts.

Checks (tests/physics/test_quantum.py): in a long uniform field T equals the
Landau-Zener probability exp(-pi (E_g^2/4 + P^2 k^2)/(P q F)) (C. Zener, Proc. R. Soc.
A 137, 696 (1932); A 145, 523 (1934) — from memory), which is Kane's exponent with its
transverse penalty; near a band edge T goes to zero where WKB does not (R. T. Shuey,
Phys. Rev. 137, A1268 (1965) [read: abstract]; a two-band analysis with flux
conservation, Solid-State Electronics (2007) [read: abstract; authors not confirmed]).
"""

from __future__ import annotations

import numpy as np

from sub60.physics.constants import HBAR2_2M0_EV_NM2

#: largest change of either band edge across one slice [eV] (staircase step)
MAX_STEP_EV = 1e-2
#: longest slice [nm]
MAX_SLICE_NM = 2.0


def slice_profile(
    x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray,
    max_step_eV: float = MAX_STEP_EV, max_slice_nm: float = MAX_SLICE_NM,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Cut piecewise-linear band edges into constant slices.

    Parameters
    ----------
    x_nm : (nx,) [nm]; ec_eV, ev_eV : (nx,) band edges [eV]; max_step_eV : largest edge
    change per slice [eV]; max_slice_nm : longest slice [nm].

    Returns
    -------
    h_nm : (ns,) slice lengths [nm]; ec_mid, ev_mid : (ns,) edges at the slice centres [eV].
    """
    x = np.asarray(x_nm, float)
    ec = np.asarray(ec_eV, float)
    ev = np.asarray(ev_eV, float)
    dx = np.diff(x)
    change = np.maximum(np.abs(np.diff(ec)), np.abs(np.diff(ev)))
    n = np.maximum(1, np.maximum(np.ceil(change / max_step_eV), np.ceil(dx / max_slice_nm)))
    n = np.where(dx > 0, n, 1)  # a zero-length segment (a sharp step) is one empty slice
    n = n.astype(np.int64)
    seg = np.repeat(np.arange(dx.size), n)
    frac = (np.arange(n.sum()) - np.repeat(np.cumsum(n) - n, n) + 0.5) / np.repeat(n, n)
    h = np.repeat(dx / n, n)
    ec_mid = ec[seg] + (ec[seg + 1] - ec[seg]) * frac
    ev_mid = ev[seg] + (ev[seg + 1] - ev[seg]) * frac
    return h, ec_mid, ev_mid


def _transmission_loop(h, ecm, evm, ec_src, ev_src, ec_drn, ev_drn, mass_slice, mass_src,
                       mass_drn, kvals, energies):  # pragma: no cover - compiled
    nk, ne = kvals.shape
    ns = h.size
    out = np.zeros((nk, ne))
    p_slice = np.sqrt(HBAR2_2M0_EV_NM2 * np.maximum(ecm - evm, 1e-6) / mass_slice)
    p_src = np.sqrt(HBAR2_2M0_EV_NM2 * max(ec_src - ev_src, 1e-6) / mass_src)
    p_drn = np.sqrt(HBAR2_2M0_EV_NM2 * max(ec_drn - ev_drn, 1e-6) / mass_drn)
    for kk in range(nk):
        for ie in range(ne):
            e = energies[ie]
            q = kvals[kk, ie]
            # drain: outgoing wave of positive flux
            m12 = 1j * (e - ev_drn) / p_drn
            kap2 = q * q - (e - ev_drn) * (e - ec_drn) / p_drn**2
            if kap2 >= 0.0:
                continue
            kr = np.sqrt(-kap2)
            u0 = m12
            u1 = 1j * kr - q
            flux = 2.0 * (np.conj(u0) * u1).real
            if flux < 0.0:
                u1 = -1j * kr - q
                flux = 2.0 * (np.conj(u0) * u1).real
            if flux <= 0.0:
                continue
            flux_out = flux
            f0, f1 = u0, u1
            log_scale = 0.0
            for s in range(ns - 1, -1, -1):  # towards the source: phi(x - h) = exp(-M h) phi(x)
                p = p_slice[s]
                a12 = 1j * (e - evm[s]) / p
                a21 = 1j * (e - ecm[s]) / p
                k2 = q * q - (e - evm[s]) * (e - ecm[s]) / (p * p)
                hs = h[s]
                if k2 > 0.0:
                    kap = np.sqrt(k2)
                    c = np.cosh(kap * hs)
                    sn = np.sinh(kap * hs) / kap
                elif k2 < 0.0:
                    kap = np.sqrt(-k2)
                    c = np.cos(kap * hs)
                    sn = np.sin(kap * hs) / kap
                else:
                    c = 1.0
                    sn = hs
                g0 = c * f0 - sn * (q * f0 + a12 * f1)
                g1 = c * f1 - sn * (a21 * f0 - q * f1)
                norm = abs(g0) + abs(g1)
                if norm > 1e50:
                    g0 /= norm
                    g1 /= norm
                    log_scale += np.log(norm)
                f0, f1 = g0, g1
            # source: incident (positive flux) and reflected valence waves
            m12 = 1j * (e - ev_src) / p_src
            kap2 = q * q - (e - ev_src) * (e - ec_src) / p_src**2
            if kap2 >= 0.0:
                continue
            kr = np.sqrt(-kap2)
            a0, a1 = m12, 1j * kr - q
            b0, b1 = m12, -1j * kr - q
            fa = 2.0 * (np.conj(a0) * a1).real
            fb = 2.0 * (np.conj(b0) * b1).real
            if fa < 0.0:
                a0, a1, b0, b1 = b0, b1, a0, a1
                fa, fb = fb, fa
            if fa <= 0.0:
                continue
            det = a0 * b1 - b0 * a1
            if det == 0:
                continue
            amp = (f0 * b1 - b0 * f1) / det
            mag2 = (amp.real**2 + amp.imag**2)
            if mag2 <= 0.0:
                continue
            t = flux_out / (mag2 * fa) * np.exp(-2.0 * log_scale)
            out[kk, ie] = min(t, 1.0)
    return out


def _compiled_kernel():
    """`_transmission_loop` compiled with numba on first use (importing this module does
    not load numba); the plain-Python loop when numba is missing."""
    global _KERNEL
    if _KERNEL is None:
        try:
            import numba
        except ImportError:  # pragma: no cover - numba is a declared dependency
            _KERNEL = _transmission_loop
        else:
            _KERNEL = numba.njit(cache=True, nogil=True)(_transmission_loop)
    return _KERNEL


_KERNEL = None


def two_band_transmission(
    x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray, mass_t: float,
    k_per_nm: np.ndarray, energy_eV: np.ndarray,
    max_step_eV: float = MAX_STEP_EV, max_slice_nm: float = MAX_SLICE_NM,
) -> np.ndarray:
    """Exact two-band transmission, source valence -> drain conduction, eqs. (1)-(2) [-].

    Parameters
    ----------
    x_nm : (nx,) [nm]; ec_eV, ev_eV : (nx,) band edges at k = 0 [eV]; mass_t : m_t = 2 m_r
    [m0], a number or (nx-1,) per cell (a heterojunction: P^2 = hbar^2 E_g/(2 m_t) then
    varies along x like E_g, inside the symmetrised operator);
    k_per_nm : (nk, nE) transverse wave-vector of each (row, energy) [1/nm];
    energy_eV : (nE,) [eV]; max_step_eV, max_slice_nm : slicing (see `slice_profile`).

    Returns
    -------
    (nk, nE) transmission T in [0, 1]; 0 where either contact has no propagating state.
    """
    masses = np.asarray(mass_t, float)
    if not (np.all(np.isfinite(masses)) and np.all(masses > 0)):
        raise ValueError(f"mass_t: {mass_t!r} must be finite and > 0 [m0]")
    ec = np.asarray(ec_eV, float)
    ev = np.asarray(ev_eV, float)
    h, ecm, evm = slice_profile(x_nm, ec, ev, max_step_eV, max_slice_nm)
    if masses.ndim == 0:
        m_slice = np.full(h.size, float(masses))
        m_src = m_drn = float(masses)
    else:  # the cell holding each slice's midpoint
        x = np.asarray(x_nm, float)
        mid = x[0] + np.cumsum(h) - 0.5 * h
        cell = np.clip(np.searchsorted(x, mid) - 1, 0, x.size - 2)
        m_slice = np.ascontiguousarray(masses[cell])
        m_src, m_drn = float(masses[0]), float(masses[-1])
    kv = np.ascontiguousarray(np.atleast_2d(np.asarray(k_per_nm, float)))
    e = np.ascontiguousarray(np.asarray(energy_eV, float))
    if kv.shape[1] != e.size:
        raise ValueError(f"k_per_nm: shape {kv.shape} does not match {e.size} energies")
    return _compiled_kernel()(h, ecm, evm, float(ec[0]), float(ev[0]), float(ec[-1]),
                                float(ev[-1]), m_slice, m_src, m_drn, kv, e)

"""Exponential (Urbach) band tails in band-to-band tunnelling.

Disorder, doping fluctuations and interface roughness put states into the gap: a
density of states that decays exponentially from each band edge with a characteristic
(Urbach) energy E0 [1]_, [2]_. In a tunnel FET the tail below the channel conduction
edge offers final states, and the tail above the source valence edge initial states,
before the ideal tunnel window opens; the off-state current then falls only as
exp(-dE/E0) with the window's closure dE, and once the tails dominate the swing is

    SS_tail = ln(10) E0 / (q eta)                                                  (1)

with eta = -dE_c/d(q V_g) the gate's efficiency in moving the channel band edge
(derived here from the exponential density of states; the swing-versus-E0 relation of
III-V tunnel FETs is the subject of [1]_).

Model (a broadening of the spectral band edge). A tail of width E0 is the band's density
of states convolved with the normalised kernel exp(-eps/E0)/E0 (eps >= 0, into the
gap): each band state is spread over energies eps below (conduction) or above
(valence) its edge. For the tunnelling current this is the ideal current of the same
profiles with the gap narrowed by eps, weighted by the kernel:

    I_tail = int_0^inf K(eps) I_ideal(eps) d eps                                    (2)

where the source valence tail (E0s) and the channel conduction tail (E0c) together
shift the edges by eps = eps_s + eps_c, whose density K is that of a sum of two
exponential variables:

    K(eps) = (exp(-eps/E0c) - exp(-eps/E0s)) / (E0c - E0s)                          (3)

(eps exp(-eps/E0)/E0^2 for equal energies; a single exponential when one is zero).
A narrowing eps is shared between the edges as their mean shares, E0c/(E0c + E0s)
lowering the conduction profiles and the rest raising the valence profiles.
Assumptions: the tails follow the band profiles rigidly (uniform E0 along x); the
occupation of a tail state is that of its energy (Fermi-Dirac of its contact); the
kernel acts on the current rather than inside the transmission (tail states are
reached by the same WKB paths as the band states they come from: an upper estimate,
see [3]_); thermionic currents are unchanged.

Numerics. The tail excess, I_tail - I_ideal(0) = int K(eps) [I(eps) - I(0)] d eps, is
computed with a cheaper estimate of I (every coupled pair, N_TAIL_E energies, the
transverse integral from the Gaussian fall-off of T(k) measured at one k: Kane's
transverse-energy factor) and added to the full ideal current. I(eps) is evaluated at
0 and at shifts placed around the window's closure dE in steps of the larger E0
(`TAIL_OFFSETS`, up to dE + 9 E0; placed relative to dE, so that they move with the
bands and the swing stays smooth). Against a reference with 64 energies and 16 shifts
the tail excess of the default design (tails 15/15 meV) is within 10 % (7 % at worst, our own
convergence check, `tests/physics/test_band_tails.py`). log I is
interpolated linearly between the shifts and (2) integrated on a fine grid; beyond the
last shift I is held constant (the kernel's remaining weight).

References
----------
.. [1] E. Memisevic, E. Lind, M. Hellenbrand, J. Svensson, L.-E. Wernersson, "Impact of
   band-tails on the subthreshold swing of III-V tunnel field-effect transistor", IEEE
   Electron Device Lett. 38, 1661 (2017), doi:10.1109/LED.2017.2764873.
.. [2] F. Urbach, Phys. Rev. 92, 1324 (1953) (the exponential absorption edge; from
   memory).
.. [3] A model of tunnelling between conduction- and valence-band tail states, applied
   to an InGaAs Esaki diode, J. Appl. Phys. (2020), ETH Zürich research collection,
   doi:10.3929/ethz-b-000428713 (abstract read): tail-to-band tunnelling becomes
   visible only for very large tail energies, so treating tail states as reached like
   band states, as here, is an upper estimate.
"""

from __future__ import annotations

import dataclasses

import numpy as np
from scipy.special import erf

from sub60.physics.constants import G0_S, HBAR2_2M0_EV_NM2
from sub60.physics.transport import BandProfile, energy_grid, fermi, tunnelling_mass
from sub60.physics.tunneling import wkb_exponent_transverse

#: Shifts at which I_ideal(eps) is evaluated, around the window's closure dE, in units
#: of the larger tail energy: eps = dE + t E0 (those below 0 dropped; eps = 0 always).
TAIL_OFFSETS = (-1.5, -0.75, 0.0, 0.75, 1.5, 2.5, 4.0, 6.0, 9.0)
N_TAIL_E = 16  # energies of each estimate (cosine-spaced)
N_TAIL_FINE = 400  # points of the fine grid of eq. (2)


def tail_kernel(eps_eV: np.ndarray, e0_source_eV: float, e0_channel_eV: float) -> np.ndarray:
    """Probability density of the total gap narrowing eps from two exponential tails,
    eq. (3) [1/eV].

    Parameters
    ----------
    eps_eV : narrowing [eV] (>= 0); e0_source_eV, e0_channel_eV : Urbach energies of the
    source valence and channel conduction tails [eV] (0 = no tail; not both 0).
    """
    eps = np.asarray(eps_eV, float)
    a, b = float(e0_channel_eV), float(e0_source_eV)
    if a <= 0 and b <= 0:
        raise ValueError("tail energies: at least one must be positive")
    if a <= 0 or b <= 0:
        e0 = max(a, b)
        return np.exp(-eps / e0) / e0
    if abs(a - b) <= 1e-9 * max(a, b):
        return eps * np.exp(-eps / a) / a**2
    return (np.exp(-eps / a) - np.exp(-eps / b)) / (a - b)


def tail_survival(eps_eV: float, e0_source_eV: float, e0_channel_eV: float) -> float:
    """Weight of the kernel (3) beyond eps: int_eps^inf K [-]."""
    a, b = float(e0_channel_eV), float(e0_source_eV)
    if a <= 0 or b <= 0:
        return float(np.exp(-eps_eV / max(a, b)))
    if abs(a - b) <= 1e-9 * max(a, b):
        return float((1.0 + eps_eV / a) * np.exp(-eps_eV / a))
    return float((a * np.exp(-eps_eV / a) - b * np.exp(-eps_eV / b)) / (a - b))


def convolve_with_tails(
    eps_eV: np.ndarray, current_uA_per_um: np.ndarray, e0_source_eV: float, e0_channel_eV: float,
) -> float:
    """Eq. (2): the kernel-weighted current from I_ideal sampled at increasing shifts.

    log I is interpolated linearly between the samples (a current that grows or falls
    exponentially is integrated exactly); beyond the last shift I is held at its last
    value. Zero currents are treated as 1e-300.

    Parameters
    ----------
    eps_eV : (n,) increasing shifts starting at 0 [eV]; current_uA_per_um : (n,) I(eps)
    [uA/um] (of one sign); e0_source_eV, e0_channel_eV : tail energies [eV].

    Returns
    -------
    float : I_tail [uA/um].
    """
    eps = np.asarray(eps_eV, float)
    cur = np.asarray(current_uA_per_um, float)
    sign = -1.0 if cur.sum() < 0 else 1.0
    log_i = np.log(np.maximum(sign * cur, 1e-300))
    fine = np.linspace(eps[0], eps[-1], N_TAIL_FINE)
    kern = tail_kernel(fine, e0_source_eV, e0_channel_eV)
    body = np.trapezoid(kern * np.exp(np.interp(fine, eps, log_i)), fine)
    rest = tail_survival(eps[-1], e0_source_eV, e0_channel_eV) * np.exp(log_i[-1])
    return float(sign * (body + rest))


def _estimate(
    x_nm: np.ndarray, pairs: list[tuple[BandProfile, BandProfile, float]], efs_eV: float,
    efd_eV: float, kT_eV: float, down_eV: float, up_eV: float, model: str,
) -> float:
    """Band-to-band current of some pairs, conduction profiles lowered by ``down`` and
    valence profiles raised by ``up``, with the transverse integral from the Gaussian
    fall-off of T(k) (Kane's transverse-energy factor) [uA/um]."""
    kappa_model = "one-band" if model == "one-band" else "two-band"
    total = 0.0
    for cb, vb, w in pairs:
        c = dataclasses.replace(cb, edge_eV=cb.edge_eV - down_eV)
        v = dataclasses.replace(vb, edge_eV=vb.edge_eV + up_eV)
        span = energy_grid([c], [v], efs_eV, efd_eV, kT_eV, n=2)
        if span is None:
            continue
        # cosine-spaced energies: J(E) has square-root edges where k_max(E) -> 0
        theta = np.linspace(0.0, np.pi, N_TAIL_E)
        e = 0.5 * (span[0] + span[1]) - 0.5 * (span[1] - span[0]) * np.cos(theta)
        m_t = tunnelling_mass(c, v, kappa_model)
        a, b = HBAR2_2M0_EV_NM2 / c.mass, HBAR2_2M0_EV_NM2 / v.mass
        disp = v.dispersion  # a tabulated valence dispersion (`transport.InPlaneDispersion`)
        k2_v = (v.edge_eV[0] - e) / b if disp is None else disp.k2_at(v.edge_eV[0] - e)
        k_max = np.sqrt(np.clip(np.minimum(k2_v, (e - c.edge_eV[-1]) / a), 0.0, None))
        k = np.vstack([np.zeros_like(e), 0.5 * k_max])
        expo = wkb_exponent_transverse(x_nm, c.edge_eV, v.edge_eV, a, b, k, e, m_t, kappa_model,
                                       down_shift_eV=None if disp is None else disp.shift(k * k))
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            t0 = np.where(np.isfinite(expo[0]), np.exp(-expo[0]), 0.0)
            beta = (expo[1] - expo[0]) / np.maximum(k[1] ** 2, 1e-30)  # [nm^2]
            beta = np.where(np.isfinite(beta) & (beta > 1e-12), beta, np.inf)
            sb = np.sqrt(beta)
            tk = np.where(np.isfinite(beta),
                          0.5 * np.sqrt(np.pi) / sb * erf(k_max * sb), k_max)  # [1/nm]
        tk = np.where(k_max > 0, t0 * tk, 0.0) / np.pi * 1e9  # (1/pi) int T dk [1/m]
        occ = fermi(e, efs_eV, kT_eV) - fermi(e, efd_eV, kT_eV)
        de_dtheta = 0.5 * (span[1] - span[0]) * np.sin(theta)
        total += w * G0_S * float(np.trapezoid(tk * occ * de_dtheta, theta))
    return total


def band_tail_current(
    x_nm: np.ndarray, conduction: list[BandProfile], valence: list[BandProfile],
    efs_eV: float, efd_eV: float, kT_eV: float, ideal_uA_per_um: float,
    pair_weights: np.ndarray | None,
    e0_source_eV: float, e0_channel_eV: float, closure_eV: float, model: str = "two-band",
) -> float:
    """Band-to-band current with exponential band tails, eq. (2) [uA/um].

    Parameters
    ----------
    x_nm : (nx,) [nm]; conduction, valence : subband profiles (as for
    `physics.transport.band_to_band`); efs_eV, efd_eV : Fermi levels [eV]; kT_eV [eV];
    ideal_uA_per_um : the ideal band-to-band current of these profiles [uA/um];
    pair_weights : (n_valence, n_conduction) couplings or None (all 1);
    e0_source_eV, e0_channel_eV : tail energies [eV] (0 = none; not both 0);
    closure_eV : how far the ideal tunnel window is from opening (channel conduction
        minimum minus source valence maximum, 0 when open) [eV];
    model : tunnelling model (the estimates use the WKB kappa of "two-band" for
        "two-band-exact").

    Returns
    -------
    float : band-to-band current including tail states [uA/um] (the ideal one plus the
    tail excess).
    """
    e0c, e0s = max(float(e0_channel_eV), 0.0), max(float(e0_source_eV), 0.0)
    if e0c <= 0 and e0s <= 0:
        return float(ideal_uA_per_um)
    share_c = e0c / (e0c + e0s)
    pairs = []
    for iv, vb in enumerate(valence):
        for ic, cb in enumerate(conduction):
            w = 1.0 if pair_weights is None else float(pair_weights[iv, ic])
            if w >= 1e-9:
                pairs.append((cb, vb, w))
    e0 = max(e0c, e0s)
    eps = np.array([0.0] + [max(closure_eV, 0.0) + t * e0 for t in TAIL_OFFSETS])
    eps = np.unique(eps[eps >= 0.0])
    est = np.array([_estimate(x_nm, pairs, efs_eV, efd_eV, kT_eV, share_c * s,
                              (1.0 - share_c) * s, model) for s in eps])
    if not np.any(est):
        return float(ideal_uA_per_um)
    return float(ideal_uA_per_um) + convolve_with_tails(eps, est, e0s, e0c) - float(est[0])

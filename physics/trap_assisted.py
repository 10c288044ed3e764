"""Trap-assisted tunnelling: Shockley-Read-Hall generation with Hurkx field enhancement.

Traps at a level E_t in the gap generate electron-hole pairs where n p < n_i^2 (the
reverse-biased body of a tunnel FET), at the Shockley-Read-Hall net rate [1]_

    U = (n p - n_i^2) / (tau_p (n + n_1) + tau_n (p + p_1))                        (1)
    n_1 = N_c exp(-(E_c - E_t)/kT),  p_1 = N_v exp(-(E_t - E_v)/kT).

In a strong field a carrier can tunnel between the trap and the band over part of the
energy step, which shortens the lifetimes (Hurkx, Klaassen & Knuvers [2]_):

    tau_eff = tau / (1 + Gamma)                                                    (2)
    Gamma = (dE/kT) int_0^1 exp[(dE/kT) u - K u^(3/2)] du,
    K = (4/3) sqrt(2 m* dE^3) / (q hbar |F|)                                        (3)

with dE the trap-to-band energy (E_c - E_t for electrons, E_t - E_v for holes) and m*
the tunnelling mass. Where the maximum of the exponent lies inside (0, 1), Laplace's
method gives the paper's closed form

    Gamma = 2 sqrt(3 pi) (|F|/F_Gamma) exp((F/F_Gamma)^2),
    F_Gamma = sqrt(24 m* (kT)^3) / (q hbar)                                         (4)

(eq. (4) is quoted in the task from [2]_; eq. (3) and the step from (3) to (4) are
from memory and re-derived here: the test checks (4) as the limit of (3)). The
integral (3) stays finite at the junction fields of a tunnel FET where (4) overflows,
so the current uses (3).

The generation current of the body per unit width is

    I/W = q int int (-U) dx dy                                                      (5)

over the semiconductor, with n and p from the electrostatics (holes at the source
Fermi level, electrons at the drain's: the tunnel FET's reverse-biased p-i-n) and |F|
from the gradient of its potential. Assumptions: one trap level, tau_n = tau_p = tau;
dE measured from the confinement-shifted band edges; n_i^2 = N_c N_v exp(-E_g,eff/kT)
with the same shifted gap (non-degenerate statistics, exact where generation matters);
tunnelling masses: the conduction-band mass for electrons, the light-hole mass for
holes (the lighter band tunnels; common practice, no source); the generated carriers
all reach the contacts.

References
----------
.. [1] W. Shockley, W. T. Read, Phys. Rev. 87, 835 (1952); R. N. Hall, Phys. Rev. 87,
   387 (1952). Generation current of a reverse-biased junction, q n_i W / tau_g: S. M.
   Sze, K. K. Ng, Physics of Semiconductor Devices, 3rd ed., Wiley 2007, ch. 2 (from
   memory).
.. [2] G. A. M. Hurkx, D. B. M. Klaassen, M. P. G. Knuvers, "A new recombination model
   for device simulation including tunneling", IEEE Trans. Electron Devices 39, 331
   (1992), doi:10.1109/16.121690.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from sub60.physics.constants import (
    ELECTRON_MASS_KG,
    ELEMENTARY_CHARGE_C,
    HBAR_J_S,
    thermal_energy_eV,
)

if TYPE_CHECKING:
    from sub60.physics.electrostatics import Electrostatics

N_U = 96  # Gauss-Legendre nodes of the integral (3) on [0, 1]
_GL_U = np.polynomial.legendre.leggauss(N_U)
N_FIELD_TABLE = 81  # fields of the table Gamma(F) is interpolated from, 1e4 to 1e11 V/m


def hurkx_reference_field_V_per_m(mass_rel: float, temperature_K: float) -> float:
    """F_Gamma of eq. (4) [V/m] for a tunnelling mass [m0] at a temperature [K]."""
    kT_J = thermal_energy_eV(temperature_K) * ELEMENTARY_CHARGE_C
    return float(np.sqrt(24 * mass_rel * ELECTRON_MASS_KG * kT_J**3) / (ELEMENTARY_CHARGE_C * HBAR_J_S))


def hurkx_gamma_closed_form(field_V_per_m: np.ndarray | float, mass_rel: float,
                            temperature_K: float) -> np.ndarray:
    """Field-enhancement factor Gamma, closed form (4) [-] (inf where it overflows)."""
    r = np.abs(np.asarray(field_V_per_m, float)) / hurkx_reference_field_V_per_m(mass_rel, temperature_K)
    with np.errstate(over="ignore"):
        return 2 * np.sqrt(3 * np.pi) * r * np.exp(r**2)


def hurkx_gamma(field_V_per_m: np.ndarray | float, mass_rel: float, temperature_K: float,
                step_eV: np.ndarray | float) -> np.ndarray:
    """Field-enhancement factor Gamma, the integral (3) [-].

    Parameters
    ----------
    field_V_per_m : |F| [V/m]; mass_rel : tunnelling mass [m0]; temperature_K [K];
    step_eV : trap-to-band energy dE > 0 [eV] (broadcast with the field).
    """
    f = np.abs(np.asarray(field_V_per_m, float))
    de = np.broadcast_to(np.asarray(step_eV, float), f.shape)
    a = de / thermal_energy_eV(temperature_K)
    de_J = de * ELEMENTARY_CHARGE_C
    with np.errstate(divide="ignore"):
        k = 4.0 / 3.0 * np.sqrt(2 * mass_rel * ELECTRON_MASS_KG * de_J**3) \
            / (ELEMENTARY_CHARGE_C * HBAR_J_S * f)
    xg, wg = _GL_U
    u = 0.5 * (xg + 1.0)
    expo = a[..., None] * u - k[..., None] * u**1.5  # <= a: no overflow
    integral = 0.5 * np.sum(wg * np.exp(expo), axis=-1)
    return np.where(f > 0, a * integral, 0.0)


def _gamma_table(field_V_per_m: np.ndarray, mass_rel: float, temperature_K: float,
                 step_eV: float) -> np.ndarray:
    """`hurkx_gamma` at one trap-to-band step, interpolated in log F from N_FIELD_TABLE
    fields (log(1 + Gamma) is smooth in log F; 0 below 1e4 V/m, clipped at 1e11 V/m)."""
    table_f = np.logspace(4.0, 11.0, N_FIELD_TABLE)
    table_g = np.log1p(hurkx_gamma(table_f, mass_rel, temperature_K, step_eV))
    f = np.clip(np.asarray(field_V_per_m, float), 1e4, 1e11)
    return np.where(np.asarray(field_V_per_m) > 1e4,
                    np.expm1(np.interp(np.log(f), np.log(table_f), table_g)), 0.0)


def srh_net_rate(n_cm3: np.ndarray, p_cm3: np.ndarray, ni2_cm6: float, n1_cm3: float,
                 p1_cm3: float, tau_n_s: np.ndarray | float, tau_p_s: np.ndarray | float) -> np.ndarray:
    """Shockley-Read-Hall net recombination rate (1) [cm^-3 s^-1] (negative: generation)."""
    n = np.asarray(n_cm3, float)
    p = np.asarray(p_cm3, float)
    return (n * p - ni2_cm6) / (tau_p_s * (n + n1_cm3) + tau_n_s * (p + p1_cm3))


def generation_current_uA_per_um(
    x_nm: np.ndarray, y_weight_nm: np.ndarray, n_cm3: np.ndarray, p_cm3: np.ndarray,
    field_V_per_m: np.ndarray | None, *, temperature_K: float, gap_eV: float, nc_cm3: float,
    nv_cm3: float, trap_level_eV: float, lifetime_s: float, electron_mass: float,
    hole_mass: float,
) -> float:
    """Trap-assisted generation current per unit width, eq. (5) [uA/um].

    Parameters
    ----------
    x_nm : (nx,) nodes along transport [nm]; y_weight_nm : (ny,) semiconductor thickness
    each row of nodes stands for [nm] (0 in dielectrics); n_cm3, p_cm3 : (nx, ny)
    densities [cm^-3]; field_V_per_m : (nx, ny) |F| [V/m], or None for no field
    enhancement (plain SRH); temperature_K [K]; gap_eV : band gap (of the shifted edges)
    [eV]; nc_cm3, nv_cm3 : effective densities of states [cm^-3]; trap_level_eV : E_t
    above midgap [eV]; lifetime_s : tau_n = tau_p [s]; electron_mass, hole_mass :
    tunnelling masses [m0].

    Returns
    -------
    float : q int int (-U) dx dy [uA/um] (= A/m), positive for net generation.
    """
    kT = thermal_energy_eV(temperature_K)
    step_n = 0.5 * gap_eV - trap_level_eV  # E_c - E_t
    step_p = 0.5 * gap_eV + trap_level_eV  # E_t - E_v
    ni2 = nc_cm3 * nv_cm3 * np.exp(-gap_eV / kT)
    n1 = nc_cm3 * np.exp(-step_n / kT)
    p1 = nv_cm3 * np.exp(-step_p / kT)
    if field_V_per_m is None:
        tau_n = tau_p = lifetime_s
    else:
        tau_n = lifetime_s / (1.0 + _gamma_table(field_V_per_m, electron_mass, temperature_K, step_n))
        tau_p = lifetime_s / (1.0 + _gamma_table(field_V_per_m, hole_mass, temperature_K, step_p))
    u = srh_net_rate(n_cm3, p_cm3, ni2, n1, p1, tau_n, tau_p)  # [cm^-3 s^-1]
    per_x = (-u * np.asarray(y_weight_nm, float)[None, :]).sum(axis=1)  # [cm^-3 s^-1 nm]
    rate = float(np.trapezoid(per_x, np.asarray(x_nm, float)))  # [cm^-3 s^-1 nm^2]
    return ELEMENTARY_CHARGE_C * rate * 1e6 * 1e-18  # cm^-3 -> m^-3, nm^2 -> m^2: A/m


def field_magnitude_V_per_m(x_nm: np.ndarray, y_nm: np.ndarray, psi_V: np.ndarray) -> np.ndarray:
    """|grad psi| on a tensor grid (second-order differences on the uneven nodes) [V/m]."""
    gx, gy = np.gradient(np.asarray(psi_V, float), np.asarray(x_nm, float), np.asarray(y_nm, float))
    return np.hypot(gx, gy) * 1e9


def trap_assisted_current(es: Electrostatics) -> float:
    """Trap-assisted generation current of a solved bias point, eqs. (1)-(5) [uA/um].

    Uses ``es.design``'s `tat_lifetime_ns` and `tat_trap_level_eV` (0 lifetime: 0; a
    level beyond 2 kT of a band edge of the shifted gap is held there); the densities
    and potential of the electrostatics on its semiconductor nodes. With a
    heterojunction source the body material's parameters are used everywhere.
    """
    d = es.design
    if d.tat_lifetime_ns <= 0:
        return 0.0
    frame = es.frame
    bands = frame.bands.at(-1)  # the body material's (a heterojunction source: approximation)
    weight = frame.mesh.dy_semiconductor_nm
    rows = weight > 0
    rec = d.semiconductor
    field = field_magnitude_V_per_m(es.x_nm, es.y_nm, es.psi_V)
    gap = bands.eg_eV + bands.dec_eV + bands.dev_eV
    edge = max(0.5 * gap - 2 * bands.kT_eV, 0.0)
    level = float(np.clip(d.tat_trap_level_eV, -edge, edge))
    return generation_current_uA_per_um(
        es.x_nm, weight[rows], es.n_cm3[:, rows], es.p_cm3[:, rows], field[:, rows],
        temperature_K=d.temperature_K, gap_eV=gap,
        nc_cm3=bands.nc_cm3, nv_cm3=bands.nv_cm3, trap_level_eV=level,
        lifetime_s=d.tat_lifetime_ns * 1e-9, electron_mass=rec.electron_mass,
        hole_mass=rec.light_hole_mass_confined)

"""Band-to-band tunnelling across an indirect gap (Si, Ge, Si(1-x)Ge(x)).

An electron crossing an indirect gap must exchange crystal momentum with a phonon, so
the direct-gap WKB transmission of `physics.tunneling` does not apply. The
generation rate per volume in a uniform field F has the Kane/Keldysh form

    G(F) = A (F / F0)^P exp(-B / F),   F0 = 1 V/cm                                   (1)

with P = 2.5 for the phonon-assisted (indirect) process and P = 2 for a direct one
(E. O. Kane, J. Appl. Phys. 32, 83 (1961); L. V. Keldysh, Sov. Phys. JETP 7, 665
(1958); from memory). Parameters:

* Si, indirect: A = 4e14 cm^-3 s^-1, B = 1.9e7 V/cm, P = 2.5 (G. A. M. Hurkx,
  D. B. M. Klaassen, M. P. G. Knuvers, IEEE Trans. Electron Devices 39, 331 (1992);
  from memory), holding at the 300 K gap of Si.
* Ge and SiGe, indirect: the Si values with B scaled as Eg^(3/2) (Kane's exponent at
  a fixed tunnelling mass): an estimate, not a calibration.
* Direct Gamma path (Ge, and Ge-rich SiGe): Kane's direct rate, eq. (2),

      G = q^2 F^2 m_r^(1/2) / (18 pi hbar^2 Eg^(1/2)) exp(-pi m_r^(1/2) Eg^(3/2) / (2 q hbar F))

  (Kane 1961; from memory), with the Gamma gap (Varshni law, `GE_GAMMA_GAP`) and the
  reduced mass of the Gamma electron (0.038 m0, from memory) and the light hole of the
  Ge record.

Any gap change (temperature, confinement) enters B as (Eg / Eg_ref)^(3/2) and, for
eq. (2), through the formula itself.

Non-uniform fields (path integration). For each energy E between the source valence
edge and the drain conduction edge, the tunnel path runs from the point where the
valence edge falls below E (leaving the source) to the first point beyond it where the
conduction edge falls below E; its length l(E) and the gap Eg at its end give the
average field F(E) = Eg / (q l). The rate (1) at that field, over the volume the path
sweeps per unit energy (dx/dE = 1/(q F)), gives the spectral current per width

    dI/dE = q t_body G(F(E)) / (q F(E)) [f_s(E) - f_d(E)] T_rest(E)                  (3)

with the source and drain Fermi functions (no current at equilibrium) and T_rest the
one-band WKB transmission of any conduction-band barrier left between the path's end
and the drain. In a uniform field this is eq. (1) times the generating volume, so the
local model is recovered. This is the non-local "average field along the tunnel
path" practice of device modelling (common practice, no source), in the spirit of the
non-uniform-field treatment of Vandenberghe, Sorée, Magnus, Fischetti, J. Appl. Phys.
109, 124503 (2011) (from memory), not their formalism.

Left out: the phonon spectrum (emission and absorption lumped in A), the direction
dependence of the valleys, strain, the valley splitting of a thin body (only its wider
gap enters), and band tails; the Ge and SiGe indirect parameters are not calibrated.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from sub60.physics.constants import (
    ELECTRON_MASS_KG,
    ELEMENTARY_CHARGE_C,
    HBAR2_2M0_EV_NM2,
    HBAR_J_S,
)
from sub60.physics.materials import (
    Semiconductor,
    get_semiconductor,
    group_iv_germanium_fraction,
    varshni_gap_eV,
)
from sub60.physics.transport import BandProfile, Spectrum, energy_grid, fermi

#: Energies of the spectral current integral [-].
N_ENERGIES = 160

_HURKX = ("Hurkx, Klaassen & Knuvers, IEEE Trans. Electron Devices 39, 331 (1992), Si "
          "(from memory)")
#: Varshni law of Ge's direct (Gamma) gap: 0.8893 eV, 6.842e-4 eV/K, 398 K (from
#: memory; 0.80 eV at 300 K).
GE_GAMMA_GAP: tuple[float, float, float] = (0.8893, 6.842e-4, 398.0)
#: Gamma-valley electron mass of Ge [m0] (from memory).
GE_GAMMA_ELECTRON_MASS = 0.038
#: Lowest direct gap of Si at Gamma, E0' [eV] (from memory): only to let the Gamma path
#: of Si(1-x)Ge(x) fade out linearly away from Ge.
SI_DIRECT_GAP_EV = 3.4
_SI_REFERENCE_GAP_EV = float(get_semiconductor("Si").bandgap_eV(300.0))  # Hurkx's B holds here


@dataclass(frozen=True)
class KaneRate:
    """The uniform-field generation rate G = A (F/F0)^P exp(-B/F), F0 = 1 V/cm.

    Attributes
    ----------
    label : e.g. "indirect" or "Gamma"
    prefactor_per_cm3_s : A [cm^-3 s^-1]
    exponent_field_V_per_cm : B at the reference gap [V/cm]
    field_power : P [-] (2.5 phonon-assisted, 2 direct)
    reference_gap_eV : gap at which B holds; B scales as (Eg/Eg_ref)^(3/2) [eV]
    source : citation
    """

    label: str
    prefactor_per_cm3_s: float
    exponent_field_V_per_cm: float
    field_power: float
    reference_gap_eV: float
    source: str

    def exponent_at(self, gap_eV: float) -> float:
        """B at another gap, (Eg/Eg_ref)^(3/2) scaling (Kane's exponent) [V/cm]."""
        return self.exponent_field_V_per_cm * (gap_eV / self.reference_gap_eV) ** 1.5

    def rate_per_cm3_s(self, field_V_per_cm: np.ndarray, gap_eV: float | None = None) -> np.ndarray:
        """Eq. (1) [cm^-3 s^-1] at fields [V/cm] (0 where F <= 0).

        Parameters
        ----------
        field_V_per_cm : array_like
            field magnitude [V/cm].
        gap_eV : float or None
            gap of the tunnel path; None: the reference gap [eV].
        """
        f = np.asarray(field_V_per_cm, float)
        b = self.exponent_field_V_per_cm if gap_eV is None else self.exponent_at(gap_eV)
        safe = np.where(f > 0, f, 1.0)
        return np.where(f > 0, self.prefactor_per_cm3_s * safe**self.field_power
                        * np.exp(-b / safe), 0.0)


SI_INDIRECT = KaneRate("indirect", 4e14, 1.9e7, 2.5, _SI_REFERENCE_GAP_EV, _HURKX)


def kane_direct_rate(gap_eV: float, reduced_mass: float, source: str = "") -> KaneRate:
    """Kane's direct-gap rate, eq. (2), as A (F/F0)^2 exp(-B/F) with F0 = 1 V/cm.

    A = q^2 F0^2 m_r^(1/2) / (18 pi hbar^2 Eg^(1/2)), B = pi m_r^(1/2) Eg^(3/2) /
    (2 q hbar) (E. O. Kane, J. Appl. Phys. 32, 83 (1961); from memory), SI constants
    from scipy.constants.

    Parameters
    ----------
    gap_eV : float
        direct gap [eV].
    reduced_mass : float
        reduced mass of the electron and the light hole [m0].
    source : str
        citation of the inputs.

    Returns
    -------
    KaneRate
    """
    q, hbar = ELEMENTARY_CHARGE_C, HBAR_J_S
    m = reduced_mass * ELECTRON_MASS_KG
    eg = gap_eV * q
    f0 = 100.0  # 1 V/cm in V/m
    a_si = q**2 * f0**2 * math.sqrt(m) / (18.0 * math.pi * hbar**2 * math.sqrt(eg))  # m^-3 s^-1
    b_si = math.pi * math.sqrt(m) * eg**1.5 / (2.0 * q * hbar)  # V/m
    return KaneRate("Gamma", a_si * 1e-6, b_si / 100.0, 2.0, gap_eV,
                    "Kane, J. Appl. Phys. 32, 83 (1961), direct rate (from memory)"
                    + (f"; {source}" if source else ""))


def rates_for(semiconductor: Semiconductor, temperature_K: float,
              confinement_eV: float = 0.0) -> tuple[KaneRate, ...]:
    """The tunnelling paths of a group-IV body: indirect, plus the direct Gamma path
    when the body contains Ge.

    Parameters
    ----------
    semiconductor : Semiconductor
        Si, Ge or a Si(1-x)Ge(x) record.
    temperature_K : float
        temperature [K].
    confinement_eV : float
        widening of the gap by confinement, added to every path's gap [eV].

    Returns
    -------
    tuple of KaneRate
        each with B and A at its own gap (bulk gap at this temperature plus
        ``confinement_eV``), so ``rate_per_cm3_s(F)`` needs no gap argument.

    Raises
    ------
    ValueError
        for a material that is not Si, Ge or SiGe.
    """
    x = group_iv_germanium_fraction(semiconductor)
    if x is None:
        raise ValueError(f"{semiconductor.name}: no phonon-assisted tunnelling model "
                         "(Si, Ge and SiGe only)")
    gap = float(semiconductor.bandgap_eV(temperature_K)) + confinement_eV
    scaled = "" if x == 0.0 else "; B scaled as Eg^(3/2) from Si (estimate)"
    indirect = KaneRate("indirect", SI_INDIRECT.prefactor_per_cm3_s,
                        SI_INDIRECT.exponent_at(gap), SI_INDIRECT.field_power, gap,
                        SI_INDIRECT.source + scaled)
    if x == 0.0:
        return (indirect,)
    gamma_gap = (x * float(varshni_gap_eV(*GE_GAMMA_GAP, temperature_K))
                 + (1 - x) * SI_DIRECT_GAP_EV + confinement_eV)
    m_lh = semiconductor.light_hole_mass_confined
    m_r = GE_GAMMA_ELECTRON_MASS * m_lh / (GE_GAMMA_ELECTRON_MASS + m_lh)
    return indirect, kane_direct_rate(gamma_gap, m_r, "Ge Gamma gap and mass (from memory)")


def has_phonon_assisted_model(semiconductor: Semiconductor) -> bool:
    """True for Si, Ge and Si(1-x)Ge(x): their band-to-band current comes from here."""
    return group_iv_germanium_fraction(semiconductor) is not None


def _path_fields(x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray, energy_eV: np.ndarray,
                 electron_mass: float) -> tuple[np.ndarray, np.ndarray]:
    """Average field along each energy's tunnel path [V/cm] (0: no path) and the WKB
    transmission of the conduction-band barrier left after it [-] (all energies at once)."""
    e = energy_eV[:, None]
    nx = x_nm.size
    idx = np.arange(nx)[None, :]
    gone = ev_eV[None, :] < e  # no valence state at E
    i = np.where(gone.any(axis=1), gone.argmax(axis=1), 0)  # first node past the source states
    reach = (ec_eV[None, :] <= e) & (idx >= i[:, None])
    j = reach.argmax(axis=1)
    ok = (ev_eV[0] >= energy_eV) & (i > 0) & reach.any(axis=1)
    i, j = np.where(ok, i, 1), np.where(ok, j, 1)
    # turning points, linear between nodes
    xv = x_nm[i - 1] + (x_nm[i] - x_nm[i - 1]) * (ev_eV[i - 1] - energy_eV) \
        / np.where(ev_eV[i - 1] != ev_eV[i], ev_eV[i - 1] - ev_eV[i], 1.0)
    already = ec_eV[j - 1] <= energy_eV  # the conduction band was below E one node earlier
    xc = np.where(already, x_nm[j - 1], x_nm[j - 1] + (x_nm[j] - x_nm[j - 1])
                  * (ec_eV[j - 1] - energy_eV)
                  / np.where(ec_eV[j - 1] != ec_eV[j], ec_eV[j - 1] - ec_eV[j], 1.0))
    length_nm = np.maximum(xc - xv, 1e-3)
    gap = np.interp(xc, x_nm, ec_eV - ev_eV)
    fields = np.where(ok, gap / (length_nm * 1e-7), 0.0)  # eV / cm -> V/cm
    barrier = np.where(idx >= j[:, None], np.clip(ec_eV[None, :] - e, 0.0, None), 0.0)
    kappa = np.sqrt(electron_mass * barrier / HBAR2_2M0_EV_NM2)  # 1/nm
    rest = np.where(ok, np.exp(-2.0 * np.trapezoid(kappa, x_nm, axis=1)), 0.0)
    return fields, rest


def indirect_band_to_band(
    semiconductor: Semiconductor, temperature_K: float, body_thickness_nm: float,
    x_nm: np.ndarray, ec_eV: np.ndarray, ev_eV: np.ndarray, efs_eV: float, efd_eV: float,
    kT_eV: float, bulk_gap_eV: float | None = None,
) -> Spectrum:
    """Phonon-assisted (and, with Ge, direct Gamma) band-to-band current, eq. (3).

    Parameters
    ----------
    semiconductor : Semiconductor
        Si, Ge or Si(1-x)Ge(x).
    temperature_K : float
        temperature [K].
    body_thickness_nm : float
        thickness of the generating body [nm].
    x_nm : (nx,) ndarray
        positions along transport [nm].
    ec_eV, ev_eV : (nx,) ndarray
        lowest conduction and highest valence (subband) edges [eV].
    efs_eV, efd_eV : float
        source and drain Fermi levels [eV].
    kT_eV : float
        thermal energy [eV].
    bulk_gap_eV : float or None
        bulk gap at this temperature; the extra gap of the edges over it (confinement)
        widens the Gamma gap by the same amount. None: the record's.

    Returns
    -------
    Spectrum
        J(E) [uA/um per eV]; ``transmission``: exp(-B/F(E)) of the indirect path [-];
        ``pair_currents_uA_per_um``: {"indirect": ..., "Gamma": ...} [uA/um].
    """
    x = np.asarray(x_nm, float)
    ec, ev = np.asarray(ec_eV, float), np.asarray(ev_eV, float)
    bulk = float(semiconductor.bandgap_eV(temperature_K)) if bulk_gap_eV is None else bulk_gap_eV
    edge_gap = float(np.min(ec - ev))
    rates = rates_for(semiconductor, temperature_K, confinement_eV=edge_gap - bulk)
    window = energy_grid([BandProfile("C", ec, 1.0)], [BandProfile("V", ev, 1.0)],
                         efs_eV, efd_eV, kT_eV, n=N_ENERGIES)
    pairs = {r.label: 0.0 for r in rates}
    if window is None or efs_eV == efd_eV:
        e = window if window is not None else np.linspace(min(efs_eV, efd_eV) - 0.05,
                                                          max(efs_eV, efd_eV) + 0.05, 3)
        return Spectrum(e, np.zeros_like(e), np.zeros_like(e), 0.0, pairs)
    e = window
    occ = fermi(e, efs_eV, kT_eV) - fermi(e, efd_eV, kT_eV)
    density = np.zeros_like(e)
    transmission = np.zeros_like(e)
    q_t = ELEMENTARY_CHARGE_C * body_thickness_nm * 1e-7 * 100.0  # q t [C cm]; A/cm -> A/m
    for rate in rates:
        shift = rate.reference_gap_eV - rates[0].reference_gap_eV  # Gamma above the indirect edge
        fields, rest = _path_fields(x, ec + shift, ev, e, semiconductor.electron_mass)
        safe = np.where(fields > 0, fields, 1.0)
        # eq. (3): G [cm^-3 s^-1] / F [V/cm] = per cm^2 s eV; x q t -> A/cm per eV -> A/m
        j = np.where(fields > 0, q_t * rate.rate_per_cm3_s(fields) / safe * occ * rest, 0.0)
        pairs[rate.label] = float(np.trapezoid(j, e))
        density += j
        if rate.label == "indirect":
            transmission = np.where(fields > 0, np.exp(-rate.exponent_field_V_per_cm / safe), 0.0)
    return Spectrum(e, density, transmission, float(sum(pairs.values())), pairs)

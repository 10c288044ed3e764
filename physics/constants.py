"""Physical constants and the derived combinations used across `sub60.physics`.

Every value is built here, once, from the exact SI / CODATA values of
:mod:`scipy.constants` (2019 SI: h, e and k exact; m_e, eps0 CODATA); no other module
writes a physical constant by hand. Units are in the names.
"""

from __future__ import annotations

import scipy.constants as _sc

__all__ = ["ELEMENTARY_CHARGE_C", "ELECTRON_MASS_KG", "G0_S", "HBAR2_2M0_EV_NM2", "HBAR_J_S",
           "BOLTZMANN_J_PER_K", "PLANCK_J_S", "QE_V_NM2_CM3", "VACUUM_PERMITTIVITY_F_PER_M",
           "thermal_energy_eV"]

#: Elementary charge q [C] (exact).
ELEMENTARY_CHARGE_C: float = _sc.e
#: Boltzmann constant k [J/K] (exact).
BOLTZMANN_J_PER_K: float = _sc.k
#: Planck constant h [J s] (exact).
PLANCK_J_S: float = _sc.h
#: Reduced Planck constant hbar [J s].
HBAR_J_S: float = _sc.hbar
#: Free-electron mass m0 [kg] (CODATA).
ELECTRON_MASS_KG: float = _sc.m_e
#: Vacuum permittivity eps0 [F/m] (CODATA).
VACUUM_PERMITTIVITY_F_PER_M: float = _sc.epsilon_0

#: hbar^2 / (2 m0) [eV nm^2] (about 0.0381 eV nm^2).
HBAR2_2M0_EV_NM2: float = HBAR_J_S**2 / (2 * ELECTRON_MASS_KG) / ELEMENTARY_CHARGE_C * 1e18

#: Conductance quantum 2 q^2 / h [S] (spin included).
G0_S: float = 2 * ELEMENTARY_CHARGE_C**2 / PLANCK_J_S

#: q / eps0 converted so that (area [nm^2]) x (density [cm^-3]) x QE gives [V nm]:
#: q/eps0 [V m] -> [V nm] (x 1e9), and cm^-3 -> nm^-3 (x 1e-21).
QE_V_NM2_CM3: float = ELEMENTARY_CHARGE_C / VACUUM_PERMITTIVITY_F_PER_M * 1e9 * 1e-21


def thermal_energy_eV(temperature_K: float) -> float:
    """Thermal energy kT/q at a temperature [eV].

    Parameters
    ----------
    temperature_K : float
        temperature [K].

    Returns
    -------
    float
        k T / q [eV]; 0.025852 eV at 300 K (k, q exact in the 2019 SI).
    """
    return BOLTZMANN_J_PER_K * temperature_K / ELEMENTARY_CHARGE_C

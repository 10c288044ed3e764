"""Doping-induced band-gap narrowing (BGN) of heavily doped regions.

III-Vs: Jain, McGregor & Roulston [1]_ give, per material and doping type,

    dEg = A N^(1/3) + B N^(1/4) + C N^(1/2)        (N in cm^-3, dEg in eV)          (1)

(exchange energy of the majority carriers, correlation of the minority carrier, and the
carrier-impurity interaction). Si: Slotboom & de Graaff [2]_,

    dEg = V1 [ln(N/N_ref) + sqrt(ln^2(N/N_ref) + C)],  V1 = 9 meV, N_ref = 1e17 cm^-3,
    C = 0.5, for donors and acceptors alike.                                        (2)

Which data were verified: the form of (1) and the statement that the N^(1/3) law alone
holds for the p-type materials but not the n-type ones are from the paper's abstract
(read); every coefficient below is from memory and marked so. The form and constants of
(2) are from memory (consistent with a published secondary description of the model,
read). GaSb, InSb and Ge have no coefficients here: their narrowing is zero and
`has_narrowing_model` says so.

How sub60 applies it (an approximation, stated): the Poisson solve is unchanged, and
the narrowing is applied to the subband profiles that transport uses. In a neutral,
degenerately doped region the majority band stays where charge neutrality puts it
relative to the Fermi level, so the whole narrowing moves the minority band: the
conduction edge is lowered by dEg(N_A) where acceptors dominate (the p+ source of the
tunnel FET) and the valence edge raised by dEg(N_D) where donors dominate (drain, n+
source of the twin), at the local net doping. Left out: the change of the built-in
potential and of the junction field the self-consistent solution would show.

References
----------
.. [1] S. C. Jain, J. M. McGregor, D. J. Roulston, "Band-gap narrowing in novel III-V
   semiconductors", J. Appl. Phys. 68, 3747 (1990), doi:10.1063/1.346291.
.. [2] J. W. Slotboom, H. C. de Graaff, "Measurements of bandgap narrowing in Si bipolar
   transistors", Solid-State Electron. 19, 857 (1976).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sub60.physics.design import Design


@dataclass(frozen=True)
class JainCoefficients:
    """Coefficients of eq. (1) for one material and doping type.

    a_eV_cm : A [eV cm]; b_eV_cm34 : B [eV cm^(3/4)]; c_eV_cm32 : C [eV cm^(3/2)];
    source : where the numbers come from.
    """

    a_eV_cm: float
    b_eV_cm34: float
    c_eV_cm32: float
    source: str

    def narrowing_eV(self, doping_cm3: np.ndarray | float) -> np.ndarray:
        """dEg of eq. (1) [eV] at a doping [cm^-3]."""
        n = np.maximum(np.asarray(doping_cm3, float), 0.0)
        return self.a_eV_cm * np.cbrt(n) + self.b_eV_cm34 * n**0.25 + self.c_eV_cm32 * np.sqrt(n)


_JMR = "Jain, McGregor & Roulston, J. Appl. Phys. 68, 3747 (1990), Table (from memory)"

#: Eq. (1) coefficients: material -> {"n": donors, "p": acceptors}. All from memory.
JAIN_COEFFICIENTS: dict[str, dict[str, JainCoefficients]] = {
    "GaAs": {"n": JainCoefficients(16.5e-9, 2.39e-7, 91.4e-12, _JMR),
             "p": JainCoefficients(9.83e-9, 3.90e-7, 3.90e-12, _JMR)},
    "InAs": {"n": JainCoefficients(14.0e-9, 1.97e-7, 57.9e-12, _JMR),
             "p": JainCoefficients(8.34e-9, 2.91e-7, 4.53e-12, _JMR)},
    "In0.53Ga0.47As": {"n": JainCoefficients(15.5e-9, 1.95e-7, 159e-12, _JMR),
               "p": JainCoefficients(9.20e-9, 3.57e-7, 3.65e-12, _JMR)},
}

#: Eq. (2) constants (Slotboom & de Graaff 1976, from memory).
SLOTBOOM_V1_EV = 9e-3
SLOTBOOM_NREF_CM3 = 1e17
SLOTBOOM_C = 0.5


def slotboom_narrowing_eV(doping_cm3: np.ndarray | float) -> np.ndarray:
    """Si band-gap narrowing, eq. (2) [eV]; clipped at 0 (it is ~0.3 meV at 1e15)."""
    n = np.maximum(np.asarray(doping_cm3, float), 1.0)
    ln = np.log(n / SLOTBOOM_NREF_CM3)
    return np.maximum(SLOTBOOM_V1_EV * (ln + np.sqrt(ln**2 + SLOTBOOM_C)), 0.0)


def has_narrowing_model(material: str) -> bool:
    """True when sub60 has a band-gap-narrowing model for this material."""
    return material == "Si" or material in JAIN_COEFFICIENTS


def bandgap_narrowing_eV(material: str, doping_type: str, doping_cm3: np.ndarray | float) -> np.ndarray:
    """Doping-induced gap narrowing of a material [eV].

    Parameters
    ----------
    material : a sub60 semiconductor name; doping_type : "n" (donors) or "p" (acceptors);
    doping_cm3 : dopant concentration [cm^-3].

    Returns
    -------
    dEg >= 0 [eV], eq. (1) for the III-Vs of `JAIN_COEFFICIENTS`, eq. (2) for Si, zero
    for a material without a model (see `has_narrowing_model`).
    """
    if doping_type not in ("n", "p"):
        raise ValueError(f"doping_type: {doping_type!r} unknown; allowed 'n', 'p'")
    if material == "Si":
        return slotboom_narrowing_eV(doping_cm3)
    rec = JAIN_COEFFICIENTS.get(material)
    if rec is None:
        return np.zeros_like(np.asarray(doping_cm3, float))
    return rec[doping_type].narrowing_eV(doping_cm3)


def narrowed_profiles(
    design: Design, donors_cm3: np.ndarray, acceptors_cm3: np.ndarray,
    conduction_eV: np.ndarray, valence_eV: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Subband profiles with the minority-band shift of the local narrowing (see the
    module docstring) [eV].

    Parameters
    ----------
    design : the design (its material); donors_cm3, acceptors_cm3 : (nx,) dopants along
    x [cm^-3]; conduction_eV : (n_c, nx) and valence_eV : (n_v, nx) subband edges [eV].

    Returns
    -------
    (conduction, valence) : new arrays; conduction lowered by dEg(N_A - N_D) where
    acceptors dominate, valence raised by dEg(N_D - N_A) where donors dominate.
    """
    net = np.asarray(donors_cm3, float) - np.asarray(acceptors_cm3, float)
    d_p = np.where(net < 0, bandgap_narrowing_eV(design.material, "p", np.maximum(-net, 0.0)), 0.0)
    d_n = np.where(net > 0, bandgap_narrowing_eV(design.material, "n", np.maximum(net, 0.0)), 0.0)
    return conduction_eV - d_p[None, :], valence_eV + d_n[None, :]

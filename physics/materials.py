"""Material records: the body semiconductors and the gate dielectrics.

One frozen record per material. Every number carries its unit in its field name (masses
and permittivities are relative, to m0 and eps0) and its source in the record's
`sources` mapping; "from memory" marks values that were not read in the source while
writing this module, "derived" values computed here from other fields.

Conventions
-----------
* Band gap: Varshni law Eg(T) = Eg0 - alpha T^2/(T + beta) (Varshni, Physica 34, 149
  (1967)).
* Electron affinity chi is the 300 K value and is kept constant with temperature, so
  the whole temperature shift of the gap goes into the valence-band edge.
* Direct-gap III-Vs: one isotropic Gamma valley of mass `electron_mass`; the satellite
  L and X valleys are not counted in the charge or the tunnelling (GaSb's L valleys lie
  only ~0.06 eV above Gamma at 0 K (VMR 2001, from memory), so its conduction-band
  density of states is underestimated). Their gaps and masses (`SATELLITE_VALLEYS`)
  serve a warning when a confined satellite state lies below the Gamma subband C1.
* Si and Ge: `electron_mass` is the density-of-states mass of one valley,
  (m_l m_t^2)^(1/3), and `electron_dos_mass` that of the whole valley set.
* Holes: heavy- and light-hole masses from the Luttinger parameters (Luttinger, Phys.
  Rev. 102, 1030 (1956)); the hole density-of-states mass of the III-Vs and Ge is the
  spherical-model estimate of `_spherical_hole_dos_mass`.

References
----------
VMR 2001: I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, "Band parameters for III-V
compound semiconductors and their alloys", J. Appl. Phys. 89, 5815 (2001),
doi:10.1063/1.1368156.
Robertson 2004: J. Robertson, "High dielectric constant oxides", Eur. Phys. J. Appl.
Phys. 28, 265 (2004), Table 1.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

import numpy as np
import numpy.typing as npt

from sub60.physics.constants import (
    BOLTZMANN_J_PER_K,
    ELECTRON_MASS_KG,
    HBAR_J_S,
    thermal_energy_eV,
)

FloatOrArray = float | np.ndarray

# --- citations -----------------------------------------------------------------------
_VMR = "Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815 (2001)"
_IOFFE = "Ioffe Institute NSM semiconductor data archive (300 K)"
_ROBERTSON = "Robertson, Eur. Phys. J. Appl. Phys. 28, 265 (2004), Table 1"
_THURMOND = "Thurmond, J. Electrochem. Soc. 122, 1133 (1975)"
_GREEN = "Green, J. Appl. Phys. 67, 2944 (1990)"
_SZE = "Sze & Ng, Physics of Semiconductor Devices, 3rd ed., Wiley 2007, appendix"
_JACOBONI = "Jacoboni & Reggiani, Rev. Mod. Phys. 55, 645 (1983)"
_KANE_ALPHA = (
    "derived: two-band k.p estimate (1 - m*/m0)^2 / Eg0 from this record's electron_mass "
    "and eg0_eV (Kane, J. Phys. Chem. Solids 1, 249 (1957); from memory)"
)
_SPHERICAL_HOLES = (
    "derived: (m_hh^1.5 + m_lh^1.5)^(2/3), m = 1/(g1 -+ 2 gbar), gbar = (2 g2 + 3 g3)/5, "
    "from this record's Luttinger parameters (spherical model, Baldereschi & Lipari, "
    "Phys. Rev. B 8, 2697 (1973); from memory)"
)
_GAMMA_VALLEY_DOS = "derived: = electron_mass (one isotropic Gamma valley; L, X valleys ignored)"


# --- formulas ------------------------------------------------------------------------
def varshni_gap_eV(
    eg0_eV: float, alpha_eV_per_K: float, beta_K: float, temperature_K: npt.ArrayLike
) -> FloatOrArray:
    """Band gap at a temperature by the Varshni law.

    Eg(T) = Eg0 - alpha T^2 / (T + beta)  (Varshni, Physica 34, 149 (1967)).

    Parameters
    ----------
    eg0_eV : float
        gap at 0 K [eV].
    alpha_eV_per_K : float
        Varshni alpha [eV/K].
    beta_K : float
        Varshni beta [K].
    temperature_K : float or array_like
        lattice temperature, >= 0 [K].

    Returns
    -------
    float or numpy.ndarray
        band gap [eV].
    """
    t = _temperature(temperature_K, allow_zero=True)
    gap = eg0_eV - alpha_eV_per_K * t**2 / (t + beta_K)
    return float(gap) if np.ndim(gap) == 0 else gap


def kane_nonparabolicity_per_eV(electron_mass: float, gap_eV: float) -> float:
    """Conduction-band non-parabolicity of the two-band k.p model.

    alpha = (1 - m*/m0)^2 / Eg in E (1 + alpha E) = hbar^2 k^2 / (2 m*) (Kane, J. Phys.
    Chem. Solids 1, 249 (1957); from memory). An estimate: remote bands are neglected.

    Parameters
    ----------
    electron_mass : float
        band-edge electron mass m*/m0 [-].
    gap_eV : float
        band gap [eV].

    Returns
    -------
    float
        alpha [1/eV].
    """
    return (1.0 - electron_mass) ** 2 / gap_eV


def effective_density_of_states_cm3(
    dos_mass: float, temperature_K: npt.ArrayLike
) -> FloatOrArray:
    """Effective density of states of a parabolic band.

    N = 2 (m kT / (2 pi hbar^2))^(3/2) (Sze & Ng 3rd ed., ch. 1; from memory for the
    equation number), with k, hbar, m0 from scipy.constants (CODATA).

    Parameters
    ----------
    dos_mass : float
        density-of-states mass m/m0 [-].
    temperature_K : float or array_like
        temperature, > 0 [K].

    Returns
    -------
    float or numpy.ndarray
        N [cm^-3].
    """
    t = _temperature(temperature_K, allow_zero=False)
    per_m3 = 2.0 * (dos_mass * ELECTRON_MASS_KG * BOLTZMANN_J_PER_K * t
                    / (2.0 * math.pi * HBAR_J_S**2)) ** 1.5
    n = per_m3 * 1e-6
    return float(n) if np.ndim(n) == 0 else n


def _spherical_hole_dos_mass(luttinger: tuple[float, float, float]) -> float:
    """Hole density-of-states mass m0^-1 (m_hh^1.5 + m_lh^1.5)^(2/3) in the spherical model.

    gbar = (2 g2 + 3 g3)/5, m_hh = 1/(g1 - 2 gbar), m_lh = 1/(g1 + 2 gbar) (Baldereschi &
    Lipari, Phys. Rev. B 8, 2697 (1973); from memory). Warping and the split-off band are
    ignored, so this is an estimate (it fails for Si, whose split-off band is 44 meV
    away; Si uses Green's value instead).
    """
    g1, g2, g3 = luttinger
    gbar = (2.0 * g2 + 3.0 * g3) / 5.0
    heavy, light = 1.0 / (g1 - 2.0 * gbar), 1.0 / (g1 + 2.0 * gbar)
    return (heavy**1.5 + light**1.5) ** (2.0 / 3.0)


def _temperature(temperature_K: npt.ArrayLike, allow_zero: bool) -> np.ndarray:
    t = np.asarray(temperature_K, dtype=float)
    ok = np.isfinite(t) & ((t >= 0.0) if allow_zero else (t > 0.0))
    if not np.all(ok):
        bound = ">= 0" if allow_zero else "> 0"
        raise ValueError(f"temperature_K must be finite and {bound} K; got {temperature_K!r}")
    return t


# --- semiconductors ------------------------------------------------------------------
@dataclass(frozen=True)
class Semiconductor:
    """Band parameters of one semiconductor (masses relative to m0).

    Attributes
    ----------
    name : str
        material name, e.g. "InAs".
    eg0_eV : float
        band gap at 0 K [eV] (the lowest gap: Gamma for direct, X/L for Si/Ge).
    varshni_alpha_eV_per_K : float
        Varshni alpha [eV/K].
    varshni_beta_K : float
        Varshni beta [K].
    electron_affinity_eV : float
        electron affinity at 300 K, taken constant with temperature [eV].
    permittivity : float
        relative static permittivity [-].
    electron_mass : float
        electron mass m*/m0 [-]: the Gamma-valley band-edge mass for direct gaps; for
        Si and Ge the density-of-states mass of one valley (m_l m_t^2)^(1/3).
    luttinger : tuple of float
        Luttinger parameters (gamma1, gamma2, gamma3) [-].
    nonparabolicity_per_eV : float
        alpha in E (1 + alpha E) = hbar^2 k^2 / (2 m*) [1/eV].
    electron_dos_mass : float
        conduction-band density-of-states mass, all valleys [-].
    hole_dos_mass : float
        valence-band density-of-states mass [-].
    direct_gap : bool
        True if the conduction-band minimum is at Gamma (direct band-to-band
        tunnelling applies); False for Si and Ge (phonon-assisted, not modelled).
    sources : dict
        field name -> citation of its value.
    """

    name: str
    eg0_eV: float
    varshni_alpha_eV_per_K: float
    varshni_beta_K: float
    electron_affinity_eV: float
    permittivity: float
    electron_mass: float
    luttinger: tuple[float, float, float]
    nonparabolicity_per_eV: float
    electron_dos_mass: float
    hole_dos_mass: float
    direct_gap: bool
    sources: dict[str, str] = field(compare=False, repr=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "luttinger", tuple(float(g) for g in self.luttinger))
        object.__setattr__(self, "sources", dict(self.sources))
        if len(self.luttinger) != 3:
            raise ValueError(f"{self.name}: luttinger needs (gamma1, gamma2, gamma3)")
        positive = ("eg0_eV", "varshni_beta_K", "permittivity", "electron_mass",
                    "electron_dos_mass", "hole_dos_mass")
        for name in positive:
            value = getattr(self, name)
            if not (math.isfinite(value) and value > 0.0):
                raise ValueError(f"{self.name}: {name} must be finite and > 0; got {value!r}")
        g1, g2, _ = self.luttinger
        if not g1 > 2.0 * abs(g2):
            raise ValueError(f"{self.name}: Luttinger gamma1 must exceed 2|gamma2|")
        missing = [f.name for f in dataclasses.fields(self)
                   if f.name not in ("name", "sources") and not self.sources.get(f.name)]
        if missing:
            raise ValueError(f"{self.name}: no source for {', '.join(missing)}")

    def bandgap_eV(self, temperature_K: npt.ArrayLike) -> FloatOrArray:
        """Band gap at a temperature, Varshni law (see `varshni_gap_eV`).

        Parameters
        ----------
        temperature_K : float or array_like
            lattice temperature, >= 0 [K].

        Returns
        -------
        float or numpy.ndarray
            Eg(T) [eV].
        """
        return varshni_gap_eV(self.eg0_eV, self.varshni_alpha_eV_per_K, self.varshni_beta_K,
                              temperature_K)

    def nonparabolicity_at_per_eV(self, temperature_K: float) -> float:
        """Conduction-band non-parabolicity at a temperature [1/eV].

        Direct-gap records take the two-band k.p estimate `kane_nonparabolicity_per_eV`
        with the gap at that temperature (Varshni), since alpha ~ 1/Eg (Kane 1957, from
        memory); indirect records (Si, Ge: Monte Carlo values of their satellite valleys)
        keep their constant ``nonparabolicity_per_eV``.

        Parameters
        ----------
        temperature_K : float
            lattice temperature, >= 0 [K].

        Returns
        -------
        float
            alpha [1/eV]; e.g. InAs 2.28 at 0 K, 2.68 at 300 K.
        """
        if not self.direct_gap:
            return self.nonparabolicity_per_eV
        return kane_nonparabolicity_per_eV(self.electron_mass, float(self.bandgap_eV(temperature_K)))

    @property
    def heavy_hole_mass_confined(self) -> float:
        """Heavy-hole mass along [001], the confinement axis: 1/(g1 - 2 g2) [m0].

        Luttinger, Phys. Rev. 102, 1030 (1956); Davies, The Physics of Low-dimensional
        Semiconductors (CUP 1998) (from memory).
        """
        g1, g2, _ = self.luttinger
        return 1.0 / (g1 - 2.0 * g2)

    @property
    def light_hole_mass_confined(self) -> float:
        """Light-hole mass along [001]: 1/(g1 + 2 g2) [m0] (Luttinger 1956; from memory)."""
        g1, g2, _ = self.luttinger
        return 1.0 / (g1 + 2.0 * g2)

    @property
    def heavy_hole_mass_inplane(self) -> float:
        """Heavy-hole mass in the (001) plane: 1/(g1 + g2) [m0] (axial approximation;
        Luttinger 1956, Davies 1998; from memory). Lighter than the in-plane light hole
        ("mass reversal")."""
        g1, g2, _ = self.luttinger
        return 1.0 / (g1 + g2)

    @property
    def light_hole_mass_inplane(self) -> float:
        """Light-hole mass in the (001) plane: 1/(g1 - g2) [m0] (Luttinger 1956,
        Davies 1998; from memory)."""
        g1, g2, _ = self.luttinger
        return 1.0 / (g1 - g2)

    @property
    def supports_direct_tunnelling(self) -> bool:
        """True if band-to-band tunnelling is direct (vertical in k), as modelled."""
        return self.direct_gap

    def effective_dos_cm3(self, temperature_K: npt.ArrayLike) -> tuple[FloatOrArray, FloatOrArray]:
        """Effective densities of states of the conduction and valence bands.

        Nc, Nv = 2 (m_dos kT / (2 pi hbar^2))^(3/2) with this record's DOS masses, held
        constant with temperature (see `effective_density_of_states_cm3`).

        Parameters
        ----------
        temperature_K : float or array_like
            temperature, > 0 [K].

        Returns
        -------
        (float or numpy.ndarray, float or numpy.ndarray)
            Nc and Nv [cm^-3].
        """
        return (effective_density_of_states_cm3(self.electron_dos_mass, temperature_K),
                effective_density_of_states_cm3(self.hole_dos_mass, temperature_K))

    def intrinsic_density_cm3(self, temperature_K: npt.ArrayLike) -> FloatOrArray:
        """Intrinsic carrier density, nondegenerate statistics.

        n_i = sqrt(Nc Nv) exp(-Eg(T) / (2 kT)) (Sze & Ng 3rd ed., ch. 1; from memory for
        the equation number).

        Parameters
        ----------
        temperature_K : float or array_like
            temperature, > 0 [K].

        Returns
        -------
        float or numpy.ndarray
            n_i [cm^-3].
        """
        nc, nv = self.effective_dos_cm3(temperature_K)
        t = _temperature(temperature_K, allow_zero=False)
        ni = np.sqrt(nc * nv) * np.exp(-self.bandgap_eV(t) / (2.0 * thermal_energy_eV(t)))
        return float(ni) if np.ndim(ni) == 0 else ni


def _iii_v(name: str, eg0: float, alpha: float, beta: float, chi: float, eps: float,
           mass: float, luttinger: tuple[float, float, float],
           band_sources: str, chi_eps_sources: str) -> Semiconductor:
    """A direct-gap III-V record; non-parabolicity and DOS masses derived from its numbers."""
    return Semiconductor(
        name=name, eg0_eV=eg0, varshni_alpha_eV_per_K=alpha, varshni_beta_K=beta,
        electron_affinity_eV=chi, permittivity=eps, electron_mass=mass, luttinger=luttinger,
        nonparabolicity_per_eV=kane_nonparabolicity_per_eV(mass, eg0),
        electron_dos_mass=mass, hole_dos_mass=_spherical_hole_dos_mass(luttinger),
        direct_gap=True,
        sources={
            "eg0_eV": band_sources, "varshni_alpha_eV_per_K": band_sources,
            "varshni_beta_K": band_sources, "electron_mass": band_sources,
            "luttinger": band_sources, "electron_affinity_eV": chi_eps_sources,
            "permittivity": chi_eps_sources, "nonparabolicity_per_eV": _KANE_ALPHA,
            "electron_dos_mass": _GAMMA_VALLEY_DOS, "hole_dos_mass": _SPHERICAL_HOLES,
            "direct_gap": f"{_VMR} (Gamma minimum lowest)",
        },
    )


# VMR 2001 recommended values: Eg0 [eV], alpha [eV/K], beta [K], m_e/m0, (g1, g2, g3).
# Ioffe archive: electron affinity [eV], static permittivity, 300 K.
GAAS = _iii_v("GaAs", 1.519, 0.541e-3, 204.0, 4.07, 12.9, 0.067, (6.98, 2.06, 2.93),
              _VMR, _IOFFE)
INAS = _iii_v("InAs", 0.417, 0.276e-3, 93.0, 4.9, 15.15, 0.026, (20.0, 8.5, 9.2),
              _VMR, _IOFFE)
GASB = _iii_v("GaSb", 0.812, 0.417e-3, 140.0, 4.06, 15.7, 0.039, (13.4, 4.7, 6.0),
              _VMR, _IOFFE)
INSB = _iii_v("InSb", 0.235, 0.32e-3, 170.0, 4.59, 16.8, 0.0135, (34.8, 15.5, 16.5),
              _VMR, _IOFFE)


def _ga_in_as(ga_fraction: float, gaas_value: float, inas_value: float,
              bowing: float = 0.0) -> float:
    """VMR 2001 alloy rule for Ga_x In_(1-x) As: x P(GaAs) + (1-x) P(InAs) - x(1-x) C."""
    x = ga_fraction
    return x * gaas_value + (1.0 - x) * inas_value - x * (1.0 - x) * bowing


# In0.53Ga0.47As, lattice-matched to InP: Ga fraction 0.47. VMR 2001 bowing parameters
# 0.477 eV (gap) and 0.0091 (electron mass); alpha, beta and the Luttinger parameters
# interpolated linearly (no bowing given).
_X_GA = 0.47
_GAP_BOWING_EV = 0.477
_MASS_BOWING = 0.0091
_INGAAS_SOURCE = (f"derived: {_VMR} interpolation for Ga(x)In(1-x)As, x = 0.47, from the GaAs "
                  "and InAs records")
_INGAAS_LUTTINGER = tuple(_ga_in_as(_X_GA, g, i) for g, i in zip(GAAS.luttinger, INAS.luttinger,
                                                                   strict=True))
INGAAS = _iii_v(
    "In0.53Ga0.47As",
    eg0=_ga_in_as(_X_GA, GAAS.eg0_eV, INAS.eg0_eV, _GAP_BOWING_EV),
    alpha=_ga_in_as(_X_GA, GAAS.varshni_alpha_eV_per_K, INAS.varshni_alpha_eV_per_K),
    beta=_ga_in_as(_X_GA, GAAS.varshni_beta_K, INAS.varshni_beta_K),
    chi=4.5,  # from memory
    eps=13.9,  # from memory
    mass=_ga_in_as(_X_GA, GAAS.electron_mass, INAS.electron_mass, _MASS_BOWING),
    luttinger=_INGAAS_LUTTINGER,
    band_sources=_INGAAS_SOURCE + " (bowing: gap 0.477 eV, electron mass 0.0091)",
    chi_eps_sources="from memory (commonly quoted 300 K values for In0.53Ga0.47As)",
)

# Si: Varshni law of Thurmond (1975, from memory; read in secondary tables). Valley
# masses m_l = 0.98, m_t = 0.19 (Sze & Ng appendix, from memory) give electron_mass
# (m_l m_t^2)^(1/3) = 0.328. The DOS masses are chosen to reproduce Green's (1990)
# Nc = 2.86e19 and Nv = 3.10e19 cm^-3 at 300 K, inverting N = 2 (m kT/(2 pi hbar^2))^1.5:
# 1.0911 and 1.1513 (6^(2/3) x 0.328 = 1.084 without non-parabolicity).
SI = Semiconductor(
    name="Si",
    eg0_eV=1.170,
    varshni_alpha_eV_per_K=4.73e-4,
    varshni_beta_K=636.0,
    electron_affinity_eV=4.05,
    permittivity=11.7,
    electron_mass=(0.98 * 0.19**2) ** (1.0 / 3.0),
    luttinger=(4.285, 0.339, 1.446),  # from memory
    nonparabolicity_per_eV=0.5,  # Monte Carlo practice, from memory
    electron_dos_mass=1.0911,
    hole_dos_mass=1.1513,
    direct_gap=False,
    sources={
        "eg0_eV": f"{_THURMOND} (from memory; read in secondary tables)",
        "varshni_alpha_eV_per_K": f"{_THURMOND} (from memory; read in secondary tables)",
        "varshni_beta_K": f"{_THURMOND} (from memory; read in secondary tables)",
        "electron_affinity_eV": _IOFFE,
        "permittivity": _IOFFE,
        "electron_mass": f"derived: (m_l m_t^2)^(1/3), m_l 0.98, m_t 0.19 ({_SZE}; from memory)",
        "luttinger": "from memory (values commonly attributed to Lawaetz, Phys. Rev. B 4, "
                     "3460 (1971))",
        "nonparabolicity_per_eV": f"{_JACOBONI} (from memory)",
        "electron_dos_mass": f"derived: reproduces Nc = 2.86e19 cm^-3 at 300 K of {_GREEN}",
        "hole_dos_mass": f"derived: reproduces Nv = 3.10e19 cm^-3 at 300 K of {_GREEN}",
        "direct_gap": "indirect: conduction-band minima near X (Sze & Ng, ch. 1)",
    },
)

# Ge: gap law 0.7437 eV, 4.774e-4 eV/K, 235 K (from memory). Four L valleys (eight
# half-valleys on the zone boundary), m_l = 1.64, m_t = 0.082 (Sze & Ng appendix, from
# memory): DOS mass 4^(2/3) (m_l m_t^2)^(1/3) = 0.561.
_GE_LUTTINGER = (13.38, 4.24, 5.69)  # from memory
_GE_VALLEY_MASS = (1.64 * 0.082**2) ** (1.0 / 3.0)
GE = Semiconductor(
    name="Ge",
    eg0_eV=0.7437,
    varshni_alpha_eV_per_K=4.774e-4,
    varshni_beta_K=235.0,
    electron_affinity_eV=4.0,
    permittivity=16.2,
    electron_mass=_GE_VALLEY_MASS,
    luttinger=_GE_LUTTINGER,
    nonparabolicity_per_eV=0.3,  # L valleys, Monte Carlo practice, from memory
    electron_dos_mass=4.0 ** (2.0 / 3.0) * _GE_VALLEY_MASS,
    hole_dos_mass=_spherical_hole_dos_mass(_GE_LUTTINGER),
    direct_gap=False,
    sources={
        "eg0_eV": "from memory (Varshni fit of the indirect L gap)",
        "varshni_alpha_eV_per_K": "from memory (Varshni fit of the indirect L gap)",
        "varshni_beta_K": "from memory (Varshni fit of the indirect L gap)",
        "electron_affinity_eV": _IOFFE,
        "permittivity": _IOFFE,
        "electron_mass": f"derived: (m_l m_t^2)^(1/3), m_l 1.64, m_t 0.082 ({_SZE}; from memory)",
        "luttinger": "from memory (values commonly attributed to Lawaetz, Phys. Rev. B 4, "
                     "3460 (1971))",
        "nonparabolicity_per_eV": f"{_JACOBONI} (from memory)",
        "electron_dos_mass": "derived: 4^(2/3) electron_mass (four L valleys)",
        "hole_dos_mass": _SPHERICAL_HOLES,
        "direct_gap": "indirect: conduction-band minima at L (Sze & Ng, ch. 1)",
    },
)

#: Semiconductor records by name; direct-gap III-Vs first.
SEMICONDUCTORS: dict[str, Semiconductor] = {
    record.name: record for record in (INAS, INGAAS, GASB, INSB, GAAS, SI, GE)
}


def semiconductors() -> dict[str, Semiconductor]:
    """The body semiconductors sub60 knows, by name (a new dictionary each call).

    Returns
    -------
    dict of str to Semiconductor
        each record's ``sources`` maps every field to the citation of its value (see
        the module docstring for the references and conventions).
    """
    return dict(SEMICONDUCTORS)


def get_semiconductor(name: str) -> Semiconductor:
    """The semiconductor record of a name, matched case-insensitively.

    Parameters
    ----------
    name : str
        material name, e.g. "InAs" or "inas".

    Returns
    -------
    Semiconductor

    Raises
    ------
    ValueError
        for an unknown name; the message lists the known names.
    """
    return _lookup(name, SEMICONDUCTORS, "semiconductor")


def check_tunnelling_material(semiconductor: Semiconductor) -> str | None:
    """Warning text if band-to-band tunnelling in this material is not modelled.

    Parameters
    ----------
    semiconductor : Semiconductor
        body material.

    Returns
    -------
    str or None
        None for a direct gap; otherwise a sentence for the user.
    """
    if semiconductor.supports_direct_tunnelling:
        return None
    return (
        f"{semiconductor.name} has an indirect band gap: band-to-band tunnelling in it "
        "needs a phonon, which this model does not include, so its tunnelling currents "
        "would be wrong (the electrostatics and the thermionic current are still valid)."
    )


def band_edges_vs_vacuum(semiconductor: Semiconductor,
                         temperature_K: npt.ArrayLike) -> tuple[FloatOrArray, FloatOrArray]:
    """Conduction- and valence-band edges relative to the vacuum level.

    Ec = -chi, Ev = -chi - Eg(T) (electron-affinity rule, Anderson, Solid-State
    Electron. 5, 341 (1962); from memory). chi is held at its 300 K value.

    Parameters
    ----------
    semiconductor : Semiconductor
        material.
    temperature_K : float or array_like
        lattice temperature, >= 0 [K].

    Returns
    -------
    (float, float or numpy.ndarray)
        Ec and Ev [eV], negative: energies below the vacuum level.
    """
    ec = -semiconductor.electron_affinity_eV
    return ec, ec - semiconductor.bandgap_eV(temperature_K)


# --- dielectrics ---------------------------------------------------------------------
@dataclass(frozen=True)
class Dielectric:
    """A gate dielectric: permittivity and the barrier it presents to carriers.

    Attributes
    ----------
    name : str
        dielectric name, e.g. "HfO2".
    permittivity : float
        relative static permittivity [-].
    bandgap_eV : float
        band gap [eV].
    electron_affinity_eV : float
        electron affinity [eV].
    tunnelling_mass : float
        electron mass in the oxide gap, m/m0, used for the confinement barrier [-].
    sources : dict
        field name -> citation of its value.
    """

    name: str
    permittivity: float
    bandgap_eV: float
    electron_affinity_eV: float
    tunnelling_mass: float
    sources: dict[str, str] = field(compare=False, repr=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "sources", dict(self.sources))
        for name in ("permittivity", "bandgap_eV", "tunnelling_mass"):
            value = getattr(self, name)
            if not (math.isfinite(value) and value > 0.0):
                raise ValueError(f"{self.name}: {name} must be finite and > 0; got {value!r}")
        missing = [f.name for f in dataclasses.fields(self)
                   if f.name not in ("name", "sources") and not self.sources.get(f.name)]
        if missing:
            raise ValueError(f"{self.name}: no source for {', '.join(missing)}")


_SI_AFFINITY_EV = SI.electron_affinity_eV  # 4.05 eV (Ioffe): reference of Robertson's offsets
_TUNNELLING_MASS = 0.4  # common practice, no source
_TUNNELLING_MASS_SOURCE = "common practice, no source (0.4 m0 for all oxides)"


def _oxide(name: str, permittivity: float, gap_eV: float, cbo_to_si_eV: float,
           permittivity_source: str = _ROBERTSON) -> Dielectric:
    """An oxide record from Robertson's Table 1: chi_ox = chi_Si - CBO(Si)."""
    return Dielectric(
        name=name, permittivity=permittivity, bandgap_eV=gap_eV,
        electron_affinity_eV=round(_SI_AFFINITY_EV - cbo_to_si_eV, 9),  # no 0.8499999...
        tunnelling_mass=_TUNNELLING_MASS,
        sources={
            "permittivity": permittivity_source,
            "bandgap_eV": _ROBERTSON,
            "electron_affinity_eV": (f"derived: chi_Si {_SI_AFFINITY_EV} eV ({_IOFFE}) minus "
                                     f"the conduction-band offset to Si {cbo_to_si_eV} eV "
                                     f"({_ROBERTSON})"),
            "tunnelling_mass": _TUNNELLING_MASS_SOURCE,
        },
    )


# Robertson 2004, Table 1: permittivity, gap [eV], conduction-band offset to Si [eV].
SIO2 = _oxide("SiO2", 3.9, 9.0, 3.2)
AL2O3 = _oxide("Al2O3", 9.0, 8.8, 2.8)
# Robertson gives 20-25 for HfO2 (it depends on phase and deposition); 22 is inside the
# range near its middle, rounded to an integer.
HFO2 = _oxide("HfO2", 22.0, 5.8, 1.4,
              permittivity_source=f"{_ROBERTSON} gives 20-25; 22 taken inside the range")
ZRO2 = _oxide("ZrO2", 25.0, 5.8, 1.5)

#: Dielectric records by name (a custom dielectric comes from `custom_dielectric`).
DIELECTRICS: dict[str, Dielectric] = {d.name: d for d in (SIO2, AL2O3, HFO2, ZRO2)}

#: The buried oxide under a single-gate body (a key of DIELECTRICS).
BURIED_OXIDE = "SiO2"

#: Accepted range of a custom dielectric's relative permittivity [-].
CUSTOM_PERMITTIVITY_RANGE: tuple[float, float] = (1.0, 100.0)
_CUSTOM_GAP_EV = 6.0  # assumption: a generic high-k barrier, near HfO2/ZrO2
_CUSTOM_AFFINITY_EV = 2.0  # assumption: between HfO2 (2.65) and Al2O3 (1.25)


def dielectrics() -> dict[str, Dielectric]:
    """The named gate dielectrics, by name (a new dictionary each call).

    Returns
    -------
    dict of str to Dielectric
        each record's ``sources`` maps every field to the citation of its value
        (Robertson 2004, Table 1, for the permittivities, gaps and band offsets). A
        dielectric of any other permittivity comes from `custom_dielectric`.
    """
    return dict(DIELECTRICS)


def get_dielectric(name: str) -> Dielectric:
    """The dielectric record of a name, matched case-insensitively.

    Parameters
    ----------
    name : str
        dielectric name, e.g. "HfO2" or "hfo2".

    Returns
    -------
    Dielectric

    Raises
    ------
    ValueError
        for an unknown name; the message lists the known names.
    """
    return _lookup(name, DIELECTRICS, "dielectric",
                   hint=" (use custom_dielectric(permittivity) for any other)")


def custom_dielectric(permittivity: float) -> Dielectric:
    """A dielectric of a given permittivity with assumed barrier parameters.

    The barrier is an assumption, not a measured material: gap 6 eV, electron affinity
    2.0 eV (between the HfO2 and Al2O3 values derived from Robertson 2004), tunnelling
    mass 0.4 m0 (common practice, no source).

    Parameters
    ----------
    permittivity : float
        relative permittivity of the gate dielectric, in [1, 100] [-].

    Returns
    -------
    Dielectric
        a record named "custom".

    Raises
    ------
    ValueError
        if the permittivity is not a finite number in [1, 100]; the message names
        `oxide_permittivity`, the design field it comes from.
    """
    low, high = CUSTOM_PERMITTIVITY_RANGE
    try:
        value = float(permittivity)
    except (TypeError, ValueError):
        value = math.nan
    if not (math.isfinite(value) and low <= value <= high):
        raise ValueError(
            f"oxide_permittivity must be a number in [{low:g}, {high:g}]; got {permittivity!r}"
        )
    assumption = "assumption for a custom dielectric, no source"
    return Dielectric(
        name="custom", permittivity=value, bandgap_eV=_CUSTOM_GAP_EV,
        electron_affinity_eV=_CUSTOM_AFFINITY_EV, tunnelling_mass=_TUNNELLING_MASS,
        sources={
            "permittivity": "set by the user",
            "bandgap_eV": assumption,
            "electron_affinity_eV": assumption,
            "tunnelling_mass": _TUNNELLING_MASS_SOURCE,
        },
    )


def eot_nm(thickness_nm: npt.ArrayLike, permittivity: float) -> FloatOrArray:
    """Equivalent oxide thickness: the SiO2 thickness of the same capacitance.

    EOT = t_ox * 3.9 / eps_ox (common practice, no source; 3.9 is the SiO2 record).

    Parameters
    ----------
    thickness_nm : float or array_like
        physical dielectric thickness, >= 0 [nm].
    permittivity : float
        relative permittivity of the dielectric, > 0 [-].

    Returns
    -------
    float or numpy.ndarray
        EOT [nm].
    """
    t = np.asarray(thickness_nm, dtype=float)
    if not (math.isfinite(permittivity) and permittivity > 0.0):
        raise ValueError(f"permittivity must be finite and > 0; got {permittivity!r}")
    if not np.all(np.isfinite(t) & (t >= 0.0)):
        raise ValueError(f"thickness_nm must be finite and >= 0; got {thickness_nm!r}")
    eot = t * SIO2.permittivity / permittivity
    return float(eot) if eot.ndim == 0 else eot


def _lookup(name: str, records: dict, kind: str, hint: str = ""):
    wanted = str(name).strip().lower()
    for key, record in records.items():
        if key.lower() == wanted:
            return record
    raise ValueError(f"unknown {kind} {name!r}; known: {', '.join(records)}{hint}")


# --- satellite conduction valleys ----------------------------------------------------
@dataclass(frozen=True)
class SatelliteValley:
    """A conduction-band valley away from Gamma (L or X) of a direct-gap III-V.

    Parameters
    ----------
    name : "L" or "X"
    eg0_eV : gap from the valence-band maximum to the valley minimum at 0 K [eV]
    varshni_alpha_eV_per_K, varshni_beta_K : Varshni law of that gap [eV/K], [K]
    longitudinal_mass, transverse_mass : valley masses m_l, m_t [m0]
    source : where the numbers come from
    """

    name: str
    eg0_eV: float
    varshni_alpha_eV_per_K: float
    varshni_beta_K: float
    longitudinal_mass: float
    transverse_mass: float
    source: str

    def gap_eV(self, temperature_K: float) -> float:
        """Gap to this valley at a temperature (Varshni) [eV]."""
        return float(varshni_gap_eV(self.eg0_eV, self.varshni_alpha_eV_per_K, self.varshni_beta_K,
                                    temperature_K))

    def confinement_masses(self) -> tuple[float, ...]:
        """Masses along [001] of the valleys of this set, lowest confinement first [m0].

        L: four valleys along <111>, 1/m_z = cos^2(t)/m_l + sin^2(t)/m_t with cos^2(t) = 1/3
        (all four alike). X: the [001] pair has m_z = m_l, the [100] and [010] pairs m_t
        (ellipsoidal valleys; e.g. Davies 1998 — common practice, no source).
        """
        if self.name == "L":
            return (1.0 / (1.0 / (3.0 * self.longitudinal_mass)
                           + 2.0 / (3.0 * self.transverse_mass)),)
        return (self.longitudinal_mass, self.transverse_mass)


_VMR_MEMORY = f"{_VMR}, Tables (from memory: confirm before relying on an exact figure)"
#: L and X valleys of the direct-gap III-Vs (VMR 2001, from memory). InSb's valley masses
#: were not recalled: InAs's are used as an estimate. In0.53Ga0.47As: linear interpolation
#: of GaAs and InAs without the bowing parameters (which would lower both gaps).
SATELLITE_VALLEYS: dict[str, tuple[SatelliteValley, ...]] = {
    "GaAs": (SatelliteValley("L", 1.815, 0.605e-3, 204.0, 1.9, 0.0754, _VMR_MEMORY),
             SatelliteValley("X", 1.981, 0.460e-3, 204.0, 1.3, 0.23, _VMR_MEMORY)),
    "InAs": (SatelliteValley("L", 1.133, 0.276e-3, 93.0, 0.64, 0.05, _VMR_MEMORY),
             SatelliteValley("X", 1.433, 0.276e-3, 93.0, 1.13, 0.16, _VMR_MEMORY)),
    "GaSb": (SatelliteValley("L", 0.875, 0.597e-3, 140.0, 1.3, 0.10, _VMR_MEMORY),
             SatelliteValley("X", 1.141, 0.475e-3, 94.0, 1.51, 0.22, _VMR_MEMORY)),
    "InSb": (SatelliteValley("L", 0.93, 0.32e-3, 170.0, 0.64, 0.05,
                             _VMR_MEMORY + "; masses: InAs values as an estimate"),
             SatelliteValley("X", 0.63, 0.32e-3, 170.0, 1.13, 0.16,
                             _VMR_MEMORY + "; masses: InAs values as an estimate")),
}
SATELLITE_VALLEYS["In0.53Ga0.47As"] = tuple(
    SatelliteValley(g.name, _ga_in_as(_X_GA, g.eg0_eV, i.eg0_eV),
                    _ga_in_as(_X_GA, g.varshni_alpha_eV_per_K, i.varshni_alpha_eV_per_K),
                    _ga_in_as(_X_GA, g.varshni_beta_K, i.varshni_beta_K),
                    _ga_in_as(_X_GA, g.longitudinal_mass, i.longitudinal_mass),
                    _ga_in_as(_X_GA, g.transverse_mass, i.transverse_mass),
                    "derived: linear GaAs-InAs interpolation (no bowing) of " + _VMR_MEMORY)
    for g, i in zip(SATELLITE_VALLEYS["GaAs"], SATELLITE_VALLEYS["InAs"], strict=True))

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
from functools import lru_cache

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
        band gap at 0 K [eV]: Gamma for the III-Vs (also for AlSb and Al-rich AlGaSb,
        whose X gap is lower), the indirect X/L gap for Si, Ge, SiGe.
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
        tunnelling applies); False for Si, Ge and SiGe (phonon-assisted tunnelling,
        `sub60.physics.indirect_tunnelling`) and for AlSb-rich Al(x)Ga(1-x)Sb.
    sources : dict
        field name -> citation of its value.
    valence_band_offset_eV : float or None
        valence-band maximum on the common scale of VMR 2001 (InSb maximum at 0),
        held fixed with temperature [eV]; None where no value is tabulated.
    composition : tuple of (str, float) or None
        (alloy family, x) of a record built by `alloy_semiconductor`; None for the
        fixed records.
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
    valence_band_offset_eV: float | None = None
    composition: tuple[str, float] | None = None

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
                   if f.name not in ("name", "sources", "composition")
                   and getattr(self, f.name) is not None and not self.sources.get(f.name)]
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
           band_sources: str, chi_eps_sources: str, vbo: float | None = None,
           vbo_source: str = _VMR) -> Semiconductor:
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
            "valence_band_offset_eV": vbo_source,
        },
        valence_band_offset_eV=vbo,
    )


# VMR 2001 recommended values: Eg0 [eV], alpha [eV/K], beta [K], m_e/m0, (g1, g2, g3).
# Ioffe archive: electron affinity [eV], static permittivity, 300 K.
GAAS = _iii_v("GaAs", 1.519, 0.541e-3, 204.0, 4.07, 12.9, 0.067, (6.98, 2.06, 2.93),
              _VMR, _IOFFE, vbo=-0.8)
INAS = _iii_v("InAs", 0.417, 0.276e-3, 93.0, 4.9, 15.15, 0.026, (20.0, 8.5, 9.2),
              _VMR, _IOFFE, vbo=-0.59)
GASB = _iii_v("GaSb", 0.812, 0.417e-3, 140.0, 4.06, 15.7, 0.039, (13.4, 4.7, 6.0),
              _VMR, _IOFFE, vbo=-0.03)
INSB = _iii_v("InSb", 0.235, 0.32e-3, 170.0, 4.59, 16.8, 0.0135, (34.8, 15.5, 16.5),
              _VMR, _IOFFE, vbo=0.0)


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
_VBO_BOWING_EV = -0.38
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
    vbo=_ga_in_as(_X_GA, -0.80, -0.59, _VBO_BOWING_EV),
    vbo_source=_INGAAS_SOURCE + " (VBO bowing -0.38 eV)",
)

# Valence-band offsets of Si and Ge on the VMR scale (InSb maximum at 0). VMR 2001 does
# not cover group IV. Ge is tied to GaAs (VMR -0.80 eV) by the measured Ge/GaAs offset,
# Ge maximum 0.53 eV above GaAs's (Kraut, Grant, Waldrop & Kowalczyk, Phys. Rev. Lett.
# 44, 1620 (1980); from memory). Si follows from the unstrained Ge/Si offset of the
# model-solid theory: average valence bands 0.54 eV apart (Van de Walle & Martin, Phys.
# Rev. B 34, 5621 (1986); from memory), plus one third of each spin-orbit splitting
# (Ge 0.29 eV, Si 0.044 eV; from memory) to reach the band maxima. Uncertain to about
# 0.1 eV.
_GE_VBO_EV = -0.80 + 0.53
_SI_VBO_EV = _GE_VBO_EV - (0.54 + (0.29 - 0.044) / 3.0)
_GE_VBO_SOURCE = ("derived: GaAs -0.80 eV (VMR 2001) + 0.53 eV Ge/GaAs offset (Kraut et al., "
                  "Phys. Rev. Lett. 44, 1620 (1980); from memory)")
_SI_VBO_SOURCE = ("derived: Ge value minus the unstrained Ge/Si offset 0.54 eV + (0.29 - 0.044)/3 "
                  "eV (model-solid theory, Van de Walle & Martin, Phys. Rev. B 34, 5621 (1986); "
                  "spin-orbit splittings; from memory)")

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
        "valence_band_offset_eV": _SI_VBO_SOURCE,
    },
    valence_band_offset_eV=_SI_VBO_EV,
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
        "valence_band_offset_eV": _GE_VBO_SOURCE,
    },
    valence_band_offset_eV=_GE_VBO_EV,
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
    if str(name).strip().lower() in (k.lower() for k in ALLOYS):
        raise ValueError(f"{name!r} is an alloy family: give its composition "
                         "(alloy_semiconductor(name, x), or a design's composition_x)")
    return _lookup(name, SEMICONDUCTORS, "semiconductor")


def group_iv_germanium_fraction(semiconductor: Semiconductor) -> float | None:
    """Ge fraction of a group-IV body (Si 0, Ge 1, Si(1-x)Ge(x) x); None otherwise.

    Parameters
    ----------
    semiconductor : Semiconductor

    Returns
    -------
    float or None
        [-]
    """
    if semiconductor.composition is not None:
        family, x = semiconductor.composition
        return x if family == "SiGe" else None
    return {"Si": 0.0, "Ge": 1.0}.get(semiconductor.name)


def check_tunnelling_material(semiconductor: Semiconductor) -> str | None:
    """What the band-to-band model of this material leaves out, or a warning that it is
    not modelled.

    Parameters
    ----------
    semiconductor : Semiconductor
        body material.

    Returns
    -------
    str or None
        None for a direct gap; for Si, Ge and SiGe (phonon-assisted tunnelling,
        `sub60.physics.indirect_tunnelling`) a statement of what that model leaves
        out; for another indirect gap (AlSb-rich AlGaSb) a warning that band-to-band
        currents are not modelled.
    """
    if semiconductor.supports_direct_tunnelling:
        return None
    if group_iv_germanium_fraction(semiconductor) is not None:
        return (
            f"{semiconductor.name} has an indirect band gap: its band-to-band current comes "
            "from a phonon-assisted model (Kane/Keldysh uniform-field rate A (F/F0)^2.5 "
            "exp(-B/F) with Hurkx's Si parameters, applied along each energy's tunnel path; "
            "for Ge also the direct Gamma path). It leaves out the phonon spectrum and "
            "tunnelling direction, strain, the valley splitting of a thin body (only the "
            "wider confined gap enters), and its Ge and SiGe parameters are scaled from Si, "
            "not calibrated."
        )
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


# --- alloys with a composition -------------------------------------------------------
# AlSb: an endpoint of Al(x)Ga(1-x)Sb, not a body choice of its own (its lowest
# conduction minimum is at X). VMR 2001 recommended values: Gamma gap 2.386 eV,
# 0.42 meV/K, 140 K; m_e(Gamma) 0.14; Luttinger 5.18, 1.19, 1.97; VBO -0.41 eV.
# Permittivity 12.04 and electron affinity 3.65 eV at 300 K: Ioffe archive (from memory).
_ALSB_GAMMA = _iii_v("AlSb", 2.386, 0.42e-3, 140.0, 3.65, 12.04, 0.14, (5.18, 1.19, 1.97),
                     _VMR, f"{_IOFFE} (from memory)", vbo=-0.41)
ALSB = dataclasses.replace(
    _ALSB_GAMMA, direct_gap=False,
    sources={**_ALSB_GAMMA.sources,
             "direct_gap": f"indirect: X minimum 1.696 eV at 0 K below Gamma ({_VMR})",
             "eg0_eV": f"{_VMR} (the Gamma gap; the X gap is lower)"},
)

SATELLITE_VALLEYS["AlSb"] = (
    SatelliteValley("L", 2.329, 0.58e-3, 140.0, 1.64, 0.23, _VMR),
    SatelliteValley("X", 1.696, 0.39e-3, 140.0, 1.357, 0.123, _VMR),
)


@dataclass(frozen=True)
class AlloyFamily:
    """A ternary alloy A(x)B(1-x) with VMR 2001 interpolation: P(x) = x P(A) + (1-x) P(B)
    - x(1-x) C(x), with C(x) = c0 + c1 x (a constant bowing where c1 = 0).

    Parameters
    ----------
    name : short name used as a design ``material`` (e.g. "InGaAs")
    formula : the composition convention, e.g. "In(x)Ga(1-x)As"
    at_one, at_zero : names of the endpoint records (x = 1 and x = 0)
    gap_bowing_eV : (c0, c1) of the Gamma-gap bowing [eV]
    mass_bowing : Gamma electron-mass bowing [m0]
    vbo_bowing_eV : valence-band-offset bowing [eV]
    x_bowing_eV, l_bowing_eV : bowing of the X and L valley gaps [eV]
    source : citation of the bowing parameters
    """

    name: str
    formula: str
    at_one: str
    at_zero: str
    gap_bowing_eV: tuple[float, float]
    mass_bowing: float
    vbo_bowing_eV: float
    x_bowing_eV: float
    l_bowing_eV: float
    source: str

    def gap_bowing_at(self, x: float) -> float:
        """Gamma-gap bowing C(x) = c0 + c1 x [eV]."""
        return self.gap_bowing_eV[0] + self.gap_bowing_eV[1] * x


_VMR_BOWING = f"{_VMR}, bowing parameters of the ternary alloys"
#: III-V alloy families (VMR 2001 bowing parameters; 0 where the paper gives none) and
#: Si(1-x)Ge(x) (built separately, `_sige`).
ALLOYS: dict[str, AlloyFamily] = {
    "InGaAs": AlloyFamily("InGaAs", "In(x)Ga(1-x)As", "InAs", "GaAs", (0.477, 0.0), 0.0091,
                          -0.38, 1.4, 0.33, _VMR_BOWING),
    "AlGaSb": AlloyFamily("AlGaSb", "Al(x)Ga(1-x)Sb", "AlSb", "GaSb", (-0.044, 1.22), 0.0,
                          0.0, 0.0, 0.0, _VMR_BOWING + " (gap bowing -0.044 + 1.22 x)"),
    "GaAsSb": AlloyFamily("GaAsSb", "GaAs(x)Sb(1-x)", "GaAs", "GaSb", (1.43, 0.0), 0.0,
                          -1.06, 1.2, 1.2, _VMR_BOWING),
    "InAsSb": AlloyFamily("InAsSb", "InAs(x)Sb(1-x)", "InAs", "InSb", (0.67, 0.0), 0.035,
                          0.0, 0.6, 0.6, _VMR_BOWING),
    "SiGe": AlloyFamily("SiGe", "Si(1-x)Ge(x)", "Ge", "Si", (0.0, 0.0), 0.0, 0.0, 0.0, 0.0,
                        "Weber & Alonso, Phys. Rev. B 40, 5683 (1989) (gap; from memory)"),
}


def alloys() -> dict[str, AlloyFamily]:
    """The alloy families a design may name as ``material`` with a ``composition_x``
    (a new dictionary each call).

    Returns
    -------
    dict of str to AlloyFamily
        "InGaAs", "AlGaSb", "GaAsSb", "InAsSb" (VMR 2001) and "SiGe".
    """
    return dict(ALLOYS)


def _endpoint(name: str) -> Semiconductor:
    return ALSB if name == "AlSb" else SEMICONDUCTORS[name]


def _mix(x: float, at_one: float, at_zero: float, bowing: float = 0.0) -> float:
    """x P(x=1) + (1-x) P(x=0) - x(1-x) C (VMR 2001, eq. for ternary alloys)."""
    return x * at_one + (1.0 - x) * at_zero - x * (1.0 - x) * bowing


def _check_composition(family: str, x: object) -> float:
    if family not in ALLOYS:
        raise ValueError(f"unknown alloy {family!r}; known: {', '.join(ALLOYS)}")
    try:
        value = float(x)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        value = math.nan
    if isinstance(x, bool) or not (math.isfinite(value) and 0.0 <= value <= 1.0):
        raise ValueError(f"composition_x: {x!r} outside the allowed range [0, 1] for "
                         f"{ALLOYS[family].formula}")
    return value


def alloy_semiconductor(family: str, composition_x: float) -> Semiconductor:
    """The band parameters of an alloy at a composition.

    III-V families (VMR 2001): the Gamma gap, electron mass and valence-band offset
    follow P(x) = x P(A) + (1-x) P(B) - x(1-x) C with the paper's bowing C (0 where it
    gives none); the Varshni alpha and beta, the Luttinger parameters and the
    permittivity are interpolated linearly (VMR 2001 for the first two; common
    practice, no source, for the permittivity). The 300 K electron affinity is the
    linear mix of the endpoints' minus the bowing of the conduction edge
    Ec = VBO + Eg(300 K) (derived: the affinity follows the conduction edge). The
    non-parabolicity and the densities-of-states masses are derived as for the
    binaries. The record carries the Gamma gap; ``direct_gap`` is False where an
    interpolated X or L valley lies below Gamma at 0 K (AlSb-rich Al(x)Ga(1-x)Sb).

    Si(1-x)Ge(x): see `_sige` (Weber & Alonso 1989 gap, branch by branch).

    Parameters
    ----------
    family : str
        "InGaAs", "AlGaSb", "GaAsSb", "InAsSb" or "SiGe" (`ALLOYS`).
    composition_x : float
        x of the family's formula, in [0, 1] [-].

    Returns
    -------
    Semiconductor
        named e.g. "InGaAs (x = 0.53)", with ``composition`` = (family, x) and every
        field's source; at x = 0 and 1 its numbers equal the endpoint records'.

    Raises
    ------
    ValueError
        for an unknown family or a composition outside [0, 1] (naming composition_x).
    """
    x = _check_composition(family, composition_x)
    return _alloy_cached(family, x)


@lru_cache(maxsize=256)
def _alloy_cached(family: str, x: float) -> Semiconductor:
    fam = ALLOYS[family]
    if family == "SiGe":
        return _sige(x)
    one, zero = _endpoint(fam.at_one), _endpoint(fam.at_zero)
    where = f"derived: {fam.formula}, x = {x:g}, from the {fam.at_one} and {fam.at_zero} records"
    eg0 = _mix(x, one.eg0_eV, zero.eg0_eV, fam.gap_bowing_at(x))
    alpha = _mix(x, one.varshni_alpha_eV_per_K, zero.varshni_alpha_eV_per_K)
    beta = _mix(x, one.varshni_beta_K, zero.varshni_beta_K)
    vbo = _mix(x, one.valence_band_offset_eV, zero.valence_band_offset_eV, fam.vbo_bowing_eV)
    eg300 = float(varshni_gap_eV(eg0, alpha, beta, 300.0))
    ec_bowing = (vbo + eg300) - _mix(x, one.valence_band_offset_eV + float(one.bandgap_eV(300.0)),
                                     zero.valence_band_offset_eV + float(zero.bandgap_eV(300.0)))
    chi = _mix(x, one.electron_affinity_eV, zero.electron_affinity_eV) - ec_bowing
    luttinger = tuple(_mix(x, a, b) for a, b in zip(one.luttinger, zero.luttinger, strict=True))
    record = _iii_v(
        f"{family} (x = {x:g})", eg0, alpha, beta, chi,
        _mix(x, one.permittivity, zero.permittivity),
        _mix(x, one.electron_mass, zero.electron_mass, fam.mass_bowing), luttinger,
        band_sources=f"{where}; bowing: {fam.source}",
        chi_eps_sources=(f"{where}: permittivity linear (common practice, no source); "
                         "affinity linear minus the bowing of Ec = VBO + Eg(300 K)"),
        vbo=vbo, vbo_source=f"{where}; bowing: {fam.source}")
    valleys = _alloy_valleys(fam, x)
    lowest = min(v.eg0_eV for v in valleys)
    direct = eg0 <= lowest
    sources = dict(record.sources)
    sources["direct_gap"] = (f"derived: Gamma gap {eg0:.3f} eV vs the lowest interpolated "
                             f"satellite gap {lowest:.3f} eV at 0 K ({fam.source})")
    record = dataclasses.replace(record, direct_gap=direct, composition=(family, x),
                                 sources=sources)
    _ALLOY_VALLEYS[record.name] = valleys
    return record


_ALLOY_VALLEYS: dict[str, tuple[SatelliteValley, ...]] = {}


def _alloy_valleys(fam: AlloyFamily, x: float) -> tuple[SatelliteValley, ...]:
    """L and X valleys of a III-V alloy: gaps with the VMR bowing, the rest linear."""
    out = []
    for v1, v0 in zip(SATELLITE_VALLEYS[fam.at_one], SATELLITE_VALLEYS[fam.at_zero], strict=True):
        bowing = fam.l_bowing_eV if v1.name == "L" else fam.x_bowing_eV
        out.append(SatelliteValley(
            v1.name, _mix(x, v1.eg0_eV, v0.eg0_eV, bowing),
            _mix(x, v1.varshni_alpha_eV_per_K, v0.varshni_alpha_eV_per_K),
            _mix(x, v1.varshni_beta_K, v0.varshni_beta_K),
            _mix(x, v1.longitudinal_mass, v0.longitudinal_mass),
            _mix(x, v1.transverse_mass, v0.transverse_mass),
            f"derived: interpolation of the {fam.at_one} and {fam.at_zero} valleys, gap bowing "
            f"{bowing:g} eV ({fam.source})"))
    return tuple(out)


def satellite_valleys(semiconductor: Semiconductor) -> tuple[SatelliteValley, ...]:
    """L and X valleys of a direct-gap III-V record, fixed or alloy (empty otherwise).

    Parameters
    ----------
    semiconductor : Semiconductor

    Returns
    -------
    tuple of SatelliteValley
    """
    if semiconductor.composition is not None:
        if semiconductor.name not in _ALLOY_VALLEYS and semiconductor.composition[0] != "SiGe":
            alloy_semiconductor(*semiconductor.composition)
        return _ALLOY_VALLEYS.get(semiconductor.name, ())
    return SATELLITE_VALLEYS.get(semiconductor.name, ())


# Si(1-x)Ge(x), unstrained. Gap at 4.2 K (Weber & Alonso, Phys. Rev. B 40, 5683 (1989);
# from memory): X-like 1.155 - 0.43 x + 0.206 x^2 for x < ~0.85, L-like 2.010 - 1.270 x
# above. Here each branch keeps its composition dependence and is tied to the endpoint
# record of its valley so that x = 0 is the Si record and x = 1 the Ge record:
# Eg_X(x, T) = Eg_Si(T) - 0.43 x + 0.206 x^2, Eg_L(x, T) = Eg_Ge(T) + 1.270 (1 - x); the
# lower of the two at 0 K sets the branch, whose valley masses, non-parabolicity and
# Varshni alpha, beta are the endpoint's. Valence-band offset linear in x (model-solid
# theory, Van de Walle & Martin 1986, from memory). Permittivity 11.7 + 4.5 x (Ioffe
# archive, SiGe; from memory) = linear between the records; Luttinger parameters and
# hole DOS mass linear (common practice, no source).
_WEBER_ALONSO = "Weber & Alonso, Phys. Rev. B 40, 5683 (1989), 4.2 K fit (from memory)"


def sige_gaps_eV(x: float, temperature_K: float) -> tuple[float, float]:
    """X-like and L-like gaps of unstrained Si(1-x)Ge(x) [eV].

    Eg_X = Eg_Si(T) - 0.43 x + 0.206 x^2, Eg_L = Eg_Ge(T) + 1.270 (1 - x): the
    composition dependence of Weber & Alonso, Phys. Rev. B 40, 5683 (1989) (from
    memory), tied to the Si and Ge records (Varshni) at the endpoints.

    Parameters
    ----------
    x : float
        Ge fraction, in [0, 1] [-].
    temperature_K : float
        temperature, >= 0 [K].

    Returns
    -------
    (float, float)
        (Eg_X, Eg_L) [eV].
    """
    x = _check_composition("SiGe", x)
    return (float(SI.bandgap_eV(temperature_K)) - 0.43 * x + 0.206 * x * x,
            float(GE.bandgap_eV(temperature_K)) + 1.270 * (1.0 - x))


def _sige(x: float) -> Semiconductor:
    gx, gl = sige_gaps_eV(x, 0.0)
    branch = SI if gx <= gl else GE
    eg0 = gx if branch is SI else gl
    lin = f"derived: linear in x between the Si and Ge records, x = {x:g}"
    gap_src = (f"derived: {'X' if branch is SI else 'L'}-like branch of {_WEBER_ALONSO}, tied to "
               f"the {branch.name} record")
    vbo = _mix(x, GE.valence_band_offset_eV, SI.valence_band_offset_eV)
    eg300 = min(sige_gaps_eV(x, 300.0))
    lin_eg300 = _mix(x, float(GE.bandgap_eV(300.0)), float(SI.bandgap_eV(300.0)))
    chi = _mix(x, GE.electron_affinity_eV, SI.electron_affinity_eV) - (eg300 - lin_eg300)
    same = f"the {branch.name} record's value ({'X' if branch is SI else 'L'}-like branch)"
    return Semiconductor(
        name=f"SiGe (x = {x:g})", eg0_eV=eg0,
        varshni_alpha_eV_per_K=branch.varshni_alpha_eV_per_K,
        varshni_beta_K=branch.varshni_beta_K, electron_affinity_eV=chi,
        permittivity=_mix(x, GE.permittivity, SI.permittivity),
        electron_mass=branch.electron_mass,
        luttinger=tuple(_mix(x, a, b) for a, b in zip(GE.luttinger, SI.luttinger, strict=True)),
        nonparabolicity_per_eV=branch.nonparabolicity_per_eV,
        electron_dos_mass=branch.electron_dos_mass,
        hole_dos_mass=_mix(x, GE.hole_dos_mass, SI.hole_dos_mass),
        direct_gap=False,
        sources={
            "eg0_eV": gap_src, "varshni_alpha_eV_per_K": same, "varshni_beta_K": same,
            "electron_affinity_eV": (f"{lin} minus the bowing of the 300 K gap (the affinity "
                                     "follows the conduction edge; VBO linear)"),
            "permittivity": f"{lin} (11.7 + 4.5 x, Ioffe archive, SiGe; from memory)",
            "electron_mass": same, "luttinger": f"{lin} (common practice, no source)",
            "nonparabolicity_per_eV": same, "electron_dos_mass": same,
            "hole_dos_mass": f"{lin} (common practice, no source)",
            "direct_gap": "indirect: X-like or L-like minimum (Weber & Alonso 1989)",
            "valence_band_offset_eV": (f"{lin} (model-solid theory, Van de Walle & Martin, "
                                       "Phys. Rev. B 34, 5621 (1986); from memory)"),
        },
        valence_band_offset_eV=vbo, composition=("SiGe", x),
    )


def semiconductor_for(material: str, composition_x: float | None = None) -> Semiconductor:
    """The record of a design's body: a named material, or an alloy at a composition.

    Parameters
    ----------
    material : str
        a key of `SEMICONDUCTORS` (case-insensitive) or of `ALLOYS`.
    composition_x : float or None
        alloy composition in [0, 1] [-]; required for an alloy, None otherwise.

    Returns
    -------
    Semiconductor

    Raises
    ------
    ValueError
        naming ``composition_x`` when it is missing for an alloy, set for a non-alloy,
        or outside [0, 1]; naming the known materials for an unknown name.
    """
    family = next((k for k in ALLOYS if k.lower() == str(material).strip().lower()), None)
    if family is None:
        if composition_x is not None:
            raise ValueError(f"material: {material!r} is not an alloy, so composition_x = "
                             f"{composition_x!r} has no meaning; choose an alloy "
                             f"({', '.join(ALLOYS)}) or leave composition_x unset")
        return get_semiconductor(material)
    if composition_x is None:
        raise ValueError(f"composition_x: required for the alloy {family} "
                         f"({ALLOYS[family].formula}); allowed [0, 1]")
    return alloy_semiconductor(family, composition_x)


# --- band alignment ------------------------------------------------------------------
@dataclass(frozen=True)
class BandAlignment:
    """Band edges of two materials on the common VMR 2001 scale at one temperature.

    Attributes
    ----------
    first, second : material names
    temperature_K : [K]
    ev_first_eV, ec_first_eV, ev_second_eV, ec_second_eV : band edges [eV]: Ev = the
        valence-band offset (fixed with temperature), Ec = Ev + Eg(T)
    valence_offset_eV, conduction_offset_eV : second minus first [eV]
    kind : "straddling (type I)", "staggered (type II)" or "broken gap (type III)"
    overlap_eV : for a broken gap, how far one valence edge lies above the other
        conduction edge (> 0); otherwise minus the smallest gap between a valence edge
        and the other material's conduction edge (< 0) [eV]
    """

    first: str
    second: str
    temperature_K: float
    ev_first_eV: float
    ec_first_eV: float
    ev_second_eV: float
    ec_second_eV: float
    kind: str

    @property
    def valence_offset_eV(self) -> float:
        """Ev(second) - Ev(first) [eV]."""
        return self.ev_second_eV - self.ev_first_eV

    @property
    def conduction_offset_eV(self) -> float:
        """Ec(second) - Ec(first) [eV]."""
        return self.ec_second_eV - self.ec_first_eV

    @property
    def overlap_eV(self) -> float:
        """max(Ev1 - Ec2, Ev2 - Ec1) [eV]: > 0 for a broken gap."""
        return max(self.ev_first_eV - self.ec_second_eV, self.ev_second_eV - self.ec_first_eV)


def band_alignment(first: Semiconductor | str, second: Semiconductor | str,
                   temperature_K: float = 300.0) -> BandAlignment:
    """Alignment of two materials from the valence-band-offset table.

    Ev = VBO (VMR 2001 scale, InSb maximum at 0; held fixed with temperature, as VMR
    2001 tabulate it), Ec = Ev + Eg(T) with each record's gap (the Gamma gap for the
    III-Vs, the indirect gap for Si, Ge, SiGe). The anion-rule-free table values are
    those of VMR 2001 for the III-Vs; Si and Ge as in the records' sources.

    Parameters
    ----------
    first, second : Semiconductor or str
        records, or names of `SEMICONDUCTORS`.
    temperature_K : float
        temperature, >= 0 [K].

    Returns
    -------
    BandAlignment

    Raises
    ------
    ValueError
        for a material without a tabulated valence-band offset.
    """
    recs = [get_semiconductor(m) if isinstance(m, str) else m for m in (first, second)]
    edges = []
    for rec in recs:
        if rec.valence_band_offset_eV is None:
            raise ValueError(f"{rec.name}: no valence-band offset tabulated")
        ev = rec.valence_band_offset_eV
        edges.append((ev, ev + float(rec.bandgap_eV(temperature_K))))
    (ev1, ec1), (ev2, ec2) = edges
    if ev1 > ec2 or ev2 > ec1:
        kind = "broken gap (type III)"
    elif (ev1 <= ev2 and ec2 <= ec1) or (ev2 <= ev1 and ec1 <= ec2):
        kind = "straddling (type I)"
    else:
        kind = "staggered (type II)"
    return BandAlignment(recs[0].name, recs[1].name, float(temperature_K), ev1, ec1, ev2, ec2,
                         kind)


# --- the parameter list of one record (for a material card) --------------------------
@dataclass(frozen=True)
class MaterialParameter:
    """One parameter of a body material, ready to list.

    Attributes
    ----------
    label : readable name, e.g. "Band gap Eg(T)"
    value : the number, or a short text (the kind of gap)
    unit : unit text, "" for a relative quantity
    source : where the number comes from (the record's citation, or how it is derived)
    """

    label: str
    value: float | str
    unit: str
    source: str


def material_parameters(semiconductor: Semiconductor, temperature_K: float
                        ) -> tuple[MaterialParameter, ...]:
    """Every parameter of a body record at a temperature, each with its source.

    The record's own fields with their ``sources`` entries; the gap, non-parabolicity,
    effective densities of states and intrinsic density at ``temperature_K`` (Varshni
    law; `Semiconductor.effective_dos_cm3`, `Semiconductor.intrinsic_density_cm3`); the
    confined and in-plane hole masses from the Luttinger parameters (Luttinger, Phys.
    Rev. 102, 1030 (1956)); and the other valleys: L and X of the III-Vs
    (`satellite_valleys`), the X-like and L-like gaps of Si(1-x)Ge(x) (`sige_gaps_eV`)
    and the direct Gamma gap of Ge (`sub60.physics.indirect_tunnelling.GE_GAMMA_GAP`).

    Parameters
    ----------
    semiconductor : Semiconductor
        a fixed record or an alloy record.
    temperature_K : float
        lattice temperature, > 0 [K].

    Returns
    -------
    tuple of MaterialParameter
    """
    s = semiconductor
    t = float(_temperature(temperature_K, allow_zero=False))
    src = s.sources
    lutt = src["luttinger"]
    gap_src = f"{src['eg0_eV']}; Varshni law (Varshni, Physica 34, 149 (1967))"
    rows = [
        MaterialParameter("Band gap Eg(T)", float(s.bandgap_eV(t)), "eV", gap_src),
        MaterialParameter("Band gap at 0 K", s.eg0_eV, "eV", src["eg0_eV"]),
        MaterialParameter("Kind of gap", "direct (Γ)" if s.direct_gap else "indirect", "",
                          src["direct_gap"]),
        MaterialParameter("Varshni α", s.varshni_alpha_eV_per_K * 1e3, "meV/K",
                          src["varshni_alpha_eV_per_K"]),
        MaterialParameter("Varshni β", s.varshni_beta_K, "K", src["varshni_beta_K"]),
        MaterialParameter("Electron affinity χ", s.electron_affinity_eV, "eV",
                          src["electron_affinity_eV"]),
    ]
    if s.valence_band_offset_eV is not None:
        rows.append(MaterialParameter("Valence-band offset (InSb top = 0)",
                                      s.valence_band_offset_eV, "eV",
                                      src["valence_band_offset_eV"]))
    rows += [
        MaterialParameter("Relative permittivity εr", s.permittivity, "",
                          src["permittivity"]),
        MaterialParameter("Electron mass m*", s.electron_mass, "m0", src["electron_mass"]),
        MaterialParameter("Electron DOS mass", s.electron_dos_mass, "m0",
                          src["electron_dos_mass"]),
        MaterialParameter("Hole DOS mass", s.hole_dos_mass, "m0", src["hole_dos_mass"]),
        *(MaterialParameter(f"Luttinger γ{i + 1}", g, "", lutt)
          for i, g in enumerate(s.luttinger)),
        MaterialParameter("Heavy hole, along [001]", s.heavy_hole_mass_confined, "m0",
                          f"derived: 1/(γ1 − 2γ2) (Luttinger 1956); γ: {lutt}"),
        MaterialParameter("Light hole, along [001]", s.light_hole_mass_confined, "m0",
                          f"derived: 1/(γ1 + 2γ2) (Luttinger 1956); γ: {lutt}"),
        MaterialParameter("Non-parabolicity α at 0 K", s.nonparabolicity_per_eV, "1/eV",
                          src["nonparabolicity_per_eV"]),
        MaterialParameter("Non-parabolicity α(T)", s.nonparabolicity_at_per_eV(t), "1/eV",
                          "derived: (1 − m*)²/Eg(T) (Kane 1957; from memory)" if s.direct_gap
                          else src["nonparabolicity_per_eV"]),
    ]
    nc, nv = s.effective_dos_cm3(t)
    dos_src = "derived: 2 (m kT / 2πħ²)^1.5 with the DOS masses above (Sze & Ng, ch. 1)"
    rows += [
        MaterialParameter("Conduction-band DOS Nc(T)", float(nc), "cm⁻³", dos_src),
        MaterialParameter("Valence-band DOS Nv(T)", float(nv), "cm⁻³", dos_src),
        MaterialParameter("Intrinsic density ni(T)", float(s.intrinsic_density_cm3(t)), "cm⁻³",
                          "derived: √(Nc Nv) exp(−Eg/2kT) (Sze & Ng, ch. 1)"),
    ]
    rows += _valley_rows(s, t)
    return tuple(rows)


def _src_of(s: Semiconductor, name: str) -> str:
    """The source of one field of a record, Varshni law added for the gap."""
    return f"{s.sources[name]}; Varshni law" if name == "eg0_eV" else s.sources[name]


def _valley_rows(s: Semiconductor, t: float) -> list[MaterialParameter]:
    family = s.composition[0] if s.composition is not None else None
    if family == "SiGe" or s.name in ("Si", "Ge"):
        x = s.composition[1] if s.composition is not None else (1.0 if s.name == "Ge" else 0.0)
        gx, gl = sige_gaps_eV(x, t)
        fit = f"derived: {_WEBER_ALONSO}, tied to the Si (X) and Ge (L) records"
        rows = [MaterialParameter("X-valley gap (T)", gx, "eV",
                                  _src_of(s, "eg0_eV") if gx <= gl else fit),
                MaterialParameter("L-valley gap (T)", gl, "eV",
                                  _src_of(s, "eg0_eV") if gl < gx else fit)]
        if x == 1.0:
            from sub60.physics.indirect_tunnelling import GE_GAMMA_GAP

            rows.append(MaterialParameter(
                "Direct Γ gap (T)", float(varshni_gap_eV(*GE_GAMMA_GAP, t)), "eV",
                "Varshni law 0.8893 eV, 0.6842 meV/K, 398 K (from memory)"))
        return rows
    return [MaterialParameter(f"{v.name}-valley gap (T)", v.gap_eV(t), "eV", v.source)
            for v in satellite_valleys(s)]

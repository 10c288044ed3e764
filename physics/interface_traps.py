"""Interface traps at the gate-oxide interface(s): density over the gap, occupation, charge.

A continuum of traps of density D_it(E) [cm^-2 eV^-1] sits at each semiconductor /
gate-oxide interface, between the bulk band edges of the body (E_v < E < E_c; none
outside the gap). Energies are measured from the bulk midgap E_mid = (E_c + E_v)/2.

Profiles (the knob ``interface_trap_density_cm2eV`` is D_mid):

* ``"uniform"``:   D_it(E) = D_mid
* ``"u-shaped"``:  D_it(E) = D_mid cosh(2 a E / E_g),  a = arccosh(R),  R = 10

so that the U-shaped density has its minimum D_mid at midgap and rises smoothly to R
D_mid at both band edges. U-shaped interface-state spectra (a flat midgap minimum,
rising toward both band edges) are what charge-pumping and conductance measurements give
for Si/SiO2 and for III-V/high-k interfaces (Nicollian & Brews, *MOS (Metal Oxide
Semiconductor) Physics and Technology*, Wiley 1982, ch. 8; Sze & Ng, *Physics of
Semiconductor Devices*, 3rd ed., 2007, sec. 4.3.3). The cosh form and the ratio R = 10
are our own stated choice (a smooth, symmetric U with a closed-form integral), not a
fitted curve.

Charge (Sze & Ng sec. 4.3.3): the traps above the charge-neutrality level E_0 are
acceptor-like (neutral when empty, -q when filled), those below donor-like (+q when
empty, neutral when filled), so the trapped sheet charge is

    sigma_it = int_{E_v}^{E_0} D_it (1 - f) dE - int_{E_0}^{E_c} D_it f dE
             = N_0 - int_{E_v}^{E_c} D_it f dE,     N_0 = int_{E_v}^{E_0} D_it dE     (1)

in units of q [cm^-2] (E_0 outside the gap: all traps of one kind).

Occupation: the Shockley-Read-Hall steady state with equal electron and hole capture
coefficients (Shockley & Read, Phys. Rev. 87, 835 (1952), eq. 3.6):

    f(E) = (n + p_1) / (n + n_1 + p + p_1),
    n_1 = N_c exp((E - E_c')/kT),  p_1 = N_v exp((E_v' - E)/kT)                      (2)

with n, p the carrier densities at the interface node and E_c', E_v' the (confinement-
shifted) edges those densities use. Where the electron and hole quasi-Fermi levels
coincide and the carriers are non-degenerate, (2) is exactly the Fermi-Dirac function
1 / (1 + exp((E - E_F)/kT)) at the local Fermi level; where they split (a drain bias),
the traps take the occupation set by capture and emission of both carriers. The trap
charge is a static charge: no trap dynamics, no trap-assisted current here.

(1) is integrated by Simpson's rule on a grid finer than kT/3 (the occupation is
analytic with poles pi kT off the real axis, so the interior error is exponentially
small and the end error O(h^4); a test checks it against the closed-form Fermi-Dirac
integral of a uniform density).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Trap density at the band edges over the midgap density of the U-shaped profile [-].
#: Our own stated choice (an order of magnitude, as in the U-shaped spectra of Nicollian &
#: Brews 1982, ch. 8), not a fitted value.
U_SHAPE_EDGE_RATIO: float = 10.0

#: Interface-trap profiles.
TRAP_PROFILES: tuple[str, ...] = ("uniform", "u-shaped")


def interface_trap_density(energy_eV: np.ndarray, bandgap_eV: float, midgap_density_cm2eV: float,
                           profile: str = "uniform") -> np.ndarray:
    """Interface-trap density over the gap, D_it(E) [cm^-2 eV^-1].

    Parameters
    ----------
    energy_eV : array_like
        trap energy above the bulk midgap [eV].
    bandgap_eV : float
        bulk band gap E_g [eV].
    midgap_density_cm2eV : float
        D_mid: the density of the uniform profile, or the midgap minimum of the U [cm^-2 eV^-1].
    profile : str
        "uniform" or "u-shaped" (module docstring).

    Returns
    -------
    numpy.ndarray
        D_it(E), zero outside the gap [cm^-2 eV^-1].
    """
    e = np.asarray(energy_eV, float)
    inside = np.abs(e) <= 0.5 * bandgap_eV
    if profile == "uniform":
        d = np.full(e.shape, float(midgap_density_cm2eV))
    elif profile == "u-shaped":
        a = np.arccosh(U_SHAPE_EDGE_RATIO)
        d = midgap_density_cm2eV * np.cosh(2 * a * e / bandgap_eV)
    else:
        raise ValueError(f"interface_trap_profile: {profile!r} not allowed; allowed "
                         + ", ".join(repr(p) for p in TRAP_PROFILES))
    return np.where(inside, d, 0.0)


def traps_below(level_eV: float, bandgap_eV: float, midgap_density_cm2eV: float,
                profile: str = "uniform") -> float:
    """Traps between the valence edge and a level, N = int_{E_v}^{level} D_it dE [cm^-2].

    Parameters
    ----------
    level_eV : float
        upper limit above the bulk midgap [eV] (clipped to the gap).
    bandgap_eV, midgap_density_cm2eV, profile
        as in `interface_trap_density`.

    Returns
    -------
    float
        closed form: D_mid (c + E_g/2) (uniform), D_mid E_g/(2a) (sinh(2ac/E_g) + sinh a)
        (U-shaped), with c the clipped level [cm^-2].
    """
    half = 0.5 * bandgap_eV
    c = min(max(float(level_eV), -half), half)
    if profile == "uniform":
        return float(midgap_density_cm2eV * (c + half))
    if profile == "u-shaped":
        a = np.arccosh(U_SHAPE_EDGE_RATIO)
        return float(midgap_density_cm2eV * half / a * (np.sinh(a * c / half) + np.sinh(a)))
    raise ValueError(f"interface_trap_profile: {profile!r} not allowed; allowed "
                     + ", ".join(repr(p) for p in TRAP_PROFILES))


def srh_occupation(n_cm3: np.ndarray, p_cm3: np.ndarray, n1_cm3: np.ndarray,
                   p1_cm3: np.ndarray) -> np.ndarray:
    """Steady-state trap occupation with equal capture coefficients, eq. (2) [-].

    f = (n + p_1) / (n + n_1 + p + p_1) (Shockley & Read, Phys. Rev. 87, 835 (1952)).
    Arrays broadcast; densities in [cm^-3].
    """
    return (n_cm3 + p1_cm3) / (n_cm3 + n1_cm3 + p_cm3 + p1_cm3)


@dataclass(frozen=True)
class InterfaceTraps:
    """Interface traps of one device structure, ready for the Newton loop.

    Attributes
    ----------
    nodes : (nx, ny) bool
        grid nodes on a semiconductor / gate-oxide interface.
    width_nm : (nx, ny)
        x extent of each node's control volume (the sheet charge per node is sigma x
        width) [nm].
    weights_cm2eV : (nE,)
        Simpson weight x D_it at each quadrature energy [cm^-2].
    n1_cm3, p1_cm3 : (nE,)
        SRH emission densities n_1, p_1 of eq. (2) at each quadrature energy [cm^-3].
    donor_total_cm2 : float
        N_0 of eq. (1): traps below the neutral level [cm^-2].
    """

    nodes: np.ndarray
    width_nm: np.ndarray
    weights_cm2eV: np.ndarray
    n1_cm3: np.ndarray
    p1_cm3: np.ndarray
    donor_total_cm2: float

    def sheet_charge(self, n_cm3: np.ndarray, p_cm3: np.ndarray, dn_cm3_V: np.ndarray,
                     dp_cm3_V: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Trapped sheet charge (1) and its derivative with respect to the potential.

        Parameters
        ----------
        n_cm3, p_cm3 : (m,)
            carrier densities at the interface nodes [cm^-3].
        dn_cm3_V, dp_cm3_V : (m,)
            their derivatives d n / d psi, d p / d psi [cm^-3 V^-1].

        Returns
        -------
        sigma_cm2 : (m,)
            trapped charge in units of q, positive when donor-like traps are empty
            [cm^-2].
        dsigma_cm2_V : (m,)
            d sigma / d psi (never positive: a higher potential fills the traps)
            [cm^-2 V^-1].
        """
        n, p = n_cm3[:, None], p_cm3[:, None]
        n1, p1 = self.n1_cm3[None, :], self.p1_cm3[None, :]
        total = n + n1 + p + p1
        f = (n + p1) / total
        sigma = self.donor_total_cm2 - f @ self.weights_cm2eV
        # df/dn = (n1 + p)/S^2, df/dp = -(n + p1)/S^2
        dfn = (n1 + p) / total**2
        dfp = (n + p1) / total**2
        dsigma = -(dfn @ self.weights_cm2eV) * dn_cm3_V + (dfp @ self.weights_cm2eV) * dp_cm3_V
        return sigma, dsigma


def build_interface_traps(nodes: np.ndarray, width_nm: np.ndarray, bandgap_eV: float,
                          nc_cm3: float, nv_cm3: float, kT_eV: float, dec_eV: float,
                          dev_eV: float, midgap_density_cm2eV: float, profile: str,
                          neutral_level_eV: float) -> InterfaceTraps:
    """Quadrature and emission densities of eqs. (1)-(2) for one structure.

    Parameters
    ----------
    nodes : (nx, ny) bool
        interface nodes.
    width_nm : (nx, ny)
        control-volume width of each node along x [nm].
    bandgap_eV : float
        bulk gap [eV]; nc_cm3, nv_cm3 : effective densities of states [cm^-3];
        kT_eV : thermal energy [eV]; dec_eV, dev_eV : confinement shifts of the charge's
        band edges [eV].
    midgap_density_cm2eV, profile : as in `interface_trap_density`.
    neutral_level_eV : float
        charge-neutrality level above the bulk midgap [eV].

    Returns
    -------
    InterfaceTraps
    """
    half = 0.5 * bandgap_eV
    n_e = 2 * int(np.ceil(bandgap_eV / (kT_eV / 3.0) / 2)) + 1  # odd, spacing <= kT/3
    e = np.linspace(-half, half, n_e)
    w = np.full(n_e, (e[1] - e[0]) / 3.0)  # Simpson: 1, 4, 2, 4, ..., 2, 4, 1 (x h/3)
    w[1:-1:2] *= 4.0
    w[2:-1:2] *= 2.0
    weights = w * interface_trap_density(e, bandgap_eV, midgap_density_cm2eV, profile)
    n1 = nc_cm3 * np.exp((e - half - dec_eV) / kT_eV)
    p1 = nv_cm3 * np.exp((-half - dev_eV - e) / kT_eV)
    n0 = traps_below(neutral_level_eV, bandgap_eV, midgap_density_cm2eV, profile)
    return InterfaceTraps(nodes=np.asarray(nodes, bool), width_nm=np.asarray(width_nm, float),
                          weights_cm2eV=weights, n1_cm3=n1, p1_cm3=p1, donor_total_cm2=n0)

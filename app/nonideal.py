"""Non-idealities on the app side: the "typical process" setting, the ideal twin of a
design, and the off-state current split by mechanism. UI-free (command line and page).

The physics lives in `sub60.physics` (band tails, trap-assisted generation, interface
traps, series resistance, band-gap narrowing; see the README's non-idealities sections).
Here: which fields they are, one stated "typical III-V process" (our own illustration,
taken from the README's typical values, not a measured process), and the record of the
current at Voff by mechanism that the command line prints and the page draws.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

import param

from sub60.physics import FIELD_RANGES, NON_IDEAL_OFF, Design

#: The non-ideality fields of `Design`, in the order the page shows them.
NONIDEAL_FIELDS: tuple[str, ...] = (
    "tail_energy_source_meV", "tail_energy_channel_meV",
    "tat_lifetime_ns", "tat_trap_level_eV",
    "interface_trap_density_cm2eV", "interface_trap_profile", "interface_trap_neutral_level_eV",
    "source_resistance_ohm_um", "drain_resistance_ohm_um", "bandgap_narrowing",
)

#: A "typical III-V process" (our own demo scenario, values from the README's
#: non-idealities sections: tails of 15 meV, tau = 1 ns trap-assisted generation at
#: midgap, the benchmark's U-shaped D_it 2e12 cm^-2 eV^-1 and 100 ohm um per contact).
TYPICAL_PROCESS: dict[str, Any] = {
    "tail_energy_source_meV": 15.0, "tail_energy_channel_meV": 15.0,
    "tat_lifetime_ns": 1.0, "tat_trap_level_eV": 0.0,
    "interface_trap_density_cm2eV": 2e12, "interface_trap_profile": "u-shaped",
    "interface_trap_neutral_level_eV": 0.0,
    "source_resistance_ohm_um": 100.0, "drain_resistance_ohm_um": 100.0,
    "bandgap_narrowing": "off",
}

#: The mechanisms of `BiasPoint.current_by_mechanism_uA_per_um` and their labels.
MECHANISMS: tuple[tuple[str, str], ...] = (
    ("band_to_band", "band-to-band"), ("band_tails", "band tails"),
    ("trap_assisted", "trap-assisted"), ("thermionic", "thermionic"),
)


def ideal_design(design: Design) -> Design:
    """The same design with every non-ideality off (`NON_IDEAL_OFF`)."""
    return design.replace(**NON_IDEAL_OFF)


def off_state_breakdown(solve_bias: Callable[[Design, float, float], Any], design: Design,
                        voff_V: float | None, vd_V: float) -> dict[str, Any]:
    """The current at the off-state gate voltage split by mechanism.

    Parameters
    ----------
    solve_bias : callable
        ``solve_bias(design, vg_V, vd_V)`` returning a `BiasPoint` (e.g.
        `Simulator.solve_bias`)
    design : Design
    voff_V : float or None
        gate voltage at which the current equals the off-state target [V]; None when the
        transfer curve never reaches it
    vd_V : float
        drain voltage [V]

    Returns
    -------
    dict
        ``vg_V`` [V], ``vd_V`` [V], one ``<mechanism>_uA_per_um`` per `MECHANISMS`,
        ``total_uA_per_um`` [µA/µm] (their sum is the total, `BiasPoint`); or, without a
        Voff, the same keys at None and ``reason``.
    """
    out: dict[str, Any] = {"vg_V": voff_V, "vd_V": float(vd_V)}
    if voff_V is None or not math.isfinite(voff_V):
        out.update({f"{k}_uA_per_um": None for k, _ in MECHANISMS})
        out["total_uA_per_um"] = None
        out["reason"] = "no Voff: the transfer curve never reaches the off-state target"
        return out
    bp = solve_bias(design, float(voff_V), float(vd_V))
    parts = bp.current_by_mechanism_uA_per_um
    out.update({f"{k}_uA_per_um": float(parts[k]) for k, _ in MECHANISMS})
    out["total_uA_per_um"] = float(bp.current_uA_per_um)
    return out


def dominant_mechanism(breakdown: dict[str, Any]) -> str | None:
    """Label of the mechanism carrying most of the off-state current (None if unknown)."""
    vals = [(breakdown.get(f"{k}_uA_per_um"), label) for k, label in MECHANISMS]
    vals = [(abs(v), label) for v, label in vals if v is not None]
    return max(vals)[1] if vals else None


# ---------------------------------------------------------------------- page settings
def _b(field: str) -> tuple[float, float]:
    spec = FIELD_RANGES[field]
    return float(spec.low), float(spec.high)


_D = Design()


class NonIdealSettings(param.Parameterized):
    """The non-ideality settings of the page, one per `NONIDEAL_FIELDS` (same names,
    units and bounds as the `Design` fields; `app.state.ExplorerState` inherits them)."""

    tail_energy_source_meV = param.Number(
        default=_D.tail_energy_source_meV, bounds=_b("tail_energy_source_meV"), step=0.5,
        label="Source band tail E₀, 0 = none (meV)",
        doc="Urbach energy of the source valence-band tail [meV].")
    tail_energy_channel_meV = param.Number(
        default=_D.tail_energy_channel_meV, bounds=_b("tail_energy_channel_meV"), step=0.5,
        label="Channel band tail E₀, 0 = none (meV)",
        doc="Urbach energy of the channel conduction-band tail [meV].")
    tat_lifetime_ns = param.Number(
        default=_D.tat_lifetime_ns, bounds=_b("tat_lifetime_ns"), step=0.1,
        label="Trap-assisted lifetime τ, 0 = off (ns)",
        doc="SRH lifetime of trap-assisted generation; 0 = off, else >= 1e-3 [ns].")
    tat_trap_level_eV = param.Number(
        default=_D.tat_trap_level_eV, bounds=_b("tat_trap_level_eV"), step=0.01,
        label="Generation trap level above midgap (eV)",
        doc="Trap level of trap-assisted generation above midgap [eV].")
    interface_trap_density_cm2eV = param.Number(
        default=_D.interface_trap_density_cm2eV, bounds=_b("interface_trap_density_cm2eV"),
        step=1e11, label="Interface traps D_it at midgap (cm⁻²eV⁻¹)",
        doc="Interface-trap density at the gate-oxide interfaces [cm^-2 eV^-1].")
    interface_trap_profile = param.Selector(
        default=_D.interface_trap_profile, objects={"uniform": "uniform", "U-shaped": "u-shaped"},
        label="D_it profile over the gap",
        doc="Uniform, or U-shaped (10x the midgap density at both band edges).")
    interface_trap_neutral_level_eV = param.Number(
        default=_D.interface_trap_neutral_level_eV,
        bounds=_b("interface_trap_neutral_level_eV"), step=0.01,
        label="D_it neutral level above midgap (eV)",
        doc="Charge-neutrality level of the interface traps above midgap [eV].")
    source_resistance_ohm_um = param.Number(
        default=_D.source_resistance_ohm_um, bounds=_b("source_resistance_ohm_um"), step=10.0,
        label="Source resistance R_s (Ω·µm)", doc="Source access resistance per width [ohm um].")
    drain_resistance_ohm_um = param.Number(
        default=_D.drain_resistance_ohm_um, bounds=_b("drain_resistance_ohm_um"), step=10.0,
        label="Drain resistance R_d (Ω·µm)", doc="Drain access resistance per width [ohm um].")
    bandgap_narrowing = param.Selector(
        default=_D.bandgap_narrowing, objects={"off": "off", "on": "on"},
        label="Band-gap narrowing", doc="Doping-induced gap narrowing of the doped regions.")

    def nonideal_fields(self) -> dict[str, Any]:
        """The `Design` fields of these settings."""
        return {name: getattr(self, name) for name in NONIDEAL_FIELDS}

    def set_typical_process(self) -> None:
        """Every non-ideality at the "typical process" values, in one update."""
        self.param.update(**TYPICAL_PROCESS)

    def set_ideal(self) -> None:
        """Every non-ideality off (`NON_IDEAL_OFF`), in one update."""
        self.param.update(**NON_IDEAL_OFF)

    @property
    def any_nonideal(self) -> bool:
        """True when any non-ideality is on."""
        return any(getattr(self, k) != v for k, v in NON_IDEAL_OFF.items())


#: The page's query keys of the non-ideality settings (`app.sharing.QUERY_KEYS`).
NONIDEAL_QUERY_KEYS: dict[str, str] = {
    "tail_energy_source_meV": "tail_src_meV", "tail_energy_channel_meV": "tail_ch_meV",
    "tat_lifetime_ns": "tat_ns", "tat_trap_level_eV": "tat_level_eV",
    "interface_trap_density_cm2eV": "dit_cm2eV", "interface_trap_profile": "dit_profile",
    "interface_trap_neutral_level_eV": "dit_neutral_eV",
    "source_resistance_ohm_um": "rs_ohm_um", "drain_resistance_ohm_um": "rd_ohm_um",
    "bandgap_narrowing": "bgn",
}

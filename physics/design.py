"""The design record: one thin-body tunnel FET (or its MOSFET twin) and its bias ranges.

A `Design` is frozen and validated on construction. Every field carries its unit in its
name and has a documented allowed range (`FIELD_RANGES`); a value outside it, a wrong
type, NaN/inf or an unknown field raises `ValueError` naming the field, the value and
the range. `to_dict()` / `from_dict()` round-trip through JSON; that dictionary is the
design file the command line reads and a snapshot stores.

Geometry (x along transport, y across the body)::

    x = 0 .. source_length_nm                 source (p+ for the tunnel FET, n+ for the twin)
    .. + gate_length_nm                       channel (metallurgical length between junctions)
    .. + drain_length_nm                      drain (n+)

The gate spans from ``source_length_nm - gate_source_offset_nm`` to the drain junction:
a positive offset overlaps the source, a negative one leaves an ungated gap (underlap).
Combination rules: at least 2 nm of gate must remain (gate_length_nm +
gate_source_offset_nm >= 2) and the gate must start at least 1 nm inside the source
(source_length_nm - gate_source_offset_nm >= 1).
"""

from __future__ import annotations

import dataclasses
import json
import math
import numbers
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:
    from sub60.physics.materials import Dielectric, Semiconductor

# Bias ranges accepted by the solvers [V]. Common practice for low-voltage logic, no source.
VG_RANGE_V: tuple[float, float] = (-1.5, 2.0)
VD_RANGE_V: tuple[float, float] = (-0.6, 1.0)


@dataclass(frozen=True)
class FieldSpec:
    """Allowed values of one design field: a numeric range or a set of choices."""

    kind: type
    low: float | None = None
    high: float | None = None
    choices: tuple[str, ...] | None = None
    help: str = ""

    def describe(self) -> str:
        if self.kind is str and self.choices is None:
            known = _materials() if self.help.startswith("semiconductor") else _dielectrics()
            if self.help.startswith("semiconductor of the source"):
                known = ("same", *known)
            return "one of " + ", ".join(repr(c) for c in known)
        if self.choices is not None:
            return "one of " + ", ".join(repr(c) for c in self.choices)
        return f"[{self.low:g}, {self.high:g}]"


def _materials() -> tuple[str, ...]:
    from sub60.physics.materials import ALLOYS, SEMICONDUCTORS

    return tuple(SEMICONDUCTORS) + tuple(ALLOYS)


def _dielectrics() -> tuple[str, ...]:
    from sub60.physics.materials import DIELECTRICS

    return tuple(DIELECTRICS) + ("custom",)


# Ranges: chosen to cover thin-body steep-slope designs while keeping the model inside
# its assumptions (degenerate but non-metallic doping, bodies thick enough for a
# continuum description). Engineering choice, no source.
FIELD_RANGES: dict[str, FieldSpec] = {
    "material": FieldSpec(str, help="semiconductor of the body"),
    "source_type": FieldSpec(str, choices=("p", "n"),
                             help="'p': p+ source, tunnel FET; 'n': n+ source, MOSFET twin"),
    "source_doping_cm3": FieldSpec(float, 1e17, 1e21, help="source doping magnitude [cm^-3]"),
    "channel_doping_cm3": FieldSpec(float, -1e19, 1e19,
                                    help="channel doping, + donors, - acceptors [cm^-3]"),
    "drain_doping_cm3": FieldSpec(float, 1e16, 1e21, help="drain donor doping [cm^-3]"),
    "doping_gradient_nm_per_dec": FieldSpec(float, 0.0, 10.0,
                                            help="junction abruptness, 0 = abrupt [nm/decade]"),
    "body_thickness_nm": FieldSpec(float, 2.0, 30.0, help="semiconductor body thickness [nm]"),
    "gate_length_nm": FieldSpec(float, 5.0, 200.0, help="channel length between junctions [nm]"),
    "source_length_nm": FieldSpec(float, 5.0, 100.0, help="source region length [nm]"),
    "drain_length_nm": FieldSpec(float, 5.0, 100.0, help="drain region length [nm]"),
    "oxide_thickness_nm": FieldSpec(float, 0.5, 10.0, help="gate dielectric thickness [nm]"),
    "oxide": FieldSpec(str, help="gate dielectric name, or 'custom'"),
    "oxide_permittivity": FieldSpec(float, 1.0, 100.0,
                                    help="relative permittivity when oxide='custom'"),
    "gate_workfunction_eV": FieldSpec(float, 3.0, 6.0, help="gate metal work function [eV]"),
    "gate_layout": FieldSpec(str, choices=("double", "single"),
                             help="double gate, or single gate on a buried oxide"),
    "buried_oxide_thickness_nm": FieldSpec(float, 1.0, 100.0,
                                           help="buried oxide under a single-gate body [nm]"),
    "gate_source_offset_nm": FieldSpec(float, -10.0, 10.0,
                                       help="gate over the source (+) or underlap (-) [nm]"),
    "temperature_K": FieldSpec(float, 150.0, 450.0, help="lattice temperature [K]"),
    # materials: alloys and heterojunctions
    "composition_x": FieldSpec(float, 0.0, 1.0,
                               help="x of an alloy material (InGaAs: In(x)Ga(1-x)As, AlGaSb: "
                                    "Al(x)Ga(1-x)Sb, GaAsSb: GaAs(x)Sb(1-x), InAsSb: "
                                    "InAs(x)Sb(1-x), SiGe: Si(1-x)Ge(x)); 0 otherwise [-]"),
    "source_material": FieldSpec(str, help="semiconductor of the source region, or 'same' "
                                           "(the body material: a homojunction)"),
    "source_composition_x": FieldSpec(float, 0.0, 1.0,
                                      help="x of an alloy source_material (same convention as "
                                           "composition_x); 0 otherwise [-]"),
    "heterointerface_nm": FieldSpec(float, -10.0, 10.0,
                                    help="position of the source/body heterointerface from the "
                                         "gate's source-side edge, + towards the drain [nm]"),
    # non-idealities: interface traps, series resistance
    "interface_trap_density_cm2eV": FieldSpec(
        float, 0.0, 1e14,
        help="interface-trap density at the gate-oxide interfaces; midgap value of the "
             "U-shaped profile; 0 = no traps [cm^-2 eV^-1]"),
    "interface_trap_profile": FieldSpec(
        str, choices=("uniform", "u-shaped"),
        help="interface-trap energy profile over the gap: 'uniform', or 'u-shaped' "
             "(cosh, 10x the midgap density at both band edges)"),
    "interface_trap_neutral_level_eV": FieldSpec(
        float, -1.0, 1.0,
        help="charge-neutrality level of the interface traps above the bulk midgap; "
             "acceptor-like above it, donor-like below [eV]"),
    "source_resistance_ohm_um": FieldSpec(
        float, 0.0, 5000.0, help="series resistance of the source access, per width [ohm um]"),
    "drain_resistance_ohm_um": FieldSpec(
        float, 0.0, 5000.0, help="series resistance of the drain access, per width [ohm um]"),
    # non-idealities: band tails, trap-assisted tunnelling, band-gap narrowing
    "tail_energy_source_meV": FieldSpec(
        float, 0.0, 150.0,
        help="Urbach energy of the source valence-band tail, 0 = no tail [meV]"),
    "tail_energy_channel_meV": FieldSpec(
        float, 0.0, 150.0,
        help="Urbach energy of the channel conduction-band tail, 0 = no tail [meV]"),
    "tat_lifetime_ns": FieldSpec(
        float, 0.0, 1e6,
        help="SRH lifetime of the trap-assisted generation, 0 = off, else >= 1e-3 [ns]"),
    "tat_trap_level_eV": FieldSpec(
        float, -0.5, 0.5, help="trap level above midgap for trap-assisted generation [eV]"),
    "bandgap_narrowing": FieldSpec(
        str, choices=("off", "on"),
        help="'on': doping-induced gap narrowing of the doped regions (published model "
             "per material); 'off': none"),
    # charge model of the electrostatics
    "charge_model": FieldSpec(
        str, choices=("semiclassical", "subbands"),
        help="carrier charge of the body: 'semiclassical' (bulk density of states, band "
             "edges shifted by the lowest subbands) or 'subbands' (2D density of states "
             "of the confinement subbands; hole subbands from coupled 4x4 k.p)"),
}

#: What each carrier-charge model (`Design.charge_model`) is, in a few words (for the
#: page, the command line and the figure captions to state which one made the numbers).
CHARGE_MODEL_NOTES: dict[str, str] = {
    "semiclassical": "bulk density of states, band edges shifted by the lowest subbands; "
                     "parabolic in-plane hole masses in transport",
    "subbands": "2D density of states of the confinement subbands (coupled 4x4 k.p holes); "
                "transport takes the same hole dispersion",
}

#: The switches of the non-idealities and their "off" values (the ideal device);
#: `Design.is_ideal`, `Design.ideal`. Their settings (trap levels, the D_it profile)
#: do not count: with the switch off they change nothing.
NON_IDEAL_OFF: dict[str, Any] = {
    "interface_trap_density_cm2eV": 0.0, "source_resistance_ohm_um": 0.0,
    "drain_resistance_ohm_um": 0.0, "tail_energy_source_meV": 0.0,
    "tail_energy_channel_meV": 0.0, "tat_lifetime_ns": 0.0, "bandgap_narrowing": "off",
}

#: Smallest non-zero trap-assisted-generation lifetime accepted [ns].
TAT_LIFETIME_MIN_NS = 1e-3


@dataclass(frozen=True)
class Design:
    """A thin-body tunnel FET or MOSFET twin. Units in the field names.

    Parameters
    ----------
    material : str
        body semiconductor, a name known to `physics.materials`.
    source_type : str
        "p" (p+ source: tunnel FET) or "n" (n+ source: the MOSFET twin).
    source_doping_cm3 : float
        source doping magnitude; acceptors for "p", donors for "n" [cm^-3].
    channel_doping_cm3 : float
        channel doping, signed: + donors, - acceptors [cm^-3].
    drain_doping_cm3 : float
        drain donor doping [cm^-3].
    doping_gradient_nm_per_dec : float
        decay of the source and drain dopants into the channel; 0 = abrupt [nm/decade].
    body_thickness_nm, gate_length_nm, source_length_nm, drain_length_nm : float
        geometry [nm] (see the module docstring).
    oxide_thickness_nm : float
        gate dielectric thickness [nm].
    oxide : str
        gate dielectric name, or "custom" with `oxide_permittivity`.
    oxide_permittivity : float or None
        relative permittivity of a custom dielectric [-]; ignored otherwise.
    gate_workfunction_eV : float
        gate metal work function [eV].
    gate_layout : str
        "double" (oxide/body/oxide, both gates tied) or "single" (oxide/body/buried oxide
        over a grounded back plane of the gate metal).
    buried_oxide_thickness_nm : float
        buried oxide thickness, used for the single gate [nm].
    gate_source_offset_nm : float
        gate extension over the source (+) or underlap (-) [nm].
    temperature_K : float
        temperature [K].
    composition_x : float
        composition x of an alloy ``material`` ("InGaAs": In(x)Ga(1-x)As, "AlGaSb",
        "GaAsSb", "InAsSb", "SiGe": Si(1-x)Ge(x); see `sub60.physics.materials.ALLOYS`),
        in [0, 1] [-]; must stay 0 (its default) for any other material.
    source_material : str
        semiconductor of the source region (x below the heterointerface), a name known
        to `physics.materials`, or "same" (default): the body material, a homojunction.
        The channel and drain are always of ``material``.
    source_composition_x : float
        composition x of an alloy ``source_material`` [-]; 0 for any other.
    heterointerface_nm : float
        position of the heterointerface relative to the gate's source-side edge
        (`gate_start_nm`), positive towards the drain, in [-10, 10] [nm]; it must lie at
        least 1 nm inside the device and 1 nm before the drain junction. Ignored for a
        homojunction.
    interface_trap_density_cm2eV : float
        interface-trap density D_it at the gate-oxide interface(s): the value across the
        gap ('uniform') or at midgap ('u-shaped') [cm^-2 eV^-1]
        (`sub60.physics.interface_traps`).
    interface_trap_profile : str
        "uniform" or "u-shaped" (cosh over the gap, 10x the midgap value at both edges).
    interface_trap_neutral_level_eV : float
        charge-neutrality level above the bulk midgap of the body: traps above it are
        acceptor-like, below it donor-like [eV].
    source_resistance_ohm_um, drain_resistance_ohm_um : float
        series resistances of the source and drain accesses, per width [ohm um]; the bias
        point is solved self-consistently at the internal voltages
        (`sub60.physics.series_resistance`).
    tail_energy_source_meV, tail_energy_channel_meV : float
        characteristic (Urbach) energies E0 of the exponential density-of-states tails
        above the source valence edge and below the channel conduction edge; 0 = no
        tail [meV] (`physics.band_tails`).
    tat_lifetime_ns : float
        Shockley-Read-Hall lifetime of the trap-assisted generation in the body, with
        Hurkx field enhancement; 0 = off [ns] (`physics.trap_assisted`).
    tat_trap_level_eV : float
        trap level above midgap [eV].
    bandgap_narrowing : str
        "on": doping-induced band-gap narrowing of the doped regions (Jain, McGregor &
        Roulston 1990 for III-Vs, Slotboom & de Graaff 1976 for Si;
        `physics.bandgap_narrowing`); "off".
    charge_model : str
        carrier charge of the body in the electrostatics: "semiclassical" (default; bulk
        3D density of states with the band edges shifted by the lowest confinement
        subbands) or "subbands" (2D density of states of every confinement subband: the
        conduction subbands with the in-plane masses transport uses, the hole subbands
        with their coupled 4x4 k.p dispersion; `physics.subband_charge`).

    Notes
    -----
    The non-idealities (interface traps, series resistance, band tails, trap-assisted
    generation, band-gap narrowing) are off by default: the ideal device is the
    reference every other figure is compared with, and their values depend on the
    process (growth, doping, passivation), not on the design; presets set a stated
    "typical process". A design file written before these fields existed reads as the
    ideal device.
    """

    material: str = "InAs"
    source_type: str = "p"
    source_doping_cm3: float = 4e19
    channel_doping_cm3: float = 1e15
    drain_doping_cm3: float = 5e17
    doping_gradient_nm_per_dec: float = 1.0
    body_thickness_nm: float = 7.0
    gate_length_nm: float = 30.0
    source_length_nm: float = 20.0
    drain_length_nm: float = 20.0
    oxide_thickness_nm: float = 2.0
    oxide: str = "HfO2"
    oxide_permittivity: float | None = None
    gate_workfunction_eV: float = 4.9
    gate_layout: str = "double"
    buried_oxide_thickness_nm: float = 10.0
    gate_source_offset_nm: float = 0.0
    temperature_K: float = 300.0
    # materials: alloys and heterojunctions
    composition_x: float = 0.0
    source_material: str = "same"
    source_composition_x: float = 0.0
    heterointerface_nm: float = 0.0
    # non-idealities: interface traps, series resistance
    interface_trap_density_cm2eV: float = 0.0
    interface_trap_profile: str = "uniform"
    interface_trap_neutral_level_eV: float = 0.0
    source_resistance_ohm_um: float = 0.0
    drain_resistance_ohm_um: float = 0.0
    # non-idealities: band tails, trap-assisted tunnelling, band-gap narrowing
    tail_energy_source_meV: float = 0.0
    tail_energy_channel_meV: float = 0.0
    tat_lifetime_ns: float = 0.0
    tat_trap_level_eV: float = 0.0
    bandgap_narrowing: str = "off"
    # charge model of the electrostatics
    charge_model: str = "semiclassical"

    def __post_init__(self) -> None:
        for f in dataclasses.fields(self):
            value = getattr(self, f.name)
            if f.name == "oxide_permittivity" and value is None:
                if self.oxide == "custom":
                    raise ValueError("oxide_permittivity: required when oxide='custom'; "
                                     f"allowed {FIELD_RANGES['oxide_permittivity'].describe()}")
                continue
            object.__setattr__(self, f.name, _check(f.name, value))
        # the body material: an alloy at its composition; a fixed material takes none
        from sub60.physics.materials import ALLOYS, semiconductor_for

        if self.material not in ALLOYS and self.composition_x != 0.0:
            raise ValueError(
                f"material: {self.material!r} is not an alloy, so composition_x = "
                f"{self.composition_x:g} has no meaning; choose an alloy ({', '.join(ALLOYS)}) "
                "or leave composition_x at 0")
        semiconductor_for(self.material,
                          self.composition_x if self.material in ALLOYS else None)
        # combinations: the gate must exist and start inside the device
        if self.gate_length_nm + self.gate_source_offset_nm < 2.0:
            raise ValueError(
                f"gate_source_offset_nm: an underlap of {-self.gate_source_offset_nm:g} nm leaves "
                f"less than 2 nm of gate (gate_length_nm = {self.gate_length_nm:g} nm); "
                "gate_length_nm + gate_source_offset_nm must be at least 2 nm")
        if 0.0 < self.tat_lifetime_ns < TAT_LIFETIME_MIN_NS:
            raise ValueError(
                f"tat_lifetime_ns: {self.tat_lifetime_ns:g} ns is too short; use 0 (off) or "
                f"a lifetime in [{TAT_LIFETIME_MIN_NS:g}, "
                f"{FIELD_RANGES['tat_lifetime_ns'].high:g}] ns")
        if self.source_length_nm - self.gate_source_offset_nm < 1.0:
            raise ValueError(
                f"gate_source_offset_nm: an overlap of {self.gate_source_offset_nm:g} nm reaches past "
                f"the source contact (source_length_nm = {self.source_length_nm:g} nm); "
                "source_length_nm - gate_source_offset_nm must be at least 1 nm")
        self._check_source_material()  # after the gate rules: it needs a valid gate start

    def _check_source_material(self) -> None:
        """Combination rules of the heterojunction fields (ValueError naming the field)."""
        from sub60.physics.materials import ALLOYS, semiconductor_for

        if self.source_material == "same":
            if self.source_composition_x != 0.0:
                raise ValueError(
                    f"source_composition_x: {self.source_composition_x:g} has no meaning with "
                    "source_material = 'same' (the body material and its composition_x); "
                    "choose an alloy source_material or leave source_composition_x at 0")
            return
        if self.source_material not in ALLOYS and self.source_composition_x != 0.0:
            raise ValueError(
                f"source_material: {self.source_material!r} is not an alloy, so "
                f"source_composition_x = {self.source_composition_x:g} has no meaning; choose "
                f"an alloy ({', '.join(ALLOYS)}) or leave source_composition_x at 0")
        rec = semiconductor_for(self.source_material, self.source_composition_x
                                if self.source_material in ALLOYS else None)
        if not self.is_heterojunction:
            return
        for name, r in (("source_material", rec), ("material", self.semiconductor)):
            if r.valence_band_offset_eV is None:
                raise ValueError(f"{name}: {r.name} has no tabulated valence-band offset, so "
                                 "it cannot form a heterojunction; choose another material")
        x_h = self.heterointerface_position_nm
        lo, hi = 1.0, self.drain_junction_nm - 1.0
        if not lo <= x_h <= hi:
            raise ValueError(
                f"heterointerface_nm: {self.heterointerface_nm:g} nm puts the heterointerface "
                f"at x = {x_h:g} nm, outside the device part allowed for it [{lo:g}, {hi:g}] nm "
                f"(1 nm inside the source contact, 1 nm before the drain junction); allowed "
                f"[{lo - self.gate_start_nm:g}, {hi - self.gate_start_nm:g}] nm for this "
                "geometry, within [-10, 10] nm")

    @property
    def is_heterojunction(self) -> bool:
        """True when the source material (at its composition) differs from the body's."""
        if self.source_material == "same":
            return False
        return (self.source_material, self.source_composition_x) != \
            (self.material, self.composition_x)

    @property
    def source_semiconductor(self) -> Semiconductor:
        """The source region's material record (the body's for a homojunction)."""
        if not self.is_heterojunction:
            return self.semiconductor
        from sub60.physics.materials import ALLOYS, semiconductor_for

        return semiconductor_for(self.source_material, self.source_composition_x
                                 if self.source_material in ALLOYS else None)

    @property
    def heterointerface_position_nm(self) -> float:
        """x of the heterointerface: `gate_start_nm` + `heterointerface_nm` [nm]."""
        return self.gate_start_nm + self.heterointerface_nm

    def homojunction(self) -> Design:
        """The same design with the source of the body material (no heterojunction)."""
        return self.replace(source_material="same", source_composition_x=0.0,
                            heterointerface_nm=0.0)

    def source_body_design(self) -> Design:
        """The homojunction design of the source material (its flat-body subbands give
        the confinement of the source region)."""
        return self.replace(material=self.source_semiconductor_name,
                            composition_x=self.source_composition_x
                            if self.is_heterojunction else self.composition_x,
                            source_material="same", source_composition_x=0.0,
                            heterointerface_nm=0.0)

    @property
    def source_semiconductor_name(self) -> str:
        """Name of the source material ("same" resolved to the body's ``material``)."""
        return self.material if not self.is_heterojunction else self.source_material

    @property
    def is_ideal(self) -> bool:
        """True when every non-ideality (interface traps, series resistance, band tails,
        trap-assisted generation, band-gap narrowing) is off (`NON_IDEAL_OFF`)."""
        return all(getattr(self, k) == v for k, v in NON_IDEAL_OFF.items())

    def ideal(self) -> Design:
        """The same design with every non-ideality off (the reference device)."""
        return self.replace(**NON_IDEAL_OFF)

    # ------------------------------------------------------------------ geometry
    @property
    def source_junction_nm(self) -> float:
        """Position of the source/channel junction [nm]."""
        return self.source_length_nm

    @property
    def drain_junction_nm(self) -> float:
        """Position of the channel/drain junction [nm]."""
        return self.source_length_nm + self.gate_length_nm

    @property
    def total_length_nm(self) -> float:
        """Source + channel + drain [nm]."""
        return self.source_length_nm + self.gate_length_nm + self.drain_length_nm

    @property
    def gate_start_nm(self) -> float:
        """Source-side edge of the gate [nm]."""
        return self.source_length_nm - self.gate_source_offset_nm

    @property
    def gate_end_nm(self) -> float:
        """Drain-side edge of the gate (aligned with the drain junction) [nm]."""
        return self.drain_junction_nm

    @property
    def semiconductor(self) -> Semiconductor:
        """The body's material record: the named one, or the alloy at `composition_x`
        (`sub60.physics.materials.semiconductor_for`)."""
        from sub60.physics.materials import ALLOYS, semiconductor_for

        return semiconductor_for(self.material,
                                 self.composition_x if self.material in ALLOYS else None)

    # ------------------------------------------------------------------ gate stack
    @property
    def gate_dielectric(self) -> Dielectric:
        """The gate dielectric record: the named one, or a custom one of
        `oxide_permittivity` (see `sub60.physics.materials.custom_dielectric`)."""
        from sub60.physics.materials import custom_dielectric, get_dielectric

        if self.oxide == "custom":
            return custom_dielectric(self.oxide_permittivity)
        return get_dielectric(self.oxide)

    @property
    def gate_permittivity(self) -> float:
        """Relative permittivity of the gate dielectric [-] (custom value honoured)."""
        return self.gate_dielectric.permittivity

    @property
    def eot_nm(self) -> float:
        """Equivalent oxide thickness of the gate dielectric [nm]:
        EOT = t_ox * eps_SiO2 / eps_ox (`sub60.physics.materials.eot_nm`)."""
        from sub60.physics.materials import eot_nm

        return float(eot_nm(self.oxide_thickness_nm, self.gate_permittivity))

    def twin(self) -> Design:
        """The MOSFET twin: the same design with an n+ source of the same doping."""
        return self.replace(source_type="n")

    def replace(self, **changes: Any) -> Design:
        """A new validated design with some fields changed (unknown names raise)."""
        unknown = sorted(set(changes) - set(FIELD_RANGES))
        if unknown:
            raise ValueError(f"{unknown[0]}: unknown design field; known fields: "
                             + ", ".join(FIELD_RANGES))
        return dataclasses.replace(self, **changes)

    # ------------------------------------------------------------------ JSON
    def to_dict(self) -> dict[str, Any]:
        """Plain dictionary of all fields (JSON-safe)."""
        return dataclasses.asdict(self)

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> Design:
        """Build a design from a dictionary; missing fields take the defaults.

        Raises ValueError for unknown fields and for any invalid value.
        """
        if not isinstance(data, dict):
            raise ValueError(f"design: expected a JSON object, got {type(data).__name__}")
        unknown = sorted(set(data) - set(FIELD_RANGES))
        if unknown:
            raise ValueError(f"{unknown[0]}: unknown design field; known fields: "
                             + ", ".join(FIELD_RANGES))
        return cls(**data)

    def to_json(self) -> str:
        return json.dumps(self.to_dict(), indent=2)

    @classmethod
    def from_json(cls, text: str) -> Design:
        try:
            data = json.loads(text)
        except json.JSONDecodeError as exc:
            raise ValueError(f"design: not valid JSON ({exc.msg} at line {exc.lineno})") from None
        return cls.from_dict(data)


_generated_init = Design.__init__


def _init_naming_unknown_fields(self: Design, *args: Any, **kwargs: Any) -> None:
    unknown = sorted(set(kwargs) - set(FIELD_RANGES))
    if unknown:
        raise ValueError(f"{unknown[0]}: unknown design field; known fields: " + ", ".join(FIELD_RANGES))
    _generated_init(self, *args, **kwargs)


Design.__init__ = _init_naming_unknown_fields  # unknown fields raise ValueError, not TypeError


def _check(name: str, value: Any) -> Any:
    spec = FIELD_RANGES[name]
    if spec.kind is str:
        if not isinstance(value, str):
            raise ValueError(f"{name}: expected text, got {value!r}; allowed {spec.describe()}")
        if name == "material":
            known = _materials()
            match = [k for k in known if k.lower() == value.lower()]
            if not match:
                raise ValueError(f"{name}: unknown material {value!r}; known: "
                                 + ", ".join(known))
            return match[0]
        if name == "source_material":
            known = _materials()
            if value.strip().lower() == "same":
                return "same"
            match = [k for k in known if k.lower() == value.lower()]
            if not match:
                raise ValueError(f"{name}: unknown material {value!r}; known: 'same', "
                                 + ", ".join(known))
            return match[0]
        if name == "oxide":
            known = _dielectrics()
            match = [k for k in known if k.lower() == value.lower()]
            if not match:
                raise ValueError(f"{name}: unknown dielectric {value!r}; known: "
                                 + ", ".join(known))
            return match[0]
        if value not in spec.choices:
            raise ValueError(f"{name}: {value!r} not allowed; allowed {spec.describe()}")
        return value
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (numbers.Real, np.integer)):
        raise ValueError(f"{name}: expected a number, got {value!r}; "
                         f"allowed {spec.describe()}")
    value = _as_float(name, value, f"allowed {spec.describe()}")
    if not math.isfinite(value):
        raise ValueError(f"{name}: {value} is not a finite number; allowed {spec.describe()}")
    if not spec.low <= value <= spec.high:
        raise ValueError(f"{name}: {value!r} outside the allowed range {spec.describe()}")
    return value


def _as_float(name: str, value: Any, allowed: str) -> float:
    """float(value), or ValueError naming the field for an integer too large for a float
    (``float(10**400)`` raises OverflowError; an integer of over 4300 digits cannot even be
    printed)."""
    if isinstance(value, (int, np.integer)) and abs(int(value)).bit_length() > 1000:
        digits = int(abs(int(value)).bit_length() * math.log10(2)) + 1
        raise ValueError(f"{name}: an integer of about {digits} digits is too large; {allowed}")
    try:
        return float(value)
    except (OverflowError, ValueError, TypeError):
        raise ValueError(f"{name}: not a usable number (too large?); {allowed}") from None


def check_bias(vg_V: float, vd_V: float) -> tuple[float, float]:
    """Validate a bias point; ValueError names the terminal and the allowed range [V]."""
    out = []
    for label, v, (lo, hi) in (("vg_V", vg_V, VG_RANGE_V), ("vd_V", vd_V, VD_RANGE_V)):
        if isinstance(v, (bool, np.bool_)) or not isinstance(v, (numbers.Real, np.integer)):
            raise ValueError(f"{label}: expected a finite number, got {v!r}; "
                             f"allowed [{lo:g}, {hi:g}] V")
        v = _as_float(label, v, f"allowed [{lo:g}, {hi:g}] V")
        if not math.isfinite(v):
            raise ValueError(f"{label}: expected a finite number, got {v!r}; "
                             f"allowed [{lo:g}, {hi:g}] V")
        if not lo <= v <= hi:
            raise ValueError(f"{label}: {float(v)!r} V outside the allowed range [{lo:g}, {hi:g}] V")
        out.append(float(v))
    return out[0], out[1]


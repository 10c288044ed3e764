"""The settings of one explorer session: typed, bounded, documented parameters.

`ExplorerState` holds every knob of the page. Its design parameters mirror the fields of
`physics.design.Design` with the same bounds (`FIELD_RANGES`); dopings are held as
log10 of their magnitude so that their sliders move in decades. `design()` turns the
settings into a validated `Design` (or raises the design's own `ValueError`), and the
sweep helpers give the voltages of the transfer and output curves.

The enable rules of the page (which controls apply to the present settings) are derived,
read-only parameters kept up to date by `param.depends`, so a view only links them to its
widgets. The widgets of the page are made from these parameters (`app.controls`), so the
two stay linked both ways; nothing here imports Panel or Bokeh.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

import numpy as np
import param

from sub60.app.nonideal import NONIDEAL_FIELDS, NonIdealSettings
from sub60.physics import (
    FIELD_RANGES,
    TUNNELLING_MODELS,
    VD_RANGE_V,
    VG_RANGE_V,
    Design,
    alloys,
    dielectrics,
    semiconductors,
)

_DEFAULT = Design()

#: Lowest channel-doping magnitude offered [cm^-3]; below it the channel is intrinsic
#: for every material here (engineering choice, no source).
CHANNEL_DOPING_FLOOR_CM3 = 1e10


def _bounds(field: str) -> tuple[float, float]:
    spec = FIELD_RANGES[field]
    return float(spec.low), float(spec.high)


def _log_bounds(field: str, low: float | None = None) -> tuple[float, float]:
    lo, hi = _bounds(field)
    return math.log10(low if low is not None else lo), math.log10(hi)


def _sig(value: float, digits: int = 4) -> float:
    """Round to significant digits, so 10**log10(4e19) gives back exactly 4e19."""
    return float(f"{value:.{digits - 1}e}")


@dataclass(frozen=True)
class GateSweep:
    """The gate voltages of a transfer curve: first and last [V], number of points [-]."""

    start_V: float
    stop_V: float
    points: int

    @property
    def step_V(self) -> float:
        """Spacing of the gate voltages [V]."""
        return vg_step_V(self.start_V, self.stop_V, self.points)

    def gate_voltages(self) -> np.ndarray:
        """The gate voltages [V]."""
        return sweep_voltages(self.start_V, self.stop_V, self.points)

    def option_text(self) -> str:
        """The sweep as the command line writes it, START:STOP:N."""
        return f"{self.start_V:g}:{self.stop_V:g}:{self.points}"


#: The one default transfer sweep of the page, the command line (`sub60 transfer`) and
#: new snapshots: -0.4 to 0.6 V in 25 mV steps, so that the ambipolar branch and the
#: on-state are both on the curve. Snapshots keep the sweep they store.
DEFAULT_GATE_SWEEP = GateSweep(-0.4, 0.6, 41)


#: Decimals kept of a sweep's voltages [V]: 1e-12 V removes float noise such as
#: -0.30000000000000004 and changes no voltage a user can type.
SWEEP_DECIMALS = 12


def sweep_voltages(start_V: float, stop_V: float, points: int) -> np.ndarray:
    """`points` evenly spaced voltages from start_V to stop_V, rounded to `SWEEP_DECIMALS`
    (the same numbers on the page, on the command line and in snapshots) [V]."""
    values = np.linspace(float(start_V), float(stop_V), int(points))
    return np.round(values, SWEEP_DECIMALS) + 0.0  # + 0.0 turns -0.0 into 0.0


def vg_step_V(start_V: float, stop_V: float, points: int) -> float:
    """Spacing of `points` gate voltages from start_V to stop_V [V]."""
    return (float(stop_V) - float(start_V)) / max(int(points) - 1, 1)


def vg_step_text(start_V: float, stop_V: float, points: int) -> str:
    """The gate-voltage step in words, e.g. 'Vg step 25 mV'."""
    return f"Vg step {1e3 * vg_step_V(start_V, stop_V, points):.3g} mV"


#: Settings whose change alters the device (and so every curve).
DESIGN_PARAMETERS: tuple[str, ...] = (
    "material", "composition_x", "source_material", "source_composition_x",
    "heterointerface_nm", "temperature_K",
    "body_thickness_nm", "gate_length_nm", "source_length_nm", "drain_length_nm",
    "gate_layout", "gate_source_offset_nm", "buried_oxide_thickness_nm",
    "source_type", "source_doping_log10_cm3", "channel_dopant", "channel_doping_log10_cm3",
    "drain_doping_log10_cm3", "doping_gradient_nm_per_dec",
    "oxide", "oxide_thickness_nm", "oxide_permittivity", "gate_workfunction_eV",
    "charge_model",
) + NONIDEAL_FIELDS  # non-idealities: app.nonideal
#: The tunnelling model of the physics (`physics.TUNNELLING_MODELS`) in plain words, as
#: the page and its messages name it.
TUNNELLING_MODEL_NAMES: dict[str, str] = {
    "two-band": "WKB estimate, both bands set the decay (default)",
    "one-band": "WKB estimate, conduction band alone sets the decay",
    "two-band-exact": "Exact quantum transmission, two-band model",
}
#: Settings of the numerical model (every curve and band diagram depends on them).
MODEL_PARAMETERS: tuple[str, ...] = ("tunnelling_model",)
#: Settings of the single bias point (band diagram).
BIAS_PARAMETERS: tuple[str, ...] = ("vg_V", "vd_V")
#: Settings of the transfer-curve sweep and of its figures of merit.
SWEEP_PARAMETERS: tuple[str, ...] = ("vg_sweep_V", "vg_points", "vdd_V", "ioff_log10_uA_per_um")
#: Every setting that changes a result.
COMPUTED_PARAMETERS: tuple[str, ...] = (DESIGN_PARAMETERS + MODEL_PARAMETERS + BIAS_PARAMETERS
                                         + SWEEP_PARAMETERS)

#: Output curves: gate voltages below the present one and their spacing [V].
OUTPUT_CURVES = 4
OUTPUT_VG_STEP_V = 0.1
OUTPUT_VD_POINTS = 13


# ---------------------------------------------------------------- alloy composition
#: Body choices of the material picker: label -> design material (fixed records, then the
#: alloy families, whose composition is the `composition_x` setting).
MATERIAL_CHOICES: dict[str, str] = {
    **{name: name for name in semiconductors()},
    **{f"{name} alloy: {fam.formula.replace('1-x', '1−x')}": name
       for name, fam in alloys().items()},
}
#: Label of the composition control without an alloy body.
NO_ALLOY_LABEL = "Alloy composition x (only for alloy bodies)"
#: Source choices: the body's material (a homojunction), or any body choice.
SAME_AS_BODY_LABEL = "Same as the body (homojunction)"
SOURCE_MATERIAL_CHOICES: dict[str, str] = {SAME_AS_BODY_LABEL: "same", **MATERIAL_CHOICES}
#: Label of the source composition control without an alloy source.
NO_SOURCE_ALLOY_LABEL = "Source alloy composition x (only for alloy sources)"


def composition_label(material: str) -> str:
    """What x is for an alloy body, e.g. "In fraction x of In(x)Ga(1−x)As" (a fixed
    material: `NO_ALLOY_LABEL`)."""
    family = alloys().get(material)
    if family is None:
        return NO_ALLOY_LABEL
    element = re.search(r"([A-Z][a-z]?)\(x\)", family.formula)
    formula = family.formula.replace("1-x", "1−x")
    return f"{element.group(1) if element else 'Composition'} fraction x of {formula}"


class ExplorerState(NonIdealSettings):
    """All settings of one explorer session (units in the names and labels)."""

    # ---------------------------------------------------------------- material, temperature
    material = param.Selector(
        default=_DEFAULT.material, objects=MATERIAL_CHOICES, label="Body semiconductor",
        doc="Body semiconductor: a fixed record or an alloy family of physics.materials.")
    # ---------------------------------------------------------------- alloy composition
    composition_x = param.Number(
        default=_DEFAULT.composition_x, bounds=_bounds("composition_x"), step=0.01,
        label="Alloy composition x (–)",
        doc="x of an alloy body (see composition_label); 0 for a fixed material [-].")
    # ---------------------------------------------------------------- heterojunction source
    source_material = param.Selector(
        default=_DEFAULT.source_material, objects=SOURCE_MATERIAL_CHOICES,
        label="Source semiconductor",
        doc="Semiconductor of the source region; 'same' = the body's (a homojunction).")
    source_composition_x = param.Number(
        default=_DEFAULT.source_composition_x, bounds=_bounds("source_composition_x"),
        step=0.01, label="Source alloy composition x (–)",
        doc="x of an alloy source; 0 for a fixed material [-].")
    heterointerface_nm = param.Number(
        default=_DEFAULT.heterointerface_nm, bounds=_bounds("heterointerface_nm"), step=0.5,
        label="Heterointerface from the gate edge, + towards the drain (nm)",
        doc="Position of the source/body interface relative to the gate's source-side edge "
            "[nm]; used for a heterojunction source only.")
    temperature_K = param.Number(
        default=_DEFAULT.temperature_K, bounds=_bounds("temperature_K"), step=1.0,
        label="Temperature (K)", doc="Lattice temperature [K].")

    # ---------------------------------------------------------------- structure
    body_thickness_nm = param.Number(
        default=_DEFAULT.body_thickness_nm, bounds=_bounds("body_thickness_nm"), step=0.1,
        label="Body thickness (nm)", doc="Semiconductor body thickness [nm].")
    gate_length_nm = param.Number(
        default=_DEFAULT.gate_length_nm, bounds=_bounds("gate_length_nm"), step=1.0,
        label="Gate length (nm)", doc="Channel length between the junctions [nm].")
    source_length_nm = param.Number(
        default=_DEFAULT.source_length_nm, bounds=_bounds("source_length_nm"), step=1.0,
        label="Source length (nm)", doc="Length of the source region [nm].")
    drain_length_nm = param.Number(
        default=_DEFAULT.drain_length_nm, bounds=_bounds("drain_length_nm"), step=1.0,
        label="Drain length (nm)", doc="Length of the drain region [nm].")
    gate_layout = param.Selector(
        default=_DEFAULT.gate_layout,
        objects={"Double gate": "double", "Single gate on buried oxide": "single"},
        label="Gate layout", doc="Double gate, or a single gate over a buried oxide.")
    gate_source_offset_nm = param.Number(
        default=_DEFAULT.gate_source_offset_nm, bounds=_bounds("gate_source_offset_nm"),
        step=0.5, label="Gate–source overlap, + over source (nm)",
        doc="Gate extension over the source (+) or ungated underlap (-) [nm].")
    buried_oxide_thickness_nm = param.Number(
        default=_DEFAULT.buried_oxide_thickness_nm, bounds=_bounds("buried_oxide_thickness_nm"),
        step=0.5, label="Buried oxide thickness (nm)",
        doc="Buried oxide under a single-gate body [nm]; unused with a double gate.")

    # ---------------------------------------------------------------- doping
    source_type = param.Selector(
        default=_DEFAULT.source_type,
        objects={"p+ source: tunnel FET": "p", "n+ source: MOSFET": "n"},
        label="Source type", doc="p+ source (tunnel FET) or n+ source (MOSFET).")
    source_doping_log10_cm3 = param.Number(
        default=math.log10(_DEFAULT.source_doping_cm3),
        bounds=_log_bounds("source_doping_cm3"), step=0.05, label="Source doping (cm⁻³)",
        doc="log10 of the source doping magnitude [log10 cm^-3].")
    channel_dopant = param.Selector(
        default="n" if _DEFAULT.channel_doping_cm3 >= 0 else "p",
        objects={"donors (n)": "n", "acceptors (p)": "p"}, label="Channel dopant",
        doc="Kind of dopant in the channel.")
    channel_doping_log10_cm3 = param.Number(
        default=math.log10(max(abs(_DEFAULT.channel_doping_cm3), CHANNEL_DOPING_FLOOR_CM3)),
        bounds=(math.log10(CHANNEL_DOPING_FLOOR_CM3), math.log10(FIELD_RANGES[
            "channel_doping_cm3"].high)), step=0.05, label="Channel doping (cm⁻³)",
        doc="log10 of the channel doping magnitude [log10 cm^-3].")
    drain_doping_log10_cm3 = param.Number(
        default=math.log10(_DEFAULT.drain_doping_cm3), bounds=_log_bounds("drain_doping_cm3"),
        step=0.05, label="Drain doping (cm⁻³)",
        doc="log10 of the drain donor doping [log10 cm^-3].")
    doping_gradient_nm_per_dec = param.Number(
        default=_DEFAULT.doping_gradient_nm_per_dec,
        bounds=_bounds("doping_gradient_nm_per_dec"), step=0.1,
        label="Junction abruptness (nm/decade)",
        doc="Decay of the source and drain dopants into the channel, 0 = abrupt [nm/decade].")

    # ---------------------------------------------------------------- gate stack
    oxide = param.Selector(
        default=_DEFAULT.oxide, objects=[*dielectrics(), "custom"], label="Gate dielectric",
        doc="Gate dielectric, or 'custom' with its own permittivity.")
    oxide_thickness_nm = param.Number(
        default=_DEFAULT.oxide_thickness_nm, bounds=_bounds("oxide_thickness_nm"), step=0.05,
        label="Dielectric thickness (nm)", doc="Physical gate-dielectric thickness [nm].")
    oxide_permittivity = param.Number(
        default=20.0, bounds=_bounds("oxide_permittivity"), step=0.5,
        label="Custom relative permittivity (–)",
        doc="Relative permittivity of a custom dielectric [-]; used only when oxide='custom'.")
    gate_workfunction_eV = param.Number(
        default=_DEFAULT.gate_workfunction_eV, bounds=_bounds("gate_workfunction_eV"),
        step=0.01, label="Gate work function (eV)", doc="Gate metal work function [eV].")

    # ---------------------------------------------------------------- bias and sweeps
    vg_V = param.Number(default=0.3, bounds=VG_RANGE_V, step=0.01, label="Gate voltage (V)",
                        doc="Gate voltage of the band diagram [V].")
    vd_V = param.Number(default=0.3, bounds=VD_RANGE_V, step=0.01, label="Drain voltage (V)",
                        doc="Drain voltage of the band diagram and of the transfer curves [V].")
    vg_sweep_V = param.Range(default=(DEFAULT_GATE_SWEEP.start_V, DEFAULT_GATE_SWEEP.stop_V),
                             bounds=VG_RANGE_V,
                             label="Gate sweep (V)",
                             doc="First and last gate voltage of the transfer curves [V].")
    vg_points = param.Integer(default=DEFAULT_GATE_SWEEP.points, bounds=(11, 81),
                              label="Points per transfer curve",
                              doc="Gate voltages of each transfer curve [-].")
    vdd_V = param.Number(default=0.3, bounds=(0.05, 1.0), step=0.01,
                         label="Supply Vdd for Ion (V)",
                         doc="Supply: Ion is Id at Vg = Voff + Vdd [V].")
    ioff_log10_uA_per_um = param.Number(
        default=-3.0, bounds=(-8.0, 0.0), step=0.25, label="Ioff target (per µm of width)",
        doc="log10 of the off-current target that defines Voff [log10 µA/µm].")

    # ---------------------------------------------------------------- numerical model
    tunnelling_model = param.Selector(
        default=TUNNELLING_MODELS[0],
        objects={TUNNELLING_MODEL_NAMES.get(m, m): m for m in TUNNELLING_MODELS},
        label="Tunnelling model",
        doc="How the band-to-band transmission is computed: WKB with the two-band or the "
            "one-band imaginary wave-vector, or the exact two-band transmission "
            "(physics.TUNNELLING_MODELS).")

    charge_model = param.Selector(
        default=_DEFAULT.charge_model,
        objects={"bulk states, shifted edges": "semiclassical",
                 "2D subbands": "subbands"},
        label="Carrier charge",
        doc="Density of states of the body's charge in the electrostatics: the bulk one "
            "with the band edges shifted by the lowest subbands, or the 2D density of "
            "states of every confinement subband (holes: coupled 4x4 k.p subbands) "
            "(Design.charge_model).")

    # ---------------------------------------------------------------- display
    presentation = param.Boolean(default=False, label="Presentation mode (P)",
                                 doc="Hide the controls and enlarge the header and metrics (key: P).")

    # ---------------------------------------------------------------- enable rules (derived)
    custom_permittivity_enabled = param.Boolean(
        default=False, constant=True, precedence=-1,
        doc="The custom permittivity applies (oxide='custom'); derived, read-only.")
    buried_oxide_enabled = param.Boolean(
        default=False, constant=True, precedence=-1,
        doc="The buried oxide applies (single gate); derived, read-only.")

    # ---------------------------------------------------------------- alloy composition rules
    composition_enabled = param.Boolean(
        default=False, constant=True, precedence=-1,
        doc="The body is an alloy, so its composition applies; derived, read-only.")
    composition_text = param.String(
        default=NO_ALLOY_LABEL, constant=True, precedence=-1,
        doc="What x is for the present body (label of the composition control); derived.")

    @param.depends("material", watch=True, on_init=True)
    def _update_composition_rules(self) -> None:
        alloy = self.material in alloys()
        with param.parameterized.edit_constant(self):
            self.param.update(composition_enabled=alloy,
                              composition_text=composition_label(self.material))
        if not alloy and self.composition_x != 0.0:
            self.composition_x = 0.0  # a fixed material takes no composition

    source_composition_enabled = param.Boolean(
        default=False, constant=True, precedence=-1,
        doc="The source is an alloy, so its composition applies; derived, read-only.")
    source_composition_text = param.String(
        default=NO_SOURCE_ALLOY_LABEL, constant=True, precedence=-1,
        doc="What x is for the present source (label of its composition control); derived.")
    heterointerface_enabled = param.Boolean(
        default=False, constant=True, precedence=-1,
        doc="The source is of another material than the body; derived, read-only.")

    @param.depends("source_material", watch=True, on_init=True)
    def _update_source_rules(self) -> None:
        alloy = self.source_material in alloys()
        text = NO_SOURCE_ALLOY_LABEL if not alloy else \
            "Source: " + composition_label(self.source_material)
        with param.parameterized.edit_constant(self):
            self.param.update(source_composition_enabled=alloy, source_composition_text=text)
        if not alloy and self.source_composition_x != 0.0:
            self.source_composition_x = 0.0  # a fixed material takes no composition

    @param.depends("source_material", "material", "composition_x", "source_composition_x",
                   watch=True, on_init=True)
    def _update_heterointerface_rule(self) -> None:
        hetero = self.source_material != "same" and (
            self.source_material, self.source_composition_x
            if self.source_material in alloys() else 0.0) != (
            self.material, self.composition_x if self.material in alloys() else 0.0)
        with param.parameterized.edit_constant(self):
            self.param.update(heterointerface_enabled=hetero)

    @param.depends("oxide", "gate_layout", watch=True, on_init=True)
    def _update_enable_rules(self) -> None:
        with param.parameterized.edit_constant(self):
            self.param.update(custom_permittivity_enabled=self.oxide == "custom",
                              buried_oxide_enabled=self.gate_layout == "single")

    # ------------------------------------------------------------------ conversions
    def design(self) -> Design:
        """The validated design of the present settings (ValueError names the field)."""
        channel = _sig(10.0 ** self.channel_doping_log10_cm3)
        return Design(
            material=self.material,
            source_type=self.source_type,
            source_doping_cm3=_sig(10.0 ** self.source_doping_log10_cm3),
            channel_doping_cm3=channel if self.channel_dopant == "n" else -channel,
            drain_doping_cm3=_sig(10.0 ** self.drain_doping_log10_cm3),
            doping_gradient_nm_per_dec=self.doping_gradient_nm_per_dec,
            body_thickness_nm=self.body_thickness_nm,
            gate_length_nm=self.gate_length_nm,
            source_length_nm=self.source_length_nm,
            drain_length_nm=self.drain_length_nm,
            oxide_thickness_nm=self.oxide_thickness_nm,
            oxide=self.oxide,
            oxide_permittivity=self.oxide_permittivity if self.oxide == "custom" else None,
            gate_workfunction_eV=self.gate_workfunction_eV,
            gate_layout=self.gate_layout,
            buried_oxide_thickness_nm=self.buried_oxide_thickness_nm,
            gate_source_offset_nm=self.gate_source_offset_nm,
            temperature_K=self.temperature_K,
            composition_x=self.composition_x if self.material in alloys() else 0.0,
            source_material=self.source_material,
            source_composition_x=(self.source_composition_x
                                  if self.source_material in alloys() else 0.0),
            heterointerface_nm=self.heterointerface_nm,
            charge_model=self.charge_model,
            **self.nonideal_fields(),  # non-idealities: app.nonideal
        )

    def design_settings(self, design: Design) -> dict[str, Any]:
        """Parameter values that reproduce a design (inverse of `design`)."""
        channel = abs(design.channel_doping_cm3)
        out: dict[str, Any] = {
            "material": design.material, "source_type": design.source_type,
            "source_doping_log10_cm3": math.log10(design.source_doping_cm3),
            "channel_dopant": "p" if design.channel_doping_cm3 < 0 else "n",
            "channel_doping_log10_cm3": math.log10(max(channel, CHANNEL_DOPING_FLOOR_CM3)),
            "drain_doping_log10_cm3": math.log10(design.drain_doping_cm3),
        }
        for name in ("doping_gradient_nm_per_dec", "body_thickness_nm", "gate_length_nm",
                     "source_length_nm", "drain_length_nm", "oxide_thickness_nm", "oxide",
                     "gate_workfunction_eV", "gate_layout", "buried_oxide_thickness_nm",
                     "gate_source_offset_nm", "temperature_K", "composition_x",
                     "source_material", "source_composition_x", "heterointerface_nm",
                     "charge_model"):
            out[name] = getattr(design, name)
        out.update({name: getattr(design, name) for name in NONIDEAL_FIELDS})
        if design.oxide_permittivity is not None:
            out["oxide_permittivity"] = design.oxide_permittivity
        return out

    def set_design(self, design: Design) -> None:
        """Take over every field of a design in one update."""
        self.param.update(**self.design_settings(design))

    def reset(self) -> None:
        """Every setting back to its default, in one update."""
        defaults = {name: p.default for name, p in self.param.objects("existing").items()
                    if name not in ("name", "presentation") and not p.constant}
        self.param.update(**defaults)

    @property
    def ioff_target_uA_per_um(self) -> float:
        """Off-current target [uA/um]."""
        return _sig(10.0 ** self.ioff_log10_uA_per_um)

    def sweep_gate_voltages(self) -> np.ndarray:
        """Gate voltages of the transfer curves [V]."""
        lo, hi = self.vg_sweep_V
        return sweep_voltages(lo, hi, self.vg_points)

    def vg_step_text(self) -> str:
        """The transfer sweep's gate-voltage step in words ('Vg step 25 mV')."""
        lo, hi = self.vg_sweep_V
        return vg_step_text(lo, hi, self.vg_points)

    def output_gate_voltages(self) -> np.ndarray:
        """Gate voltages of the output curves: up to four, ending at the present Vg [V]."""
        vg = float(self.vg_V)
        values = [round(vg - k * OUTPUT_VG_STEP_V, 6) for k in range(OUTPUT_CURVES - 1, -1, -1)]
        return np.array([v for v in values if v >= VG_RANGE_V[0]])

    def output_drain_voltages(self) -> np.ndarray:
        """Drain voltages of the output curves: 0 to at least 0.6 V, covering Vd [V]."""
        top = min(VD_RANGE_V[1], max(0.6, math.ceil(float(self.vd_V) * 10 - 1e-9) / 10))
        return np.linspace(0.0, top, OUTPUT_VD_POINTS)

    def transfer_key(self) -> tuple:
        """Everything a transfer curve and its metrics depend on (hashable)."""
        lo, hi = self.vg_sweep_V
        return (self.design(), self.tunnelling_model, float(self.vd_V), float(lo), float(hi),
                int(self.vg_points), self.ioff_target_uA_per_um, float(self.vdd_V))

    def output_key(self) -> tuple:
        """Everything the output curves depend on (hashable)."""
        return (self.design(), self.tunnelling_model, tuple(self.output_gate_voltages()),
                tuple(self.output_drain_voltages()))


#: Widget label of each Design field, for messages that name the setting to change.
FIELD_LABELS: dict[str, str] = {
    **{name: ExplorerState.param[name].label for name in DESIGN_PARAMETERS
       if name in FIELD_RANGES},
    "source_doping_cm3": ExplorerState.param["source_doping_log10_cm3"].label,
    "channel_doping_cm3": ExplorerState.param["channel_doping_log10_cm3"].label,
    "drain_doping_cm3": ExplorerState.param["drain_doping_log10_cm3"].label,
    "vg_V": ExplorerState.param["vg_V"].label,
    "vd_V": ExplorerState.param["vd_V"].label,
}


def label_of(name: str) -> str:
    """Widget label of a state parameter or Design field (the name itself if unknown)."""
    if name in FIELD_LABELS:
        return FIELD_LABELS[name]
    if name in ExplorerState.param:
        return ExplorerState.param[name].label
    return name


def setting_words(name: str) -> str:
    """A setting named in a sentence: its label without the unit, e.g. 'source length'
    for source_length_nm, 'gate–source overlap' for gate_source_offset_nm."""
    words = re.split(r" \(|,", label_of(name), maxsplit=1)[0].strip()
    return words[:1].lower() + words[1:] if words[1:2].islower() else words


def plain_words(text: str) -> str:
    """A message with every internal setting name (``source_length_nm`` ...) replaced by
    its words (`setting_words`), for the page: 'source_length_nm - gate_source_offset_nm
    must be at least 1 nm' -> 'source length − gate–source overlap must be at least 1 nm'."""
    names = sorted((n for n in {*FIELD_LABELS, *ExplorerState.param} if "_" in n),
                   key=len, reverse=True)
    out = re.sub(r"\b(" + "|".join(map(re.escape, names)) + r")\b",
                 lambda m: setting_words(m.group(1)), text)
    return out.replace(" - ", " − ")

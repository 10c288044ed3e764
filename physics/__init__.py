"""sub60 physics: electrostatics, confinement, band-to-band tunnelling and current of
thin-body tunnel FETs and their MOSFET twins. Pure numpy/scipy/numba; no UI imports.

A design-exploration model with stated approximations, not calibrated TCAD.

Importing this package has no side effect on the process and loads almost nothing: the
public names below are loaded on first use (PEP 562). BLAS is limited to one thread
only while a solve runs (`sub60.physics._threads`).
"""

import importlib as _importlib

#: Public name -> submodule that defines it.
_API: dict[str, str] = {
    "BiasPoint": "simulate",
    "CHARGE_MODEL_NOTES": "design",
    "CURRENT_UNITS": "measured",
    "FIT_KNOBS": "fitting",
    "FitResult": "fitting",
    "FittedCurve": "fitting",
    "FittedKnob": "fitting",
    "MAX_MEASURED_BYTES": "measured",
    "MeasuredData": "measured",
    "MeasuredOutput": "measured",
    "MeasuredTransfer": "measured",
    "fit_transfer": "fitting",
    "knob_uncertainty": "fitting",
    "read_measured": "measured",
    "Design": "design",
    "alloys": "materials",
    "band_alignment": "materials",
    "Electrostatics": "electrostatics",
    "FIELD_RANGES": "design",
    "Metric": "metrics",
    "Metrics": "metrics",
    "NON_IDEAL_OFF": "design",
    "OutputCurve": "simulate",
    "SeriesSolution": "series_resistance",
    "Simulator": "simulate",
    "SolverError": "poisson",
    "Spectrum": "transport",
    "TUNNELLING_MODELS": "tunneling",
    "TransferCurve": "simulate",
    "TransmissionComparison": "simulate",
    "VD_RANGE_V": "design",
    "VG_RANGE_V": "design",
    "cache_info": "simulate",
    "check_bias": "design",
    "bandgap_narrowing_eV": "bandgap_narrowing",
    "check_tunnelling_material": "materials",
    "clear_cache": "simulate",
    "compare_transmissions": "simulate",
    "csv_text": "tables",
    "design_warnings": "simulate",
    "dielectrics": "materials",
    "material_parameters": "materials",
    "figures_of_merit": "metrics",
    "heterointerface_offsets": "heterojunction",
    "HeterointerfaceOffsets": "heterojunction",
    "hurkx_gamma": "trap_assisted",
    "interface_trap_density": "interface_traps",
    "output_columns": "simulate",
    "output_curve": "simulate",
    "output_table": "simulate",
    "semiconductors": "materials",
    "solve_bias": "simulate",
    "solve_electrostatics": "electrostatics",
    "thermionic_limit_mV_per_dec": "metrics",
    "transfer_curve": "simulate",
}

__all__ = sorted(_API)


def __getattr__(name: str) -> object:
    module = _API.get(name)
    if module is None:
        raise AttributeError(f"module 'sub60.physics' has no attribute {name!r}")
    value = getattr(_importlib.import_module(f"sub60.physics.{module}"), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return list(__all__)

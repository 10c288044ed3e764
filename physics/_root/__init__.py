"""sub60: band diagrams, tunnel window and band-to-band tunnelling current of thin-body
tunnel FETs and their MOSFET twins.

A design-exploration model with stated approximations, not calibrated TCAD.

The public API is that of `sub60.physics`, re-exported here and loaded on first use,
so ``import sub60`` is cheap and changes nothing in the process (no thread limits)::

    import numpy as np
    import sub60
    design = sub60.Design(body_thickness_nm=5.0)
    curve = sub60.transfer_curve(design, np.linspace(-0.3, 0.6, 46), vd_V=0.3)
    print(curve.metrics)

The browser app is `sub60.app` (``sub60 serve`` on the command line).
"""

import importlib as _importlib
import importlib.metadata as _metadata

try:
    __version__ = _metadata.version("sub60")
except _metadata.PackageNotFoundError:  # pragma: no cover - run from a bare checkout
    __version__ = "unknown"

#: Names re-exported from sub60.physics (loaded lazily, PEP 562); the same list as
#: ``sub60.physics.__all__`` (a test keeps them in sync).
_PHYSICS_API = ("BiasPoint", "CHARGE_MODEL_NOTES", "Design", "Electrostatics", "FIELD_RANGES", "Metric",
                "Metrics", "NON_IDEAL_OFF", "OutputCurve", "SeriesSolution", "Simulator",
                "SolverError", "Spectrum", "TUNNELLING_MODELS", "TransferCurve",
                "TransmissionComparison", "VD_RANGE_V", "VG_RANGE_V", "alloys", "band_alignment",
                "bandgap_narrowing_eV", "cache_info", "check_bias", "check_tunnelling_material",
                "clear_cache", "compare_transmissions", "csv_text",
                "design_warnings", "dielectrics", "figures_of_merit", "heterointerface_offsets",
                "HeterointerfaceOffsets", "hurkx_gamma",
                "material_parameters",
                "interface_trap_density", "output_columns", "output_curve", "output_table",
                "semiconductors", "solve_bias",
                "solve_electrostatics", "thermionic_limit_mV_per_dec", "transfer_curve",
                # measured curves and fits
                "CURRENT_UNITS", "FIT_KNOBS", "FitResult", "FittedCurve", "FittedKnob",
                "MAX_MEASURED_BYTES", "MeasuredData", "MeasuredOutput", "MeasuredTransfer", "fit_transfer",
                "knob_uncertainty", "read_measured")

__all__ = ["__version__", *_PHYSICS_API]


def __getattr__(name: str) -> object:
    if name in _PHYSICS_API:
        return getattr(_importlib.import_module("sub60.physics"), name)
    raise AttributeError(f"module 'sub60' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(__all__)

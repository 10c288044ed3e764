"""Curves as tables, and the one CSV writer of sub60 (command line and snapshot files).

A table is a plain mapping ``{column name with unit: 1-D array}``, e.g.
``{"vg_V": ..., "design_id_uA_per_um": ...}``; every column has the same length. The
column names are those of the snapshot files (a stored format, see `app.snapshot`):

- `bands_table`    ``x_nm``, one ``<subband>_eV`` column per conduction subband (C1, C2 ...)
  then per valence subband (HH1, LH1 ...), ``efs_eV``, ``efd_eV``;
- `spectrum_table` ``energy_eV``, ``current_density_uA_per_um_per_eV``, ``transmission_1``;
- `transfer_table` ``vg_V``, ``design_id_uA_per_um``, ``design_ss_mV_per_dec`` and, with a
  twin, ``twin_id_uA_per_um``, ``twin_ss_mV_per_dec``;
- `pinned_table`   long format ``pin_index_1``, ``vg_V``, ``id_uA_per_um``, ``ss_mV_per_dec``;
- `output_table`   ``vd_V`` and one ``id_uA_per_um_at_vg_<Vg>_V`` column per gate voltage;
- `tradeoff_table` ``ioff_uA_per_um``, ``voff_V``, ``ion_uA_per_um``: Ion against the Ioff
  target, from one computed transfer curve (no new solve).

`csv_text` (the physics' one writer) writes any such mapping: optional ``# name = value``
comment lines, one header row, then rows with 10 significant digits; a non-finite value
is an empty field. UI-free: numpy and the physics result classes only.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import ArrayLike

from sub60.physics import csv_text, figures_of_merit, output_columns

if TYPE_CHECKING:
    from sub60.physics import BiasPoint, OutputCurve, TransferCurve

Table = dict[str, np.ndarray]

__all__ = ["Table", "bands_table", "csv_bytes", "csv_text", "output_table",
           "pinned_table", "spectrum_table", "transfer_table"]


def csv_bytes(columns: Mapping[str, ArrayLike], comments: Mapping[str, Any] | None = None
              ) -> bytes:
    """`sub60.physics.csv_text` (the one CSV writer) encoded as UTF-8."""
    return csv_text(columns, comments).encode("utf-8")


# ---------------------------------------------------------------------- curves as tables
def bands_table(bp: BiasPoint) -> Table:
    """Band diagram at one bias: x [nm], every subband edge [eV], Fermi levels [eV]
    (`BiasPoint.band_columns`)."""
    return bp.band_columns()


def spectrum_table(bp: BiasPoint) -> Table:
    """Energy [eV], spectral current J(E) [uA/um per eV], transmission at zero
    transverse momentum [-] (`Spectrum.columns`)."""
    return bp.spectrum.columns()


def transfer_table(main: TransferCurve, twin: TransferCurve | None = None) -> Table:
    """Gate voltage [V], current [uA/um] and point swing [mV/dec] of the design and, when
    given, of its twin (on the same gate voltages), from `TransferCurve.columns`."""
    cols = main.columns()
    out: Table = {"vg_V": cols["vg_V"], "design_id_uA_per_um": cols["id_uA_per_um"],
                  "design_ss_mV_per_dec": cols["ss_mV_per_dec"]}
    if twin is not None:
        tw = twin.columns()
        out["twin_id_uA_per_um"] = tw["id_uA_per_um"]
        out["twin_ss_mV_per_dec"] = tw["ss_mV_per_dec"]
    return out


def pinned_table(curves: Sequence[TransferCurve]) -> Table:
    """Long format of several transfer curves: index from 1 [-], gate voltage [V],
    current [uA/um], point swing [mV/dec]."""
    idx, vg, cur, ss = [], [], [], []
    for i, c in enumerate(curves):
        cols = c.columns()
        idx.append(np.full(cols["vg_V"].shape, i + 1.0))
        vg.append(cols["vg_V"])
        cur.append(cols["id_uA_per_um"])
        ss.append(cols["ss_mV_per_dec"])
    data = [np.concatenate(a) if a else np.array([]) for a in (idx, vg, cur, ss)]
    return dict(zip(("pin_index_1", "vg_V", "id_uA_per_um", "ss_mV_per_dec"), data, strict=True))


def output_table(curves: Sequence[OutputCurve]) -> Table:
    """Drain voltage [V] and one current column [uA/um] per gate voltage
    (`sub60.physics.output_columns`); ValueError when two gate voltages print alike."""
    return output_columns(curves)


#: Off-current targets of the Ion–Ioff trade-off [uA/um]: 1e-8 to 1, four per decade
#: (the range of the page's Ioff control).
TRADEOFF_IOFF_UA_PER_UM = 10.0 ** np.arange(-8.0, 0.001, 0.25)


def tradeoff_table(curve: TransferCurve, vdd_V: float,
                   targets_uA_per_um: ArrayLike = TRADEOFF_IOFF_UA_PER_UM) -> Table:
    """Ion against the Ioff target of one computed transfer curve: for each target
    [uA/um], Voff [V] where the forward branch crosses it and Ion = Id(Voff + Vdd) [uA/um]
    by the figure-of-merit rules of `sub60.physics.figures_of_merit` (log-linear
    interpolation between the curve's samples, refined ones included); NaN where the
    curve does not reach the target or Voff + Vdd lies beyond the sweep. No new solve."""
    vg = curve.vg_refined_V if curve.vg_refined_V is not None else curve.vg_V
    ids = curve.id_refined_uA_per_um if curve.id_refined_uA_per_um is not None \
        else curve.id_uA_per_um
    targets = np.asarray(targets_uA_per_um, float)
    voff, ion = np.full(targets.shape, np.nan), np.full(targets.shape, np.nan)
    for k, target in enumerate(targets):
        m = figures_of_merit(vg, ids, temperature_K=curve.design.temperature_K,
                             ioff_target_uA_per_um=float(target), vdd_V=float(vdd_V))
        if m.voff_V.value is not None:
            voff[k] = m.voff_V.value
        if m.ion_uA_per_um.value is not None:
            ion[k] = m.ion_uA_per_um.value
    return {"ioff_uA_per_um": targets, "voff_V": voff, "ion_uA_per_um": ion}

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
- `output_table`   ``vd_V`` and one ``id_uA_per_um_at_vg_<Vg>_V`` column per gate voltage.

`csv_text` (the physics' one writer) writes any such mapping: optional ``# name = value``
comment lines, one header row, then rows with 10 significant digits; a non-finite value
is an empty field. UI-free: numpy and the physics result classes only.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import ArrayLike

from sub60.physics import csv_text, output_columns

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

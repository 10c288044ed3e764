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

`csv_text` writes any such mapping: optional ``# name = value`` comment lines, one header
row, then rows with 10 significant digits; a non-finite value is an empty field. UI-free:
numpy and the physics result classes only.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import ArrayLike

if TYPE_CHECKING:
    from sub60.physics.simulate import BiasPoint, OutputCurve, TransferCurve

Table = dict[str, np.ndarray]

_BAD_NAME_CHARS = set(',"\r\n')


def _fmt(x: float) -> str:
    return f"{x:.10g}" if math.isfinite(x) else ""


def csv_text(columns: Mapping[str, ArrayLike], comments: Mapping[str, Any] | None = None) -> str:
    """CSV text of a table.

    Parameters
    ----------
    columns : mapping of str to array
        column name (with its unit, e.g. ``vg_V``) -> values; all of one length.
    comments : mapping or None
        written first as ``# name = value`` lines (None values as empty text).

    Returns
    -------
    str
        comment lines, the header row, one row per index; numbers with 10 significant
        digits, non-finite numbers as empty fields; lines end in ``\\n``.
    """
    names = list(columns)
    for name in names:
        if not name or _BAD_NAME_CHARS & set(name):
            raise ValueError(f"column name {name!r}: must be non-empty, without comma, quote "
                             "or line break")
    data = [np.asarray(columns[n], float).ravel() for n in names]
    if len({c.size for c in data}) > 1:
        raise ValueError("columns of different lengths: "
                         + ", ".join(f"{n} ({c.size})" for n, c in zip(names, data, strict=True)))
    lines = [f"# {k} = {'' if v is None else v}" for k, v in (comments or {}).items()]
    lines.append(",".join(names))
    lines.extend(",".join(_fmt(float(x)) for x in row) for row in zip(*data, strict=True))
    return "\n".join(lines) + "\n"


def csv_bytes(columns: Mapping[str, ArrayLike], comments: Mapping[str, Any] | None = None
              ) -> bytes:
    """`csv_text` encoded as UTF-8."""
    return csv_text(columns, comments).encode("utf-8")


# ---------------------------------------------------------------------- curves as tables
def bands_table(bp: BiasPoint) -> Table:
    """Band diagram at one bias: x [nm], every subband edge [eV], Fermi levels [eV]."""
    x = np.asarray(bp.x_nm, float)
    out: Table = {"x_nm": x}
    for lab, edge in zip(bp.conduction_labels, bp.conduction_eV, strict=True):
        out[f"{lab}_eV"] = np.asarray(edge, float)
    for lab, edge in zip(bp.valence_labels, bp.valence_eV, strict=True):
        out[f"{lab}_eV"] = np.asarray(edge, float)
    if len(out) != 1 + len(bp.conduction_labels) + len(bp.valence_labels):
        raise ValueError("bands: two subbands share a label")
    out["efs_eV"] = np.full(x.shape, bp.efs_eV)
    out["efd_eV"] = np.full(x.shape, bp.efd_eV)
    return out


def spectrum_table(bp: BiasPoint) -> Table:
    """Energy [eV], spectral current J(E) [uA/um per eV], transmission at zero
    transverse momentum [-]."""
    s = bp.spectrum
    return {"energy_eV": np.asarray(s.energy_eV, float),
            "current_density_uA_per_um_per_eV": np.asarray(s.current_density, float),
            "transmission_1": np.asarray(s.transmission, float)}


def transfer_table(main: TransferCurve, twin: TransferCurve | None = None) -> Table:
    """Gate voltage [V], current [uA/um] and point swing [mV/dec] of the design and, when
    given, of its twin (on the same gate voltages)."""
    out: Table = {"vg_V": np.asarray(main.vg_V, float),
                  "design_id_uA_per_um": np.asarray(main.id_uA_per_um, float),
                  "design_ss_mV_per_dec": np.asarray(main.ss_mV_per_dec, float)}
    if twin is not None:
        out["twin_id_uA_per_um"] = np.asarray(twin.id_uA_per_um, float)
        out["twin_ss_mV_per_dec"] = np.asarray(twin.ss_mV_per_dec, float)
    return out


def pinned_table(curves: Sequence[TransferCurve]) -> Table:
    """Long format of several transfer curves: index from 1 [-], gate voltage [V],
    current [uA/um], point swing [mV/dec]."""
    idx, vg, cur, ss = [], [], [], []
    for i, c in enumerate(curves):
        idx.append(np.full(np.shape(c.vg_V), i + 1.0))
        vg.append(np.asarray(c.vg_V, float))
        cur.append(np.asarray(c.id_uA_per_um, float))
        ss.append(np.asarray(c.ss_mV_per_dec, float))
    cols = [np.concatenate(a) if a else np.array([]) for a in (idx, vg, cur, ss)]
    return dict(zip(("pin_index_1", "vg_V", "id_uA_per_um", "ss_mV_per_dec"), cols, strict=True))


def output_column(vg_V: float) -> str:
    """Name of the output-curve column at one gate voltage, e.g. 'id_uA_per_um_at_vg_0.3_V'."""
    return f"id_uA_per_um_at_vg_{vg_V:g}_V"


def output_table(curves: Sequence[OutputCurve]) -> Table:
    """Drain voltage [V] (of the first curve) and one current column [uA/um] per gate
    voltage; ValueError when two gate voltages print alike."""
    if not curves:
        raise ValueError("output curves: none to tabulate")
    out: Table = {"vd_V": np.asarray(curves[0].vd_V, float)}
    for c in curves:
        name = output_column(c.vg_V)
        if name in out:
            raise ValueError(f"output curves: gate voltage {c.vg_V:g} V appears twice")
        out[name] = np.asarray(c.id_uA_per_um, float)
    return out

"""Tables of results: columns with their units in their names, and one CSV writer.

Every result class of `sub60.physics` has ``columns()`` methods giving a plain
``dict`` of equal-length 1-D numpy arrays, and ``to_table()`` giving the same as a
pandas DataFrame when pandas is installed (a plain dict otherwise). Column names carry
their units: ``vg_V``, ``id_uA_per_um``, ``x_nm``, ``C1_eV``, ``transmission_1`` (``_1``:
dimensionless). `csv_text` writes any such table as the CSV files of the command line
and of snapshots: a header row, then rows of numbers with 10 significant digits,
non-finite values as empty fields.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np

Columns = dict[str, np.ndarray]

__all__ = ["Columns", "csv_text", "table"]


def table(columns: Mapping[str, Any]) -> Any:
    """A pandas DataFrame of ``columns`` when pandas is installed, else the dict itself.

    Parameters
    ----------
    columns : mapping of str to array_like
        column name (units in the name) -> 1-D values, all of one length.

    Returns
    -------
    pandas.DataFrame or dict of str to numpy.ndarray
    """
    cols = _checked(columns)
    try:
        import pandas as pd
    except ImportError:
        return cols
    return pd.DataFrame(cols)


_BAD_NAME_CHARS = set(',"\r\n')


def _checked(columns: Mapping[str, Any]) -> Columns:
    cols = {str(k): np.asarray(v) for k, v in columns.items()}
    for name in cols:
        if not name or _BAD_NAME_CHARS & set(name):
            raise ValueError(f"column name {name!r}: must be non-empty, without comma, quote "
                             "or line break")
    lengths = {v.shape for v in cols.values()}
    if any(len(s) != 1 for s in lengths) or len(lengths) > 1:
        raise ValueError("table columns must be 1-D and of one length; got shapes "
                         + ", ".join(f"{k}: {v.shape}" for k, v in cols.items()))
    return cols


def _cell(x: Any) -> str:
    x = float(x)
    return f"{x:.10g}" if math.isfinite(x) else ""


def csv_text(columns: Any, comments: Mapping[str, Any] | None = None) -> str:
    """CSV text of a table: optional ``# name = value`` comment lines, a header row,
    then one row per sample (10 significant digits, non-finite values empty).

    Parameters
    ----------
    columns : mapping of str to array_like, or pandas.DataFrame
        the table (e.g. ``curve.columns()`` or ``curve.to_table()``).
    comments : mapping, optional
        scalars written first as ``# name = value`` lines (None as an empty value).

    Returns
    -------
    str
        lines ending in ``\\n``.
    """
    if hasattr(columns, "to_dict") and hasattr(columns, "columns"):  # a DataFrame
        columns = {str(c): columns[c].to_numpy() for c in columns.columns}
    cols = _checked(columns)
    lines = [f"# {k} = {'' if v is None else v}" for k, v in (comments or {}).items()]
    lines.append(",".join(cols))
    for row in zip(*cols.values(), strict=True):
        lines.append(",".join(_cell(x) for x in row))
    return "\n".join(lines) + "\n"

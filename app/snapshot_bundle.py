"""Writing a snapshot: the zip archive a user downloads (settings, CSV curves, figures,
an offline page, a README). The file layout is described in `app.snapshot`.

This is the export layer: it computes the results (`app.snapshot_check`), writes the
curves with the one table writer (`app.tables`) and asks the export figures
(`app.figures`, `app.figures_page`) for the PNG/SVG files and the interactive page;
those modules never import this one.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import io
import json
import zipfile

from sub60.app import figures, figures_page
from sub60.app.snapshot_check import SnapshotResults, compute_results
from sub60.app.snapshot_schema import (
    MODEL_CAUTION,
    SETTINGS_MEMBER,
    SnapshotSettings,
    parse_utc,
    sub60_version,
)
from sub60.app.tables import (
    bands_table,
    csv_bytes,
    output_table,
    pinned_table,
    spectrum_table,
    transfer_table,
)
from sub60.physics import BiasPoint, OutputCurve, Simulator, TransferCurve


# ---------------------------------------------------------------------- CSV members
def bands_csv(bp: BiasPoint) -> bytes:
    """bands.csv: x_nm, every subband edge [eV], source and drain Fermi levels [eV]."""
    return csv_bytes(bands_table(bp))


def spectrum_csv(bp: BiasPoint) -> bytes:
    """spectrum.csv: energy_eV, J(E) [uA/um per eV], T(E) at zero transverse momentum [-]."""
    return csv_bytes(spectrum_table(bp))


def transfer_csv(main: TransferCurve, twin: TransferCurve) -> bytes:
    """transfer.csv: vg_V, Id and point swing of the design and of its twin."""
    return csv_bytes(transfer_table(main, twin))


def pinned_csv(names: tuple[str, ...], curves: tuple[TransferCurve, ...]) -> bytes:
    """pinned.csv, long format: pin index, vg_V, Id, point swing. The index counts the
    "pinned" entries of settings.json from 1; a ``# pin_K = name`` line names each (names
    may hold commas, so they are not in the columns; they hold no line breaks)."""
    return csv_bytes(pinned_table(curves),
                     {f"pin_{k}": name for k, name in enumerate(names, start=1)})


def output_csv(curves: tuple[OutputCurve, ...]) -> bytes:
    """output.csv: vd_V and one Id column per gate voltage."""
    return csv_bytes(output_table(curves))


# ---------------------------------------------------------------------- archive
def readme_text(settings: SnapshotSettings, members: list[str]) -> str:
    """README.txt of a snapshot: the files and the model caution."""
    d = settings.design
    lines = [
        "sub60 snapshot",
        "==============",
        "",
        f"Written by sub60 {settings.sub60_version} at {settings.created_utc}."
        + (f" Title: {settings.title}" if settings.title else ""),
        f"Design: {d.material}, {d.gate_layout} gate, {d.source_type}+ source "
        f"({'tunnel FET' if d.source_type == 'p' else 'MOSFET'}), body {d.body_thickness_nm:g} nm, "
        f"gate length {d.gate_length_nm:g} nm, T = {d.temperature_K:g} K.",
        "",
        "CAUTION: " + MODEL_CAUTION,
        "",
        "Files",
        "-----",
        "settings.json       the view settings (design, bias, sweeps, figure-of-merit",
        "                    settings, pinned designs) and the figures of merit found at",
        "                    export. Open it in sub60 (or: sub60 snapshot check FILE) to",
        "                    restore the view and recompute.",
        "bands.csv           band diagram at the bias point: position x_nm, each subband",
        "                    edge (C = conduction, HH/LH = heavy/light hole) [eV], source",
        "                    and drain Fermi levels efs_eV, efd_eV.",
        "spectrum.csv        band-to-band spectral current density J(E) [uA/um per eV] and",
        "                    the transmission of the dominant subband pair at zero",
        "                    transverse momentum [-].",
        "transfer.csv        Id-Vg at the transfer drain voltage: the design (design_*) and",
        "                    its MOSFET twin, the same device with an n+ source (twin_*);",
        "                    currents per width [uA/um], point swing [mV/dec]; empty where",
        "                    the swing is undefined.",
        "output.csv          Id-Vd [uA/um], one column per gate voltage.",
    ]
    if "pinned.csv" in members:
        lines += ["pinned.csv          Id-Vg of each pinned design; pin_index_1 counts the",
                  "                    entries of settings.json \"pinned\" from 1, and the",
                  "                    '# pin_K = name' lines at the top name them."]
    lines += [
        "figures/*.png, .svg static figures: band diagram with the tunnel window shaded,",
        "                    spectrum, transfer curves with the (ln 10)kT/q reference, output",
        "                    curves, point swing against current, and the figures of merit",
        "                    as a table; each caption states the key settings.",
        "plots.html          the figures of merit and the same plots, interactive; opens",
        "                    offline in a browser.",
        "",
        "Voltages [V], energies [eV] with the source Fermi level at 0 eV, currents per",
        "micrometre of width [uA/um].",
        "",
    ]
    return "\n".join(lines)


def _utc_now() -> str:
    now = _dt.datetime.now(_dt.UTC).replace(microsecond=0)
    return now.isoformat().replace("+00:00", "Z")


def stamp(settings: SnapshotSettings, results: SnapshotResults,
          created_utc: str | None = None) -> SnapshotSettings:
    """Settings with the export fields filled in: version, creation time, stored results."""
    return settings.replace(sub60_version=sub60_version(),
                            created_utc=created_utc or _utc_now(), stored=results.stored())


def snapshot_members(results: SnapshotResults, created_utc: str | None = None
                     ) -> dict[str, bytes]:
    """File name -> content of every member of the snapshot (deterministic names)."""
    settings = stamp(results.settings, results, created_utc)
    results = dataclasses.replace(results, settings=settings)
    members: dict[str, bytes] = {SETTINGS_MEMBER: settings.to_json().encode("utf-8")}
    members["bands.csv"] = bands_csv(results.bias_point)
    members["spectrum.csv"] = spectrum_csv(results.bias_point)
    members["transfer.csv"] = transfer_csv(results.transfer, results.twin)
    if results.output:
        members["output.csv"] = output_csv(results.output)
    if results.pinned:
        members["pinned.csv"] = pinned_csv(tuple(p.name for p in settings.pinned),
                                           results.pinned)
    for name, content in figures.static_figures(results).items():
        members[f"figures/{name}"] = content
    members["plots.html"] = figures_page.interactive_page(results).encode("utf-8")
    members["README.txt"] = readme_text(settings, list(members)).encode("utf-8")
    order = [SETTINGS_MEMBER, "README.txt"]
    return {k: members[k] for k in order + sorted(k for k in members if k not in order)}


def export_snapshot(settings: SnapshotSettings, simulator: Simulator | None = None, *,
                    created_utc: str | None = None) -> bytes:
    """The snapshot zip of a view: settings, CSV curves, figures, an offline page.

    Parameters
    ----------
    settings : SnapshotSettings
    simulator : Simulator or None
        None (recommended): a fresh simulator, see `compute_results`.
    created_utc : str or None
        creation time to record (ISO 8601, UTC); None: now.

    Returns
    -------
    bytes
        the zip archive (deflate; member times are the creation time).
    """
    results = compute_results(settings, simulator)
    members = snapshot_members(results, created_utc)
    stamped = json.loads(members[SETTINGS_MEMBER])["created_utc"]
    when = parse_utc(stamped)
    date_time = (max(when.year, 1980), when.month, when.day, when.hour, when.minute, when.second)
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, content in members.items():
            info = zipfile.ZipInfo(name, date_time)
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = 0o644 << 16
            zf.writestr(info, content)
    return buf.getvalue()


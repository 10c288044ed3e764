"""The heterojunction source: which part of the device is of which material.

A design may give its source region a semiconductor of its own (`Design.source_material`);
the channel and drain are of the body material. The heterointerface lies at
x_h = `Design.heterointerface_position_nm` (a mesh node). Materials belong to the mesh
cells: a cell [x_i, x_i+1] is source material when x_i+1 <= x_h (permittivity per cell
in the finite volumes). A node takes the material of the cell on its drain side, except
for charge at the interface node: its control volume is split, and its densities are the
volume-weighted mean of both materials' (`poisson.BandParameters.interface`). Transport
sees the interface node twice, with the source's and the body's band edges, so that the
WKB and exact transmissions meet a sharp step (`simulate._transport_profiles`).

Grid convergence (tests/physics/test_heterojunction.py): the current of the default
GaSb/InAs design converges with an order of about 0.8-1.2 in the spacing (1.9 for the
homojunction: the broken-gap interface's charge layers limit it), 0.2 % off at the
default grid.

Approximations: abrupt interface (no grading, no interface dipole, no interface states);
no strain (pseudomorphic shifts of the offsets and gaps are left out); the gate-oxide
interface traps and the trap-assisted generation use the body material's parameters
everywhere; band-gap narrowing of the source uses the body's model.

Band alignment (Anderson's rule replaced by the measured offsets): the body keeps its
own electron affinity (the gate's work-function difference refers to it), and the
source's affinity follows from the valence-band offsets of Vurgaftman, Meyer &
Ram-Mohan, J. Appl. Phys. 89, 5815 (2001) (`materials.band_alignment`):

    chi_src = chi_body - [(VBO_src + Eg_src(T)) - (VBO_body + Eg_body(T))]           (1)

so that E_c steps by the conduction-band offset and E_v by the valence-band offset of
the table at the interface, with the electrostatic potential continuous (no interface
dipole or charge beyond the table's offsets).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sub60.physics.design import Design
from sub60.physics.materials import band_alignment

_TOL_NM = 1e-9


def source_affinity_eV(design: Design) -> float:
    """Electron affinity given to the source material, eq. (1) [eV].

    Equals the body's for a homojunction.
    """
    body = design.semiconductor
    if not design.is_heterojunction:
        return float(body.electron_affinity_eV)
    al = band_alignment(design.source_semiconductor, body, design.temperature_K)
    # second minus first: Ec(body) - Ec(source)
    return float(body.electron_affinity_eV + al.conduction_offset_eV)


def source_nodes(design: Design, x_nm: np.ndarray) -> np.ndarray:
    """(nx,) True at the nodes of source material (all False for a homojunction) [-]."""
    x = np.asarray(x_nm, float)
    if not design.is_heterojunction:
        return np.zeros(x.shape, bool)
    return x < design.heterointerface_position_nm - _TOL_NM


def source_cells(design: Design, x_nm: np.ndarray) -> np.ndarray:
    """(nx-1,) True at the cells [x_i, x_i+1] of source material [-]."""
    x = np.asarray(x_nm, float)
    if not design.is_heterojunction:
        return np.zeros(x.size - 1, bool)
    return x[1:] <= design.heterointerface_position_nm + _TOL_NM


@dataclass(frozen=True)
class HeterointerfaceOffsets:
    """Band offsets at a design's heterointerface (flat bands, no potential step).

    Attributes
    ----------
    source, body : material names
    position_nm : x of the interface [nm]
    valence_step_eV, conduction_step_eV : E_v and E_c of the body minus those of the
        source, from the VMR 2001 offsets and each gap at the design temperature [eV]
    kind : "straddling (type I)", "staggered (type II)" or "broken gap (type III)"
    bulk_overlap_eV : E_v(source) - E_c(body) of the bulk bands: > 0 is a broken gap,
        < 0 the effective tunnelling gap with a minus sign [eV]
    confined_overlap_eV : the same between the source's highest valence subband and the
        body's lowest conduction subband of the flat body (confinement narrows a broken
        gap's overlap, or widens the effective gap) [eV]
    """

    source: str
    body: str
    position_nm: float
    valence_step_eV: float
    conduction_step_eV: float
    kind: str
    bulk_overlap_eV: float
    confined_overlap_eV: float


def heterointerface_offsets(design: Design) -> HeterointerfaceOffsets | None:
    """Offsets at the heterointerface of a design, None for a homojunction.

    Parameters
    ----------
    design : Design

    Returns
    -------
    HeterointerfaceOffsets or None
        from `materials.band_alignment` (Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys.
        89, 5815 (2001)) and the flat-body subbands of each region
        (`subbands.region_subbands`).
    """
    if not design.is_heterojunction:
        return None
    from sub60.physics.subbands import region_subbands

    src, body = design.source_semiconductor, design.semiconductor
    al = band_alignment(src, body, design.temperature_K)
    sb = region_subbands(design)
    bulk = al.ev_first_eV - al.ec_second_eV
    top_valence = min(s.energy_eV for s in sb.source_valence)
    confined = bulk - top_valence - sb.conduction[0].energy_eV
    return HeterointerfaceOffsets(src.name, body.name, design.heterointerface_position_nm,
                                  al.valence_offset_eV, al.conduction_offset_eV, al.kind,
                                  float(bulk), float(confined))

"""Heterojunction sources: band offsets, the broken gap, Poisson with per-cell
materials, tunnelling across the interface, and the homojunction left unchanged.

Table values (Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), "VMR";
REFERENCES.md section 3, read in a data file that tags them with that paper): valence-band
offsets on the common scale (InSb maximum at 0) GaAs -0.80, InAs -0.59, GaSb -0.03,
InSb 0 eV; Varshni gaps Eg0 / alpha / beta: GaAs 1.519 eV / 0.541 meV/K / 204 K, InAs
0.417 / 0.276 / 93, GaSb 0.812 / 0.417 / 140, InSb 0.235 / 0.32 / 170.
"""

from __future__ import annotations

import numpy as np
import pytest

from sub60.physics.design import Design
from sub60.physics.heterojunction import (
    heterointerface_offsets,
    source_affinity_eV,
    source_cells,
    source_nodes,
)
from sub60.physics.mesh import Mesh
from sub60.physics.poisson import BandParameters, PoissonOperator, PoissonProblem, solve_poisson
from sub60.physics.quantum import two_band_transmission
from sub60.physics.simulate import Simulator, compare_transmissions
from sub60.physics.structure import build_frame, build_mesh
from sub60.physics.subbands import device_subbands, region_subbands
from sub60.physics.tunneling import wkb_exponent_transverse, wkb_exponent_varying_reference

#: VMR 2001 table values (see the module docstring): VBO [eV], Eg0 [eV], alpha [eV/K], beta [K]
VMR = {"GaAs": (-0.80, 1.519, 0.541e-3, 204.0), "InAs": (-0.59, 0.417, 0.276e-3, 93.0),
       "GaSb": (-0.03, 0.812, 0.417e-3, 140.0), "InSb": (0.0, 0.235, 0.32e-3, 170.0)}


def vmr_edges(name: str, t_K: float = 300.0) -> tuple[float, float]:
    """(Ev, Ec) on the VMR scale from the table: Ev = VBO, Ec = VBO + Varshni gap [eV]."""
    vbo, eg0, alpha, beta = VMR[name]
    return vbo, vbo + eg0 - alpha * t_K**2 / (t_K + beta)


def node_edges(design: Design) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """x, bulk Ec and Ev at equal potential (psi = 0) from the frame's band parameters."""
    frame = build_frame(design)
    b = frame.bands
    x = frame.mesh.x_nm
    ec = b.ec_eV(np.zeros(x.size)) - np.broadcast_to(b.dec_eV, x.shape)
    ev = b.ev_eV(np.zeros(x.size)) + np.broadcast_to(b.dev_eV, x.shape)
    return x, ec, ev


# ----------------------------------------------------------------------------- offsets
@pytest.mark.parametrize("source, body", [("GaSb", "InAs"), ("InAs", "GaSb"),
                                          ("GaAs", "InAs"), ("InSb", "GaSb")])
@pytest.mark.parametrize("t_K", [300.0, 200.0])
def test_band_steps_recomputed_from_the_vmr_table(source, body, t_K):
    """E_v and E_c step at the interface by the VMR 2001 offsets (Ev = VBO, Ec = VBO +
    Eg(T)), recomputed here from the table's numbers, to 1e-9 eV."""
    d = Design(material=body, source_material=source, temperature_K=t_K)
    x, ec, ev = node_edges(d)
    src = source_nodes(d, x)
    assert src.any() and not src.all()
    ev_s, ec_s = vmr_edges(source, t_K)
    ev_b, ec_b = vmr_edges(body, t_K)
    assert ev[src][0] - ev[~src][-1] == pytest.approx(ev_s - ev_b, abs=1e-9)
    assert ec[src][0] - ec[~src][-1] == pytest.approx(ec_s - ec_b, abs=1e-9)
    # the body keeps its own affinity (the gate's work-function difference refers to it)
    assert ec[~src][-1] == pytest.approx(-d.semiconductor.electron_affinity_eV, abs=1e-12)


def test_alloy_pair_offsets_follow_vmr_interpolation():
    """GaAs(x)Sb(1-x) on In0.53Ga0.47As (staggered): VBO of the alloy by VMR's
    interpolation with its VBO bowing -1.06 eV (VMR 2001, ternary-alloy bowing table):
    x (-0.80) + (1 - x)(-0.03) - x (1 - x)(-1.06)."""
    x = 0.5
    d = Design(material="In0.53Ga0.47As", source_material="GaAsSb", source_composition_x=x)
    off = heterointerface_offsets(d)
    vbo_alloy = x * -0.80 + (1 - x) * -0.03 - x * (1 - x) * -1.06
    assert -off.valence_step_eV == pytest.approx(vbo_alloy - d.semiconductor.valence_band_offset_eV,
                                                 abs=1e-9)
    assert off.kind == "staggered (type II)"


@pytest.mark.parametrize("source, body, kind", [
    ("GaSb", "InAs", "broken gap (type III)"), ("AlGaSb", "InAs", "staggered (type II)"),
    ("Ge", "Si", "staggered (type II)"), ("SiGe", "Si", "staggered (type II)"),
    ("InAs", "Si", "straddling (type I)")])
def test_required_pairs_solve(source, body, kind):
    """Every pair the design must support builds, aligns and solves one bias point.
    Kinds: GaSb/InAs broken gap (VMR 2001); Al0.6Ga0.4Sb/InAs and SiGe/Si staggered (VMR 2001;
    Si/Ge offsets of the materials' records, from memory); InAs/Si by the same values
    straddling (the InAs gap inside Si's: Ev -0.59 > -0.89 eV, Ec -0.24 < 0.23 eV)."""
    x = {"AlGaSb": 0.6, "SiGe": 0.3}.get(source, 0.0)  # AlGaSb/InAs staggers above x ~ 0.54
    d = Design(material=body, source_material=source, source_composition_x=x,
               source_doping_cm3=1e20 if body == "Si" else 4e19,
               gate_workfunction_eV=4.3 if body == "Si" else 4.9)
    assert heterointerface_offsets(d).kind == kind
    bp = Simulator().solve_bias(d, 0.5, 0.3)
    assert np.isfinite(bp.current_uA_per_um) and bp.current_uA_per_um >= 0


# ----------------------------------------------------------------------------- broken gap
def test_gasb_inas_broken_gap_overlap_at_300K_bulk():
    """GaSb/InAs at 300 K: E_v(GaSb) - E_c(InAs) = 0.56 eV (VMR table offsets) - Eg(InAs,
    300 K) = 0.206 eV, recomputed from the table; the device's alignment gives it."""
    ev_s, _ = vmr_edges("GaSb")
    _, ec_b = vmr_edges("InAs")
    expected = ev_s - ec_b
    assert expected == pytest.approx(0.2062, abs=1e-4)
    off = heterointerface_offsets(Design(source_material="GaSb"))
    assert off.kind == "broken gap (type III)"
    assert off.bulk_overlap_eV == pytest.approx(expected, abs=1e-9)


@pytest.mark.parametrize("t_nm", [5.0, 7.0, 12.0, 30.0])
def test_gasb_inas_overlap_with_confinement(t_nm):
    """Confinement narrows the broken-gap overlap by the confinement energies of the
    source's top valence subband and the body's C1. They are bounded by the infinite
    well hbar^2 pi^2/(2 m t^2) (0.376030 eV nm^2 / m, REFERENCES section 8; a finite,
    non-parabolic well lies lower), so bulk - E_inf(C1) - E_inf(HH1) < confined < bulk,
    and the overlap tends to the bulk 0.206 eV as the body thickens."""
    d = Design(source_material="GaSb", body_thickness_nm=t_nm)
    off = heterointerface_offsets(d)
    e_inf_c = 0.376030 / (0.026 * t_nm**2)  # InAs electron mass (VMR)
    g1, g2 = 13.4, 4.7  # GaSb Luttinger parameters (VMR): m_hh,[001] = 1/(g1 - 2 g2)
    e_inf_hh = 0.376030 * (g1 - 2 * g2) / t_nm**2
    assert off.bulk_overlap_eV - e_inf_c - e_inf_hh < off.confined_overlap_eV < off.bulk_overlap_eV
    if t_nm == 30.0:
        assert off.confined_overlap_eV == pytest.approx(off.bulk_overlap_eV, abs=0.015)


def test_confined_overlap_in_the_solved_band_diagram():
    """At the interface node the source's top valence subband and the body's C1 (same
    potential, both sides of the zero-length step of the transport path) differ by the
    confined overlap up to the potential's variation across the body (first-order
    subband edges)."""
    d = Design(source_material="GaSb")
    bp = Simulator().solve_bias(d, 0.0, 0.0)
    es = bp.electrostatics
    sb = region_subbands(d)
    ih = int(np.argmin(np.abs(es.x_nm - d.heterointerface_position_nm)))
    chi, eg = es.frame.bands.chi_eV, es.frame.bands.eg_eV
    cs, vs, cb, vb = sb.interface_values(es.y_nm, es.ec_map_eV[ih], chi[ih] - chi[ih - 1],
                                         eg[ih], eg[ih - 1])
    off = heterointerface_offsets(d)
    semi = es.frame.mesh.node_semiconductor
    spread = float(np.ptp(es.ec_map_eV[ih, semi]))
    assert vs.max() - cb.min() == pytest.approx(off.confined_overlap_eV, abs=spread + 1e-6)


# ----------------------------------------------------------------------------- Poisson
def test_series_dielectrics_along_x_follow_gauss_law():
    """Two dielectrics in series along x between Dirichlet ends, no charge: the potential
    at the interface is V (L1/eps1) / (L1/eps1 + L2/eps2) (continuity of the normal D,
    Gauss's law; common practice, no source), exact for the finite volumes with the
    interface on a node."""
    x = np.linspace(0.0, 10.0, 41)
    y = np.linspace(0.0, 2.0, 5)
    eps_xy = np.where((x[1:] <= 4.0 + 1e-12)[:, None], 4.0, 16.0) * np.ones((1, y.size - 1))
    mesh = Mesh(x, y, np.full(y.size - 1, 16.0), np.ones(y.size - 1, bool), eps_xy)
    fixed = np.zeros((x.size, y.size), bool)
    fixed[0], fixed[-1] = True, True
    values = np.zeros(fixed.shape)
    values[-1] = 1.0
    bands = BandParameters(4.0, 1.0, 1e18, 1e18, 0.0259)
    zeros = np.zeros(x.size)
    prob = PoissonProblem(mesh, zeros, zeros, bands, fixed, values, zeros, zeros, carriers=False)
    sol = solve_poisson(prob, values, PoissonOperator(mesh, fixed))
    i = int(np.argmin(np.abs(x - 4.0)))
    expected = (4.0 / 4.0) / (4.0 / 4.0 + 6.0 / 16.0)
    assert np.allclose(sol.psi_V[i], expected, atol=1e-12)


def test_uniform_per_cell_permittivity_equals_the_layered_operator():
    """The per-cell permittivity path with the layers' values in every column builds the
    same Laplacian as the layered one (to round-off)."""
    mesh = build_mesh(Design())
    eps_xy = np.repeat(mesh.cell_permittivity[None, :], mesh.nx - 1, axis=0)
    twin = Mesh(mesh.x_nm, mesh.y_nm, mesh.cell_permittivity, mesh.cell_semiconductor, eps_xy)
    fixed = np.zeros((mesh.nx, mesh.ny), bool)
    a, b = PoissonOperator(mesh, fixed), PoissonOperator(twin, fixed)
    assert abs(a.matrix - b.matrix).max() <= 1e-12 * abs(a.matrix).max()


def test_heterojunction_mesh_marks_source_cells_with_the_source_permittivity():
    """GaSb (15.7) source on InAs (15.15) body (Ioffe permittivities): semiconductor cells
    left of the interface carry 15.7, dielectric cells keep the oxide's."""
    d = Design(source_material="GaSb")
    mesh = build_mesh(d)
    assert d.heterointerface_position_nm in mesh.x_nm
    cells = source_cells(d, mesh.x_nm)
    semi = mesh.cell_semiconductor
    assert np.all(mesh.cell_permittivity_xy[np.ix_(cells, semi)] == 15.7)
    assert np.all(mesh.cell_permittivity_xy[np.ix_(~cells, semi)] == 15.15)
    assert np.all(mesh.cell_permittivity_xy[:, ~semi] == d.gate_permittivity)


def test_source_affinity_is_the_body_affinity_plus_the_conduction_offset():
    d = Design(source_material="GaSb")
    _, ec_s = vmr_edges("GaSb")
    _, ec_b = vmr_edges("InAs")
    assert source_affinity_eV(d) == pytest.approx(4.9 - (ec_s - ec_b), abs=1e-9)


# ----------------------------------------------------------------------------- tunnelling kernels
def test_varying_mass_kernel_matches_its_reference_and_the_scalar_path():
    """The compiled per-segment-mass WKB kernel equals the plain-Python reference; with
    equal masses in every segment both equal the scalar-mass kernel."""
    x = np.linspace(0.0, 20.0, 81)
    ec = 0.6 - 0.06 * x
    ev = ec - np.where(x < 8.0, 0.7, 0.35)
    e = np.linspace(-0.25, -0.05, 7)
    k = np.outer([0.0, 0.1, 0.3], np.ones(e.size))
    m = np.where(x[1:] <= 8.0, 0.05, 0.03)
    for model in ("two-band", "one-band"):
        fast = wkb_exponent_transverse(x, ec, ev, 10.0, 5.0, k, e, m, model)
        ref = wkb_exponent_varying_reference(x, ec, ev, 10.0, 5.0, k, e, m, model)
        assert np.allclose(fast, ref, rtol=1e-12, atol=0)
        same = wkb_exponent_transverse(x, ec, ev, 10.0, 5.0, k, e, np.full(x.size - 1, 0.04),
                                       model)
        scalar = wkb_exponent_transverse(x, ec, ev, 10.0, 5.0, k, e, 0.04, model)
        assert np.allclose(same, scalar, rtol=1e-12, atol=0)


def test_exact_transmission_with_equal_cell_masses_equals_the_scalar_mass():
    x = np.linspace(0.0, 20.0, 81)
    ec = 0.3 - 0.03 * x
    ev = ec - 0.4
    e = np.linspace(-0.05, 0.0, 5)
    k = np.zeros((1, e.size))
    a = two_band_transmission(x, ec, ev, 0.03, k, e)
    b = two_band_transmission(x, ec, ev, np.full(x.size - 1, 0.03), k, e)
    assert np.array_equal(a, b)


def test_exact_and_wkb_agree_across_a_heterointerface():
    """On a GaSb/InAs on-state point the exact two-band T(E, k=0) of the main pair lies
    in [0, 1] and below WKB by at most a factor 20 where both exceed 1e-3: the sharp
    step reflects part of the wave (a valence-like state turns conduction-like), which
    WKB, having no reflection, leaves out (measured 0.14-0.6 when written; WKB as the
    semiclassical limit of the exact solution: Shuey, Phys. Rev. 137, A1268 (1965))."""
    bp = Simulator().solve_bias(Design(source_material="GaSb", body_thickness_nm=5.0), 0.2, 0.3)
    cmp = compare_transmissions(bp)
    ok = (cmp.wkb > 1e-3) & (cmp.exact > 1e-3)
    assert ok.sum() > 10
    ratio = cmp.exact[ok] / cmp.wkb[ok]
    assert np.all((cmp.exact >= 0) & (cmp.exact <= 1))
    assert np.all((ratio > 1 / 20) & (ratio < 1.5)), ratio


# ----------------------------------------------------------------------------- homojunction
def test_source_of_the_body_material_is_the_homojunction_bit_for_bit():
    a = Simulator().solve_bias(Design(), 0.3, 0.3)
    b = Simulator().solve_bias(Design(source_material="InAs", heterointerface_nm=3.0), 0.3, 0.3)
    assert not Design(source_material="InAs").is_heterojunction
    assert a.current_uA_per_um == b.current_uA_per_um
    assert np.array_equal(a.conduction_eV, b.conduction_eV)


@pytest.mark.parametrize("vg", [0.0, 0.3, 0.5])
def test_vanishing_heterojunction_tends_to_the_homojunction(vg):
    """InGaAs(x) source on an InGaAs(x + 1e-7) body goes through every heterojunction
    path (per-cell permittivity, per-node band parameters, the split interface volume,
    region subbands, per-segment masses, the doubled interface node) and must give the
    homojunction's current within 1e-4."""
    body = Design(material="InGaAs", composition_x=0.6 + 1e-7)
    hetero = body.replace(source_material="InGaAs", source_composition_x=0.6)
    homo = body.replace(composition_x=0.6)
    assert hetero.is_heterojunction
    ih = Simulator().solve_bias(hetero, vg, 0.3).current_uA_per_um
    io = Simulator().solve_bias(homo, vg, 0.3).current_uA_per_um
    assert ih == pytest.approx(io, rel=1e-4)


# ----------------------------------------------------------------------------- the device
def _tunnel_distance_nm(bp) -> float:
    """Distance from the source's valence turning point to the channel's conduction
    turning point at the energy of the largest spectral current [nm]."""
    e = bp.spectrum.energy_eV[int(np.argmax(bp.spectrum.current_density))]
    x, ec, ev = bp.x_nm, bp.conduction_eV.min(axis=0), bp.valence_eV.max(axis=0)
    start = int(np.flatnonzero(ev >= e)[-1]) if np.any(ev >= e) else 0
    after = np.flatnonzero((ec <= e) & (np.arange(x.size) > start))
    end = int(after[0]) if after.size else x.size - 1
    return float(x[end] - x[start])


def test_broken_gap_source_beats_the_homojunction_at_the_same_ioff():
    """GaSb source on the default InAs body against the InAs homojunction, same Ioff
    (1 nA/um) and Vdd (0.3 V): more on-current, because the broken gap leaves almost no
    barrier at the interface — the tunnel distance at the peak of the on-state spectrum
    is shorter (visible in the band edges). Regression on our own scenario: the ratio
    was 14 when written (500 vs 35 uA/um); the test asks for 3."""
    vg = np.linspace(-0.4, 0.6, 41)
    out = {}
    for name, d in (("homo", Design()), ("hetero", Design(source_material="GaSb"))):
        sim = Simulator()
        m = sim.transfer_curve(d, vg, 0.3).metrics
        assert m.ioff_target_uA_per_um == 1e-3 and m.vdd_V == 0.3
        on = sim.solve_bias(d, m.voff_V.value + 0.3, 0.3)
        out[name] = (m.ion_uA_per_um.value, _tunnel_distance_nm(on))
    assert out["hetero"][0] > 3 * out["homo"][0], out
    assert out["hetero"][1] < out["homo"][1], out


def test_grid_convergence_order_of_a_heterojunction_point():
    """Refining the grid 1x, 2x, 4x: the current's successive changes shrink at least as
    h^0.7 (measured order 0.8 near the broken-gap interface, 1.9 for the homojunction;
    the interface charge layers limit it), and the coarse grid is within 1 % of the 4x
    one."""
    d = Design(source_material="GaSb")
    i = [Simulator(resolution=r).solve_bias(d, 0.1, 0.3).current_uA_per_um for r in (1, 2, 4)]
    order = np.log2(abs(i[1] - i[0]) / abs(i[2] - i[1]))
    assert order > 0.7, (i, order)
    assert abs(i[0] / i[2] - 1) < 0.01, i


def test_source_region_subbands_use_the_source_material():
    """C1 and HH1 of the source region are those of a GaSb body of the same stack."""
    d = Design(source_material="GaSb")
    sb = region_subbands(d)
    gasb = device_subbands(Design(material="GaSb"))
    assert [s.energy_eV for s in sb.source_valence] == \
        [{v.label: v for v in gasb.valence}[s.label].energy_eV for s in sb.valence]
    assert sb.conduction[0].energy_eV == device_subbands(Design()).conduction[0].energy_eV

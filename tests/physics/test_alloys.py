"""Alloys with a composition, the valence-band-offset table and band alignments.

Published numbers are typed here again from their sources (not imported from the module).
VMR 2001 = Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815 (2001): binary
parameters and the bowing parameters of the ternary alloys (values read in a data file
that tags them with this paper). Si(1-x)Ge(x): Weber & Alonso, Phys. Rev. B 40, 5683
(1989) (from memory).
"""

from __future__ import annotations

import dataclasses

import pytest

from sub60.physics.design import Design
from sub60.physics.materials import (
    ALLOYS,
    ALSB,
    SEMICONDUCTORS,
    alloy_semiconductor,
    band_alignment,
    check_tunnelling_material,
    get_semiconductor,
    satellite_valleys,
    semiconductor_for,
    sige_gaps_eV,
)

# VMR 2001: Eg0 [eV], alpha [eV/K], beta [K], m_e(Gamma), VBO [eV].
VMR = {
    "GaAs": (1.519, 0.541e-3, 204.0, 0.067, -0.80),
    "InAs": (0.417, 0.276e-3, 93.0, 0.026, -0.59),
    "GaSb": (0.812, 0.417e-3, 140.0, 0.039, -0.03),
    "InSb": (0.235, 0.32e-3, 170.0, 0.0135, 0.0),
    "AlSb": (2.386, 0.42e-3, 140.0, 0.14, -0.41),
}
# VMR 2001 bowing: (x = 1 end, x = 0 end, gap bowing C(x), mass bowing, VBO bowing).
BOWING = {
    "InGaAs": ("InAs", "GaAs", lambda x: 0.477, 0.0091, -0.38),
    "AlGaSb": ("AlSb", "GaSb", lambda x: -0.044 + 1.22 * x, 0.0, 0.0),
    "GaAsSb": ("GaAs", "GaSb", lambda x: 1.43, 0.0, -1.06),
    "InAsSb": ("InAs", "InSb", lambda x: 0.67, 0.035, 0.0),
}


def varshni(eg0: float, alpha: float, beta: float, t: float) -> float:
    """Varshni, Physica 34, 149 (1967)."""
    return eg0 - alpha * t**2 / (t + beta)


def mix(x: float, a: float, b: float, c: float = 0.0) -> float:
    """VMR 2001 ternary rule: x P(A) + (1-x) P(B) - x(1-x) C."""
    return x * a + (1 - x) * b - x * (1 - x) * c


def numbers(record) -> dict:
    """The numeric content of a record (name, sources and composition aside)."""
    return {f.name: getattr(record, f.name) for f in dataclasses.fields(record)
            if f.name not in ("name", "sources", "composition")}


def endpoint(name: str):
    return ALSB if name == "AlSb" else SEMICONDUCTORS[name]


@pytest.mark.parametrize("family", list(ALLOYS))
def test_endpoints_equal_the_binaries(family):
    """x = 1 and x = 0 give exactly the endpoint records (every number, VBO included)."""
    ends = {"SiGe": ("Ge", "Si")}.get(family, BOWING.get(family, (None, None))[:2])
    for x, name in ((1.0, ends[0]), (0.0, ends[1])):
        alloy = alloy_semiconductor(family, x)
        assert numbers(alloy) == numbers(endpoint(name)), (family, x)
        assert alloy.composition == (family, x)


@pytest.mark.parametrize("family", list(BOWING))
@pytest.mark.parametrize("x", [0.2, 0.5, 0.8])
def test_iii_v_alloys_follow_vmr_bowing(family, x):
    """Gap (0 K), Gamma electron mass and VBO with VMR 2001's bowing; Varshni alpha and
    beta linear, so the 300 K gap is Varshni's law with the interpolated parameters."""
    one, zero, gap_c, mass_c, vbo_c = BOWING[family]
    a, b = VMR[one], VMR[zero]
    rec = alloy_semiconductor(family, x)
    eg0 = mix(x, a[0], b[0], gap_c(x))
    assert rec.eg0_eV == pytest.approx(eg0, abs=1e-12)
    assert rec.electron_mass == pytest.approx(mix(x, a[3], b[3], mass_c), abs=1e-12)
    assert rec.valence_band_offset_eV == pytest.approx(mix(x, a[4], b[4], vbo_c), abs=1e-12)
    gap300 = varshni(eg0, mix(x, a[1], b[1]), mix(x, a[2], b[2]), 300.0)
    assert rec.bandgap_eV(300.0) == pytest.approx(gap300, abs=1e-12)
    assert all(rec.sources[f] for f in numbers(rec) if getattr(rec, f) is not None)


def test_in053ga047as_reproduces_its_record():
    """In0.53Ga0.47As lattice-matched to InP. Measured 300 K gap 0.74-0.75 eV and electron
    mass 0.041-0.043 m0 (commonly quoted values, e.g. Goetz et al., J. Appl. Phys. 54,
    4543 (1983) for the gap; from memory): the VMR interpolation gives 0.735 eV (within
    15 meV of 0.75) and 0.0430 m0. Gap, mass and VBO equal the fixed record's exactly
    (the same VMR rule); VBO 0.47(-0.80) + 0.53(-0.59) + 0.47*0.53*0.38 = -0.594 eV
    [derived]."""
    alloy = alloy_semiconductor("InGaAs", 0.53)
    fixed = get_semiconductor("In0.53Ga0.47As")
    gap = float(alloy.bandgap_eV(300.0))
    print(f"In0.53Ga0.47As: Eg(300 K) {gap:.4f} eV, m_e {alloy.electron_mass:.4f}, "
          f"VBO {alloy.valence_band_offset_eV:.4f} eV, chi {alloy.electron_affinity_eV:.3f} eV")
    assert 0.735 <= gap <= 0.75
    assert 0.041 <= alloy.electron_mass <= 0.0431
    assert alloy.valence_band_offset_eV == pytest.approx(-0.594, abs=5e-4)
    for name in ("eg0_eV", "varshni_alpha_eV_per_K", "varshni_beta_K", "electron_mass",
                 "valence_band_offset_eV"):
        assert getattr(alloy, name) == pytest.approx(getattr(fixed, name), abs=1e-12), name
    # the affinity follows the conduction edge (VMR gap + VBO bowing): near the record's
    # 4.5 eV (commonly quoted, from memory)
    assert alloy.electron_affinity_eV == pytest.approx(4.5, abs=0.05)


def test_alloy_vbo_and_staggered_ingaas_gaassb():
    """GaAs0.51Sb0.49 on InP: VBO 0.51(-0.80) + 0.49(-0.03) + 0.51*0.49*1.06 = -0.158 eV
    (VMR 2001 bowing -1.06 eV) [derived]; against In0.53Ga0.47As it is a staggered
    (type II) pair, the GaAsSb valence band higher (the known type-II alignment; from
    memory)."""
    gaassb = alloy_semiconductor("GaAsSb", 0.51)
    assert gaassb.valence_band_offset_eV == pytest.approx(
        mix(0.51, -0.80, -0.03, -1.06), abs=1e-12)
    al = band_alignment(alloy_semiconductor("InGaAs", 0.53), gaassb, 300.0)
    print(al, al.valence_offset_eV, al.conduction_offset_eV)
    assert al.kind == "staggered (type II)"
    assert al.valence_offset_eV > 0 and al.conduction_offset_eV > 0


def test_inassb_gap_minimum():
    """InAs(x)Sb(1-x) has the smallest gap of the III-Vs near an Sb fraction of 0.6-0.65
    (VMR bowing 0.67 eV); at 300 K about 0.1 eV (from memory): minimum of the VMR gap
    inside 0.08-0.12 eV, at an As fraction x within [0.3, 0.45]."""
    xs = [i / 100 for i in range(101)]
    gaps = [float(alloy_semiconductor("InAsSb", x).bandgap_eV(300.0)) for x in xs]
    k = min(range(101), key=gaps.__getitem__)
    print(f"InAsSb minimum gap {gaps[k]:.4f} eV at x = {xs[k]}")
    assert 0.08 <= gaps[k] <= 0.12 and 0.3 <= xs[k] <= 0.45


def test_algasb_turns_indirect():
    """Al(x)Ga(1-x)Sb: direct at low x, indirect (X below Gamma) for AlSb-rich x; the
    crossover of the interpolated gaps lies between x = 0.3 and 0.6 (VMR 2001 numbers;
    the measured crossover is near x ~ 0.4, from memory). The indirect ones keep the
    'not modelled' warning."""
    assert alloy_semiconductor("AlGaSb", 0.3).direct_gap
    indirect = alloy_semiconductor("AlGaSb", 0.6)
    assert not indirect.direct_gap
    assert "does not include" in check_tunnelling_material(indirect)
    first = next(x / 100 for x in range(101) if not alloy_semiconductor("AlGaSb", x / 100).direct_gap)
    assert 0.3 < first < 0.6
    assert {v.name for v in satellite_valleys(indirect)} == {"L", "X"}


def test_sige_gap_follows_weber_alonso():
    """Si(1-x)Ge(x) at 4.2 K (Weber & Alonso 1989, from memory): X-like gap
    1.155 - 0.43x + 0.206x^2, L-like 2.010 - 1.270x; the composition dependence is kept,
    so differences from the endpoints match exactly; the branches cross near x = 0.85."""
    t = 4.2
    gx0, _ = sige_gaps_eV(0.0, t)
    _, gl1 = sige_gaps_eV(1.0, t)
    for x in (0.1, 0.3, 0.5, 0.7):
        gx, _ = sige_gaps_eV(x, t)
        assert gx - gx0 == pytest.approx((1.155 - 0.43 * x + 0.206 * x * x) - 1.155, abs=1e-12)
        assert float(alloy_semiconductor("SiGe", x).bandgap_eV(t)) == pytest.approx(gx, abs=1e-12)
    for x in (0.9, 0.95):
        _, gl = sige_gaps_eV(x, t)
        assert gl - gl1 == pytest.approx((2.010 - 1.270 * x) - (2.010 - 1.270), abs=1e-12)
    cross = next(x / 1000 for x in range(1001) if sige_gaps_eV(x / 1000, t)[1] < sige_gaps_eV(x / 1000, t)[0])
    print(f"SiGe X/L crossover at x = {cross}")
    assert 0.8 <= cross <= 0.9
    # Si0.7Ge0.3 unstrained at 300 K: about 1.0 eV (from memory)
    assert float(alloy_semiconductor("SiGe", 0.3).bandgap_eV(300.0)) == pytest.approx(1.0, abs=0.03)


def test_composition_errors_name_the_field():
    """Out of range, missing for an alloy, set for a non-alloy: ValueError naming
    composition_x (and the material for the last)."""
    for bad in (-0.1, 1.5, float("nan"), "half", True):
        with pytest.raises(ValueError, match=r"composition_x.*\[0, 1\]"):
            alloy_semiconductor("InGaAs", bad)
    with pytest.raises(ValueError, match="unknown alloy"):
        alloy_semiconductor("InAlAs", 0.5)
    with pytest.raises(ValueError, match="composition_x: required"):
        semiconductor_for("SiGe")
    with pytest.raises(ValueError, match="material: 'InAs' is not an alloy.*composition_x"):
        semiconductor_for("InAs", 0.3)
    with pytest.raises(ValueError, match="alloy family"):
        get_semiconductor("InGaAs")


def test_design_composition_field():
    """The Design carries composition_x (default 0): an alloy uses it, other materials
    refuse any other value; old design dictionaries (without the field) open unchanged;
    JSON round trip."""
    old = Design().to_dict()
    del old["composition_x"]
    assert Design.from_dict(old) == Design()
    assert Design().composition_x == 0.0 and Design().semiconductor is SEMICONDUCTORS["InAs"]
    d = Design(material="ingaas", composition_x=0.53)
    assert d.material == "InGaAs" and d.semiconductor.name == "InGaAs (x = 0.53)"
    assert Design.from_json(d.to_json()) == d
    assert Design(material="SiGe").semiconductor.name == "SiGe (x = 0)"
    with pytest.raises(ValueError, match=r"^material: 'InAs' is not an alloy.*composition_x"):
        Design(composition_x=0.2)
    for bad in (1.2, None, float("nan")):
        with pytest.raises(ValueError, match=r"^composition_x: .*\[0, 1\]"):
            Design(material="SiGe", composition_x=bad)
    assert Design(material="In0.53Ga0.47As").semiconductor is SEMICONDUCTORS["In0.53Ga0.47As"]


# ---------------------------------------------------------------- offsets table
@pytest.mark.parametrize(("first", "second"), [("GaSb", "InAs"), ("GaAs", "InAs"),
                                               ("InSb", "GaAs"), ("GaSb", "InSb")])
@pytest.mark.parametrize("t", [0.0, 300.0])
def test_offsets_recomputed_from_the_table(first, second, t):
    """Ev = VBO, Ec = VBO + Eg(T) (VMR 2001 values typed above; VBO fixed with T)."""
    a, b = VMR[first], VMR[second]
    al = band_alignment(first, second, t)
    assert al.valence_offset_eV == pytest.approx(b[4] - a[4], abs=1e-12)
    assert al.conduction_offset_eV == pytest.approx(
        b[4] + varshni(*b[:3], t) - a[4] - varshni(*a[:3], t), abs=1e-12)


def test_gasb_inas_broken_gap():
    """GaSb/InAs broken gap: the GaSb valence maximum above the InAs conduction minimum
    by VBO(GaSb) - VBO(InAs) - Eg(InAs): 0.143 eV at 0 K (the ~0.15 eV overlap usually
    quoted for bulk InAs/GaSb, from memory) and 0.206 eV at 300 K with VMR's VBOs held
    fixed [derived]."""
    for t, expected in ((0.0, 0.143), (300.0, -0.03 + 0.59 - varshni(*VMR["InAs"][:3], 300.0))):
        al = band_alignment("GaSb", "InAs", t)
        print(f"GaSb/InAs at {t:g} K: overlap {al.overlap_eV:.4f} eV")
        assert al.kind == "broken gap (type III)"
        assert al.overlap_eV == pytest.approx(expected, abs=1e-9 if t else 1e-12)
    assert band_alignment("GaSb", "InAs", 300.0).overlap_eV == pytest.approx(0.206, abs=1e-3)


def test_alignment_kinds():
    """InAs inside GaAs's gap: straddling; InAs/AlSb: staggered (type II, the known
    InAs/AlSb alignment; from memory)."""
    assert band_alignment("GaAs", "InAs").kind == "straddling (type I)"
    assert band_alignment("InAs", ALSB).kind == "staggered (type II)"


def test_si_ge_offsets():
    """Ge maximum 0.53 eV above GaAs's (Kraut et al., Phys. Rev. Lett. 44, 1620 (1980));
    unstrained Ge/Si 0.54 eV between average valence bands (Van de Walle & Martin, Phys.
    Rev. B 34, 5621 (1986)) + spin-orbit thirds (Ge 0.29, Si 0.044 eV): all from memory."""
    assert band_alignment("GaAs", "Ge").valence_offset_eV == pytest.approx(0.53, abs=1e-12)
    assert band_alignment("Si", "Ge").valence_offset_eV == pytest.approx(
        0.54 + (0.29 - 0.044) / 3, abs=1e-12)
    sige = alloy_semiconductor("SiGe", 0.4)
    assert band_alignment("Si", sige).valence_offset_eV == pytest.approx(
        0.4 * (0.54 + (0.29 - 0.044) / 3), abs=1e-12)


# ---------------------------------------------------------------- end to end
@pytest.mark.parametrize(("family", "x", "binary"), [("InGaAs", 1.0, "InAs"), ("AlGaSb", 0.0, "GaSb"),
                                                     ("SiGe", 0.0, "Si"), ("SiGe", 1.0, "Ge")])
def test_endpoint_designs_give_the_binary_current(family, x, binary):
    """A design of an alloy at an endpoint composition solves to the same current as the
    binary's design, to round-off (endpoints equal the binaries, end to end)."""
    from sub60.physics import solve_bias

    alloy = solve_bias(Design(material=family, composition_x=x), 0.3, 0.3)
    plain = solve_bias(Design(material=binary), 0.3, 0.3)
    assert alloy.current_uA_per_um == pytest.approx(plain.current_uA_per_um, rel=1e-9, abs=1e-30)


@pytest.mark.parametrize("family", list(ALLOYS))
@pytest.mark.parametrize("x", [0.35, 0.7])
def test_alloy_designs_solve(family, x):
    """Every family at interior compositions gives a finite bias point (regression: no
    source; the solver's own finite-result check runs inside solve_bias)."""
    from sub60.physics import solve_bias

    bp = solve_bias(Design(material=family, composition_x=x), 0.3, 0.3)
    assert bp.current_uA_per_um >= 0.0

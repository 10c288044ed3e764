"""Tensor grids: graded axes and the layered y stack.

Checks are stated invariants of a finite-volume grid (node-centred control volumes, e.g.
Patankar, Numerical Heat Transfer and Fluid Flow, 1980, ch. 4 — from memory): the
control volumes tile the domain, required positions are nodes, the spacing follows the
requested grading.
"""

from __future__ import annotations

import numpy as np
import pytest

from sub60.physics.mesh import Mesh, graded_axis, layered_y_axis


@pytest.fixture(scope="module")
def axis():
    refine = [(20.0, 0.2, 5.0), (50.0, 0.25, 4.0)]
    return graded_axis(70.0, [20.0, 50.0, 18.5], refine, h_max_nm=2.0, growth=0.15), refine


def test_axis_ends_and_required_nodes(axis):
    x, _ = axis
    assert x[0] == 0.0 and x[-1] == 70.0
    assert np.all(np.diff(x) > 0)
    for p in (20.0, 50.0, 18.5):
        assert np.min(np.abs(x - p)) < 1e-12


def test_axis_spacing_follows_the_refinement(axis):
    """Inside each refinement zone the spacing is at most the requested one (one cell of
    slack where a zone meets a required node); nowhere above h_max; neighbouring cells
    differ by at most the growth rate, 15 % (+ rounding of whole cells, 10 %)."""
    x, refine = axis
    h = np.diff(x)
    mid = 0.5 * (x[1:] + x[:-1])
    for pos, spacing, half in refine:
        inside = np.abs(mid - pos) < half - 1.0
        assert np.all(h[inside] <= spacing * 1.05)
    assert h.max() <= 2.0 * 1.05
    ratio = np.maximum(h[1:] / h[:-1], h[:-1] / h[1:])
    assert ratio.max() <= 1.15 * 1.10


def test_control_volumes_tile_the_domain():
    """Sum of the x control volumes = length; semiconductor heights = body thickness."""
    layers = [(2.0, 22.0, False), (7.0, 15.15, True), (2.0, 22.0, False)]
    y, eps, semi, bounds = layered_y_axis(layers, [0.4, 0.5, 0.4])
    x = np.linspace(0.0, 10.0, 21)
    m = Mesh(x_nm=x, y_nm=y, cell_permittivity=eps, cell_semiconductor=semi)
    assert m.dx_nm.sum() == pytest.approx(10.0, rel=1e-14)
    assert m.dy_semiconductor_nm.sum() == pytest.approx(7.0, rel=1e-14)
    assert m.body_bounds_nm() == pytest.approx((2.0, 9.0), abs=1e-12)
    assert bounds == pytest.approx([0.0, 2.0, 9.0, 11.0])


def test_layer_interfaces_are_nodes_and_cells_carry_their_layer():
    layers = [(10.0, 3.9, False), (5.0, 15.15, True), (1.5, 9.0, False)]
    y, eps, semi, bounds = layered_y_axis(layers, [0.75, 0.5, 0.4], resolution=2.0)
    for b in bounds:
        assert np.min(np.abs(y - b)) < 1e-12
    centres = 0.5 * (y[1:] + y[:-1])
    expected = np.select([centres < 10.0, centres < 15.0], [3.9, 15.15], 9.0)
    np.testing.assert_array_equal(eps, expected)
    np.testing.assert_array_equal(semi, (centres > 10.0) & (centres < 15.0))
    m = Mesh(x_nm=np.array([0.0, 1.0]), y_nm=y, cell_permittivity=eps, cell_semiconductor=semi)
    # nodes touching the body: its interior and its two interfaces
    touching = (y >= 10.0 - 1e-12) & (y <= 15.0 + 1e-12)
    np.testing.assert_array_equal(m.node_semiconductor, touching)


def test_resolution_refines_the_stack():
    layers = [(2.0, 22.0, False), (7.0, 15.15, True), (2.0, 22.0, False)]
    coarse = layered_y_axis(layers, [0.4, 0.5, 0.4])[0]
    fine = layered_y_axis(layers, [0.4, 0.5, 0.4], resolution=2.0)[0]
    assert np.diff(fine).max() < np.diff(coarse).max()
    assert fine.size > coarse.size

"""Non-uniform tensor grids for the device cross-section.

x runs along transport (source, channel, drain), y across the layer stack. Materials
are uniform along x for each y layer (the dielectric covers the whole length; gates
and contacts are boundary conditions), so a layer stack in y plus an x axis describes
the structure; a heterojunction source adds a per-cell permittivity
(`Mesh.cell_permittivity_xy`). Nodes sit on every interface, junction and gate edge; spacing is fine
near the junctions and grows smoothly (at most by ``growth`` per cell) into the
contacts. Finite-volume control volumes are the half-cells around each node.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


def graded_axis(
    length_nm: float,
    required_nm: list[float],
    refine: list[tuple[float, float, float]],
    h_max_nm: float,
    growth: float = 0.25,
) -> np.ndarray:
    """Node positions on [0, length] with a smoothly varying spacing [nm].

    Parameters
    ----------
    length_nm : float
        axis length [nm].
    required_nm : list of float
        positions that must be nodes (interfaces, junctions, gate edges) [nm].
    refine : list of (position, spacing, half_width)
        spacing ``spacing`` [nm] within ``half_width`` [nm] of ``position``; outside,
        the target spacing grows linearly with distance at rate ``growth`` (so the
        ratio of neighbouring cells stays below ``1 + growth``).
    h_max_nm : float
        largest spacing [nm].

    Returns
    -------
    numpy.ndarray
        strictly increasing node positions including 0 and ``length_nm`` [nm].
    """
    pts = sorted({0.0, float(length_nm), *[float(p) for p in required_nm if 0 < p < length_nm]})
    fine = np.linspace(0.0, length_nm, 20001)
    h = np.full_like(fine, h_max_nm)
    for pos, spacing, half in refine:
        h = np.minimum(h, spacing + growth * np.maximum(0.0, np.abs(fine - pos) - half))
    # cumulative number of cells along the axis
    density = np.concatenate([[0.0], np.cumsum(0.5 * (1 / h[1:] + 1 / h[:-1]) * np.diff(fine))])
    nodes = [0.0]
    for a, b in zip(pts[:-1], pts[1:], strict=True):
        ca, cb = np.interp([a, b], fine, density)
        n = max(1, int(np.ceil(cb - ca - 1e-9)))
        targets = np.linspace(ca, cb, n + 1)[1:]
        seg = np.interp(targets, density, fine)
        seg[-1] = b
        nodes.extend(seg.tolist())
    return np.array(nodes)


@dataclass(frozen=True)
class Mesh:
    """Tensor grid with a y layer stack.

    Attributes
    ----------
    x_nm : (nx,) node positions along transport [nm].
    y_nm : (ny,) node positions across the stack [nm].
    cell_permittivity : (ny-1,) relative permittivity of each y cell [-].
    cell_semiconductor : (ny-1,) True where the y cell is semiconductor.
    cell_permittivity_xy : (nx-1, ny-1) relative permittivity of every cell [-], or None
        when it does not vary along x (then `cell_permittivity` holds it). Set for a
        heterojunction of two semiconductors of different permittivity.
    """

    x_nm: np.ndarray
    y_nm: np.ndarray
    cell_permittivity: np.ndarray
    cell_semiconductor: np.ndarray
    cell_permittivity_xy: np.ndarray | None = None

    @property
    def nx(self) -> int:
        return self.x_nm.size

    @property
    def ny(self) -> int:
        return self.y_nm.size

    @property
    def dx_nm(self) -> np.ndarray:
        """Control-volume width of each x node [nm]."""
        h = np.diff(self.x_nm)
        return 0.5 * (np.concatenate([[0.0], h]) + np.concatenate([h, [0.0]]))

    @property
    def dy_semiconductor_nm(self) -> np.ndarray:
        """Semiconductor part of each y node's control-volume height [nm]."""
        h = np.diff(self.y_nm) * self.cell_semiconductor
        return 0.5 * (np.concatenate([[0.0], h]) + np.concatenate([h, [0.0]]))

    @property
    def node_semiconductor(self) -> np.ndarray:
        """(ny,) True where a node touches semiconductor (interfaces included)."""
        return self.dy_semiconductor_nm > 0

    def body_bounds_nm(self) -> tuple[float, float]:
        """y extent of the semiconductor body [nm]."""
        semi = np.flatnonzero(self.cell_semiconductor)
        return float(self.y_nm[semi[0]]), float(self.y_nm[semi[-1] + 1])


def layered_y_axis(
    layers: list[tuple[float, float, bool]], spacing_nm: list[float], resolution: float = 1.0
) -> tuple[np.ndarray, np.ndarray, np.ndarray, list[float]]:
    """y axis through a stack of layers, refined at each interface.

    Parameters
    ----------
    layers : list of (thickness [nm], relative permittivity, is_semiconductor)
        bottom to top.
    spacing_nm : list of float
        target spacing in each layer near its interfaces [nm].
    resolution : float
        spacings are divided by this factor [-].

    Returns
    -------
    y_nm, cell_permittivity, cell_semiconductor, interfaces_nm
    """
    bounds = np.concatenate([[0.0], np.cumsum([t for t, _, _ in layers])])
    ys: list[float] = [0.0]
    for k, (t, _, _) in enumerate(layers):
        h = spacing_nm[k] / resolution
        local = graded_axis(t, [t / 2] if layers[k][2] else [],
                            [(0.0, h, 0.5 * t if layers[k][2] else 1.0),
                             (t, h, 0.5 * t if layers[k][2] else 1.0)],
                            h_max_nm=max(h, 4.0 * h if not layers[k][2] else h), growth=0.3)
        ys.extend((bounds[k] + local[1:]).tolist())
    y = np.array(ys)
    centres = 0.5 * (y[1:] + y[:-1])
    layer_of_cell = np.searchsorted(bounds, centres) - 1
    eps = np.array([layers[i][1] for i in layer_of_cell])
    semi = np.array([layers[i][2] for i in layer_of_cell])
    return y, eps, semi, bounds.tolist()

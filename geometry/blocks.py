"""Structured multi-block meshing: quadrilateral blocks filled by transfinite interpolation.

A :class:`Block` has four corners and four sides (south sw->se, east se->ne, north nw->ne,
west sw->nw); a side is straight unless a curve ``t -> (x, r)`` on [0, 1] is given. Nodes along
south/north follow the block's ``i`` :class:`Spacing`, along west/east its ``j`` spacing, and the
interior is the Coons patch (bilinearly blended transfinite interpolation, Gordon & Hall 1973).
Blocks are merged into one :class:`~geometry.mesh.Mesh`; coincident nodes are joined, so shared
sides must carry the same node distribution.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

import numpy as np
from scipy.optimize import brentq

from .mesh import Mesh, mesh_from_cells

Curve = Callable[[np.ndarray], np.ndarray]


@dataclass(frozen=True)
class Spacing:
    """Geometric node spacing of ``cells`` cells on [0, 1].

    One-sided (``both_ends=False``): ``ratio`` = last cell / first cell.
    Two-sided: cells grow geometrically from both ends toward the middle; ``ratio`` = middle / end cell.
    """

    cells: int
    ratio: float = 1.0
    both_ends: bool = False

    def __post_init__(self):
        if self.cells < 1:
            raise ValueError(f"a block side needs at least one cell, got {self.cells}")
        if self.ratio <= 0:
            raise ValueError(f"spacing ratio must be positive, got {self.ratio}")

    def points(self) -> np.ndarray:
        """Node parameters 0 = s_0 < ... < s_cells = 1."""
        if not self.both_ends:
            return _geometric(self.cells, self.ratio)
        half = self.cells // 2
        if self.cells % 2 == 0:
            left = _geometric(half, self.ratio, n_sizes=half)
            sizes = np.diff(left)
            sizes = np.concatenate([sizes, sizes[::-1]])
        else:
            q = self.ratio ** (1.0 / max(half, 1))
            sizes = q ** np.minimum(np.arange(self.cells), np.arange(self.cells)[::-1])
        s = np.concatenate([[0.0], np.cumsum(sizes)])
        return s / s[-1]

    @classmethod
    def from_first(cls, cells: int, length: float, first: float, both_ends: bool = False) -> "Spacing":
        """Spacing whose first cell (both end cells, if two-sided) is ``first`` long on a side of ``length``."""
        n = cells // 2 if both_ends else cells
        span = length / 2 if both_ends else length
        if first * n >= span:
            return cls(cells, 1.0, both_ends)
        # size ratio q between neighbours: first * (q^n - 1)/(q - 1) = span
        q = brentq(lambda q: first * (q**n - 1.0) / (q - 1.0) - span, 1.0 + 1e-12, 10.0)
        return cls(cells, q ** (n - 1), both_ends)


def _geometric(cells: int, ratio: float, n_sizes: int | None = None) -> np.ndarray:
    n = n_sizes or cells
    q = ratio ** (1.0 / (n - 1)) if n > 1 else 1.0
    sizes = q ** np.arange(n)
    s = np.concatenate([[0.0], np.cumsum(sizes)])
    return s / s[-1]


def straight(a, b) -> Curve:
    a, b = np.asarray(a, float), np.asarray(b, float)
    return lambda t: a[None, :] + np.asarray(t)[:, None] * (b - a)[None, :]


SIDES = ("south", "east", "north", "west")


@dataclass(frozen=True)
class Block:
    """A quadrilateral block. ``corners`` = (sw, se, ne, nw) as (x, r); ``patches`` names boundary sides."""

    corners: tuple
    i: Spacing
    j: Spacing
    patches: dict[str, str] = field(default_factory=dict)
    curves: dict[str, Curve] = field(default_factory=dict)

    def side_curve(self, side: str) -> Curve:
        sw, se, ne, nw = self.corners
        ends = {"south": (sw, se), "east": (se, ne), "north": (nw, ne), "west": (sw, nw)}[side]
        return self.curves.get(side) or straight(*ends)

    def node_grid(self) -> np.ndarray:
        """Nodes (ni+1, nj+1, 2) by transfinite interpolation."""
        s, t = self.i.points(), self.j.points()
        south, north = self.side_curve("south")(s), self.side_curve("north")(s)
        west, east = self.side_curve("west")(t), self.side_curve("east")(t)
        sw, se, ne, nw = (np.asarray(c, float) for c in self.corners)
        S, T = s[:, None, None], t[None, :, None]
        grid = ((1 - T) * south[:, None, :] + T * north[:, None, :]
                + (1 - S) * west[None, :, :] + S * east[None, :, :]
                - ((1 - S) * (1 - T) * sw + S * (1 - T) * se + S * T * ne + (1 - S) * T * nw))
        return grid


@dataclass(frozen=True, eq=False)
class GridBlock:
    """A block given directly by its node grid (ni+1, nj+1, 2), for node layouts TFI cannot give."""

    grid: np.ndarray

    @property
    def i(self) -> Spacing:
        return Spacing(self.grid.shape[0] - 1)

    @property
    def j(self) -> Spacing:
        return Spacing(self.grid.shape[1] - 1)

    def node_grid(self) -> np.ndarray:
        return self.grid


def merge_blocks(blocks: list[Block], tolerance: float = 1e-9) -> Mesh:
    """Join blocks into one mesh; nodes closer than ``tolerance`` x domain size are the same node."""
    grids = [b.node_grid() for b in blocks]
    all_nodes = np.concatenate([g.reshape(-1, 2) for g in grids])
    size = np.ptp(all_nodes, axis=0).max()
    snapped = np.round(all_nodes / (tolerance * size)).astype(np.int64)
    _, first_index, node_id = np.unique(snapped, axis=0, return_index=True, return_inverse=True)
    node_id = node_id.ravel()
    # Keep nodes in order of first appearance so the mesh does not depend on the rounding grid.
    order = np.argsort(first_index)
    rank = np.empty_like(order)
    rank[order] = np.arange(len(order))
    nodes = all_nodes[first_index[order]]
    node_id = rank[node_id]
    nodes[np.abs(nodes[:, 1]) < tolerance * size, 1] = 0.0  # exactly on the axis
    cells, edge_patch, offset = [], {}, 0
    for block, grid in zip(blocks, grids):
        ni, nj = grid.shape[0] - 1, grid.shape[1] - 1
        ids = node_id[offset:offset + grid.shape[0] * grid.shape[1]].reshape(ni + 1, nj + 1)
        offset += grid.shape[0] * grid.shape[1]
        cells.append(np.stack([ids[:-1, :-1], ids[1:, :-1], ids[1:, 1:], ids[:-1, 1:]], axis=2).reshape(-1, 4))
        side_nodes = {"south": ids[:, 0], "north": ids[:, -1], "west": ids[0, :], "east": ids[-1, :]}
        for side, name in block.patches.items():
            if side not in SIDES:
                raise ValueError(f"unknown block side {side!r}; use one of {SIDES}")
            line = side_nodes[side]
            for a, b in zip(line[:-1], line[1:]):
                edge_patch[(int(min(a, b)), int(max(a, b)))] = name
    return mesh_from_cells(nodes, np.concatenate(cells), edge_patch)

"""Meshes of pipes for verification: a straight pipe and a pipe with a smooth area change.

Patches: ``inlet`` (x = 0), ``outlet`` (x = length), ``wall`` (r = R(x)), ``axis`` (r = 0).
"""
from __future__ import annotations

import numpy as np

from .blocks import Block, Spacing, merge_blocks
from .mesh import Mesh


def straight_pipe(length: float, radius: float, axial_cells: int, radial_cells: int,
                  wall_ratio: float = 1.0, axial_ratio: float = 1.0, blocks: int = 1,
                  reverse_blocks: bool = False) -> Mesh:
    """A straight pipe split into ``blocks`` equal axial blocks.

    ``wall_ratio`` = (cell next to the axis) / (cell at the wall), so > 1 clusters cells at the wall.
    ``axial_ratio`` = last / first axial cell of each block.
    """
    return smooth_area_change(length, radius, radius, 0.0, length, axial_cells, radial_cells,
                              wall_ratio, axial_ratio, blocks, reverse_blocks)


def smooth_area_change(length: float, r_in: float, r_out: float, x_start: float, x_end: float,
                       axial_cells: int, radial_cells: int, wall_ratio: float = 1.0,
                       axial_ratio: float = 1.0, blocks: int = 1, reverse_blocks: bool = False) -> Mesh:
    """Pipe of radius ``r_in`` changing smoothly (half-cosine) to ``r_out`` between ``x_start`` and ``x_end``."""
    if axial_cells % blocks:
        raise ValueError("axial_cells must be a multiple of blocks")

    def wall_radius(x):
        xi = np.clip((x - x_start) / max(x_end - x_start, 1e-300), 0.0, 1.0)
        return r_in + (r_out - r_in) * 0.5 * (1.0 - np.cos(np.pi * xi))

    edges = np.linspace(0.0, length, blocks + 1)
    radial = Spacing(radial_cells, 1.0 / wall_ratio)
    result = []
    for k, (x0, x1) in enumerate(zip(edges[:-1], edges[1:])):
        def wall(t, x0=x0, x1=x1):
            x = x0 + np.asarray(t) * (x1 - x0)
            return np.column_stack([x, wall_radius(x)])

        patches = {"south": "axis", "north": "wall"}
        if k == 0:
            patches["west"] = "inlet"
        if k == blocks - 1:
            patches["east"] = "outlet"
        corners = ((x0, 0.0), (x1, 0.0), (x1, float(wall_radius(x1))), (x0, float(wall_radius(x0))))
        result.append(Block(corners, Spacing(axial_cells // blocks, axial_ratio), radial, patches,
                            curves={"north": wall}))
    if reverse_blocks:
        result.reverse()
    return merge_blocks(result)

"""Sampling cell fields along a straight line in the meridional plane (least-squares reconstructed)."""
from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree


def sample_line(solution, start, end, points: int = 200, fields=("u", "v")):
    """Sample fields at ``points`` evenly spaced positions from ``start`` to ``end`` (each (x, r), m).

    Returns (distance along the line, *field arrays). Values are the nearest cell's value plus its
    least-squares gradient times the offset (second-order reconstruction).
    """
    mesh = solution.problem.mesh
    start, end = np.asarray(start, float), np.asarray(end, float)
    t = np.linspace(0.0, 1.0, points)
    where = start[None, :] + t[:, None] * (end - start)[None, :]
    tree = cKDTree(mesh.cell_centre)
    _, cell = tree.query(where)
    offset = where - mesh.cell_centre[cell]
    gradients = solution.gradients()
    out = [t * np.linalg.norm(end - start)]
    for name in fields:
        value = getattr(solution.state, name)
        out.append(value[cell] + np.einsum("ij,ij->i", gradients[name][cell], offset))
    return tuple(out)

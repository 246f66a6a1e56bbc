"""Exact distance from each cell centre to the nearest wall face, and which face that is.

The walls are the straight faces of every patch whose name starts with ``wall``; the distance from a
point P to a face AB is the point-segment distance

    t = clip(((P - A)·(B - A)) / |B - A|², 0, 1),    d = |P - (A + t (B - A))|,

minimised over all wall faces (brute force: cells x wall faces, a few million operations for the
meshes of airbias). This is the distance in the meridional plane, which is the wall distance of the
axisymmetric body (the nearest wall point of a body of revolution lies in the same meridional plane).
The nearest face index lets the solver take y+ from that face's wall shear.
"""
from __future__ import annotations

import numpy as np

from .jit import jit
from .mesh import Mesh


@jit
def _nearest_segment(points, a, b, distance, nearest):
    """For each point, the distance to the nearest segment a[k]-b[k] and its index k (written into out arrays)."""
    for i in range(points.shape[0]):
        px, py = points[i, 0], points[i, 1]
        best, arg = np.inf, -1
        for k in range(a.shape[0]):
            ex, ey = b[k, 0] - a[k, 0], b[k, 1] - a[k, 1]
            wx, wy = px - a[k, 0], py - a[k, 1]
            t = (wx * ex + wy * ey) / (ex * ex + ey * ey)
            t = min(max(t, 0.0), 1.0)
            dx, dy = wx - t * ex, wy - t * ey
            d2 = dx * dx + dy * dy
            if d2 < best:
                best, arg = d2, k
        distance[i] = np.sqrt(best)
        nearest[i] = arg


def wall_faces(mesh: Mesh) -> np.ndarray:
    """Indices of all faces on patches whose name starts with ``wall``."""
    names = [p for p in mesh.patches if p.startswith("wall")]
    if not names:
        raise ValueError(f"wall distance: the mesh has no wall patch (patches: {', '.join(mesh.patches)})")
    return np.concatenate([mesh.patch_faces(p) for p in names])


def point_wall_distance(points: np.ndarray, segment_a: np.ndarray, segment_b: np.ndarray):
    """Distance (m) from each point (n, 2) to the nearest of the segments a[k]-b[k], and that index."""
    points = np.ascontiguousarray(points, dtype=float)
    a = np.ascontiguousarray(segment_a, dtype=float)
    b = np.ascontiguousarray(segment_b, dtype=float)
    distance = np.empty(len(points))
    nearest = np.empty(len(points), dtype=np.int64)
    _nearest_segment(points, a, b, distance, nearest)
    return distance, nearest


def wall_distance(mesh: Mesh) -> tuple[np.ndarray, np.ndarray]:
    """Per cell: distance (m) from the centre to the nearest wall face, and that face's index in the mesh."""
    faces = wall_faces(mesh)
    ends = mesh.nodes[mesh.face_nodes[faces]]
    distance, k = point_wall_distance(mesh.cell_centre, ends[:, 0], ends[:, 1])
    return distance, faces[k]

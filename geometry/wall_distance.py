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


# A wall corner counts as a sharp edge when the wall turns by at least this much there: the faces of a
# meshed curve (bell, round nose, cone) turn by a few degrees per node, a step or plate by 90
# [model choice, no source]. Only convex corners (the fluid wraps round the corner) shed a shear layer.
SHARP_EDGE_TURN_DEG = 45.0


def sharp_convex_edges(mesh: Mesh, min_turn_deg: float = SHARP_EDGE_TURN_DEG) -> tuple[np.ndarray, np.ndarray]:
    """Sharp convex wall corners and the direction the shear layer leaves each one.

    Returns (edge points (n, 2) in m, unit separation directions (n, 2)). The separation direction is the
    tangent of the upstream face pointing into the edge; upstream is the face whose tangent into the edge
    has the larger axial component, since every fixture draws its air toward +x (mouth to outlet).
    """
    faces = wall_faces(mesh)
    nodes = mesh.face_nodes[faces]
    # outward (out of the fluid) normal of every wall face: face normals point from the owner outward
    normal = mesh.face_normal[faces]
    points, directions = [], []
    flat = nodes.ravel()
    uniq, counts = np.unique(flat, return_counts=True)
    cos_limit = np.cos(np.radians(min_turn_deg))
    for node in uniq[counts == 2]:
        k1, k2 = np.flatnonzero((nodes == node).any(axis=1))
        corner = mesh.nodes[node]
        other = [mesh.nodes[nodes[k][nodes[k] != node][0]] for k in (k1, k2)]
        into = [(corner - o) / np.linalg.norm(corner - o) for o in other]   # tangent of each face into the edge
        # the wall turns by the angle between the incoming tangent of one face and the outgoing of the other
        if np.dot(into[0], -into[1]) > cos_limit:
            continue
        convex = np.dot(-into[1], normal[k1]) > 0.0   # face 2 leaves the corner out of face 1's fluid side
        if not convex:
            continue
        up = 0 if into[0][0] >= into[1][0] else 1
        points.append(corner)
        directions.append(into[up])
    return np.array(points, float).reshape(-1, 2), np.array(directions, float).reshape(-1, 2)


def shear_layer_distance(mesh: Mesh, edges: tuple[np.ndarray, np.ndarray], distance: np.ndarray) -> np.ndarray:
    """Per cell: distance (m) from the sharp convex edge that is the cell's nearest wall point; inf elsewhere.

    There the wall distance ``distance`` (per cell, m) measures the way to a corner, not to a wall, so a
    wall-distance mixing length is meaningless; the cells are the fan behind the edge, where the separated
    layer is a free mixing layer. Only the fan downstream counts: (P - E) . t >= 0 and (P - E) . x >= 0,
    t the separation direction (the still air ahead of a flanged mouth lies in its lip's fan too).
    """
    points, directions = edges
    out = np.full(mesh.n_cells, np.inf)
    # the nearest wall point is the edge itself when the edge is as near as the nearest wall face
    tolerance = 1e-9 * (1.0 + np.abs(mesh.cell_centre).max())
    for e, t in zip(points, directions):
        rel = mesh.cell_centre - e
        s = np.hypot(rel[:, 0], rel[:, 1])
        fan = (rel @ t >= 0.0) & (rel[:, 0] >= 0.0) & (s <= distance + tolerance)
        out = np.where(fan, np.minimum(out, s), out)
    return out

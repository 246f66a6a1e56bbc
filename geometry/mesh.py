"""Face-based 2D finite-volume mesh of the meridional plane (x axial, r radial >= 0).

The mesh owns geometry only. Axisymmetry lives in its metric, everything per radian:

* ``cell_area``   meridional area A of each quadrilateral (shoelace formula), m^2;
* ``cell_volume`` A * r_c, with r_c the radius of the area centroid: Pappus's theorem makes this the
  exact volume of revolution of the cell per radian, m^3/rad;
* ``face_area``   face length L * radius of its midpoint: Pappus again, the exact area of the cone
  frustum swept by a straight face, per radian, m^2/rad. Faces on the axis have zero area.

Data layout (n_c cells, n_f faces, internal faces first, then each boundary patch in turn):

* ``nodes`` (n_n, 2) [x, r]; ``cell_nodes`` (n_c, 4) counter-clockwise in the (x, r) plane;
* ``owner`` (n_f,), ``neighbour`` (n_f,) with -1 on boundary faces; ``n_internal`` faces have both;
* ``face_nodes`` (n_f, 2), ``face_centre`` (n_f, 2), ``face_normal`` (n_f, 2) unit, owner -> neighbour
  (outward on the boundary), ``face_length`` (n_f,);
* ``patches``: patch name -> ``slice`` into the face arrays (boundary faces only).
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True, eq=False)
class Mesh:
    nodes: np.ndarray
    cell_nodes: np.ndarray
    owner: np.ndarray
    neighbour: np.ndarray
    face_nodes: np.ndarray
    n_internal: int
    patches: dict[str, slice]
    cell_centre: np.ndarray = field(init=False)
    cell_area: np.ndarray = field(init=False)
    cell_volume: np.ndarray = field(init=False)
    face_centre: np.ndarray = field(init=False)
    face_normal: np.ndarray = field(init=False)
    face_length: np.ndarray = field(init=False)
    face_area: np.ndarray = field(init=False)

    def __post_init__(self):
        centre, area = _polygon_centroids(self.nodes, self.cell_nodes)
        if np.any(area <= 0.0):
            bad = int(np.argmin(area))
            raise ValueError(f"cell {bad} has non-positive area {area[bad]:.3e}: nodes not counter-clockwise")
        a, b = self.nodes[self.face_nodes[:, 0]], self.nodes[self.face_nodes[:, 1]]
        edge = b - a
        length = np.hypot(edge[:, 0], edge[:, 1])
        normal = np.column_stack([edge[:, 1], -edge[:, 0]]) / length[:, None]
        mid = 0.5 * (a + b)
        # Orient every normal from owner outward (the face-node order of a shared edge is arbitrary).
        flip = np.einsum("ij,ij->i", normal, mid - centre[self.owner]) < 0.0
        normal[flip] *= -1.0
        for name, value in (("cell_centre", centre), ("cell_area", area),
                            ("cell_volume", area * centre[:, 1]), ("face_centre", mid),
                            ("face_normal", normal), ("face_length", length),
                            ("face_area", length * mid[:, 1])):
            value.setflags(write=False)
            object.__setattr__(self, name, value)

    @property
    def n_cells(self) -> int:
        return len(self.cell_nodes)

    @property
    def n_faces(self) -> int:
        return len(self.owner)

    def patch_faces(self, name: str) -> np.ndarray:
        """Indices of the faces of one boundary patch."""
        if name not in self.patches:
            raise KeyError(f"no patch {name!r}; the mesh has {', '.join(self.patches)}")
        s = self.patches[name]
        return np.arange(s.start, s.stop)

    def quality(self) -> dict[str, float]:
        """Cells, worst non-orthogonality (deg), worst aspect ratio, cell-area range."""
        internal = slice(0, self.n_internal)
        d = self.cell_centre[self.neighbour[internal]] - self.cell_centre[self.owner[internal]]
        cosang = np.einsum("ij,ij->i", d, self.face_normal[internal]) / np.hypot(d[:, 0], d[:, 1])
        non_orth = np.degrees(np.arccos(np.clip(cosang, -1.0, 1.0)))
        quad = self.nodes[self.cell_nodes]
        sides = np.linalg.norm(np.roll(quad, -1, axis=1) - quad, axis=2)
        return {
            "cells": float(self.n_cells),
            "max_non_orthogonality_deg": float(non_orth.max()) if len(non_orth) else 0.0,
            "max_aspect_ratio": float((sides.max(axis=1) / sides.min(axis=1)).max()),
            "min_cell_area_m2": float(self.cell_area.min()),
            "max_cell_area_m2": float(self.cell_area.max()),
        }


def _polygon_centroids(nodes: np.ndarray, cells: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Area centroid and signed area of each polygon (shoelace)."""
    p = nodes[cells]
    q = np.roll(p, -1, axis=1)
    cross = p[:, :, 0] * q[:, :, 1] - q[:, :, 0] * p[:, :, 1]
    area = 0.5 * cross.sum(axis=1)
    cx = ((p[:, :, 0] + q[:, :, 0]) * cross).sum(axis=1) / (6.0 * area)
    cr = ((p[:, :, 1] + q[:, :, 1]) * cross).sum(axis=1) / (6.0 * area)
    return np.column_stack([cx, cr]), area


def mesh_from_cells(nodes: np.ndarray, cell_nodes: np.ndarray,
                    edge_patch: dict[tuple[int, int], str]) -> Mesh:
    """Build the face-based mesh from quads and the patch name of each boundary edge.

    ``edge_patch`` maps a sorted node pair to its patch name. Every boundary edge must be named;
    an edge shared by two cells must not be.
    """
    n_c = len(cell_nodes)
    edges = np.stack([cell_nodes, np.roll(cell_nodes, -1, axis=1)], axis=2).reshape(-1, 2)
    keys = np.sort(edges, axis=1)
    cell_of_edge = np.repeat(np.arange(n_c), 4)
    uniq, inverse, counts = np.unique(keys, axis=0, return_inverse=True, return_counts=True)
    inverse = inverse.ravel()
    if np.any(counts > 2):
        raise ValueError("an edge is shared by more than two cells: overlapping blocks")
    sorted_cells = cell_of_edge[np.argsort(inverse, kind="stable")]
    group_start = np.cumsum(counts) - counts
    first = sorted_cells[group_start]
    second = np.where(counts == 2, sorted_cells[np.minimum(group_start + 1, len(sorted_cells) - 1)], -1)
    internal = np.flatnonzero(second >= 0)
    boundary = np.flatnonzero(second < 0)
    names = []
    for e in boundary:
        key = (int(uniq[e, 0]), int(uniq[e, 1]))
        if key not in edge_patch:
            raise ValueError(f"boundary edge {key} at {nodes[list(key)].mean(axis=0)} has no patch: "
                             "unmatched block side")
        names.append(edge_patch[key])
    for e in internal:
        if (int(uniq[e, 0]), int(uniq[e, 1])) in edge_patch:
            raise ValueError(f"edge at {nodes[uniq[e]].mean(axis=0)} is named as a boundary but joins two cells")
    patch_order = list(dict.fromkeys(names))
    names = np.array(names, dtype=object)
    faces = [internal]
    patches = {}
    start = len(internal)
    for name in patch_order:
        sel = boundary[names == name]
        faces.append(sel)
        patches[name] = slice(start, start + len(sel))
        start += len(sel)
    faces = np.concatenate(faces)
    return Mesh(nodes=nodes, cell_nodes=cell_nodes, owner=first[faces].astype(np.int64),
                neighbour=second[faces].astype(np.int64), face_nodes=uniq[faces].astype(np.int64),
                n_internal=len(internal), patches=patches)

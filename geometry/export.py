"""VTK unstructured-grid output of a mesh and its cell fields (for ParaView and friends), via meshio.

Points are written in 3D as (x, r, 0): the meridional plane, axial coordinate first. Cells are quads.
Files are written atomically: to a temporary file in the same folder, then renamed into place, so a
reader never sees half a file.
"""
from __future__ import annotations

import os
import tempfile
from pathlib import Path

import meshio
import numpy as np

from .mesh import Mesh


def write_vtu(path, mesh: Mesh, cell_fields: dict[str, np.ndarray]) -> Path:
    """Write ``mesh`` and per-cell arrays (length n_cells, or (n_cells, k)) to ``path`` (.vtu)."""
    path = Path(path)
    data = {}
    for name, values in cell_fields.items():
        arr = np.asarray(values, dtype=float)
        if arr.shape[0] != mesh.n_cells:
            raise ValueError(f"write_vtu: field {name!r} has {arr.shape[0]} values for {mesh.n_cells} cells")
        data[name] = [arr]
    points = np.column_stack([mesh.nodes, np.zeros(len(mesh.nodes))])
    out = meshio.Mesh(points, [("quad", np.asarray(mesh.cell_nodes, dtype=np.int64))], cell_data=data)
    handle, tmp = tempfile.mkstemp(suffix=".vtu", prefix=f".{path.stem}-", dir=path.parent)
    os.close(handle)
    try:
        meshio.write(tmp, out, file_format="vtu")
        os.replace(tmp, path)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
    return path


def read_vtu(path) -> dict[str, np.ndarray]:
    """Cell fields of a .vtu file written by :func:`write_vtu` (name -> array)."""
    data = meshio.read(Path(path), file_format="vtu")
    return {name: np.asarray(blocks[0]) for name, blocks in data.cell_data.items()}

"""Picture of a fixture mesh: mesh lines, the fixture outline in a thick line, and a zoom on the mouth."""
from __future__ import annotations

import os
import tempfile
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
from matplotlib.collections import LineCollection  # noqa: E402


def plot_mesh(fixture_mesh, path, zoom_radii: float = 1.6) -> Path:
    """Write ``path`` (PNG): the whole domain (left) and the mouth region, ``zoom_radii`` mouth radii
    around the lip (right). Written to a temporary file in the same folder, then renamed into place."""
    path = Path(path)
    mesh = fixture_mesh.mesh
    segments = mesh.nodes[mesh.face_nodes]
    r0 = fixture_mesh.mouth_radius
    fig, axes = plt.subplots(1, 2, figsize=(13, 5.5), gridspec_kw={"width_ratios": [1.4, 1.0]})
    views = [(None, "whole domain"), ((-zoom_radii * r0, zoom_radii * r0, 0.0, 2 * zoom_radii * r0), "mouth")]
    for ax, (window, title) in zip(axes, views):
        ax.add_collection(LineCollection(segments, colors="0.35", linewidths=0.25))
        for line in (fixture_mesh.outline, fixture_mesh.hub_outline):
            if len(line):
                ax.plot(line[:, 0], line[:, 1], color="k", linewidth=2.2)
        ax.set_aspect("equal")
        if window is None:
            ax.autoscale_view()
        else:
            ax.set_xlim(window[0], window[1])
            ax.set_ylim(window[2], window[3])
        ax.set_xlabel("x (m)")
        ax.set_ylabel("r (m)")
        ax.set_title(f"{title} ({fixture_mesh.level}, {mesh.n_cells} cells)")
    fig.tight_layout()
    handle, tmp = tempfile.mkstemp(suffix=".png", prefix=f".{path.stem}-", dir=path.parent)
    os.close(handle)
    try:
        fig.savefig(tmp, dpi=150)
        os.replace(tmp, path)
    finally:
        plt.close(fig)
        if os.path.exists(tmp):
            os.unlink(tmp)
    return path

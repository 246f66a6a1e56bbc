"""Report figures as PNG bytes: rotor-plane profile, K against the reading, the flow field, the mesh.

Figures are drawn on ``matplotlib.figure.Figure`` objects rendered by the Agg canvas, never
through pyplot, so no global figure state or interactive backend is touched and each call is
independent. Lengths are shown in mm, velocities in m/s, flows in L/s.
"""
from __future__ import annotations

import io

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.collections import LineCollection
from matplotlib.figure import Figure
from matplotlib.tri import Triangulation
from scipy.interpolate import LinearNDInterpolator

from calib.profile import RotorPlaneProfile

MM = 1e3  # m -> mm for axis labels
DPI = 120
SIZE = (6.4, 4.0)  # inches
STREAM_GRID = 160  # regular-grid points along the longer side for streamlines


def _png(fig: Figure) -> bytes:
    FigureCanvasAgg(fig)
    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=DPI)
    return buffer.getvalue()


def profile_figure(profile: RotorPlaneProfile, label: str) -> bytes:
    """u(r) across the rotor plane beside the uniform profile of the same flux (its area mean)."""
    fig = Figure(figsize=SIZE, layout="constrained")
    ax = fig.subplots()
    r_mm = profile.r * MM
    ax.plot(r_mm, profile.u, color="tab:blue", label=f"{label}: axial u")
    if np.any(profile.v != 0.0):
        ax.plot(r_mm, profile.v, color="tab:green", lw=1.0, ls="--", label="radial v")
    ax.hlines(profile.area_mean, r_mm[0], r_mm[-1], color="black", ls=":",
              label=f"uniform, same flux ({profile.area_mean:.3g} m/s)")
    if profile.r_inner > 0.0:
        ax.axvspan(0.0, profile.r_inner * MM, color="0.85", label="hub")
    ax.set_xlim(0.0, r_mm[-1])
    ax.set_xlabel("radius r (mm)")
    ax.set_ylabel("velocity (m/s)")
    ax.set_title("Velocity across the rotor plane")
    ax.grid(alpha=0.3)
    ax.legend(fontsize="small")
    return _png(fig)


def _table_curve(table):
    rows = sorted(table.rows, key=lambda row: row.indicated_Ls)
    q = np.array([row.indicated_Ls for row in rows])
    k = np.array([row.K for row in rows])
    u95 = np.array([row.K_U95 for row in rows])
    return q, k, u95


def _k_axes(ax):
    ax.axhline(1.0, color="0.5", lw=0.8)
    ax.set_xlabel("indicated flow (L/s)")
    ax.set_ylabel("correction factor K = true / indicated (-)")
    ax.grid(alpha=0.3)


def k_figure(table) -> bytes:
    """K against the indicated flow (L/s) with the band K ± U95 (k = 2)."""
    fig = Figure(figsize=SIZE, layout="constrained")
    ax = fig.subplots()
    q, k, u95 = _table_curve(table)
    ax.fill_between(q, k - u95, k + u95, color="tab:blue", alpha=0.2, label="K ± U95 (k = 2)")
    ax.plot(q, k, "o-", color="tab:blue", label=f"K ({table.instrument_kind})")
    _k_axes(ax)
    ax.set_title("Correction factor against the reading")
    ax.legend(fontsize="small")
    return _png(fig)


def compare_figure(tables: dict) -> bytes:
    """K against the indicated flow for several fixtures (name -> CorrectionTable), overlaid."""
    if not tables:
        raise ValueError("compare_figure: give at least one table")
    fig = Figure(figsize=SIZE, layout="constrained")
    ax = fig.subplots()
    for name, table in tables.items():
        q, k, u95 = _table_curve(table)
        line, = ax.plot(q, k, "o-", label=str(name))
        ax.fill_between(q, k - u95, k + u95, color=line.get_color(), alpha=0.15)
    _k_axes(ax)
    ax.set_title("Correction factor by fixture (bands: U95)")
    ax.legend(fontsize="small")
    return _png(fig)


def _quad_triangulation(mesh, mirror: bool) -> tuple[Triangulation, np.ndarray]:
    """Triangulation of the quads (two triangles each) and the cell of each triangle."""
    quads = np.asarray(mesh.cell_nodes)
    triangles = np.vstack([quads[:, [0, 1, 2]], quads[:, [0, 2, 3]]])
    cell_of = np.concatenate([np.arange(len(quads))] * 2)
    x, r = mesh.nodes[:, 0], mesh.nodes[:, 1]
    if mirror:
        n = len(x)
        x, r = np.concatenate([x, x]), np.concatenate([r, -r])
        triangles = np.vstack([triangles, triangles + n])
        cell_of = np.concatenate([cell_of, cell_of])
    return Triangulation(x * MM, r * MM, triangles), cell_of


def stream_grid(mesh, u, v, *, mirror=False, zoom=None, points=STREAM_GRID):
    """u, v linearly interpolated from cell centres onto a regular grid, masked outside the domain.

    Returns (x, r, U, V) with x, r 1-D in m and U, V masked 2-D arrays (m/s) of shape (len(r), len(x)).
    Below the axis (mirror) the field is reflected: u(x, -r) = u(x, r), v(x, -r) = -v(x, r).
    """
    centre = np.asarray(mesh.cell_centre)
    x0, x1, r0, r1 = _extent(mesh, mirror, zoom)
    scale = max(x1 - x0, r1 - r0)
    x = np.linspace(x0, x1, max(int(points * (x1 - x0) / scale), 8))
    r = np.linspace(r0, r1, max(int(points * (r1 - r0) / scale), 8))
    X, Rg = np.meshgrid(x, r)
    interpolate = LinearNDInterpolator(centre, np.column_stack([u, v]))
    values = interpolate(X.ravel(), np.abs(Rg).ravel())
    U = values[:, 0].reshape(X.shape)
    V = values[:, 1].reshape(X.shape) * np.where(Rg < 0.0, -1.0, 1.0)
    triangulation, _ = _quad_triangulation(mesh, mirror=False)
    outside = triangulation.get_trifinder()(X * MM, np.abs(Rg) * MM) < 0
    outside |= ~np.isfinite(U) | ~np.isfinite(V)
    return x, r, np.ma.array(np.nan_to_num(U), mask=outside), np.ma.array(np.nan_to_num(V), mask=outside)


def _extent(mesh, mirror, zoom) -> tuple[float, float, float, float]:
    """(x_min, x_max, r_min, r_max) in m: the zoom box, else the mesh's bounding box."""
    if zoom is not None:
        x0, x1, r0, r1 = (float(z) for z in zoom)
        if not (x1 > x0 and r1 > r0):
            raise ValueError("zoom: give (x_min, x_max, r_min, r_max) in m with min < max")
        return x0, x1, r0, r1
    x, r = mesh.nodes[:, 0], mesh.nodes[:, 1]
    r_max = float(r.max())
    return float(x.min()), float(x.max()), -r_max if mirror else float(r.min()), r_max


def _draw_outline(ax, outline, mirror):
    if outline is None:
        return
    lines = [outline] if np.asarray(outline[0]).ndim == 1 else outline
    for line in lines:
        xy = np.asarray(line, dtype=float) * MM
        ax.plot(xy[:, 0], xy[:, 1], color="black", lw=1.5)
        if mirror:
            ax.plot(xy[:, 0], -xy[:, 1], color="black", lw=1.5)


def _frame(ax, mesh, mirror, zoom, title):
    x0, x1, r0, r1 = _extent(mesh, mirror, zoom)
    ax.set_xlim(x0 * MM, x1 * MM)
    ax.set_ylim(r0 * MM, r1 * MM)
    ax.set_aspect("equal")
    ax.set_xlabel("axial position x (mm)")
    ax.set_ylabel("radius r (mm)")
    ax.set_title(title)


def field_figure(mesh, u, v, outline=None, zoom=None, *, mirror=False) -> bytes:
    """Velocity magnitude per cell (flat colour on the quads) with streamlines.

    ``u``, ``v``: cell-centre axial and radial velocity (m/s), shape (n_cells,). ``outline``: one
    (n, 2) array or a list of them, [x, r] in m, drawn in black (the fixture walls). ``zoom``:
    (x_min, x_max, r_min, r_max) in m. ``mirror``: also draw the reflection below the axis.
    """
    u, v = np.asarray(u, dtype=float), np.asarray(v, dtype=float)
    if u.shape != (mesh.n_cells,) or v.shape != (mesh.n_cells,):
        raise ValueError(f"field_figure: u and v need one value per cell ({mesh.n_cells})")
    fig = Figure(figsize=(SIZE[0], SIZE[1] * (1.3 if mirror else 1.0)), layout="constrained")
    ax = fig.subplots()
    triangulation, cell_of = _quad_triangulation(mesh, mirror)
    speed = np.hypot(u, v)
    image = ax.tripcolor(triangulation, facecolors=speed[cell_of], cmap="viridis", shading="flat")
    fig.colorbar(image, ax=ax, label="velocity magnitude (m/s)", shrink=0.8)
    x, r, U, V = stream_grid(mesh, u, v, mirror=mirror, zoom=zoom)
    if np.count_nonzero(~np.ma.getmaskarray(U)) > 4 and np.any(np.hypot(U, V) > 0.0):
        ax.streamplot(x * MM, r * MM, U, V, color="white", linewidth=0.6, density=1.2,
                      arrowsize=0.7, broken_streamlines=True)
    _draw_outline(ax, outline, mirror)
    _frame(ax, mesh, mirror, zoom, "Velocity field (meridional plane)")
    return _png(fig)


def mesh_figure(mesh, outline=None, zoom=None) -> bytes:
    """The fixture outline and the mesh's cell edges in the meridional plane."""
    fig = Figure(figsize=SIZE, layout="constrained")
    ax = fig.subplots()
    segments = np.asarray(mesh.nodes)[np.asarray(mesh.face_nodes)] * MM
    ax.add_collection(LineCollection(segments, colors="0.35", linewidths=0.3))
    _draw_outline(ax, outline, False)
    _frame(ax, mesh, False, zoom, f"Fixture and mesh ({mesh.n_cells} cells)")
    return _png(fig)


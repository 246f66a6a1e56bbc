"""calib.figures: every figure renders to a PNG; the streamline grid is masked outside the domain.

PNG check: the eight-byte signature of the PNG specification (W3C / ISO/IEC 15948:2004, sec. 5.2)
and the IHDR image size. Interpolation check: linear interpolation reproduces a linear field
exactly (any linear interpolant is exact for degree-1 data; common practice, no source).
"""
import math
import struct

import numpy as np
import pytest

from calib.figures import (compare_figure, field_figure, k_figure, mesh_figure, profile_figure,
                           stream_grid)
from calib.instruments import AreaMeanInstrument, PointInstrument
from calib.profile import RotorPlaneProfile
from calib.table import PointResult, build_table
from geometry.mesh import mesh_from_cells

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
R = 0.05


def _png_size(data: bytes) -> tuple[int, int]:
    assert data[:8] == PNG_SIGNATURE
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def step_mesh(nx=24, nr=8, length=0.2, radius=R):
    """A pipe that narrows to half its radius half-way along: the quads of a grid minus a corner."""
    xs, rs = np.linspace(0.0, length, nx + 1), np.linspace(0.0, radius, nr + 1)
    node = lambda i, j: j * (nx + 1) + i  # noqa: E731
    nodes = np.array([[x, r] for r in rs for x in xs])
    cells = [[node(i, j), node(i + 1, j), node(i + 1, j + 1), node(i, j + 1)]
             for j in range(nr) for i in range(nx) if not (i >= nx // 2 and j >= nr // 2)]
    cells = np.array(cells)
    edges = {}
    for quad in cells:
        for a, b in zip(quad, np.roll(quad, -1)):
            key = (min(a, b), max(a, b))
            edges[key] = edges.get(key, 0) + 1
    edge_patch = {key: "wall" for key, count in edges.items() if count == 1}
    return mesh_from_cells(nodes, cells, edge_patch)


def _table(scale=1.0):
    area = math.pi * R ** 2
    points = []
    for q in (0.02, 0.04, 0.08):
        profile = RotorPlaneProfile.power_law(7.0, R, U_centre=q / area / 0.8167)
        points.append(PointResult(flow=q * scale, level="fine", cells=1000, iterations=10,
                                  converged=True, wall_s=0.1, pressure_drop_Pa=10.0, profile=profile))
    return build_table(points, PointInstrument(nominal_area=area), model_form_relative=0.01)


def test_profile_figure_is_png():
    profile = RotorPlaneProfile.power_law(7.0, R, U_centre=10.0)
    assert _png_size(profile_figure(profile, "1/7 law"))[0] > 300


def test_profile_figure_with_hub_and_swirl_free_radial_flow():
    r = np.linspace(0.015, R, 250)
    profile = RotorPlaneProfile(r=r, u=1.0 + r, v=0.1 * r, r_inner=0.015)
    assert _png_size(profile_figure(profile, "annulus"))[0] > 300


def test_k_and_compare_figures_are_png():
    assert _png_size(k_figure(_table()))[0] > 300
    assert _png_size(compare_figure({"cone": _table(), "box <2>": _table(1.05)}))[0] > 300
    with pytest.raises(ValueError):
        compare_figure({})


@pytest.mark.parametrize("mirror", [False, True])
def test_field_and_mesh_figures_are_png(mirror):
    mesh = step_mesh()
    x, r = mesh.cell_centre[:, 0], mesh.cell_centre[:, 1]
    u, v = 1.0 + 10.0 * x, -0.5 * r
    outline = np.array([[0.0, R], [0.1, R], [0.1, R / 2], [0.2, R / 2]])
    width, height = _png_size(field_figure(mesh, u, v, outline=outline, mirror=mirror))
    assert width > 300 and height > 200
    assert _png_size(field_figure(mesh, u, v, zoom=(0.05, 0.15, 0.0, R)))[0] > 300
    assert _png_size(mesh_figure(mesh, outline=[outline]))[0] > 300


def test_field_figure_refuses_wrong_sizes():
    mesh = step_mesh()
    with pytest.raises(ValueError, match="one value per cell"):
        field_figure(mesh, np.ones(3), np.ones(3))


def test_stream_grid_is_masked_outside_and_exact_for_linear_fields():
    """Inside the cell-centre hull a linear field is reproduced exactly; the removed corner is masked."""
    mesh = step_mesh()
    x, r = mesh.cell_centre[:, 0], mesh.cell_centre[:, 1]
    xg, rg, U, V = stream_grid(mesh, 1.0 + 10.0 * x, -0.5 * r, points=80)
    X, Rg = np.meshgrid(xg, rg)
    inside = ~np.ma.getmaskarray(U)
    assert np.any(inside)
    assert np.allclose(U[inside], 1.0 + 10.0 * X[inside], rtol=1e-12, atol=1e-12)
    assert np.allclose(V[inside], -0.5 * Rg[inside], rtol=1e-12, atol=1e-12)
    corner = (X > 0.1 + 1e-9) & (Rg > R / 2 + 1e-9)
    assert np.all(~inside[corner])


def test_stream_grid_mirror_reflects_v():
    mesh = step_mesh()
    x, r = mesh.cell_centre[:, 0], mesh.cell_centre[:, 1]
    xg, rg, U, V = stream_grid(mesh, 1.0 + 0.0 * x, r, mirror=True, points=60)
    X, Rg = np.meshgrid(xg, rg)
    inside = ~np.ma.getmaskarray(V)
    assert np.any(inside & (Rg < 0.0))
    assert np.allclose(V[inside], Rg[inside], atol=1e-12)  # v = r above, v(-r) = -v(r) below

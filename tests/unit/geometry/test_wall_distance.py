"""Wall distance against closed forms: a pipe (R - r), a flat plate (|x|), a circle (R - |p|)."""
import numpy as np
import pytest

from geometry.pipes import straight_pipe
from geometry.wall_distance import point_wall_distance, wall_distance


def test_pipe_distance_is_radius_minus_r():
    """Straight pipe: the nearest wall point of a cell centre is straight out, d = R - r (elementary)."""
    mesh = straight_pipe(0.5, 0.05, 20, 12, wall_ratio=5.0)
    d, face = wall_distance(mesh)
    assert np.allclose(d, 0.05 - mesh.cell_centre[:, 1], rtol=0, atol=1e-14)
    wall = mesh.patch_faces("wall")
    assert np.all(np.isin(face, wall))
    # the nearest face is the one straight above the centre
    assert np.all(np.abs(mesh.face_centre[face, 0] - mesh.cell_centre[:, 0]) <= 0.5 * 0.5 / 20 + 1e-12)


def test_flanged_plane_distance(rng):
    """Points in front of a plate x = 0, 0 <= r <= 1 (segments along it): d = |x| (elementary)."""
    r = np.linspace(0.0, 1.0, 41)
    a = np.column_stack([np.zeros(40), r[:-1]])
    b = np.column_stack([np.zeros(40), r[1:]])
    p = np.column_stack([-rng.uniform(0.0, 0.5, 200), rng.uniform(0.0, 1.0, 200)])
    d, k = point_wall_distance(p, a, b)
    assert np.allclose(d, -p[:, 0], atol=1e-15)
    assert np.all((r[k] <= p[:, 1] + 1e-12) & (p[:, 1] <= r[k + 1] + 1e-12))


def test_circle_arc_distance(rng):
    """Points inside a circle of radius R drawn by N chords: d = R - |p| within the sagitta R(1 - cos(π/N))."""
    radius, n = 0.2, 400
    theta = np.linspace(0.0, 2 * np.pi, n + 1)
    ring = radius * np.column_stack([np.cos(theta), np.sin(theta)])
    rho = rng.uniform(0.0, 0.9 * radius, 300)
    phi = rng.uniform(0.0, 2 * np.pi, 300)
    p = np.column_stack([rho * np.cos(phi), rho * np.sin(phi)])
    d, _ = point_wall_distance(p, ring[:-1], ring[1:])
    sagitta = radius * (1.0 - np.cos(np.pi / n))
    assert np.all(np.abs(d - (radius - rho)) <= sagitta + 1e-15)


def test_fixture_wall_distance_positive_and_below_duct_radius():
    from geometry.case import load_case
    from geometry.fixture import build_fixture_mesh
    from pathlib import Path
    case = load_case(Path(__file__).resolve().parents[3] / "cases" / "reducer_hub.toml")
    fm = build_fixture_mesh(case, "coarse")
    d, face = wall_distance(fm.mesh)
    assert np.all(d > 0.0)
    inside = fm.duct_radius > 0
    assert np.all(d[inside] <= fm.duct_radius[inside] + 1e-12)
    names = [p for p in fm.mesh.patches if p.startswith("wall")]
    assert set(names) >= {"wall", "wall-hub", "wall-flange"}

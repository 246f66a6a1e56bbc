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


def _fixture(segments, ambient):
    from geometry.case import parse_case
    from geometry.fixture import build_fixture_mesh
    data = {"title": "edges", "ambient": ambient, "segment": segments,
            "operating": {"flows_Ls": [10.0]}, "mesh": {"level": "coarse"}}
    return build_fixture_mesh(parse_case(data, ".")).mesh


def test_sharp_convex_edges_of_an_expansion_and_a_bell():
    """A flanged mouth and a step up have two convex 90-degree corners: the mouth lip, where the layer
    leaves the plate radially inward, and the step lip, where it leaves the bore axially; the step's
    inner corner is concave and a bell mouth has no sharp corner (elementary geometry). The shear-layer
    fan is the set of downstream cells whose nearest wall point is the edge."""
    from geometry.wall_distance import sharp_convex_edges, shear_layer_distance
    head = {"kind": "head", "diameter_mm": 50, "length_mm": 100, "rotor_at_mm": 50}
    mesh = _fixture([head, {"kind": "tube", "length_mm": 200}, {"kind": "step", "to_diameter_mm": 100},
                     {"kind": "tube", "length_mm": 300}], {"mouth": "flanged"})
    points, directions = sharp_convex_edges(mesh)
    order = np.argsort(points[:, 0])
    assert np.allclose(points[order], [[0.0, 0.025], [0.3, 0.025]], atol=1e-12)
    assert np.allclose(directions[order], [[0.0, -1.0], [1.0, 0.0]], atol=1e-12)
    distance, _ = wall_distance(mesh)
    s = shear_layer_distance(mesh, (points, directions), distance)
    c = mesh.cell_centre
    to_lip = np.hypot(c[:, 0] - 0.3, c[:, 1] - 0.025)
    # behind the step, inside the lip radius, the lip is the nearest wall point until the wide wall
    # (r = 0.05) or the step face is nearer (elementary geometry)
    fan = (c[:, 0] > 0.3) & (c[:, 1] < 0.025) & (to_lip < 0.05 - c[:, 1])
    assert np.allclose(s[fan], to_lip[fan])
    assert np.all(np.isinf(s[~fan & (c[:, 0] > 0.3)]))
    assert np.all(np.isinf(s[c[:, 0] < 0.3]))   # the mouth lip's fan is the still air ahead of the mouth
    bell = _fixture([head, {"kind": "tube", "length_mm": 200}], {"mouth": "bell", "bell_radius_mm": 7.5})
    assert len(sharp_convex_edges(bell)[0]) == 0

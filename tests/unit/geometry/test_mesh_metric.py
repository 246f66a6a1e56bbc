"""The axisymmetric metric against closed forms of elementary geometry (not the code's own formulas)."""
import numpy as np
import pytest

from geometry.blocks import Block, Spacing, merge_blocks
from geometry.pipes import straight_pipe


def frustum_block(r1=0.05, r2=0.02, h=0.1, reverse=False):
    a = Block(((0, 0), (h / 2, 0), (h / 2, (r1 + r2) / 2), (0, r1)), Spacing(7, 2.0), Spacing(5, 0.3),
              {"south": "axis", "north": "wall", "west": "inlet"})
    b = Block(((h / 2, 0), (h, 0), (h, r2), (h / 2, (r1 + r2) / 2)), Spacing(9), Spacing(5, 0.3),
              {"south": "axis", "north": "wall", "east": "outlet"})
    return merge_blocks([b, a] if reverse else [a, b])


@pytest.mark.parametrize("reverse", [False, True])
def test_frustum_volume_and_lateral_area(reverse):
    """V = pi h (R1^2 + R1 R2 + R2^2)/3; lateral area = pi (R1 + R2) s, s the slant height."""
    r1, r2, h = 0.05, 0.02, 0.1
    mesh = frustum_block(r1, r2, h, reverse)
    volume = 2 * np.pi * mesh.cell_volume.sum()
    assert volume == pytest.approx(np.pi * h * (r1**2 + r1 * r2 + r2**2) / 3, rel=1e-12)
    lateral = 2 * np.pi * mesh.face_area[mesh.patch_faces("wall")].sum()
    assert lateral == pytest.approx(np.pi * (r1 + r2) * np.hypot(h, r1 - r2), rel=1e-12)
    assert 2 * np.pi * mesh.face_area[mesh.patch_faces("inlet")].sum() == pytest.approx(np.pi * r1**2, rel=1e-12)


def test_axis_faces_have_no_area_and_normals_point_out():
    mesh = straight_pipe(0.2, 0.01, 10, 6, wall_ratio=3)
    assert np.all(mesh.face_area[mesh.patch_faces("axis")] == 0.0)
    assert np.allclose(mesh.face_normal[mesh.patch_faces("wall")], [0.0, 1.0])
    assert np.allclose(mesh.face_normal[mesh.patch_faces("inlet")], [-1.0, 0.0])
    # closed surface: sum of outward area vectors in x is zero for every cell
    net = np.zeros(mesh.n_cells)
    sx = mesh.face_area * mesh.face_normal[:, 0]
    np.add.at(net, mesh.owner, sx)
    np.add.at(net, mesh.neighbour[:mesh.n_internal], -sx[:mesh.n_internal])
    assert np.abs(net).max() < 1e-14


def test_spacing_ratios():
    s = Spacing(10, 8.0).points()
    sizes = np.diff(s)
    assert sizes[-1] / sizes[0] == pytest.approx(8.0)
    two = np.diff(Spacing(10, 4.0, both_ends=True).points())
    assert two[0] == pytest.approx(two[-1]) and two[4] / two[0] == pytest.approx(4.0)
    first = Spacing.from_first(20, 0.1, 1e-4)
    assert np.diff(first.points())[0] * 0.1 == pytest.approx(1e-4, rel=1e-6)


def test_unmatched_block_side_is_refused():
    a = Block(((0, 0), (1, 0), (1, 1), (0, 1)), Spacing(2), Spacing(2), {"south": "axis", "north": "wall", "west": "in"})
    with pytest.raises(ValueError, match="no patch"):
        merge_blocks([a])

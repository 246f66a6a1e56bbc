"""Traverse rules: shapes, ranges and refusals (published positions: tests/validation)."""
import numpy as np
import pytest

from calib.profile import RotorPlaneProfile
from calib.traverse import TRAVERSE_RULES, TraverseInstrument, chebyshev_nodes, traverse_radii


@pytest.mark.parametrize("rule", TRAVERSE_RULES)
@pytest.mark.parametrize("points", [3, 4])
def test_radii_ascending_inside_duct(rule, points):
    r = traverse_radii(rule, points, 0.2)
    assert r.shape == (points,) and np.all(np.diff(r) > 0) and 0 < r[0] and r[-1] < 0.2


@pytest.mark.parametrize("m", [1, 2, 3, 4, 5, 6, 7, 9])
def test_chebyshev_nodes_integrate_polynomials(m):
    """Equal-weight rule exact for x^k, k <= m: mean of x_i^k = (1/2) int_-1^1 x^k dx."""
    x = chebyshev_nodes(m)
    for k in range(m + 1):
        assert np.mean(x ** k) == pytest.approx(0.0 if k % 2 else 1.0 / (k + 1), abs=1e-10)


@pytest.mark.parametrize("rule, points", [("log-linear", 5), ("log-chebyshev", 9), ("simpson", 3),
                                           ("equal-area", 0)])
def test_refusals(rule, points):
    with pytest.raises(ValueError):
        traverse_radii(rule, points, 0.1)


def test_traverse_refuses_annulus():
    r = np.linspace(0.01, 0.05, 300)
    profile = RotorPlaneProfile(r=r, u=np.ones_like(r), v=0 * r, r_inner=0.01)
    with pytest.raises(ValueError, match="hub"):
        TraverseInstrument(1.0).indicated_velocity(profile)

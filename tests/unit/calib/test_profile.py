"""RotorPlaneProfile: input checks and exact integrals of the piecewise-linear profile."""
import math

import numpy as np
import pytest

from calib.profile import RotorPlaneProfile

R = 0.05


def _profile(u_of_r, v_of_r=lambda r: 0.0 * r, points=400, r_inner=0.0):
    r = np.linspace(r_inner, R, points)
    return RotorPlaneProfile(r=r, u=u_of_r(r), v=v_of_r(r), r_inner=r_inner)


@pytest.mark.parametrize("bad", [
    dict(r=np.linspace(0, R, 50), u=np.ones(50), v=np.zeros(50)),           # too few points
    dict(r=np.linspace(0, R, 300), u=np.ones(299), v=np.zeros(300)),        # shape mismatch
    dict(r=np.linspace(R, 0, 300), u=np.ones(300), v=np.zeros(300)),        # descending
    dict(r=np.linspace(0.01, R, 300), u=np.ones(300), v=np.zeros(300)),     # r[0] != r_inner
    dict(r=np.linspace(0, R, 300), u=np.full(300, np.nan), v=np.zeros(300)),
    dict(r=np.ones((300, 1)), u=np.ones(300), v=np.zeros(300)),
])
def test_refuses_bad_arrays(bad):
    with pytest.raises(ValueError, match="RotorPlaneProfile"):
        RotorPlaneProfile(**bad)


def test_arrays_are_read_only():
    p = _profile(lambda r: 1.0 + r)
    with pytest.raises(ValueError):
        p.u[0] = 3.0


def test_flux_exact_for_linear_profile_in_annulus():
    """u = a + b r on Ri..R: flux = 2 pi [a (R^2 - Ri^2)/2 + b (R^3 - Ri^3)/3] (closed form)."""
    a, b, ri = 3.0, -40.0, 0.012
    p = _profile(lambda r: a + b * r, r_inner=ri, points=200)
    exact = 2 * math.pi * (a * (R**2 - ri**2) / 2 + b * (R**3 - ri**3) / 3)
    assert p.flux == pytest.approx(exact, rel=1e-13)
    assert p.area == pytest.approx(math.pi * (R**2 - ri**2), rel=1e-15)
    # with a hub, the "centre" velocity is read at the equal-area radius of the annulus
    assert p.centre_velocity == pytest.approx(a + b * math.sqrt((ri**2 + R**2) / 2), rel=1e-12)


def test_uniform_flow_coefficients_are_one():
    p = _profile(lambda r: np.full_like(r, 4.2))
    assert p.area_mean == pytest.approx(4.2, rel=1e-14)
    for value in (p.flatness, p.momentum_coefficient, p.energy_coefficient):
        assert value == pytest.approx(1.0, rel=1e-13)


def test_poiseuille_coefficients():
    """Hagen-Poiseuille u = 2U(1 - r^2/R^2): U_max/U = 2, beta = 4/3, alpha = 2 (closed forms).

    The linear interpolant of a parabola on 400 stations is off by O(h^2) ~ 1e-6.
    """
    U = 1.5
    p = _profile(lambda r: 2 * U * (1 - (r / R) ** 2))
    assert p.area_mean == pytest.approx(U, rel=1e-5)
    assert p.flatness == pytest.approx(2.0, rel=1e-5)
    assert p.momentum_coefficient == pytest.approx(4 / 3, rel=1e-5)
    assert p.energy_coefficient == pytest.approx(2.0, rel=1e-5)


def test_energy_coefficient_carries_radial_velocity():
    """Uniform u = U, v = V: alpha = integral u (u^2 + v^2) dA / (U^3 A) = 1 + (V/U)^2."""
    p = _profile(lambda r: np.full_like(r, 2.0), lambda r: np.full_like(r, 0.5))
    assert p.energy_coefficient == pytest.approx(1.0 + 0.25**2, rel=1e-13)


def test_interpolate_and_its_range():
    p = _profile(lambda r: 1.0 + 10.0 * r, lambda r: -r)
    u, v = p.interpolate([0.0, 0.02, R])
    np.testing.assert_allclose(u, [1.0, 1.2, 1.5], rtol=1e-13)
    np.testing.assert_allclose(v, [0.0, -0.02, -R], rtol=1e-13)
    with pytest.raises(ValueError, match="outside"):
        p.interpolate([R * 1.01])


def test_zero_mean_refused_for_ratios():
    p = _profile(lambda r: np.cos(2 * math.pi * r / R) * 0.0)
    with pytest.raises(ValueError, match="area-mean velocity is zero"):
        _ = p.flatness


def test_power_law_constructor():
    p = RotorPlaneProfile.power_law(7, R, 3.0, points=300)
    assert p.r.size == 300 and p.r[0] == 0.0 and p.r[-1] == R
    assert p.centre_velocity == 3.0 and p.u[-1] == 0.0
    assert np.all(np.diff(p.u) <= 0.0)

"""Unit checks of the 1-D developed-pipe solver: Poiseuille limit, grid, Re_D, interfaces, speed."""
import time

import numpy as np
import pytest

from solver.mixing_length import MixingLengthConstants
from solver.pipe1d import developed_pipe, developed_pipe_re_tau, model_form_deviation


@pytest.mark.parametrize("re_d", [10.0, 500.0, 2000.0])
def test_laminar_is_hagen_poiseuille(re_d):
    """Hagen–Poiseuille (analytic): u = 2 U_b (1 − r²/R²), U_c = 2 U_b, λ = 64/Re."""
    d, nu = 0.05, 1.5e-5
    p = developed_pipe(re_d, D=d, nu=nu, laminar=True)
    u_b = re_d * nu / d
    assert p.bulk_velocity == pytest.approx(u_b, rel=1e-12)
    np.testing.assert_allclose(p.u, 2.0 * u_b * (1.0 - (p.r / (0.5 * d)) ** 2), rtol=1e-11, atol=1e-14 * u_b)
    assert p.centre_velocity == pytest.approx(2.0 * u_b, rel=1e-12)
    assert p.friction_factor == pytest.approx(64.0 / re_d, rel=1e-12)


@pytest.mark.parametrize("re_d", [1e4, 1e5, 1e6])
def test_bulk_reynolds_number_is_met_and_wall_is_resolved(re_d):
    d, nu = 0.2, 1.5e-5
    p = developed_pipe(re_d, D=d, nu=nu)
    assert p.bulk_velocity * d / nu == pytest.approx(re_d, rel=1e-10)
    assert p.re_d == pytest.approx(re_d, rel=1e-10)
    assert p.r[0] == 0.0 and p.r[-1] == pytest.approx(0.1) and p.u[-1] == 0.0
    y_plus_first = np.sort(p.y_plus)[1]
    assert 0.0 < y_plus_first <= 0.1
    assert 400 <= p.r.size <= 1000
    assert np.all(np.diff(p.u) <= 0.0)  # velocity falls monotonically from axis to wall
    assert p.friction_factor == pytest.approx(8.0 * (p.u_tau / p.bulk_velocity) ** 2, rel=1e-12)


def test_grid_convergence_of_friction_and_ratio():
    """Simpson quadrature on the graded grid: halving the spacing changes λ and U_b/U_c by < 2e-5."""
    coarse, fine = developed_pipe(1e6, points=401), developed_pipe(1e6, points=3201)
    assert coarse.friction_factor == pytest.approx(fine.friction_factor, rel=2e-5)
    ratio = lambda p: p.bulk_velocity / p.centre_velocity  # noqa: E731
    assert ratio(coarse) == pytest.approx(ratio(fine), rel=5e-5)
    assert ratio(developed_pipe(1e6)) == pytest.approx(ratio(fine), rel=2e-5)


def test_re_tau_entry_agrees_with_re_d_entry():
    p = developed_pipe(5e4)
    q = developed_pipe_re_tau(p.re_tau)
    assert q.re_d == pytest.approx(5e4, rel=1e-6)


def test_profile_at_and_scaled():
    p = developed_pipe(1e5, D=0.3, nu=1.5e-5)
    assert p.profile_at(0.0) == pytest.approx(p.centre_velocity)
    assert p.profile_at(0.15) == pytest.approx(0.0, abs=1e-12)
    with pytest.raises(ValueError, match="r must lie"):
        p.profile_at(0.2)
    s = p.scaled(2.0 * p.bulk_velocity)
    assert s.friction_factor == p.friction_factor and s.re_d == p.re_d
    assert s.centre_velocity == pytest.approx(2.0 * p.centre_velocity)
    assert s.tau_w_over_rho == pytest.approx(4.0 * p.tau_w_over_rho)
    assert s.bulk_velocity * s.diameter / s.nu == pytest.approx(p.re_d, rel=1e-12)


def test_damping_constant_acts_in_the_expected_direction():
    """Larger A+ thickens the viscous layer: less momentum transfer, lower λ (physical direction)."""
    base = developed_pipe(1e5).friction_factor
    thick = developed_pipe(1e5, constants=MixingLengthConstants(a_plus=27.0)).friction_factor
    assert thick < base


@pytest.mark.parametrize("bad", [0.0, -1e4, float("nan"), float("inf")])
def test_refuses_bad_reynolds(bad):
    with pytest.raises(ValueError, match="Re_D"):
        developed_pipe(bad)


def test_speed():
    developed_pipe(2e5)
    start = time.perf_counter()
    for re_d in (1e4, 1e5, 1e6):
        developed_pipe(re_d)
    assert (time.perf_counter() - start) / 3 < 0.05


def test_model_form_deviation_points():
    points = model_form_deviation()
    assert {p.quantity for p in points} == {"bulk_to_centre", "friction_factor"}
    assert all(np.isfinite(p.deviation) and p.source for p in points)

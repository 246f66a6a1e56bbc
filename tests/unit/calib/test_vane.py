"""Vane rotor model: uniform-flow calibration, reversed flow, friction, continuity of the model."""
import math

import numpy as np
import pytest
from scipy.integrate import quad

from calib.profile import RotorPlaneProfile
from calib.vane import CD90_FLAT_PLATE, FlatPlateBlade, VaneAnemometer

GEOMETRY = dict(nominal_area=78.5e-4, tip_diameter=0.096, hub_diameter=0.030, blades=8, pitch=0.150,
                chord=0.012, air_density=1.2)
CERTIFICATE = ((1.0, 1.03), (5.0, 5.01), (20.0, 19.9))  # (indicated, true), m/s
FRICTION = 2e-5  # N m
SPEEDS = (0.8, 1.0, 2.0, 5.0, 12.0, 30.0)


def _uniform(U, R=0.048):
    r = np.linspace(0.0, R, 300)
    return RotorPlaneProfile(r=r, u=np.full_like(r, U), v=np.zeros_like(r))


@pytest.mark.parametrize("friction", [0.0, FRICTION])
@pytest.mark.parametrize("U", SPEEDS)
def test_uniform_flow_reads_true(U, friction):
    vane = VaneAnemometer(**GEOMETRY, friction_torque=friction)
    state = vane.solve(_uniform(U))
    assert state.turning
    assert state.indicated == pytest.approx(U, rel=1e-9)


@pytest.mark.parametrize("U", SPEEDS)
def test_uniform_flow_with_certificate_shows_certificate(U):
    """At true uniform speed U the display shows the certificate's indicated value for U."""
    vane = VaneAnemometer(**GEOMETRY, certificate=CERTIFICATE, friction_torque=FRICTION)
    indicated, true = np.array(CERTIFICATE).T
    if U > true[-1]:
        expected = indicated[-1] + (U - true[-1]) * (indicated[-1] - indicated[-2]) / (true[-1] - true[-2])
    elif U < true[0]:
        expected = indicated[0] + (U - true[0]) * (indicated[1] - indicated[0]) / (true[1] - true[0])
    else:
        expected = np.interp(U, true, indicated)
    assert vane.indicated_velocity(_uniform(U)) == pytest.approx(expected, rel=1e-9)


def test_frictionless_rotor_speed_is_linear_in_speed():
    """Without friction the torque scales as U^2 f(omega/U), so omega/U is the same at every U."""
    vane = VaneAnemometer(**GEOMETRY)
    ratios = [vane.uniform_rotor_speed(U) / U for U in SPEEDS]
    np.testing.assert_allclose(ratios, ratios[0], rtol=1e-10)
    # slip: the rotor turns a little slower than the zero-slip helix 2 pi U / P (drag)
    assert 0.95 < ratios[0] * GEOMETRY["pitch"] / (2 * math.pi) < 1.0


def test_reverse_uniform_flow_reads_negative():
    vane = VaneAnemometer(**GEOMETRY)
    state = vane.solve(_uniform(-4.0))
    assert state.omega < 0.0 and state.indicated == pytest.approx(-4.0, rel=1e-9)


def test_lift_drag_continuous_and_periodic_over_all_incidence():
    """C_L, C_D continuous on [-pi, pi]: the largest step shrinks in proportion to the grid step."""
    blade = FlatPlateBlade()

    def coefficients(alpha):
        return np.array([blade.coefficients(a)[:2] for a in alpha])

    coarse = coefficients(np.linspace(-math.pi, math.pi, 20001))
    fine = coefficients(np.linspace(-math.pi, math.pi, 40001))
    jump_coarse = np.max(np.abs(np.diff(coarse, axis=0)))
    jump_fine = np.max(np.abs(np.diff(fine, axis=0)))
    assert jump_fine < 0.6 * jump_coarse and jump_coarse < 5e-3
    np.testing.assert_allclose(coarse[0], coarse[-1], atol=1e-12)
    # small incidence: thin-aerofoil slope 2 pi (Glauert 1926); broadside: flat plate C_D,90
    assert blade.coefficients(1e-4)[0] / 1e-4 == pytest.approx(2 * math.pi, rel=1e-3)
    assert blade.coefficients(math.pi / 2)[1] == pytest.approx(blade.cd0 + CD90_FLAT_PLATE, rel=1e-12)


def _reversed_ring_profile(R=0.048, U=5.0):
    """u = U (1 - (r / 0.85R)^4): reversed flow outside r = 0.85 R (down to -0.92 U at the wall)."""
    r = np.linspace(0.0, R, 400)
    return RotorPlaneProfile(r=r, u=U * (1.0 - (r / (0.85 * R)) ** 4), v=np.zeros_like(r))


def test_reversed_ring_converges_and_reads_sensibly():
    """The stalled outer blades in reversed flow brake the rotor: it reads below the area mean.

    The vane weights outer radii heavily (torque arm), and there the flow runs backward, so the
    reading falls below the area mean, but stays positive and below the centre-line speed.
    """
    profile = _reversed_ring_profile()
    vane = VaneAnemometer(**GEOMETRY, friction_torque=FRICTION)
    state = vane.solve(profile)
    assert state.turning and math.isfinite(state.indicated)
    assert 0.0 < state.indicated < profile.area_mean < profile.centre_velocity
    # measured: 1.776 m/s against an area mean of 1.807 m/s (1.7 % low)
    assert abs(vane.aerodynamic_torque(profile, state.omega) - FRICTION) < 1e-12


def test_torque_continuous_in_rotor_speed_with_reversed_ring():
    profile = _reversed_ring_profile()
    vane = VaneAnemometer(**GEOMETRY)
    top = 3.0 * vane.rotor_speed(profile)

    def largest_step(n):
        torque = np.array([vane.aerodynamic_torque(profile, w) for w in np.linspace(0.0, top, n)])
        return np.max(np.abs(np.diff(torque))), np.ptp(torque)

    coarse, spread = largest_step(2001)
    fine, _ = largest_step(4001)
    assert fine < 0.6 * coarse and coarse < 2e-3 * spread


def test_friction_slows_rotor_most_at_low_speed():
    """Coulomb friction takes a fixed torque, so its share of the drive grows as U falls."""
    free = VaneAnemometer(**GEOMETRY)
    braked = VaneAnemometer(**GEOMETRY, friction_torque=FRICTION)
    shortfall = [1.0 - braked.uniform_rotor_speed(U) / free.uniform_rotor_speed(U) for U in SPEEDS]
    assert all(s > 0.0 for s in shortfall)
    assert all(a > b for a, b in zip(shortfall, shortfall[1:]))


def test_friction_start_threshold_matches_flat_plate_normal_force():
    """Starting speed from the torque on the stopped rotor, flat plate in deep stall.

    At omega = 0 every section meets the axial stream at alpha = 90 deg - theta(r) (well past
    stall for this pitch), where the flat plate carries only a normal force
    N = C_D,90 sin(alpha) q c (Hoerner 1965, Fluid-Dynamic Drag - from memory) whose tangential
    part is N cos(alpha). Q_0 = B rho U^2/2 c C_D,90 int sin(alpha) cos(alpha) r dr, and the rotor
    starts where Q_0 = Q_f. Below it: no rotation and a zero reading; above: it turns.
    """
    g = GEOMETRY

    def section(r):
        alpha = math.pi / 2 - math.atan2(g["pitch"], 2 * math.pi * r)
        return math.sin(alpha) * math.cos(alpha) * r

    integral, _ = quad(section, g["hub_diameter"] / 2, g["tip_diameter"] / 2)
    q0 = g["blades"] * 0.5 * g["air_density"] * g["chord"] * CD90_FLAT_PLATE * integral
    U_start = math.sqrt(FRICTION / q0)
    vane = VaneAnemometer(**g, friction_torque=FRICTION)
    below = vane.solve(_uniform(0.999 * U_start))
    above = vane.solve(_uniform(1.001 * U_start))
    assert not below.turning and below.indicated == 0.0 and below.omega == 0.0
    assert above.turning and above.indicated == pytest.approx(1.001 * U_start, rel=1e-9)


def test_profile_must_cover_rotor():
    vane = VaneAnemometer(**GEOMETRY)
    with pytest.raises(ValueError, match="outside the rotor-plane profile"):
        vane.solve(_uniform(3.0, R=0.040))


def test_blade_roots_inside_a_hub_see_still_air():
    """A rotor hub 1 mm smaller than the fixture's hub: the root stations lie on the hub body (u = 0)."""
    vane = VaneAnemometer(**GEOMETRY)
    r_hub = GEOMETRY["hub_diameter"] / 2 + 1e-3
    r = np.linspace(r_hub, 0.05, 400)
    annulus = RotorPlaneProfile(r, np.full_like(r, 3.0), np.zeros_like(r), r_inner=r_hub)
    roots = vane._station_velocities(annulus)[0][vane.stations[0] < r_hub]
    assert len(roots) > 0 and np.all(roots == 0.0)
    assert 0.0 < vane.indicated_velocity(annulus) < 3.0

"""Vane rotor vs linearised blade-element theory (Glauert's strip theory, thin-aerofoil lift).

Sources: H. Glauert, "Airplane Propellers", in W. F. Durand (ed.), Aerodynamic Theory, vol. IV,
div. L (1935): blade-element (strip) theory; H. Glauert, The Elements of Aerofoil and Airscrew
Theory (1926): thin-aerofoil lift C_L = 2 pi alpha. Both from memory as to chapter numbers.

Derivation (frictionless, no profile drag, small incidence). A section at radius r sees
W^2 = u^2 + (omega r)^2 at inflow angle phi, tan(phi) = u/(omega r); alpha = phi - theta is
small so C_L = 2 pi sin(alpha) to first order. Its torque per unit span is
1/2 rho c W^2 C_L sin(phi) r = pi rho c r W^2 sin(phi - theta) sin(phi), and with W sin(phi) = u,
W cos(phi) = omega r: = pi rho c r u (u cos(theta) - omega r sin(theta)). Zero net torque gives

    omega = int c r u^2 cos(theta) dr / int c r^2 u sin(theta) dr.

In uniform flow U this is omega = 2 pi U / P (tan(theta) = P/(2 pi r)), so the indicated uniform
speed is U_eq = omega P / (2 pi). The test integrates these with quad on the analytic power law.
"""
import math

import pytest
from scipy.integrate import quad

from calib.profile import RotorPlaneProfile
from calib.vane import FlatPlateBlade, VaneAnemometer

R_PIPE = 0.08  # m; rotor tip at 0.6 R keeps |alpha| < 1.5 deg, the small-incidence limit
U_C = 5.0


@pytest.mark.parametrize("n", [7, 10])
def test_power_law_reading_matches_linear_theory(n):
    vane = VaneAnemometer(nominal_area=1.0, tip_diameter=0.096, hub_diameter=0.030, blades=8, pitch=0.150,
                          chord=0.012, blade=FlatPlateBlade(cd0=0.0))
    profile = RotorPlaneProfile.power_law(n, R_PIPE, U_C, points=2000)

    def u(r):
        return U_C * (1 - r / R_PIPE) ** (1 / n)

    def theta(r):
        return math.atan2(vane.pitch, 2 * math.pi * r)

    a, b = vane.hub_diameter / 2, vane.tip_diameter / 2
    num = quad(lambda r: r * u(r) ** 2 * math.cos(theta(r)), a, b)[0]
    den = quad(lambda r: r * r * u(r) * math.sin(theta(r)), a, b)[0]
    U_eq_theory = vane.pitch / (2 * math.pi) * num / den
    state = vane.solve(profile)
    assert state.indicated == pytest.approx(U_eq_theory, rel=5e-3)
    # measured: relative difference 1.5e-6 (n = 7)


def test_uniform_linear_theory_is_zero_slip():
    """Linear theory, uniform U: omega = 2 pi U / P. The model's frictionless rotor with no profile
    drag and small incidence turns at this speed (the flat plate's lift vanishes at alpha = 0)."""
    vane = VaneAnemometer(nominal_area=1.0, tip_diameter=0.096, hub_diameter=0.030, blades=8, pitch=0.150,
                          chord=0.012, blade=FlatPlateBlade(cd0=0.0))
    assert vane.uniform_rotor_speed(3.0) == pytest.approx(2 * math.pi * 3.0 / 0.150, rel=1e-9)

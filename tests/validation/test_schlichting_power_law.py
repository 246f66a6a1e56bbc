"""Power-law pipe profile u/U_c = (1 - r/R)^(1/n): mean/centre ratio and instrument factors K.

Source: H. Schlichting, Boundary-Layer Theory, 7th ed. (McGraw-Hill 1979), ch. XX, Table 20.1
(Nikuradse 1932 smooth-pipe data): U_b/U_c = 2n^2/((n+1)(2n+1)) with the table's column values.
The K checks integrate the analytic power law with scipy.integrate.quad, independently of the
profile class's piecewise-linear quadrature.
"""
import math

import numpy as np
import pytest
from scipy.integrate import quad

from calib.instruments import build_instrument
from calib.profile import RotorPlaneProfile
from calib.vane import FlatPlateBlade, VaneAnemometer

R = 0.08  # m
U_C = 5.0  # m/s


def mean_over_centre(n):
    """Schlichting ch. XX: U_b/U_c = 2 n^2 / ((n + 1)(2 n + 1))."""
    return 2 * n * n / ((n + 1) * (2 * n + 1))


@pytest.mark.parametrize("n", [6, 7, 8.8, 10])
def test_mean_over_centre_formula(n):
    p = RotorPlaneProfile.power_law(n, R, U_C)
    assert p.area_mean / p.centre_velocity == pytest.approx(mean_over_centre(n), abs=1e-4)
    # measured: |error| < 2.3e-6 for all four exponents (400 stations clustered to the wall)


# n = 10: the formula gives 200/231 = 0.86580, which rounds to 0.866, not the table's 0.865
# (difference 8e-4). Kept as a strict xfail so the disagreement stays visible.
TABLE_20_1 = [(6.0, 0.791), (6.6, 0.807), (7.0, 0.817), (8.8, 0.850),
              pytest.param(10.0, 0.865, marks=pytest.mark.xfail(
                  strict=True, reason="Table 20.1 prints 0.865; 2n^2/((n+1)(2n+1)) = 0.8658 -> 0.866"))]


@pytest.mark.parametrize("n, table", TABLE_20_1)
def test_schlichting_table_20_1(n, table):
    """Schlichting Table 20.1 U_b/U_c to 3 d.p. (end columns verified, middle from memory)."""
    p = RotorPlaneProfile.power_law(n, R, U_C)
    assert round(p.area_mean / p.centre_velocity, 3) == pytest.approx(table, abs=1e-12)


def _u(r, n=7):
    return U_C * (1.0 - r / R) ** (1.0 / n)


def _true_flow(n=7):
    return 2 * math.pi * quad(lambda r: _u(r, n) * r, 0, R, limit=200)[0]


PIPE_AREA = math.pi * R * R


def _build(table, tmp_path):
    return build_instrument(table, head_free_area=PIPE_AREA, base_dir=tmp_path, air_density=1.2)


def _check_K(instrument, expected_indicated):
    profile = RotorPlaneProfile.power_law(7, R, U_C, points=2000)
    K_model = profile.flux / instrument.indicated_flow(profile)
    K_direct = _true_flow() / (expected_indicated * PIPE_AREA)
    return K_model, K_direct


def test_K_area_mean(tmp_path):
    K_model, K_direct = _check_K(_build(None, tmp_path), _true_flow() / PIPE_AREA)
    assert K_model == pytest.approx(K_direct, rel=1e-6) and K_direct == pytest.approx(1.0, rel=1e-12)


@pytest.mark.parametrize("at_r_mm", [0.0, 40.0, 60.6])
def test_K_point(at_r_mm, tmp_path):
    inst = _build({"kind": "point", "at_r_mm": at_r_mm}, tmp_path)
    K_model, K_direct = _check_K(inst, _u(at_r_mm * 1e-3))
    assert K_model == pytest.approx(K_direct, rel=1e-5)
    if at_r_mm == 0.0:  # the centre-line probe: K = U_b/U_c of Schlichting's formula
        assert K_direct == pytest.approx(mean_over_centre(7), rel=1e-9)


@pytest.mark.parametrize("rule, points, y_over_d", [
    ("log-chebyshev", 3, (0.032, 0.137, 0.312)),    # ISO 5802:2001 Table 2 positions
    ("log-linear", 4, (0.021, 0.117, 0.184, 0.345)),
    ("equal-area", 3, None),
])
def test_K_traverse(rule, points, y_over_d, tmp_path):
    inst = _build({"kind": "traverse", "rule": rule, "points": points}, tmp_path)
    if y_over_d is None:
        radii = R * np.sqrt((2 * np.arange(1, points + 1) - 1) / (2 * points))
    else:
        radii = R * (1 - 2 * np.array(y_over_d))
    K_model, K_direct = _check_K(inst, np.mean([_u(r) for r in radii]))
    # the published positions are rounded to 3 d.p.; log-chebyshev is computed unrounded
    assert K_model == pytest.approx(K_direct, rel=5e-4 if rule == "log-chebyshev" else 1e-5)


def test_K_weighted(tmp_path):
    """Weight w = 1 + 2 (r/R)^2 tabulated every 1 mm; K = integral u dA / (integral w u dA / integral w dA) / A."""
    r_mm = np.arange(0.0, R * 1e3 + 0.5, 1.0)
    w = 1 + 2 * (r_mm * 1e-3 / R) ** 2
    (tmp_path / "w.csv").write_text("r_mm,w\n" + "".join(f"{a:g},{b:.17g}\n" for a, b in zip(r_mm, w)))
    inst = _build({"kind": "weighted", "table": "w.csv"}, tmp_path)
    weight = lambda r: 1 + 2 * (r / R) ** 2  # noqa: E731 - the table is piecewise linear in this
    numerator = quad(lambda r: weight(r) * _u(r) * r, 0, R, limit=200)[0]
    denominator = quad(lambda r: weight(r) * r, 0, R)[0]
    K_model, K_direct = _check_K(inst, numerator / denominator)
    # the 1 mm table of a parabola differs from the parabola by < 1e-4 of w
    assert K_model == pytest.approx(K_direct, rel=1e-4)


def test_K_vane_against_linear_blade_element_theory():
    """Vane K vs the linearised torque balance integrated with quad (derivation in
    tests/validation/test_glauert_blade_element.py): U_eq = (P/2 pi) int r u^2 cos(theta) dr /
    int r^2 u sin(theta) dr over hub..tip, frictionless, C_D0 = 0."""
    vane = VaneAnemometer(nominal_area=PIPE_AREA, tip_diameter=0.096, hub_diameter=0.030, blades=8,
                          pitch=0.150, chord=0.012, blade=FlatPlateBlade(cd0=0.0))
    theta = lambda r: math.atan2(vane.pitch, 2 * math.pi * r)  # noqa: E731
    a, b = 0.015, 0.048
    num = quad(lambda r: r * _u(r) ** 2 * math.cos(theta(r)), a, b)[0]
    den = quad(lambda r: r * r * _u(r) * math.sin(theta(r)), a, b)[0]
    K_model, K_direct = _check_K(vane, vane.pitch / (2 * math.pi) * num / den)
    assert K_model == pytest.approx(K_direct, rel=5e-3)
    # measured: relative difference 1.5e-6 (K = 0.8889)

"""GUM (JCGM 100:2008, Evaluation of measurement data - Guide to the expression of
uncertainty in measurement): law of propagation (Eqs. 10, 13), the fully correlated case
(5.2.2 Note 1), Welch-Satterthwaite (G.2b) with the worked example of G.4.2, and the
Student-t coverage factors of Table G.2. Table and example numbers are from memory;
the Monte Carlo checks are independent (JCGM 101:2008 propagation of distributions).
"""
import math

import numpy as np
import pytest

from calib.uncertainty import (Budget, Component, combine, coverage_factor, expanded,
                               welch_satterthwaite)


def test_independent_is_root_sum_of_squares():
    """GUM Eq. 10 with unit-free numbers: 3-4-12 contributions -> 13."""
    assert combine([1.0, -2.0, 4.0], [3.0, 2.0, 3.0]) == pytest.approx(13.0, rel=1e-15)


def test_independent_vs_monte_carlo(rng):
    """y = 2 x1 - 0.5 x2 + x3 with normal and rectangular inputs; MC (JCGM 101) standard
    deviation of 400 000 draws vs Eq. 10, within 1 % (MC scatter ~0.1 %)."""
    c = np.array([2.0, -0.5, 1.0])
    u = np.array([0.3, 1.2, 0.4])
    x1 = rng.normal(0.0, u[0], 400_000)
    x2 = rng.normal(0.0, u[1], 400_000)
    half = u[2] * math.sqrt(3.0)
    x3 = rng.uniform(-half, half, 400_000)
    y = c[0] * x1 + c[1] * x2 + c[2] * x3
    assert combine(c, u) == pytest.approx(np.std(y), rel=0.01)


def test_correlated_vs_monte_carlo(rng):
    """GUM Eq. 13 with r12 = 0.6, r23 = -0.3 vs a multivariate-normal MC, within 1 %."""
    c = np.array([1.0, 1.5, -1.0])
    u = np.array([0.2, 0.1, 0.3])
    r = np.array([[1.0, 0.6, 0.0], [0.6, 1.0, -0.3], [0.0, -0.3, 1.0]])
    cov = np.outer(u, u) * r
    x = rng.multivariate_normal(np.zeros(3), cov, 400_000)
    assert combine(c, u, r) == pytest.approx(np.std(x @ c), rel=0.01)


def test_fully_correlated_pair_adds_linearly():
    """GUM 5.2.2 Note 1: r = +1 for all pairs gives u_c = |sum c_i u_i|."""
    r = np.ones((2, 2))
    assert combine([1.0, 2.0], [0.3, 0.1], r) == pytest.approx(0.5, rel=1e-12)


def test_anticorrelated_pair_cancels():
    """r = -1 with equal contributions: y = x1 + x2 does not vary at all."""
    r = np.array([[1.0, -1.0], [-1.0, 1.0]])
    assert combine([1.0, 1.0], [0.2, 0.2], r) == pytest.approx(0.0, abs=1e-12)


def test_welch_satterthwaite_gum_g42_example():
    """GUM G.4.2 (from memory): Y = b X1 X2 X3, relative u 0.25 %, 0.57 %, 0.82 % from
    n = 10, 5, 15 observations -> u_c/y = 1.03 %, nu_eff = 19.0, t_95(19) = 2.09,
    U_95 = 2.2 %."""
    rel_u = [0.25, 0.57, 0.82]
    nu = [9, 4, 14]
    assert combine([1.0, 1.0, 1.0], rel_u) == pytest.approx(1.03, abs=0.005)
    nu_eff = welch_satterthwaite(rel_u, nu)
    # measured 18.9987: GUM rounds u_c to 1.03 % before G.2b and so prints 19.0; with
    # G.4.1 truncation our unrounded value would take t_95(18) = 2.10 instead of 2.09.
    assert nu_eff == pytest.approx(19.0, abs=0.05)
    k = coverage_factor(19.0, 0.95)
    assert k == pytest.approx(2.09, abs=0.005)
    assert k * 1.03 == pytest.approx(2.2, abs=0.05)


def test_welch_satterthwaite_single_and_type_b():
    """One Type A component keeps its nu; adding exact (nu = inf) Type B terms raises nu_eff."""
    assert welch_satterthwaite([0.5], [7]) == pytest.approx(7.0)
    assert welch_satterthwaite([0.5, 0.5], [7, math.inf]) == pytest.approx(28.0)
    assert math.isinf(welch_satterthwaite([0.5, 0.1], [math.inf, math.inf]))


@pytest.mark.parametrize("nu, t95, t9545", [
    (1, 12.71, 13.97), (2, 4.30, 4.53), (3, 3.18, 3.31), (5, 2.57, 2.65),
    (10, 2.23, 2.28), (20, 2.09, 2.13), (math.inf, 1.960, 2.000),
])
def test_coverage_factor_table_g2(nu, t95, t9545):
    """GUM Table G.2, t_p(nu) for p = 95 % and 95.45 % (printed to 2-3 decimals; from memory)."""
    assert coverage_factor(nu, 0.95) == pytest.approx(t95, abs=0.006)
    assert coverage_factor(nu, 0.9545) == pytest.approx(t9545, abs=0.006)


def test_expanded_and_budget():
    """GUM 6.2.1 U = k u_c; a budget of two components sums as Eq. 10."""
    assert expanded(0.3) == pytest.approx(0.6)
    b = Budget((Component("a", 0.3, 1.0, 4, "normal, Type A"),
                Component("b", 0.2, 2.0, math.inf, "rectangular")), unit="m")
    assert b.combined() == pytest.approx(0.5)
    U, k = b.expanded(0.95)
    assert k == pytest.approx(coverage_factor(b.effective_dof(), 0.95))
    assert U == pytest.approx(k * 0.5)
    text = str(b)
    assert "rectangular" in text and "combined" in text and len(b.rows()) == 2

"""calib.reference: bag-collapse and orifice reductions, budgets checked by Monte Carlo
propagation of distributions (JCGM 101:2008) through the same measurement model."""
import math

import numpy as np
import pytest

from calib.reference import (ReferenceFlow, _volume_flow, bag_flow,
                             iso5167_c_relative_uncertainty, orifice_flow)
from calib.uncertainty import coverage_factor
from solver.air import Air

TIMES = [10.12, 9.95, 10.31, 10.04, 10.20]


def test_bag_mean_flow_and_type_a():
    """Q = V/mean(t); Type A = s/sqrt(n) on the mean time with nu = n - 1 (GUM 4.2)."""
    r = bag_flow(0.1, TIMES, volume_tolerance_m3=0.0, timing_resolution_s=0.0, reaction_time_s=0.0)
    t = np.array(TIMES)
    assert r.flow_m3s == pytest.approx(0.1 / t.mean(), rel=1e-14)
    s_mean = t.std(ddof=1) / math.sqrt(t.size)
    assert r.standard_uncertainty_m3s == pytest.approx(0.1 / t.mean() ** 2 * s_mean, rel=1e-12)
    assert r.degrees_of_freedom == pytest.approx(4.0)
    assert r.coverage_factor == pytest.approx(2.776, abs=1e-3)  # t_95(4), GUM Table G.2
    assert r.expanded_uncertainty_m3s == pytest.approx(r.coverage_factor * r.standard_uncertainty_m3s)


def test_bag_budget_vs_monte_carlo(rng):
    """Linear GUM u_c vs the std of Q = (V + dV)/(t_mean + d_res + d_react) sampled with the
    stated distributions (t_mean normal with the Type A u); within 1 % (MC noise 0.2 %)."""
    r = bag_flow(0.1, TIMES, volume_tolerance_m3=0.002, timing_resolution_s=0.01, reaction_time_s=0.1)
    t = np.array(TIMES)
    n = 200_000
    t_mean = rng.normal(t.mean(), t.std(ddof=1) / math.sqrt(t.size), n)
    dV = rng.uniform(-0.002, 0.002, n)
    d_res = rng.uniform(-0.005, 0.005, n)
    d_react = rng.uniform(-0.1, 0.1, n)
    q = (0.1 + dV) / (t_mean + d_res + d_react)
    assert r.standard_uncertainty_m3s == pytest.approx(q.std(), rel=0.01)
    assert len(r.budget.rows()) == 4


@pytest.mark.parametrize("kwargs, name", [
    ({"volume_m3": 0.0, "times_s": TIMES}, "volume_m3"),
    ({"volume_m3": -1.0, "times_s": TIMES}, "volume_m3"),
    ({"volume_m3": 0.1, "times_s": [10.0]}, "times_s"),
    ({"volume_m3": 0.1, "times_s": [10.0, 0.0]}, "times_s"),
    ({"volume_m3": 0.1, "times_s": 10.0}, "times_s"),
    ({"volume_m3": 0.1, "times_s": TIMES, "volume_tolerance_m3": -0.01}, "volume_tolerance_m3"),
    ({"volume_m3": 0.1, "times_s": TIMES, "timing_resolution_s": float("nan")}, "timing_resolution_s"),
    ({"volume_m3": 0.1, "times_s": TIMES, "reaction_time_s": -0.1}, "reaction_time_s"),
])
def test_bag_bad_input_names_argument(kwargs, name):
    with pytest.raises(ValueError, match=name):
        bag_flow(**kwargs)


def test_reference_flow_is_frozen():
    r = bag_flow(0.1, TIMES)
    assert isinstance(r, ReferenceFlow)
    with pytest.raises(AttributeError):
        r.flow_m3s = 1.0


def test_orifice_budget_vs_monte_carlo(rng):
    """Linear GUM combination with finite-difference sensitivities vs Monte Carlo through
    the fluids solver (C and eps as multiplicative normal factors, D and d rectangular,
    dp, p1, rho normal); 4000 draws, MC noise ~1.1 %, bound 4 %."""
    D, d, dp, p1, air = 0.1, 0.05, 250.0, 101325.0, Air()
    u = dict(u_dp_rel=0.02, u_D=2e-4, u_d=5e-5, u_p1_Pa=300.0, u_density_rel=0.003)
    r = orifice_flow(D, d, dp, p1, air, **u)
    rows = {row[0]: row for row in r.budget.rows()}
    # C and eps enter q_m as factors, so their relative u is contribution / Q
    rel_C = rows["discharge coefficient C"][3] / r.flow_m3s
    rel_eps = rows["expansibility epsilon"][3] / r.flow_m3s
    n = 4000
    half_D, half_d = u["u_D"] * math.sqrt(3), u["u_d"] * math.sqrt(3)
    q = np.empty(n)
    for i in range(n):
        q[i] = _volume_flow(D + rng.uniform(-half_D, half_D), d + rng.uniform(-half_d, half_d),
                            dp * (1 + u["u_dp_rel"] * rng.normal()), p1 + u["u_p1_Pa"] * rng.normal(),
                            1.0 + u["u_density_rel"] * rng.normal(), air, "corner")[0]
    q *= (1.0 + rel_C * rng.normal(size=n)) * (1.0 + rel_eps * rng.normal(size=n))
    assert r.standard_uncertainty_m3s == pytest.approx(q.std(), rel=0.04)


def test_orifice_expanded_uses_student_t():
    r = orifice_flow(0.1, 0.05, 250.0, 101325.0)
    assert math.isinf(r.degrees_of_freedom)
    assert r.coverage_factor == pytest.approx(coverage_factor(math.inf, 0.95))
    assert 0.005 < r.relative_expanded_uncertainty < 0.05


def test_c_uncertainty_bands_meet():
    """The three beta bands of ISO 5167-2 §5.3.3.1 (from memory) join at 0.2 and 0.6."""
    for beta in (0.2, 0.6):
        below = iso5167_c_relative_uncertainty(beta - 1e-9, 0.2, 1e6)
        above = iso5167_c_relative_uncertainty(beta + 1e-9, 0.2, 1e6)
        assert below == pytest.approx(above, abs=1e-5)


@pytest.mark.parametrize("kwargs, name", [
    ({"D": 0.1, "d": 0.12}, "d"), ({"D": -0.1, "d": 0.05}, "D"),
    ({"D": 0.1, "d": 0.05, "taps": "radius"}, "taps"),
    ({"D": 0.1, "d": 0.05, "outside_limits": "ignore"}, "outside_limits"),
    ({"D": 0.1, "d": 0.05, "u_dp_rel": -0.01}, "u_dp_rel"),
])
def test_orifice_bad_input(kwargs, name):
    args = {"dp_Pa": 250.0, "p_upstream_Pa": 101325.0, **kwargs}
    with pytest.raises(ValueError, match=name):
        orifice_flow(**args)

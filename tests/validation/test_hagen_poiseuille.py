"""Hagen-Poiseuille flow: the exact solution of fully developed laminar pipe flow.

Source: Hagen (1839), Poiseuille (1840); u = 2 U_b (1 - r^2/R^2), Darcy f = 64/Re
(e.g. White, Fluid Mechanics, Eq. 6.10-6.12). The inlet carries the exact profile, so the whole pipe
must reproduce it; the walls are graded so the test also covers stretched cells.
"""
import numpy as np
import pytest

from geometry.pipes import straight_pipe
from solver.boundary import Axis, PressureOutlet, VelocityInlet, Wall
from solver.flow import FlowProblem, SolverSettings, solve

R, LENGTH, MU, RHO, U_BULK = 0.01, 0.2, 1e-3, 1.0, 0.05  # Re_D = 1


@pytest.fixture(scope="module")
def poiseuille():
    mesh = straight_pipe(LENGTH, R, 40, 20, wall_ratio=3.0, blocks=2)
    exact = lambda x, r: np.column_stack([2 * U_BULK * (1 - (r / R) ** 2), 0 * r])
    problem = FlowProblem(mesh, RHO, MU, {"inlet": VelocityInlet(profile=exact), "outlet": PressureOutlet(0.0),
                                          "wall": Wall(), "axis": Axis()})
    return mesh, solve(problem, SolverSettings(max_iterations=500))


def test_profile_l2_error_below_half_percent(poiseuille):
    mesh, sol = poiseuille
    assert sol.converged
    c = mesh.cell_centre
    exact = 2 * U_BULK * (1 - (c[:, 1] / R) ** 2)
    v = mesh.cell_volume
    error = np.sqrt(((sol.state.u - exact) ** 2 * v).sum() / (exact**2 * v).sum())
    assert error < 0.005  # measured 0.02 %


def test_darcy_friction_times_reynolds_is_64(poiseuille):
    mesh, sol = poiseuille
    c = mesh.cell_centre
    first = np.abs(c[:, 0] - 0.05) < 0.003
    second = np.abs(c[:, 0] - 0.15) < 0.003
    weights = mesh.cell_volume
    p1 = np.average(sol.state.p[first], weights=weights[first])
    p2 = np.average(sol.state.p[second], weights=weights[second])
    dpdx = (p1 - p2) / (c[second, 0].mean() - c[first, 0].mean())
    f = dpdx * 2 * R / (0.5 * RHO * U_BULK**2)
    reynolds = RHO * U_BULK * 2 * R / MU
    assert f * reynolds == pytest.approx(64.0, rel=0.01)  # measured 63.93 (-0.1 %)

"""Invariants of the discretisation: conservation, block order, relaxation (no external reference needed)."""
import numpy as np
import pytest

from geometry.pipes import smooth_area_change
from solver.boundary import AmbientOpening, Axis, FixedFlowOutlet, Wall
from solver.flow import FlowProblem, SolverSettings, solve

RHO, MU, FLOW = 1.2, 1.8e-5 * 20, 2e-4


def run(reverse=False, relax=0.8):
    mesh = smooth_area_change(0.3, 0.02, 0.012, 0.08, 0.18, 60, 16, wall_ratio=3, blocks=3, reverse_blocks=reverse)
    problem = FlowProblem(mesh, RHO, MU, {"inlet": AmbientOpening(0.0), "outlet": FixedFlowOutlet(flow=FLOW),
                                          "wall": Wall(), "axis": Axis()})
    return mesh, solve(problem, SolverSettings(max_iterations=1500, velocity_relaxation=relax))


@pytest.fixture(scope="module")
def reference_run():
    return run()


def test_outlet_flux_equals_inlet_flux(reference_run):
    mesh, sol = reference_run
    assert sol.converged
    inflow, outflow = sol.patch_flux("inlet"), sol.patch_flux("outlet")
    assert outflow == pytest.approx(FLOW, rel=1e-12)
    assert -inflow == pytest.approx(outflow, rel=1e-8)


def _by_position(mesh, field):
    order = np.lexsort((np.round(mesh.cell_centre[:, 1], 12), np.round(mesh.cell_centre[:, 0], 12)))
    return field[order]


def test_answer_independent_of_block_order(reference_run):
    mesh, sol = reference_run
    mesh_r, sol_r = run(reverse=True)
    for name in ("u", "v", "p"):
        a = _by_position(mesh, getattr(sol.state, name))
        b = _by_position(mesh_r, getattr(sol_r.state, name))
        assert np.abs(a - b).max() <= 1e-6 * np.abs(a).max() + 1e-12


def test_answer_independent_of_under_relaxation(reference_run):
    """Majumdar's (1988) Rhie-Chow form makes the converged fields independent of the relaxation factor."""
    mesh, sol = reference_run
    _, sol_b = run(relax=0.6)
    assert np.abs(sol.state.u - sol_b.state.u).max() <= 1e-5 * np.abs(sol.state.u).max()
    assert np.abs(sol.state.p - sol_b.state.p).max() <= 1e-5 * np.abs(sol.state.p).max()


def test_ambient_opening_face_pressure_is_total_minus_dynamic():
    """Inflow through a total-pressure opening: face static pressure = p0 - 1/2 rho u_n^2 (Bernoulli);
    outflow: static pressure = p0."""
    from solver.boundary import FaceContext
    flux = np.array([-2.0, -0.5, 0.0, 1.0])
    area = np.array([1.0, 2.0, 1.0, 1.0])
    ctx = FaceContext(np.zeros((4, 2)), np.tile([-1.0, 0.0], (4, 1)), area, np.zeros((4, 2)), flux, RHO)
    p = AmbientOpening(100.0).pressure_value(ctx)
    un = flux / (RHO * area)
    np.testing.assert_allclose(p, [100 - 0.5 * RHO * un[0] ** 2, 100 - 0.5 * RHO * un[1] ** 2, 100.0, 100.0])
    a, b = AmbientOpening(100.0).velocity_affine(ctx)
    np.testing.assert_allclose(a[0], [-un[0], 0.0])  # enters along the inward normal (+x)
    assert b[0].max() == 0.0 and b[3].min() == 1.0


def test_answer_independent_of_anderson_acceleration(reference_run):
    """Acceleration changes the path, not the fixed point: the plain iteration reaches the same fields."""
    mesh, sol = reference_run
    problem = sol.problem
    plain = solve(problem, SolverSettings(max_iterations=3000, velocity_relaxation=0.8, anderson_depth=0))
    assert plain.converged
    assert np.abs(sol.state.u - plain.state.u).max() <= 1e-5 * np.abs(sol.state.u).max()
    assert np.abs(sol.state.p - plain.state.p).max() <= 1e-5 * np.abs(sol.state.p).max()


@pytest.mark.parametrize("lag", [1, 25])
def test_answer_independent_of_pressure_operator_lag(reference_run, lag):
    """Holding the pressure-correction operator changes the path, not the fixed point (the reference run
    holds it for the default 10 iterations)."""
    mesh, sol = reference_run
    other = solve(sol.problem, SolverSettings(max_iterations=1500, velocity_relaxation=0.8,
                                              pressure_operator_lag=lag))
    assert other.converged
    assert np.abs(sol.state.u - other.state.u).max() <= 1e-5 * np.abs(sol.state.u).max()
    assert np.abs(sol.state.p - other.state.p).max() <= 1e-5 * np.abs(sol.state.p).max()

"""The 2D mixing-length closure against the 1D developed-pipe solution of the same closure.

Consistency check (issue: the 2D solver's developed profile agrees with the radial ODE to 0.5 %): both
solve the same model, so any difference is the 2D discretisation, the axis treatment or the closure's
strain and wall-shear evaluation.
"""
import numpy as np
import pytest

from solver.closure import CLOSURES
from solver.verification import turbulent_pipe


@pytest.fixture(scope="module")
def developed_run():
    return turbulent_pipe(reynolds=1e5, length_D=10.0, axial_cells=40, radial_cells=50)


def test_developed_profile_matches_radial_ode(developed_run):
    sol, developed = developed_run
    assert sol.converged
    mesh = sol.problem.mesh
    last = np.abs(mesh.cell_centre[:, 0] - mesh.cell_centre[:, 0].max()) < 1e-12
    u2d = sol.state.u[last]
    u1d = developed.profile_at(mesh.cell_centre[last, 1])
    assert np.abs(u2d - u1d).max() / u1d.max() < 0.005  # measured 0.16 %


def test_eddy_viscosity_vanishes_at_wall_and_is_positive(developed_run):
    sol, _ = developed_run
    mu_t = sol.state.mu_eff - sol.problem.viscosity
    assert mu_t.min() >= 0.0
    wall_cells = sol.problem.mesh.owner[sol.problem.mesh.patch_faces("wall")]
    assert (mu_t[wall_cells] / sol.problem.viscosity).max() < 0.05  # y+ ~ 0.5: damped to nearly zero


@pytest.mark.parametrize("kind", sorted(CLOSURES))
def test_registry_entries_have_a_kind(kind):
    assert CLOSURES[kind].kind == kind

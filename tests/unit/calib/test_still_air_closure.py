"""The mixing-length closure leaves the still air ahead of the mouth laminar, outside a sharp edge's fan.

Model rule (solver.closure): cells with no duct radius get nu_t = 0 unless a sharp convex edge is their
nearest wall point; duct cells keep their eddy viscosity. Checked on a sheared test field, so the rule is
seen apart from any solution. None of today's mouths sheds into open air (their lips' fans lie in the
bore), so the exception is checked on a closure given such a fan by hand.
"""
from dataclasses import replace

import numpy as np
import pytest

from calib.pipeline import PreparedFixture
from geometry.case import parse_case
from solver.flow import FlowState, _Iteration, SolverSettings

MOUTHS = {"flanged": {"mouth": "flanged"}, "bell": {"mouth": "bell", "bell_radius_mm": 9.0},
          "thin-wall": {"mouth": "thin-wall", "wall_thickness_mm": 2.0}}


def eddy_viscosity_on_shear(ambient, closure_change=None):
    data = {"title": "still air", "ambient": ambient,
            "segment": [{"kind": "head", "diameter_mm": 60, "length_mm": 40, "rotor_at_mm": 20},
                        {"kind": "tube", "length_mm": 300}],
            "operating": {"flows_Ls": [8]}, "mesh": {"level": "coarse"}}
    prepared = PreparedFixture.build(parse_case(data, "."))
    if closure_change is not None:
        prepared.closure = replace(prepared.closure, **closure_change(prepared))
    problem = prepared.problem(8e-3)
    mesh = problem.mesh
    x, r = mesh.cell_centre[:, 0], mesh.cell_centre[:, 1]
    # a field sheared everywhere: u grows with r and x, v with x (nowhere a zero gradient)
    u, v = 5.0 + 300.0 * r + 50.0 * x, 20.0 * x
    state = FlowState(u, v, np.zeros(mesh.n_cells), np.zeros(mesh.n_faces), np.full(mesh.n_cells, problem.viscosity))
    gradients = _Iteration(problem, SolverSettings(), state).gradients()
    nu_t = (problem.closure.effective_viscosity(problem, state, gradients) - problem.viscosity) / problem.density
    return prepared, nu_t


@pytest.mark.parametrize("mouth", sorted(MOUTHS))
def test_still_air_is_laminar_outside_the_fans(mouth):
    prepared, nu_t = eddy_viscosity_on_shear(MOUTHS[mouth])
    closure = prepared.closure
    still = np.asarray(prepared.fixture.duct_radius) <= 0.0
    fan = np.isfinite(closure.shear_distance)
    assert still.any() and (~still).any()
    assert np.all(nu_t[still & ~fan] == 0.0)
    assert nu_t[~still].max() > 0.0          # the ducts stay turbulent


def test_a_fan_in_open_air_stays_turbulent():
    """Still-air cells given a finite distance from an edge (a fan) keep their mixing length."""
    def fan_in_still_air(prepared):
        distance = np.array(prepared.closure.shear_distance, dtype=float)
        still = np.flatnonzero(np.asarray(prepared.fixture.duct_radius) <= 0.0)
        distance[still[::2]] = 0.01
        return {"shear_distance": distance}

    prepared, nu_t = eddy_viscosity_on_shear(MOUTHS["flanged"], fan_in_still_air)
    still = np.asarray(prepared.fixture.duct_radius) <= 0.0
    fan = np.isfinite(prepared.closure.shear_distance)
    assert (still & fan).sum() > 100
    assert np.all(nu_t[still & ~fan] == 0.0)
    assert np.count_nonzero(nu_t[still & fan]) > 0.9 * (still & fan).sum()

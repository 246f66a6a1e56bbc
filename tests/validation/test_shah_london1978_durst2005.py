"""Developing laminar pipe flow from a uniform inlet, Re_D = 500.

Sources:
* Shah (1978), J. Fluids Eng. 100:177 (also Shah & London 1978, Laminar Flow Forced Convection in Ducts):
  apparent Fanning friction f_app Re = 3.44/sqrt(x+) + [1.25/(4 x+) + 16 - 3.44/sqrt(x+)] / [1 + 0.00021 x+^-2],
  x+ = x/(D Re), quoted accuracy +-2.4 % (formula from memory).
* Durst, Ray, Uensal & Bayoumi (2005), J. Fluids Eng. 127:1154, entrance length to 99 % of the developed
  centreline velocity: L/D = [0.619^1.6 + (0.0567 Re)^1.6]^(1/1.6) (from memory).
"""
import numpy as np
import pytest

from geometry.pipes import straight_pipe
from solver.boundary import Axis, FixedFlowOutlet, VelocityInlet, Wall
from solver.flow import FlowProblem, SolverSettings, solve

RE, D, U, RHO = 500.0, 1.0, 1.0, 1.0


def shah_fapp_re(xplus):
    return 3.44 / np.sqrt(xplus) + (1.25 / (4 * xplus) + 16 - 3.44 / np.sqrt(xplus)) / (1 + 0.00021 * xplus**-2)


@pytest.fixture(scope="module")
def developing():
    mesh = straight_pipe(0.1 * RE * D, D / 2, 150, 36, wall_ratio=4, axial_ratio=10)
    flow = np.pi * D**2 / 4 * U
    problem = FlowProblem(mesh, RHO, RHO * U * D / RE, {"inlet": VelocityInlet(velocity=(U, 0.0)),
                                                        "outlet": FixedFlowOutlet(flow=flow),
                                                        "wall": Wall(), "axis": Axis()})
    sol = solve(problem, SolverSettings(max_iterations=1000))
    assert sol.converged
    return mesh, sol


def _column_pressure(mesh, p, x):
    axis_cells = mesh.owner[mesh.patch_faces("axis")]
    x_col = mesh.cell_centre[axis_cells, 0][np.argmin(np.abs(mesh.cell_centre[axis_cells, 0] - x))]
    col = np.abs(mesh.cell_centre[:, 0] - x_col) < 1e-9
    return x_col, np.average(p[col], weights=mesh.cell_volume[col])


def test_apparent_friction_against_shah(developing):
    """Pressure drop between x+ = 0.02 and 0.08 within 3 % of Shah's correlation (measured +1.4 %).

    Nearer the inlet the full Navier-Stokes solution lies above the correlation (x+ 0.01-0.06: +3.2 %),
    the known effect of axial diffusion at a uniform inlet, which the boundary-layer solutions behind the
    correlation leave out; the band is chosen for that reason and the near-inlet figure is reported here.
    """
    mesh, sol = developing
    x1, p1 = _column_pressure(mesh, sol.state.p, 0.02 * RE * D)
    x2, p2 = _column_pressure(mesh, sol.state.p, 0.08 * RE * D)
    a1, a2 = x1 / (D * RE), x2 / (D * RE)
    shah = 4 * (shah_fapp_re(a2) * a2 - shah_fapp_re(a1) * a1) * 0.5 * RHO * U**2
    assert (p1 - p2) == pytest.approx(shah, rel=0.03)


def test_entrance_length_against_durst(developing):
    """x where the centreline velocity reaches 99 % of 2 U: within 3 % of Durst et al. (measured +2.0 %)."""
    mesh, sol = developing
    axis_cells = mesh.owner[mesh.patch_faces("axis")]
    x, u_centre = mesh.cell_centre[axis_cells, 0], sol.state.u[axis_cells]
    length = np.interp(0.99 * 2 * U, u_centre, x)
    durst = D * (0.619**1.6 + (0.0567 * RE) ** 1.6) ** (1 / 1.6)
    assert length == pytest.approx(durst, rel=0.03)

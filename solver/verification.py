"""Verification cases with known answers, shared by the benchmark and the command line.

Each function builds, solves and returns (solution, {figure: value}) for one case; the tests in
``tests/validation`` assert the bounds, these functions only compute.
"""
from __future__ import annotations

import numpy as np

from geometry.pipes import straight_pipe

from .boundary import Axis, FixedFlowOutlet, PressureOutlet, VelocityInlet, Wall
from .flow import FlowProblem, SolverSettings, solve


def hagen_poiseuille(axial_cells: int = 40, radial_cells: int = 20):
    """Developed laminar pipe at Re_D = 1: profile L2 error and Darcy f Re (exact: 64)."""
    radius, length, mu, rho, bulk = 0.01, 0.2, 1e-3, 1.0, 0.05
    mesh = straight_pipe(length, radius, axial_cells, radial_cells, wall_ratio=3.0, blocks=2)
    exact = lambda x, r: np.column_stack([2 * bulk * (1 - (r / radius) ** 2), 0 * r])
    problem = FlowProblem(mesh, rho, mu, {"inlet": VelocityInlet(profile=exact), "outlet": PressureOutlet(0.0),
                                          "wall": Wall(), "axis": Axis()})
    sol = solve(problem, SolverSettings(max_iterations=500))
    c, vol = mesh.cell_centre, mesh.cell_volume
    u_exact = 2 * bulk * (1 - (c[:, 1] / radius) ** 2)
    l2 = np.sqrt(((sol.state.u - u_exact) ** 2 * vol).sum() / (u_exact**2 * vol).sum())
    band = [np.abs(c[:, 0] - x) < 0.003 for x in (0.05, 0.15)]
    p1, p2 = (np.average(sol.state.p[b], weights=vol[b]) for b in band)
    dx = c[band[1], 0].mean() - c[band[0], 0].mean()
    f_re = (p1 - p2) / dx * 2 * radius / (0.5 * rho * bulk**2) * rho * bulk * 2 * radius / mu
    return sol, {"profile_l2_error": float(l2), "f_times_Re": float(f_re)}


def developing_laminar(reynolds: float = 500.0, axial_cells: int = 150, radial_cells: int = 36):
    """Uniform inlet into a pipe of 0.1 Re diameters: entrance length (x where u_c = 0.99 x 2 U_b)."""
    diameter, bulk, rho = 1.0, 1.0, 1.0
    mesh = straight_pipe(0.1 * reynolds * diameter, diameter / 2, axial_cells, radial_cells,
                         wall_ratio=4, axial_ratio=10)
    problem = FlowProblem(mesh, rho, rho * bulk * diameter / reynolds,
                          {"inlet": VelocityInlet(velocity=(bulk, 0.0)),
                           "outlet": FixedFlowOutlet(flow=np.pi * diameter**2 / 4 * bulk),
                           "wall": Wall(), "axis": Axis()})
    sol = solve(problem, SolverSettings(max_iterations=1000))
    axis_cells = mesh.owner[mesh.patch_faces("axis")]
    length = np.interp(0.99 * 2 * bulk, sol.state.u[axis_cells], mesh.cell_centre[axis_cells, 0])
    durst = diameter * (0.619**1.6 + (0.0567 * reynolds) ** 1.6) ** (1 / 1.6)
    return sol, {"entrance_length_D": float(length / diameter), "durst_2005_D": float(durst / diameter)}




def pipe_wall_data(mesh):
    """Exact wall distance (R - r) and nearest wall face of every cell of a straight pipe mesh."""
    wall = mesh.patch_faces("wall")
    radius = float(mesh.face_centre[wall, 1].max())
    order = np.argsort(mesh.face_centre[wall, 0])
    xs = mesh.face_centre[wall[order], 0]
    x = mesh.cell_centre[:, 0]
    k = np.clip(np.searchsorted(xs, x), 1, len(xs) - 1)
    nearest = np.where(np.abs(xs[k] - x) < np.abs(xs[k - 1] - x), k, k - 1)
    return wall, radius - mesh.cell_centre[:, 1], order[nearest], radius


def turbulent_pipe(reynolds: float = 1e5, length_D: float = 10.0, axial_cells: int = 40, radial_cells: int = 50,
                   uniform_inlet: bool = False, axial_ratio: float = 1.0, constants=None):
    """Wall-resolved turbulent pipe (air, D = 50 mm) with the mixing-length closure, y+ <= 1 at the wall.

    Inlet: the 1D developed profile of :func:`solver.pipe1d.developed_pipe` (or a uniform velocity);
    outlet at ambient static pressure.
    """
    from geometry.blocks import Spacing
    from geometry.wall_spacing import first_cell_height

    from .closure import MixingLengthClosure
    from .mixing_length import MixingLengthConstants
    from .pipe1d import developed_pipe

    constants = constants or MixingLengthConstants()
    diameter, nu, rho = 0.05, 1.5e-5, 1.2
    bulk = reynolds * nu / diameter
    spacing = Spacing.from_first(radial_cells, diameter / 2, first_cell_height(1.0, bulk, diameter, nu))
    mesh = straight_pipe(length_D * diameter, diameter / 2, axial_cells, radial_cells,
                         wall_ratio=spacing.ratio, axial_ratio=axial_ratio)
    developed = developed_pipe(reynolds, D=diameter, nu=nu, constants=constants)
    if uniform_inlet:
        inlet = VelocityInlet(velocity=(bulk, 0.0))
    else:
        inlet = VelocityInlet(profile=lambda x, r: np.column_stack([developed.profile_at(r), 0 * r]))
    wall, distance, nearest, radius = pipe_wall_data(mesh)
    closure = MixingLengthClosure(wall, distance, nearest, np.full(mesh.n_cells, radius), radius, constants)
    problem = FlowProblem(mesh, rho, rho * nu, {"inlet": inlet, "outlet": PressureOutlet(0.0), "wall": Wall(),
                                                "axis": Axis()}, closure=closure)
    sol = solve(problem, SolverSettings(max_iterations=4000))
    return sol, developed


def developed_turbulent_pipe():
    """Turbulent pipe at Re_D = 1e5 from the developed inlet profile: deviation from the 1D solution at the
    outlet and the Darcy friction factor from the wall shear."""
    sol, developed = turbulent_pipe(reynolds=1e5, length_D=10.0, axial_cells=40, radial_cells=50)
    mesh = sol.problem.mesh
    last = np.abs(mesh.cell_centre[:, 0] - mesh.cell_centre[:, 0].max()) < 1e-12
    u1d = developed.profile_at(mesh.cell_centre[last, 1])
    deviation = np.abs(sol.state.u[last] - u1d).max() / u1d.max()
    return sol, {"max_deviation_from_1D": float(deviation), "friction_factor_1D": developed.friction_factor}


CASES = {"hagen-poiseuille": hagen_poiseuille, "developing-laminar": developing_laminar,
         "turbulent-pipe-Re1e5": developed_turbulent_pipe}

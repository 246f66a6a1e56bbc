"""From a case to solved operating points: fixture mesh -> flow problem -> solve -> rotor-plane reading.

Plain orchestration: the physics lives in ``solver``, the geometry in ``geometry``. Sweeps
(:mod:`calib.sweep`) start each flow from the previous flow's solution scaled by the flow ratio
(:func:`scaled_state`: velocities by the ratio, pressures by its square), the dimensionally right guess
at high Reynolds number.
"""
from __future__ import annotations

import sys
import warnings
from dataclasses import dataclass
from typing import Callable

import numpy as np

from geometry.case import Case
from geometry.fixture import build_fixture_mesh
from geometry.wall_distance import sharp_convex_edges, shear_layer_distance, wall_distance
from solver.air import Air
from solver.boundary import AmbientOpening, Axis, FixedFlowOutlet, Wall
from solver.closure import LaminarClosure, MixingLengthClosure, first_cell_y_plus
from solver.flow import FlowProblem, FlowSolution, FlowState, SolverSettings, solve
from solver.mixing_length import MixingLengthConstants

from .rotor_plane import rotor_plane_profile
from .table import PointResult


def case_air(case: Case) -> Air:
    return Air(case.air.temperature_K, case.air.pressure_Pa, case.air.relative_humidity)


def case_constants(case: Case, overrides: dict | None = None) -> MixingLengthConstants:
    from geometry.schema import CaseError
    try:
        return MixingLengthConstants.from_overrides({**case.model.overrides, **(overrides or {})})
    except ValueError as error:
        raise CaseError("model", str(error)) from None


@dataclass(eq=False)
class PreparedFixture:
    """A case's mesh at one level with everything the flow problems of that level share."""

    case: Case
    fixture: object
    air: Air
    closure: object
    level: str

    @classmethod
    def build(cls, case: Case, level: str | None = None, constants: MixingLengthConstants | None = None,
              first_cell_height: float | None = None) -> "PreparedFixture":
        fixture = build_fixture_mesh(case, level=level, first_cell_height=first_cell_height)
        air = case_air(case)
        if case.model.closure == "laminar":
            closure = LaminarClosure()
        else:
            mesh = fixture.mesh
            wall_faces = np.concatenate([mesh.patch_faces(n) for n in mesh.patches if n.startswith("wall")])
            distance, nearest = wall_distance(mesh)
            # nearest is a global face index; the closure wants an index into wall_faces
            position = np.full(mesh.n_faces, -1)
            position[wall_faces] = np.arange(len(wall_faces))
            shear = shear_layer_distance(mesh, sharp_convex_edges(mesh), distance)
            closure = MixingLengthClosure(wall_faces, distance, position[nearest], np.asarray(fixture.duct_radius),
                                          float(fixture.open_region_delta), constants or case_constants(case),
                                          shear)
        return cls(case, fixture, air, closure, level or case.mesh.level)

    def problem(self, flow: float) -> FlowProblem:
        mesh = self.fixture.mesh
        boundaries = {}
        for name in mesh.patches:
            if name.startswith("wall"):
                boundaries[name] = Wall()
            elif name == "axis":
                boundaries[name] = Axis()
            elif name == "ambient":
                boundaries[name] = AmbientOpening(0.0)
            elif name == "outlet":
                boundaries[name] = FixedFlowOutlet(flow=flow)
            else:
                raise ValueError(f"fixture mesh has an unexpected patch {name!r}")
        return FlowProblem(mesh, self.air.density, self.air.viscosity, boundaries, closure=self.closure,
                           resistance=self.rotor_resistance(flow))

    def rotor_resistance(self, flow: float) -> np.ndarray | None:
        """Thin porous layer at the rotor plane: force -c U per volume with c = K rho U_h / (2 t), so the
        layer of thickness t drops K 1/2 rho U_h^2 at the head's mean velocity U_h (linearised at U_h)."""
        head = self.case.head
        if head.rotor_loss <= 0.0:
            return None
        r_in, r_out = self.fixture.rotor_annulus
        u_head = flow / (np.pi * (r_out**2 - r_in**2))
        mesh = self.fixture.mesh
        cells = np.asarray(self.fixture.rotor_cells)
        quads = mesh.nodes[mesh.cell_nodes[cells]]
        thickness = np.ptp(quads[:, :, 0], axis=1)  # axial extent of each cell of the layer
        resistance = np.zeros(mesh.n_cells)
        resistance[cells] = head.rotor_loss * self.air.density * u_head / (2.0 * thickness)
        return resistance


def scaled_state(state: FlowState, ratio: float, viscosity: float) -> FlowState:
    """A previous solution scaled to a new flow: velocities by the ratio, pressure by its square."""
    mu_t = np.maximum(state.mu_eff - viscosity, 0.0)
    return FlowState(state.u * ratio, state.v * ratio, state.p * ratio**2, state.mass_flux * ratio,
                     viscosity + mu_t * ratio)


def solve_point(prepared: PreparedFixture, flow: float, initial: FlowState | None = None,
                settings: SolverSettings = SolverSettings(),
                progress: Callable[[int, dict], None] | None = None,
                warn_wall: bool = True) -> tuple[PointResult, FlowSolution]:
    """Solve one operating point and read the rotor-plane profile. ``warn_wall``: warn here when the first
    cells sit beyond y+ = 2 (a sweep passes False and warns once per mesh level, see
    :func:`warn_wall_resolution`)."""
    fixture = prepared.fixture
    problem = prepared.problem(flow)
    solution = solve(problem, settings, initial=initial, progress=progress)
    r_in, r_out = fixture.rotor_annulus
    profile = rotor_plane_profile(solution, fixture.rotor_x, r_in, r_out, hub=r_in > 0)
    outlet = problem.mesh.patch_faces("outlet")
    area = problem.mesh.face_area[outlet]
    outlet_pressure = float((solution.state.p[problem.mesh.owner[outlet]] * area).sum() / area.sum())
    y_plus, where = max_wall_y_plus(prepared, solution)
    point = PointResult(flow=flow, level=prepared.level, cells=problem.mesh.n_cells, iterations=solution.iterations,
                        converged=solution.converged, wall_s=solution.wall_seconds,
                        pressure_drop_Pa=-outlet_pressure, profile=profile, wall_y_plus=y_plus,
                        wall_y_plus_at=where)
    if warn_wall:
        warn_wall_resolution([point])
    return point, solution


def show_user_warning(message, category, filename, lineno, file=None, line=None):
    """One line per warning on stderr, no source location (installed by the CLI and in pool workers)."""
    print(f"airbias: warning: {message}", file=sys.stderr)


class WallResolutionWarning(UserWarning):
    """The first cells are further from the wall than the closure's y+ ~ 1 assumption allows."""


WALL_Y_PLUS_LIMIT = 2.0  # the mesh is graded for y+ <= 1 at the highest flow; warn beyond 2


def max_wall_y_plus(prepared: PreparedFixture, solution: FlowSolution) -> tuple[float, tuple[float, float]]:
    """Largest first-cell y+ over all wall faces from the solved wall shear, and where (x, r) in m;
    (0, (0, 0)) for laminar cases."""
    wall_faces = getattr(prepared.closure, "wall_faces", None)
    if wall_faces is None or len(wall_faces) == 0:
        return 0.0, (0.0, 0.0)
    y_plus = first_cell_y_plus(solution.problem, solution.state, wall_faces)
    worst = int(np.argmax(y_plus))
    x, r = solution.problem.mesh.face_centre[wall_faces[worst]]
    return float(y_plus[worst]), (float(x), float(r))


def warn_wall_resolution(points: list[PointResult]) -> None:
    """One warning per mesh level whose wall-adjacent cells sit beyond y+ = 2 at some flow (the estimate made
    before meshing, from a smooth-pipe friction law at the highest flow, misses local peaks such as a
    sharp lip), naming the worst place."""
    for level in dict.fromkeys(p.level for p in points):
        above = [p for p in points if p.level == level and p.wall_y_plus > WALL_Y_PLUS_LIMIT]
        if not above:
            continue
        worst = max(above, key=lambda p: p.wall_y_plus)
        x, r = worst.wall_y_plus_at
        flows = "" if len(above) == 1 else f"; above {WALL_Y_PLUS_LIMIT:g} at {len(above)} flows"
        warnings.warn(f"first-cell y+ reaches {worst.wall_y_plus:.1f} at x = {x * 1e3:.1f} mm, r = {r * 1e3:.1f} mm "
                      f"({worst.flow * 1e3:.4g} L/s, {level} mesh{flows}; the closure assumes about 1): results "
                      f"there are less reliable (try a finer mesh level)", WallResolutionWarning, stacklevel=2)

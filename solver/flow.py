"""Steady incompressible axisymmetric RANS: the SIMPLEC outer iteration (orchestration, plain Python).

Equations per radian over each cell (x axial, r radial, U = (u, v)), rho constant, mu_eff = mu + mu_t:

    sum_f F_f u_f = -V dp/dx + sum_f mu_f grad u . S_f + sum_f mu_f (grad U)^T_x . S_f
    sum_f F_f v_f = -V dp/dr + sum_f mu_f grad v . S_f + sum_f mu_f (grad U)^T_r . S_f - 2 mu_eff v V / r^2
    sum_f F_f = 0

with V dp/dr including the wedge side-face force (see :func:`solver.kernels.pressure_gradient`). Pressure-
velocity coupling: SIMPLEC (van Doormaal & Raithby 1984) on a collocated grid with Rhie-Chow face fluxes
and Majumdar's (1988) correction. Convection: upwind matrix + TVD deferred correction; diffusion: orthogonal
part implicit, cross-diffusion and transposed stress explicit.
"""
from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import Callable

import numpy as np
from threadpoolctl import threadpool_limits

from geometry.mesh import Mesh

from . import kernels as K
from .acceleration import AndersonAccelerator
from .boundary import BoundaryCondition, FaceContext
from .convergence import ConvergenceMonitor, DivergenceError
from .linear import CellMatrixPattern, linear_solvers


@dataclass(frozen=True)
class SolverSettings:
    """Outer-iteration controls. Stop when every normalised residual < ``residual_tolerance`` and every
    monitor changed less than ``monitor_tolerance`` (relative) over the last ``monitor_window`` iterations."""

    max_iterations: int = 6000
    residual_tolerance: float = 1e-6
    monitor_tolerance: float = 1e-6
    monitor_window: int = 20
    # 0.95 measured against 0.9 (cold starts, every flow of the example cases at level normal): the demo
    # reducer 1877 iterations in all instead of 3044, the box chamber 1235 instead of 1563, the tube-fed head
    # 1961 instead of 2013, same answers to 1e-6; at level fine the demo's middle flow 502 instead of 1638.
    # 0.98 was slower again (coarse 627, fine 543).
    velocity_relaxation: float = 0.95
    pressure_relaxation: float = 1.0
    second_order: bool = True
    divergence_factor: float = 1e6
    linear_solver: str = "iterative"  # key of solver.linear.LINEAR_SOLVERS; "direct" = sparse LU
    # Safeguard against a limiter that makes the iteration cycle: freeze it at ``limiter_freeze_iteration``
    # (None: never by count) or when the continuity residual has not improved by 10 % over
    # ``limiter_stall_window`` iterations. Freezing early costs accuracy: a limiter frozen on a transient
    # field left axial wiggles near the axis of the demo's outlet tube (second difference of u up to 18.5 m/s,
    # 0.06 m/s live) and slowed the iteration (demo at level normal: 2033 iterations frozen at 300, 1217 live).
    limiter_freeze_iteration: int | None = None
    limiter_stall_window: int = 300
    # Anderson acceleration of the outer iteration (solver.acceleration): the last ``anderson_depth``
    # iterates are mixed from iteration ``anderson_start`` on; depth 0 switches it off.
    anderson_depth: int = 5
    anderson_start: int = 100
    # The pressure-correction operator is built from the SIMPLEC coefficients d of every
    # ``pressure_operator_lag``-th iteration and held in between, so its factorisation solves it exactly
    # for that many iterations. The converged answer does not depend on it: at the fixed point the
    # correction is zero whatever operator produced it. 1 rebuilds it every iteration.
    pressure_operator_lag: int = 10


@dataclass(frozen=True, eq=False)
class FaceGeometry:
    """Interpolation geometry of the faces, computed once from the mesh."""

    d: np.ndarray
    dn: np.ndarray
    w: np.ndarray
    ls_inverse: np.ndarray

    @classmethod
    def of(cls, mesh: Mesh) -> "FaceGeometry":
        n_int = mesh.n_internal
        c = mesh.cell_centre
        d = mesh.face_centre - c[mesh.owner]
        d[:n_int] = c[mesh.neighbour[:n_int]] - c[mesh.owner[:n_int]]
        dn = np.einsum("ij,ij->i", d, mesh.face_normal)
        # Distance weights stay in (0, 1) on skewed cells, where projections onto d need not.
        w = np.ones(mesh.n_faces)
        to_owner = np.linalg.norm(mesh.face_centre[:n_int] - c[mesh.owner[:n_int]], axis=1)
        to_neighbour = np.linalg.norm(mesh.face_centre[:n_int] - c[mesh.neighbour[:n_int]], axis=1)
        w[:n_int] = to_neighbour / (to_owner + to_neighbour)
        inverse = np.empty((mesh.n_cells, 2, 2))
        K.least_squares_matrices(mesh.owner, mesh.neighbour, n_int, d, mesh.n_cells, inverse)
        return cls(d, dn, w, inverse)


@dataclass
class FlowState:
    """Cell fields u, v (m/s), p (Pa, relative to ambient), mu_eff (Pa s); face mass flux (kg/s/rad)."""

    u: np.ndarray
    v: np.ndarray
    p: np.ndarray
    mass_flux: np.ndarray
    mu_eff: np.ndarray

    @property
    def velocity(self) -> np.ndarray:
        return np.column_stack([self.u, self.v])

    def copy(self) -> "FlowState":
        return FlowState(self.u.copy(), self.v.copy(), self.p.copy(), self.mass_flux.copy(), self.mu_eff.copy())


@dataclass(eq=False)
class FlowProblem:
    """A mesh, the fluid, a condition on every boundary patch, and optional closure and sources.

    ``closure``: object with ``effective_viscosity(problem, state, (grad_u, grad_v)) -> mu_eff`` (cells),
    or None for laminar flow (see :mod:`solver.closure`). ``body_force(mesh) -> (n_cells, 2)`` force per unit volume (N/m^3), e.g. for
    manufactured solutions. ``monitors``: name -> function(problem, state) -> float, checked for convergence.
    ``resistance`` (n_cells,) kg/(m^3 s): a porous drag force -resistance * U per unit volume, implicit
    (a thin porous layer models a rotor's pressure loss).
    """

    mesh: Mesh
    density: float
    viscosity: float
    boundaries: dict[str, BoundaryCondition]
    closure: object | None = None
    body_force: Callable[[Mesh], np.ndarray] | None = None
    monitors: dict[str, Callable] = field(default_factory=dict)
    resistance: np.ndarray | None = None

    def __post_init__(self):
        missing = set(self.mesh.patches) - set(self.boundaries)
        extra = set(self.boundaries) - set(self.mesh.patches)
        if missing or extra:
            raise ValueError(f"boundary conditions do not match the mesh patches: missing {sorted(missing)}, "
                             f"unknown {sorted(extra)}")
        if not self.monitors:
            self.monitors = default_monitors(self.mesh, self.boundaries)
        self.geometry = FaceGeometry.of(self.mesh)
        self.pattern = CellMatrixPattern.from_faces(self.mesh.owner, self.mesh.neighbour,
                                                    self.mesh.n_internal, self.mesh.n_cells)

    def initial_state(self) -> FlowState:
        n, nf = self.mesh.n_cells, self.mesh.n_faces
        return FlowState(np.zeros(n), np.zeros(n), np.zeros(n), np.zeros(nf), np.full(n, self.viscosity))


def default_monitors(mesh: Mesh, boundaries: dict[str, BoundaryCondition]) -> dict[str, Callable]:
    """Engineering monitors on the open patches: the flow through each pressure-type patch (set by the
    solution) and the area-mean static pressure at each flux-type patch (e.g. the outlet: the pressure drop).
    The pressure at a pressure-type patch and the flow of a flux-type patch are imposed, so they would only
    add noise relative to their near-zero or fixed values."""
    monitors = {}
    for name, bc in boundaries.items():
        if bc.kind in ("wall", "axis"):
            continue
        faces = mesh.patch_faces(name)
        area = mesh.face_area[faces]
        cells = mesh.owner[faces]
        if bc.flux == "pressure":
            monitors[f"flow:{name}"] = lambda pb, st, f=faces: float(st.mass_flux[f].sum())
        else:
            monitors[f"pressure:{name}"] = lambda pb, st, c=cells, a=area: float((st.p[c] * a).sum() / a.sum())
    return monitors


@dataclass
class FlowSolution:
    problem: FlowProblem
    state: FlowState
    iterations: int
    converged: bool
    history: dict[str, np.ndarray]
    wall_seconds: float

    def gradients(self) -> dict[str, np.ndarray]:
        """Cell gradients (n_cells, 2) of u and v (least squares) and p (axisymmetric Green-Gauss)."""
        it = _Iteration(self.problem, SolverSettings(), self.state.copy())
        grad_u, grad_v = it.gradients()
        it.update_boundaries()
        grad_u, grad_v = it.gradients()
        return {"u": grad_u, "v": grad_v, "p": it.grad_p.copy()}

    def patch_flux(self, name: str) -> float:
        """Volumetric flow out through a patch over the full revolution (m^3/s)."""
        faces = self.problem.mesh.patch_faces(name)
        return float(2.0 * np.pi * self.state.mass_flux[faces].sum() / self.problem.density)


class _Iteration:
    """One problem's working arrays and the steps of a SIMPLEC outer iteration."""

    def __init__(self, problem: FlowProblem, settings: SolverSettings, state: FlowState):
        self.pb, self.s, self.st = problem, settings, state
        m = problem.mesh
        self.n_int, self.nb = m.n_internal, m.n_faces - m.n_internal
        self.old_velocity = state.velocity
        self.bc_slices = [(problem.boundaries[name], m.patches[name]) for name in m.patches]
        self.is_pressure_face = np.zeros(self.nb, dtype=np.bool_)
        self.is_wall_face = np.zeros(self.nb, dtype=np.bool_)
        for bc, sl in self.bc_slices:
            self.is_pressure_face[sl.start - self.n_int:sl.stop - self.n_int] = bc.flux == "pressure"
            self.is_wall_face[sl.start - self.n_int:sl.stop - self.n_int] = bc.kind == "wall"
        self.body = (problem.body_force(m) * m.cell_volume[:, None]) if problem.body_force else None
        self.hoop = 2.0 * m.cell_volume / m.cell_centre[:, 1] ** 2
        self.p_face = np.zeros(self.nb)
        self.vel_a = np.zeros((self.nb, 2))
        self.vel_b = np.ones((self.nb, 2))
        self.grad_p = np.zeros((m.n_cells, 2))
        self.momentum_solver, self.pressure_solver = linear_solvers(settings.linear_solver, problem.pattern)
        self.psi = (np.zeros(self.n_int), np.zeros(self.n_int))
        self.limiter_frozen = False
        self.pressure_operator, self.pressure_age = None, 0  # held (d, matrix, face coefficients)
        self.update_boundaries(first=True)

    def packed_state(self) -> np.ndarray:
        """The iteration's state as one vector (u, v, p, mass_flux, mu_eff), for acceleration."""
        st = self.st
        return np.concatenate([st.u, st.v, st.p, st.mass_flux, st.mu_eff])

    def unpack_state(self, x: np.ndarray):
        """Set the state from a vector of :meth:`packed_state` layout and re-impose the boundary values."""
        n, nf, st = self.pb.mesh.n_cells, self.pb.mesh.n_faces, self.st
        st.u, st.v, st.p = x[:n].copy(), x[n:2 * n].copy(), x[2 * n:3 * n].copy()
        st.mass_flux[:] = x[3 * n:3 * n + nf]
        st.mu_eff = np.maximum(x[3 * n + nf:], self.pb.viscosity)  # a mix must not undercut the laminar value
        self.old_velocity = st.velocity
        self.update_boundaries()

    def state_weights(self) -> np.ndarray:
        """Weights making the blocks of :meth:`packed_state` commensurate (see solver.acceleration)."""
        n, nf, st = self.pb.mesh.n_cells, self.pb.mesh.n_faces, self.st
        speed = max(float(np.sqrt(st.u**2 + st.v**2).max()), 1e-12)
        flux = max(float(np.abs(st.mass_flux).max()), 1e-300)
        return np.concatenate([np.full(2 * n, 1.0 / speed), np.full(n, 1.0 / (self.pb.density * speed**2)),
                               np.full(nf, 1.0 / flux), np.zeros(n)])

    def context(self, sl) -> FaceContext:
        m, st = self.pb.mesh, self.st
        own = m.owner[sl]
        return FaceContext(m.face_centre[sl], m.face_normal[sl], m.face_area[sl],
                           np.column_stack([st.u[own], st.v[own]]), st.mass_flux[sl], self.pb.density)

    def update_boundaries(self, first: bool = False):
        """Affine velocity data, face pressures and the fluxes of "fixed" conditions."""
        m, st, g = self.pb.mesh, self.st, self.pb.geometry
        own_b = m.owner[self.n_int:]
        self.p_face = st.p[own_b] + np.einsum("ij,ij->i", self.grad_p[own_b], g.d[self.n_int:])
        for bc, sl in self.bc_slices:
            ctx = self.context(sl)
            k = slice(sl.start - self.n_int, sl.stop - self.n_int)
            self.vel_a[k], self.vel_b[k] = bc.velocity_affine(ctx)
            if bc.flux == "fixed":
                st.mass_flux[sl] = bc.fixed_flux(ctx)
            else:
                self.p_face[k] = bc.pressure_value(ctx)

    def face_viscosity(self) -> np.ndarray:
        m, mu = self.pb.mesh, self.st.mu_eff
        w = self.pb.geometry.w
        mu_f = np.empty(m.n_faces)
        mu_f[:self.n_int] = w[:self.n_int] * mu[m.owner[:self.n_int]] + (1 - w[:self.n_int]) * mu[m.neighbour[:self.n_int]]
        mu_f[self.n_int:] = np.where(self.is_wall_face, self.pb.viscosity, mu[m.owner[self.n_int:]])
        return mu_f

    def gradients(self):
        m, g, st = self.pb.mesh, self.pb.geometry, self.st
        own_b = m.owner[self.n_int:]
        grads = []
        for comp, phi in enumerate((st.u, st.v)):
            face = self.vel_a[:, comp] + self.vel_b[:, comp] * phi[own_b]
            out = np.empty((m.n_cells, 2))
            K.least_squares_gradient(m.owner, m.neighbour, self.n_int, g.d, g.ls_inverse, phi, face, out)
            grads.append(out)
        K.pressure_gradient(m.owner, m.neighbour, self.n_int, g.w, m.face_normal, m.face_area, m.cell_area,
                            m.cell_volume, st.p, self.p_face, self.grad_p)
        return grads

    def momentum(self, grads, mu_f):
        """Assemble and solve both velocity components; return their normalised residuals."""
        m, g, st, s = self.pb.mesh, self.pb.geometry, self.st, self.s
        diag = np.empty(m.n_cells)
        off = np.empty((self.n_int, 2))
        bflux, bcoef = np.empty(self.nb), np.empty(self.nb)
        K.momentum_coefficients(m.owner, m.neighbour, self.n_int, g.w, g.dn, m.face_normal, m.face_area, g.d,
                                st.mass_flux, mu_f, diag, off, bflux, bcoef)
        alpha = s.velocity_relaxation
        residuals, solutions, diags = [], [], []
        for comp, phi in enumerate((st.u, st.v)):
            dg = diag.copy()
            rhs = -m.cell_volume * self.grad_p[:, comp]
            if self.body is not None:
                rhs += self.body[:, comp]
            K.apply_boundary(m.owner, self.n_int, bflux, bcoef, self.vel_a[:, comp].copy(),
                             self.vel_b[:, comp].copy(), dg, rhs)
            if comp == 1:
                dg += st.mu_eff * self.hoop
            if self.pb.resistance is not None:
                dg += self.pb.resistance * m.cell_volume
            if s.second_order:
                K.explicit_face_terms(m.owner, m.neighbour, self.n_int, g.w, g.d, g.dn, m.face_normal,
                                      m.face_area, st.mass_flux, mu_f, phi, grads[comp], grads[0], grads[1],
                                      comp, self.psi[comp], not self.limiter_frozen, rhs)
            A = self.pb.pattern.matrix(dg, off)
            residual = rhs - A @ phi
            scale = np.abs(dg).sum() * max(np.abs(st.velocity).max(), 1e-12)
            residuals.append(np.abs(residual).sum() / scale)
            rhs_relaxed = rhs + (1.0 - alpha) / alpha * dg * phi
            A = self.pb.pattern.matrix(dg / alpha, off)
            solutions.append(self.momentum_solver.solve(A, rhs_relaxed, phi))
            diags.append(dg / alpha)
        st.u, st.v = solutions
        neighbours_sum = (np.bincount(m.owner[:self.n_int], -off[:, 0], m.n_cells)
                          + np.bincount(m.neighbour[:self.n_int], -off[:, 1], m.n_cells))
        d_rc = m.cell_volume / diags[0]
        d_simplec = m.cell_volume / np.maximum(diags[0] - neighbours_sum, 1e-3 * diags[0])
        return residuals, d_rc, d_simplec

    def continuity(self, d_rc, d_simplec):
        """Rhie-Chow fluxes, the SIMPLEC pressure correction, and the corrected fields."""
        m, g, st, s, rho = self.pb.mesh, self.pb.geometry, self.st, self.s, self.pb.density
        alpha = s.velocity_relaxation
        old_flux = st.mass_flux.copy()
        K.rhie_chow_flux(m.owner, m.neighbour, self.n_int, g.w, g.d, g.dn, m.face_normal, m.face_area, rho,
                         st.velocity, st.p, self.grad_p, d_rc, alpha, old_flux, self.old_velocity, st.mass_flux)
        self.pressure_face_flux(d_rc, old_flux)
        self.update_boundaries()
        imbalance = np.empty(m.n_cells)
        K.divergence(m.owner, m.neighbour, self.n_int, st.mass_flux, imbalance)
        # Scale: the flow through the boundary; a closed domain falls back to its largest face flux.
        throughput = max(np.abs(st.mass_flux[self.n_int:]).sum(), np.abs(st.mass_flux[:self.n_int]).max(), 1e-300)
        residual = np.abs(imbalance).sum() / throughput
        if self.pressure_operator is None or self.pressure_age >= s.pressure_operator_lag:
            self.pressure_operator, self.pressure_age = self.pressure_correction_operator(d_simplec), 0
            if s.pressure_operator_lag > 1:  # held that long, it has drifted too far for the old LU
                self.pressure_solver.operator_changed()
        self.pressure_age += 1
        d_simplec, matrix, coef = self.pressure_operator  # matrix, flux and velocity corrections share it
        p_corr = self.pressure_solver.solve(matrix, -imbalance)
        K.correct_flux(m.owner, m.neighbour, self.n_int, coef, p_corr, st.mass_flux)
        own_b = m.owner[self.n_int:]
        pc_face = np.where(self.is_pressure_face, 0.0, p_corr[own_b])
        grad_pc = np.empty((m.n_cells, 2))
        K.pressure_gradient(m.owner, m.neighbour, self.n_int, g.w, m.face_normal, m.face_area, m.cell_area,
                            m.cell_volume, p_corr, pc_face, grad_pc)
        st.u = st.u - d_simplec * grad_pc[:, 0]
        st.v = st.v - d_simplec * grad_pc[:, 1]
        st.p = st.p + s.pressure_relaxation * p_corr
        self.old_velocity = st.velocity
        self.update_boundaries()
        return residual

    def pressure_correction_operator(self, d_simplec):
        """(SIMPLEC d, pressure-correction matrix, face coefficients c_f) built from ``d_simplec``."""
        m, g = self.pb.mesh, self.pb.geometry
        diag = np.empty(m.n_cells)
        off = np.empty((self.n_int, 2))
        coef = np.empty(m.n_faces)
        K.pressure_correction_coefficients(m.owner, m.neighbour, self.n_int, g.w, g.dn, m.face_area,
                                           self.pb.density, d_simplec, self.is_pressure_face, diag, off, coef)
        if not self.is_pressure_face.any():
            diag[0] += diag.sum()  # pin the pressure level: no boundary fixes it
        return d_simplec.copy(), self.pb.pattern.matrix(diag, off), coef

    def pressure_face_flux(self, d_rc, old_flux):
        """Rhie-Chow flux through faces whose pressure is set (outlets, openings)."""
        m, g, st, rho = self.pb.mesh, self.pb.geometry, self.st, self.pb.density
        f = self.n_int + np.flatnonzero(self.is_pressure_face)
        if len(f) == 0:
            return
        own = m.owner[f]
        n, S = m.face_normal[f], m.face_area[f]
        un = st.u[own] * n[:, 0] + st.v[own] * n[:, 1]
        old_un = self.old_velocity[own, 0] * n[:, 0] + self.old_velocity[own, 1] * n[:, 1]
        gpd = np.einsum("ij,ij->i", self.grad_p[own], g.d[f])
        dp = self.p_face[f - self.n_int] - st.p[own]
        alpha = self.s.velocity_relaxation
        st.mass_flux[f] = (rho * S * (un - d_rc[own] * (dp - gpd) / g.dn[f])
                           + (1 - alpha) * (old_flux[f] - rho * S * old_un))


def solve(problem: FlowProblem, settings: SolverSettings = SolverSettings(), initial: FlowState | None = None,
          progress: Callable[[int, dict], None] | None = None) -> FlowSolution:
    """Run SIMPLEC outer iterations to convergence; raise :class:`DivergenceError` if the solve blows up."""
    # One BLAS thread: the iteration's BLAS calls (dot products, the acceleration's small least squares)
    # gain nothing from threads, and threaded OpenBLAS spin-waits whenever the cores are busy (measured,
    # demo point at level normal, load 5 on 2 cores: 82.7 s with the default threads, 9.1 s with one).
    with threadpool_limits(limits=1, user_api="blas"):
        return _solve(problem, settings, initial, progress)


def _solve(problem, settings, initial, progress) -> FlowSolution:
    start = time.perf_counter()
    state = (initial or problem.initial_state()).copy()
    it = _Iteration(problem, settings, state)
    monitor = ConvergenceMonitor(settings.residual_tolerance, settings.monitor_tolerance,
                                 settings.monitor_window, settings.divergence_factor)
    accelerator = AndersonAccelerator(settings.anderson_depth) if settings.anderson_depth > 0 else None
    converged = False
    for iteration in range(1, settings.max_iterations + 1):
        accelerate = accelerator is not None and iteration >= settings.anderson_start
        if accelerate:
            x_in = it.packed_state()
        grads = it.gradients()
        if problem.closure is not None:
            state.mu_eff = problem.closure.effective_viscosity(problem, state, grads)
        mu_f = it.face_viscosity()
        (res_u, res_v), d_rc, d_simplec = it.momentum(grads, mu_f)
        res_p = it.continuity(d_rc, d_simplec)
        residuals = {"u": res_u, "v": res_v, "continuity": res_p}
        values = {name: fn(problem, state) for name, fn in problem.monitors.items()}
        values["max_speed"] = float(np.sqrt(state.u**2 + state.v**2).max())
        monitor.record(iteration, residuals, values)
        freeze_at = settings.limiter_freeze_iteration
        if not it.limiter_frozen and ((freeze_at is not None and iteration >= freeze_at)
                                      or monitor.stalled("continuity", settings.limiter_stall_window)):
            it.limiter_frozen = True
        if progress is not None:
            progress(iteration, residuals)
        if monitor.converged():
            converged = True
            break
        if accelerate:
            it.unpack_state(accelerator.mix(x_in, it.packed_state(), it.state_weights()))
    return FlowSolution(problem, state, iteration, converged, monitor.history(), time.perf_counter() - start)

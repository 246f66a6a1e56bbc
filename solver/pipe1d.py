"""Fully developed laminar and turbulent smooth-pipe flow with the solver's mixing-length closure.

Radial momentum balance, y = R − r from the wall, η = y/R:

    τ(y)/ρ = u_τ² (1 − η) = (ν + ν_t) du/dy,     ν_t = l² |du/dy|,
    l = R f_N(η) D(y⁺)     (solver.mixing_length; laminar: l = 0)

In wall units (u⁺ = u/u_τ, y⁺ = y u_τ/ν, Re_τ = u_τ R/ν) the velocity gradient g = du⁺/dy⁺ solves
l⁺² g² + g − (1 − η) = 0 pointwise, taken in the cancellation-free form

    g = 2(1 − η) / (1 + sqrt(1 + 4 l⁺² (1 − η))),

and the profile and the bulk velocity are quadratures of g (the second by parts):

    u⁺(η) = Re_τ ∫₀^η g dη',      U_b⁺ = 2∫₀¹ u⁺ (1 − η) dη = Re_τ ∫₀¹ g (1 − η)² dη.

Simpson's rule on each interval of a wall-graded grid (log-spaced in η, first node y⁺ ≈ 0.05)
makes both exact for the laminar case (g linear, g(1 − η)² cubic), so Hagen–Poiseuille is
reproduced to rounding. Re_D = U_b D/ν = 2 Re_τ U_b⁺ fixes Re_τ (brentq); λ = 8 (u_τ/U_b)².

Assumptions: smooth wall, incompressible, constant ν, fully developed (no entrance effects),
steady mean flow; the closure's model form is what is being tested against pipe data.
"""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from scipy.optimize import brentq

from geometry.wall_spacing import friction_velocity_estimate
from solver.mixing_length import MixingLengthConstants, nikuradse_length, van_driest_damping
from solver import pipe_reference

GRID_POINTS = 801  # nodes wall -> axis; 4th-order quadrature, grid error < 2e-5 on λ and U_b/U_c (tested)
FIRST_NODE_Y_PLUS = 0.05  # target y⁺ of the first node off the wall, at the estimated Re_τ


@dataclass(frozen=True, eq=False)
class PipeProfile:
    """A fully developed pipe profile in SI units; arrays run from the axis (r = 0) to the wall (r = R)."""

    r: np.ndarray  # radius, m
    u: np.ndarray  # axial velocity, m/s
    u_tau: float  # friction velocity, m/s
    tau_w_over_rho: float  # wall shear stress / density, m²/s²
    friction_factor: float  # Darcy λ = 8 (u_τ/U_b)²
    bulk_velocity: float  # m/s
    centre_velocity: float  # m/s
    re_tau: float  # u_τ R/ν
    re_d: float  # U_b D/ν
    y_plus: np.ndarray  # (R − r) u_τ/ν
    u_plus: np.ndarray  # u/u_τ
    diameter: float  # m
    nu: float  # kinematic viscosity, m²/s
    laminar: bool

    def profile_at(self, r):
        """Axial velocity (m/s) at radii ``r`` (m, 0 ≤ r ≤ R), linear interpolation on the fine grid."""
        r = np.asarray(r, dtype=float)
        if np.any(r < 0.0) or np.any(r > 0.5 * self.diameter * (1.0 + 1e-12)):
            raise ValueError(f"profile_at: r must lie in [0, {0.5 * self.diameter}] m (the pipe radius)")
        return np.interp(r, self.r, self.u)

    def scaled(self, bulk_velocity: float) -> "PipeProfile":
        """The same dimensionless profile (same Re_D, Re_τ, λ) at another bulk velocity (m/s).

        Velocities scale with U_b, τ_w/ρ with U_b²; ν is scaled with U_b so Re_D stays consistent.
        """
        if not bulk_velocity > 0.0:
            raise ValueError(f"scaled: bulk_velocity must be > 0 m/s, got {bulk_velocity!r}")
        k = bulk_velocity / self.bulk_velocity
        return replace(self, u=self.u * k, u_tau=self.u_tau * k, tau_w_over_rho=self.tau_w_over_rho * k * k,
                       bulk_velocity=bulk_velocity, centre_velocity=self.centre_velocity * k,
                       nu=self.nu * k)


@dataclass(frozen=True)
class _WallUnits:
    eta: np.ndarray  # y/R at nodes, wall (0) -> axis (1)
    u_plus: np.ndarray
    bulk_plus: float
    re_tau: float


def wall_graded_grid(re_tau_estimate: float, points: int = GRID_POINTS) -> np.ndarray:
    """Nodes η = y/R in [0, 1]: η = 0, then log-spaced from y⁺ ≈ FIRST_NODE_Y_PLUS to the axis."""
    first = min(FIRST_NODE_Y_PLUS / re_tau_estimate, 1e-2)
    return np.concatenate(([0.0], np.geomspace(first, 1.0, points - 1)))


def _gradient_plus(eta, re_tau, c: MixingLengthConstants, laminar: bool):
    """g = du⁺/dy⁺ from the quadratic l⁺² g² + g = 1 − η."""
    tau = 1.0 - eta
    if laminar:
        return tau
    l_plus = re_tau * nikuradse_length(eta, 1.0, c.nikuradse_c0, c.nikuradse_c2, c.nikuradse_c4)
    l_plus = l_plus * van_driest_damping(re_tau * eta, c.a_plus)
    return 2.0 * tau / (1.0 + np.sqrt(1.0 + 4.0 * l_plus * l_plus * tau))


def _solve_wall_units(re_tau, eta, c, laminar) -> _WallUnits:
    """u⁺ at the nodes and U_b⁺ by Simpson's rule per interval (midpoint evaluations of g)."""
    h = np.diff(eta)
    mid = 0.5 * (eta[:-1] + eta[1:])
    g_node = _gradient_plus(eta, re_tau, c, laminar)
    g_mid = _gradient_plus(mid, re_tau, c, laminar)
    du = h / 6.0 * (g_node[:-1] + 4.0 * g_mid + g_node[1:])
    u_plus = re_tau * np.concatenate(([0.0], np.cumsum(du)))
    w_node = (1.0 - eta) ** 2
    w_mid = (1.0 - mid) ** 2
    bulk = re_tau * np.sum(h / 6.0 * (w_node[:-1] * g_node[:-1] + 4.0 * w_mid * g_mid + w_node[1:] * g_node[1:]))
    return _WallUnits(eta, u_plus, float(bulk), float(re_tau))


def _profile(w: _WallUnits, diameter, nu, laminar) -> PipeProfile:
    radius = 0.5 * diameter
    u_tau = w.re_tau * nu / radius
    bulk = w.bulk_plus * u_tau
    order = slice(None, None, -1)  # store axis -> wall, so r ascends
    u_plus = w.u_plus[order]
    return PipeProfile(
        r=radius * (1.0 - w.eta[order]), u=u_plus * u_tau, u_tau=u_tau, tau_w_over_rho=u_tau * u_tau,
        friction_factor=8.0 / w.bulk_plus ** 2, bulk_velocity=bulk, centre_velocity=float(w.u_plus[-1] * u_tau),
        re_tau=w.re_tau, re_d=2.0 * w.re_tau * w.bulk_plus, y_plus=w.re_tau * w.eta[order], u_plus=u_plus,
        diameter=float(diameter), nu=float(nu), laminar=laminar)


def _check_inputs(name, value, diameter, nu):
    for key, v in ((name, value), ("D", diameter), ("nu", nu)):
        if not (isinstance(v, (int, float, np.floating)) and np.isfinite(v) and v > 0.0):
            raise ValueError(f"developed pipe: {key} must be a finite number > 0, got {v!r}")


def developed_pipe_re_tau(re_tau: float, D: float = 1.0, nu: float = 1.5e-5,
                          constants: MixingLengthConstants = MixingLengthConstants(),
                          laminar: bool = False, points: int = GRID_POINTS) -> PipeProfile:
    """Fully developed profile at a given friction Reynolds number Re_τ = u_τ R/ν (no root find)."""
    _check_inputs("re_tau", re_tau, D, nu)
    w = _solve_wall_units(float(re_tau), wall_graded_grid(re_tau, points), constants, laminar)
    return _profile(w, D, nu, laminar)


def developed_pipe(Re_D: float, D: float = 1.0, nu: float = 1.5e-5,
                   constants: MixingLengthConstants = MixingLengthConstants(),
                   laminar: bool = False, points: int = GRID_POINTS) -> PipeProfile:
    """Fully developed pipe profile at bulk Reynolds number Re_D = U_b D/ν (D in m, ν in m²/s).

    Re_τ is found by brentq on 2 Re_τ U_b⁺(Re_τ) = Re_D on a grid fixed from a smooth-pipe
    friction estimate, so the residual is smooth in Re_τ. Laminar: exact Hagen–Poiseuille.
    The turbulent closure is validated for 1e4 ≤ Re_D ≤ 1e6 (tests/validation).
    """
    _check_inputs("Re_D", Re_D, D, nu)
    re_lam = np.sqrt(2.0 * Re_D)  # Poiseuille: Re_D = Re_τ²/2, the lowest Re_τ at this Re_D
    if laminar:
        estimate = re_lam
    else:
        estimate = max(re_lam, friction_velocity_estimate(Re_D * nu / D, D, nu) * 0.5 * D / nu)
    eta = wall_graded_grid(1.1 * estimate, points)

    def residual(re_tau):
        return 2.0 * re_tau * _solve_wall_units(re_tau, eta, constants, laminar).bulk_plus - Re_D

    if laminar:
        re_tau = re_lam
    else:
        re_tau = brentq(residual, re_lam, max(0.5 * Re_D, 2.0 * re_lam), xtol=1e-12 * estimate, rtol=1e-13)
    return _profile(_solve_wall_units(re_tau, eta, constants, laminar), D, nu, laminar)


@dataclass(frozen=True)
class ModelFormPoint:
    """Signed relative deviation (model − reference)/reference of pipe1d at one published point."""

    source: str
    quantity: str
    re_d: float
    reference: float
    model: float

    @property
    def deviation(self) -> float:
        return (self.model - self.reference) / self.reference


def model_form_deviation(constants: MixingLengthConstants = MixingLengthConstants(),
                         points=pipe_reference.ALL_POINTS) -> tuple[ModelFormPoint, ...]:
    """The closure's model-form error in developed pipe flow against the published points in
    ``solver.pipe_reference`` (U_b/U_c and λ), for the calibration layer's uncertainty budget."""
    out = []
    for p in points:
        prof = developed_pipe(p.re_d, constants=constants)
        model = prof.bulk_velocity / prof.centre_velocity if p.quantity == "bulk_to_centre" else prof.friction_factor
        out.append(ModelFormPoint(p.source, p.quantity, p.re_d, p.value, float(model)))
    return tuple(out)

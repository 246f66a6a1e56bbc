"""First-cell height for a wall-resolved mesh from a smooth-pipe friction estimate.

The mixing-length closure is integrated to the wall (no wall functions), so the mesh needs its
first cell centre at y⁺ ≈ 1 or below. Before any flow is solved, the friction velocity is taken
from fully developed smooth-pipe flow at the fixture's bulk velocity and diameter:

    Re = U_b D/ν;  λ = 64/Re                                  for Re < 2300 (Hagen–Poiseuille)
    1/√λ = −2 log10(2.51/(Re √λ))                              otherwise (Colebrook 1939, ε = 0;
                                                              the Prandtl–von Kármán–Nikuradse law)
    u_τ = U_b √(λ/8),   Δy = y⁺ ν/u_τ.

Assumptions: smooth wall, fully developed flow. In a reducer the local wall shear differs from the
pipe estimate (higher in the contraction), which is why the target y⁺ should carry margin. The
switch at Re = 2300 (onset of turbulence, common practice, no source) makes λ jump.
"""
from __future__ import annotations

import numpy as np

LAMINAR_LIMIT_RE = 2300.0  # Re below which the laminar 64/Re is used [common practice, no source]


def _positive(name, value):
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0.0):
        raise ValueError(f"wall spacing: {name} must be finite and > 0, got {value!r}")
    return arr


def smooth_pipe_friction_factor(reynolds):
    """Darcy λ of a smooth pipe: 64/Re (Re < 2300), Colebrook (1939) with ε = 0 otherwise.

    Colebrook's implicit form is solved by fixed point on x = 1/√λ: x ← −2 log10(2.51 x/Re),
    a contraction (|dx_new/dx| = 0.87/x < 0.2 for Re ≥ 2300), converged to 1e-12 in < 20 steps.
    """
    re = _positive("Reynolds number", reynolds)
    turbulent_re = np.maximum(re, LAMINAR_LIMIT_RE)
    x = np.full_like(turbulent_re, 8.0)
    for _ in range(50):
        x_new = -2.0 * np.log10(2.51 * x / turbulent_re)
        if np.all(np.abs(x_new - x) <= 1e-12 * x):
            x = x_new
            break
        x = x_new
    lam = np.where(re < LAMINAR_LIMIT_RE, 64.0 / re, 1.0 / (x * x))
    return float(lam) if lam.ndim == 0 else lam


def friction_velocity_estimate(bulk_velocity, diameter, nu):
    """u_τ = U_b √(λ/8) (m/s) from the smooth-pipe λ at Re = U_b D/ν (U_b m/s, D m, ν m²/s)."""
    u_b = _positive("bulk_velocity", bulk_velocity)
    d = _positive("diameter", diameter)
    nu_arr = _positive("nu", nu)
    u_tau = u_b * np.sqrt(np.asarray(smooth_pipe_friction_factor(u_b * d / nu_arr)) / 8.0)
    return float(u_tau) if np.ndim(u_tau) == 0 else u_tau


def first_cell_height(y_plus_target, bulk_velocity, diameter, nu):
    """Wall distance Δy = y⁺ ν/u_τ (m) that puts a point at ``y_plus_target`` in developed pipe flow."""
    y_plus = _positive("y_plus_target", y_plus_target)
    height = y_plus * np.asarray(nu, dtype=float) / friction_velocity_estimate(bulk_velocity, diameter, nu)
    return float(height) if np.ndim(height) == 0 else height

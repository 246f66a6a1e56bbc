"""Turbulence closures for the 2D solver, one small class per closure in the ``CLOSURES`` registry.

A closure turns the current velocity gradients into the effective viscosity mu_eff = mu + rho nu_t.

``mixing-length``: nu_t = l^2 |S| with
    |S|^2 = 2 [(du/dx)^2 + (dv/dr)^2 + (v/r)^2] + (du/dr + dv/dx)^2   (hoop strain v/r included),
l from :func:`solver.mixing_length.mixing_length_kernel` (Nikuradse in ducts, Escudier cap in a fan
in open air, van Driest damping), y the exact distance to the nearest wall face and y+ = y u*/nu with
u* = max(u_tau of that face, sqrt(nu |S|)) (tau_w = mu |u_t| / dn of its wall cell); in the fan behind a
sharp convex edge (cells whose nearest wall point is the edge) l is capped by the free mixing layer's
alpha delta' s D(y+), s the distance from the edge (see solver.mixing_length). nu_t is under-relaxed
between outer iterations.
The still air ahead of the mouth (cells with no duct radius) is laminar, nu_t = 0, except in a sharp
edge's fan: that air is irrotational, a sink flow accelerating toward the mouth with an acceleration
parameter K = nu / U^2 dU/ds far above the ~3e-6 past which boundary layers relaminarise (Jones &
Launder 1972, Int. J. Heat Mass Transfer 15:301 [from memory]); a strain-rate mixing length there turned
irrotational strain into eddy viscosity and a spurious loss (bell mouth r/D = 0.15: K = 0.132 with it,
0.053 without, its flare counted as still air; handbooks 0.007-0.15; tests/validation/
test_idelchik_entrance_loss.py). The same anomaly remains inside ducts wherever the core is strained
irrotationally (a duct's inlet, a cone, a hub nose).
Assumptions: equilibrium (no transport of turbulence), smooth walls resolved to y+ ~ 1, no wall functions.
The floor sqrt(nu |S|) on the damping scale is our model choice for separated flow, where the wall shear
that van Driest's damping was calibrated on vanishes (it is inactive in attached pipe flow, where the
viscous stress nu |S| never exceeds u_tau^2); its effect is part of the model-form uncertainty.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .jit import jit
from .mixing_length import (MixingLengthConstants, kernel_arguments, mixing_length_kernel,
                            van_driest_damping_kernel)


@jit
def wall_friction_velocity(owner, wall_faces, normal, dn, u, v, nu, out):
    """u_tau of each wall face from the tangential velocity of its cell: sqrt(nu |u_t| / dn)."""
    for k in range(len(wall_faces)):
        f = wall_faces[k]
        p = owner[f]
        un = u[p] * normal[f, 0] + v[p] * normal[f, 1]
        ut = np.hypot(u[p] - un * normal[f, 0], v[p] - un * normal[f, 1])
        out[k] = np.sqrt(nu * ut / dn[f])


@jit
def mixing_length_viscosity(grad_u, grad_v, v, radius, wall_distance, nearest_wall, u_tau, duct_radius,
                            open_delta, shear_distance, shear_slope, nu, kappa, a_plus, c0, c2, c4, lam, out):
    """nu_t = l^2 |S| per cell (m^2/s); l <= shear_slope * shear_distance * D(y+) behind a sharp edge;
    0 in the still air (duct_radius <= 0) outside every sharp edge's fan (shear_distance = inf)."""
    for c in range(len(v)):
        if duct_radius[c] <= 0.0 and not shear_distance[c] < np.inf:
            out[c] = 0.0
            continue
        hoop = v[c] / radius[c]
        s2 = (2.0 * (grad_u[c, 0] ** 2 + grad_v[c, 1] ** 2 + hoop * hoop)
              + (grad_u[c, 1] + grad_v[c, 0]) ** 2)
        strain = np.sqrt(s2)
        y = wall_distance[c]
        # Damping velocity scale: the nearest wall's u_tau, but never below the local viscous shear scale
        # sqrt(nu |S|). Near an attached wall nu |S| <= u_tau^2, so this changes nothing there; over a
        # separated region (wall shear -> 0) it keeps the free shear layer from being damped to laminar.
        u_star = max(u_tau[nearest_wall[c]], np.sqrt(nu * strain))
        y_plus = y * u_star / nu
        length = mixing_length_kernel(y, y_plus, duct_radius[c], open_delta, kappa, a_plus, c0, c2, c4, lam)
        if shear_slope > 0.0:
            length = min(length, shear_slope * shear_distance[c] * van_driest_damping_kernel(y_plus, a_plus))
        out[c] = length * length * strain


@dataclass(eq=False)
class LaminarClosure:
    """No turbulence model: mu_eff = mu."""

    kind = "laminar"

    def effective_viscosity(self, problem, state, gradients):
        return np.full(problem.mesh.n_cells, problem.viscosity)


@dataclass(eq=False)
class MixingLengthClosure:
    """Prandtl mixing length with van Driest damping (see module docstring).

    ``wall_faces``: global indices of all wall faces; ``wall_distance`` and ``nearest_wall`` (an index into
    ``wall_faces``) per cell; ``duct_radius`` per cell (<= 0 in open regions); ``open_delta`` the length
    scale of the Escudier cap in a sharp edge's fan in open air (m); ``shear_distance`` per cell the
    distance (m) from the sharp convex edge that is its nearest wall point, downstream only (inf elsewhere;
    None: no edges). Open-air cells outside every fan are laminar.
    """

    wall_faces: np.ndarray
    wall_distance: np.ndarray
    nearest_wall: np.ndarray
    duct_radius: np.ndarray
    open_delta: float
    constants: MixingLengthConstants = field(default_factory=MixingLengthConstants)
    shear_distance: np.ndarray | None = None
    kind = "mixing-length"

    def effective_viscosity(self, problem, state, gradients):
        mesh, geo = problem.mesh, problem.geometry
        nu = problem.viscosity / problem.density
        u_tau = np.empty(len(self.wall_faces))
        wall_friction_velocity(mesh.owner, self.wall_faces, mesh.face_normal, geo.dn, state.u, state.v, nu, u_tau)
        nu_t = np.empty(mesh.n_cells)
        c = self.constants
        shear = self.shear_distance if self.shear_distance is not None else np.full(mesh.n_cells, np.inf)
        slope = c.shear_layer_alpha * c.shear_layer_spread if self.shear_distance is not None else 0.0
        mixing_length_viscosity(gradients[0], gradients[1], state.v, mesh.cell_centre[:, 1], self.wall_distance,
                                self.nearest_wall, u_tau, self.duct_radius, self.open_delta, shear, slope, nu,
                                *kernel_arguments(self.constants), nu_t)
        mu_t_old = np.maximum(state.mu_eff - problem.viscosity, 0.0)
        alpha = self.constants.nu_t_relaxation
        return problem.viscosity + (1.0 - alpha) * mu_t_old + alpha * problem.density * nu_t


CLOSURES = {"laminar": LaminarClosure, "mixing-length": MixingLengthClosure}


def first_cell_y_plus(problem, state, wall_faces: np.ndarray) -> np.ndarray:
    """y+ of the wall-adjacent cell centres, y+ = u_tau dn / nu, from each wall face's own shear."""
    nu = problem.viscosity / problem.density
    u_tau = np.empty(len(wall_faces))
    wall_friction_velocity(problem.mesh.owner, wall_faces, problem.mesh.face_normal, problem.geometry.dn,
                           state.u, state.v, nu, u_tau)
    return u_tau * problem.geometry.dn[wall_faces] / nu

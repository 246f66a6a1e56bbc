"""The velocity profile across the rotor plane, read from the solved fields.

The fixture mesher puts a mesh line at the rotor plane, so the plane is a set of faces: their mass fluxes
give the axial velocity u_f = F / (rho S n_x) exactly as the solver conserves it; the radial velocity is
interpolated from the two cells.
"""
from __future__ import annotations

import numpy as np

from .profile import RotorPlaneProfile


def plane_faces(mesh, x_plane: float, r_inner: float, r_outer: float) -> np.ndarray:
    """Internal faces lying on x = x_plane between r_inner and r_outer, sorted by radius."""
    scale = max(np.ptp(mesh.nodes[:, 0]), np.ptp(mesh.nodes[:, 1]))
    f = np.arange(mesh.n_internal)
    on = ((np.abs(mesh.face_centre[f, 0] - x_plane) < 1e-9 * scale) & (np.abs(mesh.face_normal[f, 0]) > 0.999)
          & (mesh.face_centre[f, 1] > r_inner) & (mesh.face_centre[f, 1] < r_outer))
    faces = f[on]
    if len(faces) == 0:
        raise ValueError(f"no mesh line at the rotor plane x = {x_plane * 1e3:.3f} mm")
    return faces[np.argsort(mesh.face_centre[faces, 1])]


def rotor_plane_profile(solution, x_plane: float, r_inner: float, r_outer: float, points: int = 400,
                        hub: bool = False) -> RotorPlaneProfile:
    """Profile across the rotor plane from r_inner (hub radius, or 0) to the head wall r_outer.

    Within each face the axial velocity is its flux velocity plus the face's radial gradient (interpolated
    from the two cells' least-squares gradients) times the offset from the face's radius-weighted centroid,
    so the profile carries exactly each face's flux; near the wall the wall face's own gradient carries it.
    """
    mesh, state, rho = solution.problem.mesh, solution.state, solution.problem.density
    faces = plane_faces(mesh, x_plane, r_inner, r_outer)
    n_x = mesh.face_normal[faces, 0]
    u_face = state.mass_flux[faces] / (rho * mesh.face_area[faces] * n_x)
    w = solution.problem.geometry.w[faces]
    own, nbr = mesh.owner[faces], mesh.neighbour[faces]
    grads = solution.gradients()
    du_dr = w * grads["u"][own, 1] + (1 - w) * grads["u"][nbr, 1]
    v_face = w * state.v[own] + (1 - w) * state.v[nbr]
    dv_dr = w * grads["v"][own, 1] + (1 - w) * grads["v"][nbr, 1]
    ends = np.sort(mesh.nodes[mesh.face_nodes[faces], 1], axis=1)
    # Pivot each face's linear piece on its radius-weighted centroid (int r^2 dr / int r dr), so the
    # gradient term integrates to zero against r dr and the piece carries exactly the face's flux.
    ra, rb = ends[:, 0], ends[:, 1]
    r_face = (2.0 / 3.0) * (rb**3 - ra**3) / (rb**2 - ra**2)
    # Sample radii: an even spread plus points just inside both ends of every face, so each face's
    # linear piece is represented exactly and the jumps between faces are confined to 1e-6 of a face.
    inset = 1e-6 * (ends[:, 1] - ends[:, 0])
    r = np.unique(np.concatenate([np.linspace(r_inner, r_outer, points)[1:-1], ends[:, 0] + inset,
                                  ends[:, 1] - inset, [r_inner, r_outer]]))
    k = np.clip(np.searchsorted(ends[:, 1], r), 0, len(faces) - 1)
    u = u_face[k] + du_dr[k] * (r - r_face[k])
    v = v_face[k] + dv_dr[k] * (r - r_face[k])
    return RotorPlaneProfile(r, u, v, r_inner=r_inner)


def plane_flux(solution, x_plane: float, r_inner: float, r_outer: float) -> float:
    """Volumetric flow through the rotor plane summed from the face fluxes (m^3/s, full revolution)."""
    faces = plane_faces(solution.problem.mesh, x_plane, r_inner, r_outer)
    n_x = np.sign(solution.problem.mesh.face_normal[faces, 0])
    return float(2 * np.pi * (solution.state.mass_flux[faces] * n_x).sum() / solution.problem.density)

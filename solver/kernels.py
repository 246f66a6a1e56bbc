"""Numba kernels of the finite-volume discretisation: small loops over faces or cells, writing into ``out``.

Conventions: internal faces ``f < n_int`` join owner P and neighbour N, unit normal n from P to N,
``d`` = c_N - c_P (boundary faces: face centre - c_P), ``dn`` = d . n, ``w`` = linear interpolation
weight of P. Areas and volumes are per radian (see :mod:`geometry.mesh`). Mass fluxes F are kg/s/rad,
positive from P to N (outward on the boundary). Matrix rows: A_PP phi_P + sum A_PN phi_N = b.
"""
from __future__ import annotations

import numpy as np

from .jit import jit


@jit
def limiter(r):
    """van Albada's limiter psi(r) = (r^2 + r)/(r^2 + 1) for r > 0, else 0 (van Albada, van Leer & Roberts
    1982): second order (psi(1) = 1) and smooth for r > 0, which lets the steady iteration settle where
    the kink of van Leer's limiter kept residuals cycling at 1e-3."""
    if r <= 0.0:
        return 0.0
    return (r * r + r) / (r * r + 1.0)


@jit
def least_squares_matrices(owner, neighbour, n_int, d, n_cells, out):
    """Inverse of the weighted least-squares normal matrix sum w d d^T per cell (w = 1/|d|^2), (n, 2, 2)."""
    g = np.zeros((n_cells, 3))
    for f in range(len(owner)):
        dx, dr = d[f, 0], d[f, 1]
        wgt = 1.0 / (dx * dx + dr * dr)
        p = owner[f]
        g[p, 0] += wgt * dx * dx
        g[p, 1] += wgt * dx * dr
        g[p, 2] += wgt * dr * dr
        if f < n_int:
            q = neighbour[f]
            g[q, 0] += wgt * dx * dx
            g[q, 1] += wgt * dx * dr
            g[q, 2] += wgt * dr * dr
    for c in range(n_cells):
        det = g[c, 0] * g[c, 2] - g[c, 1] * g[c, 1]
        out[c, 0, 0] = g[c, 2] / det
        out[c, 0, 1] = -g[c, 1] / det
        out[c, 1, 0] = -g[c, 1] / det
        out[c, 1, 1] = g[c, 0] / det


@jit
def least_squares_gradient(owner, neighbour, n_int, d, inverse, phi, phi_boundary, out):
    """Weighted least-squares gradient (planar, in the meridional plane) of a cell field.

    ``phi_boundary`` holds the face values of the boundary faces (index f - n_int). Exact for linear fields.
    """
    n_cells = len(phi)
    rhs = np.zeros((n_cells, 2))
    for f in range(len(owner)):
        dx, dr = d[f, 0], d[f, 1]
        wgt = 1.0 / (dx * dx + dr * dr)
        p = owner[f]
        if f < n_int:
            q = neighbour[f]
            dphi = phi[q] - phi[p]
            rhs[q, 0] += wgt * dx * dphi
            rhs[q, 1] += wgt * dr * dphi
        else:
            dphi = phi_boundary[f - n_int] - phi[p]
        rhs[p, 0] += wgt * dx * dphi
        rhs[p, 1] += wgt * dr * dphi
    for c in range(n_cells):
        out[c, 0] = inverse[c, 0, 0] * rhs[c, 0] + inverse[c, 0, 1] * rhs[c, 1]
        out[c, 1] = inverse[c, 1, 0] * rhs[c, 0] + inverse[c, 1, 1] * rhs[c, 1]


@jit
def pressure_gradient(owner, neighbour, n_int, w, normal, area, cell_area, volume, p, p_boundary, out):
    """Axisymmetric Green-Gauss gradient of pressure: (sum_f p_f S_f n - e_r p_P A_P) / V_P.

    The -e_r p_P A_P term is the pressure force of the wedge's two side faces; with it the radial
    momentum source -V grad p is the exact integral of -dp/dr for fields linear in x and r.
    """
    out[:, :] = 0.0
    for f in range(len(owner)):
        p_own = owner[f]
        if f < n_int:
            q = neighbour[f]
            pf = w[f] * p[p_own] + (1.0 - w[f]) * p[q]
            out[q, 0] -= pf * area[f] * normal[f, 0]
            out[q, 1] -= pf * area[f] * normal[f, 1]
        else:
            pf = p_boundary[f - n_int]
        out[p_own, 0] += pf * area[f] * normal[f, 0]
        out[p_own, 1] += pf * area[f] * normal[f, 1]
    for c in range(len(p)):
        out[c, 1] -= p[c] * cell_area[c]
        out[c, 0] /= volume[c]
        out[c, 1] /= volume[c]


@jit
def momentum_coefficients(owner, neighbour, n_int, w, dn, normal, area, d, mass_flux, mu_face,
                          diag, off, bnd_diag, bnd_coef):
    """Upwind convection + orthogonal (over-relaxed) diffusion, identical for both velocity components.

    Writes ``diag`` (n_cells), ``off`` (n_int, 2) = [A_PN, A_NP], and for each boundary face the
    diffusion conductance ``bnd_coef`` = mu S / dn and the flux ``bnd_diag`` = F (applied per component
    with the condition's affine data by :func:`apply_boundary`).
    """
    diag[:] = 0.0
    for f in range(n_int):
        p, q = owner[f], neighbour[f]
        F = mass_flux[f]
        D = mu_face[f] * area[f] / dn[f]
        diag[p] += max(F, 0.0) + D
        diag[q] += max(-F, 0.0) + D
        off[f, 0] = min(F, 0.0) - D
        off[f, 1] = min(-F, 0.0) - D
    for f in range(n_int, len(owner)):
        bnd_diag[f - n_int] = mass_flux[f]
        bnd_coef[f - n_int] = mu_face[f] * area[f] / dn[f]


@jit
def apply_boundary(owner, n_int, bnd_flux, bnd_coef, a, b, diag, rhs):
    """Boundary faces with face value a + b phi_P: convection F phi_f and diffusion mu S/dn (phi_f - phi_P)."""
    for k in range(len(bnd_flux)):
        p = owner[n_int + k]
        F = bnd_flux[k]
        D = bnd_coef[k]
        diag[p] += F * b[k] + D * (1.0 - b[k])
        rhs[p] += -F * a[k] + D * a[k]


@jit
def explicit_face_terms(owner, neighbour, n_int, w, d, dn, normal, area, mass_flux, mu_face,
                        phi, grad_phi, grad_u, grad_v, component, psi, update_psi, rhs):
    """Deferred-correction convection, non-orthogonal cross-diffusion and the transposed viscous stress.

    Convection: F (phi_HO - phi_UD) moved to the right-hand side, phi_HO = phi_U + psi(r) (1 - w_U)(phi_D - phi_U)
    with r = 2 grad phi_U . d / (phi_D - phi_U) - 1 (a TVD deferred correction, Khosla & Rubin 1974).
    Cross-diffusion: mu grad phi_f . (S n - S d / dn) (over-relaxed split, Jasak 1996).
    Transposed stress: mu (grad U)^T_f . n S for ``component`` 0 (u) or 1 (v).
    ``psi`` holds each internal face's limiter value; it is recomputed only when ``update_psi`` (a frozen
    limiter turns the scheme linear, so the outer iteration can converge instead of cycling).
    """
    for f in range(n_int):
        p, q = owner[f], neighbour[f]
        F = mass_flux[f]
        if F >= 0.0:
            up, dw, wu, sgn = p, q, w[f], 1.0
        else:
            up, dw, wu, sgn = q, p, 1.0 - w[f], -1.0
        delta = phi[dw] - phi[up]
        if update_psi:
            psi[f] = 0.0
            if abs(delta) > 1e-300:
                r = 2.0 * sgn * (grad_phi[up, 0] * d[f, 0] + grad_phi[up, 1] * d[f, 1]) / delta - 1.0
                psi[f] = limiter(r)
        correction = psi[f] * (1.0 - wu) * delta
        wp = w[f]
        gx = wp * grad_phi[p, 0] + (1.0 - wp) * grad_phi[q, 0]
        gr = wp * grad_phi[p, 1] + (1.0 - wp) * grad_phi[q, 1]
        tx = area[f] * (normal[f, 0] - d[f, 0] / dn[f])
        tr = area[f] * (normal[f, 1] - d[f, 1] / dn[f])
        cross = mu_face[f] * (gx * tx + gr * tr)
        if component == 0:
            tu = wp * grad_u[p, 0] + (1.0 - wp) * grad_u[q, 0]
            tv = wp * grad_v[p, 0] + (1.0 - wp) * grad_v[q, 0]
        else:
            tu = wp * grad_u[p, 1] + (1.0 - wp) * grad_u[q, 1]
            tv = wp * grad_v[p, 1] + (1.0 - wp) * grad_v[q, 1]
        transposed = mu_face[f] * area[f] * (tu * normal[f, 0] + tv * normal[f, 1])
        flux = -F * correction + cross + transposed
        rhs[p] += flux
        rhs[q] -= flux
    for f in range(n_int, len(owner)):
        p = owner[f]
        if component == 0:
            tu, tv = grad_u[p, 0], grad_v[p, 0]
        else:
            tu, tv = grad_u[p, 1], grad_v[p, 1]
        rhs[p] += mu_face[f] * area[f] * (tu * normal[f, 0] + tv * normal[f, 1])


@jit
def scatter_matrix(diag, off, diag_pos, pn_pos, np_pos, data):
    """Write diagonal and off-diagonal coefficients into a CSR data array of fixed pattern."""
    for c in range(len(diag)):
        data[diag_pos[c]] = diag[c]
    for f in range(len(pn_pos)):
        data[pn_pos[f]] = off[f, 0]
        data[np_pos[f]] = off[f, 1]


@jit
def rhie_chow_flux(owner, neighbour, n_int, w, d, dn, normal, area, density, velocity, p, grad_p,
                   d_cell, relax, old_flux, old_velocity, out):
    """Internal-face mass flux by Rhie-Chow interpolation with Majumdar's (1988) relaxation term.

    F = rho S [ U_bar . n - D_f ((p_N - p_P) - grad p_bar . d) / dn ] + (1 - alpha)(F_old - rho S U_old_bar . n),
    so the converged flux does not depend on the under-relaxation factor alpha.
    """
    for f in range(n_int):
        a, b = owner[f], neighbour[f]
        wp = w[f]
        un = ((wp * velocity[a, 0] + (1.0 - wp) * velocity[b, 0]) * normal[f, 0]
              + (wp * velocity[a, 1] + (1.0 - wp) * velocity[b, 1]) * normal[f, 1])
        gpd = ((wp * grad_p[a, 0] + (1.0 - wp) * grad_p[b, 0]) * d[f, 0]
               + (wp * grad_p[a, 1] + (1.0 - wp) * grad_p[b, 1]) * d[f, 1])
        dface = wp * d_cell[a] + (1.0 - wp) * d_cell[b]
        old_un = ((wp * old_velocity[a, 0] + (1.0 - wp) * old_velocity[b, 0]) * normal[f, 0]
                  + (wp * old_velocity[a, 1] + (1.0 - wp) * old_velocity[b, 1]) * normal[f, 1])
        out[f] = (density * area[f] * (un - dface * ((p[b] - p[a]) - gpd) / dn[f])
                  + (1.0 - relax) * (old_flux[f] - density * area[f] * old_un))


@jit
def divergence(owner, neighbour, n_int, mass_flux, out):
    """Net outward mass flux of each cell (kg/s/rad)."""
    out[:] = 0.0
    for f in range(len(owner)):
        out[owner[f]] += mass_flux[f]
        if f < n_int:
            out[neighbour[f]] -= mass_flux[f]


@jit
def pressure_correction_coefficients(owner, neighbour, n_int, w, dn, area, density, d_cell,
                                     is_pressure_face, diag, off, face_coef):
    """SIMPLEC pressure-correction matrix: c_f = rho S D_f / dn, SPD; p' = 0 on pressure faces."""
    diag[:] = 0.0
    for f in range(n_int):
        a, b = owner[f], neighbour[f]
        c = density * area[f] * (w[f] * d_cell[a] + (1.0 - w[f]) * d_cell[b]) / dn[f]
        face_coef[f] = c
        diag[a] += c
        diag[b] += c
        off[f, 0] = -c
        off[f, 1] = -c
    for f in range(n_int, len(owner)):
        c = 0.0
        if is_pressure_face[f - n_int]:
            c = density * area[f] * d_cell[owner[f]] / dn[f]
            diag[owner[f]] += c
        face_coef[f] = c


@jit
def correct_flux(owner, neighbour, n_int, face_coef, p_corr, mass_flux):
    """F -= c_f (p'_N - p'_P); on pressure faces p'_f = 0."""
    for f in range(len(owner)):
        if f < n_int:
            mass_flux[f] -= face_coef[f] * (p_corr[neighbour[f]] - p_corr[owner[f]])
        else:
            mass_flux[f] += face_coef[f] * p_corr[owner[f]]

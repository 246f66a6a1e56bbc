"""Carrying a solution from one mesh level to another (calib.pipeline.transferred_state)."""
from pathlib import Path

import numpy as np

from scipy.spatial import Delaunay

from calib.pipeline import transferred_state
from geometry.case import load_case
from geometry.fixture import build_fixture_mesh
from solver.flow import FlowState

SMALL = Path(__file__).resolve().parents[2] / "data" / "cases" / "small_tube.toml"


def test_linear_fields_carry_over_exactly_and_uniform_flow_gives_exact_fluxes():
    """Linear interpolation reproduces a linear field inside the source's hull; a uniform velocity U gives
    face fluxes rho U . n S exactly (geometry only)."""
    case = load_case(SMALL)
    coarse = build_fixture_mesh(case, "coarse").mesh
    normal = build_fixture_mesh(case, "normal").mesh
    x, r = coarse.cell_centre.T
    source = FlowState(np.full(coarse.n_cells, 7.0), np.zeros(coarse.n_cells), 2.0 + 3.0 * x - 5.0 * r,
                       np.zeros(coarse.n_faces), 1e-5 + 1e-3 * x)
    moved = transferred_state(source, coarse.cell_centre, normal, density=1.2)
    xn, rn = normal.cell_centre.T
    inside = Delaunay(coarse.cell_centre).find_simplex(normal.cell_centre) >= 0  # not the nearest-value fallback
    assert inside.mean() > 0.9
    np.testing.assert_allclose(moved.p[inside], (2.0 + 3.0 * xn - 5.0 * rn)[inside], rtol=0, atol=1e-9)
    np.testing.assert_allclose(moved.mu_eff[inside], (1e-5 + 1e-3 * xn)[inside], rtol=1e-9)
    assert not np.isnan(moved.p).any()
    np.testing.assert_allclose(moved.mass_flux, 1.2 * 7.0 * normal.face_normal[:, 0] * normal.face_area,
                               rtol=1e-12, atol=1e-15)

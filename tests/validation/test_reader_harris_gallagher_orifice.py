"""Discharge coefficient of a thin sharp-edged orifice plate, beta = 0.5, Re_D = 1e5, D and D/2 tappings.

Source: ISO 5167-2:2003, Reader-Harris/Gallagher (1998) equation, through
`fluids.flow_meter.C_Reader_Harris_Gallagher` (Bell, fluids). Plate: a `step` down to d = D/2, a bore
as long as the plate is thick (0.01 D: ISO 5167-2 wants the bore thickness e between 0.005 D and 0.02 D
and a square edge, no bevel needed then), a `step` back to D.

C = q_m / (E pi/4 d^2 sqrt(2 rho dp)), E = (1 - beta^4)^-1/2, expansibility 1 (the solver is
incompressible). dp between the wall pressures 1 D ahead of the upstream face and 0.47 D behind the
downstream face (the L1 = 1, L2' = 0.47 of the equation's D and D/2 tappings).
"""
import fluids
import numpy as np
import pytest

from calib.pipeline import PreparedFixture, solve_point
from geometry.case import parse_case

D, BETA, U = 0.10, 0.5, 15.0
d, PLATE = BETA * D, 0.01 * D
FLOW = np.pi * D**2 / 4 * U
PLATE_AT = 12 * D      # head of 2 D, then 10 D of tube


def wall_pressure(sol):
    """(x, pressure of the wall-adjacent cell) along the bore D, plate excluded."""
    mesh, p = sol.problem.mesh, sol.state.p
    x, r = mesh.cell_centre[:, 0], mesh.cell_centre[:, 1]
    duct = (x > 0.0) & (r < D / 2)
    xs, ps = [], []
    for xc in np.unique(np.round(x[duct], 9)):
        col = duct & (np.abs(x - xc) < 1e-7)
        if r[col].max() < 0.45 * D:
            continue                      # a column of the plate's bore
        k = np.flatnonzero(col)[np.argmax(r[col])]
        xs.append(x[k])
        ps.append(p[k])
    return np.array(xs), np.array(ps)


def discharge_coefficient(level: str) -> tuple[float, float]:
    """(C from the solve, C of the Reader-Harris/Gallagher equation at the same flow)."""
    data = {"title": "orifice plate", "ambient": {"mouth": "flanged"},
            "segment": [{"kind": "head", "diameter_mm": D * 1e3, "length_mm": 2 * D * 1e3},
                        {"kind": "tube", "length_mm": (PLATE_AT - 2 * D) * 1e3},
                        {"kind": "step", "to_diameter_mm": d * 1e3},
                        {"kind": "tube", "length_mm": PLATE * 1e3},
                        {"kind": "step", "to_diameter_mm": D * 1e3},
                        {"kind": "tube", "length_mm": 10 * D * 1e3}],
            "operating": {"flows_Ls": [FLOW * 1e3]}, "mesh": {"level": level}}
    prepared = PreparedFixture.build(parse_case(data, "."))
    point, sol = solve_point(prepared, FLOW)
    assert point.converged
    rho, mu = sol.problem.density, sol.problem.viscosity
    x, p = wall_pressure(sol)
    dp = np.interp(PLATE_AT - D, x, p) - np.interp(PLATE_AT + PLATE + 0.47 * D, x, p)
    velocity_of_approach = 1.0 / np.sqrt(1.0 - BETA**4)
    c = rho * FLOW / (velocity_of_approach * np.pi / 4 * d**2 * np.sqrt(2.0 * rho * dp))
    return c, fluids.flow_meter.C_Reader_Harris_Gallagher(D, d, rho, mu, rho * FLOW, taps="D")


@pytest.mark.slow
def test_orifice_discharge_coefficient_against_reader_harris_gallagher():
    """C within 5 % of ISO 5167-2's Reader-Harris/Gallagher value (0.6062 here, Re_D = 0.99e5).

    Measured 0.6014 (-0.8 %) on the coarse mesh (10.3k cells) and 0.5994 (-1.1 %) on the normal one
    (21k cells), so coarse is converged enough. The computed C grows with the plate's thickness, which
    the equation ignores inside ISO's range: 0.5956 (-1.7 %) at e = 0.005 D, 0.6121 (+1.0 %) at 0.02 D."""
    c, reference = discharge_coefficient("coarse")
    assert c == pytest.approx(reference, rel=0.05)

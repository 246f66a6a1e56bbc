"""Sudden-expansion loss d/D = 0.5 against Borda-Carnot, from the computed mechanical-energy loss.

Source: Borda-Carnot K = (1 - (d/D)^2)^2 = 0.5625 on the upstream mean velocity, uniform profiles, through
`fluids.fittings.diffuser_sharp` (method "Rennels": Rennels & Hudson 2012, Pipe Flow, sudden expansion).

K = (energy-flux-averaged total pressure extrapolated to the step from the developed region upstream, minus
the same from the developed region downstream) / (1/2 rho U^2), so both tubes' developed friction is
excluded. Head and tube d = 50 mm (40 d from a flanged mouth to the step), 50 D downstream, Re_d = 1e5.
"""
import fluids
import numpy as np
import pytest

from calib.pipeline import PreparedFixture, solve_point
from geometry.case import parse_case

d, D, U = 0.05, 0.10, 30.0
FLOW = np.pi * d**2 / 4 * U
STEP_AT = 40 * d


def energy_mean_total_pressure(sol, lo: float, hi: float):
    """(x, energy-flux-averaged total pressure) of every cell column with lo < x < hi."""
    mesh, st, rho = sol.problem.mesh, sol.state, sol.problem.density
    x = mesh.cell_centre[:, 0]
    stations, total = [], []
    for xc in np.unique(np.round(x[(x > lo) & (x < hi)], 9)):
        col = np.abs(x - xc) < 1e-7
        u, vol = st.u[col], mesh.cell_volume[col]
        p_total = st.p[col] + 0.5 * rho * (st.u[col] ** 2 + st.v[col] ** 2)
        stations.append(xc)
        total.append((p_total * u * vol).sum() / (u * vol).sum())
    return np.array(stations), np.array(total)


def expansion_k(level: str) -> float:
    data = {"title": "sudden expansion", "ambient": {"mouth": "flanged"},
            "segment": [{"kind": "head", "diameter_mm": d * 1e3, "length_mm": 2 * d * 1e3, "rotor_at_mm": d * 1e3},
                        {"kind": "tube", "length_mm": (STEP_AT - 2 * d) * 1e3},
                        {"kind": "step", "to_diameter_mm": D * 1e3},
                        {"kind": "tube", "length_mm": 50 * D * 1e3}],
            "operating": {"flows_Ls": [FLOW * 1e3]}, "mesh": {"level": level}}
    prepared = PreparedFixture.build(parse_case(data, "."))
    point, sol = solve_point(prepared, FLOW)
    if not point.converged:  # a real failure, not the expected one
        pytest.fail(f"no convergence in {point.iterations} iterations")
    # developed stretches: upstream 25..37 d from the mouth; downstream from 20 D on (the total pressure
    # falls at the developed friction rate from about 10 D behind the step)
    at_step = []
    for lo, hi in ((STEP_AT - 15 * d, STEP_AT - 3 * d), (STEP_AT + 20 * D, STEP_AT + 45 * D)):
        x, total = energy_mean_total_pressure(sol, lo, hi)
        at_step.append(np.polyval(np.polyfit(x - STEP_AT, total, 1), 0.0))
    return (at_step[0] - at_step[1]) / (0.5 * sol.problem.density * U**2)


@pytest.mark.slow
def test_sudden_expansion_against_borda_carnot():
    """K within 10 % of Borda-Carnot's 0.5625. Measured 0.607 (+7.9 %) on the coarse mesh (356 iterations)
    and 0.606 (+7.6 %) on the normal one (315 iterations); the same to 3 digits before and after the still
    air ahead of the mouth became laminar (the loss is taken between developed stretches).

    The loss is set by the step face's pressure. With the wall-distance length alone the shear layer
    leaving the lip saw l = kappa x (distance to the lip corner, ~0.3 x) and the face sat 0.124 (1/2 rho
    U^2) below the upstream pressure (K = 0.691, +23 %); with the free-mixing-layer cap in the lip's fan
    the face sits 0.011 below it. The cap's slope alpha delta' moves K little: 0.606 / 0.607 / 0.615 for
    delta' x 0.5 / 1 / 4 (coarse). Computed reattachment (the last wall cell with reversed flow) 11.4
    (coarse) / 11.5 (normal) step heights behind the face, longer than the 8-9 of turbulent
    sudden-expansion experiments [from memory]."""
    k = expansion_k("coarse")
    assert k == pytest.approx(fluids.fittings.diffuser_sharp(Di1=d, Di2=D, method="Rennels"), rel=0.10)

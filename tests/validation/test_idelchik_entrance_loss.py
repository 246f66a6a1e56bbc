"""Entrance loss of a pipe drawing from still air, from the computed mechanical-energy loss.

Sources (through the `fluids` package, Bell 2016-2024, fittings module):
* sharp-edged flush (flanged) inlet: Idelchik, Handbook of Hydraulic Resistance, K = 0.5
  (`fluids.fittings.entrance_sharp`; the other methods there give 0.50-0.57);
* rounded (bell) inlet r/D = 0.15: `fluids.fittings.entrance_rounded`, methods Rennels, Idelchik, Crane,
  Miller, Swamee, Harris: 0.149 / 0.067 / 0.04 / 0.062 / 0.106 / 0.0066.

K = (energy-flux-averaged total-pressure loss, extrapolated to the inlet plane from the developed region,
so the developed friction of the tube is excluded) / (1/2 rho U^2), at Re_D = 1e5 (D = 50 mm, air).

The other usual definition, static pressure and mean velocity head (K_s = -p_static / (1/2 rho U^2) - 1,
the kinetic-energy coefficient taken as 1; common practice, no source), differs by alpha - 1, and the
computed developed profile has alpha = 1.064. Measured at level normal: flanged K = 0.474, K_s = 0.539;
bell K = 0.132, K_s = 0.196. No one definition puts both inside their handbook spreads (flanged 0.50-0.57,
bell <= 0.149), so the miss is the model's, not the definition's; the energy form is kept.
"""
import fluids
import numpy as np
import pytest

from calib.pipeline import PreparedFixture, solve_point
from geometry.case import parse_case

D, U = 0.05, 30.0
FLOW = np.pi * D**2 / 4 * U


def entrance_k(ambient: dict, level="normal"):
    data = {"title": "entrance", "ambient": ambient,
            "segment": [{"kind": "head", "diameter_mm": D * 1e3, "length_mm": 2 * D * 1e3, "rotor_at_mm": D * 1e3},
                        {"kind": "tube", "length_mm": 40 * D * 1e3}],
            "operating": {"flows_Ls": [FLOW * 1e3]}, "mesh": {"level": level}}
    prepared = PreparedFixture.build(parse_case(data, "."))
    point, sol = solve_point(prepared, FLOW)
    assert point.converged
    mesh, st, rho = sol.problem.mesh, sol.state, sol.problem.density
    x = mesh.cell_centre[:, 0]
    stations, total = [], []
    for xc in np.unique(np.round(x, 9)):
        col = np.abs(x - xc) < 1e-9
        if not 20 * D < xc < 38 * D or mesh.cell_centre[col, 1].max() > D / 2:
            continue
        u, vol = st.u[col], mesh.cell_volume[col]
        p_total = st.p[col] + 0.5 * rho * (st.u[col] ** 2 + st.v[col] ** 2)
        stations.append(xc)
        total.append((p_total * u * vol).sum() / (u * vol).sum())
    slope, at_inlet = np.polyfit(stations, total, 1)
    return -at_inlet / (0.5 * rho * U**2)


@pytest.mark.slow
def test_flanged_sharp_inlet_against_idelchik():
    """K within 10 % of Idelchik's 0.5. Measured 0.474 (-5 %): 5 % below the low end of the handbook
    spread (0.50-0.57); the mixing-length closure's separated shear layer at the lip is the likely cause."""
    k = entrance_k({"mouth": "flanged"})
    assert k == pytest.approx(fluids.fittings.entrance_sharp(method="Idelchik"), rel=0.10)


@pytest.mark.slow
def test_bell_mouth_within_handbook_spread():
    """r/D = 0.15: K inside the spread of the handbook methods. Measured 0.132, near the top of the spread
    (Rennels 0.149) and twice Idelchik's 0.067: the closure's developing boundary layer is too lossy."""
    k = entrance_k({"mouth": "bell", "bell_radius_mm": 0.15 * D * 1e3})
    methods = ("Rennels", "Idelchik", "Crane", "Miller", "Swamee", "Harris")
    handbook = [fluids.fittings.entrance_rounded(Di=D, rc=0.15 * D, method=m) for m in methods]
    assert min(handbook) <= k <= max(handbook)
    assert k < fluids.fittings.entrance_sharp(method="Idelchik") / 3  # rounding removes most of the loss

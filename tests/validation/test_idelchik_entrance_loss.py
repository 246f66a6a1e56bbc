"""Entrance loss of a pipe drawing from still air, from the computed mechanical-energy loss.

Sources (through the `fluids` package, Bell 2016-2024, fittings module):
* sharp-edged flush (flanged) inlet: Idelchik, Handbook of Hydraulic Resistance, K = 0.5; the methods of
  `fluids.fittings.entrance_sharp` (Rennels, Swamee, Blevins, Idelchik, Crane, Miller) give 0.50-0.57;
* rounded (bell) inlet r/D = 0.15: `fluids.fittings.entrance_rounded`, methods Rennels, Idelchik, Crane,
  Miller, Swamee, Harris: 0.149 / 0.067 / 0.04 / 0.062 / 0.106 / 0.0066.

K = (energy-flux-averaged total-pressure loss, extrapolated to the inlet plane from the developed region,
so the developed friction of the tube is excluded) / (1/2 rho U^2), at Re_D = 1e5 (D = 50 mm, air).

The other usual definition, static pressure and mean velocity head (K_s = -p_static / (1/2 rho U^2) - 1,
the kinetic-energy coefficient taken as 1; common practice, no source), differs by alpha - 1, and the
computed developed profile has alpha = 1.064. Measured (level normal): flanged K = 0.395, K_s = 0.460;
bell K = 0.053, K_s = 0.115.

History of the figures: while the closure gave the still air ahead of the mouth a strain-rate eddy
viscosity, that irrotational sink flow lost about 0.07-0.08 of a velocity head before the inlet plane
(bell 0.124 of its 0.132), a loss with no physical cause; the flanged K read 0.474, close to the
handbooks for a wrong reason. With the still air laminar (solver.closure) the flanged K is 0.400 / 0.395 /
0.390 (coarse / normal / fine, converging away from the spread), the bell 0.0915 / 0.074 / 0.0646 while
its flare kept a duct's eddy viscosity (mu_t / mu up to 1300 in its irrotational core) and 0.0728 /
0.0530 / 0.0434 with the flare counted as still air too (geometry.fixture).
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
@pytest.mark.xfail(strict=True, reason="measured K = 0.395 (level normal), 21 % below the spread 0.50-0.57")
def test_flanged_sharp_inlet_within_handbook_spread():
    """K inside the spread of the handbook methods (0.50-0.57). MISSES: measured 0.395 at level normal
    (0.390 fine), -21 % against Idelchik's 0.5. Confining the lip's shear layer to the free-mixing-layer
    length over the first 0.2 / 1 / 4 D of the head (coarse) gave 0.410 / 0.398 / 0.372, so the
    shear layer's mixing length does not carry the miss. It does set the vena contracta (from the peak
    core velocity, level normal): Cc = 0.757 as the closure stands, 0.603 with the cap over the first D
    (sharp inlets contract to about 0.6 [from memory]), yet the mixed-out loss is the same from 2 D on
    (0.423 against 0.421 velocity heads) and K = 0.394."""
    k = entrance_k({"mouth": "flanged"})
    handbook = [fluids.fittings.entrance_sharp(method=m) for m in fluids.fittings.entrance_sharp_methods]
    assert min(handbook) <= k <= max(handbook)


@pytest.mark.slow
def test_bell_mouth_within_handbook_spread():
    """r/D = 0.15: K inside the spread of the handbook methods. Measured 0.053 at level normal (0.0434
    fine, inside the issue's 0.03-0.05), between Crane's 0.04 and Miller's 0.062. The part lost by
    x = 0.05 D falls with the mesh (0.061 / 0.037 / 0.028 coarse / normal / fine, Richardson estimate
    of K about 0.034): numerical loss in the laminar approach flow, not yet mesh-converged."""
    k = entrance_k({"mouth": "bell", "bell_radius_mm": 0.15 * D * 1e3})
    methods = ("Rennels", "Idelchik", "Crane", "Miller", "Swamee", "Harris")
    handbook = [fluids.fittings.entrance_rounded(Di=D, rc=0.15 * D, method=m) for m in methods]
    assert min(handbook) <= k <= max(handbook)
    assert k < fluids.fittings.entrance_sharp(method="Idelchik") / 3  # rounding removes most of the loss

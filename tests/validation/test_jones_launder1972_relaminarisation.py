"""The still air drawn into a mouth accelerates past the relaminarisation threshold, as the closure assumes.

Source: Jones & Launder 1972, "The prediction of laminarization with a two-equation model of
turbulence", Int. J. Heat Mass Transfer 15:301, and the experiments it draws on (Launder 1964; also
Narasimha & Sreenivasan 1979): boundary layers relaminarise when the acceleration parameter
K = nu / U^2 dU/ds exceeds about 3e-6 [threshold from memory]. solver.closure treats the still air ahead
of the mouth (outside a sharp edge's fan) as laminar on that ground; this test checks the premise on the
computed flow of the example cases at their largest flow (K scales as 1/Q, so the largest flow is the
worst case) and of a bell mouth, whose flare counts as still air.

Measured (coarse): K < 3e-6 in a volume fraction of 2.0e-5 (demo reducer, 60 L/s), 2.1e-5 (tube-fed
head, 40 L/s) and 1.3e-4 (bell r/D = 0.15, 58.9 L/s) of the moving still air; for the first two all
of it within 1 mm ahead of the lip (the demo's flanged plate, the tube-fed head's thin-wall front face),
where the flow slows toward the wall; median K 2.2e-4, 6.2e-4 and 1.3e-4, 40-200 times the threshold.
"""
from pathlib import Path

import numpy as np
import pytest

from calib.pipeline import PreparedFixture, solve_point
from geometry.case import load_case, parse_case

CASES = Path(__file__).resolve().parents[2] / "cases"
THRESHOLD = 3e-6


# A bell mouth r/D = 0.15 on a 50 mm tube (the entrance-loss test's fixture): its flare is still air too.
BELL = {"title": "bell mouth", "ambient": {"mouth": "bell", "bell_radius_mm": 7.5},
        "segment": [{"kind": "head", "diameter_mm": 50, "length_mm": 100, "rotor_at_mm": 50},
                    {"kind": "tube", "length_mm": 600}],
        "operating": {"flows_Ls": [58.9]}, "mesh": {"level": "coarse"}}


def acceleration_parameter(case_file: str):
    """(K per still-air cell moving faster than 1 % of the mouth's mean velocity, their volumes)."""
    case = parse_case(BELL, ".") if case_file == "bell" else load_case(CASES / case_file)
    prepared = PreparedFixture.build(case, level="coarse")
    flow = max(case.operating.flows)
    point, sol = solve_point(prepared, flow, warn_wall=False)
    assert point.converged
    st, problem = sol.state, sol.problem
    gradients = sol.gradients()
    grad_u, grad_v = gradients["u"], gradients["v"]
    speed = np.maximum(np.hypot(st.u, st.v), 1e-300)
    # dU/ds along the streamline: (u . grad) |U| with grad |U| = (u grad u + v grad v) / |U|
    grad_speed = (st.u[:, None] * grad_u + st.v[:, None] * grad_v) / speed[:, None]
    along = (st.u * grad_speed[:, 0] + st.v * grad_speed[:, 1]) / speed
    k = problem.viscosity / problem.density * along / speed**2
    mouth_mean = flow / (np.pi * prepared.fixture.mouth_radius**2)
    still = (np.asarray(prepared.fixture.duct_radius) <= 0.0) & (speed > 0.01 * mouth_mean)
    return k[still], problem.mesh.cell_volume[still]


@pytest.mark.slow
@pytest.mark.parametrize("case_file", ["reducer_hub.toml", "tube_fed_head.toml", "bell"])
def test_still_air_accelerates_past_the_relaminarisation_threshold(case_file):
    k, volume = acceleration_parameter(case_file)
    below = volume[k < THRESHOLD].sum() / volume.sum()
    assert below < 1e-3
    assert np.median(k) > 10 * THRESHOLD

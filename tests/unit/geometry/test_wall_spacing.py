"""First-cell height from the smooth-pipe friction estimate, checked against the `fluids` library."""
import subprocess
import sys

import numpy as np
import pytest
from fluids.friction import Colebrook, friction_laminar

from geometry.wall_spacing import first_cell_height, friction_velocity_estimate, smooth_pipe_friction_factor


@pytest.mark.parametrize("re", [2400.0, 4e3, 1e4, 5e4, 1e5, 1e6, 1e7, 1e8])
def test_turbulent_friction_matches_fluids_colebrook(re):
    """Colebrook (1939) with ε = 0, reference `fluids.friction.Colebrook(Re, 0)` (fluids 1.3.1); bound 1 %."""
    assert smooth_pipe_friction_factor(re) == pytest.approx(Colebrook(re, 0.0), rel=0.01)


@pytest.mark.parametrize("re", [100.0, 1000.0, 2200.0])
def test_laminar_friction_matches_fluids(re):
    """Hagen–Poiseuille λ = 64/Re, reference `fluids.friction.friction_laminar`."""
    assert smooth_pipe_friction_factor(re) == pytest.approx(friction_laminar(re), rel=1e-12)


def test_friction_velocity_and_first_cell_height_are_consistent():
    """u_τ = U_b √(λ/8) with fluids' λ; Δy u_τ/ν returns the target y+."""
    u_b, d, nu = 8.0, 0.3, 1.5e-5
    re = u_b * d / nu
    u_tau = friction_velocity_estimate(u_b, d, nu)
    assert u_tau == pytest.approx(u_b * np.sqrt(Colebrook(re, 0.0) / 8.0), rel=0.005)
    assert first_cell_height(1.0, u_b, d, nu) * u_tau / nu == pytest.approx(1.0, rel=1e-12)


def test_array_inputs():
    heights = first_cell_height(np.array([0.5, 1.0]), np.array([2.0, 10.0]), 0.2, 1.5e-5)
    assert heights.shape == (2,) and np.all(heights > 0.0)


@pytest.mark.parametrize("args", [(0.0, 5.0, 0.2, 1.5e-5), (1.0, -5.0, 0.2, 1.5e-5),
                                  (1.0, 5.0, 0.0, 1.5e-5), (1.0, 5.0, 0.2, float("nan"))])
def test_refuses_bad_input(args):
    with pytest.raises(ValueError, match="must be finite and > 0"):
        first_cell_height(*args)


def test_geometry_does_not_import_solver():
    """Data flows one way: geometry never imports solver (project rule)."""
    code = "import sys, geometry.wall_spacing; print('solver' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"

"""Darcy friction factor of the developed-pipe closure vs Colebrook (1939), smooth wall.

Source: C. F. Colebrook (1939), J. Inst. Civ. Eng. 11:133, 1/√λ = −2 log10(ε/(3.7 D) + 2.51/(Re √λ)),
evaluated with the general reference library `fluids` (fluids.friction.Colebrook(Re, eD=0), fluids
1.3.1; the formula is verified from its docstring, REFERENCES.md §1.2). Bound: 4 % for
1e4 ≤ Re_D ≤ 1e6.

Measured (model − Colebrook)/Colebrook, default constants:
    Re_D 1e4 +3.77 %, 2e4 +0.94 %, 5e4 −0.84 %, 1e5 −1.49 %, 2e5 −1.85 %, 5e5 −2.12 %, 1e6 −2.24 %.
The largest deviation is at the low end, where the damped Nikuradse length over-predicts friction.
"""
import pytest
from fluids.friction import Colebrook

from solver.pipe1d import developed_pipe


@pytest.mark.parametrize("re_d", [1e4, 2e4, 5e4, 1e5, 2e5, 5e5, 1e6])
def test_friction_factor_within_4_percent_of_colebrook(re_d):
    model = developed_pipe(re_d).friction_factor
    reference = Colebrook(re_d, 0.0)
    assert abs(model - reference) / reference <= 0.04

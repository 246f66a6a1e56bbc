"""Darcy friction factor of the developed-pipe closure vs the DNS of Pirozzoli et al. (2021).

Source: S. Pirozzoli, J. Romero, M. Fatica, R. Verzicco & P. Orlandi (2021), J. Fluid Mech. 926, A28,
Table 1 (CC-BY 4.0)
[verified: paper text, REFERENCES.md §1.2]. Bound: 4 % (the bound used for the friction laws).

Measured (model − DNS)/DNS: Re_b 17000 +0.64 %, 44000 −0.02 %, 82500 +0.66 %, 133000 +0.55 %,
285000 +0.25 %.
"""
import pytest

from solver.pipe1d import developed_pipe

TABLE_1 = [(17000.0, 0.02716), (44000.0, 0.02136), (82500.0, 0.01836), (133000.0, 0.01659),
           (285000.0, 0.01428)]


@pytest.mark.parametrize("re_b, friction_factor", TABLE_1)
def test_friction_factor_within_4_percent_of_dns(re_b, friction_factor):
    model = developed_pipe(re_b).friction_factor
    assert abs(model - friction_factor) / friction_factor <= 0.04

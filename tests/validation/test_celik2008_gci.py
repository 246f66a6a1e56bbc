"""Grid convergence index against the worked example of Celik, Ghia, Roache, Freitas,
Coleman & Raad 2008, "Procedure for estimation and reporting of uncertainty due to
discretization in CFD applications", J. Fluids Eng. 130, 078001, Table 1.

Inputs (2-D): column 1 N = 18000/8000/4500, phi = 6.063/5.972/5.863 and the oscillatory
column N = 18000/4500/980, phi = 6.0042/5.9624/6.0909 [verified: public implementations'
tests, REFERENCES §9]. Expected outputs: p = 1.5339689568 and 1.50769168965 (asserted by
the `oscar-monsalve/GCI` test-suite), phi_ext 6.168496, GCI_fine 2.175 %, GCI_coarse 4.113 %,
asymptotic ratio 1.015 (PyPI pyGCS 1.1.1, verified); Celik's printed 1.53 / 6.1685 /
e_a 1.5 % / e_ext 1.7 % / 2.17 % (from memory, agree). Measured: p differs from the
published test value by 4e-8 relative (iteration tolerance), the oscillatory p by 2e-8.
"""
import math

import pytest

from calib.uncertainty import SAFETY_NO_ORDER, gci_three_grids

MONOTONE = ((18000, 8000, 4500), (6.063, 5.972, 5.863))
OSCILLATORY = ((18000, 4500, 980), (6.0042, 5.9624, 6.0909))


def test_table1_column1_monotone():
    """Celik 2008 Table 1, column 1 (values as listed in the module docstring)."""
    r = gci_three_grids(*MONOTONE, dim=2)
    assert r.r21 == pytest.approx(1.5, rel=1e-12)
    assert r.r32 == pytest.approx(4.0 / 3.0, rel=1e-12)
    assert r.p == pytest.approx(1.5339689568, rel=1e-6)
    assert r.phi_ext == pytest.approx(6.168496, abs=1e-6)
    assert r.e_a21 == pytest.approx(0.0150, abs=5e-5)
    assert r.e_ext21 == pytest.approx(0.0171, abs=5e-5)
    assert r.gci_fine21 == pytest.approx(0.02175, abs=5e-6)
    assert r.gci_coarse32 == pytest.approx(0.04113, abs=5e-6)
    assert r.asymptotic_ratio == pytest.approx(1.015, abs=1e-3)
    assert not r.oscillatory and not r.fallback


def test_oscillatory_column():
    """Celik 2008 Table 1, oscillatory case (s = -1): p = 1.50769168965."""
    r = gci_three_grids(*OSCILLATORY, dim=2)
    assert r.oscillatory
    assert r.r21 == pytest.approx(2.0, rel=1e-12)
    assert r.p == pytest.approx(1.50769168965, rel=1e-6)
    assert r.e_a21 == pytest.approx(abs(5.9624 - 6.0042) / 6.0042, rel=1e-12)


def test_exact_power_law_recovers_order():
    """Analytic check: phi_i = phi_exact + C h_i^p with p = 2 must give p = 2 and
    phi_ext = phi_exact (Richardson extrapolation is exact for a pure power law),
    here with unequal ratios so the q(p) term of Celik Eq. 3b matters."""
    n = (64000, 16000, 2000)
    h = [(1.0 / ni) ** 0.5 for ni in n]
    phi = [1.0 + 0.3 * hi ** 2 for hi in h]
    r = gci_three_grids(n, phi, dim=2)
    assert r.p == pytest.approx(2.0, rel=1e-9)
    assert r.phi_ext == pytest.approx(1.0, rel=1e-12)
    # GCI32 is relative to phi2 and GCI21 to phi1, so the ratio is exactly phi1/phi2 here.
    assert r.asymptotic_ratio == pytest.approx(phi[0] / phi[1], rel=1e-9)


def test_equal_fine_solutions_fall_back_conservatively():
    """phi1 = phi2 leaves p undefined; the documented fallback uses F_s = 3 (Roache 1997)
    and p = 1 on the largest change, so the band is not zero."""
    r = gci_three_grids((18000, 8000, 4500), (6.0, 6.0, 5.9), dim=2)
    assert r.fallback and math.isnan(r.phi_ext) and "undefined" in r.note
    assert r.gci_fine21 == pytest.approx(SAFETY_NO_ORDER * (0.1 / 6.0) / (1.5 - 1.0), rel=1e-12)

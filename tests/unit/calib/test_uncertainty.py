"""calib.uncertainty: input validation and edge cases (published checks live in
tests/validation/test_celik2008_gci.py, test_gum_jcgm100.py, test_iso13528_en.py)."""
import math

import numpy as np
import pytest

from calib.uncertainty import (Budget, Component, combine, coverage_factor, expanded,
                               gci_three_grids, welch_satterthwaite)


@pytest.mark.parametrize("n_cells", [(4500, 8000, 18000), (18000, 8000), (18000, 18000, 4500)])
def test_gci_refuses_bad_grid_order(n_cells):
    with pytest.raises(ValueError, match="n_cells"):
        gci_three_grids(n_cells, (1.0, 1.1, 1.3))


def test_gci_all_equal_is_zero_band_and_flagged():
    r = gci_three_grids((18000, 8000, 4500), (2.0, 2.0, 2.0))
    assert r.fallback and r.gci_fine21 == 0.0


def test_gci_three_dimensional_ratio():
    r = gci_three_grids((8000, 1000, 125), (1.0, 1.01, 1.04), dim=3)
    assert r.r21 == pytest.approx(2.0) and r.r32 == pytest.approx(2.0)
    assert r.p == pytest.approx(math.log(3.0) / math.log(2.0), rel=1e-9)


@pytest.mark.parametrize("args", [
    ([1.0, 2.0], [0.1]), ([], []), ([1.0], [-0.1]), ([1.0], [float("nan")]),
])
def test_combine_refuses_bad_lists(args):
    with pytest.raises(ValueError):
        combine(*args)


@pytest.mark.parametrize("r", [np.eye(3), [[1.0, 0.5], [0.4, 1.0]], [[1.0, 2.0], [2.0, 1.0]],
                               [[0.9, 0.0], [0.0, 1.0]]])
def test_combine_refuses_bad_correlation(r):
    with pytest.raises(ValueError, match="correlation"):
        combine([1.0, 1.0], [0.1, 0.1], r)


def test_other_validation():
    with pytest.raises(ValueError):
        expanded(-1.0)
    with pytest.raises(ValueError):
        welch_satterthwaite([0.1], [0])
    with pytest.raises(ValueError):
        coverage_factor(0.0)


def test_budget_prints_rows():
    b = Budget((Component("volume", 0.001, 2.0, 9, "normal"),), unit="m^3/s")
    lines = str(b).splitlines()
    assert len(lines) == 3 and lines[1].startswith("volume")
    assert b.effective_dof() == pytest.approx(9.0)

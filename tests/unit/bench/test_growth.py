"""The benchmark's cost-growth fit: wall exponent and its split into iterations and cost per iteration."""
import importlib.util
from pathlib import Path

import pytest

BENCH = Path(__file__).resolve().parents[3] / "bench" / "run.py"


@pytest.fixture(scope="module")
def bench():
    spec = importlib.util.spec_from_file_location("bench_run", BENCH)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_power_laws_are_recovered_and_the_parts_add_up(bench):
    """Rows built as iterations = 7 N^0.4 and wall = 2e-6 N^1.5 (exact power laws, so the log-log fit is
    exact): the fit returns 1.5, 0.4 and 1.1."""
    rows = [{"case": f"demo-point-{lv}", "cells": n, "iterations": 7 * n**0.4, "wall_s": 2e-6 * n**1.5}
            for lv, n in (("coarse", 5000), ("normal", 11000), ("fine", 27000))]
    rows.append({"case": "demo-table-6x3", "cells": 27000, "iterations": 1, "wall_s": 99.0})  # not a point: ignored
    parts = bench.growth_parts(rows)
    assert bench.scaling_exponent(rows) == pytest.approx(1.5, abs=1e-12)
    assert parts["iterations"] == pytest.approx(0.4, abs=1e-12)
    assert parts["per_iteration"] == pytest.approx(1.1, abs=1e-12)


def test_one_point_gives_no_exponent(bench):
    rows = [{"case": "demo-point-normal", "cells": 11000, "iterations": 300, "wall_s": 2.5}]
    assert bench.scaling_exponent(rows) is None

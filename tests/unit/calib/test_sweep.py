"""Sweeps as jobs: every executor gives the serial numbers, the store resumes, divergence is contained.

These are consistency checks between executors and runs of this program (same inputs, same
floating-point operations), not validations against an outside reference.
"""
import csv
import json
import os
import shutil
import signal
import subprocess
import sys
import time
import tomllib
from pathlib import Path

import numpy as np
import pytest

import calib.sweep as sweep
from calib.cli import main
from calib.correction import SweepDiverged, correction_table
from calib.store import STORE_FOLDER, PointStore, point_key
from geometry.case import load_case, parse_case
from solver.convergence import DivergenceError
from solver.flow import SolverSettings

SMALL = Path(__file__).resolve().parents[2] / "data" / "cases" / "small_tube.toml"
LEVELS = ("coarse",)  # small_tube's own level: what `airbias table --levels 1` solves
SAME = 1e-12  # relative: the same operations in the same order must give the same floats


def _counting(monkeypatch):
    """Count the solves of this process (serial runs) by wrapping the sweep's solve_point."""
    calls = []
    real = sweep.solve_point

    def counted(prepared, flow, *args, **kwargs):
        calls.append((prepared.level, flow))
        return real(prepared, flow, *args, **kwargs)

    monkeypatch.setattr(sweep, "solve_point", counted)
    return calls


@pytest.fixture(scope="module")
def serial(tmp_path_factory):
    """The serial table of small_tube with a fresh store: (run, store folder, solves counted)."""
    store = tmp_path_factory.mktemp("serial") / STORE_FOLDER
    with pytest.MonkeyPatch.context() as mp:
        calls = _counting(mp)
        run = correction_table(load_case(SMALL), levels=LEVELS, workers=1, store_dir=store)
    return run, store, len(calls)


def _assert_same_points(a, b):
    assert [(p.level, p.flow) for p in a] == [(p.level, p.flow) for p in b]
    for p, q in zip(a, b):
        assert p.iterations == q.iterations and p.cells == q.cells
        for name in ("u", "v"):
            np.testing.assert_allclose(getattr(q.profile, name), getattr(p.profile, name), rtol=SAME, atol=0)
        assert q.pressure_drop_Pa == pytest.approx(p.pressure_drop_Pa, rel=SAME, abs=0)


def _assert_same_tables(a, b):
    assert len(a.rows) == len(b.rows)
    for r, s in zip(a.rows, b.rows):
        for name in ("flow_Ls", "indicated_Ls", "K", "K_U95", "u_model", "u_model_form", "pressure_drop_Pa"):
            assert getattr(s, name) == pytest.approx(getattr(r, name), rel=SAME, abs=0), name
        assert r.notes == s.notes


def test_serial_run_solves_each_point_once(serial):
    run, store, solves = serial
    # 2 flows on one level + 3 closure constants x 2 ends at the middle flow
    assert solves == 2 + 6 == run.solved_count
    assert len(PointStore(store).keys()) == 8
    assert set(run.model_perturbations) == {"kappa", "a_plus", "escudier_lambda"}


def test_process_pool_matches_serial(serial):
    run, _, _ = serial
    pooled = correction_table(load_case(SMALL), levels=LEVELS, workers=2)
    _assert_same_points(run.points, pooled.points)
    _assert_same_tables(run.table, pooled.table)
    for name, ends in run.model_perturbations.items():
        np.testing.assert_allclose(pooled.model_perturbations[name], ends, rtol=SAME, atol=0)
    for flow, solution in run.solutions.items():
        np.testing.assert_allclose(pooled.solutions[flow].state.u, solution.state.u, rtol=SAME, atol=0)


def test_store_rerun_solves_nothing(serial, monkeypatch):
    run, store, _ = serial
    calls = _counting(monkeypatch)
    again = correction_table(load_case(SMALL), levels=LEVELS, workers=1, store_dir=store)
    assert calls == [] and again.solved_count == 0
    assert again.table.to_csv_text() == run.table.to_csv_text()
    np.testing.assert_array_equal(again.solutions[8e-3].state.p, run.solutions[8e-3].state.p)


def _three_flow_case():
    text = SMALL.read_text().replace("flows_Ls = [4, 8]", "flows_Ls = [4, 6, 8]")
    return parse_case(tomllib.loads(text), SMALL.parent, source_text=text)


def test_dask_local_cluster_matches_serial():
    """A three-flow chain on a loopback Dask cluster: the finest chain's head (4, 6 L/s) and tail (8 L/s)
    run as separate jobs and still agree with the serial chain."""
    distributed = pytest.importorskip("dask.distributed")
    case = _three_flow_case()
    reference = correction_table(case, levels=LEVELS, workers=1, with_model_sensitivity=False)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False, protocol="tcp://",
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        assert cluster.scheduler_address.startswith("tcp://127.0.0.1:")
        remote = correction_table(case, levels=LEVELS, scheduler=cluster.scheduler_address,
                                  with_model_sensitivity=False)
    _assert_same_points(reference.points, remote.points)
    _assert_same_tables(reference.table, remote.table)


def test_bad_scheduler_and_workers_are_refused(tmp_path, capsys):
    out = tmp_path / "out"
    assert main(["table", str(SMALL), "--levels", "1", "--out", str(out), "--scheduler", "127.0.0.1:8786"]) == 2
    assert "--scheduler" in capsys.readouterr().err
    assert main(["check", str(SMALL), "--reading", "5L/s", "--workers", "0"]) == 2
    assert "--workers" in capsys.readouterr().err
    assert not out.exists()


def _wait_for_first_point(store: Path, process, timeout_s: float = 60.0) -> None:
    deadline = time.monotonic() + timeout_s
    while not PointStore(store).keys():
        assert process.poll() is None, "the table finished or failed before it could be interrupted"
        assert time.monotonic() < deadline, "no point was stored in time"
        time.sleep(0.05)


def test_killed_table_resumes_to_the_same_table(serial, tmp_path, monkeypatch):
    run, _, _ = serial
    out = tmp_path / "out"
    command = [sys.executable, "-m", "calib.cli", "table", str(SMALL), "--levels", "1", "--out", str(out),
               "--workers", "1"]
    process = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                               start_new_session=True)
    try:
        _wait_for_first_point(out / STORE_FOLDER, process)
    finally:
        os.killpg(process.pid, signal.SIGKILL)
        process.wait()
    stored = len(PointStore(out / STORE_FOLDER).keys())
    assert 1 <= stored < 8 and not (out / "table.csv").exists()
    calls = _counting(monkeypatch)
    assert main(["table", str(SMALL), "--levels", "1", "--out", str(out), "--workers", "1"]) == 0
    assert len(calls) == 8 - stored  # the stored points were not solved again
    with open(out / "table.csv", newline="") as handle:
        rows = list(csv.DictReader(handle))
    assert [float(r["flow_Ls"]) for r in rows] == [row.flow_Ls for row in run.table.rows]
    for written, row in zip(rows, run.table.rows):
        for name in ("K", "K_U95", "indicated_Ls", "pressure_drop_Pa", "u_model"):
            assert float(written[name]) == pytest.approx(getattr(row, name), rel=SAME, abs=0), name


def _diverging(monkeypatch, should_diverge):
    """solve_point that raises DivergenceError where ``should_diverge(prepared, flow)``; else the real one."""
    real = sweep.solve_point

    def fake(prepared, flow, *args, **kwargs):
        if should_diverge(prepared, flow):
            history = {"continuity": np.array([1.0, 10.0, np.inf]), "u": np.array([1.0, 2.0, 3.0])}
            raise DivergenceError(3, {"continuity": np.inf, "u": 3.0}, history, "continuity is not finite")
        return real(prepared, flow, *args, **kwargs)

    monkeypatch.setattr(sweep, "solve_point", fake)


def _keys(case):
    """Store keys of small_tube's chain (8 then 4 L/s: chains run downward) and of the kappa re-solves
    at 8 L/s (the middle flow)."""
    settings = SolverSettings()
    k8 = point_key(case, "coarse", 8e-3, None, {}, settings)
    k4 = point_key(case, "coarse", 4e-3, k8, {}, settings)
    kappa = [point_key(case, "coarse", 8e-3, k8, {"kappa": v}, settings) for v in (0.40, 0.42)]
    return k4, k8, kappa


def _store_without(store: Path, folder: Path, keys) -> Path:
    """A copy of ``store`` without the points ``keys`` (so those are solved again)."""
    shutil.copytree(store, folder)
    for key in keys:
        PointStore(folder).path(key).unlink()
    return folder


def test_diverged_flow_is_left_out_with_its_history(serial, tmp_path, monkeypatch):
    case = load_case(SMALL)
    _, k8, _ = _keys(case)
    store = _store_without(serial[1], tmp_path / "store", [k8])
    _diverging(monkeypatch, lambda prepared, flow: flow > 6e-3)
    run = correction_table(case, levels=LEVELS, workers=1, store_dir=store, failure_dir=tmp_path,
                           with_model_sensitivity=False)
    assert [row.flow_Ls for row in run.table.rows] == [4.0]  # 4 L/s solved again from rest
    assert any("8 L/s left out" in note for note in run.table.rows[0].notes)
    report = json.loads((tmp_path / "diverged-8Ls-coarse.json").read_text())
    assert report["iteration"] == 3 and report["history"]["continuity"] == [1.0, 10.0, None]
    assert "diverged" in report["message"]


def test_diverged_closure_resolve_is_named(serial, tmp_path, monkeypatch):
    run = serial[0]
    store = _store_without(serial[1], tmp_path / "store", _keys(load_case(SMALL))[2])
    _diverging(monkeypatch, lambda prepared, flow: prepared.closure.constants.kappa != 0.41)
    partial = correction_table(load_case(SMALL), levels=LEVELS, workers=1, store_dir=store)
    assert set(partial.model_perturbations) == {"a_plus", "escudier_lambda"}
    assert partial.model_perturbations["a_plus"] == run.model_perturbations["a_plus"]
    assert any("closure constant kappa" in note for note in partial.table.rows[0].notes)


def test_nothing_converged_exits_3_naming_the_failures(tmp_path, monkeypatch, capsys):
    _diverging(monkeypatch, lambda prepared, flow: True)
    with pytest.raises(SweepDiverged):
        correction_table(load_case(SMALL), levels=LEVELS, workers=1, with_model_sensitivity=False)
    out = tmp_path / "out"
    assert main(["table", str(SMALL), "--levels", "1", "--out", str(out), "--workers", "1"]) == 3
    err = capsys.readouterr().err
    assert "4 L/s on the coarse mesh" in err and "8 L/s on the coarse mesh" in err
    assert "Traceback" not in err
    assert sorted(p.name for p in out.glob("diverged-*.json")) == ["diverged-4Ls-coarse.json",
                                                                 "diverged-8Ls-coarse.json"]
    assert not (out / "table.csv").exists()


@pytest.fixture(scope="module")
def two_levels():
    """small_tube on coarse and normal, serial, without the closure re-solves."""
    return correction_table(load_case(SMALL), levels=("coarse", "normal"), workers=1, with_model_sensitivity=False)


def test_finest_level_starts_from_rest(two_levels):
    """The finest level's highest flow starts from rest, like a lone solve: the same iterations and the
    same answer to round-off (a coarser level's solution carried onto the finer mesh was a worse start:
    demo reducer at 60 L/s, 376 fine iterations from the normal solution against 265 from rest)."""
    from calib.pipeline import PreparedFixture, solve_point
    case = load_case(SMALL)
    top = max(case.operating.flows)
    finest = next(p for p in two_levels.points if p.level == "normal" and p.flow == top)
    from_rest, _ = solve_point(PreparedFixture.build(case, level="normal"), top, warn_wall=False)
    assert finest.converged and from_rest.converged
    assert finest.iterations == from_rest.iterations
    assert finest.profile.centre_velocity == pytest.approx(from_rest.profile.centre_velocity, rel=1e-12)


def test_two_level_pool_matches_serial(two_levels):
    pooled = correction_table(load_case(SMALL), levels=("coarse", "normal"), workers=2,
                              with_model_sensitivity=False)
    _assert_same_points(two_levels.points, pooled.points)
    _assert_same_tables(two_levels.table, pooled.table)

"""Sweeps as independent jobs, run serially, in a local process pool or on a Dask cluster.

A job is one *chain*: (the case, a mesh level, ordered flows, an optional start state) -> the solved
points with the compact solution state each leaves (u, v, p, mu_eff, mass_flux). Inside a chain each
flow starts from the previous flow's solution scaled by the flow ratio (velocities by the ratio,
pressures by its square, see :func:`calib.pipeline.scaled_state`), exactly as a serial sweep does:
parallelism is only *between* chains, never inside one, so that rule holds whatever the executor.

The job graph of one case (levels ordered coarse -> fine, flows q_0 < ... < q_n, middle m = n // 2):

* one chain per coarser level, all flows; every chain runs from the highest flow down, from rest;
* the finest level's *head* chain q_n..q_m starts from rest too, and its *tail* chain q_m-1..q_0 from
  the head's last state (the same start the unsplit chain would use). A coarser level's solution
  carried onto the finer mesh is a worse start than rest (measured, demo reducer at 60 L/s: 376 fine
  iterations from the normal solution against 265 from rest, 331 normal ones from the coarse solution
  against 255), so no level waits for another;
* one closure-sensitivity job per published-range end of each closure constant, each started from
  the head's middle-flow state (so they run after the head, beside the tail and the coarser chains).

Every job computes from its inputs alone, and a serial run executes the same jobs with the same
inputs, so the results of all executors agree to the last bit (tests check 1e-12). Jobs carry the
case's source text and base folder (rebuilt in the worker with tomllib and
:func:`geometry.case.parse_case`), or the :class:`Case` itself when it has no source text or was
changed after parsing; meshes and numba kernels are built in the worker, never pickled.

A diverging solve (:class:`solver.convergence.DivergenceError`) does not stop its chain: it is recorded
with its residual history and the chain's next flow starts from the last converged state. With a
store (:mod:`calib.store`), every solved point is written the moment it is solved, and a chain first
looks each of its points up there: a rerun solves nothing, an interrupted one resumes at the first
missing point from the last stored state. With Dask the store folder must be reachable by the workers
(a shared file system); per-iteration progress is shown for the serial and process-pool runs only.
"""
from __future__ import annotations

import concurrent.futures as cf
import contextlib
import hashlib
import json
import math
import multiprocessing
import os
import queue
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from geometry.case import Case, parse_case
from geometry.schema import CaseError
from solver.convergence import DivergenceError
from solver.flow import FlowState, SolverSettings

from .atomic import write_text
from .pipeline import PreparedFixture, case_constants, scaled_state, show_user_warning, solve_point
from .store import PointStore, StoredPoint, point_key
from .table import PointResult
from .units import LITRE_M3

SCHEDULER_PREFIXES = ("tcp://", "tls://")
CONNECT_TIMEOUT_S = 10.0
POLL_S = 0.2  # how often the process-pool runner forwards worker progress
_CACHE_SIZE = 4  # prepared fixtures kept per process (a mesh and its wall distances each)


@dataclass(frozen=True)
class CaseSource:
    """What a worker needs to rebuild a case: its source text and base folder (or the case itself)."""

    text: str
    base_dir: str
    identity: str
    case: Case | None = None

    @classmethod
    def of(cls, case: Case) -> "CaseSource":
        identity = hashlib.sha256((case.source_text + "\0" + repr(case)).encode()).hexdigest()
        if case.source_text:
            try:
                if _parse(case.source_text, str(case.base_dir)) == case:
                    return cls(case.source_text, str(case.base_dir), identity)
            except (CaseError, tomllib.TOMLDecodeError):
                pass
        return cls(case.source_text, str(case.base_dir), identity, case)

    def load(self) -> Case:
        return self.case if self.case is not None else _cached_case(self)


def _parse(text: str, base_dir: str) -> Case:
    return parse_case(tomllib.loads(text), Path(base_dir), source_text=text)


_CASES: dict[str, Case] = {}
_PREPARED: dict[tuple[str, str], PreparedFixture] = {}


def _remember(cache: dict, key, value):
    if len(cache) >= _CACHE_SIZE:
        cache.pop(next(iter(cache)))
    cache[key] = value
    return value


def _cached_case(source: CaseSource) -> Case:
    case = _CASES.get(source.identity)
    return case if case is not None else _remember(_CASES, source.identity, _parse(source.text, source.base_dir))


def prepared_fixture(source: CaseSource, level: str) -> PreparedFixture:
    """The case's mesh at ``level`` with wall distances, built once per process (it is stateless)."""
    key = (source.identity, level)
    prepared = _PREPARED.get(key)
    if prepared is None:
        prepared = _remember(_PREPARED, key, PreparedFixture.build(source.load(), level=level))
    return prepared


def with_constants(prepared: PreparedFixture, overrides: dict[str, float]) -> PreparedFixture:
    """The same mesh with closure constants changed (the mesh and wall distances do not depend on them)."""
    if not overrides:
        return prepared
    constants = replace(case_constants(prepared.case), **overrides)
    return replace(prepared, closure=replace(prepared.closure, constants=constants))


@dataclass(frozen=True)
class ChainJob:
    """Solve ``flows`` in order on ``level``, the first from ``start`` (scaled from ``start_flow``)."""

    source: CaseSource
    level: str
    flows: tuple[float, ...]
    settings: SolverSettings = SolverSettings()
    overrides: tuple[tuple[str, float], ...] = ()
    start: FlowState | None = None
    start_flow: float | None = None
    start_key: str | None = None
    store_dir: str | None = None
    label: str = ""


@dataclass
class SolvedPoint:
    point: PointResult
    state: FlowState
    history: dict
    key: str
    reused: bool = False


@dataclass
class DivergedPoint:
    """A solve that blew up: where, with which constants, and its residual history."""

    flow: float
    level: str
    overrides: dict
    iteration: int
    message: str
    residuals: dict
    history: dict

    @property
    def file_name(self) -> str:
        extra = "".join(f"-{name}{value:g}" for name, value in self.overrides.items())
        return f"diverged-{self.flow / LITRE_M3:g}Ls-{self.level}{extra}.json"


@dataclass
class ChainResult:
    solved: list[SolvedPoint] = field(default_factory=list)
    diverged: list[DivergedPoint] = field(default_factory=list)
    case_error: tuple[str, str] | None = None  # (key, message): CaseError does not survive pickling


_PROGRESS_QUEUE = None  # set in process-pool workers: progress goes to the parent through it


def _init_worker(progress_queue) -> None:
    global _PROGRESS_QUEUE
    _PROGRESS_QUEUE = progress_queue
    import warnings
    warnings.showwarning = show_user_warning


def _chain_progress(job: ChainJob, progress):
    label = job.label or job.level
    if progress is not None:
        return lambda flow, i, r: progress(label, flow, i, r)
    if _PROGRESS_QUEUE is not None:
        return lambda flow, i, r: _PROGRESS_QUEUE.put((label, flow, i, dict(r)))
    return None


def run_chain(job: ChainJob, progress=None) -> ChainResult:
    """Solve (or load from the store) every flow of one chain; see the module docstring."""
    try:
        return _run_chain(job, progress)
    except CaseError as error:
        return ChainResult(case_error=(error.key, str(error).removeprefix(f"{error.key}: ")))


def _run_chain(job: ChainJob, progress) -> ChainResult:
    case = job.source.load()
    overrides = dict(job.overrides)
    prepared = None  # built on the first point the store does not have
    store = PointStore(job.store_dir) if job.store_dir else None
    step = _chain_progress(job, progress)
    state, last_flow, last_key = job.start, job.start_flow, job.start_key
    result = ChainResult()
    for flow in job.flows:
        key = point_key(case, job.level, flow, last_key, overrides, job.settings)
        stored = store.get(key) if store is not None else None
        reused = stored is not None
        if not reused:
            prepared = prepared or with_constants(prepared_fixture(job.source, job.level), overrides)
            initial = None
            if state is not None:
                initial = state if flow == last_flow else scaled_state(state, flow / last_flow,
                                                                       prepared.air.viscosity)
            callback = (lambda i, r, q=flow: step(q, i, r)) if step else None
            try:
                point, solution = solve_point(prepared, flow, initial, job.settings, callback, warn_wall=False)
            except DivergenceError as error:
                result.diverged.append(DivergedPoint(flow, job.level, overrides, error.iteration, str(error),
                                                     dict(error.residuals), dict(error.history)))
                continue  # the next flow starts from the last converged state
            stored = StoredPoint(point, solution.state, solution.history)
            if store is not None:
                store.put(key, stored)
        result.solved.append(SolvedPoint(stored.point, stored.state, stored.history, key, reused))
        state, last_flow, last_key = stored.state, flow, key
    return result


def fully_stored(job: ChainJob) -> bool:
    """True when every point of the chain is in its store (the job then only reads files)."""
    if job.store_dir is None:
        return False
    store, case, key = PointStore(job.store_dir), job.source.load(), job.start_key
    for flow in job.flows:
        key = point_key(case, job.level, flow, key, dict(job.overrides), job.settings)
        if key not in store:
            return False
    return True


def _submit(runner, job: ChainJob):
    """A stored chain is read here at once (no worker needed); any other goes to the runner."""
    return _Finished(run_chain(job)) if fully_stored(job) else runner.submit(job)


class _Finished:
    """A future that is already done (the serial runner's)."""

    def __init__(self, value):
        self.value = value

    def result(self):
        return self.value


class SerialRunner:
    """Runs each job at submission, in this process."""

    def __init__(self, progress=None):
        self.progress = progress

    def submit(self, job: ChainJob):
        return _Finished(run_chain(job, self.progress))

    def wait(self, pending) -> list:
        return list(pending)

    def close(self, cancel: bool = False) -> None:
        pass


class PoolRunner:
    """A local :class:`concurrent.futures.ProcessPoolExecutor` (spawned workers: no forked numba state)."""

    def __init__(self, workers: int, progress=None):
        context = multiprocessing.get_context("spawn")
        self.progress = progress
        self.queue = context.Queue() if progress is not None else None
        self.pool = cf.ProcessPoolExecutor(workers, mp_context=context, initializer=_init_worker,
                                           initargs=(self.queue,))

    def submit(self, job: ChainJob):
        return self.pool.submit(run_chain, job)

    def wait(self, pending) -> list:
        while True:
            done, _ = cf.wait(list(pending), timeout=POLL_S, return_when=cf.FIRST_COMPLETED)
            self._forward_progress()
            if done:
                return list(done)

    def _forward_progress(self) -> None:
        if self.queue is None:
            return
        with contextlib.suppress(queue.Empty):
            while True:
                self.progress(*self.queue.get_nowait())

    def close(self, cancel: bool = False) -> None:
        if cancel:  # an error or an interrupt: stop the workers now (store writes are atomic)
            for process in list(getattr(self.pool, "_processes", {}).values()):
                process.terminate()
        self.pool.shutdown(wait=not cancel, cancel_futures=cancel)
        if self.queue is not None:
            self.queue.close()


class DaskRunner:
    """Jobs submitted to a running Dask distributed scheduler at ``address`` (tcp://HOST:PORT)."""

    def __init__(self, address: str):
        try:
            from dask.distributed import Client
        except ImportError:
            raise CaseError("--scheduler", "needs the optional packages dask and distributed: "
                            "pip install 'airbias[dask]'") from None
        try:
            self.client = Client(address, timeout=CONNECT_TIMEOUT_S)
        except (OSError, TimeoutError) as error:
            raise CaseError("--scheduler", f"cannot reach a Dask scheduler at {address} ({error}); start one "
                            f"with `dask scheduler` and workers with `dask worker {address}`") from None

    def submit(self, job: ChainJob):
        return self.client.submit(run_chain, job, pure=False)

    def wait(self, pending) -> list:
        from dask.distributed import wait
        return list(wait(list(pending), return_when="FIRST_COMPLETED").done)

    def close(self, cancel: bool = False) -> None:
        self.client.close()


def check_parallel(workers: int | None, scheduler: str | None) -> None:
    """Refuse a bad --workers / --scheduler before anything is computed."""
    if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int) or workers < 1):
        raise CaseError("--workers", f"must be a whole number >= 1 (1 = no parallel processes), got {workers!r}")
    if scheduler is not None and not str(scheduler).startswith(SCHEDULER_PREFIXES):
        raise CaseError("--scheduler", f"give the Dask scheduler's address as tcp://HOST:PORT, got {scheduler!r}")


@contextlib.contextmanager
def make_runner(workers: int | None = None, scheduler: str | None = None, progress=None, jobs: int = 1):
    """The executor: Dask when ``scheduler`` is given; else a process pool of ``workers`` (default
    ``os.cpu_count()``, capped at the number of jobs); serial when that is 1."""
    check_parallel(workers, scheduler)
    if scheduler is not None:
        runner = DaskRunner(scheduler)
    else:
        count = min(workers or os.cpu_count() or 1, max(jobs, 1))
        runner = SerialRunner(progress) if count == 1 else PoolRunner(count, progress)
    try:
        yield runner
    except BaseException:
        runner.close(cancel=True)
        raise
    runner.close()


@dataclass(frozen=True)
class SweepPlan:
    """One case's sweep: ``levels`` coarse -> fine, ascending ``flows`` (m^3/s), and the closure-constant
    ends ``sensitivity`` ((name, value) pairs) to re-solve at the finest level's middle flow."""

    source: CaseSource
    levels: tuple[str, ...]
    flows: tuple[float, ...]
    settings: SolverSettings = SolverSettings()
    sensitivity: tuple[tuple[str, float], ...] = ()
    store_dir: str | None = None

    def job(self, level: str, flows, start: SolvedPoint | None = None, overrides=(), label: str = "") -> ChainJob:
        return ChainJob(self.source, level, tuple(flows), self.settings, tuple(overrides),
                        start.state if start else None, start.point.flow if start else None,
                        start.key if start else None, self.store_dir, label)

    @property
    def middle(self) -> int:
        return len(self.flows) // 2

    def job_count(self) -> int:
        return len(self.levels) + 1 + len(self.sensitivity)


@dataclass
class SweepResult:
    """Points of all chains (level order, then flow), the sensitivity re-solves keyed by (name, value),
    the point they started from, and every diverged solve."""

    points: list[SolvedPoint] = field(default_factory=list)
    sensitivity: dict = field(default_factory=dict)
    reference: SolvedPoint | None = None
    diverged: list[DivergedPoint] = field(default_factory=list)

    @property
    def solved_count(self) -> int:
        """Points actually solved in this run (not loaded from the store)."""
        return sum(not p.reused for p in [*self.points, *self.sensitivity.values()])


def _initial_jobs(plan: SweepPlan) -> list[tuple[ChainJob, str]]:
    # Chains run from the highest flow down: the turbulent high-flow solve converges fastest from rest,
    # and each lower flow then starts from a developed field (measured: 30 s against 41 s for the
    # tube-fed example at level normal, ascending).
    # The finest level's head first: its head and tail are the longest path through the graph.
    *coarser, finest = plan.levels
    return ([(plan.job(finest, plan.flows[plan.middle:][::-1]), "head")]
            + [(plan.job(level, plan.flows[::-1]), "chain") for level in coarser])


def _sensitivity_jobs(plan: SweepPlan, reference: SolvedPoint) -> list[tuple[ChainJob, str]]:
    label = f"{plan.levels[-1]} (closure constants)"
    return [(plan.job(plan.levels[-1], (reference.point.flow,), reference, ((name, value),), label),
             ("sensitivity", name, value)) for name, value in plan.sensitivity]


def _follow_ups(plan: SweepPlan, role, outcome: ChainResult, result: SweepResult):
    """Jobs that become ready when a head or tail chain finishes."""
    jobs = []
    if role == "head":
        tail = plan.flows[:plan.middle][::-1]
        last = outcome.solved[-1] if outcome.solved else None
        if tail:
            jobs.append((plan.job(plan.levels[-1], tail, last), "tail"))
        if last is not None:
            result.reference = last
            jobs += _sensitivity_jobs(plan, last)
    elif role == "tail" and result.reference is None and outcome.solved:
        result.reference = outcome.solved[0]  # the head had no converged point: nearest after it
        jobs += _sensitivity_jobs(plan, outcome.solved[0])
    return jobs


def _absorb(plan: SweepPlan, role, outcome: ChainResult, result: SweepResult) -> None:
    if outcome.case_error is not None:
        raise CaseError(*outcome.case_error)
    result.diverged += outcome.diverged
    if isinstance(role, tuple):  # ("sensitivity", name, value)
        if outcome.solved:
            result.sensitivity[role[1:]] = outcome.solved[0]
    else:
        result.points += outcome.solved


def run_sweeps(plans: list[SweepPlan], runner) -> list[SweepResult]:
    """Run every plan's job graph on ``runner`` (all plans share it), submitting jobs as they become ready."""
    results = [SweepResult() for _ in plans]
    pending = {}
    for index, plan in enumerate(plans):
        if not (plan.flows and plan.levels):
            raise ValueError("SweepPlan: give at least one flow and one mesh level")
        for job, role in _initial_jobs(plan):
            pending[_submit(runner, job)] = (index, role)
    while pending:
        for future in [f for f in pending if isinstance(f, _Finished)] or runner.wait(pending):
            index, role = pending.pop(future)
            try:
                outcome = future.result()
            except cf.process.BrokenProcessPool as error:
                raise RuntimeError("a solver process stopped abruptly (killed, out of memory, or a script without "
                                   "an `if __name__ == \"__main__\":` guard started the pool); rerun, or use "
                                   "workers=1") from error
            plan, result = plans[index], results[index]
            _absorb(plan, role, outcome, result)
            for job, new_role in _follow_ups(plan, role, outcome, result):
                pending[_submit(runner, job)] = (index, new_role)
    for plan, result in zip(plans, results):
        result.points.sort(key=lambda p: (plan.levels.index(p.point.level), p.point.flow))
        result.diverged.sort(key=lambda d: (plan.levels.index(d.level), d.flow, sorted(d.overrides.items())))
    return results


def _json_safe(value):
    if isinstance(value, dict):
        return {str(k): _json_safe(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, np.ndarray)):
        return [_json_safe(v) for v in value]
    if isinstance(value, (float, np.floating)):
        return float(value) if math.isfinite(value) else None
    if isinstance(value, np.integer):
        return int(value)
    return value


def write_divergence_reports(folder, diverged: list[DivergedPoint]) -> list[Path]:
    """``diverged-<flow>Ls-<level>[-<constant><value>].json`` per diverged solve: message, residuals, history."""
    folder = Path(folder)
    paths = []
    for d in diverged:
        folder.mkdir(parents=True, exist_ok=True)
        record = {"flow_Ls": d.flow / LITRE_M3, "level": d.level, "closure_constants": d.overrides,
                  "iteration": d.iteration, "message": d.message, "residuals": d.residuals,
                  "history": d.history}
        paths.append(write_text(folder / d.file_name, json.dumps(_json_safe(record), indent=1) + "\n"))
    return paths

"""The correction-table job: sweep flows over mesh levels, perturb the closure, read the instrument, tabulate.

Uncertainty parts supplied here (the table module combines them, see :mod:`calib.table`):

* model: at the middle flow on the finest level solved, each closure constant with a published range
  (``MixingLengthConstants.published_ranges``) is set to its low and high end and the point re-solved;
  the relative change of K is taken for every flow of the table (the sensitivities are computed once, an
  assumption stated in the report). Should the middle flow diverge, the nearest converged flow below it
  is used (or above it, if none below converged).
* solving: every level's chain of flows and every closure re-solve is a job of :mod:`calib.sweep`, run
  serially, in a process pool or on a Dask cluster with identical results, optionally resumed from a
  store of solved points (:mod:`calib.store`). A flow that diverges on any level is left out of the
  table with a note in every row; the sweep's other points are kept.
* model form: the closure's measured error in developed pipe flow (``solver.pipe1d.model_form_deviation``,
  U_b/U_c against published DNS and Nikuradse data) expressed as an error of the profile's departure from
  uniform, then applied to the computed rotor-plane profile: u' = U + (1 +- e)(u - U) keeps the flux and
  scales the non-uniformity by e; the change of K is a rectangular half-width (derivation in
  :func:`departure_error`).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Callable

from geometry.case import Case
from solver.convergence import DivergenceError
from solver.flow import FlowSolution, SolverSettings
from solver.mixing_length import MixingLengthConstants
from solver.pipe1d import model_form_deviation

from .instruments import Instrument, build_instrument
from .pipeline import PreparedFixture, scaled_state, warn_wall_resolution
from .profile import RotorPlaneProfile
from .sweep import (CaseSource, DivergedPoint, SweepPlan, SweepResult, make_runner, prepared_fixture, run_sweeps,
                    write_divergence_reports)
from .table import CorrectionTable, PointResult, build_table, reading
from .units import LITRE_M3

LEVEL_ORDER = ("coarse", "normal", "fine")
FIX_HINT = ("Try: a lower velocity relaxation (e.g. 0.5), a finer mesh level near the mouth, or fewer, closer "
            "flows so that each starts nearer its predecessor")


def levels_for(count: int, case_level: str = "normal") -> tuple[str, ...]:
    """Mesh levels of a table: 1 -> the case's own level; 2 -> it and its neighbour; 3 -> all three."""
    if count not in (1, 2, 3):
        raise ValueError(f"--levels must be 1, 2 or 3, got {count}")
    if count == 1:
        return (case_level,)
    if count == 2:
        return ("coarse", "normal") if case_level != "fine" else ("normal", "fine")
    return LEVEL_ORDER


def departure_error() -> float:
    """Relative error of the closure's profile departure from uniform, (1 - U_b/U_c), in developed pipe flow.

    For each published U_b/U_c point the model's departure d_m = 1 - (U_b/U_c)_model is compared with the
    reference d = 1 - (U_b/U_c)_ref; the largest |d_m - d| / d is returned.
    """
    errors = []
    for point in model_form_deviation():
        if point.quantity != "bulk_to_centre":
            continue
        d_ref, d_model = 1.0 - point.reference, 1.0 - point.model
        errors.append(abs(d_model - d_ref) / d_ref)
    return max(errors)


def scaled_departure(profile: RotorPlaneProfile, factor: float) -> RotorPlaneProfile:
    """The profile with its departure from its own area mean scaled by ``factor`` (flux unchanged)."""
    mean = profile.area_mean
    return RotorPlaneProfile(profile.r, mean + factor * (profile.u - mean), profile.v * factor,
                             r_inner=profile.r_inner)


def model_form_relative(points: list[PointResult], instrument: Instrument) -> float:
    """Largest relative change of K over the table when the departure is scaled by 1 +- e (half-width)."""
    e = departure_error()
    worst = 0.0
    for point in points:
        _, _, k = reading(point, instrument)
        for factor in (1.0 - e, 1.0 + e):
            _, _, k2 = reading(replace(point, profile=scaled_departure(point.profile, factor)), instrument)
            worst = max(worst, abs(k2 / k - 1.0))
    return worst / math.sqrt(3.0)


@dataclass
class TableRun:
    """Everything a correction table was made from: the table, the points, and the finest solutions.

    ``diverged``: the solves that blew up (their flows are left out of the table, see ``notes``).
    """

    table: CorrectionTable
    points: list[PointResult]
    solutions: dict  # flow -> FlowSolution on the finest level
    prepared: PreparedFixture
    instrument: Instrument
    model_perturbations: dict
    diverged: list[DivergedPoint] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    solved_count: int = 0  # points solved in this run (the others came from the store)


class SweepDiverged(DivergenceError):
    """No table could be made: every flow diverged on some level. Names what failed."""

    def __init__(self, title: str, diverged: list[DivergedPoint]):
        RuntimeError.__init__(self, f"no correction table for {title!r}: " + "; ".join(
            f"{d.flow / LITRE_M3:g} L/s on the {d.level} mesh diverged at iteration {d.iteration}"
            for d in diverged) + ". " + FIX_HINT)
        self.diverged = diverged
        self.iteration = max((d.iteration for d in diverged), default=0)
        self.residuals = diverged[-1].residuals if diverged else {}
        self.history = diverged[-1].history if diverged else {}


def case_instrument(case: Case, prepared: PreparedFixture) -> Instrument:
    r_in, r_out = prepared.fixture.rotor_annulus
    return build_instrument(case.instrument_table, head_free_area=math.pi * (r_out**2 - r_in**2),
                            base_dir=case.base_dir, air_density=prepared.air.density)


def sensitivity_ends(case: Case) -> tuple[tuple[str, float], ...]:
    """(constant, value) at each end of each closure constant's published range; none when laminar."""
    if case.model.closure == "laminar":
        return ()
    return tuple((name, value) for name, (low, high, _source) in MixingLengthConstants.published_ranges().items()
                 for value in (low, high))


def model_changes(result: SweepResult, ends: tuple[tuple[str, float], ...],
                  instrument: Instrument) -> tuple[dict[str, tuple[float, float]], list[str]]:
    """Relative change of K at each (constant, value) of ``ends`` (low, high per constant, in that order),
    and a note per constant whose re-solve diverged (it is left out of the model part)."""
    if result.reference is None or not ends:
        return {}, []
    _, _, k_ref = reading(result.reference.point, instrument)
    changes, notes = {}, []
    for name in dict.fromkeys(n for n, _ in ends):
        solved = [result.sensitivity.get((n, v)) for n, v in ends if n == name]
        if all(p is not None for p in solved):
            changes[name] = tuple(reading(p.point, instrument)[2] / k_ref - 1.0 for p in solved)
        else:
            notes.append(f"model uncertainty leaves out closure constant {name}: its re-solve diverged")
    return changes, notes


def _complete_flows(result: SweepResult, levels) -> tuple[list[float], list[str]]:
    """Flows with a solved point on every level, and a note per flow left out."""
    flows = dict.fromkeys(p.point.flow for p in result.points)
    have = {(p.point.flow, p.point.level) for p in result.points}
    complete = [q for q in flows if all((q, lv) in have for lv in levels)]
    notes = [f"{d.flow / LITRE_M3:g} L/s left out: the solve diverged on the {d.level} mesh at iteration "
             f"{d.iteration} (residual history in {d.file_name})" for d in result.diverged if not d.overrides]
    return complete, notes


def _with_notes(table: CorrectionTable, notes: list[str]) -> CorrectionTable:
    if not notes:
        return table
    return replace(table, rows=tuple(replace(row, notes=row.notes + tuple(notes)) for row in table.rows))


def assemble_run(case: Case, plan: SweepPlan, prepared: PreparedFixture, result: SweepResult) -> TableRun:
    """The table from one sweep's converged points (a diverged flow is left out with a note)."""
    instrument, levels = case_instrument(case, prepared), plan.levels
    complete, notes = _complete_flows(result, levels)
    if not complete:
        raise SweepDiverged(case.title, result.diverged)
    solved = [p for p in result.points if p.point.flow in complete]
    points = [p.point for p in solved]
    finest = [p for p in points if p.level == levels[-1]]
    perturbations, model_notes = model_changes(result, plan.sensitivity, instrument)
    notes += model_notes
    table = build_table(points, instrument, model_perturbations=perturbations,
                        model_form_relative=model_form_relative(finest, instrument), levels=levels)
    solutions = {p.point.flow: FlowSolution(prepared.problem(p.point.flow), p.state, p.point.iterations,
                                            p.point.converged, p.history, p.point.wall_s)
                 for p in solved if p.point.level == levels[-1]}
    return TableRun(_with_notes(table, notes), points, solutions, prepared, instrument, perturbations,
                    result.diverged, notes, result.solved_count)


def correction_tables(cases: list[Case], levels: list, settings: SolverSettings = SolverSettings(),
                      progress: Callable[[str, float, int, dict], None] | None = None,
                      with_model_sensitivity: bool = True, *, workers: int | None = None,
                      scheduler: str | None = None, store_dir=None, failure_dir=None) -> list[TableRun]:
    """Correction tables of several cases, all their jobs on one executor (see :mod:`calib.sweep`).

    ``levels``: one tuple of level names per case. ``workers``/``scheduler``: see
    :func:`calib.sweep.make_runner`. ``store_dir``: resumable store of solved points (None = none).
    ``failure_dir``: where the ``diverged-*.json`` residual histories go (None = not written).
    """
    orders = [tuple(sorted(lv, key=LEVEL_ORDER.index)) for lv in levels]
    sources = [CaseSource.of(case) for case in cases]
    # the finest meshes are built here first: a geometry mistake is refused before any job starts
    prepared = [prepared_fixture(source, order[-1]) for source, order in zip(sources, orders)]
    store = str(store_dir) if store_dir is not None else None
    plans = [SweepPlan(source, order, case.operating.flows, settings,
                       sensitivity_ends(case) if with_model_sensitivity else (), store)
             for source, order, case in zip(sources, orders, cases)]
    with make_runner(workers, scheduler, progress, jobs=sum(p.job_count() for p in plans)) as runner:
        results = run_sweeps(plans, runner)
    for result in results:
        warn_wall_resolution([p.point for p in result.points])
    if failure_dir is not None:
        for result in results:
            write_divergence_reports(failure_dir, result.diverged)
    return [assemble_run(case, plan, prep, result) for case, plan, prep, result in zip(cases, plans, prepared, results)]


def correction_table(case: Case, levels=LEVEL_ORDER, settings: SolverSettings = SolverSettings(),
                     progress: Callable[[str, float, int, dict], None] | None = None,
                     with_model_sensitivity: bool = True, *, workers: int | None = None,
                     scheduler: str | None = None, store_dir=None, failure_dir=None) -> TableRun:
    """Solve the case's sweep on each level and build its correction table (see :func:`correction_tables`)."""
    return correction_tables([case], [levels], settings, progress, with_model_sensitivity, workers=workers,
                             scheduler=scheduler, store_dir=store_dir, failure_dir=failure_dir)[0]

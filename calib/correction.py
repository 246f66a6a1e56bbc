"""The correction-table job: sweep flows over mesh levels, perturb the closure, read the instrument, tabulate.

Uncertainty parts supplied here (the table module combines them, see :mod:`calib.table`):

* model: at the middle flow on the finest level solved, each closure constant with a published range
  (``MixingLengthConstants.published_ranges``) is set to its low and high end and the point re-solved;
  the relative change of K is taken for every flow of the table (the sensitivities are computed once, an
  assumption stated in the report).
* model form: the closure's measured error in developed pipe flow (``solver.pipe1d.model_form_deviation``,
  U_b/U_c against published DNS and Nikuradse data) expressed as an error of the profile's departure from
  uniform, then applied to the computed rotor-plane profile: u' = U + (1 +- e)(u - U) keeps the flux and
  scales the non-uniformity by e; the change of K is a rectangular half-width (derivation in
  :func:`departure_error`).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Callable

import numpy as np

from geometry.case import Case
from solver.flow import SolverSettings
from solver.mixing_length import MixingLengthConstants
from solver.pipe1d import model_form_deviation

from .instruments import Instrument, build_instrument
from .pipeline import PreparedFixture, case_constants, scaled_state, solve_point, sweep_level
from .profile import RotorPlaneProfile
from .table import CorrectionTable, PointResult, build_table, reading

LEVEL_ORDER = ("coarse", "normal", "fine")


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
    """Everything a correction table was made from: the table, the points, and the finest solutions."""

    table: CorrectionTable
    points: list[PointResult]
    solutions: dict  # flow -> FlowSolution on the finest level
    prepared: PreparedFixture
    instrument: Instrument
    model_perturbations: dict


def case_instrument(case: Case, prepared: PreparedFixture) -> Instrument:
    r_in, r_out = prepared.fixture.rotor_annulus
    return build_instrument(case.instrument_table, head_free_area=math.pi * (r_out**2 - r_in**2),
                            base_dir=case.base_dir, air_density=prepared.air.density)


def model_sensitivities(case: Case, level: str, flow: float, reference: PointResult, instrument: Instrument,
                        initial, settings: SolverSettings, progress=None) -> dict[str, tuple[float, float]]:
    """Relative change of K with each closure constant at the ends of its published range."""
    if case.model.closure == "laminar":
        return {}
    _, _, k_ref = reading(reference, instrument)
    changes = {}
    base = case_constants(case)
    for name, (low, high, _source) in MixingLengthConstants.published_ranges().items():
        ends = []
        for value in (low, high):
            constants = replace(base, **{name: value})
            prepared = PreparedFixture.build(case, level=level, constants=constants)
            step = (lambda i, r, q=flow: progress(q, i, r)) if progress else None
            point, _ = solve_point(prepared, flow, initial=initial, settings=settings, progress=step)
            _, _, k = reading(point, instrument)
            ends.append(k / k_ref - 1.0)
        changes[name] = tuple(ends)
    return changes


def correction_table(case: Case, levels=LEVEL_ORDER, settings: SolverSettings = SolverSettings(),
                     progress: Callable[[str, float, int, dict], None] | None = None,
                     with_model_sensitivity: bool = True) -> TableRun:
    """Solve the case's sweep on each level and build its correction table."""
    levels = tuple(sorted(levels, key=LEVEL_ORDER.index))
    points, solutions, prepared = [], {}, None
    for level in levels:
        prepared = PreparedFixture.build(case, level=level)
        step = (lambda q, i, r, lv=level: progress(lv, q, i, r)) if progress else None
        for point, solution in sweep_level(prepared, case.operating.flows, settings, step):
            points.append(point)
            if level == levels[-1]:
                solutions[point.flow] = solution
    instrument = case_instrument(case, prepared)
    finest = [p for p in points if p.level == levels[-1]]
    perturbations = {}
    if with_model_sensitivity:
        middle = finest[len(finest) // 2]
        step = (lambda q, i, r: progress(f"{levels[-1]} (closure constants)", q, i, r)) if progress else None
        perturbations = model_sensitivities(case, levels[-1], middle.flow, middle, instrument,
                                            solutions[middle.flow].state, settings, step)
    table = build_table(points, instrument, model_perturbations=perturbations,
                        model_form_relative=model_form_relative(finest, instrument), levels=levels)
    return TableRun(table, points, solutions, prepared, instrument, perturbations)


def scale_start(solution, flow: float, viscosity: float):
    """Start for a new flow from a solved one (used by single-point jobs that reuse a sweep)."""
    ratio = flow / solution.problem.boundaries["outlet"].flow
    return scaled_state(solution.state, ratio, viscosity)

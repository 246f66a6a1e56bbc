"""The everyday jobs behind the command line: each computes first, then writes its files atomically.

Every function takes plain arguments (SI inside), returns a small result object, and writes nothing
until all computing has succeeded, so a refused input or an interrupted run leaves no partial output.
"""
from __future__ import annotations

import csv
import importlib.metadata
import json
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from geometry.case import Case
from geometry.export import write_vtu
from geometry.schema import CaseError
from solver.flow import SolverSettings

from . import figures
from .atomic import atomic_path, write_bytes, write_text
from .cautions import CAUTIONS
from .correction import TableRun, case_instrument, correction_tables, levels_for
from .pipeline import PreparedFixture, solve_point
from .report import render_report
from .store import STORE_FOLDER
from .sweep import check_parallel
from .table import CorrectionTable, reading
from .uncertainty import en_number
from .units import LITRE_M3


def version() -> str:
    try:
        return importlib.metadata.version("airbias")
    except importlib.metadata.PackageNotFoundError:
        return "unknown"


def cell_fields(solution, prepared: PreparedFixture) -> dict[str, np.ndarray]:
    """Fields written to VTU: velocity components, pressure, eddy viscosity, wall distance."""
    st, pb = solution.state, solution.problem
    fields = {"u_ms": st.u, "v_ms": st.v, "p_Pa": st.p, "eddy_viscosity_m2s": (st.mu_eff - pb.viscosity) / pb.density}
    distance = getattr(prepared.closure, "wall_distance", None)
    if distance is not None:
        fields["wall_distance_m"] = distance
    return fields


def check_case(case: Case) -> None:
    """Refuse, before any solving, what would only fail later (the instrument table)."""
    from .instruments import build_instrument
    from .pipeline import case_air
    head_area = math.pi * (case.head.diameter / 2) ** 2  # the hub only changes the default nominal area
    try:
        build_instrument(case.instrument_table, head_free_area=head_area, base_dir=case.base_dir,
                         air_density=case_air(case).density)
    except CaseError:
        raise
    except ValueError as error:
        raise CaseError("instrument", str(error)) from None


@dataclass
class SolveResult:
    result: dict
    profile_rows: list
    solution: object
    prepared: PreparedFixture


def run_solve(case: Case, flow: float, level: str | None, progress=None) -> SolveResult:
    check_case(case)
    prepared = PreparedFixture.build(case, level=level)
    step = (lambda i, r: progress(prepared.level, flow, i, r)) if progress else None
    point, solution = solve_point(prepared, flow, settings=SolverSettings(), progress=step)
    instrument = case_instrument(case, prepared)
    velocity, indicated, k = reading(point, instrument)
    profile = point.profile
    result = {
        "title": case.title, "airbias_version": version(), "level": prepared.level,
        "flow_Ls": flow / LITRE_M3, "cells": point.cells, "iterations": point.iterations,
        "converged": point.converged, "wall_s": round(point.wall_s, 3),
        "pressure_drop_Pa": point.pressure_drop_Pa,
        "rotor_plane": {"area_mean_ms": profile.area_mean, "centre_ms": profile.centre_velocity,
                        "flux_Ls": profile.flux / LITRE_M3, "flatness": profile.flatness,
                        "momentum_coefficient": profile.momentum_coefficient,
                        "energy_coefficient": profile.energy_coefficient},
        "instrument": instrument.KIND, "indicated_ms": velocity, "indicated_Ls": indicated / LITRE_M3, "K": k,
        "max_wall_y_plus": point.wall_y_plus,
        "warnings": list(case.warnings()),
    }
    rows = [(r * 1e3, u, v) for r, u, v in zip(profile.r, profile.u, profile.v)]
    return SolveResult(result, rows, solution, prepared)


def write_solve(out: Path, res: SolveResult) -> None:
    out.mkdir(parents=True, exist_ok=True)
    write_text(out / "result.json", json.dumps(res.result, indent=2))
    lines = ["r_mm,u_ms,v_ms"] + [f"{r:.6g},{u:.6g},{v:.6g}" for r, u, v in res.profile_rows]
    write_text(out / "rotor_plane.csv", "\n".join(lines) + "\n")
    with atomic_path(out / "fields.vtu") as tmp:
        write_vtu(tmp, res.solution.problem.mesh, cell_fields(res.solution, res.prepared))


def _chosen_levels(case: Case, levels: int) -> tuple[str, ...]:
    check_case(case)
    try:
        return levels_for(levels, case.mesh.level)
    except ValueError as error:
        raise CaseError("--levels", str(error)) from None


def run_tables(cases: list[Case], levels: int, progress=None, *, workers: int | None = None,
               scheduler: str | None = None, out: Path | None = None) -> list[TableRun]:
    """Tables of several cases, all their jobs on one executor (see :mod:`calib.sweep`). With ``out``, solved
    points are kept in ``out/.airbias-store`` (a rerun resumes) and diverged solves in ``out/diverged-*.json``."""
    check_parallel(workers, scheduler)
    chosen = [_chosen_levels(case, levels) for case in cases]
    store = Path(out) / STORE_FOLDER if out is not None else None
    return correction_tables(cases, chosen, progress=progress, workers=workers, scheduler=scheduler,
                             store_dir=store, failure_dir=out)


def run_table(case: Case, levels: int, progress=None, *, workers: int | None = None,
              scheduler: str | None = None, out: Path | None = None) -> TableRun:
    return run_tables([case], levels, progress, workers=workers, scheduler=scheduler, out=out)[0]


def report_figures(run: TableRun) -> dict[str, bytes]:
    fixture = run.prepared.fixture
    flows = sorted(run.solutions)
    middle = flows[len(flows) // 2]
    solution = run.solutions[middle]
    head_r = fixture.head_radius
    zoom = (fixture.rotor_x - 3 * head_r, fixture.rotor_x + 5 * head_r, 0.0, 2.0 * head_r)
    middle_point = [p for p in run.points if p.level == run.prepared.level and p.flow == middle][0]
    return {
        "mesh": figures.mesh_figure(fixture.mesh, fixture.outline, zoom),
        "field": figures.field_figure(fixture.mesh, solution.state.u, solution.state.v, fixture.outline, zoom),
        "profile": figures.profile_figure(middle_point.profile, f"{middle / LITRE_M3:.4g} L/s"),
        "k": figures.k_figure(run.table),
    }


def summary_rows(run: TableRun) -> list[tuple[str, str]]:
    rows = run.table.rows
    ks = [r.K for r in rows]
    worst = max(rows, key=lambda r: abs(1.0 / r.K - 1.0))
    return [
        ("instrument", run.instrument.KIND),
        ("mesh levels", ", ".join(dict.fromkeys(p.level for p in run.points))),
        ("K over the sweep", f"{min(ks):.4f} to {max(ks):.4f}"),
        ("worst bias", f"{(1.0 / worst.K - 1.0) * 100:+.1f} % at {worst.flow_Ls:.4g} L/s"),
        ("cells (finest level)", f"{run.prepared.fixture.mesh.n_cells}"),
    ]


def write_table(out: Path, case: Case, run: TableRun) -> Path:
    figs = report_figures(run)
    html = render_report(title=case.title, case_text=case.source_text, table=run.table, figures=figs,
                         cautions=CAUTIONS, version=version(), summary_rows=summary_rows(run),
                         warnings=list(case.warnings()))
    out.mkdir(parents=True, exist_ok=True)
    run.table.write(out)
    write_text(out / "case.toml", case.source_text)
    for name, data in figs.items():
        write_bytes(out / f"{name}.png", data)
    for flow, solution in sorted(run.solutions.items()):
        with atomic_path(out / f"fields-{flow / LITRE_M3:g}Ls.vtu") as tmp:
            write_vtu(tmp, solution.problem.mesh, cell_fields(solution, run.prepared))
    return write_text(out / "report.html", html)


@dataclass
class CheckResult:
    reading_flow: float
    true_flow: float
    true_U95: float
    bias_percent: float
    verdict: str


def check_reading(table: CorrectionTable, reading_flow: float) -> CheckResult:
    """True flow for a reading, the bias of the reading, and a one-line verdict."""
    true_flow, u95 = table.correct(reading_flow)
    bias = (reading_flow / true_flow - 1.0) * 100.0
    band = u95 / true_flow * 100.0
    if abs(bias) <= band:
        verdict = f"no significant bias: the reading is within the {band:.1f} % uncertainty of the correction"
    else:
        side = "high" if bias > 0 else "low"
        verdict = f"biased: this fixture makes the instrument read {abs(bias):.1f} % {side}; multiply by K"
    return CheckResult(reading_flow, true_flow, u95, bias, verdict)


@dataclass
class ValidationRow:
    reading_Ls: float
    reference_Ls: float
    K_measured: float
    U_measured: float
    K_computed: float
    U_computed: float
    En: float


def read_measured_pairs(path: Path) -> list[dict]:
    """CSV with columns reading_Ls, reference_Ls and optionally reference_U95_Ls, reading_U95_Ls."""
    if not path.exists():
        raise CaseError("--measured", f"no such file {path}")
    with open(path, newline="") as handle:
        rows = list(csv.DictReader(handle))
    needed = {"reading_Ls", "reference_Ls"}
    if not rows or not needed <= set(rows[0]):
        raise CaseError("--measured", f"{path} needs a header with columns reading_Ls, reference_Ls "
                        "(optional: reference_U95_Ls, reading_U95_Ls) and at least one row")
    out = []
    for n, row in enumerate(rows, start=2):
        try:
            values = {k: float(v) for k, v in row.items() if k and v not in (None, "")}
        except ValueError:
            raise CaseError("--measured", f"{path} line {n}: every value must be a number") from None
        if values["reading_Ls"] <= 0 or values["reference_Ls"] <= 0:
            raise CaseError("--measured", f"{path} line {n}: flows must be greater than zero")
        out.append(values)
    return out


def validate_pairs(table: CorrectionTable, pairs: list[dict]) -> list[ValidationRow]:
    """Measured K = reference / reading against the computed K, with E_n (ISO 13528) for each pair."""
    rows = []
    for pair in pairs:
        q_read, q_ref = pair["reading_Ls"] * LITRE_M3, pair["reference_Ls"] * LITRE_M3
        true_flow, u95 = table.correct(q_read)
        k_comp, u_comp = true_flow / q_read, u95 / q_read
        k_meas = q_ref / q_read
        rel_ref = pair.get("reference_U95_Ls", 0.0) / pair["reference_Ls"]
        rel_read = pair.get("reading_U95_Ls", 0.0) / pair["reading_Ls"]
        u_meas = k_meas * math.hypot(rel_ref, rel_read)
        rows.append(ValidationRow(pair["reading_Ls"], pair["reference_Ls"], k_meas, u_meas, k_comp, u_comp,
                                  en_number(k_meas, u_meas, k_comp, u_comp)))
    return rows

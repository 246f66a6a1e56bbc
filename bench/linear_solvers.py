"""Benchmark of the linear solvers inside the SIMPLEC loop: direct sparse LU against the iterative pair.

Usage: python bench/linear_solvers.py [--out bench/results/linear_solvers.json] [--momentum-tol 1e-2] ...
Cases: (a) a wall-resolved turbulent pipe at Re_D = 1e5 (mixing-length closure, 120 x 50 cells, first cell at
y+ = 1) and (b) the developing laminar pipe of :func:`solver.verification.developing_laminar`. For each case and
solver: wall seconds, outer iterations, linear-solver counters, and the converged answer's difference from the
direct solve (max |u - u_direct| / max |u_direct|; it must not depend on the linear solver).
"""
from __future__ import annotations

import argparse
import dataclasses
import functools
import json
import time
from pathlib import Path

import numpy as np

import solver.flow as flow
import solver.linear as linear
from geometry.blocks import Spacing
from geometry.pipes import straight_pipe
from geometry.wall_spacing import first_cell_height
from solver import verification
from solver.boundary import Axis, PressureOutlet, VelocityInlet, Wall
from solver.closure import MixingLengthClosure
from solver.pipe1d import developed_pipe

HERE = Path(__file__).resolve().parent


def turbulent_pipe(settings: flow.SolverSettings, axial_cells: int = 120, radial_cells: int = 50,
                   max_iterations: int = 3000):
    """Air pipe D = 50 mm, Re_D = 1e5, 10 D long, developed inlet profile, first cell at y+ = 1."""
    diameter, nu, rho, reynolds = 0.05, 1.5e-5, 1.2, 1e5
    radius, bulk = diameter / 2, reynolds * nu / diameter
    spacing = Spacing.from_first(radial_cells, radius, first_cell_height(1.0, bulk, diameter, nu))
    mesh = straight_pipe(10 * diameter, radius, axial_cells, radial_cells, wall_ratio=spacing.ratio)
    profile = developed_pipe(reynolds, D=diameter, nu=nu)
    inlet = VelocityInlet(profile=lambda x, r: np.column_stack([profile.profile_at(r), 0 * r]))
    wall = mesh.patch_faces("wall")
    wall_x = mesh.face_centre[wall, 0]
    c = mesh.cell_centre
    nearest = np.argmin(np.abs(wall_x[None, :] - c[:, 0][:, None]), axis=1)
    closure = MixingLengthClosure(wall, radius - c[:, 1], nearest, np.full(mesh.n_cells, radius), radius)
    problem = flow.FlowProblem(mesh, rho, rho * nu, {"inlet": inlet, "outlet": PressureOutlet(0.0), "wall": Wall(),
                                                     "axis": Axis()}, closure=closure)
    return flow.solve(problem, dataclasses.replace(settings, max_iterations=max_iterations))


def developing_laminar(settings: flow.SolverSettings):
    """The verification case itself, with the linear solver of ``settings`` swapped in."""
    original = verification.solve
    verification.solve = lambda pb, s, *a, **k: original(pb, dataclasses.replace(
        s, linear_solver=settings.linear_solver), *a, **k)
    try:
        return verification.developing_laminar()[0]
    finally:
        verification.solve = original


CASES = {"turbulent-pipe": turbulent_pipe, "developing-laminar": developing_laminar}


def run(case, kind: str) -> dict:
    made = []
    original = flow.linear_solvers
    flow.linear_solvers = lambda k, pt: made.append(original(k, pt)) or made[-1]
    try:
        start = time.perf_counter()
        sol = CASES[case](flow.SolverSettings(linear_solver=kind))
        seconds = time.perf_counter() - start
    finally:
        flow.linear_solvers = original
    stats = {name: dataclasses.asdict(s.stats) for name, s in zip(("momentum", "pressure"), made[0])}
    return {"case": case, "solver": kind, "cells": sol.problem.mesh.n_cells, "iterations": sol.iterations,
            "converged": sol.converged, "wall_s": round(seconds, 2), "linear": stats, "u": sol.state.u}


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("cases", nargs="*", default=list(CASES))
    parser.add_argument("--out", default=str(HERE / "results" / "linear_solvers.json"))
    parser.add_argument("--momentum-tol", type=float, default=None)
    parser.add_argument("--pressure-tol", type=float, default=None)
    parser.add_argument("--refresh", type=int, default=None, help="CG iterations before refactorising")
    parser.add_argument("--skip-direct", action="store_true")
    parser.add_argument("--pipe-cells", type=int, nargs=2, metavar=("AXIAL", "RADIAL"), default=(120, 50))
    parser.add_argument("--max-iterations", type=int, default=3000, help="turbulent pipe only")
    args = parser.parse_args(argv)
    mom, pres = linear.MomentumSolver, linear.PressureSolver
    if args.momentum_tol:
        mom = functools.partial(mom, tolerance=args.momentum_tol)
    pres_opts = {k: v for k, v in (("tolerance", args.pressure_tol), ("refresh_iterations", args.refresh)) if v}
    linear.LINEAR_SOLVERS["iterative"] = (mom, functools.partial(pres, **pres_opts))
    CASES["turbulent-pipe"] = functools.partial(turbulent_pipe, axial_cells=args.pipe_cells[0],
                                                radial_cells=args.pipe_cells[1], max_iterations=args.max_iterations)
    verification.hagen_poiseuille()  # compile (or load) every kernel before timing
    rows = []
    for case in args.cases:
        ref = None if args.skip_direct else run(case, "direct")
        new = run(case, "iterative")
        for r in [r for r in (ref, new) if r is not None]:
            if ref is not None:
                r["u_difference"] = float(np.abs(r["u"] - ref["u"]).max() / np.abs(ref["u"]).max())
                r["speed_up"] = round(ref["wall_s"] / r["wall_s"], 2)
        for r in [r for r in (ref, new) if r is not None]:
            del r["u"]
            rows.append(r)
            print(json.dumps(r))
    Path(args.out).write_text(json.dumps(rows, indent=1) + "\n")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

"""Benchmark: time each case in a fresh process (cells, iterations, wall seconds, compile seconds, peak RSS).

Usage: python bench/run.py [--out bench/results/bench.json] [case ...]
Each case runs twice in its own process: the first solve includes numba compilation (or loading the
on-disk cache), the second is the steady-state cost; their difference is reported as compile seconds.
"""
from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent


def run_case(name: str) -> dict:
    from solver.verification import CASES
    start = time.perf_counter()
    sol, figures = CASES[name]()
    first = time.perf_counter() - start
    start = time.perf_counter()
    sol, figures = CASES[name]()
    second = time.perf_counter() - start
    return {"case": name, "cells": sol.problem.mesh.n_cells, "iterations": sol.iterations,
            "converged": sol.converged, "wall_s": round(second, 3), "compile_s": round(max(first - second, 0.0), 3),
            "peak_rss_MB": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1), **figures}


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("cases", nargs="*")
    parser.add_argument("--out", default=str(HERE / "results" / "bench.json"))
    parser.add_argument("--one", help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.one:
        print(json.dumps(run_case(args.one)))
        return 0
    from solver.verification import CASES
    names = args.cases or list(CASES)
    rows = []
    for name in names:
        out = subprocess.run([sys.executable, __file__, "--one", name], capture_output=True, text=True, check=True)
        rows.append(json.loads(out.stdout.strip().splitlines()[-1]))
        r = rows[-1]
        print(f"{r['case']:<22} {r['cells']:>7} cells {r['iterations']:>5} it {r['wall_s']:>8.2f} s "
              f"(compile {r['compile_s']:.2f} s) {r['peak_rss_MB']:>7.1f} MB", flush=True)
    Path(args.out).parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(args.out).with_suffix(".tmp")
    tmp.write_text(json.dumps({"machine_cores": os.cpu_count(), "cases": rows}, indent=2))
    os.replace(tmp, args.out)
    print(f"written {args.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())

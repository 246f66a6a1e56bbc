"""The ``airbias`` command line: the only module that knows geometry, solver and calib together."""
from __future__ import annotations

import argparse
import sys

from geometry.schema import CaseError


def _verify(args) -> int:
    from solver.verification import CASES
    print("airbias verification cases (laminar, known answers)")
    for name, case in CASES.items():
        sol, figures = case()
        shown = ", ".join(f"{k} = {v:.5g}" for k, v in figures.items())
        print(f"  {name:<20} {sol.problem.mesh.n_cells:>6} cells, {sol.iterations:>4} iterations, "
              f"{sol.wall_seconds:6.2f} s, converged {sol.converged}: {shown}")
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="airbias", description="Fixture bias and correction factors for vane anemometers.")
    sub = parser.add_subparsers(dest="command", required=True)
    verify = sub.add_parser("verify", help="run the solver's verification cases and print their errors")
    verify.set_defaults(run=_verify)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return args.run(args)
    except CaseError as error:
        print(f"airbias: error: {error}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("airbias: interrupted; nothing half-written was left behind", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())

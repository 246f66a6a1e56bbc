"""The ``airbias`` command line: the only module that knows geometry, solver and calib together.

User mistakes (bad case files, bad units, readings outside a table) end with exit status 2 and one
message; when no table can be made because solves diverged, status 3 names each failure (a single
diverged flow is left out of the table with a note and its residual history in diverged-*.json);
nothing half-written is left behind.
"""
from __future__ import annotations

import argparse
import sys
import warnings
import time
from importlib import resources
from pathlib import Path

from geometry.case import load_case
from geometry.schema import CaseError
from solver.convergence import DivergenceError

from .cautions import CAUTIONS
from .units import LITRE_M3, parse_flow, parse_length, parse_pressure, parse_time, parse_volume


class Progress:
    """One status line on stderr: mesh level, flow, iteration and continuity residual."""

    def __init__(self, stream=sys.stderr, every: int = 25):
        self.stream, self.every, self.tty = stream, every, stream.isatty()
        self.start = time.perf_counter()

    def __call__(self, level, flow, iteration, residuals):
        if iteration % self.every:
            return
        text = (f"[{time.perf_counter() - self.start:6.0f} s] {level} mesh, {flow / LITRE_M3:.4g} L/s, "
                f"iteration {iteration}, continuity {residuals['continuity']:.1e}")
        if self.tty:
            self.stream.write("\r" + text.ljust(90))
        elif iteration % (self.every * 20) == 0:
            self.stream.write(text + "\n")
        self.stream.flush()

    def done(self):
        if self.tty:
            self.stream.write("\r" + " " * 90 + "\r")
            self.stream.flush()


def _case(path: str):
    if not Path(path).is_file():
        raise CaseError("CASE", f"no case file {path}; give the path of a .toml case (see cases/ for examples)")
    case = load_case(path)
    for warning in case.warnings():
        print(f"airbias: warning: {warning}", file=sys.stderr)
    return case


def _out(args, default: str) -> Path:
    return Path(args.out) if args.out else Path(default)


def _tables(args, cases, progress, out=None):
    """Correction tables of ``cases`` on the executor chosen by --workers/--scheduler; notes to stderr."""
    from .jobs import run_tables
    runs = run_tables(cases, args.levels, progress, workers=args.workers, scheduler=args.scheduler, out=out)
    progress.done()
    for run in runs:
        for note in run.notes:
            print(f"airbias: warning: {note}", file=sys.stderr)
    return runs


def _parallel_options(p) -> None:
    p.add_argument("--workers", type=int, help="parallel solver processes (default: one per CPU core; 1 = none)")
    p.add_argument("--scheduler", metavar="tcp://HOST:PORT",
                   help="run the solves on a Dask distributed scheduler instead (needs airbias[dask])")


def _print_table(table):
    print(f"{'flow L/s':>10} {'indicated L/s':>14} {'K':>8} {'U95(K)':>8} {'bias %':>8} {'dp Pa':>9}")
    for row in table.rows:
        print(f"{row.flow_Ls:10.4g} {row.indicated_Ls:14.4g} {row.K:8.4f} {row.K_U95:8.4f} "
              f"{(1 / row.K - 1) * 100:+8.1f} {row.pressure_drop_Pa:9.4g}")


def _table_and_report(args, case, out: Path) -> int:
    """Solve the table, write every output file, print the table and where the report is."""
    from .jobs import write_table
    run, = _tables(args, [case], Progress(), out)
    report = write_table(out, case, run)
    _print_table(run.table)
    print(f"report: {report.resolve()}")
    return 0


def cmd_table(args) -> int:
    case = _case(args.case)
    out = _out(args, f"airbias-{Path(args.case).stem}")
    return _table_and_report(args, case, out)


def cmd_demo(args) -> int:
    out = Path(args.out or "airbias-demo")
    source = resources.files("calib") / "demo" / "demo.toml"
    text = source.read_text()
    out.mkdir(parents=True, exist_ok=True)
    case_path = out / "demo.toml"
    case_path.write_text(text)
    print("airbias demo: a 100 mm vane head with a hub on a reducer cone (an invented scenario)")
    for caution in CAUTIONS[:2]:
        print(f"  caution: {caution}")
    case = load_case(case_path)
    return _table_and_report(args, case, out)


def cmd_solve(args) -> int:
    from .jobs import run_solve, write_solve
    case = _case(args.case)
    flow = _flow(args.flow, "--flow")
    progress = Progress()
    res = run_solve(case, flow, args.level, progress)
    progress.done()
    out = _out(args, f"airbias-{Path(args.case).stem}-{flow / LITRE_M3:g}Ls")
    write_solve(out, res)
    r = res.result
    print(f"{r['flow_Ls']:.4g} L/s on {r['cells']} cells: {r['iterations']} iterations, converged {r['converged']}, "
          f"{r['wall_s']:.1f} s")
    print(f"rotor plane: mean {r['rotor_plane']['area_mean_ms']:.4g} m/s, centre {r['rotor_plane']['centre_ms']:.4g} m/s; "
          f"instrument reads {r['indicated_ms']:.4g} m/s = {r['indicated_Ls']:.4g} L/s; K = {r['K']:.4f}; "
          f"fixture pressure drop {r['pressure_drop_Pa']:.4g} Pa")
    print(f"written: {out}/result.json, rotor_plane.csv, fields.vtu")
    return 0


def _flow(text: str, option: str) -> float:
    try:
        return parse_flow(text)
    except ValueError as error:
        raise CaseError(option, str(error)) from None


def cmd_check(args) -> int:
    from .jobs import check_reading
    case = _case(args.case)
    reading = _flow(args.reading, "--reading")
    run, = _tables(args, [case], Progress())
    try:
        result = check_reading(run.table, reading)
    except ValueError as error:
        raise CaseError("--reading", str(error)) from None
    print(f"reading {reading / LITRE_M3:.4g} L/s -> true flow {result.true_flow / LITRE_M3:.4g} L/s "
          f"+- {result.true_U95 / LITRE_M3:.2g} L/s (95 %); bias {result.bias_percent:+.1f} %")
    print(result.verdict)
    return 0


def cmd_compare(args) -> int:
    from . import figures
    from .atomic import write_bytes
    cases = [_case(path) for path in args.cases]
    out = _out(args, "airbias-compare")
    runs = dict(zip((Path(path).stem for path in args.cases), _tables(args, cases, Progress(), out)))
    ranking = []
    for name, run in runs.items():
        ks = [r.K for r in run.table.rows]
        worst = max(abs(1 / k - 1) for k in ks) * 100
        spread = (max(ks) - min(ks)) / (sum(ks) / len(ks)) * 100
        print(f"\n{name}")
        _print_table(run.table)
        flat = ", ".join(f"{r.flatness:.3f}" for r in run.table.rows)
        print(f"  K spread over the range {spread:.1f} %, worst bias {worst:.1f} %, flatness (centre/mean) {flat}")
        ranking.append((spread + worst, name, spread, worst))
    ranking.sort()
    print("\nranking (smallest worst bias plus K spread first: a fixture with a steady, small correction is "
          "the easiest to trust):")
    for n, (_, name, spread, worst) in enumerate(ranking, start=1):
        print(f"  {n}. {name}: worst bias {worst:.1f} %, K spread {spread:.1f} %")
    out.mkdir(parents=True, exist_ok=True)
    plot = write_bytes(out / "compare.png", figures.compare_figure({k: r.table for k, r in runs.items()}))
    print(f"overlay plot: {plot}")
    return 0


def cmd_mesh(args) -> int:
    from geometry.fixture import build_fixture_mesh
    from geometry.plot import plot_mesh
    case = _case(args.case)
    fixture = build_fixture_mesh(case, level=args.level)
    out = _out(args, f"airbias-{Path(args.case).stem}-mesh")
    out.mkdir(parents=True, exist_ok=True)
    picture = plot_mesh(fixture, out / "mesh.png")
    for key, value in fixture.summary().items():
        print(f"  {key:<28} {value:.4g}")
    print(f"picture: {picture}")
    return 0


def cmd_reference(args) -> int:
    from .reference import bag_flow, orifice_flow
    try:
        if args.method == "bag":
            ref = bag_flow(parse_volume(args.volume), [parse_time(t if t[-1].isalpha() else t + "s") for t in args.times],
                           volume_tolerance_m3=parse_volume(args.volume_tolerance) if args.volume_tolerance else 0.0)
        else:
            from solver.air import Air
            air = Air.from_celsius(args.temperature, parse_pressure(args.upstream_pressure), args.humidity)
            ref = orifice_flow(parse_length(args.pipe_diameter), parse_length(args.orifice_diameter),
                               parse_pressure(args.dp), parse_pressure(args.upstream_pressure), air, taps=args.taps)
    except CaseError:
        raise
    except ValueError as error:
        raise CaseError(f"reference {args.method}", str(error)) from None
    q, u95 = ref.flow_m3s / LITRE_M3, ref.expanded_uncertainty_m3s / LITRE_M3
    print(f"reference flow ({ref.method}): {q:.4g} L/s +- {u95:.2g} L/s (k = {ref.coverage_factor:.2f}, 95 %)")
    print(str(ref.budget))
    print("cautions:")
    for caution in CAUTIONS:
        print(f"  - {caution}")
    return 0


def cmd_validate(args) -> int:
    from .jobs import read_measured_pairs, validate_pairs
    case = _case(args.case)
    pairs = read_measured_pairs(Path(args.measured))
    run, = _tables(args, [case], Progress())
    try:
        rows = validate_pairs(run.table, pairs)
    except ValueError as error:
        raise CaseError("--measured", str(error)) from None
    print(f"{'reading L/s':>12} {'reference L/s':>14} {'K measured':>11} {'K computed':>11} {'En':>7}")
    for r in rows:
        print(f"{r.reading_Ls:12.4g} {r.reference_Ls:14.4g} {r.K_measured:11.4f} {r.K_computed:11.4f} {r.En:7.2f}")
    bad = [r for r in rows if abs(r.En) > 1]
    print("verdict: " + ("the computed table agrees with the measurements (|En| <= 1 everywhere)" if not bad else
                         f"{len(bad)} of {len(rows)} pairs disagree (|En| > 1): check the fixture model and the references"))
    return 0


def cmd_verify(args) -> int:
    from solver.verification import CASES
    print("airbias verification cases (known answers)")
    for name, case in CASES.items():
        sol, figures = case()
        shown = ", ".join(f"{k} = {v:.5g}" for k, v in figures.items())
        print(f"  {name:<22} {sol.problem.mesh.n_cells:>6} cells, {sol.iterations:>4} iterations, "
              f"{sol.wall_seconds:6.2f} s, converged {sol.converged}: {shown}")
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="airbias", description="How wrong a vane anemometer reads in its "
                                     "fixture, and the correction factor K = true flow / reading.")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    def command(name, fn, help_text):
        p = sub.add_parser(name, help=help_text, description=help_text)
        p.set_defaults(run=fn)
        return p

    p = command("demo", cmd_demo, "run the bundled demo case end to end into ./airbias-demo/")
    p.add_argument("--out", help="output folder (default ./airbias-demo)")
    p.add_argument("--levels", type=int, default=2,
                   help="mesh levels for the numerical uncertainty (1-3; default 2, coarse and normal, so the "
                        "demo takes minutes; 3 adds the fine level)")
    _parallel_options(p)
    p = command("table", cmd_table, "correction table of a case: table.csv, table.json, report.html, fields-*.vtu")
    p.add_argument("case", help="case file (.toml)")
    p.add_argument("--out", help="output folder (default ./airbias-CASE)")
    p.add_argument("--levels", type=int, default=3, help="mesh levels (1-3, default 3)")
    _parallel_options(p)
    p = command("solve", cmd_solve, "one operating point: result.json, rotor_plane.csv, fields.vtu")
    p.add_argument("case", help="case file (.toml)")
    p.add_argument("--flow", required=True, help="flow drawn, with its unit: 40L/s, 144m3/h, 85cfm")
    p.add_argument("--level", choices=("coarse", "normal", "fine"), help="mesh level (default: the case's)")
    p.add_argument("--out", help="output folder")
    p = command("check", cmd_check, "is a reading biased by the fixture? true flow, bias and a verdict")
    p.add_argument("case", help="case file (.toml)")
    p.add_argument("--reading", required=True, help="the instrument's reading with its unit: 120cfm, 55L/s")
    p.add_argument("--levels", type=int, default=1, help="mesh levels (1-3, default 1)")
    _parallel_options(p)
    p = command("compare", cmd_compare, "fixture designs side by side, ranked, with an overlay plot")
    p.add_argument("cases", nargs="+", help="two or more case files")
    p.add_argument("--out", help="output folder (default ./airbias-compare)")
    p.add_argument("--levels", type=int, default=1, help="mesh levels (1-3, default 1)")
    _parallel_options(p)
    p = command("mesh", cmd_mesh, "the mesh, its quality report and picture, without solving")
    p.add_argument("case", help="case file (.toml)")
    p.add_argument("--level", choices=("coarse", "normal", "fine"), help="mesh level (default: the case's)")
    p.add_argument("--out", help="output folder")
    p = command("reference", cmd_reference, "reduce a reference flow measurement (bag or ISO 5167-2 orifice)")
    ref = p.add_subparsers(dest="method", required=True, metavar="METHOD")
    bag = ref.add_parser("bag", help="timed collapse (or filling) of a bag of known volume")
    bag.add_argument("--volume", required=True, help="bag volume with unit: 30L")
    bag.add_argument("--times", nargs="+", required=True, help="repeated times, s: 2.1 2.0 2.2")
    bag.add_argument("--volume-tolerance", help="tolerance of the volume, with unit: 1L")
    bag.set_defaults(run=cmd_reference)
    ori = ref.add_parser("orifice", help="ISO 5167-2 orifice plate (Reader-Harris/Gallagher, via fluids)")
    ori.add_argument("--pipe-diameter", required=True, help="pipe bore D with unit: 100mm")
    ori.add_argument("--orifice-diameter", required=True, help="orifice bore d with unit: 50mm")
    ori.add_argument("--dp", required=True, help="differential pressure with unit: 250Pa")
    ori.add_argument("--upstream-pressure", default="101325Pa", help="absolute upstream pressure (default 101325Pa)")
    ori.add_argument("--taps", default="corner", choices=("corner", "flange", "D-D/2"), help="pressure taps")
    ori.add_argument("--temperature", type=float, default=20.0, help="air temperature, degC (default 20)")
    ori.add_argument("--humidity", type=float, default=0.5, help="relative humidity 0-1 (default 0.5)")
    ori.set_defaults(run=cmd_reference)
    p = command("validate", cmd_validate, "measured (reading, reference) pairs against the computed table, with En")
    p.add_argument("case", help="case file (.toml)")
    p.add_argument("--measured", required=True, help="CSV with columns reading_Ls, reference_Ls[, reference_U95_Ls]")
    p.add_argument("--levels", type=int, default=1, help="mesh levels (1-3, default 1)")
    _parallel_options(p)
    command("verify", cmd_verify, "run the solver's verification cases and print their errors")
    return parser


def main(argv: list[str] | None = None) -> int:
    from .pipeline import show_user_warning
    warnings.showwarning = show_user_warning  # one line per warning, no source location
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return args.run(args)
    except CaseError as error:
        print(f"airbias: error: {error}", file=sys.stderr)
        return 2
    except DivergenceError as error:
        print(f"airbias: {error}", file=sys.stderr)
        return 3
    except KeyboardInterrupt:
        print("\nairbias: interrupted; files already written are complete, nothing half-written was left",
              file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())

"""Correction table: the factor K = true flow / indicated flow at each drawn flow, with its budget.

Input: solved points (one per flow and mesh level), each carrying the rotor-plane profile. Per
flow, K is read on the finest level present; its relative standard uncertainty has four
independent parts, combined by the law of propagation with unit sensitivities (JCGM 100:2008,
Eq. 10) and expanded with k = 2 (JCGM 100:2008, 6.2.1):

* numerical: grid convergence index of Celik et al. 2008 (J. Fluids Eng. 130, 078001) on the
  three levels; the GCI is read as an expanded (about 95 %) band, so u = GCI / 2. That reading
  of Roache's F_s = 1.25 band is the usual one (common practice, no source). With two levels the
  Roache two-grid index with F_s = 3 and an assumed order p = 1 is used (the widest band of the
  usual formal orders); with one level there is no numerical part and the row says so;
* model: each closure constant moved to the ends of its published range (the caller re-solves
  and passes the relative change of K), rectangular: u = max(|low|, |high|) / sqrt(3);
* model form: the closure's measured deviation in developed pipe flow, passed by the caller;
* instrument: the same profile re-read with each toleranced instrument copy
  (``Instrument.perturbations()``); the + and - copies of one dimension form one rectangular
  component, u = max(|dK/K|) / sqrt(3) (GUM 4.3.7, half-width a -> a / sqrt(3)).

Units: flows inside are m^3/s; the row fields carry L/s (the table is an output edge).
"""
from __future__ import annotations

import csv
import io
import json
import math
import re
from dataclasses import asdict, dataclass, field
from pathlib import Path

import numpy as np

from calib.atomic import write_text
from calib.instruments import Instrument
from calib.profile import RotorPlaneProfile
from calib.uncertainty import (FALLBACK_ORDER, SAFETY_NO_ORDER, SAFETY_THREE_GRIDS, Budget,
                               Component, expanded, gci_three_grids)
from calib.units import LITRE_M3

LEVELS = ("coarse", "normal", "fine")
MESH_DIMENSION = 2  # the meridional mesh: h = (A / N)^(1/2)
COVERAGE_FACTOR = 2.0  # about 95 % for a normal distribution (GUM 6.2.1)
GCI_COVERAGE = 2.0  # GCI taken as a 95 % band: u = GCI / 2 (common practice, no source)
RECTANGULAR = math.sqrt(3.0)  # half-width a -> a / sqrt(3) (GUM 4.3.7)
SAME_FLOW_RELATIVE = 1e-9  # points whose flows agree this closely belong to one row
EDGE_RELATIVE = 1e-6  # readings this close to the table's ends are rounding, not outside
NO_NUMERICAL = "numerical uncertainty not estimated"

CSV_COLUMNS = ("flow_Ls", "indicated_Ls", "K", "K_U95", "indicated_ms", "u_numerical", "u_model",
               "u_model_form", "u_instrument", "gci_method", "gci_order", "gci_fine21",
               "pressure_drop_Pa", "flatness", "momentum_coefficient", "energy_coefficient",
               "converged", "notes")


@dataclass(frozen=True)
class PointResult:
    """One solved point: true flow ``flow`` (m^3/s) drawn through the fixture on one mesh level."""

    flow: float
    level: str
    cells: int
    iterations: int
    converged: bool
    wall_s: float
    pressure_drop_Pa: float
    profile: RotorPlaneProfile
    wall_y_plus: float = 0.0                       # largest first-cell y+ from the solved wall shear
    wall_y_plus_at: tuple[float, float] = (0.0, 0.0)  # where (x, r), m


def reading(point: PointResult, instrument: Instrument) -> tuple[float, float, float]:
    """(indicated velocity m/s, indicated flow m^3/s, K = flow / indicated flow) for one point."""
    velocity = float(instrument.indicated_velocity(point.profile))
    indicated = velocity * instrument.nominal_area
    if not (math.isfinite(indicated) and indicated > 0.0):
        raise ValueError(f"instrument {instrument.KIND!r} reads {indicated!r} m^3/s at "
                         f"{point.flow / LITRE_M3:.4g} L/s ({point.level} mesh); K needs a positive reading")
    return velocity, indicated, point.flow / indicated


@dataclass(frozen=True)
class TableRow:
    """One flow of the table. u_* are relative standard uncertainties of K (fractions)."""

    flow_Ls: float
    indicated_Ls: float
    indicated_ms: float
    K: float
    K_U95: float
    u_numerical: float
    u_model: float
    u_model_form: float
    u_instrument: float
    gci: dict
    pressure_drop_Pa: float
    flatness: float
    momentum_coefficient: float
    energy_coefficient: float
    converged: bool
    notes: tuple[str, ...] = ()
    budget: Budget = field(default_factory=Budget)

    @property
    def indicated_flow(self) -> float:
        """Indicated flow, m^3/s."""
        return self.indicated_Ls * LITRE_M3

    @property
    def u_combined(self) -> float:
        """Combined relative standard uncertainty of K (GUM Eq. 10), fraction."""
        return self.budget.combined()


def _two_grid_gci(n_fine: int, n_coarse: int, k_fine: float, k_coarse: float) -> dict:
    """Roache two-grid index: GCI = F_s |(K_c - K_f) / K_f| / (r^p - 1), F_s = 3, p assumed 1."""
    if not n_fine > n_coarse > 0:
        raise ValueError(f"cells: the finer level needs more cells ({n_fine} vs {n_coarse})")
    r = (n_fine / n_coarse) ** (1.0 / MESH_DIMENSION)
    gci = SAFETY_NO_ORDER * abs((k_coarse - k_fine) / k_fine) / (r ** FALLBACK_ORDER - 1.0)
    return {"method": "Roache two-grid", "safety": SAFETY_NO_ORDER, "p": FALLBACK_ORDER,
            "r21": r, "gci_fine21": gci}


def _numerical(group: list[PointResult], ks: list[float]) -> tuple[float, dict, list[str]]:
    """Relative u of K from the levels present (coarse -> fine order), GCI details, notes."""
    cells = [p.cells for p in group]
    if len(group) == 3:
        result = gci_three_grids(cells[::-1], ks[::-1], dim=MESH_DIMENSION)
        safety = SAFETY_NO_ORDER if result.fallback else SAFETY_THREE_GRIDS
        gci = {"method": "Celik 2008 three-grid", "safety": safety, **asdict(result)}
        notes = [result.note] if result.note else []
        if result.oscillatory:
            notes.append("oscillatory grid convergence")
        return result.gci_fine21 / GCI_COVERAGE, gci, notes
    if len(group) == 2:
        gci = _two_grid_gci(cells[1], cells[0], ks[1], ks[0])
        note = (f"only two mesh levels ({group[0].level}, {group[1].level}): two-grid index "
                f"with F_s = {SAFETY_NO_ORDER:g} and assumed order p = {FALLBACK_ORDER:g}")
        return gci["gci_fine21"] / GCI_COVERAGE, gci, [note]
    return 0.0, {}, [NO_NUMERICAL]


def _rectangular(changes: dict[str, tuple[float, ...]], label: str) -> list[Component]:
    """One rectangular component per input: u = max |relative change| / sqrt(3)."""
    return [Component(f"{label}: {name}", max(abs(c) for c in ends) / RECTANGULAR,
                      distribution="rectangular") for name, ends in changes.items()]


def _instrument_changes(profile: RotorPlaneProfile, instrument: Instrument, k: float,
                        flow: float) -> dict[str, tuple[float, ...]]:
    """Relative change of K per toleranced dimension; '+'/'-' copies of one dimension pair up."""
    grouped: dict[str, list[float]] = {}
    for name, copy in instrument.perturbations().items():
        dimension = re.split(r"[+-]", name, maxsplit=1)[0] or name
        k_copy = flow / copy.indicated_flow(profile)
        grouped.setdefault(dimension, []).append(k_copy / k - 1.0)
    return {name: tuple(values) for name, values in grouped.items()}


def _rss(components: list[Component]) -> float:
    return math.sqrt(sum(c.standard_uncertainty ** 2 for c in components))


def _group_by_flow(points: list[PointResult], levels) -> list[list[PointResult]]:
    """Points grouped by flow (ascending), each group ordered coarse -> fine, checked."""
    for p in points:
        if p.level not in levels:
            raise ValueError(f"PointResult.level {p.level!r} is not one of {', '.join(levels)}")
    ordered = sorted(points, key=lambda p: p.flow)
    groups: list[list[PointResult]] = []
    for p in ordered:
        if groups and abs(p.flow - groups[-1][0].flow) <= SAME_FLOW_RELATIVE * abs(p.flow):
            groups[-1].append(p)
        else:
            groups.append([p])
    for g in groups:
        names = [p.level for p in g]
        if len(set(names)) != len(names):
            raise ValueError(f"flow {g[0].flow / LITRE_M3:.4g} L/s: level given twice ({names}); "
                             "pass one solved point per flow and level")
        g.sort(key=lambda p: levels.index(p.level))
    return groups


def _row(group, instrument, model_components, model_form_relative) -> TableRow:
    readings = [reading(p, instrument) for p in group]
    ks = [k for _, _, k in readings]
    finest = group[-1]
    velocity, indicated, k = readings[-1]
    u_num, gci, notes = _numerical(group, ks)
    instrument_components = _rectangular(
        _instrument_changes(finest.profile, instrument, k, finest.flow), "instrument")
    components = [Component("numerical (GCI / 2)", u_num), *model_components,
                  Component("model form", model_form_relative), *instrument_components]
    budget = Budget(tuple(components), unit="relative")
    if not all(p.converged for p in group):
        notes.append("not converged on: " + ", ".join(p.level for p in group if not p.converged))
    profile = finest.profile
    return TableRow(
        flow_Ls=float(finest.flow / LITRE_M3), indicated_Ls=float(indicated / LITRE_M3),
        indicated_ms=float(velocity), K=float(k),
        K_U95=float(expanded(budget.combined() * abs(k), COVERAGE_FACTOR)),
        u_numerical=float(u_num), u_model=_rss(model_components),
        u_model_form=float(model_form_relative), u_instrument=_rss(instrument_components), gci=gci,
        pressure_drop_Pa=float(finest.pressure_drop_Pa), flatness=float(profile.flatness),
        momentum_coefficient=float(profile.momentum_coefficient),
        energy_coefficient=float(profile.energy_coefficient),
        converged=all(p.converged for p in group), notes=tuple(notes), budget=budget)


def build_table(points: list[PointResult], instrument: Instrument, *,
                model_perturbations: dict[str, tuple[float, float]] | None = None,
                model_form_relative: float = 0.0, levels=LEVELS) -> "CorrectionTable":
    """The correction table for ``instrument`` from solved points (see the module docstring).

    ``model_perturbations``: closure-constant name -> (dK/K at the low end, dK/K at the high end)
    of its published range. ``model_form_relative``: relative standard uncertainty of K.
    ``levels``: level names ordered coarse -> fine.
    """
    levels = tuple(levels)
    if not points:
        raise ValueError("points: no solved points; solve at least one flow")
    if not (math.isfinite(model_form_relative) and model_form_relative >= 0.0):
        raise ValueError(f"model_form_relative must be finite and >= 0, got {model_form_relative!r}")
    perturbations = dict(model_perturbations or {})
    for name, ends in perturbations.items():
        if len(ends) != 2 or not all(math.isfinite(e) for e in ends):
            raise ValueError(f"model_perturbations[{name!r}]: give two finite relative changes (low, high)")
    model_components = _rectangular(perturbations, "model")
    rows = tuple(_row(g, instrument, model_components, model_form_relative)
                 for g in _group_by_flow(points, levels))
    return CorrectionTable(rows=rows, instrument_kind=instrument.KIND)


def _format_Ls(value: float) -> str:
    return f"{value:.1f}" if abs(value) >= 1.0 else f"{value:.3g}"


def _json_safe(value):
    """NaN/inf -> None and tuples -> lists, so the JSON file is strict JSON."""
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {k: _json_safe(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_safe(v) for v in value]
    if isinstance(value, (np.floating, np.integer, np.bool_)):
        return _json_safe(value.item())
    return value


@dataclass(frozen=True)
class CorrectionTable:
    """Rows in ascending true flow for one instrument kind."""

    rows: tuple[TableRow, ...]
    instrument_kind: str

    def _by_indicated(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        q = np.array([row.indicated_flow for row in self.rows])
        order = np.argsort(q, kind="stable")
        q = q[order]
        if np.any(np.diff(q) <= 0.0):
            raise ValueError("table: two rows give the same indicated flow; K cannot be "
                             "interpolated in the reading")
        k = np.array([row.K for row in self.rows])[order]
        u95 = np.array([row.K_U95 for row in self.rows])[order]
        return q, k, u95

    def correct(self, indicated_flow: float) -> tuple[float, float]:
        """(true flow, U95 of the true flow from K's budget), m^3/s, for a reading in m^3/s.

        K and its U95 are interpolated linearly in the indicated flow. The U95 covers the
        correction only, not the scatter of the reading itself.
        """
        q, k, u95 = self._by_indicated()
        low, high = q[0] * (1.0 - EDGE_RELATIVE), q[-1] * (1.0 + EDGE_RELATIVE)
        if not (math.isfinite(indicated_flow) and low <= indicated_flow <= high):
            raise ValueError(f"reading {_format_Ls(indicated_flow / LITRE_M3)} L/s is outside the table "
                             f"({_format_Ls(q[0] / LITRE_M3)} to {_format_Ls(q[-1] / LITRE_M3)} L/s "
                             "indicated); extend [operating] flows_Ls")
        k_here = float(np.interp(indicated_flow, q, k))
        return k_here * indicated_flow, float(np.interp(indicated_flow, q, u95)) * indicated_flow

    def bias_percent(self, indicated_flow: float) -> float:
        """How far the reading is off: (indicated / true - 1) * 100, %."""
        true, _ = self.correct(indicated_flow)
        return (indicated_flow / true - 1.0) * 100.0

    def _csv_values(self, row: TableRow) -> dict:
        return {
            "flow_Ls": row.flow_Ls, "indicated_Ls": row.indicated_Ls, "K": row.K,
            "K_U95": row.K_U95, "indicated_ms": row.indicated_ms, "u_numerical": row.u_numerical,
            "u_model": row.u_model, "u_model_form": row.u_model_form,
            "u_instrument": row.u_instrument, "gci_method": row.gci.get("method", "none"),
            "gci_order": row.gci.get("p", ""), "gci_fine21": row.gci.get("gci_fine21", ""),
            "pressure_drop_Pa": row.pressure_drop_Pa, "flatness": row.flatness,
            "momentum_coefficient": row.momentum_coefficient,
            "energy_coefficient": row.energy_coefficient, "converged": row.converged,
            "notes": "; ".join(row.notes),
        }

    def to_csv_text(self) -> str:
        """CSV with a header line; floats written with repr precision (round-trips exactly)."""
        buffer = io.StringIO()
        writer = csv.DictWriter(buffer, fieldnames=CSV_COLUMNS, lineterminator="\n")
        writer.writeheader()
        for row in self.rows:
            writer.writerow({k: repr(float(v)) if isinstance(v, float) else v
                             for k, v in self._csv_values(row).items()})
        return buffer.getvalue()

    def to_json_dict(self) -> dict:
        """Everything in the CSV plus the GCI details and each budget line."""
        rows = []
        for row in self.rows:
            values = self._csv_values(row)
            values["notes"] = list(row.notes)
            values["gci"] = row.gci
            values["budget"] = [dict(zip(("name", "u", "sensitivity", "contribution", "dof",
                                          "distribution"), line)) for line in row.budget.rows()]
            rows.append(values)
        return _json_safe({
            "instrument": self.instrument_kind,
            "units": {"flow_Ls": "L/s", "indicated_Ls": "L/s", "indicated_ms": "m/s", "K": "-",
                      "K_U95": "- (k = 2)", "u_*": "relative standard uncertainty of K",
                      "pressure_drop_Pa": "Pa"},
            "coverage_factor": COVERAGE_FACTOR,
            "sources": ["Celik et al. 2008, J. Fluids Eng. 130, 078001 (GCI)",
                        "JCGM 100:2008 (GUM), Eq. 10 and 6.2.1"],
            "rows": rows,
        })

    def write(self, directory) -> tuple[Path, Path]:
        """Write table.csv and table.json into ``directory`` (created if missing), atomically."""
        folder = Path(directory)
        folder.mkdir(parents=True, exist_ok=True)
        csv_path = write_text(folder / "table.csv", self.to_csv_text())
        json_path = write_text(folder / "table.json",
                               json.dumps(self.to_json_dict(), indent=2, allow_nan=False) + "\n")
        return csv_path, json_path

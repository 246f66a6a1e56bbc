"""Case files: TOML in, a frozen :class:`Case` in SI units out, every mistake refused by name.

Sections (key tables below; README's key reference is :func:`case_key_reference`):
``title``, ``[air]``, ``[ambient]``, ``[[segment]]`` (the fixture chain, mouth first),
``[instrument]`` (kept raw: the calibration layer checks it), ``[operating]``, ``[model]``, ``[mesh]``.
"""
from __future__ import annotations

import difflib
import math
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

from .schema import REQUIRED, CaseError, Key, key_reference, read_table
from .segments import KIND_KEY, SEGMENT_KINDS, Chamber, Head, Step, Tube

CELSIUS_ZERO_K = 273.15  # K; definition of the Celsius scale
DEVELOPED_FLOW_DIAMETERS = 10.0  # outlet tube length (in D) for near-developed flow [common practice, no source]

MOUTHS = ("flanged", "thin-wall", "bell")
CLOSURES = ("mixing-length", "laminar")
MESH_LEVELS = ("coarse", "normal", "fine")


def _fraction(value: float) -> str | None:
    return None if 0.0 <= value <= 1.0 else "must lie between 0 and 1 (a fraction, not a percentage)"


TOP_KEYS = (Key("title", "str", default=REQUIRED, description="a one-line name for the case, echoed in reports"),)
AIR_KEYS = (
    Key("temperature_C", "float", unit="degC", default=20.0, description="ambient air temperature"),
    Key("pressure_Pa", "float", unit="Pa", default=101325.0, positive=True, description="ambient pressure"),
    Key("relative_humidity", "float", unit="-", default=0.5, check=_fraction,
        description="relative humidity, 0..1"),
)
AMBIENT_KEYS = (
    Key("mouth", "str", default=REQUIRED, choices=MOUTHS, description="shape of the fixture's inlet at x = 0"),
    Key("bell_radius_mm", "float", unit="mm", default=None, positive=True,
        description="radius of the quarter-circle flare (mouth = \"bell\" only)"),
    Key("wall_thickness_mm", "float", unit="mm", default=None, positive=True,
        description="wall thickness of the protruding first segment (mouth = \"thin-wall\" only)"),
    Key("radius_mm", "float", unit="mm", default=None, positive=True,
        description="radius of the still-air region (default: automatic, large enough not to matter)"),
    Key("length_mm", "float", unit="mm", default=None, positive=True,
        description="length of the still-air region ahead of the mouth (default: automatic)"),
)
OPERATING_KEYS = (
    Key("flows_Ls", "list[float]", unit="L/s", default=REQUIRED, positive=True,
        description="volumetric flows drawn at the outlet, at ambient density, ascending"),
)
MODEL_KEYS = (
    Key("closure", "str", default="mixing-length", choices=CLOSURES,
        description="turbulence closure; other keys of [model] are numeric constant overrides "
                    "(e.g. kappa, a_plus), checked by the solver"),
)
MESH_KEYS = (
    Key("level", "str", default="normal", choices=MESH_LEVELS,
        description="mesh fineness: about 1.5x the cells per direction from one level to the next"),
)
SECTIONS = ("title", "air", "ambient", "segment", "instrument", "operating", "model", "mesh")


@dataclass(frozen=True)
class AirSettings:
    temperature_K: float = 293.15
    pressure_Pa: float = 101325.0
    relative_humidity: float = 0.5


@dataclass(frozen=True)
class Ambient:
    """The still air ahead of the mouth; ``radius``/``length`` None = automatic (see geometry.fixture)."""

    mouth: str
    bell_radius: float | None = None
    wall_thickness: float | None = None
    radius: float | None = None
    length: float | None = None


@dataclass(frozen=True)
class Operating:
    flows: tuple[float, ...]  # m^3/s, ascending


@dataclass(frozen=True)
class ModelSettings:
    closure: str = "mixing-length"
    overrides: dict = field(default_factory=dict)


@dataclass(frozen=True)
class MeshSettings:
    level: str = "normal"


@dataclass(frozen=True)
class Case:
    title: str
    air: AirSettings
    ambient: Ambient
    segments: tuple
    instrument_table: dict
    operating: Operating
    model: ModelSettings
    mesh: MeshSettings
    source_text: str = ""
    base_dir: Path = Path(".")

    @property
    def head_index(self) -> int:
        return next(i for i, s in enumerate(self.segments) if isinstance(s, Head))

    @property
    def head(self) -> Head:
        return self.segments[self.head_index]

    def warnings(self) -> list[str]:
        """Soft issues: the case runs, but the user should know."""
        notes = []
        last = self.segments[-1]
        if not isinstance(last, Tube):
            notes.append(f"the last segment is a {last.KIND}: the outlet condition assumes developed flow; "
                         f"end the chain with a tube of >= {DEVELOPED_FLOW_DIAMETERS:g} D")
        elif last.length < DEVELOPED_FLOW_DIAMETERS * last.diameter:
            notes.append(f"last tube is {last.length / last.diameter:.1f} D long: the outlet condition assumes "
                         f"developed flow; lengthen the last tube to >= {DEVELOPED_FLOW_DIAMETERS:g} D")
        return notes


def load_case(path) -> Case:
    """Read and check a case file (TOML)."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise CaseError(str(path), f"cannot read the case file ({exc.strerror}); check the path") from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CaseError(path.name, f"TOML syntax error: {exc}; fix the file at that line") from None
    return parse_case(data, path.parent, source_text=text)


def parse_case(data: dict, base_dir, source_text: str = "") -> Case:
    """Check a parsed case (dict from TOML) and return the frozen :class:`Case` (SI units)."""
    if not isinstance(data, dict):
        raise CaseError("case", "expected a table of sections")
    for name in data:
        if name not in SECTIONS:
            hint = difflib.get_close_matches(name, SECTIONS, n=1)
            extra = f"; did you mean {hint[0]!r}?" if hint else f"; known sections: {', '.join(SECTIONS)}"
            raise CaseError(name, f"unknown section or key{extra}")
    title = read_table({k: data[k] for k in ("title",) if k in data}, TOP_KEYS, "case")["title"]
    air = read_table(data.get("air", {}), AIR_KEYS, "air")
    instrument = data.get("instrument", {})
    if not isinstance(instrument, dict):
        raise CaseError("instrument", "expected a table [instrument] with kind = ... and its keys")
    if "ambient" not in data:
        raise CaseError("ambient", "missing; add an [ambient] table with mouth = \"flanged\" | \"thin-wall\" | \"bell\"")
    if "operating" not in data:
        raise CaseError("operating", "missing; add an [operating] table with flows_Ls = [...]")
    return Case(
        title=title,
        air=AirSettings(air["temperature_C"] + CELSIUS_ZERO_K, air["pressure_Pa"], air["relative_humidity"]),
        ambient=_ambient(data["ambient"]),
        segments=_segments(data.get("segment")),
        instrument_table=dict(instrument),
        operating=_operating(data["operating"]),
        model=_model(data.get("model", {})),
        mesh=MeshSettings(read_table(data.get("mesh", {}), MESH_KEYS, "mesh")["level"]),
        source_text=source_text,
        base_dir=Path(base_dir),
    )


def _ambient(table) -> Ambient:
    v = read_table(table, AMBIENT_KEYS, "ambient")
    needs = {"bell": "bell_radius_mm", "thin-wall": "wall_thickness_mm"}
    for mouth, key in needs.items():
        if v["mouth"] == mouth and v[key] is None:
            raise CaseError(f"ambient.{key}", f"missing; mouth = \"{mouth}\" needs {key} = ... (in mm)")
        if v["mouth"] != mouth and v[key] is not None:
            raise CaseError(f"ambient.{key}", f"only used with mouth = \"{mouth}\"; remove it or change the mouth")
    return Ambient(v["mouth"], v["bell_radius_mm"], v["wall_thickness_mm"], v["radius_mm"], v["length_mm"])


def _segments(tables) -> tuple:
    if tables is None:
        raise CaseError("segment", "missing; describe the fixture with [[segment]] tables, mouth first")
    if not isinstance(tables, list) or not all(isinstance(t, dict) for t in tables):
        raise CaseError("segment", "expected [[segment]] tables (double brackets), one per segment")
    segments, previous = [], None
    for index, table in enumerate(tables):
        kind = read_table({"kind": table["kind"]} if "kind" in table else {},
                          (replace(KIND_KEY, default=REQUIRED),), f"segment[{index}]")["kind"]
        if kind not in SEGMENT_KINDS:
            hint = difflib.get_close_matches(kind, list(SEGMENT_KINDS), n=1)
            extra = f" (did you mean {hint[0]!r}?)" if hint else ""
            raise CaseError(f"segment[{index}].kind", f"unknown segment kind {kind!r}{extra}; use one of "
                            f"{', '.join(SEGMENT_KINDS)}")
        if segments and isinstance(segments[-1], Chamber):
            previous = _chamber_port(segments, table, kind, index)
        if segments and isinstance(segments[-1], Step) and kind == "step":
            raise CaseError(f"segment[{index}].kind", "two steps in a row: merge them into one step")
        segment = SEGMENT_KINDS[kind].from_table(table, index, previous)
        segments.append(segment)
        previous = segment.end_diameter
    if isinstance(segments[-1], Chamber):
        raise CaseError(f"segment[{len(segments) - 1}].kind", "a chamber needs a following segment for its "
                        "port: add a [[segment]] kind = \"tube\" with diameter_mm after it")
    if isinstance(segments[-1], Step):
        raise CaseError(f"segment[{len(segments) - 1}].kind", "a step cannot end the chain: follow it with a "
                        "tube to the outlet")
    heads = [i for i, s in enumerate(segments) if isinstance(s, Head)]
    if len(heads) != 1:
        where = "segment" if not heads else f"segment[{heads[1]}].kind"
        raise CaseError(where, f"the chain needs exactly one head (the instrument's ring), found {len(heads)}")
    return tuple(segments)


def _chamber_port(segments: list, table: dict, kind: str, index: int) -> float:
    """Resolve the previous chamber's port from this segment's diameter; return it."""
    chamber = segments[-1]
    port = table.get("diameter_mm") if kind in ("head", "tube") else None
    if not isinstance(port, (int, float)) or isinstance(port, bool):
        raise CaseError(f"segment[{index}].diameter_mm", "after a chamber comes its port: give this segment "
                        "(a head or a tube) its diameter_mm")
    port = float(port) * 1e-3
    if port <= 0.0:
        raise CaseError(f"segment[{index}].diameter_mm", f"must be greater than zero, got {port * 1e3:g}")
    if port >= chamber.diameter:
        raise CaseError(f"segment[{index - 1}].diameter_mm", f"a chamber must be wider than its port "
                        f"({port * 1e3:g} mm); widen the chamber or narrow the port")
    segments[-1] = replace(chamber, port_diameter=port)
    return port


def _operating(table) -> Operating:
    flows = read_table(table, OPERATING_KEYS, "operating")["flows_Ls"]
    if any(b <= a for a, b in zip(flows, flows[1:])):
        raise CaseError("operating.flows_Ls", "list the flows in ascending order without repeats")
    return Operating(tuple(flows))


def _model(table) -> ModelSettings:
    if not isinstance(table, dict):
        raise CaseError("model", "expected a table of keys")
    closure = read_table({k: v for k, v in table.items() if k == "closure"}, MODEL_KEYS, "model")["closure"]
    overrides = {}
    for name, value in table.items():
        if name == "closure":
            continue
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
            raise CaseError(f"model.{name}", f"a model constant must be a finite number, got {value!r}")
        overrides[name] = float(value)
    return ModelSettings(closure, overrides)


def case_key_reference() -> str:
    """Markdown key reference of every case-file table, generated from the key tables."""
    header = ["| key | type | unit | default | meaning |", "|---|---|---|---|---|"]
    parts = []
    tables = [("top level", TOP_KEYS), ("[air]", AIR_KEYS), ("[ambient]", AMBIENT_KEYS)]
    tables += [(f"[[segment]] kind = \"{kind}\"", cls.KEYS) for kind, cls in SEGMENT_KINDS.items()]
    tables += [("[operating]", OPERATING_KEYS), ("[model]", MODEL_KEYS), ("[mesh]", MESH_KEYS)]
    for name, keys in tables:
        parts.append("\n".join([f"#### {name}", ""] + header + key_reference(keys)))
    parts.append("The `[instrument]` table is checked by the calibration layer (see its key tables).")
    return "\n\n".join(parts) + "\n"

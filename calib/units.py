"""Quantities with units, read and written at the command-line edge.

Everything inside airbias is SI (m^3/s, m^3, Pa, s); this module is the one place
where "40L/s", "120cfm" or "1 inH2O" become numbers. Conversion factors follow
NIST Special Publication 811 (Thompson & Taylor 2008, *Guide for the Use of the
International System of Units*, Appendix B.8/B.9):

- foot = 0.3048 m exactly (international foot), so ft^3 = 0.028316846592 m^3 and
  cfm = ft^3/min = 4.719474432e-4 m^3/s exactly;
- litre = 1e-3 m^3 exactly;
- inch of water, conventional (inH2O) = 0.0254 m x 1000 kg/m^3 x 9.80665 m/s^2
  = 249.08891 Pa (SP 811 lists 2.490889 E+02); mmH2O conventional = 9.80665 Pa.
"""
from __future__ import annotations

import math
import re

FOOT_M = 0.3048  # m, international foot (exact)
INCH_M = 0.0254  # m (exact)
LITRE_M3 = 1.0e-3  # m^3 (exact)
STANDARD_GRAVITY = 9.80665  # m/s^2 (exact, CGPM 1901)
CONVENTIONAL_WATER_DENSITY = 1000.0  # kg/m^3, the "conventional" water column of SP 811

FT3_M3 = FOOT_M ** 3
MINUTE_S = 60.0
HOUR_S = 3600.0

# unit spelling (after normalisation: lower case, no spaces, ^ and superscripts removed)
# -> factor to the SI unit of its kind. One table; every alias points here.
FLOW_UNITS = {
    "m3/s": 1.0,
    "m3/min": 1.0 / MINUTE_S,
    "m3/h": 1.0 / HOUR_S,
    "l/s": LITRE_M3,
    "l/min": LITRE_M3 / MINUTE_S,
    "l/h": LITRE_M3 / HOUR_S,
    "cfm": FT3_M3 / MINUTE_S,
    "ft3/min": FT3_M3 / MINUTE_S,
    "ft3/s": FT3_M3,
}
VOLUME_UNITS = {
    "m3": 1.0,
    "l": LITRE_M3,
    "dm3": LITRE_M3,
    "cm3": 1.0e-6,
    "ml": 1.0e-6,
    "ft3": FT3_M3,
}
PRESSURE_UNITS = {
    "pa": 1.0,
    "hpa": 100.0,
    "kpa": 1000.0,
    "mbar": 100.0,
    "bar": 1.0e5,
    "inh2o": INCH_M * CONVENTIONAL_WATER_DENSITY * STANDARD_GRAVITY,
    "inwc": INCH_M * CONVENTIONAL_WATER_DENSITY * STANDARD_GRAVITY,
    "mmh2o": 1.0e-3 * CONVENTIONAL_WATER_DENSITY * STANDARD_GRAVITY,
}
LENGTH_UNITS = {
    "m": 1.0,
    "cm": 1.0e-2,
    "mm": 1.0e-3,
    "in": INCH_M,
    "ft": FOOT_M,
}
TIME_UNITS = {
    "s": 1.0,
    "ms": 1.0e-3,
    "min": MINUTE_S,
    "h": HOUR_S,
}

# display spelling for format_flow (canonical key -> printed unit)
FLOW_DISPLAY = {"m3/s": "m^3/s", "m3/min": "m^3/min", "m3/h": "m^3/h", "l/s": "L/s",
                "l/min": "L/min", "l/h": "L/h", "cfm": "cfm", "ft3/min": "ft^3/min",
                "ft3/s": "ft^3/s"}

_NUMBER_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(\S.*?)?\s*$")
_SUPERSCRIPTS = str.maketrans({"³": "3", "²": "2"})

_KINDS = {
    "flow": (FLOW_UNITS, "40L/s, 85m3/h, 120cfm"),
    "volume": (VOLUME_UNITS, "30L, 0.03m3, 1ft3"),
    "pressure": (PRESSURE_UNITS, "250Pa, 2.5kPa, 1inH2O"),
    "time": (TIME_UNITS, "2.1s, 500ms, 1.5min"),
    "length": (LENGTH_UNITS, "100mm, 10cm, 4in"),
}


def normalise_unit(unit: str) -> str:
    """Lower-case a unit and drop spaces, '^' and superscripts: 'm^3 / h' -> 'm3/h'."""
    return unit.translate(_SUPERSCRIPTS).replace("^", "").replace(" ", "").lower()


def _parse(text: str, kind: str) -> float:
    table, examples = _KINDS[kind]
    accepted = ", ".join(sorted(table))
    hint = (f"{text!r} is not a {kind}; write a number and a unit such as {examples} "
            f"(accepted units: {accepted})")
    if not isinstance(text, str):
        raise ValueError(hint)
    match = _NUMBER_UNIT.match(text)
    if match is None or match.group(2) is None:
        raise ValueError(hint)
    factor = table.get(normalise_unit(match.group(2)))
    if factor is None:
        raise ValueError(hint)
    value = float(match.group(1))
    if not math.isfinite(value):
        raise ValueError(hint)
    return value * factor


def _parse_positive(text: str, kind: str) -> float:
    value = _parse(text, kind)
    if value <= 0.0:
        raise ValueError(f"{text!r}: a {kind} must be greater than zero")
    return value


def parse_flow(text: str) -> float:
    """Volume flow rate from text such as '40L/s', '120 cfm', '2.5 m^3/h' -> m^3/s (> 0)."""
    return _parse_positive(text, "flow")


def parse_volume(text: str) -> float:
    """Volume from text such as '30L', '0.03 m3', '1 ft3' -> m^3 (> 0)."""
    return _parse_positive(text, "volume")


def parse_pressure(text: str) -> float:
    """Pressure (or pressure difference) from '250Pa', '2.5 kPa', '1 inH2O' -> Pa.

    Negative values are allowed: a suction device gives a negative gauge pressure.
    """
    return _parse(text, "pressure")


def parse_length(text: str) -> float:
    """Length from text such as '100mm', '4 in', '0.1 m' -> m (> 0)."""
    return _parse_positive(text, "length")


def parse_time(text: str) -> float:
    """Duration from text such as '2.1s', '500 ms', '1.5 min' -> s (> 0)."""
    return _parse_positive(text, "time")


def format_flow(q_m3s: float, unit: str = "L/s", digits: int = 4) -> str:
    """Format a flow in m^3/s as text in ``unit`` with ``digits`` significant figures."""
    key = normalise_unit(unit)
    if key not in FLOW_UNITS:
        raise ValueError(f"unit {unit!r} is not a flow unit; use one of "
                         f"{', '.join(FLOW_DISPLAY.values())}")
    return f"{q_m3s / FLOW_UNITS[key]:.{digits}g} {FLOW_DISPLAY[key]}"

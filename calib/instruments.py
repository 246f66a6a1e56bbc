"""Instrument models: what a device in the rotor plane would display for a given velocity profile.

Every instrument is a small frozen dataclass in SI units with

* ``nominal_area`` (m^2): the area the user multiplies the displayed velocity by,
* ``indicated_velocity(profile)`` (m/s): the displayed velocity,
* ``indicated_flow(profile)`` = indicated_velocity * nominal_area (m^3/s),
* ``perturbations()``: copies with each stated dimension moved by its tolerance (uncertainty budget),
* ``KEYS``: the case-file keys of its ``[instrument]`` table (geometry.schema.Key),
* ``from_case(values, ...)``: build from the SI values read_table returns.

Kinds are registered by type string in :data:`INSTRUMENTS`; :func:`build_instrument` turns an
``[instrument]`` table into an instance. The traverse and vane kinds live in calib/traverse.py
and calib/vane.py and register themselves when this module is imported.
"""
from __future__ import annotations

import csv
from abc import ABC, abstractmethod
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

import numpy as np

from calib.profile import RotorPlaneProfile, gauss_points
from geometry.schema import CaseError, Key, read_table

INSTRUMENTS: dict[str, type] = {}
DEFAULT_KIND = "area-mean"


def register_instrument(kind: str):
    """Class decorator: add an Instrument subclass to :data:`INSTRUMENTS` under ``kind``."""
    def decorate(cls):
        cls.KIND = kind
        INSTRUMENTS[kind] = cls
        return cls
    return decorate


def _instrument_kinds() -> tuple[str, ...]:
    return ("area-mean", "point", "traverse", "weighted", "vane")


COMMON_KEYS = (
    Key("kind", "str", default=DEFAULT_KIND, choices=_instrument_kinds(),
        description="instrument model"),
    Key("nominal_area_cm2", "float", unit="cm2", default=None, positive=True,
        description="area the instrument multiplies its velocity by (default: the head's free area)"),
)


class Instrument(ABC):
    """Abstract instrument: a displayed velocity (m/s) from a rotor-plane profile."""

    KIND: str = ""
    KEYS: tuple[Key, ...] = COMMON_KEYS
    nominal_area: float

    @abstractmethod
    def indicated_velocity(self, profile: RotorPlaneProfile) -> float:
        """Displayed velocity, m/s."""

    def indicated_flow(self, profile: RotorPlaneProfile) -> float:
        """Displayed velocity times the nominal area, m^3/s."""
        return self.indicated_velocity(profile) * self.nominal_area

    def perturbations(self) -> dict[str, "Instrument"]:
        """Copies with each stated dimension moved by its tolerance; none by default."""
        return {}

    @classmethod
    def from_case(cls, values: dict[str, Any], *, nominal_area: float, base_dir: Path,
                  air_density: float) -> "Instrument":
        return cls(nominal_area=nominal_area)


@register_instrument("area-mean")
@dataclass(frozen=True)
class AreaMeanInstrument(Instrument):
    """Ideal reference: reads the true area-mean axial velocity (flux / area)."""

    nominal_area: float

    def indicated_velocity(self, profile):
        return profile.area_mean


POINT_POSITION_TOLERANCE = 1e-3  # m, probe placement; common practice, no source


@register_instrument("point")
@dataclass(frozen=True)
class PointInstrument(Instrument):
    """A single-point probe (Pitot tube, hot wire) reading u at radius ``at_r`` (m)."""

    nominal_area: float
    at_r: float = 0.0

    KEYS = COMMON_KEYS + (
        Key("at_r_mm", "float", unit="mm", default=0.0, non_negative=True,
            description="radius of the probe tip from the axis"),
    )

    @classmethod
    def from_case(cls, values, *, nominal_area, base_dir, air_density):
        return cls(nominal_area=nominal_area, at_r=values["at_r_mm"])

    def indicated_velocity(self, profile):
        u, _ = profile.interpolate(np.array([self.at_r]))
        return float(u[0])

    def perturbations(self):
        # abs(): a probe moved "inward" past the axis sits at the mirrored radius
        d = POINT_POSITION_TOLERANCE
        return {"at_r+1mm": replace(self, at_r=self.at_r + d),
                "at_r-1mm": replace(self, at_r=abs(self.at_r - d))}


def read_weight_table(path: Path, key: str = "instrument.table") -> tuple[np.ndarray, np.ndarray]:
    """Read a CSV with header columns ``r_mm, w``; return (r in m, w), checked."""
    if not path.is_file():
        raise CaseError(key, f"weight file {str(path)!r} not found; give a path relative to the case file")
    with path.open(newline="") as handle:
        rows = list(csv.reader(line for line in handle if line.strip() and not line.startswith("#")))
    header = [name.strip() for name in rows[0]] if rows else []
    if sorted(header) != ["r_mm", "w"]:
        raise CaseError(key, f"{path.name}: needs exactly the columns r_mm, w in a header line, got {header}")
    i_r, i_w = header.index("r_mm"), header.index("w")
    try:
        data = np.array([[float(row[i_r]), float(row[i_w])] for row in rows[1:]])
    except (ValueError, IndexError):
        raise CaseError(key, f"{path.name}: every row needs two numbers r_mm, w") from None
    if data.shape[0] < 2 or not np.all(np.isfinite(data)):
        raise CaseError(key, f"{path.name}: needs at least two finite rows")
    r, w = data[:, 0] * 1e-3, data[:, 1]
    if r[0] < 0.0 or np.any(np.diff(r) <= 0.0):
        raise CaseError(key, f"{path.name}: r_mm must be non-negative and strictly ascending")
    if np.any(w < 0.0) or not np.any(w > 0.0):
        raise CaseError(key, f"{path.name}: weights w must be non-negative and not all zero")
    return r, w


@register_instrument("weighted")
@dataclass(frozen=True)
class WeightedInstrument(Instrument):
    """Reads a user-weighted mean: indicated = integral w u dA / integral w dA.

    w(r) is linear between the table's radii and zero outside them (the instrument senses only
    where its table says). Both integrals are exact for the piecewise-linear w and u.
    """

    nominal_area: float
    weight_r: tuple[float, ...]
    weight_w: tuple[float, ...]

    KEYS = COMMON_KEYS + (
        Key("table", "str", default=None,
            description="CSV file (columns r_mm, w) of the instrument's radial weight, relative to the case file"),
    )

    @classmethod
    def from_case(cls, values, *, nominal_area, base_dir, air_density):
        if values["table"] is None:
            raise CaseError("instrument.table", "missing; add table = \"weights.csv\" (columns r_mm, w)")
        path = Path(values["table"])
        r, w = read_weight_table(path if path.is_absolute() else Path(base_dir) / path)
        return cls(nominal_area=nominal_area, weight_r=tuple(r), weight_w=tuple(w))

    def indicated_velocity(self, profile):
        wr = np.asarray(self.weight_r)
        breaks = np.union1d(profile.r, wr[(wr > profile.r[0]) & (wr < profile.r[-1])])
        x, g = gauss_points(breaks)
        w = np.interp(x, wr, np.asarray(self.weight_w), left=0.0, right=0.0)
        u, _ = profile.interpolate(x)
        denominator = float(np.sum(g * w * x))
        if denominator <= 0.0:
            raise ValueError("weighted instrument: the weight table does not overlap the rotor plane")
        return float(np.sum(g * w * u * x)) / denominator


def build_instrument(table: dict | None, *, head_free_area: float, base_dir: Path,
                     air_density: float) -> Instrument:
    """Check an ``[instrument]`` table and return the instrument (SI inside).

    None or an empty table gives the ideal area-mean reference over the head's free area (m^2).
    ``base_dir`` resolves relative file names; ``air_density`` (kg/m^3) is used by the vane.
    """
    if not table:
        return AreaMeanInstrument(nominal_area=head_free_area)
    if not isinstance(table, dict):
        raise CaseError("instrument", "expected a table of keys")
    kind = read_table({"kind": table["kind"]} if "kind" in table else {}, COMMON_KEYS[:1], "instrument")["kind"]
    cls = INSTRUMENTS[kind]
    values = read_table(table, cls.KEYS, "instrument")
    area = values["nominal_area_cm2"]
    return cls.from_case(values, nominal_area=head_free_area if area is None else area,
                         base_dir=Path(base_dir), air_density=air_density)


# The traverse and vane kinds subclass Instrument and register themselves on import.
import calib.traverse  # noqa: E402,F401
import calib.vane  # noqa: E402,F401

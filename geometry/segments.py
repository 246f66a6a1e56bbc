"""Segment kinds of a fixture chain, from the mouth (x = 0) toward the suction outlet.

Each kind is a small frozen dataclass in SI units with

* ``KEYS``: its ``[[segment]]`` keys (a :class:`~geometry.schema.Key` table, shared with the README);
* ``from_table(table, index, previous_diameter)``: check one table and build the segment;
* ``start_diameter``, ``end_diameter``, ``length`` (m);
* ``radius_at(xi)``: wall radius (m) at ``xi`` metres from the segment's start;
* ``wall_outline(x0)``: the wall polyline [(x, r), ...] when the segment starts at ``x0``.

Kinds are registered by type string in :data:`SEGMENT_KINDS`. Adding one touches this file only.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from .schema import REQUIRED, CaseError, Key, read_table

SEGMENT_KINDS: dict[str, type] = {}


def register_segment(kind: str):
    """Class decorator: add a segment class to :data:`SEGMENT_KINDS` under ``kind``."""
    def decorate(cls):
        cls.KIND = kind
        SEGMENT_KINDS[kind] = cls
        return cls
    return decorate


KIND_KEY = Key("kind", "str", default=None, description="segment kind: head, cone, tube, chamber or step")


def _read(table: Any, keys: tuple[Key, ...], index: int) -> dict[str, Any]:
    return read_table(table, (KIND_KEY,) + keys, f"segment[{index}]")


def _need_previous(kind: str, index: int, previous_diameter: float | None) -> float:
    if previous_diameter is None:
        raise CaseError(f"segment[{index}].kind", f"a {kind} cannot be the first segment: it starts from the "
                        "previous segment's diameter; start the chain with a head or a tube with diameter_mm")
    return previous_diameter


@register_segment("head")
@dataclass(frozen=True)
class Head:
    """The instrument's ring: a straight bore with the rotor plane and an optional hub body on the axis.

    The hub is a solid of revolution of radius ``hub_diameter/2`` from ``hub_start`` to
    ``hub_start + hub_length`` (measured from the head's start), with a blunt or a round
    (hemispherical, nose length = hub radius) nose and a blunt tail.
    """

    diameter: float
    length: float
    rotor_at: float
    hub_diameter: float = 0.0
    hub_start: float = 0.0
    hub_length: float = 0.0
    hub_nose: str = "round"
    rotor_loss: float = 0.0

    KEYS = (
        Key("diameter_mm", "float", unit="mm", default=REQUIRED, positive=True,
            description="bore diameter of the head"),
        Key("length_mm", "float", unit="mm", default=REQUIRED, positive=True, description="length of the head"),
        Key("rotor_at_mm", "float", unit="mm", default=None, positive=True,
            description="rotor plane, from the head's start (default: mid-length)"),
        Key("hub_diameter_mm", "float", unit="mm", default=None, positive=True,
            description="diameter of the hub body on the axis (none if omitted)"),
        Key("hub_start_mm", "float", unit="mm", default=None, positive=True,
            description="start of the hub nose, from the head's start"),
        Key("hub_length_mm", "float", unit="mm", default=None, positive=True,
            description="hub length from nose tip to blunt tail"),
        Key("hub_nose", "str", default="round", choices=("blunt", "round"),
            description="hub nose shape (round = hemisphere of the hub radius)"),
        Key("rotor_loss", "float", unit="-", default=0.0, non_negative=True,
            description="pressure-loss coefficient of rotor and struts on the head's mean velocity "
                        "(a thin porous zone over the swept annulus at the rotor plane)"),
    )

    @property
    def start_diameter(self) -> float:
        return self.diameter

    @property
    def end_diameter(self) -> float:
        return self.diameter

    @property
    def hub_radius(self) -> float:
        return 0.5 * self.hub_diameter

    @property
    def has_hub(self) -> bool:
        return self.hub_diameter > 0.0

    @property
    def nose_length(self) -> float:
        return self.hub_radius if self.hub_nose == "round" else 0.0

    def radius_at(self, xi):
        return 0.0 * xi + 0.5 * self.diameter

    def wall_outline(self, x0: float) -> list[tuple[float, float]]:
        r = 0.5 * self.diameter
        return [(x0, r), (x0 + self.length, r)]

    def hub_outline(self, x0: float, points: int = 24) -> list[tuple[float, float]]:
        """Hub surface polyline from the nose tip on the axis to the tail on the axis (empty if no hub)."""
        if not self.has_hub:
            return []
        a, rh = x0 + self.hub_start, self.hub_radius
        if self.hub_nose == "round":
            th = np.linspace(0.0, 0.5 * np.pi, points)
            nose = [(a + rh - rh * np.cos(t), rh * np.sin(t)) for t in th]
        else:
            nose = [(a, 0.0), (a, rh)]
        end = a + self.hub_length
        return nose + [(end, rh), (end, 0.0)]

    @classmethod
    def from_table(cls, table, index: int, previous_diameter: float | None) -> "Head":
        v = _read(table, cls.KEYS, index)
        where = f"segment[{index}]"
        d, length = v["diameter_mm"], v["length_mm"]
        rotor = 0.5 * length if v["rotor_at_mm"] is None else v["rotor_at_mm"]
        if not 0.0 < rotor < length:
            raise CaseError(f"{where}.rotor_at_mm", f"rotor plane at {rotor * 1e3:g} mm is outside the head "
                            f"(0 < rotor_at_mm < length_mm = {length * 1e3:g})")
        hub = {name: v[name] for name in ("hub_diameter_mm", "hub_start_mm", "hub_length_mm")}
        if hub["hub_diameter_mm"] is None:
            extra = [n for n in ("hub_start_mm", "hub_length_mm") if hub[n] is not None]
            if extra:
                raise CaseError(f"{where}.{extra[0]}", "given without hub_diameter_mm; add the hub "
                                "diameter or remove the hub keys")
            return cls(d, length, rotor, rotor_loss=v["rotor_loss"])
        for name, value in hub.items():
            if value is None:
                raise CaseError(f"{where}.{name}", f"missing; a hub needs hub_diameter_mm, hub_start_mm and "
                                "hub_length_mm")
        head = cls(d, length, rotor, hub["hub_diameter_mm"], hub["hub_start_mm"], hub["hub_length_mm"],
                   v["hub_nose"], v["rotor_loss"])
        head._check_hub(where)
        return head

    def _check_hub(self, where: str) -> None:
        if self.hub_diameter >= self.diameter:
            raise CaseError(f"{where}.hub_diameter_mm", f"hub ({self.hub_diameter * 1e3:g} mm) must be narrower "
                            f"than its head ({self.diameter * 1e3:g} mm)")
        end = self.hub_start + self.hub_length
        if end >= self.length:
            raise CaseError(f"{where}.hub_length_mm", f"hub ends at {end * 1e3:g} mm, outside its head; keep "
                            f"hub_start_mm + hub_length_mm < length_mm = {self.length * 1e3:g}")
        if self.hub_length <= self.nose_length:
            raise CaseError(f"{where}.hub_length_mm", "a round nose is a hemisphere of the hub radius: make "
                            "hub_length_mm longer than the hub radius or use hub_nose = \"blunt\"")
        body_start = self.hub_start + self.nose_length
        if not body_start < self.rotor_at < end:
            raise CaseError(f"{where}.rotor_at_mm", f"the rotor sits around the hub: put the rotor plane on the "
                            f"hub's cylindrical body, between {body_start * 1e3:g} and {end * 1e3:g} mm")


@register_segment("cone")
@dataclass(frozen=True)
class Cone:
    """A straight (conical) wall from the previous end diameter to ``to_diameter``."""

    from_diameter: float
    to_diameter: float
    length: float

    KEYS = (
        Key("to_diameter_mm", "float", unit="mm", default=REQUIRED, positive=True,
            description="diameter at the cone's end (it starts at the previous end diameter)"),
        Key("length_mm", "float", unit="mm", default=REQUIRED, positive=True, description="axial length"),
    )

    @property
    def start_diameter(self) -> float:
        return self.from_diameter

    @property
    def end_diameter(self) -> float:
        return self.to_diameter

    def radius_at(self, xi):
        return 0.5 * (self.from_diameter + (self.to_diameter - self.from_diameter) * xi / self.length)

    def wall_outline(self, x0: float) -> list[tuple[float, float]]:
        return [(x0, 0.5 * self.from_diameter), (x0 + self.length, 0.5 * self.to_diameter)]

    @classmethod
    def from_table(cls, table, index: int, previous_diameter: float | None) -> "Cone":
        v = _read(table, cls.KEYS, index)
        d0 = _need_previous("cone", index, previous_diameter)
        if abs(v["to_diameter_mm"] - d0) <= 1e-9 * d0:
            raise CaseError(f"segment[{index}].to_diameter_mm", f"a cone to its own diameter ({d0 * 1e3:g} mm) "
                            "is a tube: use kind = \"tube\" or change to_diameter_mm")
        return cls(d0, v["to_diameter_mm"], v["length_mm"])


@register_segment("tube")
@dataclass(frozen=True)
class Tube:
    """A straight pipe."""

    diameter: float
    length: float

    KEYS = (
        Key("diameter_mm", "float", unit="mm", default=None, positive=True,
            description="bore diameter (default: the previous end diameter)"),
        Key("length_mm", "float", unit="mm", default=REQUIRED, positive=True, description="axial length"),
    )

    @property
    def start_diameter(self) -> float:
        return self.diameter

    @property
    def end_diameter(self) -> float:
        return self.diameter

    def radius_at(self, xi):
        return 0.0 * xi + 0.5 * self.diameter

    def wall_outline(self, x0: float) -> list[tuple[float, float]]:
        return [(x0, 0.5 * self.diameter), (x0 + self.length, 0.5 * self.diameter)]

    @classmethod
    def from_table(cls, table, index: int, previous_diameter: float | None) -> "Tube":
        v = _read(table, cls.KEYS, index)
        d = v["diameter_mm"]
        if d is None:
            if previous_diameter is None:
                raise CaseError(f"segment[{index}].diameter_mm", "missing; the first segment needs a diameter: "
                                "add diameter_mm = ... (in mm)")
            d = previous_diameter
        return cls(d, v["length_mm"])


@register_segment("chamber")
@dataclass(frozen=True)
class Chamber:
    """A box-like chamber: sudden expansion at its start, an end wall with a coaxial port.

    The port diameter is the next segment's start diameter (``port_diameter``, filled in by the case
    reader once the next segment is known).
    """

    inlet_diameter: float
    diameter: float
    length: float
    port_diameter: float | None = None

    KEYS = (
        Key("diameter_mm", "float", unit="mm", default=REQUIRED, positive=True,
            description="chamber diameter (wider than its inlet and its port)"),
        Key("length_mm", "float", unit="mm", default=REQUIRED, positive=True, description="axial length"),
    )

    @property
    def start_diameter(self) -> float:
        return self.inlet_diameter

    @property
    def end_diameter(self) -> float:
        return self.port_diameter

    def radius_at(self, xi):
        return 0.0 * xi + 0.5 * self.diameter

    def wall_outline(self, x0: float) -> list[tuple[float, float]]:
        rc, x1 = 0.5 * self.diameter, x0 + self.length
        return [(x0, 0.5 * self.inlet_diameter), (x0, rc), (x1, rc), (x1, 0.5 * self.port_diameter)]

    @classmethod
    def from_table(cls, table, index: int, previous_diameter: float | None) -> "Chamber":
        v = _read(table, cls.KEYS, index)
        d0 = _need_previous("chamber", index, previous_diameter)
        if v["diameter_mm"] <= d0:
            raise CaseError(f"segment[{index}].diameter_mm", f"a chamber must be wider than its inlet "
                            f"({d0 * 1e3:g} mm); widen it or use a tube")
        return cls(d0, v["diameter_mm"], v["length_mm"])


@register_segment("step")
@dataclass(frozen=True)
class Step:
    """A sudden contraction or expansion (zero length) from the previous end diameter to ``to_diameter``."""

    from_diameter: float
    to_diameter: float
    length: float = 0.0

    KEYS = (
        Key("to_diameter_mm", "float", unit="mm", default=REQUIRED, positive=True,
            description="diameter after the sudden contraction or expansion"),
    )

    @property
    def start_diameter(self) -> float:
        return self.from_diameter

    @property
    def end_diameter(self) -> float:
        return self.to_diameter

    def radius_at(self, xi):
        return 0.0 * xi + 0.5 * self.to_diameter

    def wall_outline(self, x0: float) -> list[tuple[float, float]]:
        return [(x0, 0.5 * self.from_diameter), (x0, 0.5 * self.to_diameter)]

    @classmethod
    def from_table(cls, table, index: int, previous_diameter: float | None) -> "Step":
        v = _read(table, cls.KEYS, index)
        d0 = _need_previous("step", index, previous_diameter)
        if abs(v["to_diameter_mm"] - d0) <= 1e-9 * d0:
            raise CaseError(f"segment[{index}].to_diameter_mm", f"a step to its own diameter ({d0 * 1e3:g} mm) "
                            "does nothing: change to_diameter_mm or remove the step")
        return cls(d0, v["to_diameter_mm"])


def segment_positions(segments) -> list[float]:
    """Start x (m) of each segment; the chain starts at the mouth, x = 0."""
    x, starts = 0.0, []
    for seg in segments:
        starts.append(x)
        x += seg.length
    return starts


def chain_outline(segments) -> list[tuple[float, float]]:
    """The fixture's wall polyline from the mouth to the outlet, repeated points removed."""
    points: list[tuple[float, float]] = []
    for x0, seg in zip(segment_positions(segments), segments):
        for p in seg.wall_outline(x0):
            if not points or abs(p[0] - points[-1][0]) + abs(p[1] - points[-1][1]) > 1e-12:
                points.append(p)
    return points

"""Node distributions of the fixture mesher: 1D graded spacings, target cell sizes per mesh level,
radial stations (the node arrays shared by neighbouring blocks) and blocks through explicit side nodes.

A station is the column of nodes on one x = const line from the axis (or the hub) to the duct wall.
With a hub, stations off the hub are *hub-shaped*: in the head their nodes above the hub radius
(or above the nose's split point) are the hub annulus's own nodes, so grid lines run straight past
the hub's faces and no block has to blend two different radial distributions there.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from .blocks import Block, GridBlock
from .wall_spacing import first_cell_height as pipe_first_cell_height

LEVEL_SCALE = {"coarse": 1.0, "normal": 1.5, "fine": 2.4}  # cells per direction relative to coarse (~1.5x a level)
RADIAL_CELLS = 22            # radial cells across a duct, coarse level
AXIAL_CELL_DIAMETERS = 0.45  # largest axial duct cell, in local diameters, coarse level
GROWTH = 0.22                # neighbour size ratio 1 + GROWTH/scale in the duct
AMBIENT_GROWTH = 0.3         # ... and 1 + AMBIENT_GROWTH/scale in the still air
CORNER_FRACTION = 0.006      # cell size at sharp lips and step corners, in local radii, coarse level
FACE_CORE_FRACTION = 0.25    # largest cell on a hub's flat face (nose or tail), in hub radii, coarse level
MAX_GROWTH = 2.5             # steepest neighbour size ratio ever used
STEP_RELAX_RADII = 1.0       # a step's clustered nodes relax to the column's own station within this many radii
Y_PLUS_TARGET = 1.0          # first-cell target for the wall-resolved closure


# ---------------------------------------------------------------- 1D node distributions

def _sizes(n: int, delta: float, lo: float | None, hi: float | None, q: float) -> np.ndarray:
    k = np.arange(n, dtype=float)
    s = np.full(n, delta)
    if lo is not None:
        s = np.minimum(s, lo * q ** k)
    if hi is not None:
        s = np.minimum(s, hi * q ** (n - 1 - k))
    return s


def graded(length: float, n: int, lo: float | None, hi: float | None, q: float) -> np.ndarray:
    """Node fractions (n+1 values, 0..1): sizes min(Δ, lo q^k, hi q^(n-1-k)), Δ solved so they fill ``length``.

    Cells grow by ``q`` away from each clustered end (``lo``/``hi`` = end cell, None = no clustering) up to
    a uniform Δ; if even pure growth cannot fill the length, ``q`` itself is raised (up to ``MAX_GROWTH``),
    and beyond that the end cells are enlarged.
    """
    if lo is None and hi is None:
        return np.linspace(0.0, 1.0, n + 1)
    if _sizes(n, np.inf, lo, hi, MAX_GROWTH).sum() < length:
        # too few cells even at the steepest growth allowed: enlarge the end cells instead
        grow = brentq(lambda f: _sizes(n, np.inf, lo and f * lo, hi and f * hi, MAX_GROWTH).sum() - length,
                      1.0, length / min(v for v in (lo, hi) if v is not None))
        sizes = _sizes(n, np.inf, lo and grow * lo, hi and grow * hi, MAX_GROWTH)
    elif _sizes(n, np.inf, lo, hi, q).sum() < length:
        q = brentq(lambda qq: _sizes(n, np.inf, lo, hi, qq).sum() - length, q, MAX_GROWTH)
        sizes = _sizes(n, np.inf, lo, hi, q)
    else:
        delta = brentq(lambda d: _sizes(n, d, lo, hi, q).sum() - length, 1e-12 * length, length)
        sizes = _sizes(n, delta, lo, hi, q)
    x = np.concatenate([[0.0], np.cumsum(sizes)])
    return x / x[-1]


def cells_needed(length: float, lo: float | None, hi: float | None, q: float, delta: float,
                 minimum: int = 2) -> int:
    """Fewest cells whose sizes min(delta, lo q^k, hi q^(n-1-k)) reach ``length``."""
    n = minimum
    while _sizes(n, delta, lo, hi, q).sum() < length:
        n += 1
    return n


def line(a, b, fractions) -> np.ndarray:
    """Points a + f (b - a) for each fraction f, as an (n, 2) array."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    return a[None, :] + np.asarray(fractions)[:, None] * (b - a)[None, :]


def axial(x0: float, x1: float, d0, d1, q: float, cap: float) -> np.ndarray:
    """Axial node positions on [x0, x1]: end cells d0/d1 (None = free), growth q, largest cell cap."""
    n = cells_needed(x1 - x0, d0, d1, q, cap, minimum=2)
    return x0 + (x1 - x0) * graded(x1 - x0, n, d0, d1, q)


# ---------------------------------------------------------------- blocks from explicit side nodes

class _Nodes:
    """Explicit node parameters in [0, 1], standing in for a :class:`~geometry.blocks.Spacing`."""

    def __init__(self, params: np.ndarray):
        self.params = params
        self.cells = len(params) - 1

    def points(self) -> np.ndarray:
        return self.params


def fractions(points: np.ndarray) -> np.ndarray:
    """Normalised arc length (0..1) at each point of a polyline."""
    seg = np.hypot(*np.diff(points, axis=0).T)
    s = np.concatenate([[0.0], np.cumsum(seg)])
    return s / s[-1]


def _polyline(params: np.ndarray, points: np.ndarray):
    return lambda t: np.column_stack([np.interp(t, params, points[:, 0]), np.interp(t, params, points[:, 1])])


def explicit_block(south, north, west, east) -> Block:
    """A transfinite block through explicit side nodes (sides as in geometry.blocks, sw->se, nw->ne...)."""
    for a, b in ((south[0], west[0]), (south[-1], east[0]), (north[0], west[-1]), (north[-1], east[-1])):
        if np.hypot(*(a - b)) > 1e-9 * (1.0 + np.hypot(*a)):
            raise AssertionError(f"block corners do not meet: {a} vs {b}")
    if len(south) != len(north) or len(west) != len(east):
        raise AssertionError("opposite block sides need the same node count")
    s = 0.5 * (fractions(south) + fractions(north))
    t = 0.5 * (fractions(west) + fractions(east))
    curves = {"south": _polyline(s, south), "north": _polyline(s, north),
              "west": _polyline(t, west), "east": _polyline(t, east)}
    return Block((south[0], south[-1], north[-1], north[0]), _Nodes(s), _Nodes(t), {}, curves)


def step_weight(xi: np.ndarray, length: float) -> np.ndarray:
    """Weight of a step station's nodes at distance ``xi`` from it: 1 - 3t^2 + 2t^3 with t = xi/length, 0
    beyond; flat at the step, so grid lines leave its face square."""
    t = np.clip(np.asarray(xi, float) / length, 0.0, 1.0)
    return 1.0 - t * t * (3.0 - 2.0 * t)


def relaxed_block(south, north, west, east, own_west, own_east, relax_west: float, relax_east: float) -> GridBlock:
    """A duct column whose west/east station (a step's, with the step face's clustered cells) relaxes to
    the column's own station ``own_west``/``own_east`` within ``relax_west``/``relax_east`` metres (0: no
    relaxation at that end).

    Nodes: the transfinite block through the own stations, plus each step station's radial offset from its
    own station times :func:`step_weight` of the distance from it (scaled by the local wall radius, for
    cones). A plain blend over the whole column would carry the lip's wall-graded cells far into the free
    stream (thin cells 1e3 times longer than high there; up to 73 degrees of non-orthogonality measured)."""
    base = explicit_block(south, north, own_west if relax_west else west,
                          own_east if relax_east else east).node_grid()
    for relax, station, own, end in ((relax_west, west, own_west, 0), (relax_east, east, own_east, -1)):
        if relax:
            add_relaxing_offset(base, south[:, 0], north[:, 1], south[end, 0], north[end, 1],
                                station[:, 1] - own[:, 1], relax)
    return GridBlock(base)


def add_relaxing_offset(nodes, x, r_wall, x_from: float, r_from: float, offset: np.ndarray,
                        length: float) -> None:
    """Add a station's radial node offsets ``offset`` (taken at x_from, wall radius r_from) to a block's
    node grid (axial node positions ``x``, wall radius ``r_wall`` there), times :func:`step_weight` of the
    distance from x_from and scaled by the local wall radius, so they fade within ``length``."""
    w = step_weight(np.abs(x - x_from), length) * r_wall / r_from
    nodes[:, :, 1] += w[:, None] * offset[None, :]


# ---------------------------------------------------------------- target sizes of a mesh level

def kinematic_viscosity_estimate(temperature_K: float, pressure_Pa: float) -> float:
    """ν (m²/s) for mesh spacing only: Sutherland μ (S = 110.4 K, μ_ref 1.716e-5 Pa s at 273.15 K, White,
    Viscous Fluid Flow, Table 1-2, from memory) over dry ideal-gas ρ = p/(287.05 T). The solver uses
    solver/air.py; a 1 % error here moves the first cell by 1 %."""
    mu = 1.716e-5 * (temperature_K / 273.15) ** 1.5 * (273.15 + 110.4) / (temperature_K + 110.4)
    return mu / (pressure_Pa / (287.05 * temperature_K))


@dataclass(frozen=True)
class Sizing:
    """Target cell sizes of one mesh level (all lengths in m)."""

    scale: float
    h1_head: float
    head_radius: float
    max_flow: float
    nu: float

    @property
    def q(self) -> float:
        return 1.0 + GROWTH / self.scale

    @property
    def q_ambient(self) -> float:
        return 1.0 + AMBIENT_GROWTH / self.scale

    @property
    def radial_cells(self) -> int:
        return int(round(RADIAL_CELLS * self.scale))

    def h1(self, radius: float) -> float:
        """First wall cell at a bore of this radius: the head's value scaled by the pipe estimate ratio."""
        def pipe(r):
            return pipe_first_cell_height(Y_PLUS_TARGET, self.max_flow / (math.pi * r * r), 2.0 * r, self.nu)
        return self.h1_head * pipe(radius) / pipe(self.head_radius)

    def corner(self, radius: float) -> float:
        return max(self.h1(radius), CORNER_FRACTION * radius / self.scale)

    def joint(self, radius: float) -> float:
        return 0.1 * radius / self.scale

    def axial_cap(self, radius: float) -> float:
        return AXIAL_CELL_DIAMETERS * 2.0 * radius / self.scale

    def piece(self, fn, length: float, lo, hi, cap: float) -> np.ndarray:
        """Nodes fn(fractions) of a curve piece of ``length`` with end cells lo/hi and at least 3 cells."""
        n = cells_needed(length, lo, hi, self.q, min(cap, length / 3.0), minimum=3)
        return fn(graded(length, n, lo, hi, self.q))


# ---------------------------------------------------------------- radial stations

def station(x: float, r_bot: float, r_top: float, n: int, z: Sizing) -> np.ndarray:
    """Radial nodes of a plain station: core cells toward the axis, wall-graded toward r_top (and r_bot if
    it is the hub)."""
    lo = z.h1(r_top) if r_bot > 0.0 else None
    f = graded(r_top - r_bot, n, lo, z.h1(r_top), z.q)
    return line((x, r_bot), (x, r_top), f)


@dataclass(frozen=True)
class HubStations:
    """Radial node profiles of a head with a hub of radius ``rh``.

    * annulus: hub to wall, wall-graded at both ends (first cell z.h1(R), y+ ~ 1 on the hub too);
    * ``face`` stations (ahead of a blunt nose, behind the tail): the flat face's nodes (``face_cells``,
      graded toward the hub edge, first cell z.corner(rh)) under the annulus's nodes;
    * ``smooth`` stations (the free stream behind the tail): as many nodes, without the thin cells at the
      hub radius (:meth:`_smooth`);
    * ``round`` stations (ahead of a round nose): ``split`` core cells up to the annulus node number
      ``split`` (the radius where the nose blocks meet, see geometry.fixture), then the annulus's nodes.
    """

    rh: float
    r_head: float
    face_cells: int
    split_target: float   # radius of the nose blocks' meeting point, before snapping to an annulus node

    @classmethod
    def build(cls, rh: float, r_head: float, split_target: float, z: Sizing) -> "HubStations":
        cap = FACE_CORE_FRACTION * rh / z.scale
        return cls(rh, r_head, cells_needed(rh, None, z.corner(rh), z.q, cap, minimum=3), split_target)

    def annulus(self, x: float, r_top: float, n: int, z: Sizing) -> np.ndarray:
        return station(x, self.rh, r_top, n, z)

    def split(self, r_top: float, n: int, z: Sizing) -> int:
        """Annulus node number nearest the nose blocks' meeting radius (at least 2 cells each side)."""
        r = self.annulus(0.0, r_top, n, z)[:, 1]
        return int(np.clip(np.argmin(np.abs(r - self.split_target)), 2, n - 2))

    def shaped(self, x: float, r_top: float, n: int, shape: str, z: Sizing) -> np.ndarray:
        """A ``face`` or ``smooth`` (n = face cells + annulus cells) or ``round`` (n = annulus cells) station.

        Away from the head (bore r_top), a ``face`` station keeps the face's cells scaled by r_top/R_head
        (so columns between such stations have no cluster of thin cells to blend away) and grades its
        wall cells for the local bore."""
        if shape == "smooth":
            return self._smooth(x, r_top, n, z)
        if shape == "face":
            c = r_top / self.r_head
            rh, f = c * self.rh, graded(self.rh, self.face_cells, None, z.corner(self.rh), z.q)
            ring = graded(r_top - rh, n - self.face_cells, c * z.h1(self.r_head), z.h1(r_top), z.q)
            return np.vstack([line((x, 0.0), (x, rh), f), line((x, rh), (x, r_top), ring)[1:]])
        ring = self.annulus(x, r_top, n, z)
        j = self.split(r_top, n, z)
        r_q = ring[j, 1]
        core = line((x, 0.0), (x, r_q), graded(r_q, j, None, ring[j + 1, 1] - r_q, z.q))
        return np.vstack([core, ring[j + 1:]])

    def _smooth(self, x: float, r_top: float, n: int, z: Sizing) -> np.ndarray:
        """The ``face`` station without its thin cells at the hub radius, for the free stream behind the
        tail: the face's cells uniform, the ring's growing run next to the hub radius raised to that size
        and the ring's core cells shrunk to make room, its wall cells kept (where the ring has no room for
        that, its cells are kept as they are). Node for node it stays close to the ``face`` station, so
        relaxing one into the other over a short wake leaves the cells' angles about as they were."""
        c = r_top / self.r_head
        rh = c * self.rh
        uniform = rh / self.face_cells
        sizes = np.diff(graded(r_top - rh, n - self.face_cells, c * z.h1(self.r_head), z.h1(r_top), z.q))
        sizes *= r_top - rh
        lead = 0
        while lead < len(sizes) and sizes[lead] < uniform and (lead == 0 or sizes[lead] >= sizes[lead - 1]):
            lead += 1
        core = np.flatnonzero(sizes >= uniform)
        deficit = lead * uniform - sizes[:lead].sum()
        if len(core) and sizes[core].sum() > 2.0 * deficit:
            sizes[core] *= 1.0 - deficit / sizes[core].sum()
            sizes[:lead] = uniform
        ring = np.concatenate([[0.0], np.cumsum(sizes)]) / sizes.sum()
        return np.vstack([line((x, 0.0), (x, rh), np.linspace(0.0, 1.0, self.face_cells + 1)),
                          line((x, rh), (x, r_top), ring)[1:]])

"""Parametric multi-block mesh of a fixture: the still-air region, the mouth and the segment chain.

Topology (H-type, one block per duct column): the chain is cut at *stations* (segment joints, the
rotor plane, the hub's nose and tail); each column between two stations is one block from the axis
(or the hub) to the wall. Neighbouring blocks share the node array of their station, so a station
with a sudden area change carries the smaller bore's nodes plus the nodes of the step face.
The hub's nose and tail are wrapped by a block whose south side runs along the axis and then
over the hub surface (a C-wrap), which avoids a degenerate corner at the nose tip.
The still air is a core block ahead of the bore and annular blocks out to ``R_amb``.

Patches: ``ambient`` (upstream face x = -L_amb and far radial face r = R_amb), ``axis``, ``outlet``,
walls ``wall`` (duct), ``wall-hub``, ``wall-flange`` (the plate of a flanged or bell mouth),
``wall-bell`` (the flare), ``wall-lip``/``wall-outer``/``wall-back`` (thin-wall mouth).
Boundary faces are named from their position once all blocks are joined.

Model choices (documented here, used by the solver):

* thin-wall mouth: the first segment protrudes ``PROTRUSION_DIAMETERS`` mouth diameters (or up to the
  first widening of the bore) from a back plate ``wall-back``; a wall, not an opening, so that all
  still air enters through the ``ambient`` faces.
* ``open_region_delta`` = the mouth radius: the length scale of the Escudier cap in the open region.
* defaults L_amb = R_amb = ``AMBIENT_DIAMETERS`` x the largest mouth or head diameter; cells grow
  geometrically outward so the far field costs few cells.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from .blocks import Block
from .mesh import Mesh, mesh_from_cells
from .segments import Head, segment_positions, chain_outline
from .wall_spacing import first_cell_height as pipe_first_cell_height
from .wall_spacing import friction_velocity_estimate

LEVEL_SCALE = {"coarse": 1.0, "normal": 1.5, "fine": 2.4}  # cells per direction relative to coarse (~1.5x a level)
RADIAL_CELLS = 22            # radial cells across a duct, coarse level
AXIAL_CELL_DIAMETERS = 0.45  # largest axial duct cell, in local diameters, coarse level
GROWTH = 0.22                # neighbour size ratio 1 + GROWTH/scale in the duct
AMBIENT_GROWTH = 0.3         # ... and 1 + AMBIENT_GROWTH/scale in the still air
AMBIENT_DIAMETERS = 10.0     # default L_amb = R_amb in diameters (doubling it changes little, see tests)
CORNER_FRACTION = 0.006      # cell size at sharp lips and step corners, in local radii, coarse level
PROTRUSION_DIAMETERS = 2.0   # thin-wall mouth: length of the protruding pipe outside
MAX_GROWTH = 2.5            # steepest neighbour size ratio ever used
Y_PLUS_TARGET = 1.0          # first-cell target for the wall-resolved closure


def kinematic_viscosity_estimate(temperature_K: float, pressure_Pa: float) -> float:
    """ν (m²/s) for mesh spacing only: Sutherland μ (S = 110.4 K, μ_ref 1.716e-5 Pa s at 273.15 K, White,
    Viscous Fluid Flow, Table 1-2, from memory) over dry ideal-gas ρ = p/(287.05 T). The solver uses
    solver/air.py; a 1 % error here moves the first cell by 1 %."""
    mu = 1.716e-5 * (temperature_K / 273.15) ** 1.5 * (273.15 + 110.4) / (temperature_K + 110.4)
    return mu / (pressure_Pa / (287.05 * temperature_K))


@dataclass(frozen=True, eq=False)
class FixtureMesh:
    mesh: Mesh
    level: str
    rotor_x: float
    head_radius: float
    hub_radius: float
    rotor_annulus: tuple[float, float]
    rotor_cells: np.ndarray        # first cell layer downstream of the rotor plane, hub to head radius
    outlet_radius: float
    outlet_x: float
    mouth_radius: float
    outline: np.ndarray            # fixture wall polyline (x, r), mouth to outlet (for plots)
    hub_outline: np.ndarray        # hub surface polyline, empty if no hub
    duct_radius: np.ndarray        # per cell: local duct wall radius R(x); -1 in the open ambient region
    open_region_delta: float       # Escudier length scale in the open region (the mouth radius)
    block_cells: dict[str, int]
    first_cell_height: float       # m, at the head diameter
    nu_estimate: float             # m^2/s used for the default first cell
    max_flow: float                # m^3/s used for the y+ estimate

    def first_cell_y_plus(self) -> float:
        """Largest y+ of a wall-adjacent cell centre on ``wall`` faces, from the smooth-pipe u_τ at the local
        diameter and the highest flow (an estimate before any solve)."""
        m = self.mesh
        faces = np.concatenate([m.patch_faces(p) for p in m.patches if p == "wall"])
        owner = m.owner[faces]
        d = np.abs(np.einsum("ij,ij->i", m.face_centre[faces] - m.cell_centre[owner], m.face_normal[faces]))
        radius = np.maximum(self.duct_radius[owner], 1e-6)
        velocity = self.max_flow / (np.pi * radius ** 2)
        u_tau = friction_velocity_estimate(velocity, 2.0 * radius, self.nu_estimate)
        return float(np.max(d * u_tau / self.nu_estimate))

    def summary(self) -> dict[str, float]:
        """mesh.quality() plus the estimated first-cell y+."""
        out = self.mesh.quality()
        out["first_cell_y_plus_estimate"] = self.first_cell_y_plus()
        return out


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


def _line(a, b, fractions) -> np.ndarray:
    a, b = np.asarray(a, float), np.asarray(b, float)
    return a[None, :] + np.asarray(fractions)[:, None] * (b - a)[None, :]


# ---------------------------------------------------------------- blocks from explicit side nodes

class _Nodes:
    """Explicit node parameters in [0, 1], standing in for a :class:`~geometry.blocks.Spacing`."""

    def __init__(self, params: np.ndarray):
        self.params = params
        self.cells = len(params) - 1

    def points(self) -> np.ndarray:
        return self.params


def _fractions(points: np.ndarray) -> np.ndarray:
    seg = np.hypot(*np.diff(points, axis=0).T)
    s = np.concatenate([[0.0], np.cumsum(seg)])
    return s / s[-1]


def _polyline(params: np.ndarray, points: np.ndarray):
    return lambda t: np.column_stack([np.interp(t, params, points[:, 0]), np.interp(t, params, points[:, 1])])


def _block(south, north, west, east) -> Block:
    """A transfinite block through explicit side nodes (sides as in geometry.blocks, sw->se, nw->ne...)."""
    for a, b in ((south[0], west[0]), (south[-1], east[0]), (north[0], west[-1]), (north[-1], east[-1])):
        if np.hypot(*(a - b)) > 1e-9 * (1.0 + np.hypot(*a)):
            raise AssertionError(f"block corners do not meet: {a} vs {b}")
    if len(south) != len(north) or len(west) != len(east):
        raise AssertionError("opposite block sides need the same node count")
    s = 0.5 * (_fractions(south) + _fractions(north))
    t = 0.5 * (_fractions(west) + _fractions(east))
    curves = {"south": _polyline(s, south), "north": _polyline(s, north),
              "west": _polyline(t, west), "east": _polyline(t, east)}
    return Block((south[0], south[-1], north[-1], north[0]), _Nodes(s), _Nodes(t), {}, curves)


# ---------------------------------------------------------------- sizes

@dataclass(frozen=True)
class _Sizing:
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


@dataclass
class _Column:
    x0: float
    x1: float
    wall: object        # x -> wall radius R(x)
    kind: str           # plain | nose | hub | tail
    d0: float | None    # axial cell wanted at x0 (None: no clustering)
    d1: float | None
    n: int = 0          # radial cells


def _head_columns(head: Head, x0: float, wall, d0, d1, z: _Sizing) -> list[_Column]:
    R, x1, xr = 0.5 * head.diameter, x0 + head.length, x0 + head.rotor_at
    d_rotor = 0.04 * R / z.scale
    if not head.has_hub:
        return [_Column(x0, xr, wall, "plain", d0, d_rotor), _Column(xr, x1, wall, "plain", d_rotor, d1)]
    rh, xs = head.hub_radius, x0 + head.hub_start
    xe = xs + head.hub_length
    xa = xs - min(0.5 * rh, 0.5 * (xs - x0))
    xn = xs + (rh if head.hub_nose == "round" else min(0.25 * rh, 0.5 * (xr - xs)))
    xt = xe - min(0.25 * rh, 0.5 * (xe - xr))
    xb = xe + min(rh, 0.6 * (x1 - xe))
    dh = z.joint(rh)
    return [_Column(x0, xa, wall, "plain", d0, dh), _Column(xa, xn, wall, "nose", dh, dh),
            _Column(xn, xr, wall, "hub", dh, d_rotor), _Column(xr, xt, wall, "hub", d_rotor, dh),
            _Column(xt, xb, wall, "tail", dh, dh), _Column(xb, x1, wall, "plain", dh, d1)]


def _columns(case, z: _Sizing, mouth_delta: float) -> list[_Column]:
    """The duct's columns, mouth to outlet, with their axial end targets and radial cell counts."""
    segs = case.segments
    cols: list[_Column] = []
    starts = segment_positions(segs)
    last = max(i for i, s in enumerate(segs) if s.length > 0)
    prev_r = None
    for i, (x0, seg) in enumerate(zip(starts, segs)):
        if seg.length == 0.0:
            continue
        r0 = 0.5 * seg.start_diameter
        wall = (lambda x, seg=seg, x0=x0: seg.radius_at(np.asarray(x, float) - x0))
        if prev_r is None:
            d0 = mouth_delta
        elif abs(prev_r - float(wall(x0))) > 1e-9 * r0:
            d0 = z.corner(min(prev_r, float(wall(x0))))
        else:
            d0 = z.joint(r0)
        x1 = x0 + seg.length
        d1 = None if i == last else z.joint(float(wall(x1)))
        if i != last:  # a sudden change at the far end also wants corner cells
            nxt = next(s for s in segs[i + 1:] if s.length > 0)
            r_next = float(nxt.radius_at(0.0))
            if abs(r_next - float(wall(x1))) > 1e-9 * r0:
                d1 = z.corner(min(r_next, float(wall(x1))))
        new = _head_columns(seg, x0, wall, d0, d1, z) if isinstance(seg, Head) else \
            [_Column(x0, x1, wall, "plain", d0, d1)]
        cols += new
        prev_r = float(wall(x1))
    _radial_counts(cols, z)
    return cols


def _jump(left: _Column, right: _Column) -> tuple[float, float]:
    x = right.x0
    return float(left.wall(x)), float(right.wall(x))


def _radial_counts(cols: list[_Column], z: _Sizing) -> None:
    """Radial cells per column: a sudden expansion adds the cells of its face, a contraction drops them."""
    n_min = max(8, int(0.7 * z.radial_cells))
    cols[0].n = z.radial_cells
    for left, right in zip(cols, cols[1:]):
        r_l, r_r = _jump(left, right)
        if abs(r_l - r_r) <= 1e-9 * r_l:
            right.n = left.n
            continue
        small, big = min(r_l, r_r), max(r_l, r_r)
        k = cells_needed(big - small, z.corner(small), z.h1(big), z.q, 2.5 * big / z.radial_cells, minimum=3)
        right.n = left.n + k if r_r > r_l else left.n - max(3, min(k, left.n - n_min))


def _station(x: float, r_bot: float, r_top: float, n: int, z: _Sizing) -> np.ndarray:
    """Radial nodes of a plain station: core cells toward the axis, wall-graded toward r_top (and r_bot if
    it is the hub)."""
    lo = z.h1(r_top) if r_bot > 0.0 else None
    f = graded(r_top - r_bot, n, lo, z.h1(r_top), z.q)
    return _line((x, r_bot), (x, r_top), f)


def _station_views(left: _Column | None, right: _Column | None, z: _Sizing, hub_r: float):
    """Node arrays of one station as seen from the column on its left and on its right."""
    if left is None or right is None:
        col = right if left is None else left
        x = col.x0 if left is None else col.x1
        on_hub = col.kind in (("hub", "tail") if left is None else ("nose", "hub"))
        v = _station(x, hub_r if on_hub else 0.0, float(col.wall(x)), col.n, z)
        return v, v
    x = right.x0
    r_l, r_r = _jump(left, right)
    if abs(r_l - r_r) <= 1e-9 * r_l:
        on_hub = left.kind in ("nose", "hub")
        v = _station(x, hub_r if on_hub else 0.0, r_l, left.n, z)
        return v, v
    small, big = min(r_l, r_r), max(r_l, r_r)
    n_small, n_big = (left.n, right.n) if r_l < r_r else (right.n, left.n)
    core = _station(x, 0.0, small, n_small, z)
    face = _line((x, small), (x, big), graded(big - small, n_big - n_small, z.corner(small), z.h1(big), z.q))
    full = np.vstack([core, face[1:]])
    return (core, full) if r_l < r_r else (full, core)


def _axial(x0: float, x1: float, d0, d1, q: float, cap: float) -> np.ndarray:
    n = cells_needed(x1 - x0, d0, d1, q, cap, minimum=2)
    return x0 + (x1 - x0) * graded(x1 - x0, n, d0, d1, q)


def _piece(fn, length: float, lo, hi, z: _Sizing, cap: float) -> np.ndarray:
    n = cells_needed(length, lo, hi, z.q, min(cap, length / 3.0), minimum=3)
    return fn(graded(length, n, lo, hi, z.q))


def _hub_south(col: _Column, head: Head, x_head: float, z: _Sizing) -> tuple[np.ndarray, np.ndarray]:
    """South side of the nose or tail wrap (along the axis and over the hub surface) and the x of the
    matching north-side nodes: each corner of the hub is tied to a north point a little upstream (nose)
    or downstream (tail), so the grid lines leave the hub surface outward and no cell folds."""
    rh = head.hub_radius
    xs, xe = x_head + head.hub_start, x_head + head.hub_start + head.hub_length
    dt, dc, cap = z.joint(rh) * 0.5, z.corner(rh), z.axial_cap(rh)
    x0, x1 = col.x0, col.x1
    if col.kind == "nose" and head.hub_nose == "round":
        arc = (lambda f: np.column_stack([x1 + rh * np.cos(np.pi * (1 - 0.5 * f)),
                                          rh * np.sin(np.pi * (1 - 0.5 * f))]))
        parts = [_piece(lambda f: _line((x0, 0), (xs, 0), f), xs - x0, col.d0, dt, z, cap),
                 _piece(arc, 0.5 * np.pi * rh, dt, col.d1, z, cap)]
        knots = [x0, x0 + 0.5 * (xs - x0), x1]
    elif col.kind == "nose":
        parts = [_piece(lambda f: _line((x0, 0), (xs, 0), f), xs - x0, col.d0, dt, z, cap),
                 _piece(lambda f: _line((xs, 0), (xs, rh), f), rh, dt, dc, z, cap),
                 _piece(lambda f: _line((xs, rh), (x1, rh), f), x1 - xs, dc, col.d1, z, cap)]
        knots = [x0, x0 + 0.3 * (xs - x0), xs - 0.3 * (xs - x0), x1]
    else:
        parts = [_piece(lambda f: _line((x0, rh), (xe, rh), f), xe - x0, col.d0, dc, z, cap),
                 _piece(lambda f: _line((xe, rh), (xe, 0), f), rh, dc, dt, z, cap),
                 _piece(lambda f: _line((xe, 0), (x1, 0), f), x1 - xe, dt, col.d1, z, cap)]
        knots = [x0, xe + 0.15 * (x1 - xe), xe + 0.5 * (x1 - xe), x1]
    north_x = [knots[0]]
    for k, part in enumerate(parts):
        f = _fractions(part)[1:]
        north_x.extend(knots[k] + (knots[k + 1] - knots[k]) * f)
    return np.vstack([parts[0]] + [p[1:] for p in parts[1:]]), np.array(north_x)


def _duct_blocks(case, cols: list[_Column], z: _Sizing):
    """One block per column; returns [(name, block, wall or None)], the mouth's nodes, the rotor block index."""
    head, x_head = case.head, segment_positions(case.segments)[case.head_index]
    hub_r = head.hub_radius
    rotor_x = x_head + head.rotor_at
    views = [_station_views(None, cols[0], z, hub_r)]
    views += [_station_views(a, b, z, hub_r) for a, b in zip(cols, cols[1:])]
    views += [_station_views(cols[-1], None, z, hub_r)]
    out, rotor_block = [], None
    for k, col in enumerate(cols):
        west, east = views[k][1], views[k + 1][0]
        if col.kind in ("nose", "tail"):
            south, x = _hub_south(col, head, x_head, z)
        else:
            x = _axial(col.x0, col.x1, col.d0, col.d1, z.q, z.axial_cap(min(float(col.wall(col.x0)),
                                                                           float(col.wall(col.x1)))))
            south = np.column_stack([x, np.full_like(x, hub_r if col.kind == "hub" else 0.0)])
        north = np.column_stack([x, col.wall(x)])
        if abs(col.x0 - rotor_x) < 1e-12 * (1.0 + abs(rotor_x)):
            rotor_block = len(out)
        out.append((f"duct-{k}-{col.kind}", _block(south, north, west, east), col.wall))
    return out, views[0][1], rotor_block


# ---------------------------------------------------------------- the still air ahead of the mouth

@dataclass(frozen=True)
class _Extent:
    r0: float           # bore radius at the mouth
    length: float       # L_amb
    radius: float       # R_amb
    x_mouth: float      # plane of the plate (0; -bell radius for a bell)
    protrusion: float   # thin-wall: length of pipe outside (0 otherwise)
    outer: float        # radius of the mouth's outer edge (bore + wall or flare)

    @property
    def x_west(self) -> float:
        return self.x_mouth - self.length


def _extent(case) -> _Extent:
    from .schema import CaseError
    amb, r0 = case.ambient, 0.5 * case.segments[0].start_diameter
    t, rb = amb.wall_thickness or 0.0, amb.bell_radius or 0.0
    outer = r0 + t + rb
    ref = max(2.0 * outer, case.head.diameter)
    radius = amb.radius or AMBIENT_DIAMETERS * ref
    length = amb.length or AMBIENT_DIAMETERS * ref
    if radius <= 1.5 * outer:
        raise CaseError("ambient.radius_mm", f"the still-air region must reach well beyond the mouth's outer "
                        f"edge ({outer * 1e3:g} mm); give at least {3 * outer * 1e3:g} mm or omit it")
    protrusion = 0.0
    if amb.mouth == "thin-wall":
        protrusion = PROTRUSION_DIAMETERS * 2.0 * r0
        pts = chain_outline(case.segments)
        for (xa, ra), (xb, rb_) in zip(pts, pts[1:]):
            if rb_ > r0 * (1 + 1e-9):   # the bore widens: the outer wall cannot continue past here
                cut = xa if ra > r0 * (1 + 1e-9) or xb == xa else xa + (xb - xa) * (r0 - ra) / (rb_ - ra)
                protrusion = min(protrusion, cut)
                break
    return _Extent(r0, length, radius, -rb, protrusion, outer)


def _ambient_blocks(case, z: _Sizing, mouth: np.ndarray, e: _Extent) -> list:
    """Blocks of the still air (and, for a bell, the flare), joined to the bore's first station ``mouth``."""
    amb, q, r0 = case.ambient, z.q_ambient, e.r0
    far = 0.25 * e.length / z.scale
    n0 = len(mouth) - 1
    bell = amb.mouth == "bell"
    dm = z.joint(e.outer) if bell else z.corner(r0)
    x = e.x_west + e.length * graded(e.length, cells_needed(e.length, None, dm, q, far), None, dm, q)

    def line(r):
        return np.column_stack([x, np.full_like(x, r)])

    inner = e.outer if bell else r0
    north = line(inner)
    tag_core = None
    if bell:
        rb = amb.bell_radius
        arc = _piece(lambda f: np.column_stack([-rb * np.cos(0.5 * np.pi * f), e.outer - rb * np.sin(0.5 * np.pi * f)]),
                     0.5 * np.pi * rb, dm, 0.5 * z.joint(r0), z, z.axial_cap(r0))
        north = np.vstack([north, arc[1:]])
        tag_core = (lambda xc: np.where(xc > -rb, e.outer - np.sqrt(np.maximum(rb * rb - xc * xc, 0.0)), -1.0))
    south = np.column_stack([north[:, 0], np.zeros(len(north))])
    west = _line((e.x_west, 0.0), (e.x_west, inner), np.linspace(0.0, 1.0, n0 + 1))
    blocks = [("ambient-core", _block(south, north, west, mouth), tag_core)]
    if amb.mouth == "thin-wall":
        t, n_l = amb.wall_thickness, max(4, int(round(4 * z.scale)))
        c = z.corner(r0)
        east = _line((0.0, r0), (0.0, r0 + t), graded(t, n_l, c, c, z.q))
        west = _line((e.x_west, r0), (e.x_west, r0 + t), np.linspace(0.0, 1.0, n_l + 1))
        blocks.append(("ambient-lip", _block(line(r0), line(r0 + t), west, east), None))
        inner = r0 + t
    c0 = dm
    n_o = cells_needed(e.radius - inner, c0, None, q, far)
    f_east = graded(e.radius - inner, n_o, c0, None, q)
    east = _line((e.x_mouth, inner), (e.x_mouth, e.radius), f_east)
    west = _line((e.x_west, inner), (e.x_west, e.radius), graded(e.radius - inner, n_o, inner / n0, None, q))
    blocks.append(("ambient-outer", _block(line(inner), line(e.radius), west, east), None))
    if amb.mouth == "thin-wall":
        px = _axial(0.0, e.protrusion, c0, z.joint(r0), q, far)
        south = np.column_stack([px, np.full_like(px, inner)])
        north = np.column_stack([px, np.full_like(px, e.radius)])
        back = _line((e.protrusion, inner), (e.protrusion, e.radius), f_east)
        blocks.append(("ambient-outside", _block(south, north, east, back), None))
    return blocks


# ---------------------------------------------------------------- assembly and patch names

def _namer(case, e: _Extent, outlet_x: float, outlet_r: float):
    """Patch name of a boundary edge from its end nodes."""
    head, x_head = case.head, segment_positions(case.segments)[case.head_index]
    xs, xe, rh = x_head + head.hub_start, x_head + head.hub_start + head.hub_length, head.hub_radius
    mouth, r0, t = case.ambient.mouth, e.r0, case.ambient.wall_thickness or 0.0
    tol = 1e-9 * max(e.radius, e.length, outlet_x)

    def name(a, b) -> str:
        mx, mr = 0.5 * (a + b)
        if a[1] <= tol and b[1] <= tol:
            return "axis"
        if abs(mx - e.x_west) <= tol or abs(mr - e.radius) <= tol:
            return "ambient"
        if abs(mx - outlet_x) <= tol and mr <= outlet_r + tol:
            return "outlet"
        if head.has_hub and xs - tol <= mx <= xe + tol and mr <= rh + tol:
            return "wall-hub"
        if mouth in ("flanged", "bell") and abs(mx - e.x_mouth) <= tol and mr >= e.outer - tol:
            return "wall-flange"
        if mouth == "bell" and e.x_mouth < mx < 0.0:
            return "wall-bell"
        if mouth == "thin-wall":
            if abs(mx) <= tol and r0 - tol <= mr <= r0 + t + tol:
                return "wall-lip"
            if abs(mr - (r0 + t)) <= tol and -tol <= mx <= e.protrusion + tol:
                return "wall-outer"
            if abs(mx - e.protrusion) <= tol and mr >= r0 + t - tol:
                return "wall-back"
        return "wall"
    return name


def _assemble(named_blocks: list, namer, tolerance: float = 1e-9) -> tuple[Mesh, list[int]]:
    """Join blocks at coincident nodes (as geometry.blocks.merge_blocks) and name the boundary by position."""
    grids = [b.node_grid() for _, b, _ in named_blocks]
    all_nodes = np.concatenate([g.reshape(-1, 2) for g in grids])
    size = np.ptp(all_nodes, axis=0).max()
    snapped = np.round(all_nodes / (tolerance * size)).astype(np.int64)
    _, first, node_id = np.unique(snapped, axis=0, return_index=True, return_inverse=True)
    order = np.argsort(first)
    rank = np.empty_like(order)
    rank[order] = np.arange(len(order))
    nodes = all_nodes[first[order]].copy()
    node_id = rank[node_id.ravel()]
    nodes[np.abs(nodes[:, 1]) < tolerance * size, 1] = 0.0
    cells, offsets, offset, start = [], [], 0, 0
    for grid in grids:
        ni, nj = grid.shape[0] - 1, grid.shape[1] - 1
        ids = node_id[offset:offset + (ni + 1) * (nj + 1)].reshape(ni + 1, nj + 1)
        offset += (ni + 1) * (nj + 1)
        cells.append(np.stack([ids[:-1, :-1], ids[1:, :-1], ids[1:, 1:], ids[:-1, 1:]], axis=2).reshape(-1, 4))
        offsets.append(start)
        start += ni * nj
    cells = np.concatenate(cells)
    edges = np.sort(np.stack([cells, np.roll(cells, -1, axis=1)], axis=2).reshape(-1, 2), axis=1)
    uniq, counts = np.unique(edges, axis=0, return_counts=True)
    edge_patch = {(int(a), int(b)): namer(nodes[a], nodes[b]) for a, b in uniq[counts == 1]}
    return mesh_from_cells(nodes, cells, edge_patch), offsets


# ---------------------------------------------------------------- the public builder

def build_fixture_mesh(case, level: str | None = None, first_cell_height: float | None = None,
                       reverse_blocks: bool = False) -> FixtureMesh:
    """Mesh the fixture of ``case`` at ``level`` (default: the case's [mesh] level).

    ``first_cell_height`` (m): wall-normal size of the first cell at the head's bore; elsewhere it is
    scaled by the smooth-pipe estimate of the local bore at the highest flow, so y+ stays near the
    head's. Default: y+ = 1 at the head diameter and the case's highest flow
    (:func:`geometry.wall_spacing.first_cell_height`). ``reverse_blocks`` joins the blocks in reverse
    order (a check that the mesh does not depend on it).
    """
    level = level or case.mesh.level
    if level not in LEVEL_SCALE:
        raise ValueError(f"mesh level {level!r}: use one of {', '.join(LEVEL_SCALE)}")
    nu = kinematic_viscosity_estimate(case.air.temperature_K, case.air.pressure_Pa)
    head = case.head
    r_head, q_max = 0.5 * head.diameter, max(case.operating.flows)
    h1 = first_cell_height or pipe_first_cell_height(Y_PLUS_TARGET, q_max / (math.pi * r_head ** 2),
                                                     head.diameter, nu)
    if not h1 > 0.0:
        raise ValueError(f"first_cell_height must be > 0 m, got {first_cell_height!r}")
    z = _Sizing(LEVEL_SCALE[level], h1, r_head, q_max, nu)
    e = _extent(case)
    cols = _columns(case, z, 0.5 * z.joint(e.r0) if case.ambient.mouth == "bell" else z.corner(e.r0))
    duct, mouth_nodes, rotor_block = _duct_blocks(case, cols, z)
    blocks = _ambient_blocks(case, z, mouth_nodes, e) + duct
    rotor_block += len(blocks) - len(duct)
    outlet_x, outlet_r = cols[-1].x1, float(cols[-1].wall(cols[-1].x1))
    order = list(range(len(blocks)))[::-1] if reverse_blocks else list(range(len(blocks)))
    mesh, offsets = _assemble([blocks[k] for k in order], _namer(case, e, outlet_x, outlet_r))
    offset_of = {k: offsets[pos] for pos, k in enumerate(order)}
    duct_radius = np.full(mesh.n_cells, -1.0)
    block_cells = {}
    for k, (name, block, wall) in enumerate(blocks):
        n = block.i.cells * block.j.cells
        sl = slice(offset_of[k], offset_of[k] + n)
        block_cells[name] = n
        if wall is not None:
            duct_radius[sl] = wall(mesh.cell_centre[sl, 0])
    rb = blocks[rotor_block][1]
    rotor_cells = offset_of[rotor_block] + np.arange(rb.j.cells)
    x_head = segment_positions(case.segments)[case.head_index]
    outline = _outline(case, e)
    hub = np.array(head.hub_outline(x_head), float).reshape(-1, 2)
    for arr in (duct_radius, rotor_cells, outline, hub):
        arr.setflags(write=False)
    return FixtureMesh(mesh=mesh, level=level, rotor_x=x_head + head.rotor_at, head_radius=r_head,
                       hub_radius=head.hub_radius, rotor_annulus=(head.hub_radius, r_head),
                       rotor_cells=rotor_cells, outlet_radius=outlet_r, outlet_x=outlet_x, mouth_radius=e.r0,
                       outline=outline, hub_outline=hub, duct_radius=duct_radius, open_region_delta=e.r0,
                       block_cells=block_cells, first_cell_height=h1, nu_estimate=nu, max_flow=q_max)


def _outline(case, e: _Extent) -> np.ndarray:
    """Fixture wall polyline: the mouth's outside (plate, flare or pipe outside), then the bore to the outlet."""
    amb, r0 = case.ambient, e.r0
    plate = min(e.radius, 3.0 * e.outer)
    if amb.mouth == "flanged":
        start = [(0.0, plate)]
    elif amb.mouth == "thin-wall":
        t = amb.wall_thickness
        start = [(e.protrusion, r0 + t), (0.0, r0 + t)]
    else:
        rb = amb.bell_radius
        a = np.linspace(0.0, 0.5 * np.pi, 25)[:-1]
        start = [(-rb, plate)] + [(-rb * np.cos(t), e.outer - rb * np.sin(t)) for t in a]
    return np.array(start + chain_outline(case.segments), float)

"""Parametric multi-block mesh of a fixture: the still-air region, the mouth and the segment chain.

Topology (H-type, one block per duct column): the chain is cut at *stations* (segment joints, the
rotor plane, the hub's nose and tail); each column between two stations is one block from the axis
(or the hub) to the wall. Neighbouring blocks share the node array of their station, so a station
with a sudden area change carries the smaller bore's nodes plus the nodes of the step face. In the
wide column those nodes relax to the column's own station within ``STEP_RELAX_RADII`` local radii of the
step (geometry.grading.relaxed_block), so the lip's thin cells stay near the lip; a contraction whose face
needs more cells than the chain carries raises the count upstream (``_radial_counts``).

Around a hub, block corners sit at the fluid region's own corners, so no block side turns inside
itself (which would force cells with a ~180-degree angle):

* blunt nose and blunt tail: the face is part of a station (wall from the axis to the hub edge, then
  the annulus), so the column ahead of the nose and the wake column behind the tail meet the axis at
  the face's foot and the hub edge is a convex corner shared by three blocks;
* round nose: three blocks. ``front`` has the axis up to the tip as its south side and the nose from
  the tip to the ray (from the nose centre) through the meeting point Q as its east side; ``wrap``
  covers the rest of the nose to the shoulder (its west side is that ray, so grid lines leave the nose
  along its normals); ``outer`` lies between the wrap and the duct wall. Q, on the station ahead of
  the nose, is an interior vertex of five cells.

Stations off the hub are hub-shaped (geometry.grading.HubStations) so that lines run straight past
the hub: in the head, and along the whole chain ahead of a blunt nose, where the face's cells are
carried at the same fraction of the bore. Behind the tail the wake column relaxes the tail station's
thin cells (graded for the face and the hub's wall) into the ``smooth`` profile, which the rest of the
chain carries: a cluster of wall-sized cells carried down the outlet tube's free stream (aspect ratios
near 1000) was what made the outer iteration's count grow with the mesh (demo reducer, middle flow:
293 / 343 / 570 iterations coarse / normal / fine with it, 279 / 258 / 254 without). The still air is a
core block ahead of the bore and annular blocks out to ``R_amb``.

Patches: ``ambient`` (upstream face x = -L_amb and far radial face r = R_amb), ``axis``, ``outlet``,
walls ``wall`` (duct), ``wall-hub``, ``wall-flange`` (the plate of a flanged or bell mouth),
``wall-bell`` (the flare), ``wall-lip``/``wall-outer``/``wall-back`` (thin-wall mouth).
Boundary faces are named from their position once all blocks are joined, so a block side may be part
interface, part wall.

Model choices (documented here, used by the solver):

* thin-wall mouth: the first segment protrudes ``PROTRUSION_DIAMETERS`` mouth diameters (or up to the
  first widening of the bore) from a back plate ``wall-back``; a wall, not an opening, so that all
  still air enters through the ``ambient`` faces.
* ``duct_radius`` is -1 in the still air, a bell's flare included (the closure keeps that air laminar);
  ``open_region_delta`` = the mouth radius: the Escudier length scale in a sharp edge's fan there.
* defaults L_amb = R_amb = ``AMBIENT_DIAMETERS`` x the largest mouth or head diameter; cells grow
  geometrically outward so the far field costs few cells.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .grading import (LEVEL_SCALE, STEP_RELAX_RADII, Y_PLUS_TARGET, HubStations, Sizing, axial,  # noqa: F401
                      cells_needed, explicit_block, fractions, graded, kinematic_viscosity_estimate, line,
                      relaxed_block, station, add_relaxing_offset)
from .blocks import GridBlock
from .mesh import Mesh, mesh_from_cells
from .segments import Head, segment_positions, chain_outline
from .wall_spacing import first_cell_height as pipe_first_cell_height
from .wall_spacing import friction_velocity_estimate

AMBIENT_DIAMETERS = 10.0     # default L_amb = R_amb in diameters (doubling it changes little, see tests)
PROTRUSION_DIAMETERS = 2.0   # thin-wall mouth: length of the protruding pipe outside


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



# ---------------------------------------------------------------- columns

@dataclass
class _Column:
    x0: float
    x1: float
    wall: object        # x -> wall radius R(x)
    kind: str           # plain | front (ahead of a blunt nose) | nose (round nose) | hub | wake
    d0: float | None    # axial cell wanted at x0 (None: no clustering)
    d1: float | None
    shape: str | None = None   # None, or the HubStations profile of its stations: face | round
    n: int = 0          # radial cells (annulus cells on the hub)


def _head_columns(head: Head, x0: float, wall, d0, d1, z: Sizing):
    """The head's columns and, with a hub, the hub's station profiles (None without a hub)."""
    R, x1, xr = 0.5 * head.diameter, x0 + head.length, x0 + head.rotor_at
    d_rotor = 0.04 * R / z.scale
    if not head.has_hub:
        return [_Column(x0, xr, wall, "plain", d0, d_rotor), _Column(xr, x1, wall, "plain", d_rotor, d1)], None
    rh, xs = head.hub_radius, x0 + head.hub_start
    xe = xs + head.hub_length
    h1, dc, dh = z.h1(R), z.corner(rh), z.joint(rh)
    # the faces are walls: first cell h1 normal to them, as on the hub's cylinder
    wake = _Column(xe, x1, wall, "wake", h1, d1, "face")
    if head.hub_nose == "round":
        xa = xs - min(0.5 * rh, 0.5 * (xs - x0))
        # Q at the radius where the ray from the nose centre leaves the station at 45 degrees
        hub = HubStations.build(rh, R, rh + (xs - xa), z)
        front = [_Column(x0, xa, wall, "plain", d0, dh, "round"), _Column(xa, xs + rh, wall, "nose", dh, dh, "round")]
        d_body = dh
    else:
        hub = HubStations.build(rh, R, rh, z)
        front, d_body = [_Column(x0, xs, wall, "front", d0, h1, "face")], dc
    body = [_Column(front[-1].x1, xr, wall, "hub", d_body, d_rotor), _Column(xr, xe, wall, "hub", d_rotor, dc)]
    return front + body + [wake], hub


def _columns(case, z: Sizing, mouth_delta: float):
    """The duct's columns, mouth to outlet, with their axial end targets and radial cell counts, and the
    hub's station profiles (None without a hub)."""
    segs = case.segments
    cols: list[_Column] = []
    starts = segment_positions(segs)
    last = max(i for i, s in enumerate(segs) if s.length > 0)
    prev_r, hub = None, None
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
        if isinstance(seg, Head):
            new, hub = _head_columns(seg, x0, wall, d0, d1, z)
        else:
            new = [_Column(x0, x1, wall, "plain", d0, d1)]
        cols += new
        prev_r = float(wall(x1))
    _face_shaped_beyond_head(cols)
    _radial_counts(cols, z, hub)
    return cols, hub


def _face_shaped_beyond_head(cols: list[_Column]) -> None:
    """Columns upstream of a blunt nose carry its face's cells too; those downstream of a hub's tail carry
    the same node count in the ``smooth`` profile, into which the tail station's thin cells relax (see
    :func:`_wake_relaxation`)."""
    kinds = [c.kind for c in cols]
    if "wake" in kinds:
        for c in cols[kinds.index("wake"):]:
            c.shape = "smooth"
    if "front" in kinds:
        for c in cols[:kinds.index("front")]:
            c.shape = "face"


def _jump(left: _Column, right: _Column) -> tuple[float, float]:
    x = right.x0
    return float(left.wall(x)), float(right.wall(x))


def _step_sign(left: _Column, right: _Column) -> int:
    """+1 where the bore steps out from ``left`` to ``right`` at their joint, -1 where it steps in, else 0."""
    r_l, r_r = _jump(left, right)
    return 1 if r_r > r_l * (1 + 1e-9) else -1 if r_l > r_r * (1 + 1e-9) else 0


def _radial_counts(cols: list[_Column], z: Sizing, hub: HubStations | None) -> None:
    """Radial cells per column: a sudden expansion adds the cells of its face, a contraction drops them;
    a blunt hub face takes its cells from the stations ahead of it and gives them back behind the tail,
    so the annulus keeps the chain's count. A contraction whose face needs more cells than the wide side
    can spare (keeping ``n_min`` in the bore, besides a hub face's cells) raises the count upstream, back
    to the mouth or to the wide side of an earlier expansion (whose face takes the extra cells)."""
    n_min = max(8, int(0.7 * z.radial_cells))
    face = hub.face_cells if hub is not None else 0
    cols[0].n = z.radial_cells + (face if any(c.kind == "front" for c in cols) else 0)
    for left, right in zip(cols, cols[1:]):
        r_l, r_r = _jump(left, right)
        if abs(r_l - r_r) <= 1e-9 * r_l:
            onto_hub = left.shape == "face" and right.kind == "hub"
            off_hub = left.kind == "hub" and right.kind == "wake"
            right.n = left.n - face * onto_hub + face * off_hub
            continue
        small, big = min(r_l, r_r), max(r_l, r_r)
        k = cells_needed(big - small, z.corner(small), z.h1(big), z.q, 2.5 * big / z.radial_cells, minimum=3)
        # a hub-shaped narrow side keeps the face's cells besides the bore's
        keep = n_min + (face if right.shape is not None else 0)
        if r_r < r_l and left.n - k < keep:
            _raise_upstream(cols, cols.index(left), keep + k - left.n)
        right.n = left.n + k if r_r > r_l else left.n - k


def _raise_upstream(cols: list[_Column], k: int, extra: int) -> None:
    """Add ``extra`` radial cells to column k and to those ahead of it up to an expansion's wide side."""
    for j in range(k, -1, -1):
        cols[j].n += extra
        if j > 0 and _step_sign(cols[j - 1], cols[j]) > 0:
            return


# ---------------------------------------------------------------- stations and duct blocks

def _col_station(col: _Column, x: float, r: float, side: str, z: Sizing, hub) -> np.ndarray:
    """Radial nodes of ``col``'s ``west`` or ``east`` side at x, for a wall radius r, or its ``own`` profile
    that a relaxed column blends to (not the west side for a hub's wake, which starts on the tail face)."""
    if col.kind == "hub" or (col.kind == "nose" and side == "east"):
        return hub.annulus(x, r, col.n, z)
    if col.kind == "wake" and side == "west":
        return hub.shaped(x, r, col.n, "face", z)
    if col.shape is not None:
        return hub.shaped(x, r, col.n, col.shape, z)
    return station(x, 0.0, r, col.n, z)


def _station_views(left: _Column | None, right: _Column | None, z: Sizing, hub):
    """Node arrays of one station as seen from the column on its left and on its right."""
    if left is None or right is None:
        col = right if left is None else left
        x = col.x0 if left is None else col.x1
        v = _col_station(col, x, float(col.wall(x)), "west" if left is None else "east", z, hub)
        return v, v
    x = right.x0
    r_l, r_r = _jump(left, right)
    if abs(r_l - r_r) <= 1e-9 * r_l:
        lv = _col_station(left, x, r_l, "east", z, hub)
        rv = _col_station(right, x, r_l, "west", z, hub)
        if len(lv) == len(rv):   # a plain column next to a hub-shaped one takes the shaped nodes
            lv = rv = rv if right.shape is not None else lv
        return lv, rv             # else a blunt face: the shaped side holds the annulus's nodes too
    small, big = min(r_l, r_r), max(r_l, r_r)
    n_small, n_big = (left.n, right.n) if r_l < r_r else (right.n, left.n)
    core = _col_station(left, x, small, "east", z, hub) if r_l < r_r else \
        _col_station(right, x, small, "west", z, hub)
    face = line((x, small), (x, big), graded(big - small, n_big - n_small, z.corner(small), z.h1(big), z.q))
    full = np.vstack([core, face[1:]])
    return (core, full) if r_l < r_r else (full, core)


def _step_relaxation(cols: list[_Column], k: int, rh: float = 0.0) -> tuple[float, float]:
    """Lengths (m) over which column k's west/east station relaxes to its own: nonzero where the column is
    the wide side of a sudden area change (its station carries the step face's cells) or a hub's wake
    (hub radius ``rh``) that a step follows at once."""
    col = cols[k]
    # a hub's wake starts on the tail station, with the face's and the hub's thin cells (here only when a
    # step follows at once; else they relax across columns, see _wake_relaxation)
    wide_west = col.kind == "wake" or (k > 0 and _step_sign(cols[k - 1], col) > 0)
    wide_east = k + 1 < len(cols) and _step_sign(col, cols[k + 1]) < 0
    lw = STEP_RELAX_RADII * (rh if col.kind == "wake" else float(col.wall(col.x0))) if wide_west else 0.0
    le = STEP_RELAX_RADII * float(col.wall(col.x1)) if wide_east else 0.0
    fit = min(1.0, (col.x1 - col.x0) / (lw + le)) if lw + le > 0 else 1.0
    return lw * fit, le * fit


def _wake_relaxation(cols: list[_Column], k: int, rh: float) -> tuple[float, float, float] | None:
    """(tail x, bore radius there, length) when column k lies where the tail station's thin cells relax into
    the ``smooth`` profile: from the hub's tail over ``STEP_RELAX_RADII`` hub radii ``rh``, across columns,
    not past the first sudden area change (whose station carries the step face); the outlet may cut it
    short. None elsewhere, and where a step follows the wake column at once (that column relaxes by
    itself, :func:`_step_relaxation`)."""
    kinds = [c.kind for c in cols]
    wake = kinds.index("wake") if "wake" in kinds else len(cols)
    if k < wake:
        return None
    end = wake
    while end + 1 < len(cols) and _step_sign(cols[end], cols[end + 1]) == 0:
        end += 1
    if k > end or (end == wake and end + 1 < len(cols)):
        return None
    x_tail = cols[wake].x0
    r_tail = float(cols[wake].wall(x_tail))
    # the outlet shares its nodes with no block: there the relaxation may stop unfinished
    far = np.inf if end == len(cols) - 1 else cols[end].x1
    # a tail face of the hub's radius relaxes like a step face of its wide radius (measured, demo at level
    # fine: 254 / 263 / 292 iterations relaxing over 1 / 2 / 3.3 hub radii, the last = one head radius)
    length = min(STEP_RELAX_RADII * rh, far - x_tail)
    return (x_tail, r_tail, length) if cols[k].x0 < x_tail + length else None


def _wake_block(col: _Column, south, north, x_tail: float, r_tail: float, length: float, z: Sizing,
                hub) -> GridBlock:
    """A column behind the tail: the transfinite block through its own ``smooth`` stations, plus the tail
    station's offset from the smooth profile fading from the tail (:func:`grading.add_relaxing_offset`),
    so neighbouring columns meet on the same nodes."""
    tail, smooth = (hub.shaped(x_tail, r_tail, col.n, shape, z)[:, 1] for shape in ("face", "smooth"))
    own_w = hub.shaped(col.x0, float(col.wall(col.x0)), col.n, "smooth", z)
    own_e = hub.shaped(col.x1, float(col.wall(col.x1)), col.n, "smooth", z)
    nodes = explicit_block(south, north, own_w, own_e).node_grid()
    add_relaxing_offset(nodes, south[:, 0], north[:, 1], x_tail, r_tail, tail - smooth, length)
    return GridBlock(nodes)


def _column_block(cols, k, south, north, west, east, z: Sizing, hub):
    """Column k's block: transfinite between its stations, relaxed behind a hub's tail (:func:`_wake_block`)
    or next to a step (grading.relaxed_block)."""
    col = cols[k]
    wake = _wake_relaxation(cols, k, hub.rh) if hub is not None else None
    if wake is not None:
        return _wake_block(col, south, north, *wake, z, hub)
    lw, le = _step_relaxation(cols, k, hub.rh if hub is not None else 0.0)
    if lw == 0.0 and le == 0.0:
        return explicit_block(south, north, west, east)
    own_w = _col_station(col, col.x0, float(col.wall(col.x0)), "own", z, hub)
    own_e = _col_station(col, col.x1, float(col.wall(col.x1)), "east", z, hub)
    return relaxed_block(south, north, west, east, own_w, own_e, lw, le)


def _nose_blocks(col: _Column, west: np.ndarray, east: np.ndarray, hub: HubStations, z: Sizing):
    """Front, wrap and outer blocks of a round nose (module docstring), centre C = (x1, 0)."""
    rh, xa, xc = hub.rh, col.x0, col.x1
    big = float(col.wall(xa))
    j, h1 = hub.split(big, col.n, z), z.h1(big)
    q_pt = west[j]

    def nose(theta):
        return np.column_stack([xc - rh * np.cos(theta), rh * np.sin(theta)])

    theta = np.arctan2(west[:j + 1, 1], xc - xa)    # rays from C through the station's core nodes
    front_east = nose(theta)
    p_pt = front_east[-1]
    ray = line(p_pt, q_pt, graded(float(np.hypot(*(q_pt - p_pt))), j, h1, west[j + 1, 1] - q_pt[1], z.q))
    tip = line((xa, 0.0), (xc - rh, 0.0), graded(xc - rh - xa, j, None, h1, z.q))
    front = explicit_block(tip, ray[::-1], west[:j + 1], front_east)
    arc, lo = rh * (0.5 * np.pi - theta[-1]), rh * (theta[-1] - theta[-2])
    n = cells_needed(arc, lo, col.d1, z.q, min(z.axial_cap(rh), arc / 3.0), minimum=3)
    th = theta[-1] + (0.5 * np.pi - theta[-1]) * graded(arc, n, lo, col.d1, z.q)
    wrap_south = nose(th)
    wrap_south[-1] = east[0]
    xq = xc - q_pt[1] * np.cos(th) / np.sin(th)    # the wrap's rays meet the line r = r_Q
    xq[0], xq[-1] = xa, xc
    wrap_north = np.column_stack([xq, np.full_like(xq, q_pt[1])])
    wrap = explicit_block(wrap_south, wrap_north, ray, east[:j + 1])
    outer = explicit_block(wrap_north, np.column_stack([xq, col.wall(xq)]), west[j:], east[j:])
    return [("front", front), ("wrap", wrap), ("outer", outer)]


def _duct_blocks(case, cols: list[_Column], z: Sizing, hub):
    """The columns' blocks; returns [(name, block, wall or None)], the mouth's nodes, the rotor block index."""
    head, x_head = case.head, segment_positions(case.segments)[case.head_index]
    rotor_x = x_head + head.rotor_at
    views = [_station_views(None, cols[0], z, hub)]
    views += [_station_views(a, b, z, hub) for a, b in zip(cols, cols[1:])]
    views += [_station_views(cols[-1], None, z, hub)]
    out, rotor_block = [], None
    for k, col in enumerate(cols):
        west, east = views[k][1], views[k + 1][0]
        if col.kind == "nose":
            out += [(f"duct-{k}-nose-{part}", b, col.wall) for part, b in _nose_blocks(col, west, east, hub, z)]
            continue
        x = axial(col.x0, col.x1, col.d0, col.d1, z.q,
                  z.axial_cap(min(float(col.wall(col.x0)), float(col.wall(col.x1)))))
        south = np.column_stack([x, np.full_like(x, head.hub_radius if col.kind == "hub" else 0.0)])
        north = np.column_stack([x, col.wall(x)])
        if abs(col.x0 - rotor_x) < 1e-12 * (1.0 + abs(rotor_x)):
            rotor_block = len(out)
        out.append((f"duct-{k}-{col.kind}", _column_block(cols, k, south, north, west, east, z, hub), col.wall))
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


def _ambient_blocks(case, z: Sizing, mouth: np.ndarray, e: _Extent, shaped_mouth: bool = False) -> list:
    """Blocks of the still air (and, for a bell, the flare), joined to the bore's first station ``mouth``
    (``shaped_mouth``: it carries a blunt hub face's cells or a contraction's extra cells)."""
    amb, q, r0 = case.ambient, z.q_ambient, e.r0
    far = 0.25 * e.length / z.scale
    n0 = len(mouth) - 1
    bell = amb.mouth == "bell"
    dm = z.joint(e.outer) if bell else z.corner(r0)
    x = e.x_west + e.length * graded(e.length, cells_needed(e.length, None, dm, q, far), None, dm, q)

    def row(r):
        return np.column_stack([x, np.full_like(x, r)])

    inner = e.outer if bell else r0
    north = row(inner)
    if bell:
        rb = amb.bell_radius
        flare = (lambda f: np.column_stack([-rb * np.cos(0.5 * np.pi * f), e.outer - rb * np.sin(0.5 * np.pi * f)]))
        arc = z.piece(flare, 0.5 * np.pi * rb, dm, 0.5 * z.joint(r0), z.axial_cap(r0))
        north = np.vstack([north, arc[1:]])
    south = np.column_stack([north[:, 0], np.zeros(len(north))])
    west = line((e.x_west, 0.0), (e.x_west, inner), np.linspace(0.0, 1.0, n0 + 1))
    if shaped_mouth:  # far-side sizes: geometric mean of uniform and the mouth's, so a face's thin cells relax
        size = np.sqrt(np.diff(fractions(mouth)) / n0)
        west = line((e.x_west, 0.0), (e.x_west, inner), np.concatenate([[0.0], np.cumsum(size)]) / size.sum())
    # no duct radius, the flare included: its air is the mouth's accelerating sink flow (see solver.closure)
    blocks = [("ambient-core", explicit_block(south, north, west, mouth), None)]
    if amb.mouth == "thin-wall":
        t, n_l = amb.wall_thickness, max(4, int(round(4 * z.scale)))
        c = z.corner(r0)
        east = line((0.0, r0), (0.0, r0 + t), graded(t, n_l, c, c, z.q))
        west = line((e.x_west, r0), (e.x_west, r0 + t), np.linspace(0.0, 1.0, n_l + 1))
        blocks.append(("ambient-lip", explicit_block(row(r0), row(r0 + t), west, east), None))
        inner = r0 + t
    c0 = dm
    n_o = cells_needed(e.radius - inner, c0, None, q, far)
    f_east = graded(e.radius - inner, n_o, c0, None, q)
    east = line((e.x_mouth, inner), (e.x_mouth, e.radius), f_east)
    west = line((e.x_west, inner), (e.x_west, e.radius), graded(e.radius - inner, n_o, inner / n0, None, q))
    blocks.append(("ambient-outer", explicit_block(row(inner), row(e.radius), west, east), None))
    if amb.mouth == "thin-wall":
        px = axial(0.0, e.protrusion, c0, z.joint(r0), q, far)
        south = np.column_stack([px, np.full_like(px, inner)])
        north = np.column_stack([px, np.full_like(px, e.radius)])
        back = line((e.protrusion, inner), (e.protrusion, e.radius), f_east)
        blocks.append(("ambient-outside", explicit_block(south, north, east, back), None))
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
    z = Sizing(LEVEL_SCALE[level], h1, r_head, q_max, nu)
    e = _extent(case)
    cols, hub = _columns(case, z, 0.5 * z.joint(e.r0) if case.ambient.mouth == "bell" else z.corner(e.r0))
    duct, mouth_nodes, rotor_block = _duct_blocks(case, cols, z, hub)
    # a mouth carrying extra cells (a blunt face's, or a contraction's downstream) relaxes them in the still air
    extra = cols[0].n > z.radial_cells + (hub.face_cells if cols[0].shape == "face" else 0)
    blocks = _ambient_blocks(case, z, mouth_nodes, e, cols[0].shape == "face" or extra) + duct
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

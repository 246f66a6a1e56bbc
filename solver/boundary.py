"""Boundary conditions: one small class per condition, registered by a type string.

Every condition reduces to affine face data for each velocity component,
``face value = a + b * (owner cell value)``, and says how its face mass flux is set:

* ``"fixed"``    the condition sets the flux itself (walls, axis, velocity inlet, fixed-flow outlet);
* ``"pressure"`` the flux follows from the face pressure through Rhie-Chow (static-pressure outlet,
  ambient opening); these faces also fix the pressure level and carry p' = 0.

Faces on the axis have zero area (see :mod:`geometry.mesh`), so the axis condition only has to keep
the gradients regular: u symmetric (zero gradient), v antisymmetric (zero on the axis).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, ClassVar

import numpy as np

BOUNDARY_CONDITIONS: dict[str, type["BoundaryCondition"]] = {}


def register(cls):
    BOUNDARY_CONDITIONS[cls.kind] = cls
    return cls


@dataclass(frozen=True)
class FaceContext:
    """What a condition may read to set its face data (arrays over the patch's faces)."""

    centre: np.ndarray       # (n, 2) face centres [x, r]
    normal: np.ndarray       # (n, 2) outward unit normals
    area: np.ndarray         # (n,) face area per radian
    owner_velocity: np.ndarray  # (n, 2) [u, v] of the owner cells
    mass_flux: np.ndarray    # (n,) current outward mass flux per radian, kg/s/rad
    density: float


class BoundaryCondition:
    kind: ClassVar[str]
    flux: ClassVar[str]  # "fixed" or "pressure"

    def velocity_affine(self, ctx: FaceContext) -> tuple[np.ndarray, np.ndarray]:
        """(a, b) arrays of shape (n, 2): face [u, v] = a + b * owner [u, v]."""
        raise NotImplementedError

    def pressure_value(self, ctx: FaceContext) -> np.ndarray | None:
        """Face static pressure for "pressure" conditions (Pa), else None (extrapolated)."""
        return None

    def fixed_flux(self, ctx: FaceContext) -> np.ndarray:
        """Outward mass flux per radian for "fixed" conditions."""
        raise NotImplementedError


def _zero_gradient(n):
    return np.zeros((n, 2)), np.ones((n, 2))


@register
@dataclass(frozen=True)
class Wall(BoundaryCondition):
    """No-slip, impermeable wall."""

    kind: ClassVar[str] = "wall"
    flux: ClassVar[str] = "fixed"

    def velocity_affine(self, ctx):
        n = len(ctx.area)
        return np.zeros((n, 2)), np.zeros((n, 2))

    def fixed_flux(self, ctx):
        return np.zeros(len(ctx.area))


@register
@dataclass(frozen=True)
class Axis(BoundaryCondition):
    """Symmetry line r = 0: u has zero radial gradient, v = 0; no flux (the faces have no area)."""

    kind: ClassVar[str] = "axis"
    flux: ClassVar[str] = "fixed"

    def velocity_affine(self, ctx):
        n = len(ctx.area)
        a = np.zeros((n, 2))
        b = np.zeros((n, 2))
        b[:, 0] = 1.0
        return a, b

    def fixed_flux(self, ctx):
        return np.zeros(len(ctx.area))


@register
@dataclass(frozen=True)
class VelocityInlet(BoundaryCondition):
    """Given velocity: uniform ``velocity`` = (u, v) in m/s, or ``profile(x, r) -> (n, 2)``."""

    velocity: tuple[float, float] = (0.0, 0.0)
    profile: Callable[[np.ndarray, np.ndarray], np.ndarray] | None = None
    kind: ClassVar[str] = "velocity-inlet"
    flux: ClassVar[str] = "fixed"

    def face_velocity(self, ctx):
        if self.profile is not None:
            return np.asarray(self.profile(ctx.centre[:, 0], ctx.centre[:, 1]), float).reshape(-1, 2)
        return np.tile(np.asarray(self.velocity, float), (len(ctx.area), 1))

    def velocity_affine(self, ctx):
        return self.face_velocity(ctx), np.zeros((len(ctx.area), 2))

    def fixed_flux(self, ctx):
        return ctx.density * ctx.area * np.einsum("ij,ij->i", self.face_velocity(ctx), ctx.normal)


@register
@dataclass(frozen=True)
class FixedFlowOutlet(BoundaryCondition):
    """Outlet drawing a set volumetric flow (m^3/s over the full 2 pi): developed (zero-gradient)
    velocity, the owner cells' normal velocity scaled so the patch flux equals the target."""

    flow: float = 0.0
    kind: ClassVar[str] = "fixed-flow-outlet"
    flux: ClassVar[str] = "fixed"

    def velocity_affine(self, ctx):
        return _zero_gradient(len(ctx.area))

    def fixed_flux(self, ctx):
        target = ctx.density * self.flow / (2.0 * np.pi)  # per radian
        un = np.maximum(np.einsum("ij,ij->i", ctx.owner_velocity, ctx.normal), 0.0)
        weight = un * ctx.area
        if weight.sum() <= 1e-12 * max(ctx.area.sum(), 1e-300) * max(np.abs(ctx.owner_velocity).max(), 1e-300):
            weight = ctx.area.copy()
        return target * weight / weight.sum()


@register
@dataclass(frozen=True)
class PressureOutlet(BoundaryCondition):
    """Static pressure ``pressure`` (Pa) at the face; zero-gradient velocity."""

    pressure: float = 0.0
    kind: ClassVar[str] = "pressure-outlet"
    flux: ClassVar[str] = "pressure"

    def velocity_affine(self, ctx):
        return _zero_gradient(len(ctx.area))

    def pressure_value(self, ctx):
        return np.full(len(ctx.area), self.pressure)


@register
@dataclass(frozen=True)
class AmbientOpening(BoundaryCondition):
    """Opening to still ambient air at ``pressure`` (Pa, total = static there).

    Inflow faces: static pressure = ambient total pressure minus the dynamic pressure of the face's
    normal velocity, and the entering velocity is normal to the face with the magnitude of the flux
    (a pressure-inlet-outlet condition). Outflow faces: static pressure = ambient, zero-gradient velocity.
    """

    pressure: float = 0.0
    kind: ClassVar[str] = "ambient-opening"
    flux: ClassVar[str] = "pressure"

    def _normal_speed(self, ctx):
        return ctx.mass_flux / (ctx.density * np.maximum(ctx.area, 1e-300))

    def velocity_affine(self, ctx):
        inflow = ctx.mass_flux < 0.0
        a, b = _zero_gradient(len(ctx.area))
        un = self._normal_speed(ctx)
        a[inflow] = un[inflow, None] * ctx.normal[inflow]
        b[inflow] = 0.0
        return a, b

    def pressure_value(self, ctx):
        un = self._normal_speed(ctx)
        dynamic = np.where(ctx.mass_flux < 0.0, 0.5 * ctx.density * un**2, 0.0)
        return self.pressure - dynamic


def make_condition(kind: str, **parameters) -> BoundaryCondition:
    """Build a registered condition by its type string."""
    if kind not in BOUNDARY_CONDITIONS:
        raise ValueError(f"unknown boundary condition {kind!r}; known: {', '.join(BOUNDARY_CONDITIONS)}")
    return BOUNDARY_CONDITIONS[kind](**parameters)

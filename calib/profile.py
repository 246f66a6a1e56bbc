"""Velocity profile in the rotor plane of the instrument head: what every instrument model reads.

The solver hands over one radial line of cells at the rotor plane. The profile is taken as
piecewise linear in r between the given stations; all area integrals are evaluated exactly for
that interpolant (three-point Gauss-Legendre on each segment is exact for the polynomial
integrands u r, u^2 r, u^3 r, u v^2 r of degree <= 5), so no quadrature error is added on top of
the solver's own discretisation.

Units: r in m, u and v in m/s, areas in m^2, flux in m^3/s.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

MIN_POINTS = 200

# Three-point Gauss-Legendre on [0, 1]: exact for polynomials up to degree 5.
_GAUSS_X = np.array([0.5 - math.sqrt(15.0) / 10.0, 0.5, 0.5 + math.sqrt(15.0) / 10.0])
_GAUSS_W = np.array([5.0, 8.0, 5.0]) / 18.0


def gauss_points(r: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Quadrature radii and weights (m, m) exact for piecewise-polynomial integrands on ``r``.

    Returns arrays of shape (len(r) - 1, 3): ``sum(w * f(x)) == integral of f dr``.
    """
    h = np.diff(r)
    x = r[:-1, None] + h[:, None] * _GAUSS_X[None, :]
    w = h[:, None] * _GAUSS_W[None, :]
    return x, w


@dataclass(frozen=True)
class RotorPlaneProfile:
    """Axisymmetric velocity profile across the rotor plane, from ``r_inner`` to the wall ``r[-1]``.

    r: ascending radii (m), at least 200 stations, ``r[0] == r_inner`` (hub radius or 0).
    u: axial velocity (m/s), positive toward the suction outlet. v: radial velocity (m/s).
    """

    r: np.ndarray
    u: np.ndarray
    v: np.ndarray
    r_inner: float = 0.0

    def __post_init__(self):
        arrays = {}
        for name in ("r", "u", "v"):
            value = np.array(getattr(self, name), dtype=float)
            if value.ndim != 1:
                raise ValueError(f"RotorPlaneProfile.{name}: expected a 1-D array, got shape {value.shape}")
            if not np.all(np.isfinite(value)):
                raise ValueError(f"RotorPlaneProfile.{name}: contains NaN or infinite values")
            value.setflags(write=False)
            arrays[name] = value
        r = arrays["r"]
        if r.size < MIN_POINTS:
            raise ValueError(f"RotorPlaneProfile.r: needs at least {MIN_POINTS} stations, got {r.size}; "
                             "sample the rotor plane more finely")
        for name in ("u", "v"):
            if arrays[name].shape != r.shape:
                raise ValueError(f"RotorPlaneProfile.{name}: shape {arrays[name].shape} differs from r {r.shape}")
        if np.any(np.diff(r) <= 0.0):
            raise ValueError("RotorPlaneProfile.r: radii must be strictly ascending")
        r_inner = float(self.r_inner)
        if r_inner < 0.0 or abs(r[0] - r_inner) > 1e-9 * max(r[-1], 1.0):
            raise ValueError(f"RotorPlaneProfile.r: must start at r_inner = {r_inner} m (hub radius or 0), "
                             f"starts at {r[0]} m")
        for name, value in arrays.items():
            object.__setattr__(self, name, value)
        object.__setattr__(self, "r_inner", r_inner)

    @classmethod
    def power_law(cls, n: float, R: float, U_centre: float, points: int = 400) -> "RotorPlaneProfile":
        """Developed turbulent pipe profile u = U_c (1 - r/R)^(1/n), v = 0 (Schlichting ch. XX).

        Stations are clustered toward the wall, r/R = 1 - (1 - s)^3 for uniform s, because the
        profile's slope is unbounded there and a linear interpolant needs fine steps to stay exact.
        """
        if n <= 0 or R <= 0 or points < MIN_POINTS:
            raise ValueError(f"power_law: need n > 0, R > 0 and points >= {MIN_POINTS}")
        s = np.linspace(0.0, 1.0, points)
        wall_distance = R * (1.0 - s) ** 3
        r = R - wall_distance
        r[-1] = R
        u = U_centre * (wall_distance / R) ** (1.0 / n)
        return cls(r=r, u=u, v=np.zeros_like(r))

    @property
    def wall_radius(self) -> float:
        return float(self.r[-1])

    @property
    def area(self) -> float:
        """Annulus (or disc) area pi (R^2 - Ri^2), m^2."""
        return math.pi * (self.r[-1] ** 2 - self.r_inner ** 2)

    def _area_integral(self, integrand) -> float:
        """2 pi * integral of integrand(u, v) r dr for the piecewise-linear profile, exact."""
        x, w = gauss_points(self.r)
        u = np.interp(x, self.r, self.u)
        v = np.interp(x, self.r, self.v)
        return 2.0 * math.pi * float(np.sum(w * integrand(u, v) * x))

    @property
    def flux(self) -> float:
        """Volume flow 2 pi integral u r dr, m^3/s (positive toward the outlet)."""
        return self._area_integral(lambda u, v: u)

    @property
    def area_mean(self) -> float:
        """Area-mean axial velocity U = flux / area, m/s."""
        return self.flux / self.area

    @property
    def centre_velocity(self) -> float:
        """Axial velocity on the centre line, m/s. For an annulus (a hub), whose inner edge is a no-slip
        wall, the value at the radius that splits the annulus into equal areas, sqrt((Ri^2 + R^2)/2)."""
        if self.r_inner <= 0.0:
            return float(self.u[0])
        mid = np.sqrt(0.5 * (self.r_inner**2 + self.r[-1] ** 2))
        return float(np.interp(mid, self.r, self.u))

    def _mean_or_fail(self, what: str) -> float:
        mean = self.area_mean
        if mean == 0.0:
            raise ValueError(f"RotorPlaneProfile.{what}: undefined, the area-mean velocity is zero")
        return mean

    @property
    def flatness(self) -> float:
        """Centre velocity over area mean, -."""
        return self.centre_velocity / self._mean_or_fail("flatness")

    @property
    def momentum_coefficient(self) -> float:
        """Momentum-flux (Boussinesq) coefficient beta = integral u^2 dA / (U^2 A), -."""
        mean = self._mean_or_fail("momentum_coefficient")
        return self._area_integral(lambda u, v: u * u) / (mean * mean * self.area)

    @property
    def energy_coefficient(self) -> float:
        """Kinetic-energy-flux (Coriolis) coefficient alpha = integral u |V|^2 dA / (U^3 A), -.

        |V|^2 = u^2 + v^2, so the radial velocity's kinetic energy is carried too; for v = 0 this
        is the classical alpha (2 for Poiseuille flow).
        """
        mean = self._mean_or_fail("energy_coefficient")
        return self._area_integral(lambda u, v: u * (u * u + v * v)) / (mean ** 3 * self.area)

    def interpolate(self, r_query) -> tuple[np.ndarray, np.ndarray]:
        """(u, v) at ``r_query`` (m) by linear interpolation; refuses radii outside [r_inner, R]."""
        rq = np.asarray(r_query, dtype=float)
        span = self.r[-1] - self.r[0]
        if np.any(rq < self.r[0] - 1e-12 * span) or np.any(rq > self.r[-1] + 1e-12 * span):
            raise ValueError(f"RotorPlaneProfile.interpolate: radius outside the profile "
                             f"[{self.r[0]}, {self.r[-1]}] m")
        return np.interp(rq, self.r, self.u), np.interp(rq, self.r, self.v)

"""Velocity-area traverse rules for circular ducts, and the traverse as an instrument.

A traverse reads the point velocity at a set of radii and takes their arithmetic mean as the
area-mean velocity (ISO 3966 / ISO 5801 / ISO 5802 practice: flow = mean point velocity x area).
Positions are returned as radii from the axis; the standards tabulate y/D from the wall
(r/R = 1 - 2 y/D). Each diameter holds two copies of the per-radius set, so for an axisymmetric
profile the per-radius mean is the traverse reading.

Rules:

* ``"log-chebyshev"`` is built from its defining principle (as we understand the log-Tchebycheff
  construction of the ISO 3966 family): the section is cut into N annuli of equal area, one
  point per annulus. In the outermost annulus the velocity is taken as logarithmic in the wall
  distance, u = A + B ln y, and its point sits where ln y equals the annulus' area mean of ln y.
  The inner N-1 annuli together are integrated by N-1 point Chebyshev (equal-weight) quadrature
  in s = (r/R)^2, the variable in which area is uniform. This reproduces ISO 5802:2001 Tables 2-3
  for 3 and 4 points per radius to the published three decimals (tests/validation).
* ``"log-linear"`` is taken from the published ISO 5802:2001 tables (3 and 4 points per radius);
  we did not reconstruct its defining principle, so other point counts are refused.
* ``"equal-area"``: r_i/R = sqrt((2i - 1)/(2N)), the area-bisecting radius of N equal annuli.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.integrate import quad

from calib.instruments import COMMON_KEYS, Instrument, register_instrument
from geometry.schema import CaseError, Key

TRAVERSE_RULES = ("log-chebyshev", "log-linear", "equal-area")

# ISO 5802:2001 log-linear rule, y/D from the wall for one radius (Tables 2-3).
LOG_LINEAR_Y_OVER_D = {
    3: (0.032, 0.135, 0.321),
    4: (0.021, 0.117, 0.184, 0.345),
}

# Chebyshev equal-weight quadrature has real nodes only for these orders (Abramowitz & Stegun 25.4.46).
_CHEBYSHEV_ORDERS = (1, 2, 3, 4, 5, 6, 7, 9)

POSITION_TOLERANCE = 1e-3  # m; probe placement, common practice, no source


def chebyshev_nodes(m: int) -> np.ndarray:
    """Nodes x_i on [-1, 1] of the m-point equal-weight rule: (1/m) sum f(x_i) = (1/2) int f dx.

    The power sums p_k = sum x_i^k must equal m/(k+1) (k even) or 0 (k odd); Newton's identities
    turn them into the node polynomial's coefficients.
    """
    if m not in _CHEBYSHEV_ORDERS:
        raise ValueError(f"Chebyshev quadrature has real nodes only for {_CHEBYSHEV_ORDERS} points, got {m}")
    p = [m / (k + 1) if k % 2 == 0 else 0.0 for k in range(m + 1)]
    e = [1.0]
    for k in range(1, m + 1):
        e.append(sum((-1) ** (i - 1) * e[k - i] * p[i] for i in range(1, k + 1)) / k)
    coefficients = [(-1) ** k * e[k] for k in range(m + 1)]
    return np.sort(np.roots(coefficients).real)


def _log_point_outer_annulus(points: int) -> float:
    """r/R of the outer annulus' point: ln(1 - r/R) there equals its area mean of ln(1 - r/R)."""
    a = math.sqrt((points - 1) / points)
    mean_log, _ = quad(lambda x: math.log(1.0 - x) * 2.0 * x, a, 1.0, limit=200)
    mean_log /= 1.0 - a * a
    return 1.0 - math.exp(mean_log)


def _log_chebyshev(points: int) -> np.ndarray:
    inner_area = (points - 1) / points  # s-range [0, inner_area] holds the inner annuli
    s = 0.5 * inner_area * (1.0 + chebyshev_nodes(points - 1))
    return np.append(np.sqrt(s), _log_point_outer_annulus(points))


def traverse_radii(rule: str, points: int, R: float) -> np.ndarray:
    """Ascending measuring radii (m) of one radius of a circular duct of radius ``R`` (m)."""
    if R <= 0.0:
        raise ValueError(f"traverse_radii: duct radius must be positive, got {R}")
    if not isinstance(points, (int, np.integer)) or points < 1:
        raise ValueError(f"traverse_radii: points per radius must be a positive whole number, got {points!r}")
    if rule == "equal-area":
        i = np.arange(1, points + 1)
        return R * np.sqrt((2 * i - 1) / (2.0 * points))
    if rule == "log-chebyshev":
        if points < 2 or points - 1 not in _CHEBYSHEV_ORDERS:
            raise ValueError(f"log-chebyshev: points per radius must be 2-8 or 10, got {points}")
        return R * _log_chebyshev(points)
    if rule == "log-linear":
        if points not in LOG_LINEAR_Y_OVER_D:
            raise ValueError(f"log-linear: published positions exist here for "
                             f"{sorted(LOG_LINEAR_Y_OVER_D)} points per radius, got {points}")
        return R * np.sort(1.0 - 2.0 * np.array(LOG_LINEAR_Y_OVER_D[points]))
    raise ValueError(f"traverse rule {rule!r} is not one of {', '.join(TRAVERSE_RULES)}")


@register_instrument("traverse")
@dataclass(frozen=True)
class TraverseInstrument(Instrument):
    """Point velocities at the rule's radii, averaged arithmetically (ISO 3966 practice).

    ``radial_offset`` (m) moves every point outward (clipped to the duct), for the position
    tolerance of the uncertainty budget. The duct radius is the profile's wall radius.
    """

    nominal_area: float
    rule: str = "log-chebyshev"
    points: int = 5
    radial_offset: float = 0.0

    KEYS = COMMON_KEYS + (
        Key("rule", "str", default="log-chebyshev", choices=TRAVERSE_RULES,
            description="traverse rule for the measuring radii"),
        Key("points", "int", default=5, positive=True, description="measuring points per radius"),
    )

    def __post_init__(self):
        traverse_radii(self.rule, self.points, 1.0)  # refuse unknown rule/point count early

    @classmethod
    def from_case(cls, values, *, nominal_area, base_dir, air_density):
        try:
            return cls(nominal_area=nominal_area, rule=values["rule"], points=values["points"])
        except ValueError as exc:
            raise CaseError("instrument.points", str(exc)) from None

    def radii(self, profile) -> np.ndarray:
        if profile.r_inner > 0.0:
            raise ValueError("traverse: the rules are for a full circular duct; the profile has a hub")
        R = profile.wall_radius
        return np.clip(traverse_radii(self.rule, self.points, R) + self.radial_offset, 0.0, R)

    def indicated_velocity(self, profile) -> float:
        u, _ = profile.interpolate(self.radii(profile))
        return float(np.mean(u))

    def perturbations(self) -> dict[str, Instrument]:
        return {f"radial_offset{sign}{POSITION_TOLERANCE * 1e3:g}mm":
                type(self)(self.nominal_area, self.rule, self.points, self.radial_offset + s * POSITION_TOLERANCE)
                for sign, s in (("+", 1.0), ("-", -1.0))}

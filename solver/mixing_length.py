"""Prandtl mixing-length closure: wall damping, outer length scales and the eddy viscosity.

Model (all lengths in m, velocities in m/s, ν_t in m²/s):

    ν_t = l² |S|                                   (Prandtl 1925) [from memory]
    l   = R · f_N(y/R) · D(y⁺)        inside a duct of local radius R > 0
    l   = min(κ y, λ δ) · D(y⁺)       in open regions (no duct radius), Escudier (1966)
    f_N(η) = 0.14 − 0.08 (1 − η)² − 0.06 (1 − η)⁴   (Nikuradse 1932, as given by Schlichting)
    D(y⁺) = 1 − exp(−y⁺ / A⁺)                        (van Driest 1956)

Assumptions written beside the model:
- y is the distance to the nearest wall and y⁺ = y u_τ/ν with the local friction velocity; the
  closure is an equilibrium model (production = dissipation), no history or transport of l.
- Nikuradse's length was fitted to fully developed smooth-pipe data; using it with the *local*
  duct radius in a reducer or box is a model choice (NUMERICS.md), not a calibration.
- In open regions there is no radius; the cap λδ needs a shear-layer thickness δ chosen by the
  caller. Any choice is a model choice and feeds the model uncertainty (`published_ranges`). The 2D
  closure uses this form only in a sharp edge's fan; the rest of the still air is laminar there
  (:mod:`solver.closure`), so ``kappa`` and ``escudier_lambda`` act only in such fans.
- Behind a sharp convex edge (a step's lip, an orifice plate's back edge) the cells whose nearest wall
  point is the edge itself see y = distance to a corner, not to a wall; there the separated layer is a
  free mixing layer and l is also capped by α δ' s D(y⁺), s the distance from the edge
  (``shear_layer_alpha``, ``shear_layer_spread``; Wilcox 2006 [from memory]). Which cells those are is
  geometry (:func:`geometry.wall_distance.shear_layer_distance`). Beyond that fan the wall-distance
  length applies again, so l jumps at the fan's edge: a model choice, its effect is model uncertainty.
- Near the wall f_N'(0) = 0.16 + 0.24 = 0.40, so inside ducts the effective von Kármán constant is
  0.40 whatever ``kappa`` says; ``kappa`` only acts in open regions.

Each function has a numpy version (arrays in, arrays out, no loops) and a scalar numba kernel
(``*_kernel``) for use inside the finite-volume kernels. The two are cross-checked in tests.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, fields, replace

import numpy as np

from solver.jit import jit


@dataclass(frozen=True)
class MixingLengthConstants:
    """Constants of the mixing-length closure, one source of truth for the solver and pipe1d."""

    # von Kármán constant; 0.41 is common RANS practice [from memory], Bailey et al. 2014
    # (JFM 749:79) best estimate 0.40 ± 0.02 [verified]. Acts in open air only, in a sharp edge's fan (module doc).
    kappa: float = 0.41
    # van Driest damping constant A⁺ = 26 (van Driest 1956, J. Aeronaut. Sci. 23:1007) [from memory;
    # universally quoted].
    a_plus: float = 26.0
    # Nikuradse (1932) pipe mixing length l/R = c0 − c2 (1−η)² − c4 (1−η)⁴, as given by Schlichting,
    # Boundary-Layer Theory ch. XIX/XX [formula from memory; existence verified].
    nikuradse_c0: float = 0.14
    nikuradse_c2: float = 0.08
    nikuradse_c4: float = 0.06
    # Escudier (1966) outer cap l = λδ, λ = 0.09 (Launder & Spalding 1972) [from memory].
    escudier_lambda: float = 0.09
    # Free shear layer behind a sharp convex edge: l <= alpha delta(s), delta = delta' s at distance s
    # from the edge. alpha = 0.071 (plane mixing layer) and delta' = 0.115 (measured mixing-layer spreading
    # rate, delta between the points where ((U - U2)/(U1 - U2))^2 = 0.1 and 0.9), both Wilcox 2006,
    # Turbulence Modeling for CFD, 3rd ed., ch. 3-4 [from memory]. 0 switches the cap off.
    shear_layer_alpha: float = 0.071
    shear_layer_spread: float = 0.115
    # Under-relaxation of ν_t between outer iterations: mixing-length closures oscillate with the
    # velocity field; 0.5 is at the cautious end of the usual 0.5–0.8 [common practice, no source].
    nu_t_relaxation: float = 0.5

    def __post_init__(self):
        for name, low, high in _VALID_RANGES:
            value = getattr(self, name)
            if not (isinstance(value, (int, float)) and math.isfinite(value) and low <= value <= high):
                raise ValueError(f"mixing-length constant {name}={value!r} is outside its valid range "
                                 f"[{low}, {high}]; give a finite number in that range")
        if self.nikuradse_c2 + self.nikuradse_c4 > self.nikuradse_c0:
            raise ValueError("mixing-length constants nikuradse_c2 + nikuradse_c4 must not exceed "
                             "nikuradse_c0, or the mixing length is negative at the wall")

    @classmethod
    def from_overrides(cls, overrides: dict) -> "MixingLengthConstants":
        """Defaults with the given keys replaced; an unknown key or bad value raises ValueError."""
        known = {f.name for f in fields(cls)}
        for key, value in overrides.items():
            if key not in known:
                raise ValueError(f"unknown mixing-length constant {key!r}; known keys: "
                                 f"{', '.join(sorted(known))}")
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise ValueError(f"mixing-length constant {key} must be a number, got {value!r}")
        return replace(cls(), **{k: float(v) for k, v in overrides.items()})

    @staticmethod
    def published_ranges() -> dict[str, tuple[float, float, str]]:
        """Ranges to perturb each constant over for the model-uncertainty budget: key -> (low, high, source)."""
        return dict(_PUBLISHED_RANGES)


# Sanity limits for user overrides (not uncertainty ranges): wide enough for any published value.
_VALID_RANGES = (
    ("kappa", 0.2, 0.6), ("a_plus", 1.0, 100.0), ("nikuradse_c0", 0.01, 0.5),
    ("nikuradse_c2", 0.0, 0.5), ("nikuradse_c4", 0.0, 0.5), ("escudier_lambda", 0.01, 0.5),
    ("nu_t_relaxation", 0.01, 1.0), ("shear_layer_alpha", 0.0, 0.5), ("shear_layer_spread", 0.0, 1.0),
)

_PUBLISHED_RANGES = {
    "kappa": (0.40, 0.42, "Bailey, Vallikivi, Hultmark & Smits 2014, JFM 749:79, κ = 0.40 ± 0.02 "
              "(narrowed to 0.40–0.42, the span of pipe estimates incl. McKeon et al. 2004 κ = 0.421 "
              "[from memory])"),
    "a_plus": (25.0, 27.0, "van Driest 1956 A+ = 26; Cess/Reynolds & Tiederman fits A+ ≈ 25.4 "
               "[from memory]"),
    "escudier_lambda": (0.075, 0.09, "Escudier 1966 / Launder & Spalding 1972 λ = 0.09 [from memory]; "
                        "lower end 0.075 (smaller values quoted for free shear layers) [from memory, "
                        "not checked]"),
}


# ---------------------------------------------------------------------------------------------
# numpy versions
# ---------------------------------------------------------------------------------------------
def van_driest_damping(y_plus, a_plus: float = 26.0):
    """van Driest (1956) damping D = 1 − exp(−y⁺/A⁺), dimensionless; y⁺ < 0 is treated as 0."""
    y_plus = np.maximum(np.asarray(y_plus, dtype=float), 0.0)
    return -np.expm1(-y_plus / a_plus)


def nikuradse_length(y, radius, c0: float = 0.14, c2: float = 0.08, c4: float = 0.06):
    """Nikuradse (1932) pipe mixing length l = R[c0 − c2(1−η)² − c4(1−η)⁴], η = y/R clipped to [0, 1].

    y: wall distance (m); radius: duct radius R > 0 (m). Returns l in m.
    """
    y = np.asarray(y, dtype=float)
    radius = np.asarray(radius, dtype=float)
    if np.any(radius <= 0.0):
        raise ValueError("nikuradse_length: radius must be > 0 (use escudier_length in open regions)")
    eta = np.clip(y / radius, 0.0, 1.0)
    s = (1.0 - eta) ** 2
    return radius * (c0 - c2 * s - c4 * s * s)


def escudier_length(y, delta, kappa: float = 0.41, lam: float = 0.09):
    """Escudier (1966) capped length l = min(κ y, λ δ), m; y ≥ 0 wall distance, δ > 0 layer thickness."""
    y = np.maximum(np.asarray(y, dtype=float), 0.0)
    delta = np.asarray(delta, dtype=float)
    if np.any(delta <= 0.0):
        raise ValueError("escudier_length: delta (shear-layer thickness) must be > 0")
    return np.minimum(kappa * y, lam * delta)


def mixing_length(y, y_plus, duct_radius, open_delta, c: MixingLengthConstants = MixingLengthConstants()):
    """Damped mixing length l (m) for ducts (``duct_radius > 0``) and open regions (``duct_radius <= 0``).

    Duct: l = R f_N(y/R) D(y⁺). Open: l = min(κ y, λ δ) D(y⁺) with δ = ``open_delta`` (must be > 0
    where the region is open). All arguments broadcast together.
    """
    y, y_plus, radius, delta = np.broadcast_arrays(*(np.asarray(a, dtype=float)
                                                     for a in (y, y_plus, duct_radius, open_delta)))
    duct = radius > 0.0
    if np.any(delta[~duct] <= 0.0):
        raise ValueError("mixing_length: open_delta must be > 0 wherever duct_radius <= 0 (open region)")
    safe_radius = np.where(duct, radius, 1.0)
    safe_delta = np.where(duct, 1.0, delta)
    inner = nikuradse_length(y, safe_radius, c.nikuradse_c0, c.nikuradse_c2, c.nikuradse_c4)
    outer = escudier_length(y, safe_delta, c.kappa, c.escudier_lambda)
    return np.where(duct, inner, outer) * van_driest_damping(y_plus, c.a_plus)


def eddy_viscosity(length, strain_rate):
    """Prandtl eddy viscosity ν_t = l² |S| (m²/s) from l (m) and strain-rate magnitude |S| (1/s)."""
    length = np.asarray(length, dtype=float)
    return length * length * np.abs(np.asarray(strain_rate, dtype=float))


# ---------------------------------------------------------------------------------------------
# scalar numba kernels, same equations, for the finite-volume loops
# ---------------------------------------------------------------------------------------------
@jit
def van_driest_damping_kernel(y_plus, a_plus):
    """Scalar van Driest damping 1 − exp(−y⁺/A⁺)."""
    return -math.expm1(-max(y_plus, 0.0) / a_plus)


@jit
def nikuradse_length_kernel(y, radius, c0, c2, c4):
    """Scalar Nikuradse length (m); radius must be > 0."""
    eta = min(max(y / radius, 0.0), 1.0)
    s = (1.0 - eta) * (1.0 - eta)
    return radius * (c0 - c2 * s - c4 * s * s)


@jit
def escudier_length_kernel(y, delta, kappa, lam):
    """Scalar Escudier length min(κ y, λ δ) (m)."""
    return min(kappa * max(y, 0.0), lam * delta)


@jit
def mixing_length_kernel(y, y_plus, duct_radius, open_delta, kappa, a_plus, c0, c2, c4, lam):
    """Scalar damped mixing length (m); duct_radius <= 0 selects the open-region (Escudier) form."""
    if duct_radius > 0.0:
        base = nikuradse_length_kernel(y, duct_radius, c0, c2, c4)
    else:
        base = escudier_length_kernel(y, open_delta, kappa, lam)
    return base * van_driest_damping_kernel(y_plus, a_plus)


@jit
def mixing_length_field_kernel(y, y_plus, duct_radius, open_delta, kappa, a_plus, c0, c2, c4, lam, out):
    """Fill ``out`` (cells) with the damped mixing length; all inputs are 1-D arrays over cells."""
    for i in range(out.shape[0]):
        out[i] = mixing_length_kernel(y[i], y_plus[i], duct_radius[i], open_delta[i],
                                      kappa, a_plus, c0, c2, c4, lam)
    return out


@jit
def eddy_viscosity_kernel(length, strain_rate):
    """Scalar ν_t = l² |S| (m²/s)."""
    return length * length * abs(strain_rate)


def kernel_arguments(c: MixingLengthConstants) -> tuple[float, ...]:
    """The constants in the order the ``mixing_length_*kernel`` functions take them after the fields:
    (kappa, a_plus, nikuradse_c0, nikuradse_c2, nikuradse_c4, escudier_lambda)."""
    return (c.kappa, c.a_plus, c.nikuradse_c0, c.nikuradse_c2, c.nikuradse_c4, c.escudier_lambda)

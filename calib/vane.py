"""Vane anemometer: blade-element torque balance of a free-running rotor, read as a uniform speed.

Model (strip theory, each radius independent; Glauert's blade-element theory as used for
propellers and wind turbines; the rotor's own induction on the flow is neglected because a vane
anemometer extracts almost no power):

* blade angle to the rotation plane theta(r) = atan(P / (2 pi r)) for helical pitch P (m);
* a section at radius r (m) sees the axial velocity u(r) and the blade speed omega r, relative
  chordwise speed W_n = sqrt(u^2 + (omega r)^2), inflow angle phi = atan2(u, omega r), angle of
  attack alpha = phi - theta;
* radial velocity v runs along the (radial) blade span. Following the independence principle of
  swept-wing theory (the spanwise component does not change the chordwise pressure field; Jones
  1947, NACA Report 863 - from memory) v produces no lift and no pressure drag, but it adds to the
  speed seen by skin friction: the friction force acts along the full relative velocity, so its
  chordwise part scales with W_n W_t, W_t = sqrt(W_n^2 + v^2);
* torque Q(omega) = B int_hub^tip 1/2 rho c [W_n^2 (C_L sin phi - C_D,p cos phi)
  - C_D0 W_n W_t cos phi] r dr, trapezoid rule on ``STATIONS`` radii (N m);
* free running: Q(omega) = Q_f sign(omega) (Coulomb bearing friction, N m). The rotor starts
  from rest and settles at the first equilibrium it meets while spinning up (smallest |omega|
  where the net torque changes sign); if the starting torque |Q(0)| <= Q_f it does not turn.

The display is calibrated in uniform flow: the indicated speed is the uniform speed U_eq that holds
the rotor at the same omega (torque balance solved for U at fixed omega, the same quadrature), so
uniform flow reads exactly true. A certificate of (indicated, true) pairs from a uniform-flow
calibration means: at true speed ``true`` the display showed ``indicated``. The modelled display
therefore shows indicated(U_eq), interpolated linearly in the certificate and extrapolated with the
end segments' slopes (never below zero). Backward rotation (net reversed flow) shows a negative
reading of the same size as forward rotation would in reversed uniform flow (the flat-plate
coefficients are symmetric, so the rotor is too).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import cached_property

import numpy as np
from scipy.optimize import brentq

from calib.instruments import COMMON_KEYS, Instrument, register_instrument
from geometry.schema import CaseError, Key
from solver.jit import jit

STATIONS = 256  # radial blade-element stations between hub and tip

# Flat-plate section data. C_D,90 = 1.98: normal-force coefficient of a flat plate of large aspect
# ratio broadside to the flow (Hoerner 1965, Fluid-Dynamic Drag, ch. 3 - from memory).
CD90_FLAT_PLATE = 1.98
# Skin-friction drag of a thin blade at anemometer Reynolds numbers (1e3..1e5): common practice, no source.
CD0_THIN_BLADE = 0.02
# Thin flat plates stall at about 8-12 deg at low Reynolds number: common practice, no source.
STALL_ANGLE = math.radians(10.0)
# Width of the attached/separated blend in sin^2(alpha); a modelling choice that keeps the
# coefficients (and so the torque) smooth in alpha and omega.
STALL_BLEND_WIDTH = 0.004

# Manufacturing tolerances for the uncertainty budget: common practice, no source.
TIP_DIAMETER_TOLERANCE = 0.2e-3  # m
HUB_DIAMETER_TOLERANCE = 0.5e-3  # m
PITCH_RELATIVE_TOLERANCE = 0.01
CHORD_RELATIVE_TOLERANCE = 0.05

_SCAN_STEPS = 32  # root-bracketing steps per characteristic scale
_SCAN_SCALES = 64  # give up beyond this many scales


@jit
def flat_plate_coefficients(alpha, cd0, cd90, sin2_stall, blend_width):
    """Lift and pressure-drag coefficients (C_L, C_D,p) of a thin flat blade for any alpha (rad).

    Attached: C_L = pi sin(2 alpha) (thin-aerofoil 2 pi alpha at small incidence, and pi-periodic
    so a plate met trailing edge first behaves as a plate). Separated (Hoerner 1965, flat plate;
    the same post-stall form as Viterna & Corrigan 1982 with C_D,max = C_D,90 - from memory):
    C_N = C_D,90 sin alpha, C_L = C_N cos alpha, C_D,p = C_N sin alpha. Blend weight
    sigma = 1 / (1 + exp((sin^2 alpha - sin^2 alpha_stall) / width)). Total C_D = C_D0 + C_D,p;
    C_D0 is returned unchanged because the caller scales it with a different speed.
    """
    s = math.sin(alpha)
    c = math.cos(alpha)
    x = (s * s - sin2_stall) / blend_width
    sigma = 1.0 / (1.0 + math.exp(min(x, 600.0)))
    cl = sigma * 2.0 * math.pi * s * c + (1.0 - sigma) * cd90 * s * c
    cdp = (1.0 - sigma) * cd90 * s * s
    return cl, cdp


@jit
def rotor_torque(omega, r, weight, u, v, theta, cd0, cd90, sin2_stall, blend_width):
    """Sum over stations of weight * r * [W_n u C_L - (W_n C_D,p + W_t C_D0) omega r]  (m^4/s^2).

    Times B rho c / 2 this is the aerodynamic torque (N m); W_n^2 sin(phi) = W_n u and
    W_n^2 cos(phi) = W_n omega r, so no trigonometry is needed outside alpha.
    """
    total = 0.0
    for i in range(r.size):
        wr = omega * r[i]
        wn2 = u[i] * u[i] + wr * wr
        if wn2 == 0.0:
            continue
        wn = math.sqrt(wn2)
        wt = math.sqrt(wn2 + v[i] * v[i])
        alpha = math.atan2(u[i], wr) - theta[i]
        cl, cdp = flat_plate_coefficients(alpha, cd0, cd90, sin2_stall, blend_width)
        total += weight[i] * r[i] * (wn * u[i] * cl - (wn * cdp + wt * cd0) * wr)
    return total


@dataclass(frozen=True)
class FlatPlateBlade:
    """Section aerodynamics of the blades (see :func:`flat_plate_coefficients`)."""

    cd0: float = CD0_THIN_BLADE
    cd90: float = CD90_FLAT_PLATE
    stall_angle: float = STALL_ANGLE
    blend_width: float = STALL_BLEND_WIDTH

    def coefficients(self, alpha: float) -> tuple[float, float, float]:
        """(C_L, C_D, C_D,p) at ``alpha`` (rad); C_D = C_D0 + C_D,p."""
        cl, cdp = flat_plate_coefficients(float(alpha), self.cd0, self.cd90,
                                          math.sin(self.stall_angle) ** 2, self.blend_width)
        return cl, self.cd0 + cdp, cdp


@dataclass(frozen=True)
class VaneState:
    """Result of one rotor solve: omega (rad/s), U_eq (m/s), displayed reading (m/s), turning flag."""

    omega: float
    equivalent_uniform_speed: float
    indicated: float
    turning: bool


def _positive(value, name):
    if not value > 0.0:
        raise ValueError(f"VaneAnemometer.{name}: must be positive, got {value!r}")


def _check_certificate(pairs, key="instrument.certificate"):
    pairs = tuple((float(a), float(b)) for a, b in pairs)
    if len(pairs) < 2:
        raise CaseError(key, "give at least two [indicated, true] pairs, e.g. [[1.0, 1.03], [5.0, 5.01]]")
    indicated, true = np.array(pairs).T
    if np.any(np.diff(indicated) <= 0.0) or np.any(np.diff(true) <= 0.0):
        raise CaseError(key, "indicated and true speeds must both increase strictly from pair to pair")
    return pairs


def _interp_extrapolated(x, xp, fp):
    """Linear interpolation in (xp, fp), continued beyond the ends with the end segments' slopes."""
    if x < xp[0]:
        return fp[0] + (x - xp[0]) * (fp[1] - fp[0]) / (xp[1] - xp[0])
    if x > xp[-1]:
        return fp[-1] + (x - xp[-1]) * (fp[-1] - fp[-2]) / (xp[-1] - xp[-2])
    return float(np.interp(x, xp, fp))


def _first_root(g, scale):
    """Smallest x > 0 with g changing sign from g(0) > 0 to <= 0, scanning in steps scale/32."""
    step = scale / _SCAN_STEPS
    x_low, g_low = 0.0, g(0.0)
    for k in range(1, _SCAN_STEPS * _SCAN_SCALES + 1):
        x = k * step
        gx = g(x)
        if gx <= 0.0:
            if gx == 0.0:
                return x
            return brentq(g, x_low, x, xtol=1e-15 * scale, rtol=1e-14)
        x_low, g_low = x, gx
    raise ArithmeticError(f"no torque balance found up to {x_low:g} (scale {scale:g})")

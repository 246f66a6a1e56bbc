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

The display is calibrated in uniform flow: the indicated speed is the uniform speed U_eq whose
free-running (spin-up) rotor speed is the same omega, found by inverting the uniform-flow curve
omega_cal(U) with the same quadrature, so uniform flow reads exactly true. (Inverting the torque
balance at fixed omega instead is ambiguous: with friction at low speed the flat-plate torque is
not monotone in omega, and a stalled and a running equilibrium can coexist.) A certificate of (indicated, true) pairs from a uniform-flow
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
    x_low = 0.0
    for k in range(1, _SCAN_STEPS * _SCAN_SCALES + 1):
        x = k * step
        gx = g(x)
        if gx <= 0.0:
            if gx == 0.0:
                return x
            return brentq(g, x_low, x, xtol=1e-15 * scale, rtol=1e-14)
        x_low = x
    raise ArithmeticError(f"no torque balance found up to {x_low:g} (scale {scale:g})")


def _check_angle(value):
    return None if 0.0 < value < 90.0 else "blade angle must lie between 0 and 90 degrees"


@register_instrument("vane")
@dataclass(frozen=True)
class VaneAnemometer(Instrument):
    """Free-running helical-blade rotor of B blades, chord c, hub to tip; SI fields.

    nominal_area (m^2), tip_diameter, hub_diameter, pitch, chord (m), blades (-),
    air_density (kg/m^3), friction_torque (N m), certificate ((indicated, true) m/s pairs).
    """

    nominal_area: float
    tip_diameter: float
    hub_diameter: float
    blades: int
    pitch: float
    chord: float
    air_density: float = 1.2
    friction_torque: float = 0.0
    certificate: tuple[tuple[float, float], ...] = ()
    blade: FlatPlateBlade = FlatPlateBlade()

    KEYS = COMMON_KEYS + (
        Key("tip_diameter_mm", "float", unit="mm", default=None, positive=True,
            description="rotor diameter over the blade tips"),
        Key("hub_diameter_mm", "float", unit="mm", default=0.0, non_negative=True,
            description="diameter at the inner end of the blades"),
        Key("blades", "int", default=None, positive=True, description="number of blades"),
        Key("pitch_mm", "float", unit="mm", default=None, positive=True,
            description="helical pitch: axial advance per revolution at zero slip"),
        Key("blade_angle_deg", "float", default=None, check=_check_angle,
            description="blade angle to the rotation plane, in degrees (instead of pitch_mm)"),
        Key("blade_angle_at_mm", "float", unit="mm", default=None, positive=True,
            description="radius at which blade_angle_deg is stated"),
        Key("chord_mm", "float", unit="mm", default=None, positive=True, description="blade chord"),
        Key("friction_torque_Nm", "float", unit="N m", default=0.0, non_negative=True,
            description="bearing friction torque (Coulomb)"),
        Key("certificate", "list[pair]", unit="m/s", default=None, non_negative=True,
            description="uniform-flow calibration pairs [indicated, true] in m/s"),
    )

    def __post_init__(self):
        for name in ("nominal_area", "tip_diameter", "pitch", "chord", "air_density"):
            _positive(getattr(self, name), name)
        if not 0.0 <= self.hub_diameter < self.tip_diameter:
            raise ValueError("VaneAnemometer.hub_diameter: must be >= 0 and smaller than tip_diameter")
        if self.blades < 1 or self.friction_torque < 0.0:
            raise ValueError("VaneAnemometer: need blades >= 1 and friction_torque >= 0")
        if self.certificate:
            object.__setattr__(self, "certificate", _check_certificate(self.certificate))

    @classmethod
    def from_case(cls, values, *, nominal_area, base_dir, air_density):
        for name in ("tip_diameter_mm", "blades", "chord_mm"):
            if values[name] is None:
                raise CaseError(f"instrument.{name}", f"missing; the vane kind needs {name}")
        tip, hub = values["tip_diameter_mm"], values["hub_diameter_mm"]
        if hub >= tip:
            raise CaseError("instrument.hub_diameter_mm", "must be smaller than tip_diameter_mm")
        by_pitch = values["pitch_mm"] is not None
        by_angle = (values["blade_angle_deg"], values["blade_angle_at_mm"])
        if by_pitch == any(x is not None for x in by_angle) or (not by_pitch and None in by_angle):
            raise CaseError("instrument.pitch_mm", "give either pitch_mm, or both blade_angle_deg and "
                            "blade_angle_at_mm (the blade angle to the rotation plane at a radius), not both")
        pitch = values["pitch_mm"] if by_pitch else \
            2.0 * math.pi * by_angle[1] * math.tan(math.radians(by_angle[0]))
        certificate = _check_certificate(values["certificate"]) if values["certificate"] else ()
        return cls(nominal_area=nominal_area, tip_diameter=tip, hub_diameter=hub, blades=values["blades"],
                   pitch=pitch, chord=values["chord_mm"], air_density=air_density,
                   friction_torque=values["friction_torque_Nm"], certificate=certificate)

    # --- geometry -------------------------------------------------------------------------
    @cached_property
    def stations(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Station radii (m), trapezoid weights (m) and blade angles theta (rad), hub to tip."""
        r = np.linspace(0.5 * self.hub_diameter, 0.5 * self.tip_diameter, STATIONS)
        weight = np.full(STATIONS, r[1] - r[0])
        weight[[0, -1]] *= 0.5
        theta = np.arctan2(self.pitch, 2.0 * math.pi * r)
        return r, weight, theta

    def blade_angle(self, r) -> np.ndarray:
        """theta(r) = atan(P / (2 pi r)), rad."""
        return np.arctan2(self.pitch, 2.0 * math.pi * np.asarray(r, dtype=float))

    # --- torque ---------------------------------------------------------------------------
    def _torque(self, omega, u, v) -> float:
        r, weight, theta = self.stations
        b = self.blade
        total = rotor_torque(float(omega), r, weight, u, v, theta, b.cd0, b.cd90,
                             math.sin(b.stall_angle) ** 2, b.blend_width)
        return 0.5 * self.air_density * self.blades * self.chord * total

    def _station_velocities(self, profile) -> tuple[np.ndarray, np.ndarray]:
        r = self.stations[0]
        if r[-1] > profile.wall_radius * (1.0 + 1e-12):
            raise ValueError(f"vane: rotor tip {r[-1]:.4g} m is outside the rotor-plane profile "
                             f"(wall at {profile.wall_radius:.4g} m)")
        u, v = profile.interpolate(np.clip(r, profile.r[0], profile.r[-1]))
        # Blade roots inside a fixture's hub body (a toleranced rotor hub slightly smaller than the
        # modelled hub) sit in still air against the hub surface.
        inside_hub = r < profile.r_inner
        return np.where(inside_hub, 0.0, u), np.where(inside_hub, 0.0, v)

    def aerodynamic_torque(self, profile, omega: float) -> float:
        """Aerodynamic torque on the rotor (N m) at rotor speed ``omega`` (rad/s) in ``profile``."""
        return self._torque(omega, *self._station_velocities(profile))

    def uniform_torque(self, omega: float, U: float) -> float:
        """Aerodynamic torque (N m) in uniform axial flow U (m/s) at rotor speed omega (rad/s)."""
        u = np.full(STATIONS, float(U))
        return self._torque(omega, u, np.zeros(STATIONS))

    # --- equilibrium ----------------------------------------------------------------------
    def _equilibrium(self, u, v) -> float:
        """Free-running omega (rad/s) reached from rest; 0.0 if the rotor does not start."""
        start = self._torque(0.0, u, v)
        if abs(start) <= self.friction_torque:
            return 0.0
        s = 1.0 if start > 0.0 else -1.0
        speed = float(np.max(np.abs(u)))
        scale = 2.0 * math.pi * speed / self.pitch
        return s * _first_root(lambda w: s * self._torque(s * w, u, v) - self.friction_torque, scale)

    def rotor_speed(self, profile) -> float:
        """Free-running rotor speed (rad/s) in ``profile``; negative = backward; 0 = not turning."""
        return self._equilibrium(*self._station_velocities(profile))

    def uniform_rotor_speed(self, U: float) -> float:
        """Free-running rotor speed (rad/s) in uniform axial flow U (m/s)."""
        return self._equilibrium(np.full(STATIONS, float(U)), np.zeros(STATIONS))

    def equivalent_uniform_speed(self, omega: float) -> float:
        """Uniform speed U_eq (m/s) whose free-running rotor speed is |omega|: the calibration inverse.

        The uniform-flow curve omega_cal(U) rises strictly with U (the torque is U^2 q(omega/U),
        and the first equilibrium met from rest moves out as Q_f/U^2 falls), though it can jump
        where the spin-up equilibrium leaves the stalled branch. U_eq = inf{U: omega_cal(U) >= |omega|}
        is therefore unique; brentq finds it (at a jump it converges to the jump).
        """
        w = abs(float(omega))
        if w == 0.0:
            return 0.0
        U_low = self.starting_speed
        U_high = 2.0 * max(w / self.frictionless_speed_ratio, U_low)
        for _ in range(60):
            if self.uniform_rotor_speed(U_high) >= w:
                break
            U_low, U_high = U_high, 2.0 * U_high
        else:
            raise ArithmeticError(f"vane: no uniform speed turns the rotor at {w:g} rad/s")
        return brentq(lambda U: self.uniform_rotor_speed(U) - w, U_low, U_high, xtol=1e-15 * U_high,
                      rtol=1e-14)

    @cached_property
    def frictionless_speed_ratio(self) -> float:
        """omega/U (rad/m) of the frictionless rotor in uniform flow: an upper bound on omega_cal(U)/U."""
        return replace(self, friction_torque=0.0, certificate=()).uniform_rotor_speed(1.0)

    @cached_property
    def starting_speed(self) -> float:
        """Uniform speed (m/s) at which the stopped rotor's torque equals the friction torque."""
        return math.sqrt(self.friction_torque / self.uniform_torque(0.0, 1.0))

    def display(self, U_eq: float) -> float:
        """Displayed reading (m/s) for an equivalent uniform speed U_eq >= 0 (certificate applied)."""
        if not self.certificate or U_eq == 0.0:
            return U_eq
        indicated, true = np.array(self.certificate).T
        return max(_interp_extrapolated(U_eq, true, indicated), 0.0)

    def solve(self, profile) -> VaneState:
        """Rotor speed, equivalent uniform speed and displayed reading in ``profile``."""
        omega = self.rotor_speed(profile)
        U_eq = self.equivalent_uniform_speed(omega)
        return VaneState(omega=omega, equivalent_uniform_speed=U_eq,
                         indicated=math.copysign(self.display(U_eq), omega), turning=omega != 0.0)

    def indicated_velocity(self, profile) -> float:
        return self.solve(profile).indicated

    def perturbations(self) -> dict[str, Instrument]:
        d_tip, d_hub = TIP_DIAMETER_TOLERANCE, HUB_DIAMETER_TOLERANCE
        copies = {
            "tip_diameter+": replace(self, tip_diameter=self.tip_diameter + d_tip),
            "tip_diameter-": replace(self, tip_diameter=self.tip_diameter - d_tip),
            "pitch+": replace(self, pitch=self.pitch * (1.0 + PITCH_RELATIVE_TOLERANCE)),
            "pitch-": replace(self, pitch=self.pitch * (1.0 - PITCH_RELATIVE_TOLERANCE)),
            "chord+": replace(self, chord=self.chord * (1.0 + CHORD_RELATIVE_TOLERANCE)),
            "chord-": replace(self, chord=self.chord * (1.0 - CHORD_RELATIVE_TOLERANCE)),
            "hub_diameter+": replace(self, hub_diameter=self.hub_diameter + d_hub),
        }
        if self.hub_diameter >= d_hub:
            copies["hub_diameter-"] = replace(self, hub_diameter=self.hub_diameter - d_hub)
        return copies

"""Properties of moist air: CIPM-2007 density and Sutherland viscosity.

Density follows the CIPM-2007 equation for moist air (Picard, Davis, Gläser &
Fujii 2008, *Metrologia* 45:149-155, doi:10.1088/0026-1394/45/2/004)::

    rho = p M_a / (Z R T) * [1 - x_v (1 - M_v / M_a)]

with the vapour mole fraction ``x_v = h f(p, t) p_sv(T) / p``, the enhancement
factor ``f``, the saturation vapour pressure ``p_sv`` and the compressibility
factor ``Z``. CIPM-2007 is stated for 600-1100 hPa and 15-27 °C; the wider range
accepted here (-40..60 °C, 10-200 kPa) is an extrapolation with a larger, unstated
uncertainty. Dynamic viscosity is Sutherland's law for dry air; the effect of
humidity on viscosity (about -0.3 % at 20 °C, 50 % RH) is neglected.

All constants live in :data:`CIPM2007` and :data:`SUTHERLAND_AIR` below, each
with its source. SI units throughout: K, Pa, kg/m^3, Pa s, m^2/s.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

CELSIUS_ZERO_K = 273.15  # K; definition of the Celsius scale


@dataclass(frozen=True)
class CIPM2007Constants:
    """Constants of the CIPM-2007 moist-air equation (Picard et al. 2008, Table 1 and Eqs. A1.1-A1.3).

    Tags as in the project's reference notes (REFERENCES.md §10): R, M_a, M_v, the
    p_sv coefficients A-D and a0..c0 were verified against public CIPM-2007 code;
    the enhancement-factor constants, c1, d and e are from memory, cross-checked as
    a whole against CoolProp's humid-air model (tests/validation/test_cipm2007_air.py).
    """

    R: float = 8.314472  # J mol^-1 K^-1, molar gas constant (CODATA 2006, as adopted by CIPM-2007)
    M_a_base: float = 28.96546e-3  # kg/mol, dry air at x_CO2 = 0.0004
    M_a_co2_slope: float = 12.011e-3  # kg/mol per unit x_CO2 (O2 replaced by CO2)
    x_co2_base: float = 0.0004  # mol/mol, CO2 content of the reference air
    M_v: float = 18.01528e-3  # kg/mol, water
    # saturation vapour pressure p_sv = exp(A T^2 + B T + C + D/T), T in K
    A: float = 1.2378847e-5  # K^-2
    B: float = -1.9121316e-2  # K^-1
    C: float = 33.93711047
    D: float = -6.3431645e3  # K
    # enhancement factor f = alpha + beta p + gamma t^2, t in °C
    alpha: float = 1.00062
    beta: float = 3.14e-8  # Pa^-1
    gamma: float = 5.6e-7  # K^-2
    # compressibility factor Z, t in °C, T in K
    a0: float = 1.58123e-6  # K Pa^-1
    a1: float = -2.9331e-8  # Pa^-1
    a2: float = 1.1043e-10  # K^-1 Pa^-1
    b0: float = 5.707e-6  # K Pa^-1
    b1: float = -2.051e-8  # Pa^-1
    c0: float = 1.9898e-4  # K Pa^-1
    c1: float = -2.376e-6  # Pa^-1
    d: float = 1.83e-11  # K^2 Pa^-2
    e: float = -0.765e-8  # K^2 Pa^-2


CIPM2007 = CIPM2007Constants()


@dataclass(frozen=True)
class SutherlandConstants:
    """Sutherland's law for air, mu = mu_ref (T/T_ref)^1.5 (T_ref + S)/(T + S).

    mu_ref = 1.716e-5 Pa s at T_ref = 273.15 K, S = 110.4 K (White, *Viscous Fluid
    Flow*, Table 1-2; from memory). Equivalent to 1.458e-6 T^1.5/(T + 110.4), the form
    of the U.S. Standard Atmosphere 1976. About 0.4 % below the Lemmon-Jacobsen (2004)
    air viscosity at 20 °C (measured in tests/validation/test_sutherland_viscosity.py).
    """

    mu_ref: float = 1.716e-5  # Pa s
    T_ref: float = 273.15  # K
    S: float = 110.4  # K


SUTHERLAND_AIR = SutherlandConstants()

# Ratio of specific heats of dry air treated as an ideal diatomic gas (7/5);
# moist air at room conditions differs by < 0.1 % (common practice, no source).
ISENTROPIC_EXPONENT_AIR = 1.4

# Accepted input range (wider than CIPM-2007's validated 15-27 °C, 60-110 kPa).
TEMPERATURE_RANGE_K = (233.15, 333.15)
PRESSURE_RANGE_PA = (1.0e4, 2.0e5)
X_CO2_RANGE = (0.0, 0.01)


def saturation_vapour_pressure(T: float, c: CIPM2007Constants = CIPM2007) -> float:
    """Saturation vapour pressure over water, p_sv = exp(A T^2 + B T + C + D/T) [Pa].

    CIPM-2007 Eq. A1.1 (Picard et al. 2008); T in K.
    """
    return math.exp(c.A * T * T + c.B * T + c.C + c.D / T)


def enhancement_factor(p: float, t_celsius: float, c: CIPM2007Constants = CIPM2007) -> float:
    """Enhancement factor f = alpha + beta p + gamma t^2 (CIPM-2007 Eq. A1.2); p in Pa, t in °C."""
    return c.alpha + c.beta * p + c.gamma * t_celsius * t_celsius


def vapour_mole_fraction(T: float, p: float, h: float, c: CIPM2007Constants = CIPM2007) -> float:
    """Water-vapour mole fraction x_v = h f(p, t) p_sv(T) / p (CIPM-2007); h in 0..1."""
    t = T - CELSIUS_ZERO_K
    return h * enhancement_factor(p, t, c) * saturation_vapour_pressure(T, c) / p


def compressibility_factor(T: float, p: float, x_v: float, c: CIPM2007Constants = CIPM2007) -> float:
    """Compressibility factor Z of moist air (CIPM-2007 Eq. A1.3).

    Z = 1 - (p/T)[a0 + a1 t + a2 t^2 + (b0 + b1 t) x_v + (c0 + c1 t) x_v^2]
          + (p/T)^2 (d + e x_v^2),  t in °C, T in K, p in Pa.
    """
    t = T - CELSIUS_ZERO_K
    pt = p / T
    first = c.a0 + c.a1 * t + c.a2 * t * t + (c.b0 + c.b1 * t) * x_v + (c.c0 + c.c1 * t) * x_v * x_v
    return 1.0 - pt * first + pt * pt * (c.d + c.e * x_v * x_v)


def moist_air_density(T: float, p: float, h: float, x_co2: float = 0.0004,
                      c: CIPM2007Constants = CIPM2007) -> float:
    """Density of moist air by CIPM-2007 [kg/m^3].

    rho = p M_a/(Z R T) [1 - x_v (1 - M_v/M_a)], M_a = M_a0 + 12.011e-3 (x_CO2 - 0.0004).
    T in K, p in Pa, h relative humidity 0..1, x_CO2 mole fraction.
    """
    M_a = c.M_a_base + c.M_a_co2_slope * (x_co2 - c.x_co2_base)
    x_v = vapour_mole_fraction(T, p, h, c)
    Z = compressibility_factor(T, p, x_v, c)
    return p * M_a / (Z * c.R * T) * (1.0 - x_v * (1.0 - c.M_v / M_a))


def sutherland_viscosity(T: float, s: SutherlandConstants = SUTHERLAND_AIR) -> float:
    """Dynamic viscosity of dry air by Sutherland's law [Pa s]; T in K."""
    return s.mu_ref * (T / s.T_ref) ** 1.5 * (s.T_ref + s.S) / (T + s.S)


def _check_range(name: str, value: float, bounds: tuple[float, float], unit: str) -> None:
    if not isinstance(value, (int, float)) or isinstance(value, bool) or not math.isfinite(value):
        raise ValueError(f"{name} must be a finite number in {unit}, got {value!r}")
    low, high = bounds
    if not low <= value <= high:
        raise ValueError(f"{name} = {value:g} {unit} is outside the accepted range "
                         f"{low:g}..{high:g} {unit}; give a value inside it")


@dataclass(frozen=True)
class Air:
    """State of moist air: temperature [K], pressure [Pa], relative humidity [0..1].

    Defaults are 20 °C, 101325 Pa, 50 % RH, x_CO2 = 0.0004. ``density`` is CIPM-2007,
    ``viscosity`` is Sutherland's law for dry air (humidity neglected).
    """

    temperature_K: float = 293.15
    pressure_Pa: float = 101325.0
    relative_humidity: float = 0.5
    x_co2: float = field(default=0.0004, kw_only=True)

    def __post_init__(self):
        _check_range("temperature_K", self.temperature_K, TEMPERATURE_RANGE_K, "K")
        _check_range("pressure_Pa", self.pressure_Pa, PRESSURE_RANGE_PA, "Pa")
        _check_range("relative_humidity", self.relative_humidity, (0.0, 1.0),
                     "(fraction, 0.5 means 50 %)")
        _check_range("x_co2", self.x_co2, X_CO2_RANGE, "mol/mol")
        if self.vapour_mole_fraction >= 1.0:
            raise ValueError(f"relative_humidity = {self.relative_humidity:g} at {self.temperature_K:g} K "
                             f"needs more vapour than pressure_Pa = {self.pressure_Pa:g} Pa holds; "
                             "lower the humidity or raise the pressure")

    @classmethod
    def from_celsius(cls, temperature_C: float = 20.0, pressure_Pa: float = 101325.0,
                     relative_humidity: float = 0.5, *, x_co2: float = 0.0004) -> "Air":
        """Build from a temperature in °C (converted to K at this edge)."""
        _check_range("temperature_C", temperature_C,
                     tuple(b - CELSIUS_ZERO_K for b in TEMPERATURE_RANGE_K), "°C")
        return cls(temperature_C + CELSIUS_ZERO_K, pressure_Pa, relative_humidity, x_co2=x_co2)

    @property
    def temperature_C(self) -> float:
        return self.temperature_K - CELSIUS_ZERO_K

    @property
    def vapour_mole_fraction(self) -> float:
        return vapour_mole_fraction(self.temperature_K, self.pressure_Pa, self.relative_humidity)

    @property
    def density(self) -> float:
        """CIPM-2007 density [kg/m^3]."""
        return moist_air_density(self.temperature_K, self.pressure_Pa,
                                 self.relative_humidity, self.x_co2)

    @property
    def viscosity(self) -> float:
        """Dynamic viscosity [Pa s], Sutherland's law."""
        return sutherland_viscosity(self.temperature_K)

    @property
    def kinematic_viscosity(self) -> float:
        """Kinematic viscosity nu = mu/rho [m^2/s]."""
        return self.viscosity / self.density

    @property
    def isentropic_exponent(self) -> float:
        return ISENTROPIC_EXPONENT_AIR

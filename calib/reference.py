"""Reduction of reference flow measurements, with GUM uncertainty budgets.

Two reference methods feed the comparison against the corrected anemometer reading:

- :func:`bag_flow`: a bag of known volume timed while it empties or fills,
  Q = V / mean(t);
- :func:`orifice_flow`: an ISO 5167-2 orifice plate in the duct, solved with the
  ``fluids`` package (Reader-Harris/Gallagher C and the ISO expansibility).

Both return a :class:`ReferenceFlow` whose budget follows JCGM 100:2008 (GUM):
Eq. 10 for independent inputs, Welch-Satterthwaite (G.2b) for nu_eff and k = t_95(nu_eff).
"""
from __future__ import annotations

import dataclasses
import math
import warnings
from dataclasses import dataclass

import numpy as np
from fluids.flow_meter import (differential_pressure_meter_C_epsilon,
                               differential_pressure_meter_solver)

from calib.uncertainty import Budget, Component, coverage_factor
from solver.air import Air

COVERAGE_PROBABILITY = 0.95


@dataclass(frozen=True)
class ReferenceFlow:
    """A reference volume flow [m^3/s] with its uncertainty budget.

    ``expanded_uncertainty_m3s`` = k u_c with k = t_95(nu_eff) (GUM G.4); ``budget``
    holds the rows (name, u(x_i), c_i, contribution, nu_i, distribution).
    """

    flow_m3s: float
    standard_uncertainty_m3s: float
    expanded_uncertainty_m3s: float
    coverage_factor: float
    degrees_of_freedom: float
    budget: Budget
    method: str
    coverage_probability: float = COVERAGE_PROBABILITY
    mass_flow_kgs: float | None = None

    @property
    def relative_expanded_uncertainty(self) -> float:
        return self.expanded_uncertainty_m3s / self.flow_m3s


def _reference_flow(flow: float, budget: Budget, method: str, mass_flow: float | None = None):
    u_c = budget.combined()
    nu = budget.effective_dof()
    k = coverage_factor(nu, COVERAGE_PROBABILITY)
    return ReferenceFlow(flow_m3s=flow, standard_uncertainty_m3s=u_c,
                         expanded_uncertainty_m3s=k * u_c, coverage_factor=k,
                         degrees_of_freedom=nu, budget=budget, method=method,
                         mass_flow_kgs=mass_flow)


def _require(name: str, value, *, positive: bool = True) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float, np.floating, np.integer)) \
            or not math.isfinite(value):
        raise ValueError(f"{name} must be a finite number, got {value!r}")
    if positive and value <= 0.0:
        raise ValueError(f"{name} must be greater than zero, got {value!r}")
    if not positive and value < 0.0:
        raise ValueError(f"{name} must be zero or positive, got {value!r}")
    return float(value)


# ---------------------------------------------------------------- bag collapse

def bag_flow(volume_m3: float, times_s, volume_tolerance_m3: float = 0.0,
             timing_resolution_s: float = 0.01, reaction_time_s: float = 0.1) -> ReferenceFlow:
    """Flow from repeated timings of a bag of known volume: Q = V / t_mean [m^3/s].

    Budget (c_t = -V/t_mean^2, c_V = 1/t_mean):
    - repeatability: s(t)/sqrt(n), Type A, nu = n - 1;
    - bag volume: tolerance +-a taken as rectangular, u = a/sqrt(3) (GUM 4.3.7);
    - timing resolution delta: rectangular of half-width delta/2, u = delta/sqrt(12)
      (GUM F.2.2.1); not divided by sqrt(n), since rounding of similar durations on one
      clock need not average out;
    - operator reaction: +-reaction_time_s as the half-width of a rectangular net
      start/stop bias, u = r/sqrt(3) (common practice, no source). Its random part is
      already in the scatter of the times.
    """
    V = _require("volume_m3", volume_m3)
    try:
        times = [_require("times_s", t) for t in times_s]
    except TypeError:
        raise ValueError("times_s must be a list of at least two timings in seconds") from None
    if len(times) < 2:
        raise ValueError(f"times_s needs at least two timings for a Type A estimate, got {len(times)}")
    a_V = _require("volume_tolerance_m3", volume_tolerance_m3, positive=False)
    delta = _require("timing_resolution_s", timing_resolution_s, positive=False)
    r = _require("reaction_time_s", reaction_time_s, positive=False)
    if a_V >= V:
        raise ValueError("volume_tolerance_m3 must be smaller than volume_m3")

    t = np.asarray(times)
    n = t.size
    t_mean = float(t.mean())
    c_t, c_V = -V / t_mean ** 2, 1.0 / t_mean
    budget = Budget((
        Component("timing repeatability", float(t.std(ddof=1)) / math.sqrt(n), c_t, n - 1,
                  "normal, Type A"),
        Component("bag volume", a_V / math.sqrt(3.0), c_V, math.inf, "rectangular, Type B"),
        Component("timing resolution", delta / math.sqrt(12.0), c_t, math.inf,
                  "rectangular, Type B"),
        Component("operator reaction", r / math.sqrt(3.0), c_t, math.inf,
                  "rectangular, Type B (common practice)"),
    ), unit="m^3/s")
    return _reference_flow(V / t_mean, budget, f"bag collapse, {n} timings")


# ---------------------------------------------------------------- ISO 5167-2 orifice

TAPS = {"corner": "corner", "flange": "flange", "D-D/2": "D"}  # our name -> fluids name
ORIFICE_METER = "ISO 5167 orifice"

# ISO 5167-2:2003 §5.3.1 limits [verified: fluids C_Reader_Harris_Gallagher docstring].
D_RANGE_M = (0.050, 1.000)
D_BORE_MIN_M = 0.0125
BETA_RANGE = (0.10, 0.75)
RE_D_MIN = 5000.0
# ISO 5167-1:2003: p2/p1 >= 0.75 for the expansibility equation (from memory).
PRESSURE_RATIO_MIN = 0.75
# Relative uncertainties stated by ISO 5167-2 are read as 95 % (k = 2) values (from memory).
ISO_STATED_K = 2.0


@dataclass(frozen=True)
class OrificeSolution:
    """Solved orifice state: mass flow [kg/s], C, epsilon, beta, Re_D (pipe Reynolds number)."""

    mass_flow_kgs: float
    discharge_coefficient: float
    expansibility: float
    beta: float
    reynolds_D: float


def solve_orifice(D: float, d: float, dp_Pa: float, p_upstream_Pa: float, density: float,
                  viscosity: float, isentropic_exponent: float, taps: str = "corner") -> OrificeSolution:
    """Mass flow through an ISO 5167-2 orifice (fluids.differential_pressure_meter_solver).

    q_m = C/sqrt(1 - beta^4) eps (pi/4) d^2 sqrt(2 dp rho1) (ISO 5167-1 Eq. 1), C by the
    Reader-Harris/Gallagher equation at the converged Re_D, eps by ISO 5167-2 §5.3.2.2.
    SI units; density and viscosity at the upstream tap.
    """
    if taps not in TAPS:
        raise ValueError(f"taps = {taps!r} is not an ISO 5167-2 arrangement; use one of {', '.join(TAPS)}")
    P2 = p_upstream_Pa - dp_Pa
    m = differential_pressure_meter_solver(D=D, D2=d, P1=p_upstream_Pa, P2=P2, rho=density,
                                           mu=viscosity, k=isentropic_exponent,
                                           meter_type=ORIFICE_METER, taps=TAPS[taps])
    C, eps = differential_pressure_meter_C_epsilon(D, d, m, p_upstream_Pa, P2, density, viscosity,
                                                   isentropic_exponent, ORIFICE_METER, taps=TAPS[taps])
    reynolds = 4.0 * m / (math.pi * D * viscosity)
    return OrificeSolution(m, C, eps, d / D, reynolds)


def iso5167_limit_violations(D: float, d: float, reynolds_D: float, pressure_ratio: float,
                             taps: str) -> list[str]:
    """Which ISO 5167-2 §5.3.1 / ISO 5167-1 conditions a case breaks (empty list if none)."""
    beta = d / D
    problems = []
    if not D_RANGE_M[0] <= D <= D_RANGE_M[1]:
        problems.append(f"D = {D * 1e3:.1f} mm is outside 50..1000 mm")
    if d < D_BORE_MIN_M:
        problems.append(f"d = {d * 1e3:.2f} mm is below 12.5 mm")
    if not BETA_RANGE[0] <= beta <= BETA_RANGE[1]:
        problems.append(f"beta = d/D = {beta:.3f} is outside 0.10..0.75")
    re_min = RE_D_MIN
    if taps == "flange":
        re_min = max(re_min, 170000.0 * beta ** 2 * D)
    else:
        re_min = max(re_min, 16000.0 * beta ** 2)
    if reynolds_D < re_min:
        problems.append(f"Re_D = {reynolds_D:.0f} is below the minimum {re_min:.0f}")
    if pressure_ratio < PRESSURE_RATIO_MIN:
        problems.append(f"p2/p1 = {pressure_ratio:.3f} is below 0.75")
    return problems


def iso5167_c_relative_uncertainty(beta: float, D: float, reynolds_D: float) -> float:
    """Relative uncertainty of C stated by ISO 5167-2:2003 §5.3.3.1 (from memory), as a fraction.

    (0.7 - beta) % for 0.1 <= beta < 0.2; 0.5 % for 0.2 <= beta <= 0.6;
    (1.667 beta - 0.5) % for 0.6 < beta <= 0.75; plus 0.9(0.75 - beta)(2.8 - D/25.4 mm) %
    if D < 71.12 mm, plus 0.5 % if beta > 0.5 and Re_D < 10000 (both added arithmetically).
    Beta outside 0.1..0.75 uses the nearest end of the table.
    """
    b = min(max(beta, BETA_RANGE[0]), BETA_RANGE[1])
    if b < 0.2:
        percent = 0.7 - b
    elif b <= 0.6:
        percent = 0.5
    else:
        percent = 1.667 * b - 0.5
    if D < 0.07112:
        percent += 0.9 * (0.75 - b) * (2.8 - D / 0.0254)
    if b > 0.5 and reynolds_D < 10000.0:
        percent += 0.5
    return percent / 100.0


def iso5167_epsilon_relative_uncertainty(dp_Pa: float, p_upstream_Pa: float, kappa: float) -> float:
    """Relative uncertainty of epsilon, 3.5 dp/(kappa p1) % (ISO 5167-2:2003 §5.3.3.2; from memory)."""
    return 3.5 * dp_Pa / (kappa * p_upstream_Pa) / 100.0


class OrificeLimitWarning(UserWarning):
    """An orifice case outside the ISO 5167-2 limits was computed on request."""


# Default diameter uncertainties when none are given: ISO 5167-2 tolerances read as
# rectangular half-widths, D +-0.3 % and d +-0.05 % (from memory).
D_TOLERANCE_REL = 0.003
BORE_TOLERANCE_REL = 0.0005


def _volume_flow(D, d, dp, p1, rho_scale, air: Air, taps: str):
    """Q = q_m / rho1 [m^3/s] at the upstream tap, with air re-evaluated at p1."""
    state = dataclasses.replace(air, pressure_Pa=p1)
    rho = state.density * rho_scale
    solution = solve_orifice(D, d, dp, p1, rho, state.viscosity, state.isentropic_exponent, taps)
    return solution.mass_flow_kgs / rho, solution


def _sensitivities(x: dict, air: Air, taps: str, rel_step: float = 1e-5) -> dict:
    """Central finite differences dQ/dx_i through the fluids solver (solved to round-off)."""
    out = {}
    for name, value in x.items():
        h = rel_step * value
        hi, lo = dict(x), dict(x)
        hi[name], lo[name] = value + h, value - h
        out[name] = (_volume_flow(**hi, air=air, taps=taps)[0]
                     - _volume_flow(**lo, air=air, taps=taps)[0]) / (2.0 * h)
    return out


def orifice_flow(D: float, d: float, dp_Pa: float, p_upstream_Pa: float, air: Air = Air(),
                 taps: str = "corner", u_dp_rel: float = 0.01, u_D: float | None = None,
                 u_d: float | None = None, u_p1_Pa: float = 200.0, u_density_rel: float = 0.001,
                 outside_limits: str = "raise") -> ReferenceFlow:
    """Volume flow at the upstream tap through an ISO 5167-2 orifice plate, with a GUM budget.

    D, d [m]; dp_Pa, p_upstream_Pa [Pa] (absolute); ``air`` gives temperature and humidity,
    its pressure is replaced by p_upstream_Pa. u_* are standard uncertainties (u_dp_rel,
    u_density_rel relative). Defaults: dp 1 % of reading, p1 200 Pa, density 0.1 %
    (common practice, no source); D and d from the tolerances above. C and epsilon carry
    the ISO-stated uncertainties (halved, k = 2); their sensitivities are Q/C and Q/eps
    (q_m is proportional to C eps); all others are finite differences through the solver.
    Cases outside ISO 5167-2 limits raise ValueError, or warn with outside_limits="warn".
    """
    if outside_limits not in ("raise", "warn"):
        raise ValueError(f"outside_limits = {outside_limits!r}; use 'raise' or 'warn'")
    D, d, dp = _require("D", D), _require("d", d), _require("dp_Pa", dp_Pa)
    p1 = _require("p_upstream_Pa", p_upstream_Pa)
    if d >= D:
        raise ValueError(f"d = {d} m must be smaller than the pipe diameter D = {D} m")
    if dp >= p1:
        raise ValueError("dp_Pa must be smaller than the absolute upstream pressure p_upstream_Pa")
    if taps not in TAPS:
        raise ValueError(f"taps = {taps!r} is not an ISO 5167-2 arrangement; use one of {', '.join(TAPS)}")
    u_D = D * D_TOLERANCE_REL / math.sqrt(3.0) if u_D is None else _require("u_D", u_D, positive=False)
    u_d = d * BORE_TOLERANCE_REL / math.sqrt(3.0) if u_d is None else _require("u_d", u_d, positive=False)
    for name, value in (("u_dp_rel", u_dp_rel), ("u_p1_Pa", u_p1_Pa), ("u_density_rel", u_density_rel)):
        _require(name, value, positive=False)

    try:
        dataclasses.replace(air, pressure_Pa=p1)
    except ValueError as err:
        raise ValueError(f"p_upstream_Pa: {err}") from None
    x = {"D": D, "d": d, "dp": dp, "p1": p1, "rho_scale": 1.0}
    Q, sol = _volume_flow(**x, air=air, taps=taps)
    _check_limits(D, d, sol.reynolds_D, (p1 - dp) / p1, taps, outside_limits)
    c = _sensitivities(x, air, taps)
    rho = sol.mass_flow_kgs / Q
    rel_C = iso5167_c_relative_uncertainty(sol.beta, D, sol.reynolds_D) / ISO_STATED_K
    rel_eps = iso5167_epsilon_relative_uncertainty(dp, p1, air.isentropic_exponent) / ISO_STATED_K
    iso_note = "normal, ISO 5167-2 stated (k = 2)"
    budget = Budget((
        Component("discharge coefficient C", rel_C * sol.discharge_coefficient,
                  Q / sol.discharge_coefficient, math.inf, iso_note),
        Component("expansibility epsilon", rel_eps * sol.expansibility, Q / sol.expansibility,
                  math.inf, iso_note),
        Component("pipe diameter D", u_D, c["D"], math.inf, "rectangular, Type B"),
        Component("bore diameter d", u_d, c["d"], math.inf, "rectangular, Type B"),
        Component("differential pressure", u_dp_rel * dp, c["dp"], math.inf, "normal, Type B"),
        Component("upstream pressure", u_p1_Pa, c["p1"], math.inf, "normal, Type B"),
        Component("air density", u_density_rel * rho, c["rho_scale"] / rho, math.inf,
                  "normal, Type B"),
    ), unit="m^3/s")
    return _reference_flow(Q, budget, f"ISO 5167-2 orifice, {taps} taps, beta {sol.beta:.3f}",
                           mass_flow=sol.mass_flow_kgs)


def _check_limits(D, d, reynolds_D, pressure_ratio, taps, outside_limits):
    problems = iso5167_limit_violations(D, d, reynolds_D, pressure_ratio, taps)
    if not problems:
        return
    message = ("orifice case outside ISO 5167-2 limits: " + "; ".join(problems)
               + ". Change D, d or the flow, or pass outside_limits='warn' to compute anyway")
    if outside_limits == "raise":
        raise ValueError(message)
    warnings.warn(message, OrificeLimitWarning, stacklevel=3)

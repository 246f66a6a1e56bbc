"""Convergence and divergence of the outer iteration: residuals plus engineering monitors."""
from __future__ import annotations

import math

import numpy as np


SPEED_GROWTH = 100.0  # a velocity 100 times the early maximum is a blow-up, not a flow


class DivergenceError(RuntimeError):
    """The solve blew up. Carries the iteration, the last residuals and the residual history."""

    def __init__(self, iteration: int, residuals: dict[str, float], history: dict[str, np.ndarray], reason: str):
        self.iteration, self.residuals, self.history = iteration, residuals, history
        shown = ", ".join(f"{k} {v:.3e}" for k, v in residuals.items())
        super().__init__(
            f"the flow solve diverged at iteration {iteration} ({reason}); residuals: {shown}. "
            "Try: a lower velocity relaxation (e.g. 0.5), a finer mesh level near the mouth, "
            "or first-order convection to get a starting field.")


class ConvergenceMonitor:
    """Stop when every residual < ``residual_tolerance`` and every monitor's relative change over the
    last ``window`` iterations < ``monitor_tolerance``; raise on NaN or on growth past ``divergence_factor``
    times the smallest residual seen."""

    def __init__(self, residual_tolerance: float, monitor_tolerance: float, window: int, divergence_factor: float):
        self.residual_tolerance = residual_tolerance
        self.monitor_tolerance = monitor_tolerance
        self.window = window
        self.divergence_factor = divergence_factor
        self.residuals: dict[str, list[float]] = {}
        self.monitors: dict[str, list[float]] = {}
        self.best: dict[str, float] = {}
        self.speed_scale = 0.0

    def record(self, iteration: int, residuals: dict[str, float], monitors: dict[str, float]):
        for name, value in residuals.items():
            self.residuals.setdefault(name, []).append(value)
        for name, value in monitors.items():
            self.monitors.setdefault(name, []).append(value)
        for name, value in {**residuals, **monitors}.items():
            if not math.isfinite(value):
                raise DivergenceError(iteration, residuals, self.history(), f"{name} is not finite")
        speed = monitors.get("max_speed")
        if speed is not None:
            if iteration == 10:
                self.speed_scale = speed
            elif iteration > 10 and speed > SPEED_GROWTH * max(self.speed_scale, 1e-300):
                raise DivergenceError(iteration, residuals, self.history(),
                                      f"the largest velocity grew to {speed:.3g} m/s, "
                                      f"{speed / self.speed_scale:.0f} times its early value")
        if iteration <= 10:
            return  # the first iterations start from a trivial field: no meaningful minimum yet
        for name, value in residuals.items():
            best = self.best.get(name, value)
            if best > 0.0 and value > self.divergence_factor * best:
                raise DivergenceError(iteration, residuals, self.history(),
                                      f"{name} residual grew {value / best:.1e} times its minimum")
            self.best[name] = min(best, value)

    def stalled(self, name: str, window: int) -> bool:
        """True when residual ``name`` has not fallen 10 % below its earlier minimum in the last ``window``."""
        values = self.residuals.get(name, [])
        if len(values) < 2 * window:
            return False
        return min(values[-window:]) > 0.9 * min(values[:-window])

    def monitors_settled(self) -> bool:
        for values in self.monitors.values():
            if len(values) < self.window + 1:
                return False
            recent = np.asarray(values[-self.window - 1:])
            scale = max(abs(recent[-1]), 1e-300)
            if np.abs(recent - recent[-1]).max() / scale > self.monitor_tolerance:
                return False
        return True

    def converged(self) -> bool:
        if not self.residuals:
            return False
        if any(values[-1] > self.residual_tolerance for values in self.residuals.values()):
            return False
        return self.monitors_settled()

    def history(self) -> dict[str, np.ndarray]:
        return {name: np.asarray(v) for name, v in {**self.residuals, **self.monitors}.items()}

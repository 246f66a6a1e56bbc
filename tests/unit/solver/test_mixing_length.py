"""Unit checks of the mixing-length closure: limits, derived values, kernel/numpy agreement."""
import math

import numpy as np
import pytest

from solver import mixing_length as ml
from solver.mixing_length import MixingLengthConstants

C = MixingLengthConstants()


def test_van_driest_limits():
    """D(0) = 0, D → 1 far from the wall, D(A+) = 1 − 1/e, and D ≈ y+/A+ at the wall (van Driest 1956)."""
    assert ml.van_driest_damping(0.0, 26.0) == 0.0
    assert ml.van_driest_damping(-3.0, 26.0) == 0.0
    assert ml.van_driest_damping(1e4, 26.0) == pytest.approx(1.0, abs=1e-15)
    assert ml.van_driest_damping(26.0, 26.0) == pytest.approx(1.0 - math.exp(-1.0), rel=1e-14)
    assert ml.van_driest_damping(1e-6, 26.0) == pytest.approx(1e-6 / 26.0, rel=1e-6)


def test_nikuradse_wall_axis_and_slope():
    """Derived checks of Nikuradse's length (REFERENCES.md §4): l(0) = 0, l(R) = 0.14 R, dl/dy(0) = 0.40."""
    radius = 0.35
    assert ml.nikuradse_length(0.0, radius) == pytest.approx(0.0, abs=1e-16)
    assert ml.nikuradse_length(radius, radius) == pytest.approx(0.14 * radius, rel=1e-14)
    h = 1e-7 * radius
    slope = (ml.nikuradse_length(h, radius) - ml.nikuradse_length(0.0, radius)) / h
    assert slope == pytest.approx(0.40, rel=1e-5)  # = κ of the Prandtl/Nikuradse era


def test_nikuradse_clips_to_pipe_and_grows_monotonically():
    radius = 1.0
    assert ml.nikuradse_length(1.7, radius) == ml.nikuradse_length(radius, radius)
    assert ml.nikuradse_length(-0.2, radius) == pytest.approx(0.0, abs=1e-16)
    y = np.linspace(0.0, radius, 201)
    assert np.all(np.diff(ml.nikuradse_length(y, radius)) > 0.0)
    assert np.all(ml.nikuradse_length(y, radius) <= 0.4 * y + 1e-16)  # never above the wall tangent


def test_nikuradse_refuses_open_region():
    with pytest.raises(ValueError, match="radius"):
        ml.nikuradse_length(0.1, 0.0)


def test_escudier_cap():
    """Escudier (1966): l = κ y near the wall, capped at λ δ; switch at y = λ δ/κ."""
    delta = 0.2
    y_switch = C.escudier_lambda * delta / C.kappa
    assert ml.escudier_length(0.5 * y_switch, delta) == pytest.approx(C.kappa * 0.5 * y_switch)
    assert ml.escudier_length(3.0 * y_switch, delta) == pytest.approx(C.escudier_lambda * delta)
    with pytest.raises(ValueError, match="delta"):
        ml.escudier_length(0.1, 0.0)


def test_mixing_length_selects_duct_or_open_and_broadcasts():
    y = np.array([0.01, 0.01, 0.3])
    y_plus = np.array([1e4, 1e4, 1e4])  # undamped
    radius = np.array([0.5, -1.0, 0.0])
    delta = np.array([0.0, 0.4, 0.4])  # delta ignored inside the duct
    got = ml.mixing_length(y, y_plus, radius, delta, C)
    assert got[0] == pytest.approx(ml.nikuradse_length(0.01, 0.5))
    assert got[1] == pytest.approx(C.kappa * 0.01)
    assert got[2] == pytest.approx(C.escudier_lambda * 0.4)
    assert ml.mixing_length(0.01, np.full((3, 4), 5.0), 0.5, 0.0, C).shape == (3, 4)


def test_mixing_length_open_needs_delta():
    with pytest.raises(ValueError, match="open_delta"):
        ml.mixing_length(0.1, 10.0, 0.0, 0.0, C)


def test_eddy_viscosity_is_even_in_strain():
    assert ml.eddy_viscosity(0.02, -50.0) == pytest.approx(0.02 ** 2 * 50.0)
    assert ml.eddy_viscosity(0.02, 50.0) == ml.eddy_viscosity(0.02, -50.0)


def test_kernels_match_numpy(rng):
    """The numba kernels and the numpy versions are the same equations (STYLE.md habit 7)."""
    n = 400
    y = rng.uniform(0.0, 0.6, n)
    y_plus = rng.uniform(0.0, 300.0, n)
    radius = np.where(rng.random(n) < 0.5, rng.uniform(0.1, 0.5, n), 0.0)
    delta = rng.uniform(0.05, 1.0, n)
    expected = ml.mixing_length(y, y_plus, radius, delta, C)
    out = np.empty(n)
    ml.mixing_length_field_kernel(y, y_plus, radius, delta, *ml.kernel_arguments(C), out)
    np.testing.assert_allclose(out, expected, rtol=1e-13, atol=1e-16)
    assert ml.van_driest_damping_kernel(13.0, 26.0) == pytest.approx(float(ml.van_driest_damping(13.0)))
    assert ml.eddy_viscosity_kernel(0.1, -3.0) == pytest.approx(0.03)


def test_overrides_and_refusals():
    c = MixingLengthConstants.from_overrides({"kappa": 0.40, "a_plus": 25})
    assert (c.kappa, c.a_plus, c.escudier_lambda) == (0.40, 25.0, 0.09)
    with pytest.raises(ValueError, match="kapa"):
        MixingLengthConstants.from_overrides({"kapa": 0.4})
    with pytest.raises(ValueError, match="a_plus"):
        MixingLengthConstants.from_overrides({"a_plus": -1.0})
    with pytest.raises(ValueError, match="kappa"):
        MixingLengthConstants.from_overrides({"kappa": "0.41"})
    with pytest.raises(ValueError, match="nikuradse"):
        MixingLengthConstants.from_overrides({"nikuradse_c2": 0.1})  # l < 0 at the wall


def test_published_ranges_bracket_the_defaults():
    ranges = MixingLengthConstants.published_ranges()
    assert set(ranges) >= {"kappa", "a_plus", "escudier_lambda"}
    for key, (low, high, source) in ranges.items():
        assert low <= getattr(C, key) <= high and source
        MixingLengthConstants.from_overrides({key: low})  # every range end is a valid constant
        MixingLengthConstants.from_overrides({key: high})

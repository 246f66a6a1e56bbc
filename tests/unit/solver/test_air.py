"""Unit tests of solver.air: defaults, conversions and input validation."""
import dataclasses

import pytest

from solver.air import Air, CELSIUS_ZERO_K


def test_defaults_are_20c_standard_pressure_half_humidity():
    air = Air()
    assert (air.temperature_K, air.pressure_Pa, air.relative_humidity) == (293.15, 101325.0, 0.5)
    assert air.temperature_C == pytest.approx(20.0)


def test_from_celsius_matches_kelvin_constructor():
    assert Air.from_celsius(23.0, 99000.0, 0.4) == Air(23.0 + CELSIUS_ZERO_K, 99000.0, 0.4)


def test_frozen():
    with pytest.raises(dataclasses.FrozenInstanceError):
        Air().temperature_K = 300.0


def test_kinematic_viscosity_is_ratio():
    air = Air()
    assert air.kinematic_viscosity == pytest.approx(air.viscosity / air.density)
    assert 1.4e-5 < air.kinematic_viscosity < 1.6e-5


def test_humidity_lowers_density():
    assert Air(relative_humidity=1.0).density < Air(relative_humidity=0.0).density


@pytest.mark.parametrize("kwargs, field", [
    ({"temperature_K": 20.0}, "temperature_K"),
    ({"temperature_K": float("nan")}, "temperature_K"),
    ({"pressure_Pa": -1.0}, "pressure_Pa"),
    ({"pressure_Pa": 1.0e6}, "pressure_Pa"),
    ({"relative_humidity": 50.0}, "relative_humidity"),
    ({"relative_humidity": -0.1}, "relative_humidity"),
    ({"x_co2": 0.5}, "x_co2"),
    ({"temperature_K": 333.15, "pressure_Pa": 1.5e4, "relative_humidity": 1.0}, "relative_humidity"),
])
def test_bad_input_names_the_field(kwargs, field):
    with pytest.raises(ValueError, match=field):
        Air(**kwargs)


def test_bad_celsius_names_the_field():
    with pytest.raises(ValueError, match="temperature_C"):
        Air.from_celsius(293.15)

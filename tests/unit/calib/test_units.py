"""calib.units: parsing and formatting at the CLI edge.

Conversion factors checked against NIST SP 811 (Thompson & Taylor 2008), Appendix B.8:
cubic foot per minute = 4.719474 E-04 m^3/s, cubic foot = 2.831685 E-02 m^3,
inch of water, conventional = 2.490889 E+02 Pa (values from memory of the table,
7 significant figures as printed there).
"""
import pytest

from calib.units import (format_flow, parse_flow, parse_pressure, parse_time,
                         parse_volume)


@pytest.mark.parametrize("text, expected", [
    ("40L/s", 0.040), ("40 L/s", 0.040), ("40 l/s", 0.040), ("2400 L/min", 0.040),
    ("144 m3/h", 0.040), ("144 m^3/h", 0.040), ("144 m³/h", 0.040), ("0.04 m3/s", 0.040),
    ("2.5 m3/h", 2.5 / 3600.0), ("1e-3 m3/s", 1e-3), (".5 L/s", 5e-4),
])
def test_parse_flow_si_and_litres(text, expected):
    assert parse_flow(text) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("text", ["1cfm", "1 CFM", "1 ft3/min", "1 ft^3/min"])
def test_cfm_matches_nist_sp811(text):
    assert parse_flow(text) == pytest.approx(4.719474e-4, rel=1e-6)


def test_120_cfm():
    assert parse_flow("120cfm") == pytest.approx(120 * 0.3048 ** 3 / 60.0, rel=1e-15)


@pytest.mark.parametrize("text, expected", [
    ("30L", 0.030), ("0.03 m3", 0.030), ("1 ft3", 2.831685e-2), ("500 ml", 5e-4),
])
def test_parse_volume(text, expected):
    assert parse_volume(text) == pytest.approx(expected, rel=1e-6)


@pytest.mark.parametrize("text, expected", [
    ("250Pa", 250.0), ("2.5 kPa", 2500.0), ("1 inH2O", 2.490889e2), ("3 hPa", 300.0),
    ("-120 Pa", -120.0), ("10 mmH2O", 98.0665),
])
def test_parse_pressure(text, expected):
    assert parse_pressure(text) == pytest.approx(expected, rel=1e-6)


@pytest.mark.parametrize("text, expected", [("2.1s", 2.1), ("500 ms", 0.5), ("1.5 min", 90.0)])
def test_parse_time(text, expected):
    assert parse_time(text) == pytest.approx(expected)


@pytest.mark.parametrize("parser, text", [
    (parse_flow, "40 gallons"), (parse_flow, "40"), (parse_flow, "L/s"), (parse_flow, ""),
    (parse_flow, "40 Pa"), (parse_volume, "30 L/s"), (parse_pressure, "1 inHg"),
    (parse_time, "2.1"), (parse_flow, "nan L/s"), (parse_flow, None),
])
def test_bad_input_lists_accepted_forms(parser, text):
    with pytest.raises(ValueError, match="write a number and a unit such as"):
        parser(text)


def test_gallons_message():
    with pytest.raises(ValueError) as info:
        parse_flow("40 gallons")
    assert "'40 gallons' is not a flow" in str(info.value)
    assert "40L/s" in str(info.value) and "120cfm" in str(info.value)


@pytest.mark.parametrize("parser, text", [(parse_flow, "0 L/s"), (parse_flow, "-3 L/s"),
                                          (parse_volume, "0 L"), (parse_time, "-1 s")])
def test_non_positive_refused(parser, text):
    with pytest.raises(ValueError, match="greater than zero"):
        parser(text)


def test_format_flow_round_trip():
    assert format_flow(0.040) == "40 L/s"
    assert format_flow(0.040, "m3/h") == "144 m^3/h"
    assert parse_flow(format_flow(0.0123456, "cfm", digits=12)) == pytest.approx(0.0123456, rel=1e-10)


def test_format_flow_bad_unit():
    with pytest.raises(ValueError, match="not a flow unit"):
        format_flow(0.04, "gpm")

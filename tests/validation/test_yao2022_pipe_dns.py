"""Developed-pipe closure vs the DNS of Yao, Rezaeiravesh, Schlatter & Hussain (2022).

Source: J. Yao, S. Rezaeiravesh, P. Schlatter & F. Hussain (2022), "Direct numerical simulation of
turbulent pipe flow up to Re_τ = 5200", arXiv:2207.06289; mean profiles at Re_τ = 549.0 / 998.3 /
2001.0, files in tests/data/pipe_dns_yao2022 (see tests/data/SOURCE.md). Every reference number here
is computed from those files (trapezoid on the file points).

Measured, default constants:
- U_b/U_CL (bound 3 %): DNS 0.7934 / 0.8018 / 0.8180 at Re_b 19000 / 37733 / 82963; model 0.8029 /
  0.8198 / 0.8348, i.e. +1.19 % / +2.25 % / +2.05 % (core flatter than DNS, as expected of the model).
- Darcy λ (bound 4 %): −0.84 % / −1.05 % / −0.84 %.
- U+ at the DNS Re_τ, every file point with y+ ≥ 1 up to the axis (bound 5 %): max |dev| 2.50 %
  (Re_τ 549, model below DNS at y+ = 19.5, buffer layer), 2.24 % (Re_τ 998, above at y+ = 140),
  2.34 % (Re_τ 2001, above at y+ = 153). Sign pattern: model low in the buffer layer
  (y+ 10–30), high in the overlap (y+ 50–300), low again near the axis.
"""
from pathlib import Path

import numpy as np
import pytest

from solver import pipe_reference
from solver.pipe1d import developed_pipe, developed_pipe_re_tau, model_form_deviation

DATA = Path(__file__).resolve().parents[1] / "data" / "pipe_dns_yao2022"
FILES = ["PIPE_Re550_MEAN.dat", "PIPE_Re1K_MEAN.dat", "PIPE_Re2K_MEAN.dat"]


def load(name):
    """(Re_τ, η = 1 − r, y+, U+) from one file; header gives uTau and nu with R = 1."""
    path = DATA / name
    header = {}
    for line in path.read_text().splitlines():
        if line.startswith("#") and "=" in line:
            key, value = line[1:].split("=")
            header[key.strip()] = float(value)
    table = np.loadtxt(path, comments="#")
    return header["uTau"] / header["nu"], table[:, 1], table[:, 2], table[:, 5]


def dns_bulk_quantities(name):
    """U_b+ = 2∫U+ (1 − η) dη and U_CL+ by trapezoid on the file points (η = y/R, the 1−r column)."""
    re_tau, eta, _, u_plus = load(name)
    integrand = 2.0 * u_plus * (1.0 - eta)
    bulk = float(np.sum(0.5 * (integrand[1:] + integrand[:-1]) * np.diff(eta)))
    return re_tau, bulk, float(u_plus[-1])


@pytest.mark.parametrize("name, ratio, re_b", [(FILES[0], 0.7934, 19000.0), (FILES[1], 0.8018, 37733.0),
                                               (FILES[2], 0.8180, 82963.0)])
def test_data_files_reproduce_the_stated_derived_values(name, ratio, re_b):
    """Guards the copies against corruption: values derived in shared/REFERENCES.md §2."""
    re_tau, bulk, centre = dns_bulk_quantities(name)
    assert bulk / centre == pytest.approx(ratio, abs=1e-4)
    assert 2.0 * re_tau * bulk == pytest.approx(re_b, rel=1e-4)


@pytest.mark.parametrize("name", FILES)
def test_bulk_to_centre_ratio_within_3_percent(name):
    re_tau, bulk, centre = dns_bulk_quantities(name)
    p = developed_pipe(2.0 * re_tau * bulk)
    model = p.bulk_velocity / p.centre_velocity
    assert abs(model - bulk / centre) / (bulk / centre) <= 0.03


@pytest.mark.parametrize("name", FILES)
def test_friction_factor_within_4_percent(name):
    re_tau, bulk, _ = dns_bulk_quantities(name)
    reference = 8.0 / bulk ** 2
    model = developed_pipe(2.0 * re_tau * bulk).friction_factor
    assert abs(model - reference) / reference <= 0.04


@pytest.mark.parametrize("name", FILES)
def test_mean_profile_in_wall_units_within_5_percent(name):
    """U+ at the DNS's own Re_τ, all file points from y+ = 1 to the axis."""
    re_tau, _, y_plus, u_plus = load(name)
    p = developed_pipe_re_tau(re_tau)
    keep = y_plus >= 1.0
    model = np.interp(y_plus[keep], p.y_plus[::-1], p.u_plus[::-1])
    deviation = (model - u_plus[keep]) / u_plus[keep]
    assert np.max(np.abs(deviation)) <= 0.05


def test_runtime_reference_numbers_match_the_files():
    """solver.pipe_reference carries the same U_b/U_CL and λ the files give (runtime cannot read tests/)."""
    for name, ratio_point, friction_point in zip(FILES, pipe_reference.YAO2022_BULK_TO_CENTRE,
                                                 pipe_reference.YAO2022_FRICTION):
        re_tau, bulk, centre = dns_bulk_quantities(name)
        assert ratio_point.value == pytest.approx(bulk / centre, abs=1e-4)
        assert friction_point.value == pytest.approx(8.0 / bulk ** 2, abs=1e-5)
        assert ratio_point.re_d == pytest.approx(2.0 * re_tau * bulk, rel=1e-4)
    points = model_form_deviation(points=pipe_reference.YAO2022_BULK_TO_CENTRE)
    assert all(0.0 < p.deviation <= 0.03 for p in points)  # flatter core: model ratio high

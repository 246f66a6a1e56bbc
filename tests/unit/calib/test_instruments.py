"""Instrument registry, case-file keys and refusals; every registered kind is exercised."""
import math

import numpy as np
import pytest

from calib.instruments import INSTRUMENTS, Instrument, build_instrument
from calib.profile import RotorPlaneProfile
from geometry.schema import CaseError, Key
from .instrument_tables import CASES

HEAD_AREA = 80e-4  # m^2
R = 0.05  # m, rotor-plane wall radius

WEIGHTS_CSV = "r_mm,w\n0,1.0\n25,2.0\n50,3.0\n"



@pytest.fixture
def case_dir(tmp_path):
    (tmp_path / "weights.csv").write_text(WEIGHTS_CSV)
    return tmp_path


def _build(table, base_dir):
    return build_instrument(table, head_free_area=HEAD_AREA, base_dir=base_dir, air_density=1.2)


def test_every_kind_has_a_case():
    assert set(CASES) == set(INSTRUMENTS)


@pytest.mark.parametrize("kind", sorted(INSTRUMENTS))
def test_keys_table(kind):
    keys = INSTRUMENTS[kind].KEYS
    assert all(isinstance(k, Key) for k in keys)
    names = [k.name for k in keys]
    assert len(names) == len(set(names))
    assert {"kind", "nominal_area_cm2"} <= set(names)
    assert INSTRUMENTS[kind].KIND == kind


@pytest.mark.parametrize("kind", sorted(INSTRUMENTS))
def test_builds_and_reads_uniform_flow(kind, case_dir):
    """Every instrument reads a uniform stream exactly (all are calibrated or exact there)."""
    inst = _build(CASES[kind], case_dir)
    assert isinstance(inst, INSTRUMENTS[kind]) and isinstance(inst, Instrument)
    r = np.linspace(0.0, R, 300)
    profile = RotorPlaneProfile(r=r, u=np.full_like(r, 3.7), v=np.zeros_like(r))
    assert inst.indicated_velocity(profile) == pytest.approx(3.7, rel=1e-9)
    assert inst.indicated_flow(profile) == pytest.approx(3.7 * inst.nominal_area, rel=1e-9)


@pytest.mark.parametrize("kind", sorted(INSTRUMENTS))
def test_nominal_area_default_and_explicit(kind, case_dir):
    table = dict(CASES[kind])
    table.pop("nominal_area_cm2", None)
    assert _build(table, case_dir).nominal_area == HEAD_AREA
    table["nominal_area_cm2"] = 50.0
    assert _build(table, case_dir).nominal_area == pytest.approx(50e-4, rel=1e-15)


@pytest.mark.parametrize("kind", sorted(INSTRUMENTS))
def test_perturbations_are_same_kind(kind, case_dir):
    inst = _build(CASES[kind], case_dir)
    copies = inst.perturbations()
    assert isinstance(copies, dict)
    for name, other in copies.items():
        assert type(other) is type(inst) and other != inst, name


@pytest.mark.parametrize("kind", sorted(INSTRUMENTS))
def test_unknown_key_refused(kind, case_dir):
    table = dict(CASES[kind], colour="red")
    with pytest.raises(CaseError, match="instrument.colour"):
        _build(table, case_dir)


def test_default_is_area_mean_over_head(case_dir):
    for table in (None, {}):
        inst = _build(table, case_dir)
        assert type(inst) is INSTRUMENTS["area-mean"] and inst.nominal_area == HEAD_AREA


def test_unknown_kind_refused(case_dir):
    with pytest.raises(CaseError, match="instrument.kind.*did you mean 'vane'"):
        _build({"kind": "vain"}, case_dir)


def test_vane_perturbation_sizes(case_dir):
    vane = _build(CASES["vane"], case_dir)
    p = vane.perturbations()
    assert p["tip_diameter+"].tip_diameter - vane.tip_diameter == pytest.approx(0.2e-3)
    assert p["hub_diameter-"].hub_diameter - vane.hub_diameter == pytest.approx(-0.5e-3)
    assert p["pitch+"].pitch / vane.pitch == pytest.approx(1.01)
    assert p["chord-"].chord / vane.chord == pytest.approx(0.95)


def test_point_perturbation(case_dir):
    point = _build(CASES["point"], case_dir)
    assert {k: v.at_r for k, v in point.perturbations().items()} == pytest.approx(
        {"at_r+1mm": 13e-3, "at_r-1mm": 11e-3})


def test_vane_blade_angle_alternative(case_dir):
    """blade angle 30 deg at r = 40 mm  <=>  pitch P = 2 pi r tan(theta)."""
    table = {k: v for k, v in CASES["vane"].items() if k != "pitch_mm"}
    vane = _build(dict(table, blade_angle_deg=30.0, blade_angle_at_mm=40.0), case_dir)
    assert vane.pitch == pytest.approx(2 * math.pi * 0.040 * math.tan(math.radians(30.0)), rel=1e-14)
    assert vane.blade_angle(0.040) == pytest.approx(math.radians(30.0), rel=1e-14)


@pytest.mark.parametrize("change, key", [
    ({"hub_diameter_mm": 96}, "instrument.hub_diameter_mm"),
    ({"blade_angle_deg": 30.0, "blade_angle_at_mm": 40.0}, "instrument.pitch_mm"),   # both ways
    ({"pitch_mm": None}, "instrument.pitch_mm"),                                       # neither
    ({"pitch_mm": None, "blade_angle_deg": 30.0}, "instrument.pitch_mm"),              # half
    ({"blade_angle_deg": 95.0, "blade_angle_at_mm": 40.0, "pitch_mm": None}, "instrument.blade_angle_deg"),
    ({"certificate": [[1.0, 1.03], [0.5, 5.0]]}, "instrument.certificate"),
    ({"certificate": [[1.0, 1.03]]}, "instrument.certificate"),
    ({"chord_mm": None}, "instrument.chord_mm"),
    ({"blades": 2.5}, "instrument.blades"),
])
def test_vane_refusals(change, key, case_dir):
    table = dict(CASES["vane"], **change)
    table = {k: v for k, v in table.items() if v is not None}
    with pytest.raises(CaseError, match=key.replace(".", r"\.")):
        _build(table, case_dir)


@pytest.mark.parametrize("content, message", [
    (None, "not found"),
    ("radius,w\n0,1\n50,1\n", "columns r_mm, w"),
    ("r_mm,w\n0,1\n", "at least two"),
    ("r_mm,w\n0,1\n50,x\n", "two numbers"),
    ("r_mm,w\n10,1\n5,1\n", "ascending"),
    ("r_mm,w\n0,-1\n50,1\n", "non-negative"),
])
def test_weight_table_refusals(content, message, tmp_path):
    if content is not None:
        (tmp_path / "weights.csv").write_text(content)
    with pytest.raises(CaseError, match=message):
        _build(CASES["weighted"], tmp_path)


def test_weighted_absolute_path_and_column_order(tmp_path):
    path = tmp_path / "w.csv"
    path.write_text("w,r_mm\n2.0,0\n2.0,50\n")
    inst = _build({"kind": "weighted", "table": str(path)}, base_dir=tmp_path / "elsewhere")
    assert inst.weight_r == pytest.approx((0.0, 0.05)) and inst.weight_w == (2.0, 2.0)


def test_weighted_zero_outside_table(tmp_path):
    """w = 1 only on 0..25 mm: the reading is the area mean of that inner disc."""
    (tmp_path / "weights.csv").write_text("r_mm,w\n0,1\n25,1\n")
    inst = _build(CASES["weighted"], tmp_path)
    r = np.linspace(0.0, R, 401)
    profile = RotorPlaneProfile(r=r, u=np.where(r <= 0.025, 2.0, 7.0), v=0 * r)
    assert inst.indicated_velocity(profile) == pytest.approx(2.0, rel=1e-12)


def test_traverse_refuses_bad_points(case_dir):
    with pytest.raises(CaseError, match="instrument.points"):
        _build({"kind": "traverse", "rule": "log-linear", "points": 5}, case_dir)

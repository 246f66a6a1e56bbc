"""Case-file reader: a valid case parses to SI; every listed mistake is refused naming its key."""
import copy
from pathlib import Path

import pytest

from geometry.case import (AIR_KEYS, AMBIENT_KEYS, MESH_KEYS, MODEL_KEYS, OPERATING_KEYS, TOP_KEYS, case_key_reference,
                           load_case, parse_case)
from geometry.schema import CaseError
from geometry.segments import SEGMENT_KINDS, Chamber, Head

CASES = Path(__file__).resolve().parents[3] / "cases"

BASE = {
    "title": "unit case",
    "ambient": {"mouth": "flanged"},
    "segment": [
        {"kind": "head", "diameter_mm": 100, "length_mm": 60, "rotor_at_mm": 30,
         "hub_diameter_mm": 30, "hub_start_mm": 5, "hub_length_mm": 40, "hub_nose": "round"},
        {"kind": "cone", "to_diameter_mm": 35, "length_mm": 100},
        {"kind": "tube", "length_mm": 800},
    ],
    "operating": {"flows_Ls": [10, 20, 40, 80]},
}


def case_with(edit):
    data = copy.deepcopy(BASE)
    edit(data)
    return data


def refused(data, key_part):
    with pytest.raises(CaseError) as info:
        parse_case(data, ".")
    assert key_part in str(info.value), str(info.value)
    return str(info.value)


def test_valid_case_is_si_and_defaults_are_filled():
    case = parse_case(copy.deepcopy(BASE), ".")
    assert case.air.temperature_K == pytest.approx(293.15)
    assert case.air.pressure_Pa == 101325.0 and case.air.relative_humidity == 0.5
    head = case.head
    assert isinstance(head, Head) and head.diameter == pytest.approx(0.1) and head.hub_radius == pytest.approx(0.015)
    assert case.segments[1].from_diameter == pytest.approx(0.1)
    assert case.segments[2].diameter == pytest.approx(0.035)
    assert case.operating.flows == pytest.approx((0.01, 0.02, 0.04, 0.08))
    assert case.model.closure == "mixing-length" and case.mesh.level == "normal"
    assert case.warnings() == []


@pytest.mark.parametrize("name", ["reducer_hub", "box_chamber", "tube_fed_head"])
def test_example_cases_load(name):
    case = load_case(CASES / f"{name}.toml")
    assert case.source_text.startswith("#")
    assert case.warnings() == []
    assert 4 <= len(case.operating.flows) <= 6


def test_model_overrides_are_numbers():
    case = parse_case(case_with(lambda d: d.update(model={"closure": "laminar", "kappa": 0.4, "a_plus": 26})), ".")
    assert case.model.overrides == {"kappa": 0.4, "a_plus": 26.0} and case.model.closure == "laminar"
    refused(case_with(lambda d: d.update(model={"kappa": "big"})), "model.kappa")


def test_short_last_tube_warns():
    case = parse_case(case_with(lambda d: d["segment"][2].update(length_mm=100)), ".")
    assert any(">= 10 D" in w for w in case.warnings())


def _set(path, value):
    def edit(d):
        target = d
        for p in path[:-1]:
            target = target[p]
        target[path[-1]] = value
    return edit


def _delete(path):
    def edit(d):
        target = d
        for p in path[:-1]:
            target = target[p]
        del target[path[-1]]
    return edit


REFUSALS = [
    ("unknown key", _set(["segment", 0, "diameterr_mm"], 100), "segment[0].diameterr_mm"),
    ("unknown section", _set(["ambiant"], {}), "ambiant"),
    ("missing key", _delete(["segment", 0, "diameter_mm"]), "segment[0].diameter_mm"),
    ("missing title", _delete(["title"]), "title"),
    ("wrong type", _set(["segment", 0, "length_mm"], "sixty"), "segment[0].length_mm"),
    ("non-positive dimension", _set(["segment", 1, "length_mm"], 0), "segment[1].length_mm"),
    ("negative diameter", _set(["segment", 0, "diameter_mm"], -5), "segment[0].diameter_mm"),
    ("hub wider than head", _set(["segment", 0, "hub_diameter_mm"], 100), "segment[0].hub_diameter_mm"),
    ("hub outside head", _set(["segment", 0, "hub_length_mm"], 60), "segment[0].hub_length_mm"),
    ("hub start at zero", _set(["segment", 0, "hub_start_mm"], 0), "segment[0].hub_start_mm"),
    ("hub keys without hub", _delete(["segment", 0, "hub_diameter_mm"]), "segment[0].hub_start_mm"),
    ("rotor outside head", _set(["segment", 0, "rotor_at_mm"], 70), "segment[0].rotor_at_mm"),
    ("rotor off the hub", _set(["segment", 0, "rotor_at_mm"], 50), "segment[0].rotor_at_mm"),
    ("rotor in the nose", _set(["segment", 0, "rotor_at_mm"], 10), "segment[0].rotor_at_mm"),
    ("cone to own diameter", _set(["segment", 1, "to_diameter_mm"], 100), "segment[1].to_diameter_mm"),
    ("bad nose", _set(["segment", 0, "hub_nose"], "pointy"), "segment[0].hub_nose"),
    ("unknown kind", _set(["segment", 1, "kind"], "cones"), "segment[1].kind"),
    ("bell radius missing", _set(["ambient", "mouth"], "bell"), "ambient.bell_radius_mm"),
    ("wall thickness missing", _set(["ambient", "mouth"], "thin-wall"), "ambient.wall_thickness_mm"),
    ("bell radius with flanged", _set(["ambient", "bell_radius_mm"], 10), "ambient.bell_radius_mm"),
    ("unknown mouth", _set(["ambient", "mouth"], "flange"), "ambient.mouth"),
    ("empty flows", _set(["operating", "flows_Ls"], []), "operating.flows_Ls"),
    ("descending flows", _set(["operating", "flows_Ls"], [20, 10]), "operating.flows_Ls"),
    ("instrument not a table", _set(["instrument"], "vane"), "instrument"),
    ("humidity as percent", _set(["air"], {"relative_humidity": 50}), "air.relative_humidity"),
    ("unknown closure", _set(["model"], {"closure": "k-epsilon"}), "model.closure"),
    ("unknown level", _set(["mesh"], {"level": "ultra"}), "mesh.level"),
]


@pytest.mark.parametrize("label, edit, key", REFUSALS, ids=[r[0] for r in REFUSALS])
def test_refusals_name_the_key(label, edit, key):
    refused(case_with(edit), key)


def test_did_you_mean():
    message = refused(case_with(_set(["segment", 1, "kind"], "cones")), "segment[1].kind")
    assert "'cone'" in message
    message = refused(case_with(_set(["segment", 0, "diameterr_mm"], 100)), "diameterr_mm")
    assert "diameter_mm" in message


def test_no_head_or_two_heads():
    def no_head(d):
        d["segment"][0] = {"kind": "tube", "diameter_mm": 100, "length_mm": 60}
    assert "exactly one head" in refused(case_with(no_head), "segment")
    second = {"kind": "head", "diameter_mm": 35, "length_mm": 40}
    refused(case_with(lambda d: d["segment"].append(second)), "segment[3].kind")


def test_first_segment_needs_a_diameter():
    def edit(d):
        d["segment"].insert(0, {"kind": "tube", "length_mm": 100})
    refused(case_with(edit), "segment[0].diameter_mm")
    refused(case_with(lambda d: d["segment"].insert(0, {"kind": "cone", "to_diameter_mm": 100, "length_mm": 50})),
            "segment[0].kind")


def test_step_refusals():
    refused(case_with(lambda d: d["segment"].insert(2, {"kind": "step", "to_diameter_mm": 35})),
            "segment[2].to_diameter_mm")
    two = [{"kind": "step", "to_diameter_mm": 30}, {"kind": "step", "to_diameter_mm": 20}]
    refused(case_with(lambda d: d["segment"].__setitem__(slice(2, 2), two)), "segment[3].kind")
    case = parse_case(case_with(lambda d: d["segment"].insert(2, {"kind": "step", "to_diameter_mm": 25})), ".")
    assert case.segments[3].diameter == pytest.approx(0.025)


def test_chamber_refusals_and_port():
    chamber = {"kind": "chamber", "diameter_mm": 200, "length_mm": 150}
    ok = parse_case(case_with(lambda d: d["segment"].__setitem__(slice(1, 3), [
        chamber, {"kind": "tube", "diameter_mm": 50, "length_mm": 600}])), ".")
    assert isinstance(ok.segments[1], Chamber) and ok.segments[1].port_diameter == pytest.approx(0.05)
    narrow = dict(chamber, diameter_mm=90)
    refused(case_with(lambda d: d["segment"].__setitem__(slice(1, 3), [
        narrow, {"kind": "tube", "diameter_mm": 50, "length_mm": 600}])), "segment[1].diameter_mm")
    refused(case_with(lambda d: d["segment"].__setitem__(slice(1, 3), [
        chamber, {"kind": "tube", "diameter_mm": 250, "length_mm": 600}])), "segment[1].diameter_mm")
    refused(case_with(lambda d: d["segment"].__setitem__(slice(1, 3), [
        chamber, {"kind": "tube", "length_mm": 600}])), "segment[2].diameter_mm")
    refused(case_with(lambda d: d["segment"].__setitem__(slice(1, 3), [chamber])), "segment[1].kind")


def test_toml_syntax_error_names_the_line(tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text('title = "x"\n[ambient]\nmouth = flanged\n', encoding="utf-8")
    with pytest.raises(CaseError) as info:
        load_case(path)
    assert "line 3" in str(info.value)


def test_key_reference_lists_every_key():
    text = case_key_reference()
    tables = [TOP_KEYS, AIR_KEYS, AMBIENT_KEYS, OPERATING_KEYS, MODEL_KEYS, MESH_KEYS]
    tables += [cls.KEYS for cls in SEGMENT_KINDS.values()]
    for keys in tables:
        for key in keys:
            assert f"`{key.name}`" in text
    for kind in SEGMENT_KINDS:
        assert f'kind = "{kind}"' in text

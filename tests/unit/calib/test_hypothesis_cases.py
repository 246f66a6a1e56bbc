"""Generated case files through the real command line: valid ones solve (or stop with a clear message),
broken ones are refused with exit 2, a message naming the key, no traceback and nothing written.

Property checks of this program's input handling; the one physical check (the rotor-plane flux equals
the drawn flow) is mass conservation, exact for the finite-volume scheme up to the solver tolerance.
"""
import json
import math
import tempfile
import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from calib.cli import main

SMALL = Path(__file__).resolve().parents[2] / "data" / "cases" / "small_tube.toml"
FLUX_RELATIVE = 2e-3  # the bound test_cli uses for the written profile's flux


def _value(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return json.dumps(value)  # a TOML basic string for the characters generated here
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_value(v) for v in value) + "]"
    return repr(value)


def to_toml(data: dict) -> str:
    """Enough TOML for case files: top-level values, tables, and arrays of tables."""
    lines = [f"{k} = {_value(v)}" for k, v in data.items() if not isinstance(v, (dict, list)) or
             (isinstance(v, list) and not (v and isinstance(v[0], dict)))]
    for name, value in data.items():
        if isinstance(value, dict):
            lines += ["", f"[{name}]"] + [f"{k} = {_value(v)}" for k, v in value.items()]
        elif isinstance(value, list) and value and isinstance(value[0], dict):
            for table in value:
                lines += ["", f"[[{name}]]"] + [f"{k} = {_value(v)}" for k, v in table.items()]
    return "\n".join(lines) + "\n"


def small_case() -> dict:
    data = tomllib.loads(SMALL.read_text())
    assert tomllib.loads(to_toml(data)) == data
    return data


@st.composite
def valid_cases(draw):
    """Head + tube, coarse mesh, one or two flows at 1-6 m/s in the head."""
    d = draw(st.floats(40.0, 100.0))
    length = draw(st.floats(0.5, 1.0)) * d
    flows = sorted(draw(st.lists(st.floats(1.0, 6.0), min_size=1, max_size=2, unique=True)))
    area = math.pi * (d * 1e-3) ** 2 / 4
    flows_ls = sorted({round(u * area * 1e3, 3) for u in flows})
    return {
        "title": "generated head on a tube",
        "ambient": {"mouth": "flanged"},
        "segment": [{"kind": "head", "diameter_mm": round(d, 2), "length_mm": round(length, 2),
                     "rotor_at_mm": round(draw(st.floats(0.3, 0.7)) * length, 2)},
                    {"kind": "tube", "length_mm": round(draw(st.floats(10.0, 12.0)) * d, 1)}],
        "operating": {"flows_Ls": flows_ls},
        "mesh": {"level": "coarse"},
    }


@settings(max_examples=5, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(data=valid_cases())
def test_valid_cases_solve_or_stop_clearly(data, capsys):
    with tempfile.TemporaryDirectory() as folder:
        path, out = Path(folder) / "case.toml", Path(folder) / "out"
        path.write_text(to_toml(data))
        flow = data["operating"]["flows_Ls"][0]
        code = main(["solve", str(path), "--flow", f"{flow}L/s", "--out", str(out)])
        err = capsys.readouterr().err
        assert "Traceback" not in err
        if code == 3:  # a diverged solve is allowed, but must say so
            assert "diverged" in err
            return
        assert code == 0, err
        result = json.loads((out / "result.json").read_text())
        assert result["rotor_plane"]["flux_Ls"] == pytest.approx(flow, rel=FLUX_RELATIVE)


SECTIONS_WITH_KEYS = ("air", "ambient", "operating", "mesh", "segment0", "segment1")


def _unknown_key(data, draw):
    where = draw(st.sampled_from(("top",) + SECTIONS_WITH_KEYS))
    name = "zz_" + draw(st.text("abcdefghijklmnopqrstuvwxyz_", min_size=1, max_size=8))
    if where == "top":
        data[name] = 1.0
    else:
        table = data["segment"][int(where[-1])] if where.startswith("segment") else data.setdefault(where, {})
        table[name] = 1.0
    return name


def _wrong_type(data, draw):
    key = draw(st.sampled_from(("diameter_mm", "length_mm", "rotor_at_mm")))
    data["segment"][0][key] = draw(st.sampled_from(("sixty", True, [1.0, 2.0])))
    return f"segment[0].{key}"


def _not_positive(data, draw):
    segment, key = draw(st.sampled_from(((0, "diameter_mm"), (0, "length_mm"), (0, "rotor_at_mm"),
                                         (1, "length_mm"))))
    data["segment"][segment][key] = draw(st.sampled_from((0.0, -1.0, -60.0)))
    return f"segment[{segment}].{key}"


def _missing(data, draw):
    choice = draw(st.sampled_from(("title", "ambient", "operating", "segment", "mouth", "diameter_mm",
                                   "length_mm", "flows_Ls")))
    if choice in data:
        del data[choice]
    elif choice == "mouth":
        del data["ambient"]["mouth"]
    elif choice == "flows_Ls":
        del data["operating"]["flows_Ls"]
    else:
        del data["segment"][0][choice]
    return choice


def _hub_too_wide(data, draw):
    head = data["segment"][0]
    head.update(hub_diameter_mm=head["diameter_mm"] * draw(st.floats(1.0, 2.0)), hub_start_mm=2.0,
                hub_length_mm=30.0, hub_nose="blunt")
    return "segment[0].hub_diameter_mm"


def _rotor_outside(data, draw):
    head = data["segment"][0]
    head["rotor_at_mm"] = head["length_mm"] * draw(st.floats(1.01, 3.0))
    return "segment[0].rotor_at_mm"


MUTATIONS = (_unknown_key, _wrong_type, _not_positive, _missing, _hub_too_wide, _rotor_outside)


@st.composite
def broken_cases(draw):
    data = small_case()
    mutation = draw(st.sampled_from(MUTATIONS))
    return data, mutation(data, draw)


@settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(case=broken_cases())
def test_broken_cases_are_refused_by_name(case, capsys):
    data, key = case
    with tempfile.TemporaryDirectory() as folder:
        path, out = Path(folder) / "case.toml", Path(folder) / "out"
        path.write_text(to_toml(data))
        code = main(["table", str(path), "--levels", "1", "--out", str(out)])
        err = capsys.readouterr().err
        assert code == 2, err
        assert key in err and "Traceback" not in err
        assert sorted(p.name for p in Path(folder).iterdir()) == ["case.toml"]  # nothing written

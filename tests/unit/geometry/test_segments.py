"""Segment registry: every kind builds from its table, knows its diameters and length, draws its wall."""
import numpy as np
import pytest

from geometry.schema import CaseError
from geometry.segments import SEGMENT_KINDS, chain_outline, segment_positions

TABLES = {
    "head": {"kind": "head", "diameter_mm": 100, "length_mm": 60, "rotor_at_mm": 30},
    "cone": {"kind": "cone", "to_diameter_mm": 35, "length_mm": 100},
    "tube": {"kind": "tube", "length_mm": 500},
    "chamber": {"kind": "chamber", "diameter_mm": 300, "length_mm": 200},
    "step": {"kind": "step", "to_diameter_mm": 60},
}
PREVIOUS = 0.08  # m: the diameter of a segment ahead


def build(kind):
    seg = SEGMENT_KINDS[kind].from_table(dict(TABLES[kind]), 1, PREVIOUS)
    if kind == "chamber":
        from dataclasses import replace
        seg = replace(seg, port_diameter=0.05)
    return seg


def test_registry_covers_the_documented_kinds():
    assert set(SEGMENT_KINDS) == {"head", "cone", "tube", "chamber", "step"}
    assert set(TABLES) == set(SEGMENT_KINDS)


@pytest.mark.parametrize("kind", sorted(SEGMENT_KINDS))
def test_outline_matches_diameters_and_length(kind):
    seg = build(kind)
    assert seg.KIND == kind
    pts = np.array(seg.wall_outline(0.25))
    assert pts[0, 0] == pytest.approx(0.25) and pts[-1, 0] == pytest.approx(0.25 + seg.length)
    assert pts[0, 1] == pytest.approx(0.5 * seg.start_diameter)
    assert pts[-1, 1] == pytest.approx(0.5 * seg.end_diameter)
    assert np.all(np.diff(pts[:, 0]) >= 0.0)
    assert seg.length >= 0.0 and seg.start_diameter > 0.0 and seg.end_diameter > 0.0


@pytest.mark.parametrize("kind", sorted(SEGMENT_KINDS))
def test_unknown_key_is_refused_with_its_name(kind):
    table = dict(TABLES[kind], lenght_mm=5)
    with pytest.raises(CaseError, match=r"segment\[1\]\.lenght_mm"):
        SEGMENT_KINDS[kind].from_table(table, 1, PREVIOUS)


@pytest.mark.parametrize("kind", sorted(SEGMENT_KINDS))
def test_required_keys_are_refused_when_missing(kind):
    required = [k.name for k in SEGMENT_KINDS[kind].KEYS if k.required]
    assert required, "every kind has at least one required key"
    for name in required:
        table = {k: v for k, v in TABLES[kind].items() if k != name}
        with pytest.raises(CaseError, match=rf"segment\[1\]\.{name}"):
            SEGMENT_KINDS[kind].from_table(table, 1, PREVIOUS)


@pytest.mark.parametrize("kind", ["cone", "chamber", "step"])
def test_kinds_that_start_from_the_previous_diameter_cannot_come_first(kind):
    with pytest.raises(CaseError, match=r"segment\[0\]"):
        SEGMENT_KINDS[kind].from_table(dict(TABLES[kind]), 0, None)


def test_chain_outline_joins_segments():
    segs = [SEGMENT_KINDS["tube"].from_table({"kind": "tube", "diameter_mm": 80, "length_mm": 100}, 0, None),
            build("cone"), SEGMENT_KINDS["step"].from_table(dict(TABLES["step"]), 2, 0.035)]
    assert segment_positions(segs) == pytest.approx([0.0, 0.1, 0.2])
    pts = np.array(chain_outline(segs))
    assert np.allclose(pts, [[0.0, 0.04], [0.1, 0.04], [0.2, 0.0175], [0.2, 0.03]])

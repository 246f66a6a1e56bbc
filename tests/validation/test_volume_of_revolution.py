"""Mesh volume of revolution against elementary geometry and Pappus's centroid theorem.

Sources: cylinder V = π R² h and cone frustum V = π h (R1² + R1 R2 + R2²)/3 (elementary solid
geometry, any handbook, e.g. Bronshtein & Semendyayev, *Handbook of Mathematics*, solids of
revolution; from memory, standard). Pappus's (second) centroid theorem V = 2π A r̄ for a plane
region of area A and centroid radius r̄ (same handbook). The mesh sums cell_volume (A r_c per
radian) times 2π, so straight-walled domains must match to round-off, and a curved bell converges
at second order (chords of an arc miss it by O(h²)).
"""
import copy
import math

import numpy as np
import pytest

from geometry import fixture
from geometry.case import parse_case
from geometry.fixture import build_fixture_mesh

BASE = {"title": "volume", "ambient": {"mouth": "flanged", "radius_mm": 700, "length_mm": 600},
        "operating": {"flows_Ls": [10, 30]}}


def case(segments, **ambient):
    data = copy.deepcopy(BASE)
    data["segment"] = segments
    data["ambient"].update(ambient)
    return parse_case(data, ".")


def frustum(h, r1, r2):
    return math.pi * h * (r1 * r1 + r1 * r2 + r2 * r2) / 3.0


def mesh_volume(c, level="coarse"):
    return 2.0 * math.pi * build_fixture_mesh(c, level).mesh.cell_volume.sum()


AMBIENT = math.pi * 0.7 ** 2 * 0.6   # the still-air cylinder ahead of the plate


def test_head_cone_tube_with_blunt_hub():
    """Flanged head (blunt hub cylinder removed) + cone frustum + tube: V to 1e-10 relative."""
    segs = [{"kind": "head", "diameter_mm": 100, "length_mm": 60, "rotor_at_mm": 30, "hub_diameter_mm": 30,
             "hub_start_mm": 8, "hub_length_mm": 36, "hub_nose": "blunt"},
            {"kind": "cone", "to_diameter_mm": 35, "length_mm": 110},
            {"kind": "tube", "length_mm": 420}]
    exact = AMBIENT + math.pi * 0.05 ** 2 * 0.06 - math.pi * 0.015 ** 2 * 0.036 \
        + frustum(0.11, 0.05, 0.0175) + math.pi * 0.0175 ** 2 * 0.42
    for level in ("coarse", "fine"):
        assert mesh_volume(case(segs), level) == pytest.approx(exact, rel=1e-10)


def test_blunt_hub_then_step_down():
    """Head with a blunt hub, a step down right behind its wake, a tube: V to 1e-10 relative."""
    segs = [{"kind": "head", "diameter_mm": 100, "length_mm": 60, "rotor_at_mm": 30, "hub_diameter_mm": 30,
             "hub_start_mm": 8, "hub_length_mm": 40, "hub_nose": "blunt"},
            {"kind": "step", "to_diameter_mm": 40},
            {"kind": "tube", "length_mm": 400}]
    exact = AMBIENT + math.pi * 0.05 ** 2 * 0.06 - math.pi * 0.015 ** 2 * 0.04 + math.pi * 0.02 ** 2 * 0.4
    for level in ("coarse", "fine"):
        assert mesh_volume(case(segs), level) == pytest.approx(exact, rel=1e-10)


def test_chamber_steps_and_expanding_cone():
    """Head, chamber with port, step contraction and expansion, a diverging cone: V to 1e-10 relative."""
    segs = [{"kind": "head", "diameter_mm": 70, "length_mm": 50},
            {"kind": "chamber", "diameter_mm": 200, "length_mm": 180},
            {"kind": "tube", "diameter_mm": 50, "length_mm": 100},
            {"kind": "step", "to_diameter_mm": 30},
            {"kind": "cone", "to_diameter_mm": 45, "length_mm": 80},
            {"kind": "step", "to_diameter_mm": 60},
            {"kind": "tube", "length_mm": 600}]
    exact = AMBIENT + math.pi * 0.035 ** 2 * 0.05 + math.pi * 0.1 ** 2 * 0.18 + math.pi * 0.025 ** 2 * 0.1 \
        + frustum(0.08, 0.015, 0.0225) + math.pi * 0.03 ** 2 * 0.6
    assert mesh_volume(case(segs)) == pytest.approx(exact, rel=1e-10)


def test_thin_wall_mouth():
    """Thin-wall mouth: ambient cylinder + the annulus around the protruding pipe + the bore."""
    segs = [{"kind": "tube", "diameter_mm": 80, "length_mm": 160},
            {"kind": "head", "diameter_mm": 80, "length_mm": 40},
            {"kind": "tube", "length_mm": 900}]
    c = case(segs, mouth="thin-wall", wall_thickness_mm=2)
    protrusion = fixture.PROTRUSION_DIAMETERS * 0.08
    exact = AMBIENT + math.pi * (0.7 ** 2 - 0.042 ** 2) * protrusion + math.pi * 0.04 ** 2 * 1.1
    assert mesh_volume(c) == pytest.approx(exact, rel=1e-10)


def bell_exact(r0, rb):
    """Pappus: the flare region = rectangle [-rb, 0] x [0, r0 + rb] minus the quarter disc of radius rb
    centred at (0, r0 + rb); quarter-disc centroid 4 rb/(3π) from its centre along each axis."""
    top = r0 + rb
    a_rect, m_rect = rb * top, rb * top * top / 2.0
    a_q = math.pi * rb * rb / 4.0
    m_q = a_q * (top - 4.0 * rb / (3.0 * math.pi))
    return 2.0 * math.pi * (m_rect - m_q), a_rect - a_q


def test_bell_converges_at_second_order(monkeypatch):
    """Bell mouth: the flare is chorded, so the volume error falls as h²; fitted order in [1.8, 2.3].

    Pappus area check on the same region as a sanity test of the closed form: A = rb(r0+rb) - π rb²/4.
    """
    r0, rb = 0.05, 0.02
    v_bell, area = bell_exact(r0, rb)
    assert area == pytest.approx(rb * (r0 + rb) - math.pi * rb ** 2 / 4)
    segs = [{"kind": "head", "diameter_mm": 100, "length_mm": 60}, {"kind": "tube", "length_mm": 1000}]
    c = case(segs, mouth="bell", bell_radius_mm=20)
    exact = v_bell + AMBIENT + math.pi * r0 ** 2 * 1.06
    scales = [1.0, 2.0, 4.0]
    errors, h = [], []
    for s in scales:
        monkeypatch.setitem(fixture.LEVEL_SCALE, f"x{s}", s)
        fm = build_fixture_mesh(c, f"x{s}")
        errors.append(abs(2 * math.pi * fm.mesh.cell_volume.sum() - exact) / exact)
        arc = fm.mesh.patch_faces("wall-bell")
        h.append(fm.mesh.face_length[arc].max())
    order = np.polyfit(np.log(h), np.log(errors), 1)[0]
    assert errors[-1] < errors[0]
    assert 1.8 <= order <= 2.3, (errors, h, order)

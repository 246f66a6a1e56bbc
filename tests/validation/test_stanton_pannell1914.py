"""Bulk-to-maximum velocity ratio vs Stanton & Pannell (1914), smooth drawn-brass pipes, air and water.

Source: T. E. Stanton & J. R. Pannell (1914), "Similarity of motion in relation to the surface
friction of fluids", Phil. Trans. R. Soc. Lond. A 214, 199–224; digitised in the sheardata collection
(A. Trettel, CC-BY-4.0), files in tests/data/stanton_pipe_air (see tests/data/SOURCE.md).

The runs give U_b and U_max only. Re_D = U_b D/ν needs a temperature, which the file does not give:
air is taken at 15 °C (the collection's assumption), ν = 1.4656e-5 m²/s; water at 12 °C (the
collection's friction runs in these pipes were at 8.6–16 °C), ν = 1.2347e-6 m²/s; both ν computed with
CoolProp 8.0.0 at 101325 Pa. A ±3 °C error moves the water Re by about ±9 % (air ±3 %), which moves the
model's ratio by < 0.6 % (at Re 5e3; < 0.2 % above 2e4).
Classification by Re_D: laminar < 2000 (reference: Hagen–Poiseuille 0.5, analytic), turbulent
> 4000 (reference: the run's measured ratio vs pipe1d at the run's Re_D); 2000–4000 is transitional
and has no developed-flow reference, so those 9 runs are not checked. Bound: 3 % in both regimes
(the bound used for U_b/U_c against Schlichting and the DNS; repeat runs scatter by ≈ 0.5 %).

Measured, default constants:
- Turbulent (43 runs, Re_D 4037–69190): (model − data)/data from −2.32 % (water, pipe 17,
  Re 4716) to +2.48 % (water, pipe 17, Re 54267); air runs only −1.66 % … +0.10 %. Like the
  DNS comparison, the model is low near Re 5e3 and high above 2e4.
- Laminar (13 runs): 10 within 3 % of 0.5 (max 2.9 %); three MISS and are marked xfail:
  water pipe 17 Re ≈ 1913 ratio 0.5639 (+12.8 %) and Re ≈ 1667 ratio 0.5196 (+3.9 %), both near
  transition; air pipe 16 Re ≈ 989 ratio 0.7752 (+55 %), a turbulent-like ratio far below any
  transition Re, inconsistent with every neighbouring run (possibly disturbed inflow or a
  transcription error in the source; not resolved here).
"""
import csv
from pathlib import Path

import pytest

from solver.pipe1d import developed_pipe

DATA = Path(__file__).resolve().parents[1] / "data" / "stanton_pipe_air"
NU = {"Air": 1.4656e-5, "Water": 1.2347e-6}  # m²/s, CoolProp 8.0.0: air 15 °C, water 12 °C
LAMINAR_BELOW, TURBULENT_ABOVE = 2000.0, 4000.0
TOLERANCE = 0.03
KNOWN_MISSES = {  # csv row (0-based after the header) -> measured deviation
    28: "water Re 1913: 0.5639 vs 0.5 (+12.8 %), near transition",
    29: "water Re 1667: 0.5196 vs 0.5 (+3.9 %), near transition",
    48: "air Re 989: 0.7752 vs 0.5 (+55 %), turbulent-like ratio at laminar Re",
}


def _clean(text):
    return text.strip().strip('"')


def runs():
    with open(DATA / "stanton_pannell1914_pipes.csv") as f:
        diameters = {_clean(r[0]): float(r[1]) * 1e-2 for r in list(csv.reader(f))[1:]}  # cm -> m
    with open(DATA / "stanton_pannell1914_bulk_and_maximum_velocities.csv") as f:
        rows = list(csv.reader(f))[1:]
    out = []
    for i, row in enumerate(rows):
        u_b, u_max = float(row[0]) * 1e-2, float(row[1]) * 1e-2  # cm/s -> m/s
        fluid, pipe = _clean(row[2]), _clean(row[3])
        out.append((i, fluid, pipe, u_b * diameters[pipe] / NU[fluid], u_b / u_max))
    return out


RUNS = runs()
TURBULENT = [r for r in RUNS if r[3] > TURBULENT_ABOVE]
LAMINAR = [r for r in RUNS if r[3] < LAMINAR_BELOW]


def _param(run):
    marks = [pytest.mark.xfail(strict=True, reason=KNOWN_MISSES[run[0]])] if run[0] in KNOWN_MISSES else []
    return pytest.param(*run[1:], marks=marks, id=f"row{run[0]}-{run[1]}-pipe{run[2]}-Re{run[3]:.0f}")


def test_data_cover_both_regimes():
    assert len(TURBULENT) == 43 and len(LAMINAR) == 13 and len(RUNS) == 65


@pytest.mark.parametrize("fluid, pipe, re_d, ratio", [_param(r) for r in TURBULENT])
def test_turbulent_ratio_vs_pipe1d(fluid, pipe, re_d, ratio):
    p = developed_pipe(re_d)
    assert abs(p.bulk_velocity / p.centre_velocity - ratio) / ratio <= TOLERANCE


@pytest.mark.parametrize("fluid, pipe, re_d, ratio", [_param(r) for r in LAMINAR])
def test_laminar_ratio_vs_poiseuille(fluid, pipe, re_d, ratio):
    assert abs(ratio - 0.5) / 0.5 <= TOLERANCE

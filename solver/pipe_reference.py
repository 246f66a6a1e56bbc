"""Published fully developed smooth-pipe numbers the runtime needs to state the closure's model-form error.

Only a few reference numbers live here, each with its source and tag ([verified: ...] = read from a
stored document or computed from a public data file; [from memory] = recalled, needs confirmation).
The test suite checks the same quantities against its own copies of the data files; this module
exists because the runtime package may not read ``tests/``.
"""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class PipeReferencePoint:
    """One published value at a bulk Reynolds number Re_D = U_b D/ν."""

    source: str
    quantity: str  # "bulk_to_centre" (U_b/U_c) or "friction_factor" (Darcy λ)
    re_d: float
    value: float


_YAO = ("Yao, Rezaeiravesh, Schlatter & Hussain 2022, arXiv:2207.06289, DNS mean profiles "
        "Re_tau 549/998/2001 (trapezoid on file points) [verified: computed from the data files]")
_SCHLICHTING = ("Schlichting, Boundary-Layer Theory 7th ed., Table 20.1 (Nikuradse 1932), "
                "U_b/U_c = 2n^2/((n+1)(2n+1)); n at 2.3e4 [from memory], 1.1e5 [verified], "
                "1.1e6 [from memory]")
_PIROZZOLI = ("Pirozzoli, Romero, Fatica, Verzicco & Orlandi 2021, JFM 926 A28, Table 1 (DNS) "
              "[verified: paper text]")

# Yao et al. 2022 DNS: Re_b = 2 Re_tau U_b+ = 19000 / 37733 / 82963.
YAO2022_BULK_TO_CENTRE = (
    PipeReferencePoint(_YAO, "bulk_to_centre", 19000.0, 0.7934),
    PipeReferencePoint(_YAO, "bulk_to_centre", 37733.0, 0.8018),
    PipeReferencePoint(_YAO, "bulk_to_centre", 82963.0, 0.8180),
)
YAO2022_FRICTION = (
    PipeReferencePoint(_YAO, "friction_factor", 19000.0, 0.02672),
    PipeReferencePoint(_YAO, "friction_factor", 37733.0, 0.02240),
    PipeReferencePoint(_YAO, "friction_factor", 82963.0, 0.01861),
)
# Schlichting Table 20.1 (Nikuradse's power-law fits), U_b/U_c column.
SCHLICHTING_BULK_TO_CENTRE = (
    PipeReferencePoint(_SCHLICHTING, "bulk_to_centre", 2.3e4, 0.807),
    PipeReferencePoint(_SCHLICHTING, "bulk_to_centre", 1.1e5, 0.817),
    PipeReferencePoint(_SCHLICHTING, "bulk_to_centre", 1.1e6, 0.850),
)
# Pirozzoli et al. 2021 DNS friction factors (Darcy), Re_b 17000 ... 285000.
PIROZZOLI2021_FRICTION = (
    PipeReferencePoint(_PIROZZOLI, "friction_factor", 17000.0, 0.02716),
    PipeReferencePoint(_PIROZZOLI, "friction_factor", 44000.0, 0.02136),
    PipeReferencePoint(_PIROZZOLI, "friction_factor", 82500.0, 0.01836),
    PipeReferencePoint(_PIROZZOLI, "friction_factor", 133000.0, 0.01659),
    PipeReferencePoint(_PIROZZOLI, "friction_factor", 285000.0, 0.01428),
)

ALL_POINTS = YAO2022_BULK_TO_CENTRE + YAO2022_FRICTION + SCHLICHTING_BULK_TO_CENTRE + PIROZZOLI2021_FRICTION

"""Minimal valid [instrument] tables, one per registered kind (shared by the registry tests)."""

# A new instrument kind must add one here.
CASES = {
    "area-mean": {"kind": "area-mean"},
    "point": {"kind": "point", "at_r_mm": 12.0},
    "traverse": {"kind": "traverse", "rule": "log-chebyshev", "points": 5},
    "weighted": {"kind": "weighted", "table": "weights.csv"},
    "vane": {"kind": "vane", "nominal_area_cm2": 78.5, "tip_diameter_mm": 96, "hub_diameter_mm": 30,
             "blades": 8, "pitch_mm": 150, "chord_mm": 12},
}

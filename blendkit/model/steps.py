"""The step of a bound: a change that fits its unit, so the Result sheet can say what a
step of each binding limit is worth (shadow price x step).

One table, by unit; anything else moves by 1 % of the bound (or by 1 when the bound is 0).
"""

from __future__ import annotations

# A step by unit, keys lower-case with spaces removed. Energy in MJ/kg moves by 0.1, in
# kcal/kg by 10; trace contents (mg/kg, ppm, g/kg) by 1; a % content by 0.01.
STEPS_BY_UNIT = {
    "%": 0.01,
    "mj/kg": 0.1,
    "kcal/kg": 10.0,
    "mg/kg": 1.0,
    "ppm": 1.0,
    "g/kg": 1.0,
}
# A ratio of two levels moves by 0.01; an ingredient's inclusion (in %) by 0.1 % of the blend.
RATIO_STEP = 0.01
INCLUSION_STEP = 0.1
# Otherwise: this share of the bound (or 1 for a bound of 0).
SHARE_OF_BOUND = 0.01


def step_for(unit: str, kind: str, bound: float) -> float:
    """The step of a bound of `kind` ("nutrient", "ratio", "group", "ingredient", "stock")
    written in `unit` with value `bound`: from the table by unit, else 1 % of the bound."""
    if kind == "ratio":
        return RATIO_STEP
    if kind in ("ingredient", "group"):
        return INCLUSION_STEP
    key = (unit or "").lower().replace(" ", "")
    if key in STEPS_BY_UNIT:
        return STEPS_BY_UNIT[key]
    return abs(bound) * SHARE_OF_BOUND if bound else 1.0

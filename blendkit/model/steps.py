"""The step of a bound: a change that fits its unit, so the Result sheet can say what a
step of each binding limit is worth (shadow price x step).

One table, by unit; anything else moves by 1 % of the bound (or by 1 when the bound is 0).
"""

from __future__ import annotations

from blendkit.model.blend import Blend
from blendkit.model.formula import Formula, Limit

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


def limit_unit(blend: Blend, limit: Limit) -> str:
    """The unit a limit's bound is written in: the nutrient's, % for an inclusion or group
    (a diet food's unit in a diet), the mass unit for a stock, blank for a ratio."""
    if limit.kind == "nutrient":
        return blend.nutrient_units.get(limit.name, "")
    if limit.kind == "ratio":
        return ""
    if limit.kind == "stock":
        return blend.settings.mass_unit if not blend.diet else _food_unit(blend, limit.name)
    if blend.diet:
        return _food_unit(blend, limit.name) if limit.kind == "ingredient" else ""
    return "%"


def _food_unit(blend: Blend, name: str) -> str:
    """A diet food's unit; blank for a name that is not an ingredient."""
    try:
        return blend.ingredient(name).unit
    except KeyError:
        return ""


def spec_step(blend: Blend, limit: Limit) -> float | None:
    """The Step a nutrient or ratio limit's spec row gives, if any (a row for this product
    before a row for every product)."""
    if limit.kind not in ("nutrient", "ratio"):
        return None
    rows = [spec for spec in blend.specs if spec.nutrient == limit.name and spec.step
            and (limit.kind == "ratio" or spec.basis == limit.basis)
            and spec.product in (limit.product, None)]
    rows.sort(key=lambda spec: spec.product is None)
    return rows[0].step if rows else None


def limit_step(blend: Blend, limit: Limit) -> float:
    """A limit's step: the Specs sheet's Step, else the default by its unit."""
    return spec_step(blend, limit) or step_for(limit_unit(blend, limit), limit.kind, limit.bound)


def step_worth(blend: Blend, limit: Limit) -> tuple[float, float]:
    """A limit's step and |shadow price x step|, what one step of it moves the cost by."""
    step = limit_step(blend, limit)
    return step, abs(limit.shadow_price * step)


def binding_by_step_worth(formula: Formula) -> list[Limit]:
    """Every binding limit of the run, each once, the largest step worth first (the Result
    sheet's first page and the console)."""
    every = [*formula.limits, *(limit for product in formula.products for limit in product.limits)]
    binding = [limit for limit in dict.fromkeys(every) if limit.binding]
    return sorted(binding, key=lambda limit: -step_worth(formula.blend, limit)[1])

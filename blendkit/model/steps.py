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
    rows = [spec for spec in blend.stepped_specs(limit.name)
            if (limit.kind == "ratio" or spec.basis == limit.basis) and spec.product in (limit.product, None)]
    rows.sort(key=lambda spec: spec.product is None)
    return rows[0].step if rows else None


def limit_step(blend: Blend, limit: Limit) -> float:
    """A limit's step: the Specs sheet's Step, else the default by its unit."""
    return spec_step(blend, limit) or step_for(limit_unit(blend, limit), limit.kind, limit.bound)


def step_worth(blend: Blend, limit: Limit) -> tuple[float, float]:
    """A limit's step and |shadow price x step|, what one step of it moves the cost by."""
    step = limit_step(blend, limit)
    return step, abs(limit.shadow_price * step)


def in_run_currency(formula: Formula, limit: Limit) -> float:
    """What one unit of `limit`'s shadow price is in the run's currency, so that limits of
    different products and stocks compare: a product's own limit (one blend's too) is
    priced per `Cost per` unit of that product, so its amount in `Cost per` units (a batch
    of 2,000 kg priced per tonne: 2); a stock is priced in the run's total already, and a
    diet's cost is its total: 1."""
    if limit.kind == "stock" or formula.blend.diet:
        return 1.0
    product = next((item for item in formula.products if item.name == limit.product), None)
    if product is None:
        return 1.0
    return product.amount / formula.blend.settings.cost_unit_in_mass_units


def largest_step_cost(blend: Blend, limit: Limit) -> float:
    """The largest cost change of one step of a limit: |shadow price|, or either one-sided
    rate where known, times its step (in the limit's own cost unit)."""
    step = limit_step(blend, limit)
    rates = [limit.shadow_price, limit.shadow_price_up or 0.0, limit.shadow_price_down or 0.0]
    return max(abs(rate * step) for rate in rates)


def binding_in_order(formula: Formula, limits=None, *, either_way: bool = False) -> list[Limit]:
    """The binding limits of `limits` (default: every limit of the run, each once), the
    largest cost of one step first, compared in the run's currency: a product's own
    limit's cost of a step times `in_run_currency`, a stock's as it is. The cost of a step
    is `step_worth` (the Result sheet's first page, the console), or with `either_way`
    `largest_step_cost` (the Shadow prices sheet, which shows both one-sided values)."""
    if limits is None:
        limits = [*formula.limits, *(limit for product in formula.products for limit in product.limits)]
    binding = [limit for limit in dict.fromkeys(limits) if limit.binding]
    blend = formula.blend

    def worth(limit: Limit) -> float:
        step_cost = largest_step_cost(blend, limit) if either_way else step_worth(blend, limit)[1]
        return step_cost * in_run_currency(formula, limit)

    return sorted(binding, key=lambda limit: -worth(limit))

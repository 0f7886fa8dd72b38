"""The units the writers print beside a number: costs, shadow prices, penalties, amounts.

One home for them, so the workbook, the console summary and any later writer word a unit
the same way. Each reads only the `Blend` (and, for a shadow price, the `Limit`).
"""

from __future__ import annotations

from blendkit.model.blend import DRY_MATTER, Blend, Settings
from blendkit.model.formula import Limit


def cost_unit(settings: Settings) -> str:
    """The blend cost's unit, e.g. "EUR per tonne"; "per tonne" when no currency is given."""
    return f"{settings.currency} per {settings.cost_per}".strip()


def run_cost_unit(blend: Blend) -> str:
    """The unit of `Formula.cost`: "EUR per tonne" for one blend, "EUR per day" for a
    diet (the whole day's diet) and "EUR" (the run's total) with several products."""
    settings = blend.settings
    if blend.diet:
        return f"{settings.currency} per day".strip()
    if blend.products:
        return settings.currency
    return cost_unit(settings)


def penalty_unit(blend: Blend) -> str:
    """A soft limit's penalty per unit of violation: "EUR per tonne" ("EUR per day"),
    or "cost per tonne" when no currency is given."""
    unit = run_cost_unit(blend) if blend.diet else cost_unit(blend.settings)
    return unit if blend.settings.currency else f"cost {unit}"


def ingredient_word(blend: Blend) -> str:
    """What a label calls an ingredient: "Food" in a diet, else "Ingredient"."""
    return "Food" if blend.diet else "Ingredient"


def kind_word(kind: str, blend: Blend) -> str:
    """A limit's kind as a sheet shows it: "food" for an ingredient limit in a diet."""
    return "food" if blend.diet and kind == "ingredient" else kind


def food_unit(blend: Blend, name: str) -> str:
    """A diet food's unit as written in its Unit cell (blank when unknown)."""
    try:
        return blend.ingredient(name).unit
    except KeyError:
        return ""


def stock_unit(blend: Blend, name: str) -> str:
    """The unit an ingredient's stock is counted in: the food's unit in a diet, else the
    mass unit."""
    return food_unit(blend, name) if blend.diet else blend.settings.mass_unit


def shadow_price_unit(limit: Limit, blend: Blend) -> str:
    """E.g. "EUR/tonne per 1 unit of Crude protein (%)" or "EUR/tonne per 1 % inclusion"."""
    settings = blend.settings
    per = f"{settings.currency or 'cost'}/{settings.cost_per}"
    if blend.diet:
        per = f"{settings.currency or 'cost'}"
    if limit.kind == "stock":
        total = settings.currency or "cost"
        if blend.diet:
            unit = blend.ingredient(limit.name).unit
            return f"{total} per unit ({unit}) of stock" if unit else f"{total} per unit of stock"
        return f"{total} per 1 {settings.mass_unit} of stock"
    if limit.kind in ("ingredient", "group"):
        if blend.diet:
            unit = blend.ingredient(limit.name).unit if limit.kind == "ingredient" else ""
            return f"{per} per unit ({unit})" if unit else f"{per} per unit"
        return f"{per} per 1 % inclusion"
    if limit.kind == "ratio":
        return f"{per} per 1 unit of the ratio {limit.name}"
    unit = blend.nutrient_units.get(limit.name, "")
    label = f"{limit.name} ({unit})" if unit else limit.name
    if limit.basis == DRY_MATTER:
        label += " in dry matter"
    return f"{per} per 1 unit of {label}"

"""Example: the record each worked example is, laid out the way its workbook is."""

from __future__ import annotations

from dataclasses import dataclass

# Short forms of the "Cost per" setting for the cost column header; others are written out.
COST_PER_SHORT = {"tonne": "t", "metric ton": "t"}


@dataclass(frozen=True)
class Example:
    """One worked example, laid out the way its workbook is.

    `nutrients` are the nutrient columns as (name, unit). Each row of `ingredients` is
    (name, cost, min, max, use, *extras, *contents): cost per `Cost per` (per the
    food's Unit in diet mode), limits in % (amounts in diet mode), then one value per
    `extra_columns` header (such as "Unit" or "Stock (t)"), then one content per
    nutrient column, in the same order. None is a blank cell (no limit, or a value not
    known, which the reader counts as 0). Each row of `specs` has one value per
    `spec_columns` header. `groups` rows are (group, ingredients, min, max) with a fifth
    value, the product, when any row has one. `products` rows are (product, amount in
    the mass unit) and `limits` rows (product, ingredient, min %, max %); both sheets
    are written only when they have rows, and so is the Combined sheet, from `combined`
    rows (nutrient, sum, unit). `settings` are the Settings sheet's rows in
    order. `notes` are the Notes sheet's paragraphs: the scenario and where the numbers
    come from.
    """

    file_stem: str
    settings: tuple[tuple[str, str | float], ...]
    nutrients: tuple[tuple[str, str], ...]
    ingredients: tuple[tuple, ...]  # (name, cost, min, max, use, *extras, *contents)
    specs: tuple[tuple, ...]
    notes: tuple[str, ...]
    extra_columns: tuple[str, ...] = ()
    spec_columns: tuple[str, ...] = ("Nutrient", "Min", "Max")
    groups: tuple[tuple, ...] = ()
    products: tuple[tuple[str, float], ...] = ()
    limits: tuple[tuple[str, str, float | None, float | None], ...] = ()
    combined: tuple[tuple[str, str, str], ...] = ()  # (nutrient, sum, unit): the Combined sheet

    @property
    def diet(self) -> bool:
        """True for a diet-mode example (Setting Mode = diet)."""
        return str(dict(self.settings).get("Mode", "blend")).lower() == "diet"

    @property
    def cost_header(self) -> str:
        """The Ingredients sheet's cost column header, e.g. ``Cost (EUR/t)``."""
        settings = dict(self.settings)
        if self.diet:
            return f"Cost ({settings['Currency']}/unit)"
        per = COST_PER_SHORT.get(str(settings["Cost per"]).lower(), settings["Cost per"])
        return f"Cost ({settings['Currency']}/{per})"

    @property
    def limit_unit(self) -> str:
        """The unit of ingredient and group limits: % of the blend, or units of each food."""
        return "units" if self.diet else "%"

    @property
    def mass_unit(self) -> str:
        """The Mass unit setting, for the Stock and Amount headers."""
        return str(dict(self.settings).get("Mass unit", "kg"))

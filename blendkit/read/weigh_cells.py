"""Cells of the rules a mill can weigh, read the same way on every sheet that has them.

``Min if used`` (Ingredients, Limits): 0 or at least this inclusion, in % of the blend
(diet mode: an amount in the food's unit); more than 0, at most 100 % in blend mode, and
not above the same row's Max. ``Pack size`` (Ingredients, Limits), ``Scale step``
(Ingredients, Settings) and ``Hand-add below`` (Settings): a mass in the mass unit, more
than 0; pack sizes and scale steps are for blend mode (a diet's amounts are in each
food's own unit). ``Max ingredients`` (Products, Settings): a whole number, 1 or more.
Blank means no rule. See `blendkit.model.weighing` for what each rule means.
"""

from __future__ import annotations

from blendkit.errors import Problem
from blendkit.read.cells import Cell
from blendkit.read.tables import Row
from blendkit.read.values import format_number, read_number


def read_min_if_used(row: Row, maximum: float | None, diet: bool, problems: list[Problem],
                     used: bool = True) -> float | None:
    """The row's Min if used (None when blank or absent); wrong values are reported. Above
    the row's Max it is wrong only while the row may be used: with Use = no (`used`
    False) or a Max of 0 the ingredient is already out, and the rule is kept for later."""
    cell = row.get("min if used")
    value = read_number(cell, "min if used", problems)
    if value is None:
        return None
    unit = "an amount in the food's unit" if diet else "in % of the blend"
    if value <= 0 or (not diet and value > 100):
        limits = "more than 0" if diet else "more than 0 and at most 100"
        problems.append(Problem(cell.ref, (
            f"min if used {format_number(value)} must be {limits} ({unit}): the ingredient is then either "
            "left out or used at least this much; leave it blank for no such rule"
        )))
        return None
    if used and maximum is not None and 0 < maximum < value:
        problems.append(Problem(cell.ref, (
            f"min if used {format_number(value)} is above max {format_number(maximum)} in {row['max'].ref}, "
            "so the ingredient could never be used; lower min if used, raise max, or set Use to no"
        )))
        return None
    return value


def read_mass(cell: Cell | None, what: str, mass_unit: str, diet: bool, problems: list[Problem]) -> float | None:
    """A pack size, scale step or hand-add threshold: a mass above 0 in the mass unit (None
    when blank or absent; wrong values and any value in diet mode are reported)."""
    value = read_number(cell, what, problems)
    if value is None:
        return None
    if diet:
        problems.append(Problem(cell.ref, (
            f"{what} is for blend mode (masses weighed per batch), and this workbook is a diet, whose "
            "amounts are in each food's own unit; clear the cell"
        )))
        return None
    if value <= 0:
        problems.append(Problem(cell.ref, (
            f"{what} {format_number(value)} must be more than 0; it is a mass in {mass_unit} "
            "(leave it blank for no such rule)"
        )))
        return None
    return value


def read_count(cell: Cell | None, what: str, problems: list[Problem]) -> int | None:
    """Max ingredients: a whole number, 1 or more (None when blank or absent; wrong values
    are reported)."""
    value = read_number(cell, what, problems)
    if value is None:
        return None
    if value < 1 or not float(value).is_integer():
        problems.append(Problem(cell.ref, (
            f"{what} {format_number(value)} must be a whole number, 1 or more: at most this many "
            "ingredients above 0 in a formula (leave it blank for no limit)"
        )))
        return None
    return int(value)


def check_diet_maxima(reading) -> None:
    """A diet under Max ingredients needs a Max on every food it may use: a food's Max is
    the size its 0/1 choice switches on (`blendkit.lp.weigh`); a food without one is
    reported on its Max cell (or its name when there is no Max column)."""
    settings = reading.settings
    if settings.mode != "diet" or settings.max_ingredients is None:
        return
    where = settings.cells.get("max ingredients", "Settings")
    for item in reading.ingredients:
        if item.use and item.maximum is None:
            reading.problems["Ingredients"].append(Problem(item.cells.get("max", item.cells["name"]), (
                f"{item.name} has no max, and the Max ingredients setting in {where} needs one for every food "
                "a diet may use (the most of it that makes sense); give it a max, or set Use to no"
            )))

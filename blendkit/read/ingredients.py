"""The Ingredients sheet (required), one row per ingredient.

``Ingredient``  required column; the name, unique ignoring case and spaces. A column
                headed ``Food`` (a diet's word) is read as this column when there is
                no ``Ingredient`` column.
``Cost``        required column; price per ``Cost per`` unit of mass (see Settings),
                or per the ingredient's unit in diet mode; any finite number (a
                negative price is a credit).
``Min``, ``Max`` optional columns; inclusion limits in % of the blend, each within
                0..100 (in diet mode: amounts in the ingredient's unit, 0 or more),
                and min <= max. Blank means no limit.
``Use``         optional column; yes/y/true/1 or no/n/false/0 (any case), or a
                TRUE/FALSE cell. Blank means yes. "no" holds the ingredient at 0.
``Unit``        optional column; text saying what one unit of the ingredient is
                ("100 g", "serving"). Used in diet mode; allowed and ignored in blend
                mode. Blank means none.
``Stock``       optional column; the quantity on hand in the mass unit (see
                Settings), 0 or more, shared by all products. Blank means no limit.
``Min if used`` optional column; the ingredient is either left out or used at least
                this much (% of the blend; diet: an amount), at most its Max.
``Pack size``   optional column; the ingredient's weight per batch is a whole number of
                packs of this mass (blend mode).
``Scale step``  optional column; the ingredient's weight per batch is a whole multiple of
                this mass (blend mode); overrides the Scale step setting. See
                `blendkit.read.weigh_cells`.
any other header is a nutrient column: the ingredient's content, as fed, in the unit
given in the header. A blank content cell counts as 0 and is listed in
`Ingredient.blanks`; negative contents are allowed. There may be no nutrient columns.
At least one ingredient row is required. A row with values but no name is an error.
"""

from __future__ import annotations

import dataclasses

from blendkit.errors import Problem
from blendkit.model.blend import Ingredient, Settings
from blendkit.read.bounds import check_min_max, read_inclusion
from blendkit.read.names import Names, read_row_name
from blendkit.read.reading import Reading
from blendkit.read.settings import DIET_MODE
from blendkit.read.tables import Column, Row, Table, Wanted, check_columns, empty_sheet
from blendkit.read.values import format_number, name_key, read_name, read_number, read_yes_no
from blendkit.read.weigh_cells import read_mass, read_min_if_used

INGREDIENTS = "Ingredients"

# The columns, by key (normalised header): header, what it is for, whether required. Any
# other header is a nutrient column.
_COLUMNS: Wanted = {
    "ingredient": ("Ingredient", "the name of each ingredient", True),
    "cost": ("Cost", "the price of each ingredient per Cost per unit of mass", True),
    "min": ("Min", "the least inclusion in % of the blend", False),
    "max": ("Max", "the most inclusion in % of the blend", False),
    "use": ("Use", "yes or no, whether the ingredient may be used", False),
    "unit": ("Unit", "what one unit of the ingredient is, in diet mode", False),
    "stock": ("Stock", "the quantity on hand in the mass unit", False),
    "min if used": ("Min if used", "0 or at least this inclusion", False),
    "pack size": ("Pack size", "weights per batch in whole packs of this mass", False),
    "scale step": ("Scale step", "weights per batch in whole multiples of this mass", False),
}

# The header a diet's food list may give its name column instead of "Ingredient".
_FOOD = "food"

# Ingredient cell keys as stored in Ingredient.cells, by column key.
_CELL_KEYS = {
    "ingredient": "name", "cost": "cost", "min": "min", "max": "max", "use": "use",
    "unit": "unit", "stock": "stock", "min if used": "min if used", "pack size": "pack size",
    "scale step": "scale step",
}


def read_ingredients_sheet(reading: Reading) -> None:
    """Read the Ingredients sheet into the ingredients, the nutrient columns and the
    ingredient names that other sheets refer to (a missing sheet is reported with the file)."""
    title = reading.titles[INGREDIENTS]
    reading.ingredient_names = Names(title, None)
    if not reading.has(INGREDIENTS):
        return
    table = reading.table(INGREDIENTS)
    problems = reading.problems[INGREDIENTS]
    if table is None:
        problems.append(empty_sheet(title, _COLUMNS))
        return
    reading.ingredients, reading.nutrients, reading.ingredient_names = read_ingredients(
        table, reading.settings, problems
    )


def read_ingredients(
    table: Table, settings: Settings, problems: list[Problem]
) -> tuple[list[Ingredient], list[Column], Names]:
    """The ingredients, the nutrient columns and every ingredient name of the Ingredients sheet."""
    table = _food_as_ingredient(table)
    nutrients = [column for column in table.columns if column.key not in _COLUMNS]
    missing = check_columns(table, _COLUMNS, problems)
    if "ingredient" in missing:
        return [], nutrients, Names(table.title, None)  # rows cannot be told apart without names

    ingredients: list[Ingredient] = []
    seen: dict[str, str] = {}  # name key -> cell of its first appearance
    names: dict[str, str] = {}  # name key -> name as written
    for row in table.rows:
        name, ingredient = _read_ingredient(row, nutrients, settings, seen, problems)
        if name is not None:
            names.setdefault(name_key(name), name)
        if ingredient is not None:
            ingredients.append(ingredient)

    if not table.rows:
        problems.append(Problem(table.header_ref, (
            "there are no ingredients under the header row; add at least one ingredient row"
        )))
    return ingredients, nutrients, Names(table.title, names)


def _food_as_ingredient(table: Table) -> Table:
    """The table with its Food column read as the Ingredient column, so a diet's list of
    foods may say "Food"; unchanged when it has an Ingredient column or no Food column."""
    keys = {column.key for column in table.columns}
    if "ingredient" in keys or _FOOD not in keys:
        return table
    columns = [dataclasses.replace(column, key="ingredient") if column.key == _FOOD else column
               for column in table.columns]
    rows = [{("ingredient" if key == _FOOD else key): cell for key, cell in row.items()}
            for row in table.rows]
    return dataclasses.replace(table, columns=columns, rows=rows)


def _read_ingredient(
    row: Row, nutrients: list[Column], settings: Settings, seen: dict[str, str], problems: list[Problem]
) -> tuple[str | None, Ingredient | None]:
    """One row: its name (None if unreadable) and its ingredient (None if the row has problems)."""
    problems_before = len(problems)
    diet = settings.mode == DIET_MODE
    name = read_row_name(row["ingredient"], "ingredient", seen, problems)
    unit = read_name(row.get("unit"), "unit", problems) or ""
    cost = _cost(row, unit, settings, problems)
    minimum = read_inclusion(row.get("min"), "min", diet, problems)
    maximum = read_inclusion(row.get("max"), "max", diet, problems)
    check_min_max(row, minimum, maximum, problems)
    use = read_yes_no(row.get("use"), "use", problems)
    stock = _stock(row, settings, problems)
    min_if_used = read_min_if_used(row, maximum, diet, problems, used=use is not False)
    pack = read_mass(row.get("pack size"), "pack size", settings.mass_unit, diet, problems)
    step = read_mass(row.get("scale step"), "scale step", settings.mass_unit, diet, problems)
    contents, blanks = _contents(row, nutrients, problems)
    if len(problems) > problems_before or name is None or cost is None or use is None:
        return name, None
    return name, Ingredient(
        name=name,
        cost=cost,
        minimum=minimum,
        maximum=maximum,
        use=use,
        contents=contents,
        blanks=tuple(blanks),
        cells={_CELL_KEYS[key]: cell.ref for key, cell in row.items() if key in _CELL_KEYS},
        content_cells={column.name: row[column.key].ref for column in nutrients},
        unit=unit,
        stock=stock,
        min_if_used=min_if_used,
        pack_size=pack,
        scale_step=step,
    )


def _cost(row: Row, unit: str, settings: Settings, problems: list[Problem]) -> float | None:
    """The row's cost; a blank one is reported with the unit it is priced per."""
    cost = read_number(row.get("cost"), "cost", problems)
    if "cost" in row and row["cost"].kind == "blank":
        currency = f"{settings.currency} " if settings.currency else ""
        per = (unit or "unit written in the Unit column") if settings.mode == DIET_MODE else settings.cost_per
        problems.append(Problem(row["cost"].ref, (
            f"cost is blank; type the price of this ingredient ({currency}per {per})"
        )))
    return cost


def _stock(row: Row, settings: Settings, problems: list[Problem]) -> float | None:
    """The row's stock (None when blank); one below 0 is reported."""
    stock = read_number(row.get("stock"), "stock", problems)
    if stock is not None and stock < 0:
        problems.append(Problem(row["stock"].ref, (
            f"stock {format_number(stock)} is below 0; it is the quantity on hand in {settings.mass_unit} "
            "(blank means no limit)"
        )))
    return stock


def _contents(
    row: Row, nutrients: list[Column], problems: list[Problem]
) -> tuple[dict[str, float], list[str]]:
    """The row's nutrient contents (blank counts as 0) and the nutrients left blank."""
    contents: dict[str, float] = {}
    blanks: list[str] = []
    for column in nutrients:
        cell = row[column.key]
        if cell.kind == "blank":
            contents[column.name] = 0.0
            blanks.append(column.name)
            continue
        content = read_number(cell, column.name, problems)
        if content is not None:
            contents[column.name] = content
    return contents, blanks

"""The Limits sheet (optional), one row per ingredient limit in one product.

``Product``, ``Ingredient``, ``Min``, ``Max`` required columns. The product must be
listed in Products and the ingredient in Ingredients; each (product, ingredient) pair
at most once. Min and Max follow the rules of Ingredients' Min and Max, and at least
one is given (or a Min if used or a Pack size). They replace the ingredient's own Min
and Max in that product; a row with neither keeps the ingredient's own.
``Priority`` optional, as in Specs.
``Min if used``, ``Pack size`` optional, as on Ingredients; they replace the
ingredient's own in that product (see `blendkit.read.weigh_cells`).
"""

from __future__ import annotations

import dataclasses

from blendkit.errors import Problem
from blendkit.model.blend import Ingredient, ProductLimit, Settings
from blendkit.read.bounds import bounds_unread, check_min_max, neither_bound, read_inclusion, read_priority
from blendkit.read.cells import Cell
from blendkit.read.names import ADD_PRODUCTS, Names, refer
from blendkit.read.reading import Reading
from blendkit.read.settings import DIET_MODE
from blendkit.read.tables import Row, Table, Wanted, check_columns
from blendkit.read.values import format_number, name_key, read_name
from blendkit.read.weigh_cells import read_mass, read_min_if_used

LIMITS = "Limits"

# The columns, by key (normalised header): header, what it is for, whether required.
_COLUMNS: Wanted = {
    "product": ("Product", "the product the row applies to", True),
    "ingredient": ("Ingredient", "the ingredient the row limits", True),
    "min": ("Min", "the least inclusion of the ingredient in the product", True),
    "max": ("Max", "the most inclusion of the ingredient in the product", True),
    "priority": ("Priority", "which limits give way first when limits conflict", False),
    "min if used": ("Min if used", "0 or at least this inclusion in the product", False),
    "pack size": ("Pack size", "weights per batch in whole packs of this mass", False),
}


def read_limits_sheet(reading: Reading) -> None:
    """Read the Limits sheet, if any, into the product-specific ingredient limits."""
    table = reading.table(LIMITS)
    if table is not None:
        limits = read_limits(
            table, reading.ingredient_names, reading.product_names, reading.settings, reading.problems[LIMITS]
        )
        own = {item.name: item for item in reading.ingredients}
        reading.limits = [_own_bounds(limit, own.get(limit.ingredient), reading.problems[LIMITS])
                          for limit in limits]


def _own_bounds(limit: ProductLimit, item: Ingredient | None, problems: list[Problem]) -> ProductLimit:
    """A row with only a Min if used or a Pack size keeps the ingredient's own Min and Max
    (and their cells); its Min if used above that Max is reported."""
    if limit.minimum is not None or limit.maximum is not None or item is None:
        return limit
    cells = {**limit.cells, "min": item.cells.get("min"), "max": item.cells.get("max")}
    if limit.min_if_used is not None and item.maximum is not None and 0 < item.maximum < limit.min_if_used:
        problems.append(Problem(limit.cells["min if used"], (
            f"min if used {format_number(limit.min_if_used)} is above the max {format_number(item.maximum)} of "
            f"{item.name} in {item.cells['max']}, so it could never be used in {limit.product}; lower min if "
            "used, or give this row a Max"
        )))
    return dataclasses.replace(limit, minimum=item.minimum, maximum=item.maximum, cells=cells)


def read_limits(
    table: Table, ingredients: Names, products: Names, settings: Settings, problems: list[Problem]
) -> list[ProductLimit]:
    """The product-specific inclusion limits of the Limits sheet."""
    missing = check_columns(table, _COLUMNS, problems)
    if missing & {"product", "ingredient"}:
        return []
    diet = settings.mode == DIET_MODE
    limits: list[ProductLimit] = []
    seen: dict[tuple[str, str], str] = {}  # (product key, ingredient key) -> cell of the first
    for row in table.rows:
        limit = _read_limit(row, ingredients, products, diet, seen, problems)
        if limit is not None:
            limit = _weigh_rules(row, limit, settings, problems)
        if limit is not None:
            limits.append(limit)
    return limits


def _weigh_rules(row: Row, limit: ProductLimit, settings: Settings, problems: list[Problem]) -> ProductLimit | None:
    """The limit with the row's Min if used and Pack size; None when either is wrong (reported)."""
    problems_before = len(problems)
    diet = settings.mode == DIET_MODE
    min_if_used = read_min_if_used(row, limit.maximum, diet, problems)
    pack = read_mass(row.get("pack size"), "pack size", settings.mass_unit, diet, problems)
    if len(problems) > problems_before:
        return None
    cells = dict(limit.cells)
    cells.update({key: row[key].ref for key in ("min if used", "pack size") if key in row})
    return dataclasses.replace(limit, min_if_used=min_if_used, pack_size=pack, cells=cells)


def _has_rule(row: Row) -> bool:
    """True when the row gives a Min if used or a Pack size (so needs no Min or Max)."""
    return any(key in row and row[key].kind != "blank" for key in ("min if used", "pack size"))


def _read_limit(
    row: Row, ingredients: Names, products: Names, diet: bool, seen: dict[tuple[str, str], str],
    problems: list[Problem],
) -> ProductLimit | None:
    """One row's limit; None when the row has problems (reported) or no usable bounds."""
    problems_before = len(problems)
    product, ingredient = _product_and_ingredient(row, ingredients, products, seen, problems)
    minimum = read_inclusion(row.get("min"), "min", diet, problems)
    maximum = read_inclusion(row.get("max"), "max", diet, problems)
    if neither_bound(row) and not _has_rule(row) and product is not None and ingredient is not None:
        problems.append(Problem(row["ingredient"].ref, (
            f'the limit for "{ingredient}" in "{product}" has neither a min nor a max; give at '
            "least one, or delete the row"
        )))
    check_min_max(row, minimum, maximum, problems)
    if len(problems) > problems_before or product is None or ingredient is None:
        return None
    if bounds_unread(row):
        return None
    return ProductLimit(
        product=product,
        ingredient=ingredient,
        minimum=minimum,
        maximum=maximum,
        cells={key: cell.ref for key, cell in row.items() if key in _COLUMNS},
        priority=read_priority(row.get("priority"), problems),
    )


def _product_and_ingredient(
    row: Row, ingredients: Names, products: Names, seen: dict[tuple[str, str], str], problems: list[Problem]
) -> tuple[str | None, str | None]:
    """The product and the ingredient a row names (None when blank or unknown, reported);
    a pair already limited is reported on the ingredient."""
    product = _named(row["product"], "product", products, problems, adding=ADD_PRODUCTS, if_blank=(
        "this row has no product; type the product the limit applies to, or clear the row"
    ))
    ingredient = _named(row["ingredient"], "ingredient", ingredients, problems, if_blank=(
        "this row has no ingredient; type the ingredient to limit, or clear the row"
    ))
    if product is not None and ingredient is not None:
        pair = (name_key(product), name_key(ingredient))
        if pair in seen:
            problems.append(Problem(row["ingredient"].ref, (
                f'"{ingredient}" already has a limit for product "{product}" in {seen[pair]}; '
                "put both bounds in one row and delete the other"
            )))
        else:
            seen[pair] = row["ingredient"].ref
    return product, ingredient


def _named(
    cell: Cell, what: str, names: Names, problems: list[Problem], *, if_blank: str, adding: str = ""
) -> str | None:
    """The product or ingredient a cell names, as written where defined; None when blank or
    unknown (reported, with `if_blank` for a blank cell)."""
    if cell.kind == "blank":
        problems.append(Problem(cell.ref, if_blank))
        return None
    text = read_name(cell, what, problems)
    if text is None:
        return None
    return refer(cell, text, what, names, problems, adding=adding)

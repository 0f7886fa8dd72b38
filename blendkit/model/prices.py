"""A price list shared by several workbooks, and what applying it to one of them does.

A price list is a workbook whose Ingredients sheet has the headers of ours: Ingredient,
Cost, and any nutrient columns and Stock. Applied to a blend, every value it gives (a
blank gives nothing) replaces the blend's value for the ingredient of the same name:
names and nutrient headers are matched as the reader matches them (ignoring case and runs
of spaces; a header's trailing unit must agree). The blend keeps the cell each replaced
value belongs to, so the output can show the value used there and mark it.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

from blendkit.model.blend import Blend, Ingredient
from blendkit.model.combined import add_combined_contents


@dataclass(frozen=True)
class PriceEntry:
    """One row of a price list: the values it gives for one ingredient.

    `key` is the name as the reader compares names; `contents` maps nutrient keys to
    values; `cells` maps "cost", "stock" and nutrient keys to the price list's cells.
    """

    name: str
    key: str
    cost: float | None
    stock: float | None
    contents: dict[str, float]
    cells: dict[str, str]


@dataclass(frozen=True)
class PriceList:
    """A whole price list: its file name, SHA-256, entries and nutrient columns.

    `units` maps each nutrient key to the unit in its header, `names` to the header's
    name as written.
    """

    file_name: str
    sha256: str
    entries: tuple[PriceEntry, ...]
    units: dict[str, str]
    names: dict[str, str]


@dataclass(frozen=True)
class Replacement:
    """One value of a workbook replaced from the price list: the workbook's cell, the value
    it held and the value used, and where in the price list that came from."""

    cell: str
    before: float | None
    after: float
    source: str


def apply_price_list(blend: Blend, prices: PriceList, key) -> tuple[Blend, tuple[Replacement, ...], tuple[str, ...]]:
    """`blend` with the price list's values, the replacements made and notes.

    `key` is the reader's name comparison (text -> key), passed in so that the model does
    not depend on the reader. Notes name the ingredients the price list lacks (they keep
    their own values) and nutrient columns whose units differ (not applied).
    """
    entries = {entry.key: entry for entry in prices.entries}
    columns, notes = _matching_columns(blend, prices, key)
    ingredients, replaced, missing = [], [], []
    for item in blend.ingredients:
        entry = entries.get(key(item.name))
        if entry is None:
            missing.append(item.name)
            ingredients.append(item)
            continue
        item, changes = _replaced(item, entry, columns, prices.file_name)
        if blend.combined:  # a combined nutrient's content follows the contents it adds
            item = dataclasses.replace(item, contents=add_combined_contents(item.contents, blend.combined))
        ingredients.append(item)
        replaced.extend(changes)
    if any(entry.stock is not None for entry in prices.entries) and not any("stock" in item.cells for item in blend.ingredients):
        notes.append(f"The price list {prices.file_name} gives stocks, but the workbook has no Stock column: not applied")
    if missing:
        notes.append(f"Not in the price list {prices.file_name}, so kept their own values: {', '.join(missing)}")
    return dataclasses.replace(blend, ingredients=tuple(ingredients)), tuple(replaced), tuple(notes)


def _matching_columns(blend: Blend, prices: PriceList, key) -> tuple[dict[str, str], list[str]]:
    """The blend's nutrient columns the price list gives (nutrient -> price-list key), and a
    note for each one skipped because its unit differs."""
    columns, notes = {}, []
    combined = {item.name for item in blend.combined}
    for nutrient in blend.nutrients:
        if nutrient in combined:
            continue  # a sum of other nutrients (recomputed after them), never a price-list column
        column = key(nutrient)
        if column not in prices.units:
            continue
        ours, theirs = blend.nutrient_units.get(nutrient, ""), prices.units[column]
        if key(ours) != key(theirs):
            notes.append(
                f'Price list column "{prices.names[column]} ({theirs})" not applied: the workbook '
                f'gives {nutrient} in "{ours}"'
            )
            continue
        columns[nutrient] = column
    return columns, notes


def _replaced(item: Ingredient, entry: PriceEntry, columns: dict[str, str], file_name: str):
    """One ingredient with the entry's values, and the replacements made."""
    changes: list[Replacement] = []
    cost, stock = item.cost, item.stock
    if entry.cost is not None:
        cost = entry.cost
        changes.append(Replacement(item.cells.get("cost", item.cells["name"]), item.cost, entry.cost,
                                   f"{file_name} {entry.cells['cost']}"))
    if entry.stock is not None and "stock" in item.cells:  # a workbook without Stock takes none
        stock = entry.stock
        changes.append(Replacement(item.cells.get("stock", item.cells["name"]), item.stock, entry.stock,
                                   f"{file_name} {entry.cells['stock']}"))
    contents, blanks = dict(item.contents), list(item.blanks)
    for nutrient, column in columns.items():
        if column in entry.contents:
            before = None if nutrient in blanks else item.contents.get(nutrient)
            contents[nutrient] = entry.contents[column]
            if nutrient in blanks:
                blanks.remove(nutrient)
            changes.append(Replacement(item.content_cells.get(nutrient, item.cells["name"]), before,
                                       entry.contents[column], f"{file_name} {entry.cells[column]}"))
    item = dataclasses.replace(item, cost=cost, stock=stock, contents=contents, blanks=tuple(blanks))
    return item, changes

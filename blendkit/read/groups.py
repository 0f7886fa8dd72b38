"""The Groups sheet (optional), one row per bound on the total inclusion of some ingredients.

``Group``       required column; the name, unique ignoring case and spaces.
``Ingredients`` required column; ingredient names from Ingredients separated by
                commas or semicolons, at least one, each once. A name that itself
                holds a comma or semicolon is recognised when it matches an
                ingredient; the longest match wins. Stored as the names in
                Ingredients, in the order listed.
``Min``, ``Max`` required columns; at least one given in each row, min <= max; % of
                the blend within 0..100 (diet mode: total amount, 0 or more).
``Product``     optional column, as in Specs.
``Priority``    optional column, as in Specs.
"""

from __future__ import annotations

import re

from blendkit.errors import Problem
from blendkit.model.blend import Group, Settings
from blendkit.read.bounds import bounds_unread, check_min_max, neither_bound, read_inclusion, read_priority
from blendkit.read.cells import Cell
from blendkit.read.names import Names, read_row_name, refer, row_product
from blendkit.read.reading import Reading
from blendkit.read.settings import DIET_MODE
from blendkit.read.tables import Row, Table, Wanted, check_columns
from blendkit.read.values import name_key, read_name

GROUPS = "Groups"

# The columns, by key (normalised header): header, what it is for, whether required.
_COLUMNS: Wanted = {
    "group": ("Group", "the name of each group", True),
    "ingredients": ("Ingredients", "the ingredients of the group, separated by commas", True),
    "min": ("Min", "the least total inclusion of the group", True),
    "max": ("Max", "the most total inclusion of the group", True),
    "product": ("Product", "the product the row applies to; blank for every product", False),
    "priority": ("Priority", "which limits give way first when limits conflict", False),
}

# Group ingredient lists: names separated by commas or semicolons (kept, for rejoining).
_LIST_SEPARATOR = re.compile(r"([,;])")


def read_groups_sheet(reading: Reading) -> None:
    """Read the Groups sheet, if any, into the groups."""
    table = reading.table(GROUPS)
    if table is not None:
        reading.groups = read_groups(
            table, reading.ingredient_names, reading.product_names, reading.settings, reading.problems[GROUPS]
        )


def read_groups(
    table: Table, ingredients: Names, products: Names, settings: Settings, problems: list[Problem]
) -> list[Group]:
    """The groups of the Groups sheet."""
    missing = check_columns(table, _COLUMNS, problems)
    if "group" in missing:
        return []
    diet = settings.mode == DIET_MODE
    groups: list[Group] = []
    seen: dict[str, str] = {}  # name key -> cell of its first appearance
    for row in table.rows:
        group = _read_group(row, ingredients, products, diet, seen, problems)
        if group is not None:
            groups.append(group)
    return groups


def _read_group(
    row: Row, ingredients: Names, products: Names, diet: bool, seen: dict[str, str], problems: list[Problem]
) -> Group | None:
    """One row's group; None when the row has problems (reported) or no usable bounds."""
    problems_before = len(problems)
    name = read_row_name(row["group"], "group", seen, problems)
    members: list[str] = []
    if "ingredients" in row:
        members = _group_members(row["ingredients"], name, ingredients, problems)
    minimum = read_inclusion(row.get("min"), "min", diet, problems, of="group limits")
    maximum = read_inclusion(row.get("max"), "max", diet, problems, of="group limits")
    if neither_bound(row) and name is not None:
        problems.append(Problem(row["group"].ref, (
            f'the group "{name}" has neither a min nor a max; give at least one, or delete the row'
        )))
    check_min_max(row, minimum, maximum, problems)
    product_ok, product = row_product(row, products, problems)
    if len(problems) > problems_before or name is None or not members or not product_ok:
        return None
    if bounds_unread(row):
        return None
    return Group(
        name=name,
        ingredients=tuple(members),
        minimum=minimum,
        maximum=maximum,
        cells={key: cell.ref for key, cell in row.items() if key in _COLUMNS},
        product=product,
        priority=read_priority(row.get("priority"), problems),
    )


def _group_members(cell: Cell, group: str | None, ingredients: Names, problems: list[Problem]) -> list[str]:
    """The ingredients a group's Ingredients cell lists, as named in Ingredients (problems reported)."""
    if cell.kind == "blank":
        named = f' "{group}"' if group else ""
        problems.append(Problem(cell.ref, (
            f"the group{named} lists no ingredients; list them separated by commas or semicolons, "
            'as in "Maize, Wheat"'
        )))
        return []
    text = read_name(cell, "ingredient list", problems)
    if text is None:
        return []
    members: list[str] = []
    for written in _split_list(text, ingredients.names):
        member = refer(cell, written, "ingredient", ingredients, problems)
        if member is None:
            continue
        if member in members:
            problems.append(Problem(cell.ref, (
                f'the ingredient "{member}" is listed twice in this group; list each ingredient once'
            )))
            continue
        members.append(member)
    return members


def _split_list(text: str, known: dict[str, str] | None) -> list[str]:
    """Split a list of names at commas and semicolons, keeping together any run of pieces
    that is a known name holding a separator (the longest such run wins)."""
    pieces = _LIST_SEPARATOR.split(text)  # name, separator, name, ... , name
    names = pieces[0::2]
    found: list[str] = []
    start = 0
    while start < len(names):
        end = start  # the last piece of the name that starts at `start`
        if known:
            for last in range(len(names) - 1, start, -1):
                joined = "".join(pieces[2 * start: 2 * last + 1]).strip()
                if name_key(joined) in known:
                    end = last
                    break
        name = "".join(pieces[2 * start: 2 * end + 1]).strip()
        if name:
            found.append(name)
        start = end + 1
    return found

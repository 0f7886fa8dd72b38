"""The dry-matter column: the nutrient column the ``Dry matter`` setting names.

Dry-matter specs bound levels per unit of dry matter, so they need this column: it must
exist, be in % (or have no unit) and hold 0..100 in every ingredient. The Settings sheet
names it, the Ingredients sheet holds it and the Specs sheet uses it, so it is found once
both Settings and Ingredients are read, and checked once the Specs are.
"""

from __future__ import annotations

from dataclasses import replace

from blendkit.errors import Problem
from blendkit.model.blend import Settings
from blendkit.read.ingredients import INGREDIENTS
from blendkit.read.names import nutrient_suggestions
from blendkit.read.reading import Reading
from blendkit.read.settings import SETTINGS
from blendkit.read.tables import Column, Table, find_column
from blendkit.read.values import format_number, name_key, read_number


def find_dry_matter_column(reading: Reading) -> None:
    """Find the column the Dry matter setting names, and store the setting as that column's
    name in the Ingredients header (a named column that is missing is reported on Settings)."""
    reading.settings, reading.dry_matter = resolve_dry_matter(
        reading.settings, reading.nutrients, reading.titles[INGREDIENTS], reading.problems[SETTINGS]
    )


def resolve_dry_matter(
    settings: Settings, nutrients: list[Column] | None, ingredients_title: str, problems: list[Problem]
) -> tuple[Settings, Column | None]:
    """The settings with Dry matter named as in the header, and its column (None if none)."""
    if nutrients is None:
        return settings, None  # the Ingredients header could not be read
    column, name, _unit = find_column(settings.dry_matter, {column.key: column for column in nutrients})
    if column is not None:
        return replace(settings, dry_matter=column.name), column
    if "dry matter" in settings.cells:
        known = {column.key: column.name for column in nutrients}
        problems.append(Problem(settings.cells["dry matter"], (
            f'dry matter "{settings.dry_matter}" is not a nutrient column of {ingredients_title}; '
            "name the column that holds dry matter in % as fed"
            + nutrient_suggestions(name, known, ingredients_title)
        )))
    return settings, None


def check_dry_matter_column(table: Table, column: Column, used_at: str, problems: list[Problem]) -> None:
    """Dry-matter specs (the first in `used_at`) need dry matter in %, within 0..100."""
    if column.unit and name_key(column.unit) != "%":
        problems.append(Problem(column.ref, (
            f'the dry-matter column "{column.name}" is in "{column.unit}", but dry-matter specs '
            f"(as in {used_at}) need dry matter in % as fed; give the column in % and head it "
            f'"{column.name} (%)"'
        )))
        return
    for row in table.rows:
        cell = row[column.key]
        content = read_number(cell, column.name, [])  # a cell that is not a number is already reported
        if content is not None and not 0 <= content <= 100:
            problems.append(Problem(cell.ref, (
                f"{column.name} {format_number(content)} is outside 0 to 100; dry-matter specs (as in "
                f"{used_at}) need dry matter in % as fed"
            )))

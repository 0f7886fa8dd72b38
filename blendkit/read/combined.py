"""The Combined sheet (optional), one row per combined nutrient: a new nutrient whose level
is a sum of other nutrients, each times a number.

``Nutrient``  required column; the new nutrient's name, unique ignoring case and spaces,
              and not the name of a nutrient column of Ingredients. A trailing "(unit)"
              is its unit when the Unit cell is blank, as in a header.
``Sum``       required column; numbers times nutrients joined by + and -, as in
              ``434.8 * Sodium + 255.8 * Potassium - 282.1 * Chloride`` (the syntax is
              in `blendkit.read.sums`). A nutrient is a nutrient column of Ingredients,
              named as Specs names it (``Sodium`` or ``Sodium (%)`` for the column
              ``Sodium (%)``), or another combined nutrient of this sheet, in any row,
              as long as no nutrient refers back to itself.
``Unit``      optional column; the unit of the combined level (blank for none).

A combined nutrient is a nutrient like any other from here on: Specs may bound it (also on
a dry-matter basis and in ratios), and the results show its level. Each ingredient's
content of it is the same sum of its contents (`blendkit.model.combined`).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

from blendkit.errors import Problem
from blendkit.model.combined import Combined, add_combined_contents
from blendkit.read.cells import Cell
from blendkit.read.ingredients import INGREDIENTS
from blendkit.read.names import nutrient_suggestions, read_row_name
from blendkit.read.reading import Reading
from blendkit.read.sums import SumError, parse_sum
from blendkit.read.tables import Column, Row, Table, Wanted, check_columns, find_column
from blendkit.read.values import name_key, read_name, split_unit

COMBINED = "Combined"

# The columns, by key (normalised header): header, what it is for, whether required.
_COLUMNS: Wanted = {
    "nutrient": ("Nutrient", "the name of the combined nutrient", True),
    "sum": ("Sum", "the nutrients it adds, each times a number, as in 2 * Calcium + Phosphorus", True),
    "unit": ("Unit", "the unit of the combined level", False),
}


@dataclass
class _Row:
    """One Combined row being read: its name column, Sum cell and the terms found."""

    column: Column
    sum_cell: Cell
    cells: dict[str, str]
    text: str = ""
    terms: list[tuple[float, Column]] | None = None  # None when the Sum has problems


def read_combined_sheet(reading: Reading) -> None:
    """Read the Combined sheet: its nutrients join the nutrient columns (for Specs), and each
    ingredient gains its content of them (only when the whole sheet is right)."""
    table = reading.table(COMBINED)
    if table is None or reading.nutrients is None:
        return  # no sheet, nothing in it, or Ingredients' header unreadable (reported there)
    problems = reading.problems[COMBINED]
    if check_columns(table, _COLUMNS, problems) & {"nutrient", "sum"}:
        return
    before = len(problems)
    rows = _rows(table, reading.nutrients, reading.titles[INGREDIENTS], problems)
    by_key = {column.key: column for column in [*reading.nutrients, *(row.column for row in rows)]}
    for row in rows:
        row.terms = _terms(row, by_key, reading.titles[INGREDIENTS], problems)
    ordered = _ordered(rows, problems)
    reading.nutrients = [*reading.nutrients, *(row.column for row in ordered)]
    if len(problems) > before or any(row.terms is None for row in ordered):
        return  # reported (an unsaved formula in a Sum was reported with the table)
    combined = tuple(
        Combined(name=row.column.name, terms=tuple((number, part.name) for number, part in row.terms),
                 unit=row.column.unit, cells=row.cells, text=row.text)
        for row in ordered
    )
    reading.combined = list(combined)
    reading.ingredients = [
        dataclasses.replace(item, contents=add_combined_contents(item.contents, combined))
        for item in reading.ingredients
    ]


def _rows(table: Table, nutrients: list[Column], ingredients_title: str, problems: list[Problem]) -> list[_Row]:
    """Each row with a usable name (blank, repeated and clashing names are reported)."""
    columns = {column.key: column for column in nutrients}
    seen: dict[str, str] = {}
    rows = []
    for row in table.rows:
        name_cell = row["nutrient"]
        text = read_row_name(name_cell, "combined nutrient", seen, problems)
        unit_text = read_name(row.get("unit"), "unit", problems) or ""
        if text is None:
            continue
        name, unit = _name_and_unit(text, unit_text)
        clash = columns.get(name_key(name)) or columns.get(name_key(text))
        if clash is not None:
            problems.append(Problem(name_cell.ref, (
                f'"{name}" is already a nutrient column of {ingredients_title} ({clash.ref}); '
                "give the combined nutrient a name of its own"
            )))
            continue
        ratio = _ratio_of(name, columns)
        if ratio is not None:
            problems.append(Problem(name_cell.ref, (
                f'"{name}" reads as the ratio of {ratio[0]} to {ratio[1]}, which Specs could then never bound '
                f'(a spec naming it would mean this combined nutrient); give it another name, such as '
                f'"{ratio[0]} and {ratio[1]}"'
            )))
            continue
        column = Column(key=name_key(name), name=name, unit=unit, index=0, ref=name_cell.ref)
        rows.append(_Row(column=column, sum_cell=row["sum"], cells=_cells(row)))
    return rows


def _ratio_of(name: str, columns: dict[str, Column]) -> tuple[str, str] | None:
    """The two nutrient columns a name "A / B" would be a ratio of on Specs, or None."""
    parts = name.split("/")
    if len(parts) != 2:
        return None
    found = [columns.get(name_key(split_unit(part)[0])) for part in parts]
    return None if None in found else (found[0].name, found[1].name)


def _cells(row: Row) -> dict[str, str]:
    """Where a combined nutrient was read: its Nutrient and Sum cells, and Unit if present."""
    return {key: row[key].ref for key in ("nutrient", "sum", "unit") if key in row}


def _name_and_unit(text: str, unit: str) -> tuple[str, str]:
    """The name and unit of a Nutrient cell: with a Unit cell, the name is the text less a
    trailing "(unit)" equal to it, else the whole text; without, "(unit)" is split off."""
    name, written = split_unit(text)
    if not unit:
        return name, written
    if written and name_key(written) == name_key(unit):
        return name, unit
    return text.strip(), unit


def _terms(
    row: _Row, by_key: dict[str, Column], ingredients_title: str, problems: list[Problem]
) -> list[tuple[float, Column]] | None:
    """The row's Sum as (number, nutrient) pairs; None when it has problems (reported)."""
    cell = row.sum_cell
    if cell.kind == "blank":
        problems.append(Problem(cell.ref, (
            f'the Sum of "{row.column.name}" is blank; write the nutrients it adds, each times a number, '
            "as in 434.8 * Sodium + 255.8 * Potassium - 282.1 * Chloride"
        )))
        return None
    text = read_name(cell, "sum", problems)
    if text is None:
        return None
    row.text = text
    try:
        parsed = parse_sum(text, lambda name: find_column(name, by_key)[0] is not None)
    except SumError as error:
        problems.append(Problem(cell.ref, f'Sum "{text}": {error}'))
        return None
    terms, before = [], len(problems)
    for term in parsed:
        column = _part(cell, text, term.name, by_key, ingredients_title, problems)
        if column is not None:
            terms.append((term.number, column))
    return terms if len(problems) == before else None


def _part(
    cell: Cell, text: str, name: str, by_key: dict[str, Column], ingredients_title: str, problems: list[Problem]
) -> Column | None:
    """The nutrient a term names (None when unknown or in another unit, reported)."""
    column, shown, unit = find_column(name, by_key)
    if column is None:
        known = {key: column.name for key, column in by_key.items()}
        problems.append(Problem(cell.ref, (
            f'Sum "{text}": "{shown}" is neither a nutrient column of {ingredients_title} nor a '
            f"combined nutrient" + nutrient_suggestions(shown, known, ingredients_title)
        )))
    elif unit and column.unit and name_key(unit) != name_key(column.unit):
        problems.append(Problem(cell.ref, (
            f'Sum "{text}": "{name}" is in "{unit}" but "{column.name}" ({column.ref}) is in '
            f'"{column.unit}"; write the name without a unit, or with "{column.unit}"'
        )))
        return None
    return column


def _ordered(rows: list[_Row], problems: list[Problem]) -> list[_Row]:
    """The rows with each after the combined nutrients it refers to (row order otherwise);
    a nutrient that refers back to itself, directly or through others, is reported."""
    by_key = {row.column.key: row for row in rows}
    done: dict[str, bool] = {}  # key -> finished (False while being visited)
    ordered: list[_Row] = []

    def visit(row: _Row, path: list[_Row]) -> None:
        """Place `row` after its parts; report the circle when one is met."""
        key = row.column.key
        if done.get(key) is False:
            _report_circle(path[path.index(row):] + [row], problems)
            return
        if key in done:
            return
        done[key] = False
        for _number, part in row.terms or []:
            if part.key in by_key:
                visit(by_key[part.key], [*path, row])
        done[key] = True
        ordered.append(row)

    for row in rows:
        visit(row, [])
    return ordered


def _report_circle(circle: list[_Row], problems: list[Problem]) -> None:
    """Report a combined nutrient that refers back to itself, on its Sum cell."""
    first = circle[0]
    if len(circle) == 2:
        message = f'the Sum of "{first.column.name}" refers to "{first.column.name}" itself'
    else:
        path = " -> ".join(f'"{row.column.name}"' for row in circle)
        message = f'"{first.column.name}" refers back to itself through other combined nutrients ({path})'
    problems.append(Problem(first.sum_cell.ref, (
        f"{message}; a combined nutrient may use other combined nutrients, but never itself"
    )))

"""A sheet's table: its header row of named columns and its non-blank data rows.

How a table is found and its headers compared is in the `blendkit.read` docstring (Tables,
Headers).
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass, field

from openpyxl.utils import get_column_letter

from blendkit.errors import Problem
from blendkit.read.cells import Cell, read_cell, unsaved_message
from blendkit.read.values import as_text, name_key, split_unit

# What a sheet's reader wants of its columns: column key (normalised header) ->
# (header as written in messages, what the column is for, whether it is required).
Wanted = dict[str, tuple[str, str, bool]]

# A data row: its cells by column key, one for each headed column.
Row = dict[str, Cell]


@dataclass(frozen=True)
class Column:
    """One headed column: normalised key, name and unit as written, position."""

    key: str
    name: str
    unit: str
    index: int  # 1-based column number
    ref: str  # the header cell


@dataclass
class Table:
    """A sheet's header and its non-blank data rows, cells keyed by column key."""

    title: str
    header_row: int
    columns: list[Column]
    rows: list[Row] = field(default_factory=list)

    @property
    def header_ref(self) -> str:
        """The header row as a row reference, such as ``Ingredients!1:1``."""
        return f"{self.title}!{self.header_row}:{self.header_row}"


def read_table(values_sheet, formulas_sheet, problems: list[Problem]) -> Table | None:
    """The sheet's table (None if the sheet is empty); header problems go to `problems`.

    Only the cells the sheet stores are read, so a cell formatted far below the table
    costs nothing: the reader never walks the empty grid up to the last used row.
    """
    grid = stored_cells(values_sheet, formulas_sheet)
    table: Table | None = None
    for row_number in sorted(grid):
        cells = grid[row_number]
        if table is None:
            if all(cell.kind == "blank" for cell in cells.values()):
                continue
            table = Table(values_sheet.title, row_number, _read_header(cells, problems))
            continue
        picked = {
            column.key: cells.get(column.index) or blank_cell(values_sheet.title, row_number, column.index)
            for column in table.columns
        }
        if all(cell.kind == "blank" for cell in picked.values()):
            continue
        for cell in picked.values():
            if cell.kind == "unsaved":
                problems.append(Problem(cell.ref, unsaved_message(cell)))
        table.rows.append(picked)
    return table


def stored_cells(values_sheet, formulas_sheet) -> dict[int, dict[int, Cell]]:
    """Every cell either load of the sheet stores, by row and column number.

    openpyxl keeps a sheet's stored cells in `_cells`, keyed (row, column); reading that
    map rather than `iter_rows` avoids making a cell object for every empty position of
    the used range. A position stored in one load only is read as empty in the other.
    """
    title = values_sheet.title
    grid: dict[int, dict[int, Cell]] = {}
    for position in values_sheet._cells.keys() | formulas_sheet._cells.keys():
        row, column = position
        value_cell = values_sheet._cells.get(position)
        formula_cell = formulas_sheet._cells.get(position)
        if value_cell is None or formula_cell is None:
            value_cell = value_cell or values_sheet.cell(row=row, column=column)
            formula_cell = formula_cell or formulas_sheet.cell(row=row, column=column)
        grid.setdefault(row, {})[column] = read_cell(title, value_cell, formula_cell)
    return grid


def blank_cell(title: str, row: int, column: int) -> Cell:
    """An empty cell at a position the sheet does not store."""
    return Cell(ref=f"{title}!{get_column_letter(column)}{row}", kind="blank")


def _read_header(cells: dict[int, Cell], problems: list[Problem]) -> list[Column]:
    """The headed columns of a header row (cells by column number), with problems for bad
    or repeated headers."""
    columns: list[Column] = []
    seen: dict[str, Column] = {}
    for index, cell in sorted(cells.items()):
        column = _header_column(cell, index, problems)
        if column is None:
            continue
        if column.key in seen:
            first = seen[column.key]
            problems.append(Problem(cell.ref, (
                f'the column "{as_text(cell.value)}" repeats the column "{first.name}" in {first.ref} '
                "(headers are compared ignoring case, spaces and a trailing unit in "
                "parentheses); rename or delete one of them"
            )))
            continue
        seen[column.key] = column
        columns.append(column)
    return columns


def _header_column(cell: Cell, index: int, problems: list[Problem]) -> Column | None:
    """The column one header cell names; None when blank or unusable (reported)."""
    if cell.kind == "blank":
        return None
    if cell.kind == "unsaved":
        problems.append(Problem(cell.ref, unsaved_message(cell)))
        return None
    if cell.kind == "error":
        problems.append(Problem(cell.ref, (
            f'header "{cell.value}" is an error value from a formula; type the column name instead'
        )))
        return None
    text = as_text(cell.value)
    name, unit = split_unit(text)
    if not name:
        problems.append(Problem(cell.ref, (
            f'header "{text}" has a unit but no name; write the name before the unit, '
            'as in "Crude protein (%)"'
        )))
        return None
    return Column(key=name_key(name), name=name, unit=unit, index=index, ref=cell.ref)


def check_columns(table: Table, wanted: Wanted, problems: list[Problem]) -> set[str]:
    """Report each missing required column; return the keys of the missing ones."""
    present = {column.key: column for column in table.columns}
    missing = set()
    for key, (header, purpose, required) in wanted.items():
        if not required or key in present:
            continue
        missing.add(key)
        message = (
            f'no column "{header}" ({purpose}) in the header row; add a column headed "{header}"'
        )
        close = difflib.get_close_matches(key, list(present), n=1, cutoff=0.6)
        if close:
            message += f'; is "{present[close[0]].name}" meant to be "{header}"?'
        problems.append(Problem(table.header_ref, message))
    return missing


def empty_sheet(title: str, wanted: Wanted) -> Problem:
    """The problem for a required sheet with nothing in it."""
    headers = ", ".join(header for header, _purpose, required in wanted.values() if required)
    return Problem(title, f"the sheet is empty; put the column headers in its first row: {headers}")


"""A sheet's table: its header row of named columns and its non-blank data rows.

How a table is found and its headers compared is in the `blendkit.read` docstring (Tables,
Headers).
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass, field

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
    """The sheet's table (None if the sheet is empty); header problems go to `problems`."""
    title = values_sheet.title
    last_row = max(values_sheet.max_row, formulas_sheet.max_row)
    last_column = max(values_sheet.max_column, formulas_sheet.max_column)
    rows = zip(
        values_sheet.iter_rows(min_row=1, max_row=last_row, max_col=last_column),
        formulas_sheet.iter_rows(min_row=1, max_row=last_row, max_col=last_column),
    )
    table: Table | None = None
    for value_cells, formula_cells in rows:
        cells = [read_cell(title, v, f) for v, f in zip(value_cells, formula_cells)]
        if table is None:
            if all(cell.kind == "blank" for cell in cells):
                continue
            table = Table(title, value_cells[0].row, _read_header(cells, problems))
            continue
        picked = {column.key: cells[column.index - 1] for column in table.columns}
        if all(cell.kind == "blank" for cell in picked.values()):
            continue
        for cell in picked.values():
            if cell.kind == "unsaved":
                problems.append(Problem(cell.ref, unsaved_message(cell)))
        table.rows.append(picked)
    return table


def _read_header(cells: list[Cell], problems: list[Problem]) -> list[Column]:
    """The headed columns of a header row, with problems for bad or repeated headers."""
    columns: list[Column] = []
    seen: dict[str, Column] = {}
    for index, cell in enumerate(cells, start=1):
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


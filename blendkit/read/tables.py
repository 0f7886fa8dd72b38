"""A sheet's table: its header row of named columns and its non-blank data rows.

How a table is found and its headers compared is in the `blendkit.read` docstring (Tables,
Headers).
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass, field

from openpyxl.utils import column_index_from_string, get_column_letter

from blendkit.errors import Problem
from blendkit.read.cells import Cell, read_cell, unsaved_message
from blendkit.read.saved_values import SheetValues, shown_value
from blendkit.read.values import as_text, is_number_cell, name_key, split_unit

# What a sheet's reader wants of its columns: column key (normalised header) ->
# (header as written in messages, what the column is for, whether it is required).
Wanted = dict[str, tuple[str, str, bool]]

# The last column a sheet can have (XFD).
_LAST_COLUMN = 16384

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
class Unheaded:
    """Cells below the header row in a column whose header cell is blank: the first of
    them, how many there are, and whether any holds a number."""

    first: Cell
    count: int = 0
    numbers: bool = False


@dataclass(frozen=True)
class Layout:
    """What of a sheet's layout a reader may not see on screen, which the reader points
    out: whether the sheet is hidden, its hidden rows and columns (numbers), and its merged
    ranges as (first row, first column, last row, last column)."""

    hidden: bool = False
    hidden_rows: frozenset[int] = frozenset()
    hidden_columns: frozenset[int] = frozenset()
    merged: tuple[tuple[int, int, int, int], ...] = ()


@dataclass
class Table:
    """A sheet's header and its non-blank data rows, cells keyed by column key.

    `row_numbers` gives each data row's number; `unheaded` the data found under blank
    header cells, by column number; `layout` the sheet's hidden and merged parts.
    """

    title: str
    header_row: int
    columns: list[Column]
    rows: list[Row] = field(default_factory=list)
    row_numbers: list[int] = field(default_factory=list)
    unheaded: dict[int, Unheaded] = field(default_factory=dict)
    layout: Layout = field(default_factory=Layout)

    @property
    def header_ref(self) -> str:
        """The header row as a row reference, such as ``Ingredients!1:1``."""
        return f"{self.title}!{self.header_row}:{self.header_row}"


def read_table(sheet, saved: SheetValues, problems: list[Problem]) -> Table | None:
    """The sheet's table (None if the sheet is empty); header problems go to `problems`.

    `sheet` is the sheet as loaded with its formulas, `saved` the results saved with its
    formula cells (`blendkit.read.saved_values`). Only the cells the sheet stores are
    read, so a cell formatted far below the table costs nothing: the reader never walks
    the empty grid up to the last used row.
    """
    title = sheet.title
    grid = stored_cells(sheet, saved)
    table: Table | None = None
    labelled: set[int] = set()  # columns whose header cell is not blank
    places: list[tuple[str, int]] = []  # each headed column's key and number
    for row_number in sorted(grid):
        cells = grid[row_number]
        if table is None:
            if all(cell.kind == "blank" for cell in cells.values()):
                continue
            table = Table(title, row_number, _read_header(cells, problems), layout=sheet_layout(sheet))
            labelled = {index for index, cell in cells.items() if cell.kind != "blank"}
            places = [(column.key, column.index) for column in table.columns]
            continue
        if not cells.keys() <= labelled:
            _note_unheaded(table, cells, labelled)
        picked = {key: cells.get(index) or blank_cell(title, row_number, index) for key, index in places}
        if all(cell.kind == "blank" for cell in picked.values()):
            continue
        for cell in picked.values():
            if cell.kind == "unsaved":
                problems.append(Problem(cell.ref, unsaved_message(cell)))
        table.rows.append(picked)
        table.row_numbers.append(row_number)
    return table


def _note_unheaded(table: Table, cells: dict[int, Cell], labelled: set[int]) -> None:
    """Add one row's cells that lie under blank header cells to `table.unheaded`."""
    for index, cell in cells.items():
        if index in labelled or cell.kind == "blank":
            continue
        found = table.unheaded.setdefault(index, Unheaded(first=cell))
        found.count += 1
        found.numbers = found.numbers or is_number_cell(cell)


def sheet_layout(sheet) -> Layout:
    """The sheet's hidden rows and columns, merged ranges and whether it is hidden.

    Row and column formats are read from the entries the sheet stores (never by looking a
    row up, which would make an entry for it).
    """
    hidden_columns = set()
    for key, dimension in sheet.column_dimensions.items():
        if dimension.hidden:
            first = dimension.min or column_index_from_string(key)
            last = min(dimension.max or first, _LAST_COLUMN)  # a damaged file may say more
            hidden_columns.update(range(first, last + 1))
    return Layout(
        hidden=sheet.sheet_state != "visible",
        hidden_rows=frozenset(row for row, dimension in sheet.row_dimensions.items() if dimension.hidden),
        hidden_columns=frozenset(hidden_columns),
        merged=tuple(
            (merged.min_row, merged.min_col, merged.max_row, merged.max_col)
            for merged in sheet.merged_cells.ranges
        ),
    )


def stored_cells(sheet, saved: SheetValues) -> dict[int, dict[int, Cell]]:
    """Every cell the sheet stores, by row and column number, each formula cell with its
    saved result from `saved`.

    openpyxl keeps a sheet's stored cells in `_cells`, keyed (row, column); reading that
    map rather than `iter_rows` avoids making a cell object for every empty position of
    the used range.
    """
    title = sheet.title
    epoch = sheet.parent.epoch
    # Number formats by their id and "Title!F" by column number, each found once: openpyxl
    # works both out afresh for every cell, and a big sheet has 400,000 of them.
    formats: dict[int, str] = {}
    prefixes: dict[int, str] = {}
    grid: dict[int, dict[int, Cell]] = {}
    last_row, cells = None, {}
    for (row, column), cell in sheet._cells.items():
        style = cell._style
        key = style.numFmtId if style is not None else 0
        number_format = formats.get(key)
        if number_format is None:
            number_format = formats[key] = cell.number_format
        prefix = prefixes.get(column)
        if prefix is None:
            prefix = prefixes[column] = f"{title}!{get_column_letter(column)}"
        value, data_type = cell._value, cell.data_type
        if data_type == "n" and value is not None:  # most cells: a number, as read_cell reads it, sooner
            found = Cell(f"{prefix}{row}", "value", value, number_format or "General")
        else:
            coordinate = f"{prefix[len(title) + 1:]}{row}"
            value_cell = cell
            if data_type == "f":
                value_cell = shown_value(saved.get((row, column)), number_format, coordinate, epoch)
            found = read_cell(title, value_cell, cell, number_format, coordinate)
        if row != last_row:  # openpyxl stores a sheet's cells row by row
            last_row, cells = row, grid.setdefault(row, {})
        cells[column] = found
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


def find_column(text: str, by_key: dict[str, Column]) -> tuple[Column | None, str, str]:
    """The column that `text` names (None if none), with the name and the unit written.

    The whole text is tried first, so that ``Crude protein (N x 6.25)`` names the column
    headed ``Crude protein (N x 6.25) (%)``; then the text less a trailing "(unit)".
    """
    whole = by_key.get(name_key(text))
    if whole is not None:
        return whole, text.strip(), ""
    name, unit = split_unit(text)
    return by_key.get(name_key(name)), name, unit


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


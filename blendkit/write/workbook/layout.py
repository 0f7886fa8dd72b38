"""Size the Result sheet's columns to their content, once everything is written.

Each column is as wide as its longest number or short text, and wide enough that no header
label wraps over more than `HEADER_LINES` lines; longer text (a message, a note, a unit
line) wraps within its cell (or its merged cells), its row made tall enough, rather than
running into the next cell. Live formulas count as a number of `FORMULA_WIDTH` characters.
"""

from __future__ import annotations

import math

from openpyxl.cell.cell import Cell
from openpyxl.styles import Alignment
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.worksheet import Worksheet

# Widths in characters.
LEAST_WIDTH = 8
MOST_WIDTH = 40
FORMULA_WIDTH = 12
HEADER_LINES = 4
# A long text outside a table may wrap over empty cells up to this column.
TEXT_COLUMNS = 10
# Points per line of text, and a little room above and below.
LINE_HEIGHT = 15


def size_columns(sheet: Worksheet) -> None:
    """Set every used column's width from its content, then wrap what is still too long."""
    merged = _merged_cells(sheet)
    looks = _Looks()
    # The stored cells, row by row: iter_rows would first make every empty cell of the
    # sheet's rectangle exist (thousands on a plant's Result), only to skip them.
    filled = [cell for _, cell in sorted(sheet._cells.items()) if cell.value is not None]
    widths: dict[int, float] = {}
    for cell in filled:
        if (cell.row, cell.column) in merged:
            continue
        need = _header_need(cell) if looks.header(cell) else _text_length(cell, looks)
        if need <= MOST_WIDTH:
            widths[cell.column] = max(widths.get(cell.column, LEAST_WIDTH), need + 1)
    for column, width in widths.items():
        sheet.column_dimensions[get_column_letter(column)].width = width
    _wrap_long_text(sheet, filled, merged, looks)


class _Looks:
    """Whether a cell is a header label, and whether it is bold, worked out once per
    distinct style: reading a cell's font or border builds a style object each time."""

    def __init__(self) -> None:
        """No style seen yet."""
        self.headers: dict[tuple, bool] = {}
        self.bolds: dict[tuple, bool] = {}

    def header(self, cell: Cell) -> bool:
        """`_is_header` of the cell, by its style."""
        key = tuple(cell._style or ())  # None: no style set yet
        if key not in self.headers:
            self.headers[key] = _is_header(cell)
        return self.headers[key]

    def bold(self, cell: Cell) -> bool:
        """The cell's font is bold, by its style."""
        key = tuple(cell._style or ())  # None: no style set yet
        if key not in self.bolds:
            self.bolds[key] = bool(cell.font.b)
        return self.bolds[key]


def _merged_cells(sheet: Worksheet) -> dict[tuple[int, int], int]:
    """Top-left cell (row, column) of each merged range, with the number of columns it
    spans (by position: a cell's coordinate text is made anew each time it is read)."""
    return {(merged.min_row, merged.min_col): merged.max_col - merged.min_col + 1
            for merged in sheet.merged_cells.ranges}


def _is_header(cell: Cell) -> bool:
    """A table header label: bold, wrapped, ruled underneath (see `cells.header`)."""
    return bool(cell.font.b and cell.alignment.wrap_text and cell.border.bottom
                and cell.border.bottom.style)


def _header_need(cell: Cell) -> float:
    """Width that shows a header label on at most `HEADER_LINES` lines, longest word whole."""
    text = str(cell.value)
    longest_word = max((len(word) for word in text.split()), default=0)
    return max(longest_word, math.ceil(len(text) / HEADER_LINES))


def _text_length(cell: Cell, looks: _Looks) -> float:
    """Characters a cell shows: a formula counts as a number; bold text runs wider."""
    value = cell.value
    if isinstance(value, str) and value.startswith("="):
        return FORMULA_WIDTH
    if isinstance(value, (int, float)):
        return len(f"{value:,.2f}") + 2
    return len(str(value)) * (1.1 if looks.bold(cell) else 1.0)


def _wrap_long_text(sheet: Worksheet, filled: list[Cell], merged: dict[tuple[int, int], int], looks: _Looks) -> None:
    """Wrap text wider than its cell (or merged cells) and make its row tall enough;
    header rows get the height of their tallest label. `filled`: the cells with a value,
    row by row."""
    heights: dict[int, int] = {}
    widths: dict[int, float] = {}

    def width_of(column: int) -> float:  # a column's width does not change here: look it up once
        if column not in widths:
            widths[column] = _width(sheet, column)
        return widths[column]

    for cell in filled:
        if not isinstance(cell.value, str) or cell.value.startswith("="):
            continue
        span = merged.get((cell.row, cell.column), 1)
        width = sum(width_of(cell.column + extra) for extra in range(span))
        length = _text_length(cell, looks)
        header = looks.header(cell)
        if length <= width and not header:
            continue
        if span == 1 and not header:
            span = _spread(sheet, cell)
            width = sum(width_of(cell.column + extra) for extra in range(span))
        lines = max(1, math.ceil(length / max(width - 1, 1)))
        if lines > 1 and not header:
            cell.alignment = Alignment(wrap_text=True, vertical="top",
                                       horizontal=cell.alignment.horizontal)
        heights[cell.row] = max(heights.get(cell.row, 1), lines)
    for row, lines in heights.items():
        if lines > 1 or sheet.row_dimensions[row].height:
            sheet.row_dimensions[row].height = LINE_HEIGHT * lines + 4


def _spread(sheet: Worksheet, cell: Cell) -> int:
    """Merge a long text with the empty cells to its right (up to `TEXT_COLUMNS`), so it
    wraps over them instead of running into them; returns the columns it now spans."""
    last = cell.column
    while last < TEXT_COLUMNS and _empty(sheet, cell.row, last + 1):
        last += 1
    if last > cell.column:
        sheet.merge_cells(start_row=cell.row, start_column=cell.column,
                          end_row=cell.row, end_column=last)
    return last - cell.column + 1


def _empty(sheet: Worksheet, row: int, column: int) -> bool:
    """No value in the cell (reading rows makes empty cells exist, so look at the value)."""
    cell = sheet._cells.get((row, column))
    return cell is None or cell.value is None


def _width(sheet: Worksheet, column: int) -> float:
    """A column's width in characters (openpyxl's default when unset)."""
    return sheet.column_dimensions[get_column_letter(column)].width or 13

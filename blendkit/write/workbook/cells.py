"""What every output sheet is made of: styles, column widths, number formats, and the
few ways a cell is written (a plain value, a number, a live formula, a header row).

Shared by the sheet modules of `blendkit.write.workbook`; no sheet's layout lives here.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from copy import copy
from weakref import WeakKeyDictionary, ref

from openpyxl.cell.cell import Cell
from openpyxl.styles import Alignment, Border, Font, PatternFill, Side
from openpyxl.styles.cell_style import StyleArray
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit import CAUTION
from blendkit.model.formula import NutrientLine
from blendkit.write.numbers import decimals, line_decimals, whole_decimals

# Fixed number formats; nutrient values and shadow prices get a format by magnitude.
INCLUSION_FORMAT = "0.000"  # inclusions in %, and diet amounts
MONEY_FORMAT = "#,##0.00"
AMOUNT_FORMAT = "#,##0.00"
PERCENT_FORMAT = "0.00%"  # a fraction shown as a percentage (a search's relative gap)
REDUCED_COST_FORMAT = "#,##0.00##"  # two decimals, up to four where the value has them

BOLD = Font(bold=True)
TITLE_FONT = Font(bold=True, size=14)
STATUS_ALERT = Font(bold=True, size=12)
SECTION = Font(bold=True, size=12)  # a product's name, the Stocks heading
THIN = Side(style="thin")
HEADER_BORDER = Border(bottom=THIN)
BOX = Border(left=THIN, right=THIN, top=THIN, bottom=THIN)
WRAP_TOP = Alignment(wrap_text=True, vertical="top")
LINK = Font(bold=True, size=12, underline="single", color="0563C1")
# The broken soft limits block: a warm fill that stands out from the plain tables.
ALERT_FILL = PatternFill(fill_type="solid", start_color="FCE4D6", end_color="FCE4D6")
ALERT_TEXT = Font(bold=True, color="9C0006")
# An input cell whose value came from a price list (`solve --prices`): a pale green.
REPLACED_FILL = PatternFill(fill_type="solid", start_color="E2F0D9", end_color="E2F0D9")

# Texts written, with the value and type openpyxl gave them; emptied when this full.
_TEXTS: dict[str, tuple[str, str]] = {}
_MOST_TEXTS = 100_000


class _PerWorkbook:
    """A dict for each workbook, forgotten with the workbook; the last one used is at
    hand without the weak dictionary's look-up (a big output asks 300,000 times)."""

    def __init__(self) -> None:
        """No workbook seen yet."""
        self.every: WeakKeyDictionary = WeakKeyDictionary()
        self.last: tuple = (None, None)  # (a weak reference to the workbook, its dict)

    def of(self, workbook: Workbook) -> dict:
        """The dict of `workbook`, new and empty the first time."""
        last, found = self.last
        if last is not None and last() is workbook:
            return found
        found = self.every.get(workbook)
        if found is None:
            found = self.every[workbook] = {}
        self.last = (ref(workbook), found)  # one tuple, replaced whole
        return found


# Each workbook's number formats by their text, each with a style holding only openpyxl's
# id for it (`formatted`).
_FORMAT_IDS = _PerWorkbook()
# Each workbook's finished looks (see `styled`), by the look's name and the style the cell
# had before.
_LOOKS = _PerWorkbook()
# A header label's alignment: left over the name column, centred over a number column.
HEADER_ALIGNMENT = {
    first: Alignment(wrap_text=True, vertical="bottom", horizontal="left" if first else "center")
    for first in (True, False)
}

# Result sheet column widths, in characters: name column, then the number columns. A
# header's height and the caution's default width follow them.
NAME_WIDTH = 30
NUMBER_WIDTH = 16
RESULT_COLUMNS = 8


def new_sheet(workbook: Workbook, title: str) -> Worksheet:
    """An output sheet that prints landscape, one page wide, for a reviewer's paper copy."""
    sheet = workbook.create_sheet(title)
    sheet.page_setup.orientation = "landscape"
    sheet.sheet_properties.pageSetUpPr.fitToPage = True
    sheet.page_setup.fitToWidth = 1
    sheet.page_setup.fitToHeight = 0
    return sheet


def cell_at(sheet: Worksheet, row: int, column: int, value: object = None) -> Cell:
    """`cell_at(sheet, row, column, value)`: the same cell, made as openpyxl makes it, without
    its range checks and method calls (a third of building a big output; the writers'
    rows and columns are always in range). tests/test_sheet_bytes.py compares the output
    with the one `Worksheet.cell` gives."""
    cells = sheet._cells
    cell = cells.get((row, column))
    if cell is None:
        cell = cells[(row, column)] = Cell(sheet, row=row, column=column)
        if row > sheet._current_row:  # as Worksheet._add_cell
            sheet._current_row = row
    if value is not None:
        _bind(cell, value)
    return cell


def _bind(cell: Cell, value: object) -> None:
    """`cell.value = value`; a plain int or float is set directly, and a text as openpyxl
    set the same text before (its checked value and type depend on the text alone)."""
    kind = type(value)
    if kind is float or kind is int:
        cell._value = value
        cell.data_type = "n"
    elif kind is str:
        known = _TEXTS.get(value)
        if known is None:
            cell.value = value  # openpyxl's checks (an illegal character raises here)
            if len(_TEXTS) >= _MOST_TEXTS:
                _TEXTS.clear()
            _TEXTS[value] = (cell._value, cell.data_type)
        else:
            cell._value, cell.data_type = known
    else:
        cell.value = value


def put(sheet: Worksheet, row: int, column: int, value: object) -> Cell:
    """Write a plain value; text starting with "=" stays text, never becomes a formula."""
    cell = cell_at(sheet, row, column, value)
    if cell.data_type == "f" and isinstance(value, str):
        cell.data_type = "s"
    return cell


def number(cell: Cell, value: float | None, number_format: str) -> None:
    """Write a number (never a string); blank for None and for non-finite values."""
    if value is None or not math.isfinite(value):
        return
    cell._value = float(value) + 0.0  # a plain float: no numpy scalar, no -0.0 (`_bind`)
    cell.data_type = "n"
    formatted(cell, number_format)


def live(cell: Cell, formula_text: str, number_format: str) -> None:
    """Write a live spreadsheet formula for the reviewer, formatted like the value it checks."""
    _bind(cell, formula_text)
    formatted(cell, number_format)


def formatted(cell: Cell, number_format: str) -> None:
    """`cell.number_format = number_format`, the format's id in the workbook looked up
    once per workbook (openpyxl's setter looks it up in its list each time)."""
    ids = _FORMAT_IDS.of(cell.parent.parent)
    found = ids.get(number_format)  # a style with the format's id and nothing else
    if found is None:
        cell.number_format = number_format
        ids[number_format] = StyleArray([0, 0, 0, cell._style.numFmtId, 0, 0, 0, 0, 0])
    elif cell._style:
        cell._style.numFmtId = found.numFmtId
    else:  # as openpyxl's setter: a cell's first style part gives it a style
        cell._style = StyleArray(found)


def styled(cell: Cell, look: str, apply: Callable[[Cell], None]) -> None:
    """Give `cell` the look `apply` gives it (font, border, alignment...), named `look`.

    Setting a style part through openpyxl hashes the style object against the workbook's
    list every time (28 us for a header cell's three parts); the style a cell ends with
    depends only on the one it had before, so each workbook's first cell of each look is
    styled by `apply` and every later one gets a copy of that cell's finished style."""
    looks = _LOOKS.of(cell.parent.parent)
    key = (look, tuple(cell._style or ()))
    done = looks.get(key)
    if done is None:
        apply(cell)
        looks[key] = copy(cell._style)
    else:
        cell._style = copy(done)


def look(**parts: object) -> Callable[[Cell], None]:
    """An `apply` for `styled` that sets these style parts in order (font=BOLD, ...)."""
    def apply(cell: Cell) -> None:
        for part, value in parts.items():
            setattr(cell, part, value)
    return apply


def _header_look(first: bool) -> Callable[[Cell], None]:
    """A header label's look: bold, a rule underneath, wrapped (see `header`)."""
    def apply(cell: Cell) -> None:
        cell.font = BOLD
        cell.border = HEADER_BORDER
        cell.alignment = HEADER_ALIGNMENT[first]
    return apply


_HEADER_LOOKS = {first: _header_look(first) for first in (True, False)}


def header(sheet: Worksheet, row: int, labels: list[str]) -> None:
    """Bold, wrapped header labels with a rule underneath."""
    for column, label in enumerate(labels, start=1):
        cell = put(sheet, row, column, label)
        # Numbers sit right-aligned below; centred labels stay over their own column.
        styled(cell, "header first" if column == 1 else "header", _HEADER_LOOKS[column == 1])
    longest = max(len(label) for label in labels[1:]) if len(labels) > 1 else 0
    lines = max(1, math.ceil(longest / NUMBER_WIDTH))
    sheet.row_dimensions[row].height = 15 * min(lines + 1, 6) + 2


def paragraph(sheet: Worksheet, row: int, text: str, columns: int, width: int,
              bold: bool = False) -> Cell:
    """Text wrapped in one cell merged across `columns` columns (`width` characters in all),
    its row tall enough to show it; returns the cell."""
    cell = put(sheet, row, 1, text)
    cell.alignment = WRAP_TOP
    if bold:
        cell.font = BOLD
    sheet.merge_cells(start_row=row, start_column=1, end_row=row, end_column=columns)
    lines = math.ceil(len(text) * (1.15 if bold else 1.05) / width)  # bold runs wider
    sheet.row_dimensions[row].height = 15 * lines + 4
    return cell


def write_caution(
    sheet: Worksheet,
    row: int,
    columns: int = RESULT_COLUMNS,
    width: int = NAME_WIDTH + NUMBER_WIDTH * (RESULT_COLUMNS - 1),
) -> None:
    """The caution in a boxed, wrapped cell across `columns` columns, `width` characters."""
    paragraph(sheet, row, CAUTION, columns, width, bold=True)
    for column in range(1, columns + 1):
        styled(cell_at(sheet, row, column), "box", _boxed)


def _boxed(cell: Cell) -> None:
    """A thin box around the cell (the caution's look, with `styled`)."""
    cell.border = BOX


def fixed_format(places: int) -> str:
    """A comma-grouped number format with `places` decimals."""
    return "#,##0." + "0" * places if places else "#,##0"


def format_by_size(values: list[float | None], least: int) -> str:
    """A format showing about four significant digits of the largest value, comma-grouped."""
    return fixed_format(decimals(values, least))


def nutrient_format(line: NutrientLine) -> str:
    """One format for a nutrient's min, max and level, wherever they appear."""
    return fixed_format(line_decimals(line))


def whole_format(value: float) -> str:
    """No decimals for a whole amount (a 2000 kg batch), two otherwise."""
    return fixed_format(whole_decimals(value))


def plain(value: float) -> str:
    """A number without a needless ".0" (1000, not 1000.0)."""
    return f"{value:g}"

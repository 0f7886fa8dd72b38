"""The Shadow prices sheet: one row per limit the user wrote (spec, ratio, group, stock or
inclusion limit, with its product), with its shadow price, its unit, and the bound values
over which that price holds.
"""

from __future__ import annotations

import math

from openpyxl.styles import Alignment
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.blend import Blend
from blendkit.model.formula import Formula, Limit, RunInfo, basis_label
from blendkit.model.units import cost_unit, kind_word, run_cost_unit, shadow_price_unit
from blendkit.write.numbers import decimals, limit_key, nutrient_decimals
from blendkit.write.workbook.cells import (
    AMOUNT_FORMAT,
    INCLUSION_FORMAT,
    fixed_format,
    format_by_size,
    header,
    new_sheet,
    number,
    put,
)
from blendkit.write.workbook.printing import fit_column_widths

TITLE = "Shadow prices"

_HEADERS = [
    "Kind",
    "Product",
    "Name",
    "Basis",
    "Side",
    "Bound",
    "Level",
    "Binding",
    "Shadow price",
    "Shadow price unit",
    "Bound read from",
    "Holds from",
    "Holds to",
]
# The unit column: at most this many characters wide, its longer units wrapped.
_UNIT_COLUMN = 10
_UNIT_WIDTH = 60
# The text columns that follow a number column: Binding, the unit, Bound read from.
_TEXT_AFTER_NUMBERS = (8, 10, 11)
# No column wider than this many characters, but the unit's.
_WIDEST = 70
# The header row; one row per limit follows.
_HEADER_ROW = 3


def write(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """One row per limit the user wrote: how much the cost moves per unit of its bound."""
    sheet = new_sheet(workbook, TITLE)
    put(sheet, 1, 1, _intro(formula))
    header(sheet, _HEADER_ROW, _HEADERS)
    places = nutrient_decimals(formula)
    for offset, limit in enumerate(formula.limits, start=1):
        _write_limit(sheet, _HEADER_ROW + offset, limit, formula.blend, _bound_format(limit, places))
    if not formula.limits:
        if formula.solved:
            empty = "No limits to show: the workbook sets no specs or inclusion limits."
        else:
            empty = f"No shadow prices: the solve ended with status {formula.status!r}."
        put(sheet, _HEADER_ROW + 1, 1, empty)
    _size_columns(sheet)
    sheet.freeze_panes = "A4"  # the header row also repeats on every printed page


def _size_columns(sheet: Worksheet) -> None:
    """Each column as wide as what it holds, so no text runs into the next cell; a header
    wraps between words, a unit longer than its column wraps onto a taller row."""
    fit_column_widths(sheet, _HEADER_ROW + 1, least=6, most=_WIDEST)
    for column, label in enumerate(_HEADERS, start=1):
        dimension = sheet.column_dimensions[get_column_letter(column)]
        longest_word = max(len(word) for word in label.split())
        dimension.width = max(dimension.width or 0, longest_word + 2)
    unit = sheet.column_dimensions[get_column_letter(_UNIT_COLUMN)]
    unit.width = min(unit.width + 1, _UNIT_WIDTH)
    # Text after a column of numbers starts one space in, clear of the number before it.
    aligned = {long: Alignment(horizontal="left", indent=1, wrap_text=long) for long in (False, True)}
    for column in _TEXT_AFTER_NUMBERS:
        for (cell,) in sheet.iter_rows(min_row=_HEADER_ROW + 1, min_col=column, max_col=column):
            long = column == _UNIT_COLUMN and len(str(cell.value or "")) + 3 > unit.width
            cell.alignment = aligned[long]  # two shared styles, not one per cell
            if long:
                lines = math.ceil((len(str(cell.value)) + 3) / unit.width)
                sheet.row_dimensions[cell.row].height = 15 * lines + 2


def _bound_format(limit: Limit, places: dict[tuple, int]) -> str:
    """A limit's bound and level as in its table on Result: inclusions to 0.001 %, stocks
    as amounts, a nutrient's bound as its nutrient line, others by size."""
    if limit.kind in ("ingredient", "group"):
        return INCLUSION_FORMAT
    if limit.kind == "stock":
        return AMOUNT_FORMAT
    key = limit_key(limit)
    if key in places:
        return fixed_format(places[key])
    return format_by_size([limit.bound, limit.level], 1)


def _write_limit(sheet: Worksheet, row: int, limit: Limit, blend: Blend, number_format: str) -> None:
    """One limit's row: which bound, its level, its shadow price and where that holds."""
    put(sheet, row, 1, kind_word(limit.kind, blend))
    put(sheet, row, 2, limit.product)
    put(sheet, row, 3, limit.name)
    put(sheet, row, 4, basis_label(limit.kind, limit.basis))
    put(sheet, row, 5, limit.side)
    number(sheet.cell(row, 6), limit.bound, number_format)
    number(sheet.cell(row, 7), limit.level, number_format)
    put(sheet, row, 8, "yes" if limit.binding else "no")
    places = decimals([limit.shadow_price], 2)
    number(sheet.cell(row, 9), _no_negative_zero(limit.shadow_price, places), fixed_format(places))
    put(sheet, row, 10, shadow_price_unit(limit, blend))
    put(sheet, row, 11, limit.cell)
    # How far the bound may move with the same shadow price (blank: no end, or not
    # known, as for ratio and dry-matter bounds).
    if limit.holds_from is not None:
        number(sheet.cell(row, 12), limit.holds_from, number_format)
    if limit.holds_to is not None:
        number(sheet.cell(row, 13), limit.holds_to, number_format)


def _no_negative_zero(value: float, places: int) -> float:
    """0 for a value that would show as "-0.00" at `places` decimals (a rounding remnant)."""
    return 0.0 if round(value, places) == 0 else value


def _intro(formula: Formula) -> str:
    """The sheet's first line: whose cost a shadow price moves, in which unit."""
    blend = formula.blend
    settings = blend.settings
    total = settings.currency or "currency"
    if formula.several:
        whose = (f"a product's cost ({cost_unit(settings)}) for that product's own limits, or "
                 f"the run's total cost ({total}) for a stock,")
    elif blend.diet:
        whose = f"the diet's cost ({run_cost_unit(blend)})"
    else:
        whose = f"the blend cost ({cost_unit(settings)})"
        if formula.stocks:
            whose += f", or the batch's cost ({total}) for a stock,"
    return (f"Shadow price: change in {whose} when the bound is raised by 1 unit; 0 where "
            "the bound does not bind. It holds for small changes only.")

"""The Shadow prices sheet: one row per limit the user wrote (spec, ratio, group, stock or
inclusion limit, with its product), with its shadow price, its unit, the bound values
over which that price holds, and the same per step of the bound: the step, what one step
costs, the cost change when the bound is raised a step and when it is lowered a step (they
differ at a degenerate optimum), the price per step in words, and a note.

Binding limits come first, the largest cost of a step (either way) first, compared in the
run's currency (a product's own limit's cost of a step times its amount in `Cost per`
units, a stock's as it is); the limits that do not bind follow in the order of the
workbook.
"""

from __future__ import annotations

import math

from openpyxl.styles import Alignment
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.blend import Blend
from blendkit.model.formula import Formula, Limit, RunInfo, basis_label
from blendkit.model.steps import binding_in_order
from blendkit.model.units import cost_unit, kind_word, run_cost_unit, shadow_price_unit
from blendkit.write.numbers import decimals, limit_key, nutrient_decimals
from blendkit.write.step_words import limit_note, per_step_text, step_changes
from blendkit.write.workbook.cells import (
    AMOUNT_FORMAT,
    INCLUSION_FORMAT,
    cell_at,
    fixed_format,
    format_by_size,
    header,
    new_sheet,
    number,
    put,
    styled,
)
from blendkit.write.workbook.printing import fit_column_widths
from blendkit.write.workbook.tidy import tidy

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
    "Step",
    "Cost of a step",
    "Cost change, raised a step",
    "Cost change, lowered a step",
    "Per step, in words",
    "Note",
]
# The unit column: at most this many characters wide, its longer units wrapped.
_UNIT_COLUMN = 10
_UNIT_WIDTH = 60
# The text columns that follow a number column: Binding, the unit, Bound read from.
_TEXT_AFTER_NUMBERS = (8, 10, 11)
# No column wider than this many characters, but the unit's.
_WIDEST = 70
# With a Margin on Specs: the margin and the target the formula is made to.
_MARGIN_HEADERS = ("Margin", "Target (bound with margin)")
# The header row; one row per limit follows.
_HEADER_ROW = 3
# The columns of words that wrap when longer than the widest column: per step, note.
_WORDS = (18, 19)


def write(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """One row per limit the user wrote: how much the cost moves per unit of its bound."""
    sheet = new_sheet(workbook, TITLE)
    put(sheet, 1, 1, _intro(formula))
    put(sheet, 2, 1, _STEP_INTRO)
    margins = any(limit.margin for limit in formula.limits)
    header(sheet, _HEADER_ROW, _HEADERS + (list(_MARGIN_HEADERS) if margins else []))
    places = nutrient_decimals(formula)
    for offset, limit in enumerate(ordered(formula, formula.limits), start=1):
        row = _HEADER_ROW + offset
        _write_limit(sheet, row, limit, formula.blend, _bound_format(limit, places))
        _write_steps(sheet, row, limit, formula)
        if margins:
            _write_margin(sheet, row, limit, _bound_format(limit, places))
    if not formula.limits:
        if formula.solved:
            empty = "No limits to show: the workbook sets no specs or inclusion limits."
        else:
            empty = f"No shadow prices: the solve ended with status {formula.status!r}."
        put(sheet, _HEADER_ROW + 1, 1, empty)
    _size_columns(sheet)
    sheet.freeze_panes = "A4"  # the header row also repeats on every printed page


def ordered(formula: Formula, limits: tuple[Limit, ...]) -> list[Limit]:
    """Binding limits first, the largest cost of a step (the shadow price or either
    one-sided value, times the step) first, compared in the run's currency
    (`blendkit.model.steps.binding_in_order`); then the others in their own order."""
    binding = binding_in_order(formula, limits, either_way=True)
    return [*binding, *(limit for limit in limits if not limit.binding)]


def _write_steps(sheet: Worksheet, row: int, limit: Limit, formula: Formula) -> None:
    """A limit's step, what a step costs, the cost change raised and lowered a step, the
    price per step in words and a note (blank where a value is not known)."""
    blend = formula.blend
    step, raised, lowered = step_changes(blend, limit)
    number(cell_at(sheet, row, 14), tidy(step), format_by_size([step], 0))
    worth = limit.shadow_price * step
    money = fixed_format(decimals([worth, raised, lowered], 2))
    number(cell_at(sheet, row, 15), _no_negative_zero(worth, 6), money)
    if raised is not None:
        number(cell_at(sheet, row, 16), _no_negative_zero(raised, 6), money)
    if lowered is not None:
        number(cell_at(sheet, row, 17), _no_negative_zero(lowered, 6), money)
    put(sheet, row, 18, per_step_text(blend, limit) or None)
    put(sheet, row, 19, limit_note(limit, formula.limits) or None)


def _write_margin(sheet: Worksheet, row: int, limit: Limit, number_format: str) -> None:
    """A spec's margin and the target the formula is made to (bound +/- margin)."""
    if limit.kind not in ("nutrient", "ratio"):
        return
    number(cell_at(sheet, row, 20), limit.margin, number_format)
    number(cell_at(sheet, row, 21), limit.target, number_format)


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
    last = sheet.max_row
    for column in _TEXT_AFTER_NUMBERS:
        for cell in _column_cells(sheet, column, last):
            long = column == _UNIT_COLUMN and len(str(cell.value or "")) + 3 > unit.width
            styled(cell, f"after numbers {long}", _AFTER_NUMBERS[long])  # two shared looks
            if long:
                lines = math.ceil((len(str(cell.value)) + 3) / unit.width)
                sheet.row_dimensions[cell.row].height = 15 * lines + 2
    _wrap_words(sheet, last)


def _column_cells(sheet: Worksheet, column: int, last: int) -> list:
    """The column's cells below the header to row `last`, each made to exist, as
    `iter_rows` gives them (without its checks per cell)."""
    return [cell_at(sheet, row, column) for row in range(_HEADER_ROW + 1, last + 1)]


def _after_numbers(long: bool):
    """Text after a column of numbers: one space in, wrapped when `long`."""
    alignment = Alignment(horizontal="left", indent=1, wrap_text=long)

    def apply(cell) -> None:
        cell.alignment = alignment
    return apply


_AFTER_NUMBERS = {long: _after_numbers(long) for long in (False, True)}


def _wrapped(cell) -> None:
    """Words wrapped from the top of the cell (with `styled`)."""
    cell.alignment = Alignment(wrap_text=True, vertical="top")


def _wrap_words(sheet: Worksheet, last: int) -> None:
    """Words longer than their column wrap onto a taller row (to row `last`)."""
    for column in _WORDS:
        width = sheet.column_dimensions[get_column_letter(column)].width
        for cell in _column_cells(sheet, column, last):
            size = len(str(cell.value or ""))
            if size + 2 > width:
                styled(cell, "wrapped words", _wrapped)
                lines = math.ceil((size + 2) / width)
                height = sheet.row_dimensions[cell.row].height or 0
                sheet.row_dimensions[cell.row].height = max(height, 15 * lines + 2)


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
    number(cell_at(sheet, row, 6), limit.bound, number_format)
    number(cell_at(sheet, row, 7), limit.level, number_format)
    put(sheet, row, 8, "yes" if limit.binding else "no")
    places = decimals([limit.shadow_price], 2)
    number(cell_at(sheet, row, 9), _no_negative_zero(limit.shadow_price, places), fixed_format(places))
    put(sheet, row, 10, shadow_price_unit(limit, blend))
    put(sheet, row, 11, limit.cell)
    # How far the bound may move with the same shadow price (blank: no end, or not
    # known, as for ratio and dry-matter bounds).
    if limit.holds_from is not None:
        number(cell_at(sheet, row, 12), limit.holds_from, number_format)
    if limit.holds_to is not None:
        number(cell_at(sheet, row, 13), limit.holds_to, number_format)


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
    text = (f"Shadow price: change in {whose} when the bound is raised by 1 unit; 0 where "
            "the bound does not bind. It holds for small changes only.")
    if any(product.practical is not None for product in formula.products):
        text += (" Under the weighing rules it holds with the whole-number choices fixed (each ingredient in "
                 "or out, each count of packs or scale steps as found).")
    return text


_STEP_INTRO = ("Binding limits first, the largest cost of a step first, compared in the run's "
               "money: a product's own limit's cost of a step times its amount in Cost per units "
               "(the cost of that step for the whole amount), a stock's as it is. A step is the "
               "Specs sheet's Step, else a change that fits the unit. Raised / lowered: the cost "
               "change when the bound moves one step up / down; they differ from each other "
               "(and from the shadow price) at a degenerate optimum.")

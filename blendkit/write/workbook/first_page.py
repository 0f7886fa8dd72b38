"""The Result sheet's first page, the part a reviewer reads and signs: the binding limits
with what a step of each is worth, the notes, and blank cells for prepared by, checked by
and date. The title, caution, status, cost and overall spec check above them are
`result`'s; a page break follows, so the tables start on page two.

A step of a bound is `blendkit.model.steps.step_for` (a change that fits its unit); its
worth is |shadow price x step|, and the limits are listed by that worth in the run's money,
largest first (`blendkit.model.steps.binding_in_order`).
"""

from __future__ import annotations

from openpyxl.styles import Alignment
from openpyxl.worksheet.pagebreak import Break
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.formula import WEIGHING_RULES, Formula, Limit, basis_label
from blendkit.model.steps import binding_in_order, limit_unit, step_worth
from blendkit.model.units import cost_unit, run_cost_unit
from blendkit.write.workbook.cells import (
    BOLD,
    HEADER_BORDER,
    RESULT_COLUMNS,
    SECTION,
    WRAP_TOP,
    cell_at,
    format_by_size,
    header,
    number,
    put,
)
from blendkit.write.workbook.tidy import tidy

SIGN_OFF = ("Prepared by", "Checked by", "Date")
# Most binding limits listed on page one (largest step worth first), so it prints on one
# page; the rest are on the Shadow prices sheet.
MOST_LISTED = 20
# A unit written right of a right-aligned number: a space's indent keeps them apart.
BESIDE_NUMBER = Alignment(indent=1)


def write_binding_limits(sheet: Worksheet, formula: Formula, row: int) -> int:
    """The binding limits table from `row`; returns the first row after it and a blank."""
    limits = binding_in_order(formula)
    put(sheet, row, 1, "Binding limits").font = SECTION
    if not limits:
        put(sheet, row + 1, 1, "No limit binds.")
        return row + 3
    put(sheet, row, 2, "what one step of each bound moves the cost by, largest first")
    labels = ["Limit", "Product", "Kind", "Side", "Bound", "Unit", "Step", "Shadow price",
              "Cost of a step", "Cost unit"]
    if not formula.several:
        labels.remove("Product")
    header(sheet, row + 1, labels)
    listed = limits[:MOST_LISTED]
    for offset, limit in enumerate(listed, start=2):
        _write_binding_row(sheet, row + offset, formula, limit)
    below = row + len(listed) + 2
    if len(limits) > len(listed):
        more = len(limits) - len(listed)
        put(sheet, below, 1, f"... and {more} more binding limit{'s' if more != 1 else ''}, "
                             "each worth less per step: see the Shadow prices sheet")
        below += 1
    return below + 1


def _write_binding_row(sheet: Worksheet, row: int, formula: Formula, limit: Limit) -> None:
    """One binding limit: name, (product,) kind, side, bound, unit, step, price, worth."""
    blend = formula.blend
    step, worth = step_worth(blend, limit)
    texts = [limit.name, basis_label(limit.kind, limit.basis) if limit.kind == "nutrient"
             else limit.kind, limit.side]
    if formula.several:
        texts.insert(1, limit.product or "all products")
    for column, text in enumerate(texts, start=1):
        put(sheet, row, column, text)
    at = len(texts) + 1
    number(cell_at(sheet, row, at), tidy(limit.bound), format_by_size([limit.bound], 0))
    put(sheet, row, at + 1, limit_unit(blend, limit) or None).alignment = BESIDE_NUMBER
    number(cell_at(sheet, row, at + 2), tidy(step), format_by_size([step], 0))
    number(cell_at(sheet, row, at + 3), tidy(limit.shadow_price), format_by_size([limit.shadow_price], 2))
    number(cell_at(sheet, row, at + 4), tidy(worth), format_by_size([worth], 2))
    stock_or_diet = limit.kind == "stock" or blend.diet
    unit = run_cost_unit(blend) if stock_or_diet else cost_unit(blend.settings)
    put(sheet, row, at + 5, unit).alignment = BESIDE_NUMBER


def write_notes(sheet: Worksheet, notes: tuple[str, ...], row: int) -> int:
    """Notes and warnings, one wrapped paragraph each, under a bold heading; returns the
    first row after them and a blank."""
    if not notes:
        return row
    put(sheet, row, 1, "Notes").font = BOLD
    for offset, note in enumerate(notes, start=1):
        cell = put(sheet, row + offset, 1, note)
        cell.alignment = WRAP_TOP
        sheet.merge_cells(start_row=row + offset, start_column=1,
                          end_row=row + offset, end_column=RESULT_COLUMNS)
    return row + len(notes) + 2


def write_weighing(sheet: Worksheet, formula: Formula, row: int) -> int:
    """What the rules a mill can weigh cost (per product), under a bold heading; returns
    the first row after them and a blank (nothing without such rules)."""
    unit = run_cost_unit(formula.blend) if formula.blend.diet else cost_unit(formula.blend.settings)
    lines = []
    for product in formula.products:
        if product.practical is not None:
            name = f"{product.name}: " if formula.several else ""
            lines += [f"{name}{line.strip()}" for line in product.practical.lines(unit)]
    if not lines:
        return row
    put(sheet, row, 1, WEIGHING_RULES).font = BOLD
    for offset, line in enumerate(lines, start=1):
        cell = put(sheet, row + offset, 1, line)
        cell.alignment = WRAP_TOP
        sheet.merge_cells(start_row=row + offset, start_column=1, end_row=row + offset, end_column=RESULT_COLUMNS)
    return row + len(lines) + 2


def write_sign_off(sheet: Worksheet, row: int) -> int:
    """Prepared by, checked by and date, each with a blank underlined cell to fill in, then
    a page break; returns the first row of page two."""
    for offset, label in enumerate(SIGN_OFF):
        put(sheet, row + offset, 1, label).font = BOLD
        for column in (2, 3):
            cell_at(sheet, row + offset, column).border = HEADER_BORDER
    last = row + len(SIGN_OFF) - 1
    sheet.row_breaks.append(Break(id=last + 1))
    return last + 3

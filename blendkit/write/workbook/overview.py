"""The Overview sheet, first in the workbook when a run makes more than one product.

One row per product: its status, cost, the cost at the previous run and the change (when
the run was compared with an earlier output), how many of its limits bind, how many
soft specs it misses, and a link to its block on the Result sheet; when some product is
under the rules a mill can weigh, three more columns (`PRACTICAL_LABELS`): its LP cost
without those rules, what the rules add, and the search's proven gap. Below, one row per
ingredient: its one price for the whole run and the range over which the whole plan stays
the cheapest with that price moving in every product at once (`Formula.shared_prices`),
an end no price of 0 or more reaches said in words. The caution heads the sheet, as on
every sheet a reviewer opens first.
"""

from __future__ import annotations

from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.hyperlink import Hyperlink
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.formula import SOFT_SPECS_NOT_MET, Formula, Practical, ProductFormula, RunInfo
from blendkit.model.units import cost_unit
from blendkit.write.workbook import result
from blendkit.write.price_words import shared_price_note
from blendkit.write.workbook.cells import (
    BOLD,
    LINK,
    MONEY_FORMAT,
    PERCENT_FORMAT,
    SECTION,
    STATUS_ALERT,
    TITLE_FONT,
    cell_at,
    header,
    new_sheet,
    number,
    put,
    write_caution,
)
from blendkit.write.workbook.live import quote_sheet

TITLE = "Overview"

_LABELS = ("Product", "Status", "Cost", "Unit", "Previous cost", "Change", "Binding limits",
           SOFT_SPECS_NOT_MET, "Result")
_WIDTHS = (28, 12, 12, 14, 14, 12, 10, 10, 24)
# The table's header row (rows above: title, caution, run summary).
_HEADER_ROW = 7
# What the rules a mill can weigh cost a formula (here and in the --overview workbook).
PRACTICAL_LABELS = ("LP cost (no weighing rules)", "Weighing rules add", "Proven gap")
PRACTICAL_WIDTHS = (14, 12, 10)


def write(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """One row per product, when the run has more than one; nothing otherwise."""
    if len(formula.products) < 2:
        return
    sheet = new_sheet(workbook, TITLE)
    for column, width in enumerate((*_WIDTHS, *PRACTICAL_WIDTHS), start=1):
        sheet.column_dimensions[get_column_letter(column)].width = width
    put(sheet, 1, 1, f"{title}: {len(formula.products)} products").font = TITLE_FONT
    write_caution(sheet, 2, len(_WIDTHS), sum(_WIDTHS))
    put(sheet, 4, 1, "Status").font = BOLD
    put(sheet, 4, 2, formula.status)
    put(sheet, 5, 1, "Message").font = BOLD
    put(sheet, 5, 2, formula.message)
    weighed = any(product.practical is not None for product in formula.products)
    header(sheet, _HEADER_ROW, [*_LABELS, *(PRACTICAL_LABELS if weighed else ())])
    blocks = _result_blocks(workbook)
    for row, product in enumerate(formula.products, start=_HEADER_ROW + 1):
        _write_row(sheet, row, formula, product, blocks.get(product.name))
        if weighed:
            write_practical(sheet, row, len(_LABELS) + 1, product.practical)
    write_shared_prices(sheet, formula, _HEADER_ROW + len(formula.products) + 2)
    sheet.freeze_panes = cell_at(sheet, _HEADER_ROW + 1, 2)
    workbook.move_sheet(sheet, offset=-workbook.index(sheet))


def write_practical(sheet: Worksheet, row: int, column: int, practical: Practical | None) -> None:
    """A formula's LP cost without the weighing rules, what the rules add and the proven
    gap, from `column` (blank without rules, and where a figure is missing)."""
    if practical is None:
        return
    number(cell_at(sheet, row, column), practical.lp_cost, MONEY_FORMAT)
    number(cell_at(sheet, row, column + 1), practical.rise, MONEY_FORMAT)
    number(cell_at(sheet, row, column + 2), practical.gap, PERCENT_FORMAT)


def write_shared_prices(sheet: Worksheet, formula: Formula, row: int) -> int:
    """The one price per ingredient table from `row` (nothing without shared prices);
    returns the first row after it."""
    lines = formula.shared_prices
    if not lines:
        return row
    unit = cost_unit(formula.blend.settings)
    put(sheet, row, 1, "One price per ingredient, every product at once").font = SECTION
    put(sheet, row + 1, 1, _SHARED_INTRO)
    header(sheet, row + 2, ["Ingredient", f"Price ({unit})", "Used more if its price falls below",
                            "Used less if its price rises above", "Note"])
    for at, line in enumerate(lines, start=row + 3):
        put(sheet, at, 1, line.name)
        number(cell_at(sheet, at, 2), line.price, MONEY_FORMAT)
        number(cell_at(sheet, at, 3), line.more_below, MONEY_FORMAT)
        number(cell_at(sheet, at, 4), line.less_above, MONEY_FORMAT)
        put(sheet, at, 5, shared_price_note(line) or None)
    return row + 3 + len(lines)


_SHARED_INTRO = ("The price range over which the whole run's plan stays the cheapest, the price "
                 "moving in every product together, as a buyer pays it. The ranges on the "
                 "Result sheet hold for a price change in that product alone.")


def _write_row(sheet: Worksheet, row: int, formula: Formula, product: ProductFormula,
               block_row: int | None) -> None:
    """One product: name, status, cost and unit, previous cost and change, counts, link."""
    put(sheet, row, 1, product.name)
    status = put(sheet, row, 2, product.status)
    if not product.solved:
        status.font = STATUS_ALERT
    number(cell_at(sheet, row, 3), product.cost, MONEY_FORMAT)
    put(sheet, row, 4, cost_unit(formula.blend.settings))
    before = _previous_cost(formula, product)
    number(cell_at(sheet, row, 5), before, MONEY_FORMAT)
    if before is not None and product.cost is not None:
        number(cell_at(sheet, row, 6), product.cost - before, MONEY_FORMAT)
    limits = [limit for limit in product.limits if limit.kind != "stock"]
    if product.solved:
        put(sheet, row, 7, sum(1 for limit in limits if limit.binding))
        put(sheet, row, 8, sum(1 for limit in limits if limit.broken))
    if block_row is not None:
        link = put(sheet, row, 9, f"{result.TITLE}!A{block_row}")
        link.font = LINK
        link.hyperlink = Hyperlink(ref=link.coordinate, location=f"{quote_sheet(result.TITLE)}!A{block_row}")


def _previous_cost(formula: Formula, product: ProductFormula) -> float | None:
    """The product's cost at the run this one was compared with (None without one)."""
    changes = formula.changes
    if changes is None:
        return None
    entry = next((item for item in changes.formulas if item.key == product.name), None)
    return None if entry is None else entry.cost_before


def _result_blocks(workbook: Workbook) -> dict[str, int]:
    """The row of each product's block on the Result sheet, by product name."""
    if result.TITLE not in workbook.sheetnames:
        return {}
    sheet = workbook[result.TITLE]
    blocks = {}
    for row in range(1, sheet.max_row + 1):  # both cells made to exist, as iter_rows does
        label, name = cell_at(sheet, row, 1), cell_at(sheet, row, 2)
        if label.value == "Product" and name.value is not None:
            blocks[name.value] = row
    return blocks

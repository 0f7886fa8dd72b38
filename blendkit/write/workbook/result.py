"""The Result sheet, the reviewer's main sheet.

Page one tells the story (`first_page`): title, caution, status, cost (with its live
check from the input prices), the overall spec check, a highlighted block of broken soft
limits (if any), the binding limits with what a step of each is worth, the notes, and
blank cells to sign. Then, from page two, the ingredient table and the nutrient table (a
diet shows amounts in each food's unit; with several products, one block of both tables
per product), the stocks, if the run has any, and the charts (`charts`). Columns are
sized to their content last (`layout`). An infeasible run's Result points to the
Conflicts sheet.
"""

from __future__ import annotations

from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.hyperlink import Hyperlink
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.blend import Blend
from blendkit.model.formula import Formula, Limit, ProductFormula, RunInfo, SOFT_SPECS_NOT_MET, WAY_OUT
from blendkit.model.units import cost_unit, penalty_unit, run_cost_unit
from blendkit.write.workbook.cells import (
    ALERT_FILL,
    ALERT_TEXT,
    BOLD,
    LINK,
    MONEY_FORMAT,
    NAME_WIDTH,
    NUMBER_WIDTH,
    RESULT_COLUMNS,
    SECTION,
    STATUS_ALERT,
    TITLE_FONT,
    cell_at,
    format_by_size,
    header,
    live,
    new_sheet,
    number,
    plain,
    put,
    whole_format,
    write_caution,
)
from blendkit.write.workbook.charts import add_block_charts, add_product_cost_chart
from blendkit.write.workbook.conflicts import TITLE as CONFLICTS
from blendkit.write.workbook.live import quote_sheet, recompute_formula
from blendkit.write.workbook.first_page import (
    BESIDE_NUMBER,
    write_binding_limits,
    write_notes,
    write_weighing,
    write_sign_off,
)
from blendkit.write.workbook.layout import size_columns
from blendkit.write.workbook.result_tables import Block, write_stocks, write_tables
from blendkit.write.workbook.spec_checks import write_overall_check
from blendkit.write.workbook.tidy import tidy

TITLE = "Result"

# The row of the overall spec check on page one.
_CHECK_ROW = 9
# Where a live cost check could not be written.
_NO_CHECK = "not available: input cells unknown or formula too long"


def write(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """The reviewer's main sheet: caution and status on top, then the tables."""
    sheet = new_sheet(workbook, TITLE)
    sheet.column_dimensions["A"].width = NAME_WIDTH
    for column in range(2, RESULT_COLUMNS + 1):
        sheet.column_dimensions[get_column_letter(column)].width = NUMBER_WIDTH
    _write_top(sheet, formula, title)
    if formula.several and any(product.solved for product in formula.products):
        _write_several(sheet, workbook, formula)
    elif not formula.solved:
        _write_unsolved(sheet, formula)
    else:
        _write_one(sheet, workbook, formula)
    size_columns(sheet)


def _write_top(sheet: Worksheet, formula: Formula, title: str) -> None:
    """Rows 1-5: title, caution, status and message."""
    put(sheet, 1, 1, title)
    sheet["A1"].font = TITLE_FONT
    write_caution(sheet, row=2)
    sheet["A4"] = "Status"
    put(sheet, 4, 2, formula.status)
    sheet["A5"] = "Message"
    put(sheet, 5, 2, formula.message)
    for cell in ("A4", "A5"):
        sheet[cell].font = BOLD


def _write_unsolved(sheet: Worksheet, formula: Formula) -> None:
    """No blend: the status stands out, an infeasible run points to Conflicts, no numbers."""
    sheet["B4"].font = STATUS_ALERT
    sheet["B5"].font = STATUS_ALERT
    if formula.status == "infeasible":
        _write_conflicts_pointer(sheet, formula, row=6)
    sheet["A7"] = (
        "No blend was found, so this sheet shows no numbers. Read the message above "
        "and the notes below, correct the workbook and solve again."
    )
    below = write_weighing(sheet, formula, row=9)
    below = write_notes(sheet, formula.notes, row=below)
    write_sign_off(sheet, below)


def _write_one(sheet: Worksheet, workbook: Workbook, formula: Formula) -> None:
    """One blend or one diet: page one (cost, its live check, the batch, the spec check,
    binding limits, notes, sign-off), then the tables, the stocks and the charts."""
    blend = formula.blend
    settings = blend.settings
    page_two = _write_page_one(sheet, formula, first=11)
    block = Block(
        ingredients=formula.ingredients,
        nutrients=formula.nutrients,
        header_row=page_two,
        amount=settings.batch_size,
        limits=formula.limits,
        amount_cell="$B$8",
    )
    label = "Diet cost" if blend.diet else "Blend cost"
    _write_cost(sheet, workbook, blend, block, row=6, label=label, cost=formula.cost,
                unit=run_cost_unit(blend))
    if blend.diet:
        sheet["A8"] = "Amounts"
        put(sheet, 8, 2, "each in the food's own unit (Measure column); nutrient levels are totals")
    else:
        sheet["A8"] = "Batch"
        number(cell_at(sheet, 8, 2), settings.batch_size, whole_format(settings.batch_size))
        put(sheet, 8, 3, settings.mass_unit).alignment = BESIDE_NUMBER
    sheet["A8"].font = BOLD

    below, checks = write_tables(sheet, workbook, blend, block)
    write_overall_check(sheet, _CHECK_ROW, [checks] if checks else [])
    below = write_stocks(sheet, formula, below)
    add_block_charts(sheet, block, below, diet=blend.diet)
    sheet.freeze_panes = "B1"  # page one is long: the name column stays, the rest scrolls


def _write_page_one(sheet: Worksheet, formula: Formula, first: int) -> int:
    """Broken soft limits, binding limits, notes and sign-off from row `first`; returns
    the first row of page two."""
    row = _write_broken(sheet, formula, first)
    row = write_weighing(sheet, formula, row)
    row = write_binding_limits(sheet, formula, row)
    row = write_notes(sheet, formula.notes_besides_broken_limits, row)
    return write_sign_off(sheet, row)


def _write_several(sheet: Worksheet, workbook: Workbook, formula: Formula) -> None:
    """Several products: the run's total cost, one block per product, then the stocks.

    The total's live check adds up each product's live cost check times the amount made
    in `Cost per` units, so it follows any edit of an inclusion or an input price.
    """
    blend = formula.blend
    sheet["A6"] = "Total cost"
    number(cell_at(sheet, 6, 2), tidy(formula.cost), MONEY_FORMAT)
    put(sheet, 6, 3, run_cost_unit(blend)).alignment = BESIDE_NUMBER
    put(sheet, 6, 4, "all products together" if formula.solved else "not every product was formulated")
    sheet["A7"] = "Total cost from input prices"
    for cell in ("A6", "A7"):
        sheet[cell].font = BOLD
    if formula.status == "infeasible":
        _write_conflicts_pointer(sheet, formula, row=8)

    row = _write_page_one(sheet, formula, first=11)
    checks: list[tuple[int, int]] = []  # (row of the amount made, row of the live cost)
    spec_checks: list[str] = []
    for product in formula.products:
        row, check, product_checks = _write_product(sheet, workbook, formula, product, row)
        spec_checks.extend(product_checks)
        if check is not None:
            checks.append(check)
    if formula.products and len(checks) == len(formula.products):
        _write_total_check(sheet, blend, checks)
    else:
        sheet["C7"] = _NO_CHECK if formula.solved else "not every product was formulated"
    write_overall_check(sheet, _CHECK_ROW, spec_checks)
    row = write_stocks(sheet, formula, row)
    add_product_cost_chart(sheet, formula, row)
    sheet.freeze_panes = "B1"  # the name column stays; blocks scroll by


def _write_total_check(sheet: Worksheet, blend: Blend, checks: list[tuple[int, int]]) -> None:
    """Row 7: the run's total cost from each product's live cost check x amount made."""
    per = blend.settings.cost_unit_in_mass_units
    terms = "+".join(f"B{cost}*B{amount}" for amount, cost in checks)
    live(cell_at(sheet, 7, 2), f"=({terms})/{plain(per) if per.is_integer() else repr(per)}",
         MONEY_FORMAT)
    put(sheet, 7, 3, f"{run_cost_unit(blend)} (live formula: each product's cost from "
                     "input prices x amount made)".strip())


def _write_product(
    sheet: Worksheet, workbook: Workbook, formula: Formula, product: ProductFormula, row: int
) -> tuple[int, tuple[int, int] | None, list[str]]:
    """One product's block from `row`: name, amount made, cost and its check, the tables.

    Returns the first row after the block, the rows of its amount and live cost check
    (None when the check could not be written), and the range of its spec checks.
    """
    blend = formula.blend
    settings = blend.settings
    put(sheet, row, 1, "Product").font = SECTION
    put(sheet, row, 2, product.name).font = SECTION
    if not product.solved:
        return _write_unsolved_product(sheet, product, row), None, []
    put(sheet, row + 1, 1, "Amount made").font = BOLD
    number(cell_at(sheet, row + 1, 2), product.amount, whole_format(product.amount))
    put(sheet, row + 1, 3, settings.mass_unit).alignment = BESIDE_NUMBER
    block = Block(
        ingredients=product.ingredients,
        nutrients=product.nutrients,
        header_row=row + 5,
        amount=product.amount,
        made=True,
        limits=product.limits,
        amount_cell=f"$B${row + 1}",
        alone=formula.linked(product.name),
    )
    check = _write_cost(sheet, workbook, blend, block, row=row + 2, label="Cost",
                        cost=product.cost, unit=cost_unit(settings))
    below, spec_checks = write_tables(sheet, workbook, blend, block)
    below = add_block_charts(sheet, block, below)
    return below + 1, (row + 1, check) if check is not None else None, [spec_checks] if spec_checks else []


def _write_unsolved_product(sheet: Worksheet, product: ProductFormula, row: int) -> int:
    """A product without a formula: its status and message under its name; returns the
    first row after the block."""
    put(sheet, row + 1, 1, "Status").font = BOLD
    put(sheet, row + 1, 2, product.status).font = STATUS_ALERT
    put(sheet, row + 2, 1, "Message").font = BOLD
    put(sheet, row + 2, 2, product.message)
    return row + 4


def _write_cost(
    sheet: Worksheet,
    workbook: Workbook,
    blend: Blend,
    block: Block,
    *,
    row: int,
    label: str,
    cost: float | None,
    unit: str,
) -> int | None:
    """The cost on `row` and its live check from the input prices on the row below.

    Returns the check's row, or None when it could not be written.
    """
    put(sheet, row, 1, label).font = BOLD
    number(cell_at(sheet, row, 2), tidy(cost), MONEY_FORMAT)
    put(sheet, row, 3, unit).alignment = BESIDE_NUMBER
    put(sheet, row + 1, 1, f"{label} from input prices").font = BOLD
    check = recompute_formula(blend, block.ingredients, block.inclusion_rows, workbook,
                              lambda item: item.cells.get("cost"))
    if check is None:
        put(sheet, row + 1, 3, _NO_CHECK)
        return None
    live(cell_at(sheet, row + 1, 2), check, MONEY_FORMAT)
    what = "amounts" if blend.diet else "inclusions"
    put(sheet, row + 1, 3, f"{unit} (live formula: {what} below x Cost column)".strip())
    return row + 1


def _write_broken(sheet: Worksheet, formula: Formula, row: int) -> int:
    """The broken soft limits, highlighted, from `row`; returns the first row for what
    follows (`row` itself when every limit is met)."""
    broken = formula.broken_limits
    if not broken:
        return row
    labels = ["Soft limit", "Side", "Bound", "Level", "Violation (shortfall or excess)",
              f"Penalty ({penalty_unit(formula.blend)} per unit of violation)", "Bound read from"]
    if formula.several:
        labels.insert(1, "Product")
    meeting = "meeting it would cost more than its penalty" if len(broken) == 1 else \
        "meeting them would cost more than their penalties"
    put(sheet, row, 1, f"{SOFT_SPECS_NOT_MET}: {len(broken)}").font = ALERT_TEXT
    put(sheet, row, 2, f"{meeting[0].upper()}{meeting[1:]}. Check that this is acceptable.").font = ALERT_TEXT
    header(sheet, row + 1, labels)
    for offset, limit in enumerate(broken, start=2):
        _write_broken_row(sheet, row + offset, limit, formula.several)
    last = row + 1 + len(broken)
    for at in range(row, last + 1):
        for column in range(1, len(labels) + 1):
            cell_at(sheet, at, column).fill = ALERT_FILL
    return last + 2


def _write_broken_row(sheet: Worksheet, row: int, limit: Limit, several: bool) -> None:
    """One broken soft limit: name, (product,) side, bound, level, violation, penalty, cell."""
    values = [limit.name, limit.side]
    if several:
        values.insert(1, limit.product)
    for column, value in enumerate(values, start=1):
        put(sheet, row, column, value)
    first = len(values) + 1
    number_format = format_by_size([limit.bound, limit.level], 1)
    for column, value in enumerate((limit.bound, limit.level, limit.violation), start=first):
        number(cell_at(sheet, row, column), tidy(value), number_format)
    number(cell_at(sheet, row, first + 3), tidy(limit.penalty), format_by_size([limit.penalty], 2))
    put(sheet, row, first + 4, limit.cell)


def _write_conflicts_pointer(sheet: Worksheet, formula: Formula, row: int) -> None:
    """A line in the Result's message area that sends the reader to the Conflicts sheet."""
    count = len(formula.conflict_sets)
    if count:
        sets = f"{count} set{'s' if count != 1 else ''} of limits that cannot all hold together"
        text = f"See the Conflicts sheet: {sets}, their cells, and the {WAY_OUT.lower()}."
    else:
        text = "See the Conflicts sheet."
    put(sheet, row, 1, "Conflicts").font = BOLD
    cell = put(sheet, row, 2, text)
    cell.font = LINK
    cell.hyperlink = Hyperlink(ref=cell.coordinate, location=f"{quote_sheet(CONFLICTS)}!A1")

"""The Changes sheet: what changed since the earlier result, and why (only when this run
was compared with one).

Which output was compared, then per formula (each product, or the one blend): the cost
before and after split into the price effect and the formula effect, the ingredients
that came in or went out, each inclusion and nutrient level that changed, and the
limits that started or stopped binding.
"""

from __future__ import annotations

from openpyxl.styles import Alignment
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.blend import Blend
from blendkit.model.changes import Changes, FormulaChanges, ValueChange
from blendkit.model.formula import Formula, RunInfo
from blendkit.model.units import cost_unit, food_unit, run_cost_unit
from blendkit.write.workbook.cells import (
    BOLD,
    INCLUSION_FORMAT,
    MONEY_FORMAT,
    SECTION,
    TITLE_FONT,
    cell_at,
    format_by_size,
    header,
    new_sheet,
    number,
    paragraph,
    put,
)

TITLE = "Changes"

# Column widths, in characters: name, before, after, change, unit.
_WIDTHS = {"A": 36, "B": 16, "C": 16, "D": 16, "E": 24}
_COLUMNS = 5
# Units sit one space off the numbers they follow.
_UNIT = Alignment(horizontal="left", indent=1)
_EXPLAINED = (
    "Price effect: how much more (or, negative, less) the earlier formula costs at this "
    "run's prices. Formula effect: the rest of the cost change, what reformulating saved "
    "(negative) or cost. The two add up to the change in cost."
)


def write(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """The changes since the earlier result; no sheet when nothing was compared."""
    changes = formula.changes
    if changes is None:
        return
    sheet = new_sheet(workbook, TITLE)
    for column, width in _WIDTHS.items():
        sheet.column_dimensions[column].width = width
    put(sheet, 1, 1, f"Changes since the earlier result: {title}").font = TITLE_FONT
    put(sheet, 2, 1, _compared_with(changes))
    paragraph(sheet, 3, _EXPLAINED, _COLUMNS, sum(_WIDTHS.values()))
    row = 5
    for item in changes.formulas:
        row = _write_formula(sheet, row, item, formula.blend)
    if not changes.formulas:
        put(sheet, row, 1, "No formula of this run was in the earlier result.")
    sheet.freeze_panes = "A4"


def _compared_with(changes: Changes) -> str:
    """Which earlier output, of which input, run when."""
    when = f", run at {changes.earlier_run_utc}" if changes.earlier_run_utc else ""
    return f"Compared with {changes.earlier_output} (a result of {changes.earlier_input}{when})."


def _write_formula(sheet: Worksheet, row: int, item: FormulaChanges, blend: Blend) -> int:
    """One formula's block, a blank row after each part; returns the row after it."""
    put(sheet, row, 1, item.key).font = SECTION
    row = _write_cost(sheet, row + 1, item, _cost_unit(blend)) + 1
    row = _write_list(sheet, row, "Came in", item.came_in)
    row = _write_list(sheet, row, "Went out", item.went_out) + 1
    what = "Food (amount)" if blend.diet else "Ingredient (inclusion %)"
    row = _write_values(sheet, row, what, item.inclusions, blend, inclusions=True) + 1
    row = _write_values(sheet, row, "Nutrient (level)", item.nutrients, blend, inclusions=False) + 1
    row = _write_list(sheet, row, "Started binding", item.started_binding)
    return _write_list(sheet, row, "Stopped binding", item.stopped_binding) + 1


def _write_cost(sheet: Worksheet, row: int, item: FormulaChanges, unit: str) -> int:
    """The cost before and after, its change and that change's two causes; returns the
    row after them."""
    header(sheet, row, ["Cost", "Before", "After", "Change", "Unit"])
    put(sheet, row + 1, 1, "Cost")
    number(cell_at(sheet, row + 1, 2), item.cost_before, MONEY_FORMAT)
    number(cell_at(sheet, row + 1, 3), item.cost_after, MONEY_FORMAT)
    number(cell_at(sheet, row + 1, 4), item.cost_change, MONEY_FORMAT)
    put(sheet, row + 2, 1, "of which price effect")
    number(cell_at(sheet, row + 2, 4), item.price_effect, MONEY_FORMAT)
    put(sheet, row + 3, 1, "of which formula effect")
    number(cell_at(sheet, row + 3, 4), item.formula_effect, MONEY_FORMAT)
    for offset in (1, 2, 3):
        put(sheet, row + offset, 5, unit).alignment = _UNIT
    return row + 4


def _write_list(sheet: Worksheet, row: int, label: str, names: tuple[str, ...]) -> int:
    """A label, then its names one per row beside and below it ("none" when empty);
    returns the row after them."""
    put(sheet, row, 1, label).font = BOLD
    for offset, name in enumerate(names or ("none",)):
        put(sheet, row + offset, 2, name)
    return row + max(1, len(names))


def _write_values(sheet: Worksheet, row: int, what: str, values: tuple[ValueChange, ...],
                  blend: Blend, *, inclusions: bool) -> int:
    """A table of values before and after (blank where a side has none); returns the
    row after it."""
    header(sheet, row, [what, "Before", "After", "Change", "Unit"])
    if not values:
        put(sheet, row + 1, 1, "no change")
        return row + 2
    for offset, change in enumerate(values, start=1):
        line = row + offset
        put(sheet, line, 1, change.name)
        fmt = INCLUSION_FORMAT if inclusions else format_by_size([change.before, change.after], 1)
        number(cell_at(sheet, line, 2), change.before, fmt)
        number(cell_at(sheet, line, 3), change.after, fmt)
        if change.before is not None and change.after is not None:
            number(cell_at(sheet, line, 4), change.after - change.before, fmt)
        put(sheet, line, 5, _value_unit(blend, change.name, inclusions)).alignment = _UNIT
    return row + len(values) + 1


def _value_unit(blend: Blend, name: str, inclusions: bool) -> str:
    """The unit of an inclusion (%, a diet food's unit) or a nutrient level."""
    if inclusions:
        return food_unit(blend, name) if blend.diet else "%"
    return blend.nutrient_units.get(name.removesuffix(" (dry matter)"), "")


def _cost_unit(blend: Blend) -> str:
    """A formula's cost unit: a diet's for the whole diet, else per Cost per unit."""
    return run_cost_unit(blend) if blend.diet else cost_unit(blend.settings)

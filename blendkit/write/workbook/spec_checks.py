"""Check cells on the Result sheet: one per nutrient line, beside its live level, that reads
"broken" (and turns a warm colour) when the level recomputed from the input sheets breaks
the line's min or max, and one overall cell on the first page that counts them.

A level breaks a bound when it passes it by more than `CHANGED` relative to 1 + |bound|
(`blendkit.lp.tolerances`): the engine's own rounding never turns a check on. The cells
are spreadsheet formulas, so editing an inclusion (or an input content) updates them.
"""

from __future__ import annotations

from openpyxl.formatting.rule import CellIsRule, FormulaRule
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.lp.tolerances import CHANGED
from blendkit.write.workbook.cells import ALERT_FILL, ALERT_TEXT, BOLD, cell_at, put

# What a check cell reads.
BROKEN = "broken"
MET = "ok"
ALL_MET = "all specs met"
# The nutrient table's columns: min, max, the live level, and the check.
_MIN, _MAX, _LIVE, CHECK_COLUMN = "D", "E", "H", 9


def write_spec_checks(sheet: Worksheet, first: int, last: int) -> str | None:
    """A check cell in column I of rows `first` to `last`; returns their range (None when
    there are no rows)."""
    if last < first:
        return None
    for row in range(first, last + 1):
        cell_at(sheet, row, CHECK_COLUMN, _check_formula(row))
    cells = f"I{first}:I{last}"
    sheet.conditional_formatting.add(
        cells, CellIsRule(operator="equal", formula=[f'"{BROKEN}"'], fill=ALERT_FILL, font=ALERT_TEXT))
    return cells


def _check_formula(row: int) -> str:
    """Blank without a live level; "broken" past a bound by more than the tolerance."""
    live, low, high = f"{_LIVE}{row}", f"{_MIN}{row}", f"{_MAX}{row}"
    below = f"AND(ISNUMBER({low}),{live}<{low}-{CHANGED!r}*(1+ABS({low})))"
    above = f"AND(ISNUMBER({high}),{live}>{high}+{CHANGED!r}*(1+ABS({high})))"
    return f'=IF(ISNUMBER({live}),IF(OR({below},{above}),"{BROKEN}","{MET}"),"")'


def write_overall_check(sheet: Worksheet, row: int, ranges: list[str]) -> None:
    """Row `row`: "Spec check" and a cell reading "all specs met" or how many are broken,
    from the check cells in `ranges`; coloured when any is broken."""
    put(sheet, row, 1, "Spec check").font = BOLD
    cell = cell_at(sheet, row, 2)
    if not ranges:
        put(sheet, row, 2, "no live checks on this sheet")
        return
    count = "+".join(f'COUNTIF({cells},"{BROKEN}")' for cells in ranges)
    cell.value = f'=IF({count}=0,"{ALL_MET}",({count})&" spec(s) broken")'
    cell.font = BOLD
    sheet.conditional_formatting.add(
        cell.coordinate,
        FormulaRule(formula=[f'{cell.coordinate}<>"{ALL_MET}"'], fill=ALERT_FILL, font=ALERT_TEXT))
    put(sheet, row, 3, "live: each spec's level recomputed from the input sheets "
                       "(Check column of the nutrient tables)")

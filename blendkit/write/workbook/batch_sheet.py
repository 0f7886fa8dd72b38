"""The Batch sheet: what the mill weighs for one batch of a product, on one printed page.

One sheet per product with a formula, in Products order: "Batch sheet", "Batch sheet 2",
... (`blendkit.model.blend.batch_sheet_title`); the product's name is on the sheet. From
the top: the title, the caution, the product and the batch size (`Batch size` setting, in
the mass unit); the weights to weigh on the scale, then, when the `Hand-add below` setting
is given, the weights below it listed apart as hand additions; the total (a live SUM that
reads whether it equals the batch size); a live spec check that recomputes every spec
level from the weights alone and the Ingredients sheet's content cells, with each spec's
min, max and "ok" / "not met"; and blank cells for who mixed and who checked, with dates.

The weights are `blendkit.model.batch`'s: on the scale step or in whole packs where the
formula is there, exact otherwise (with a note). A run without a formula (infeasible,
unbounded, ...) and a product without one get no Batch sheet: there is nothing to weigh,
and the Result sheet says why. A diet has no batch and gets none either.
"""

from __future__ import annotations

from openpyxl.formatting.rule import CellIsRule
from openpyxl.styles import Alignment
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.batch import Batch, BatchLine, ON_STEP, batches
from blendkit.model.blend import BATCH_SHEET_TITLE, DRY_MATTER, batch_sheet_title, is_output_title
from blendkit.model.formula import Formula, IngredientLine, NutrientLine, RunInfo
from blendkit.write.workbook.cells import (
    ALERT_FILL,
    ALERT_TEXT,
    BOLD,
    BOX,
    HEADER_BORDER,
    SECTION,
    TITLE_FONT,
    cell_at,
    fixed_format,
    header,
    live,
    look,
    new_sheet,
    number,
    nutrient_format,
    plain,
    put,
    styled,
    whole_format,
    write_caution,
)
from blendkit.write.workbook.first_page import BESIDE_NUMBER
from blendkit.write.workbook.live import MAX_FORMULA_LENGTH, recompute_formula

TITLE = BATCH_SHEET_TITLE

# What a spec check cell reads.
MET = "ok"
NOT_MET = "not met"
ALL_MET = "all specs met"
# A level within this of a bound, relative to |bound|, meets it: the weights are the
# formula's own, so only the spreadsheet's rounding is allowed.
SPEC_CHECK = 1e-9
# Column widths in characters: ingredient, weight, % of batch, packs, scale step,
# weighed (a box to tick), note. 100 in all: a portrait page (`printing`).
WIDTHS = (26, 12, 10, 12, 11, 9, 20)
# The weight column's decimals without a step or pack size: grams of a kilogram.
EXACT_DECIMALS = 3
# Most decimals a step's own decimals may ask for.
_MOST_DECIMALS = 6
# Rows of the top part: product, batch size; the tables start below.
_PRODUCT_ROW, _SIZE_ROW, _FIRST_TABLE = 4, 5, 7
CENTRE = Alignment(horizontal="center")
NOTE = Alignment(wrap_text=True, vertical="top", indent=1)  # kept off the Weighed box
# The looks of the cells on every line of the tables, each set once per workbook (`styled`).
_LINE_LOOKS = {"batch weighed": look(border=BOX), "batch note": look(alignment=NOTE),
          "batch check": look(alignment=CENTRE), "batch unit": look(alignment=BESIDE_NUMBER)}
_UNAVAILABLE = "not available: input cells unknown or formula too long"


def write(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """One Batch sheet per product with a formula (none for a run without one)."""
    for number_, batch in enumerate(batches(formula), start=1):
        sheet = new_sheet(workbook, batch_sheet_title(number_))
        _write_batch(sheet, workbook, formula, batch, title)


def written_titles(workbook: Workbook) -> list[str]:
    """The Batch sheets of `workbook` (called once the writers ran: each prints on one page)."""
    return [sheet.title for sheet in workbook.worksheets
            if is_output_title(sheet.title) and sheet.title.casefold().startswith(TITLE.casefold())]


def _write_batch(sheet: Worksheet, workbook: Workbook, formula: Formula, batch: Batch, title: str) -> None:
    """One product's sheet, top to bottom."""
    for column, width in enumerate(WIDTHS, start=1):
        sheet.column_dimensions[get_column_letter(column)].width = width
    name = batch.product if batch.product is not None else title
    put(sheet, 1, 1, f"{TITLE}: {name}").font = TITLE_FONT
    write_caution(sheet, 2, columns=len(WIDTHS), width=sum(WIDTHS))
    put(sheet, _PRODUCT_ROW, 1, "Product").font = BOLD
    put(sheet, _PRODUCT_ROW, 2, name).font = SECTION
    put(sheet, _SIZE_ROW, 1, "Batch size").font = BOLD
    number(cell_at(sheet, _SIZE_ROW, 2), batch.size, whole_format(batch.size))
    put(sheet, _SIZE_ROW, 3, batch.unit).alignment = BESIDE_NUMBER
    rows: dict[str, int] = {}
    row = _write_lines(sheet, batch, batch.weighed, _FIRST_TABLE,
                       "Weigh on the scale" if batch.hand_add_below is not None else "Weigh", rows)
    ranges = [f"B{_FIRST_TABLE + 2}:B{row - 1}"] if batch.weighed else []
    if batch.hand_add_below is not None:
        start = row + 1
        heading = f"Hand additions (below {plain(batch.hand_add_below)} {batch.unit})"
        row = _write_lines(sheet, batch, batch.hand_added, start, heading, rows)
        if batch.hand_added:
            ranges.append(f"B{start + 2}:B{row - 1}")
    total = _write_total(sheet, batch, row, ranges)
    for at in rows.values():
        live(cell_at(sheet, at, 3), f"=B{at}/$B${total}*100", fixed_format(EXACT_DECIMALS))
    row = _write_spec_check(sheet, workbook, formula, batch, rows, total + 2)
    _write_sign_off(sheet, row + 1)
    sheet.print_area = f"A1:{get_column_letter(len(WIDTHS))}{sheet.max_row}"


def _write_lines(sheet: Worksheet, batch: Batch, lines: tuple[BatchLine, ...], row: int,
                 heading: str, rows: dict[str, int]) -> int:
    """A heading, the table header and one row per line from `row`; records each line's
    row in `rows` and returns the first row after the table."""
    put(sheet, row, 1, heading).font = SECTION
    header(sheet, row + 1, ["Ingredient", f"Weight ({batch.unit})", "% of batch",
                            "Packs", f"Scale step ({batch.unit})", "Weighed", "Note"])
    if not lines:
        put(sheet, row + 2, 1, "none")
        return row + 3
    for offset, line in enumerate(lines, start=2):
        at = row + offset
        rows[line.ingredient] = at
        put(sheet, at, 1, line.ingredient)
        number(cell_at(sheet, at, 2), line.weight, _weight_format(line))
        if line.packs is not None:
            put(sheet, at, 4, f"{line.packs} x {plain(line.pack_size)} {batch.unit}")
        number(cell_at(sheet, at, 5), line.step, _weight_format(line))
        styled(cell_at(sheet, at, 6), "batch weighed", _LINE_LOOKS["batch weighed"])
        styled(put(sheet, at, 7, line.note or None), "batch note", _LINE_LOOKS["batch note"])
    return row + len(lines) + 2


def _weight_format(line: BatchLine) -> str:
    """A weight on a step or in packs shows the step's decimals; an exact one, grams of a
    kilogram (`EXACT_DECIMALS`)."""
    unit = line.step if line.step is not None else (line.pack_size if line.packs is not None else None)
    if unit is None:
        return fixed_format(EXACT_DECIMALS)
    text = f"{unit:.{_MOST_DECIMALS}f}".rstrip("0").rstrip(".")
    return fixed_format(len(text.partition(".")[2]))


def _write_total(sheet: Worksheet, batch: Batch, row: int, ranges: list[str]) -> int:
    """The total of the weights (a live SUM), its share and whether it equals the batch
    size; returns its row."""
    put(sheet, row, 1, "Total").font = BOLD
    total = cell_at(sheet, row, 2)
    live(total, "=" + "+".join(f"SUM({cells})" for cells in ranges) if ranges else "=0",
         fixed_format(EXACT_DECIMALS))
    total.font = BOLD
    total.border = HEADER_BORDER
    live(cell_at(sheet, row, 3), f"=SUM(C{_FIRST_TABLE + 2}:C{row - 1})", fixed_format(EXACT_DECIMALS))
    size = f"$B${_SIZE_ROW}"
    check = cell_at(sheet, row, 4)
    check.value = (f'=IF(ABS(B{row}-{size})<={ON_STEP!r}*{size},"equals the batch size",'
                   f'"differs from the batch size")')
    check.alignment = BESIDE_NUMBER
    sheet.conditional_formatting.add(check.coordinate, CellIsRule(
        operator="equal", formula=['"differs from the batch size"'], fill=ALERT_FILL, font=ALERT_TEXT))
    return row


def _write_spec_check(sheet: Worksheet, workbook: Workbook, formula: Formula, batch: Batch,
                      rows: dict[str, int], row: int) -> int:
    """Every spec line (a min or a max) with its level recomputed live from the weights;
    returns the first row after the block and a blank."""
    put(sheet, row, 1, "Spec check").font = SECTION
    put(sheet, row, 2, "each level recomputed live from these weights and the Ingredients sheet")
    header(sheet, row + 1, ["Spec", "Min", "Max", "Level", "Check", "Unit"])
    specs = [line for line in batch.nutrients if line.minimum is not None or line.maximum is not None]
    lines = tuple(line for line in _product_lines(formula, batch) if line.name in rows)
    levels = _Levels(workbook, formula, lines, rows)
    for offset, line in enumerate(specs, start=2):
        at = row + offset
        put(sheet, at, 1, f"{line.name} (dry matter)" if line.basis == DRY_MATTER and line.kind != "ratio"
            else line.name)
        number(cell_at(sheet, at, 2), line.minimum, nutrient_format(line))
        number(cell_at(sheet, at, 3), line.maximum, nutrient_format(line))
        text = levels.of(line)
        if text is None:
            put(sheet, at, 4, _UNAVAILABLE)
        else:
            live(cell_at(sheet, at, 4), text, nutrient_format(line))
            styled(cell_at(sheet, at, 5, _check_formula(at)), "batch check", _LINE_LOOKS["batch check"])
        styled(put(sheet, at, 6, line.unit or None), "batch unit", _LINE_LOOKS["batch unit"])
    last = row + len(specs) + 1
    if specs:
        cells = f"E{row + 2}:E{last}"
        sheet.conditional_formatting.add(cells, CellIsRule(
            operator="equal", formula=[f'"{NOT_MET}"'], fill=ALERT_FILL, font=ALERT_TEXT))
        put(sheet, last + 1, 1, "All specs").font = BOLD
        count = f'COUNTIF({cells},"{NOT_MET}")'
        overall = cell_at(sheet, last + 1, 5, f'=IF({count}=0,"{ALL_MET}",{count}&" {NOT_MET}")')
        overall.font = BOLD
        overall.alignment = CENTRE
    else:
        put(sheet, last + 1, 1, "This product has no spec with a min or a max.")
    return last + 3


def _product_lines(formula: Formula, batch: Batch) -> tuple[IngredientLine, ...]:
    """The ingredient lines of the batch's product (the single formula's for None)."""
    for product in formula.products:
        if product.name == batch.product:
            return product.ingredients
    return formula.ingredients


def _check_formula(row: int) -> str:
    """"ok" or "not met": the level in D against the min in B and the max in C, each
    allowed `SPEC_CHECK` of the bound."""
    level, low, high = f"D{row}", f"B{row}", f"C{row}"
    below = f"AND(ISNUMBER({low}),{level}<{low}-{SPEC_CHECK!r}*ABS({low}))"
    above = f"AND(ISNUMBER({high}),{level}>{high}+{SPEC_CHECK!r}*ABS({high}))"
    return f'=IF(ISNUMBER({level}),IF(OR({below},{above}),"{NOT_MET}","{MET}"),"")'


class _Levels:
    """Live level formulas from the % of batch cells (column C): as fed, a dry-matter
    level (as fed / dry matter x 100) and a ratio (one level over the other)."""

    def __init__(self, workbook: Workbook, formula: Formula,
                 lines: tuple[IngredientLine, ...], rows: dict[str, int]) -> None:
        self.workbook, self.blend, self.lines, self.rows = workbook, formula.blend, lines, rows

    def as_fed(self, nutrient: str) -> str | None:
        """The as-fed level of `nutrient` as a formula's operand (no "="), or None; a
        combined nutrient is its Sum of its parts' levels (it has no Ingredients column)."""
        combined = next((item for item in self.blend.combined if item.name == nutrient), None)
        if combined is not None:
            parts = [self.as_fed(part) for _number, part in combined.terms]
            if None in parts:
                return None
            return "(" + "+".join(f"{number!r}*{part}" for (number, _), part in zip(combined.terms, parts)) + ")"
        text = recompute_formula(self.blend, self.lines, self.rows, self.workbook,
                                 lambda item: item.content_cells.get(nutrient), column="C")
        return None if text is None else f"({text[1:]})"

    def of(self, line: NutrientLine) -> str | None:
        """The live formula of a spec line's level, or None when it cannot be written."""
        if line.kind == "ratio":
            parts = next((spec.ratio for spec in self.blend.specs
                          if spec.ratio is not None and spec.nutrient == line.name), None)
            terms = [self.as_fed(part) for part in parts] if parts else [None]
            text = None if None in terms else f"={terms[0]}/{terms[1]}"
        elif line.basis == DRY_MATTER:
            top, dry = self.as_fed(line.name), self.as_fed(self.blend.settings.dry_matter)
            text = None if top is None or dry is None else f"={top}/{dry}*100"
        else:
            level = self.as_fed(line.name)
            text = None if level is None else f"={level}"
        return text if text is not None and len(text) <= MAX_FORMULA_LENGTH else None


def _write_sign_off(sheet: Worksheet, row: int) -> None:
    """Mixed by and checked by, each with a date: blank underlined cells to fill in."""
    for offset, label in enumerate(("Mixed by", "Checked by")):
        at = row + offset * 2
        put(sheet, at, 1, label).font = BOLD
        for column in (2, 3):
            cell_at(sheet, at, column).border = HEADER_BORDER
        date = put(sheet, at, 4, "Date")
        date.font = BOLD
        date.alignment = Alignment(horizontal="right")
        for column in (5, 6):
            cell_at(sheet, at, column).border = HEADER_BORDER

"""The shared writer: an `Example` as a workbook in the format the reader expects.

One sheet per part of the example (Ingredients, Specs, then Combined, Groups, Products and
Limits when it has rows for them, Settings and Notes), each with a bold frozen header, number
formats and columns as wide as their contents.
"""

from __future__ import annotations

from openpyxl import Workbook
from openpyxl.styles import Alignment, Font
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.authoring.examples.record import Example

# Number formats for the written cells: at least two decimals, up to four where the value has them.
AMOUNT_FORMAT = "0.00##"
COST_FORMAT = "#,##0"
# Diet-mode prices are small (per 100 g), so they keep two decimals.
SMALL_COST_FORMAT = "#,##0.00"

# Column widths in characters: wide enough for the header, never wider than this.
MAX_COLUMN_WIDTH = 40
NOTES_COLUMN_WIDTH = 110


def workbook_of(example: Example) -> Workbook:
    """`example` as an openpyxl Workbook, not yet saved."""
    workbook = Workbook()
    _write_ingredients(workbook.active, example)
    _write_specs(workbook.create_sheet("Specs"), example)
    if example.combined:
        _write_combined(workbook.create_sheet("Combined"), example)
    if example.groups:
        _write_groups(workbook.create_sheet("Groups"), example)
    if example.products:
        _write_products(workbook.create_sheet("Products"), example)
    if example.limits:
        _write_limits(workbook.create_sheet("Limits"), example)
    _write_settings(workbook.create_sheet("Settings"), example)
    write_notes(workbook.create_sheet("Notes"), example.notes)
    return workbook


def _write_ingredients(sheet: Worksheet, example: Example) -> None:
    """The Ingredients sheet: one row per ingredient, one column per nutrient."""
    sheet.title = "Ingredients"
    limit = example.limit_unit
    header = [
        "Ingredient",
        example.cost_header,
        f"Min ({limit})",
        f"Max ({limit})",
        "Use",
        *example.extra_columns,
        *(f"{nutrient} ({unit})" for nutrient, unit in example.nutrients),
    ]
    sheet.append(header)
    for name, cost, minimum, maximum, use, *rest in example.ingredients:
        sheet.append([name, cost, minimum, maximum, "yes" if use else "no", *rest])
    cost_format = SMALL_COST_FORMAT if example.diet else COST_FORMAT
    formats = [None, cost_format, AMOUNT_FORMAT, AMOUNT_FORMAT, None]
    formats += [None if extra == "Unit" else AMOUNT_FORMAT for extra in example.extra_columns]
    formats += [AMOUNT_FORMAT] * len(example.nutrients)
    _finish(sheet, formats, freeze="B2")
    _centre(sheet, 5)


def _write_specs(sheet: Worksheet, example: Example) -> None:
    """The Specs sheet: min and max level of each constrained nutrient or ratio."""
    sheet.append(list(example.spec_columns))
    for row in example.specs:
        sheet.append(list(row))
    formats = [AMOUNT_FORMAT if column in ("Min", "Max") else None for column in example.spec_columns]
    _finish(sheet, formats, freeze="A2")


def _write_combined(sheet: Worksheet, example: Example) -> None:
    """The Combined sheet: each combined nutrient, its Sum and its unit."""
    sheet.append(["Nutrient", "Sum", "Unit"])
    for row in example.combined:
        sheet.append(list(row))
    _finish(sheet, [None, None, None], freeze="A2")


def _write_groups(sheet: Worksheet, example: Example) -> None:
    """The Groups sheet: bounds on the total inclusion of several ingredients."""
    unit = example.limit_unit
    header = ["Group", "Ingredients", f"Min ({unit})", f"Max ({unit})"]
    if any(len(row) > 4 for row in example.groups):
        header.append("Product")
    sheet.append(header)
    for row in example.groups:
        sheet.append(list(row))
    _finish(sheet, [None, None, AMOUNT_FORMAT, AMOUNT_FORMAT, None][: len(header)], freeze="A2")
    for (cell,) in sheet.iter_rows(min_row=2, min_col=2, max_col=2):
        cell.alignment = Alignment(wrap_text=True, vertical="top")


def _write_products(sheet: Worksheet, example: Example) -> None:
    """The Products sheet: each product to make and its amount in the mass unit."""
    sheet.append(["Product", f"Amount ({example.mass_unit})"])
    for row in example.products:
        sheet.append(list(row))
    _finish(sheet, [None, AMOUNT_FORMAT], freeze="A2")


def _write_limits(sheet: Worksheet, example: Example) -> None:
    """The Limits sheet: inclusion limits of one ingredient in one product."""
    sheet.append(["Product", "Ingredient", "Min (%)", "Max (%)"])
    for row in example.limits:
        sheet.append(list(row))
    _finish(sheet, [None, None, AMOUNT_FORMAT, AMOUNT_FORMAT], freeze="A2")


def _write_settings(sheet: Worksheet, example: Example) -> None:
    """The Settings sheet: name, mode, batch size and units."""
    sheet.append(["Setting", "Value"])
    for row in example.settings:
        sheet.append(list(row))
    _finish(sheet, [None, None], freeze="A2")
    for (cell,) in sheet.iter_rows(min_row=2, min_col=2, max_col=2):
        cell.alignment = Alignment(horizontal="left")


def write_notes(sheet: Worksheet, paragraphs: tuple[str, ...]) -> None:
    """A Notes sheet: a bold "Notes" header, then one wrapped paragraph a row (the
    examples' scenario, sources and caution; the template's notes too)."""
    sheet.append(["Notes"])
    for paragraph in paragraphs:
        sheet.append([paragraph])
        sheet.cell(row=sheet.max_row, column=1).alignment = Alignment(wrap_text=True, vertical="top")
    sheet["A1"].font = Font(bold=True)
    sheet.freeze_panes = "A2"
    sheet.column_dimensions["A"].width = NOTES_COLUMN_WIDTH


def _finish(sheet: Worksheet, formats: list[str | None], freeze: str) -> None:
    """Shared look of the data sheets: bold frozen header, number formats, column widths."""
    for cell in sheet[1]:
        cell.font = Font(bold=True)
    sheet.freeze_panes = freeze
    for column, number_format in enumerate(formats, start=1):
        cells = [row[0] for row in sheet.iter_rows(min_col=column, max_col=column)]
        if number_format:
            for cell in cells[1:]:
                cell.number_format = number_format
        widest = max(len(_shown(cell.value)) for cell in cells)
        sheet.column_dimensions[get_column_letter(column)].width = min(widest + 2, MAX_COLUMN_WIDTH)


def _centre(sheet: Worksheet, column: int) -> None:
    """Centre a short yes/no column below the header."""
    for (cell,) in sheet.iter_rows(min_row=2, min_col=column, max_col=column):
        cell.alignment = Alignment(horizontal="center")


def _shown(value: object) -> str:
    """Roughly what a cell displays, to size its column."""
    if value is None:
        return ""
    if isinstance(value, float):
        return f"{value:.2f}"
    return str(value)

"""Small blend workbooks for tests, built with openpyxl in a temporary folder.

Each sheet is given as a list of rows, each row a list of cell values: None leaves a cell
blank, an empty list leaves the whole row blank, text starting with "=" is a formula, and
`Styled(value, number_format)` sets a number format (see `percent`). openpyxl stores no
result for a formula; `store_saved_values` adds one, as a spreadsheet program would on
saving.

The demo data is an invented scenario (a layer mash for the "Hilltop Hens" co-op); the
figures are made up for tests and are not feeding advice.
"""

from __future__ import annotations

import re
import zipfile
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import escape

import openpyxl

# A complete, valid Ingredients sheet: header, then one row per ingredient.
INGREDIENTS = [
    ["Ingredient", "Cost (EUR/t)", "Min (%)", "Max (%)", "Use",
     "Crude protein (%)", "Energy (MJ/kg)", "Calcium (%)"],
    ["Maize", 212, None, None, "yes", 8.6, 13.8, 0.02],
    ["Soybean meal", 425, None, 30, "yes", 45.5, 9.9, 0.3],
    ["Wheat bran", 158, None, 15, "yes", 15.2, 6.4, 0.12],
    ["Limestone", 48, 5, None, "yes", None, None, 37.5],
]

# A valid Specs sheet for INGREDIENTS.
SPECS = [
    ["Nutrient", "Min", "Max"],
    ["Crude protein", 16.5, None],
    ["Energy", 11.2, 12.0],
    ["Calcium", 3.6, 4.1],
]

# A Specs sheet with its header and no rows: no nutrient limits.
NO_SPECS = [["Nutrient", "Min", "Max"]]

# Two products from the INGREDIENTS above, with a group and per-product limits.
PRODUCTS = [
    ["Product", "Amount (kg)"],
    ["Layer mash", 6000],
    ["Pullet grower", 2500],
]
GROUPS = [
    ["Group", "Ingredients", "Min", "Max", "Product"],
    ["Cereals", "Maize, Wheat bran", 40, None, None],
    ["Protein feeds", "Soybean meal", None, 25, "Pullet grower"],
]
LIMITS = [
    ["Product", "Ingredient", "Min", "Max"],
    ["Pullet grower", "Limestone", 1, 2],
    ["Layer mash", "Wheat bran", None, 10],
]


@dataclass(frozen=True)
class Styled:
    """A cell value written with a number format, such as Styled(0.05, "0%")."""

    value: object
    number_format: str


def percent(value: float, number_format: str = "0%") -> Styled:
    """A number shown as a percentage: percent(0.05) is a cell 0.05 that shows as 5%."""
    return Styled(value, number_format)


def make_workbook(
    tmp_path: Path,
    ingredients: list[list] | None = None,
    specs: list[list] | None = None,
    settings: list[list] | None = None,
    *,
    sheets: dict[str, list[list]] | None = None,
    name: str = "blend.xlsx",
) -> Path:
    """Write a workbook to `tmp_path / name` and return its path.

    `ingredients`, `specs` and `settings` fill sheets titled Ingredients, Specs and
    Settings, in that order; None leaves the sheet out. `sheets` adds further sheets under
    any title (also a way to test unusual titles such as " specs ").
    """
    book = openpyxl.Workbook()
    book.remove(book.active)
    wanted = {"Ingredients": ingredients, "Specs": specs, "Settings": settings, **(sheets or {})}
    for title, rows in wanted.items():
        if rows is None:
            continue
        sheet = book.create_sheet(title)
        for row_number, row in enumerate(rows, start=1):
            for column_number, value in enumerate(row, start=1):
                if value is None:
                    continue
                cell = sheet.cell(row=row_number, column=column_number)
                if isinstance(value, Styled):
                    cell.value = value.value
                    cell.number_format = value.number_format
                else:
                    cell.value = value
    if not book.worksheets:
        book.create_sheet("Sheet1")  # a workbook needs at least one sheet
    path = tmp_path / name
    book.save(path)
    return path


def store_saved_values(path: Path, sheet_title: str, values: dict[str, object]) -> None:
    """Store results for formula cells of one sheet, as a spreadsheet program does on saving.

    `values` maps a cell such as "C2" to its result: a number, text, True/False, or an
    error value such as "#DIV/0!". The workbook must have been written by `make_workbook`.
    """
    index = openpyxl.load_workbook(path).sheetnames.index(sheet_title)
    part = f"xl/worksheets/sheet{index + 1}.xml"
    with zipfile.ZipFile(path) as archive:
        members = {info.filename: archive.read(info) for info in archive.infolist()}
    xml = members[part].decode("utf-8")
    for coordinate, value in values.items():
        pattern = re.compile(rf'<c r="{coordinate}"(?P<attrs>[^>]*)>(?P<formula><f>.*?</f>)<v ?/>\s*</c>')
        if isinstance(value, bool):
            kind, text = "b", str(int(value))
        elif isinstance(value, (int, float)):
            kind, text = "n", repr(value)
        elif isinstance(value, str) and value.startswith("#"):
            kind, text = "e", value
        else:
            kind, text = "str", escape(str(value))
        replacement = rf'<c r="{coordinate}"\g<attrs> t="{kind}">\g<formula><v>{text}</v></c>'
        xml, count = pattern.subn(lambda match: match.expand(replacement), xml)
        if count != 1:
            raise ValueError(f"no formula cell {coordinate} in {sheet_title}")
    members[part] = xml.encode("utf-8")
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        for member, data in members.items():
            archive.writestr(member, data)

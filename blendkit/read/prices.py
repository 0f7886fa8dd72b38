"""A price list (`solve --prices PRICES.xlsx`): its Ingredients sheet, read into a PriceList.

The sheet has our Ingredients headers: ``Ingredient`` (required), ``Cost``, ``Stock`` and
any nutrient columns; Min, Max, Use and Unit columns, and the weighing rules' Min if
used, Pack size and Scale step, are allowed and ignored (they are the workbook's own). Every
value is optional: a blank cell leaves the workbook's own value. Values are read with
the reader's rules for numbers; a cost may be any number, a stock 0 or more. Problems
name the price list's file, sheet and cell.
"""

from __future__ import annotations

import hashlib
import io
from pathlib import Path

import openpyxl

from blendkit.errors import Problem, WorkbookError
from blendkit.model.prices import PriceEntry, PriceList
from blendkit.read.names import read_row_name
from blendkit.read.package import ReadLimits, check_package, open_archive
from blendkit.read.saved_values import saved_values
from blendkit.read.tables import Row, Table, Wanted, check_columns, empty_sheet, read_table
from blendkit.read.values import format_number, name_key, read_number

INGREDIENTS = "Ingredients"

_COLUMNS: Wanted = {
    "ingredient": ("Ingredient", "the name of each ingredient", True),
    "cost": ("Cost", "the price of each ingredient", False),
    "stock": ("Stock", "the quantity on hand in the mass unit", False),
}
# Columns of our Ingredients sheet that a price list may carry but does not apply.
_IGNORED = {"min", "max", "use", "unit", "min if used", "pack size", "scale step"}


def read_price_list(path: str | Path, *, limits: ReadLimits = ReadLimits()) -> PriceList:
    """The price list in the workbook at `path`; raises WorkbookError with every problem,
    each placed as "<file> <sheet>!<cell>" (also when the file is larger than `limits`
    allow, checked before it is parsed)."""
    path = Path(path)
    try:
        data = path.read_bytes()
    except OSError as error:
        raise WorkbookError([Problem(path.name, f"cannot read the price list ({error.strerror or error})")]) from None
    problems: list[Problem] = []
    table = _ingredients_table(data, limits, problems)
    entries = _entries(table, problems) if table is not None else []
    if problems:
        raise WorkbookError([Problem(path.name if p.where == "file" else f"{path.name} {p.where}", p.message)
                             for p in problems])
    nutrients = [column for column in table.columns if column.key not in _COLUMNS and column.key not in _IGNORED]
    return PriceList(
        file_name=path.name,
        sha256=hashlib.sha256(data).hexdigest(),
        entries=tuple(entries),
        units={column.key: column.unit for column in nutrients},
        names={column.key: column.name for column in nutrients},
    )


def _ingredients_table(data: bytes, limits: ReadLimits, problems: list[Problem]) -> Table | None:
    """The price list's Ingredients table (None, with a problem, when there is none)."""
    try:
        with open_archive(data) as archive:
            too_large = check_package(archive, limits, "file")
        if too_large:
            problems.extend(too_large)
            return None
        formulas = openpyxl.load_workbook(io.BytesIO(data), data_only=False)
        saved = saved_values(data)
    except Exception as error:  # any file openpyxl cannot open: say so, never a traceback
        problems.append(Problem("file", f"cannot open it as an .xlsx workbook ({type(error).__name__})"))
        return None
    titles = {name_key(title): title for title in formulas.sheetnames}
    title = titles.get(name_key(INGREDIENTS))
    if title is None:
        problems.append(Problem("file", 'no sheet named "Ingredients"; a price list is an Ingredients sheet '
                                        "with our headers (Ingredient, Cost, nutrients, Stock)"))
        return None
    table = read_table(formulas[title], saved.get(title, {}), problems)
    if table is None:
        problems.append(empty_sheet(title, _COLUMNS))
    return table


def _entries(table: Table, problems: list[Problem]) -> list[PriceEntry]:
    """One entry per named row (names unique, as in a workbook)."""
    if "ingredient" in check_columns(table, _COLUMNS, problems):
        return []
    nutrients = [column for column in table.columns if column.key not in _COLUMNS and column.key not in _IGNORED]
    seen: dict[str, str] = {}
    entries = []
    for row in table.rows:
        name = read_row_name(row["ingredient"], "ingredient", seen, problems)
        if name is not None:
            entries.append(_entry(row, name, nutrients, problems))
    return entries


def _entry(row: Row, name: str, nutrients, problems: list[Problem]) -> PriceEntry:
    """One row's values (None or absent where blank)."""
    cost = read_number(row.get("cost"), "cost", problems)
    stock = read_number(row.get("stock"), "stock", problems)
    if stock is not None and stock < 0:
        problems.append(Problem(row["stock"].ref, f"stock {format_number(stock)} is below 0; a stock is 0 or more"))
    contents = {}
    for column in nutrients:
        value = read_number(row.get(column.key), f"{column.name} content", problems)
        if value is not None:
            contents[column.key] = value
    cells = {key: cell.ref for key, cell in row.items()}
    return PriceEntry(name=name, key=name_key(name), cost=cost, stock=stock, contents=contents, cells=cells)

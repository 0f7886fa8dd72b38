"""Read a blend workbook (.xlsx) into the domain model, reporting every mistake at once.

`read_workbook(path)` returns a `Blend`, or raises one `WorkbookError` that lists every
problem found in the whole workbook (all sheets, all cells), each with its cell, such as
``Ingredients!D7: cost "n/a" is not a number``. Problems with the file come first, then
those of Ingredients, Specs, Groups, Products, Limits and Settings, each sheet's row by
row. The file is read into memory once and never written to.

The workbook format
===================

Files
    An Office Open XML workbook: .xlsx (also .xlsm, .xltx, .xltm). Old binary .xls files,
    password-protected workbooks, CSV and other files are refused with a problem whose
    place is the file name.

Sheets
    Found by name, ignoring case and surrounding spaces: ``Ingredients`` (required),
    ``Specs`` (required, may have no data rows), and the optional ``Groups``,
    ``Products``, ``Limits`` and ``Settings``. Other sheets are ignored. Cell references
    in problems use the sheet title as written in the file. An optional sheet with nothing
    in it, or only its header row, adds nothing.

Tables
    In each sheet the header row is the first row with any non-empty cell; the table
    may start in any column. The rows below it are data rows; rows that are blank in every
    headed column are skipped (a cell holding only spaces is blank). Columns with an empty
    header are ignored, and so are the cells under them. A required sheet with no header
    row is reported as empty. A missing required column is reported on the header row
    (``Specs!1:1``); when the column that names the rows (Ingredient, Nutrient, Group,
    Product, Setting; Product and Ingredient on Limits) or Settings' Value column is
    missing, that sheet's rows are not checked further.

Headers
    Compared without regard to case, surrounding spaces or runs of inner spaces, and
    without a trailing unit in parentheses: ``Cost (EUR/t)`` is the Cost column and
    ``Crude protein (%)`` is the nutrient "Crude protein" with unit "%". Only the last
    parenthesised part is a unit, so ``Lysine (digestible) (%)`` is the nutrient
    "Lysine (digestible)". Two headers that are the same after this are an error, reported
    on the second.

Names
    Names that one sheet uses to refer to another (nutrients, ingredients, products) are
    compared like headers, ignoring case and runs of spaces, and stored as written where
    they are defined (the Ingredients header, the Ingredient column, the Products sheet).

Modes (the ``Mode`` setting)
    ``blend`` (the default): the ingredients make up a blend; inclusion limits (Min and
    Max of Ingredients, Groups and Limits) are % of the blend, each within 0..100.
    ``diet``: each ingredient is a food bought by its own unit (the Unit column, such as
    "100 g" or "serving"); Cost and the contents are per that unit, and Min and Max are
    amounts in that unit, any number 0 or more. A diet has no Products.

Ingredients sheet, one row per ingredient
    ``Ingredient``  required column; the name, unique ignoring case and spaces.
    ``Cost``        required column; price per ``Cost per`` unit of mass (see Settings),
                    or per the ingredient's unit in diet mode; any finite number (a
                    negative price is a credit).
    ``Min``, ``Max`` optional columns; inclusion limits in % of the blend, each within
                    0..100 (in diet mode: amounts in the ingredient's unit, 0 or more),
                    and min <= max. Blank means no limit.
    ``Use``         optional column; yes/y/true/1 or no/n/false/0 (any case), or a
                    TRUE/FALSE cell. Blank means yes. "no" holds the ingredient at 0.
    ``Unit``        optional column; text saying what one unit of the ingredient is
                    ("100 g", "serving"). Used in diet mode; allowed and ignored in blend
                    mode. Blank means none.
    ``Stock``       optional column; the quantity on hand in the mass unit (see
                    Settings), 0 or more, shared by all products. Blank means no limit.
    any other header is a nutrient column: the ingredient's content, as fed, in the unit
    given in the header. A blank content cell counts as 0 and is listed in
    `Ingredient.blanks`; negative contents are allowed. There may be no nutrient columns.
    At least one ingredient row is required. A row with values but no name is an error.

Specs sheet, one row per bound on a nutrient or on a ratio of two nutrients
    ``Nutrient``, ``Min``, ``Max`` are required columns; ``Basis``, ``Product``,
    ``Penalty`` and ``Priority`` are optional; other columns are ignored (use them for
    notes).
    ``Nutrient``    a nutrient column of Ingredients, compared like headers; a unit in
                    parentheses may be given and, if both it and the column have one,
                    they must agree. `Spec.nutrient` is the name as written in the
                    Ingredients header. Or a ratio ``A / B``: two nutrient columns around
                    one "/" (each side may carry its unit), bounding level(A) / level(B);
                    a "/" inside parentheses is part of a unit. Text that is itself a
                    nutrient column (a column may be named "Ca/P") is that column, not a
                    ratio. A ratio of a nutrient to itself is an error. For a ratio
                    `Spec.ratio` is (A, B) as in the header and `Spec.nutrient` is the text
                    as written.
    ``Min``, ``Max`` at least one of them; min <= max.
    ``Basis``       ``as fed`` (also blank) or ``dry matter`` (any case; "as-fed" and
                    "dry-matter" too). A dry-matter bound is on the level per unit of
                    dry matter and needs the dry-matter column (the ``Dry matter``
                    setting): it must exist, be in % (or have no unit), and hold 0..100 in
                    every ingredient. A ratio is the same on both bases and needs no
                    dry-matter column.
    ``Product``     blank: the spec applies to every product; otherwise the name of a
                    product of the Products sheet, and the spec applies to it alone.
    ``Penalty``     blank for a spec that must be met; a number above 0 makes an as-fed
                    nutrient spec soft: it may be missed at that cost per unit of
                    violation (currency per `Cost per` unit of blend). Ratio and
                    dry-matter specs cannot be soft.
    ``Priority``    optional, 1 to 9: when limits conflict, those with a lower priority
                    give way first (also on Groups and Limits; defaults by kind).
    The same nutrient (or ratio) with the same basis and product at most once.

Groups sheet, optional, one row per bound on the total inclusion of some ingredients
    ``Group``       required column; the name, unique ignoring case and spaces.
    ``Ingredients`` required column; ingredient names from Ingredients separated by
                    commas or semicolons, at least one, each once. A name that itself
                    holds a comma or semicolon is recognised when it matches an
                    ingredient; the longest match wins. Stored as the names in
                    Ingredients, in the order listed.
    ``Min``, ``Max`` required columns; at least one given in each row, min <= max; % of
                    the blend within 0..100 (diet mode: total amount, 0 or more).
    ``Product``     optional column, as in Specs.

Products sheet, optional, one row per product made from the same ingredients
    ``Product``     required column; the name, unique ignoring case and spaces.
    ``Amount``      required column; how much to make, in the mass unit, more than 0.
    Without Products rows there is one blend of ``Batch size``. Not allowed in diet mode.

Limits sheet, optional, one row per ingredient limit in one product
    ``Product``, ``Ingredient``, ``Min``, ``Max`` required columns. The product must be
    listed in Products and the ingredient in Ingredients; each (product, ingredient) pair
    at most once. Min and Max follow the rules of Ingredients' Min and Max, and at least
    one is given. They replace the ingredient's own Min and Max in that product.

Settings sheet, optional: columns ``Setting`` and ``Value``; names compared like headers
    ``Batch size``  positive number, default 1000 (in the mass unit).
    ``Mass unit``   default kg; ``Cost per`` default tonne. Both must be one of
                    `blendkit.model.MASS_UNITS_KG` (any case) and are stored in lower case.
    ``Currency``    a text label, default none.  ``Name``  the blend's title, default none.
    ``Mode``        ``blend`` (default) or ``diet`` (any case); see Modes.
    ``Dry matter``  the nutrient column holding dry matter in % as fed, default "Dry
                    matter". When given it must name a nutrient column; it is stored as
                    the column's name in the Ingredients header.
    A blank value keeps the default. Unknown and repeated settings are errors.
    `Settings.cells` maps each setting read ("batch size", "mass unit", "cost per",
    "currency", "name", "mode", "dry matter") to the cell of its value.

Numbers
    A number cell, or text that is a plain decimal number once trimmed (" 12.5", "-3",
    "1e3"). Anything else is an error worded ``<what> "<value>" is not a number``: words,
    dates, TRUE/FALSE, "nan", "inf", error values such as #DIV/0!, and numbers too large
    to be finite. A number cell whose number format shows it as a percentage (the format
    has a % that is not in quotes, escaped with a backslash or inside [brackets]) is read
    as the percentage shown: 0.05 formatted as 5% reads as 5. This applies to every number
    read (a formula's result too, but never to text), so limits, contents and spec bounds
    read as they look on screen.

Formulas
    The workbook is loaded twice, once for the results spreadsheet programs save with a
    formula and once for the formulas themselves. A formula's saved result is used like
    a typed value. A formula with no saved result (a file written by a script and never
    opened in a spreadsheet program) is an error: open and save the file to store results.
"""

from __future__ import annotations

import difflib
import io
import math
import re
import warnings
import zipfile
from dataclasses import dataclass, field, replace
from datetime import date, datetime, time, timedelta
from decimal import Decimal
from pathlib import Path

import openpyxl
from openpyxl.utils import column_index_from_string
from openpyxl.worksheet.formula import ArrayFormula

from blendkit.errors import Problem, WorkbookError
from blendkit.model.blend import (
    AS_FED,
    DRY_MATTER,
    MASS_UNITS_KG,
    Blend,
    Group,
    Ingredient,
    Product,
    ProductLimit,
    Settings,
    Spec,
)

INGREDIENTS = "Ingredients"
SPECS = "Specs"
GROUPS = "Groups"
PRODUCTS = "Products"
LIMITS = "Limits"
SETTINGS = "Settings"
# Every sheet the reader knows, in the order its problems are listed.
SHEETS = (INGREDIENTS, SPECS, GROUPS, PRODUCTS, LIMITS, SETTINGS)

BLEND_MODE = "blend"
DIET_MODE = "diet"

# Column keys (normalised headers) with what each column is for, for missing-column messages.
_INGREDIENT_COLUMNS = {
    "ingredient": ("Ingredient", "the name of each ingredient", True),
    "cost": ("Cost", "the price of each ingredient per Cost per unit of mass", True),
    "min": ("Min", "the least inclusion in % of the blend", False),
    "max": ("Max", "the most inclusion in % of the blend", False),
    "use": ("Use", "yes or no, whether the ingredient may be used", False),
    "unit": ("Unit", "what one unit of the ingredient is, in diet mode", False),
    "stock": ("Stock", "the quantity on hand in the mass unit", False),
}
_SPEC_COLUMNS = {
    "nutrient": ("Nutrient", "the nutrient column of Ingredients that the row limits", True),
    "min": ("Min", "the least level of the nutrient in the blend", True),
    "max": ("Max", "the most level of the nutrient in the blend", True),
    "basis": ("Basis", "as fed or dry matter", False),
    "product": ("Product", "the product the row applies to; blank for every product", False),
    "penalty": ("Penalty", "a soft spec's cost per unit of violation; blank for a hard spec", False),
    "priority": ("Priority", "which limits give way first when limits conflict", False),
}
_GROUP_COLUMNS = {
    "group": ("Group", "the name of each group", True),
    "ingredients": ("Ingredients", "the ingredients of the group, separated by commas", True),
    "min": ("Min", "the least total inclusion of the group", True),
    "max": ("Max", "the most total inclusion of the group", True),
    "product": ("Product", "the product the row applies to; blank for every product", False),
    "priority": ("Priority", "which limits give way first when limits conflict", False),
}
_PRODUCT_COLUMNS = {
    "product": ("Product", "the name of each product", True),
    "amount": ("Amount", "how much of each product to make, in the mass unit", True),
}
_LIMIT_COLUMNS = {
    "product": ("Product", "the product the row applies to", True),
    "ingredient": ("Ingredient", "the ingredient the row limits", True),
    "min": ("Min", "the least inclusion of the ingredient in the product", True),
    "max": ("Max", "the most inclusion of the ingredient in the product", True),
    "priority": ("Priority", "which limits give way first when limits conflict", False),
}
_SETTING_COLUMNS = {
    "setting": ("Setting", "the name of each setting", True),
    "value": ("Value", "the value of each setting", True),
}
_KNOWN_SETTINGS = {
    "batch size": "Batch size",
    "mass unit": "Mass unit",
    "cost per": "Cost per",
    "currency": "Currency",
    "name": "Name",
    "mode": "Mode",
    "dry matter": "Dry matter",
}

# Ingredient cell keys as stored in Ingredient.cells, by column key.
_CELL_KEYS = {
    "ingredient": "name", "cost": "cost", "min": "min", "max": "max", "use": "use",
    "unit": "unit", "stock": "stock",
}

_YES = {"yes", "y", "true", "1"}
_NO = {"no", "n", "false", "0"}

# The Basis column's words, compared after _basis_key.
_BASES = {AS_FED: AS_FED, DRY_MATTER: DRY_MATTER}
# Group ingredient lists: names separated by commas or semicolons (kept, for rejoining).
_LIST_SEPARATOR = re.compile(r"([,;])")

# A plain decimal number: optional sign, digits with an optional point, optional exponent.
_PLAIN_NUMBER = re.compile(r"[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?")
# A trailing "(unit)" on a header; the unit itself holds no parentheses.
_TRAILING_UNIT = re.compile(r"(?P<name>.*?)\s*\((?P<unit>[^()]*)\)\s*", re.DOTALL)
# Parts of a number format that never scale a number: quoted text, escaped characters and
# [bracketed] sections (colours, conditions, locales).
_LITERAL_FORMAT_PARTS = re.compile(r'"[^"]*"|\\.|\[[^\]]*\]')

# The first bytes of an old binary Excel file, which is also how password-protected
# .xlsx files are stored (an OLE compound document).
_OLE_MAGIC = bytes.fromhex("D0CF11E0A1B11AE1")

# How many names an unknown-name message lists in full.
_LIST_AT_MOST = 8


def read_workbook(path: str | Path) -> Blend:
    """Read the blend workbook at `path` into a `Blend`.

    Raises `WorkbookError` with every problem found (each with its sheet and cell) when the
    file cannot be read or breaks any rule of the format described in this module's
    docstring. The file is never modified.
    """
    path = Path(path)
    values_book, formulas_book = _load(path)
    sheets, file_problems = _find_sheets(path, values_book, formulas_book)
    problems: dict[str, list[Problem]] = {name: [] for name in SHEETS}
    tables = {name: _read_table(*pair, problems[name]) for name, pair in sheets.items()}
    titles = {name: sheets[name][0].title if name in sheets else name for name in SHEETS}

    settings = Settings()
    if tables.get(SETTINGS) is not None:
        settings = _read_settings(tables[SETTINGS], problems[SETTINGS])

    ingredients: list[Ingredient] = []
    nutrients: list[_Column] | None = None
    ingredient_names = _Names(titles[INGREDIENTS], None)
    if INGREDIENTS in sheets:
        table = tables[INGREDIENTS]
        if table is None:
            problems[INGREDIENTS].append(_empty_sheet(titles[INGREDIENTS], _INGREDIENT_COLUMNS))
        else:
            ingredients, nutrients, ingredient_names = _read_ingredients(
                table, settings, problems[INGREDIENTS]
            )
    settings, dry_matter = _resolve_dry_matter(settings, nutrients, titles[INGREDIENTS], problems[SETTINGS])

    products: list[Product] = []
    product_names = _Names(PRODUCTS, {}, present=False)
    if PRODUCTS in sheets:
        product_names = _Names(titles[PRODUCTS], {})
        if tables[PRODUCTS] is not None:
            products, product_names = _read_products(tables[PRODUCTS], settings, problems[PRODUCTS])

    specs: list[Spec] = []
    if SPECS in sheets:
        table = tables[SPECS]
        if table is None:
            problems[SPECS].append(_empty_sheet(titles[SPECS], _SPEC_COLUMNS))
        else:
            context = _SpecContext(nutrients, titles[INGREDIENTS], dry_matter, settings, product_names)
            specs, dry_matter_used = _read_specs(table, context, problems[SPECS])
            if dry_matter_used is not None and dry_matter is not None:
                _check_dry_matter(tables[INGREDIENTS], dry_matter, dry_matter_used, problems[INGREDIENTS])

    groups: list[Group] = []
    if tables.get(GROUPS) is not None:
        groups = _read_groups(tables[GROUPS], ingredient_names, product_names, settings, problems[GROUPS])

    limits: list[ProductLimit] = []
    if tables.get(LIMITS) is not None:
        limits = _read_limits(tables[LIMITS], ingredient_names, product_names, settings, problems[LIMITS])

    found = file_problems + [
        problem for name in SHEETS for problem in sorted(problems[name], key=_reading_order)
    ]
    if found:
        raise WorkbookError(found)
    assert nutrients is not None  # the Ingredients sheet was read without problems
    return Blend(
        ingredients=tuple(ingredients),
        nutrients=tuple(column.name for column in nutrients),
        specs=tuple(specs),
        settings=settings,
        source=path,
        nutrient_units={column.name: column.unit for column in nutrients if column.unit},
        groups=tuple(groups),
        products=tuple(products),
        limits=tuple(limits),
    )


# --- The file -------------------------------------------------------------------------


def _load(path: Path) -> tuple[openpyxl.Workbook, openpyxl.Workbook]:
    """Load the workbook twice, saved results and formulas, or say why the file is unreadable."""

    def fail(message: str) -> WorkbookError:
        return WorkbookError([Problem(path.name or str(path), message)])

    save_as = "open it in a spreadsheet program and save it as an Excel workbook (.xlsx)"
    try:
        if not path.exists():
            raise fail(f'cannot find the file "{path}"; check the file name and folder')
        if path.is_dir():
            raise fail(f'"{path}" is a folder, not a workbook; give the path of an .xlsx file')
        data = path.read_bytes()
    except (OSError, ValueError) as error:  # ValueError: a path the system cannot hold
        reason = getattr(error, "strerror", None) or error
        raise fail(f"cannot read the file ({reason}); check its name and that you may read it") from None
    if not data:
        raise fail("the file is empty; give an .xlsx workbook with the Ingredients and Specs sheets")
    if data.startswith(_OLE_MAGIC):
        raise fail(
            "the file is an old binary Excel workbook (.xls) or a password-protected one; "
            f"blendkit reads .xlsx workbooks: {save_as} without a password"
        )
    if not zipfile.is_zipfile(io.BytesIO(data)):
        kind = "not a zip archive, as .xlsx files are"
        if _looks_like_text(data):
            kind = "a text file, perhaps CSV"
        raise fail(f"the file is not an .xlsx workbook (it is {kind}); {save_as}")

    books = []
    for data_only in (True, False):
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")  # openpyxl warns about features it skips
                books.append(openpyxl.load_workbook(io.BytesIO(data), data_only=data_only))
        except Exception as error:  # any failure inside openpyxl means the file is unusable
            raise fail(
                f"the file is a zip archive but not a readable .xlsx workbook ({type(error).__name__}: "
                f"{error}); it may be damaged or another kind of file: {save_as}"
            ) from None
    return books[0], books[1]


def _looks_like_text(data: bytes) -> bool:
    """True when the start of the file decodes as text (a CSV or similar)."""
    head = data[:4096]
    try:
        head.decode("utf-8")
    except UnicodeDecodeError:
        return False
    return b"\x00" not in head


def _find_sheets(
    path: Path, values_book: openpyxl.Workbook, formulas_book: openpyxl.Workbook
) -> tuple[dict[str, tuple], list[Problem]]:
    """Pair up the known sheets of both loads, by name ignoring case and spaces."""
    problems: list[Problem] = []
    wanted = {_key(name): name for name in SHEETS}
    found: dict[str, tuple] = {}
    for values_sheet, formulas_sheet in zip(values_book.worksheets, formulas_book.worksheets):
        name = wanted.get(_key(values_sheet.title))
        if name is None:
            continue
        if name in found:
            problems.append(Problem(path.name, (
                f'two sheets are named "{name}": "{found[name][0].title}" and "{values_sheet.title}" '
                "(sheet names are compared ignoring case and spaces); rename or delete one"
            )))
            continue
        found[name] = (values_sheet, formulas_sheet)

    present = ", ".join(f'"{title}"' for title in values_book.sheetnames) or "none"
    needs = {
        INGREDIENTS: "with the columns Ingredient and Cost (Min, Max, Use, Unit and Stock are optional) "
        "and one column per nutrient",
        SPECS: "with the columns Nutrient, Min and Max (it may have no rows)",
    }
    for name, columns in needs.items():
        if name not in found:
            problems.append(Problem(path.name, (
                f'no sheet named "{name}"; add a sheet named "{name}" {columns}; '
                f"sheets present: {present}"
            )))
    return found, problems


# --- Cells and tables -----------------------------------------------------------------


@dataclass(frozen=True)
class _Cell:
    """One cell as a spreadsheet program would show it, with where it is.

    `kind` is "blank", "value", "error" (a saved error value such as #DIV/0!, in `value`)
    or "unsaved" (a formula, in `formula`, with no saved result).
    """

    ref: str
    kind: str
    value: object = None
    number_format: str = "General"
    formula: str | None = None


@dataclass(frozen=True)
class _Column:
    """One headed column: normalised key, name and unit as written, position."""

    key: str
    name: str
    unit: str
    index: int  # 1-based column number
    ref: str  # the header cell


@dataclass
class _Table:
    """A sheet's header and its non-blank data rows, cells keyed by column key."""

    title: str
    header_row: int
    columns: list[_Column]
    rows: list[dict[str, _Cell]] = field(default_factory=list)

    @property
    def header_ref(self) -> str:
        """The header row as a row reference, such as ``Ingredients!1:1``."""
        return f"{self.title}!{self.header_row}:{self.header_row}"


def _read_table(values_sheet, formulas_sheet, problems: list[Problem]) -> _Table | None:
    """The sheet's table (None if the sheet is empty); header problems go to `problems`."""
    title = values_sheet.title
    last_row = max(values_sheet.max_row, formulas_sheet.max_row)
    last_column = max(values_sheet.max_column, formulas_sheet.max_column)
    rows = zip(
        values_sheet.iter_rows(min_row=1, max_row=last_row, max_col=last_column),
        formulas_sheet.iter_rows(min_row=1, max_row=last_row, max_col=last_column),
    )
    table: _Table | None = None
    for value_cells, formula_cells in rows:
        cells = [_cell(title, v, f) for v, f in zip(value_cells, formula_cells)]
        if table is None:
            if all(cell.kind == "blank" for cell in cells):
                continue
            table = _Table(title, value_cells[0].row, _read_header(cells, problems))
            continue
        picked = {column.key: cells[column.index - 1] for column in table.columns}
        if all(cell.kind == "blank" for cell in picked.values()):
            continue
        for cell in picked.values():
            if cell.kind == "unsaved":
                problems.append(Problem(cell.ref, _unsaved(cell)))
        table.rows.append(picked)
    return table


def _cell(title: str, value_cell, formula_cell) -> _Cell:
    """Combine a cell's saved value and its formula (if any) into one `_Cell`."""
    ref = f"{title}!{value_cell.coordinate}"
    number_format = getattr(value_cell, "number_format", None) or "General"
    formula = _formula_text(formula_cell)
    value = value_cell.value
    if value_cell.data_type == "e":
        return _Cell(ref, "error", str(value), number_format, formula)
    if value is None:
        # A formula whose saved result is empty text is stored with type "str" and no value;
        # one never calculated has no type.
        if formula is not None and value_cell.data_type != "str":
            return _Cell(ref, "unsaved", None, number_format, formula)
        return _Cell(ref, "blank", None, number_format, formula)
    if isinstance(value, str) and not value.strip():
        return _Cell(ref, "blank", None, number_format, formula)
    return _Cell(ref, "value", value, number_format, formula)


def _formula_text(formula_cell) -> str | None:
    """The cell's formula as typed (``=B2*2``), or None when it holds none."""
    if formula_cell.data_type != "f":
        return None
    formula = formula_cell.value
    if isinstance(formula, ArrayFormula):
        return formula.text
    if isinstance(formula, str):
        return formula
    return "a data table formula"


def _read_header(cells: list[_Cell], problems: list[Problem]) -> list[_Column]:
    """The headed columns of a header row, with problems for bad or repeated headers."""
    columns: list[_Column] = []
    seen: dict[str, _Column] = {}
    for index, cell in enumerate(cells, start=1):
        if cell.kind == "blank":
            continue
        if cell.kind == "unsaved":
            problems.append(Problem(cell.ref, _unsaved(cell)))
            continue
        if cell.kind == "error":
            problems.append(Problem(cell.ref, (
                f'header "{cell.value}" is an error value from a formula; type the column name instead'
            )))
            continue
        text = _text(cell.value)
        name, unit = _split_unit(text)
        if not name:
            problems.append(Problem(cell.ref, (
                f'header "{text}" has a unit but no name; write the name before the unit, '
                'as in "Crude protein (%)"'
            )))
            continue
        key = _key(name)
        if key in seen:
            first = seen[key]
            problems.append(Problem(cell.ref, (
                f'the column "{text}" repeats the column "{first.name}" in {first.ref} '
                "(headers are compared ignoring case, spaces and a trailing unit in "
                "parentheses); rename or delete one of them"
            )))
            continue
        column = _Column(key, name, unit, index, cell.ref)
        seen[key] = column
        columns.append(column)
    return columns


def _check_columns(table: _Table, wanted: dict, problems: list[Problem]) -> set[str]:
    """Report each missing required column; return the keys of the missing ones."""
    present = {column.key: column for column in table.columns}
    missing = set()
    for key, (header, purpose, required) in wanted.items():
        if not required or key in present:
            continue
        missing.add(key)
        message = (
            f'no column "{header}" ({purpose}) in the header row; add a column headed "{header}"'
        )
        close = difflib.get_close_matches(key, list(present), n=1, cutoff=0.6)
        if close:
            message += f'; is "{present[close[0]].name}" meant to be "{header}"?'
        problems.append(Problem(table.header_ref, message))
    return missing


def _empty_sheet(title: str, wanted: dict) -> Problem:
    """The problem for a required sheet with nothing in it."""
    headers = ", ".join(header for header, _purpose, required in wanted.values() if required)
    return Problem(title, f"the sheet is empty; put the column headers in its first row: {headers}")


def _reading_order(problem: Problem) -> tuple[int, int]:
    """Sort key that lists a sheet's problems row by row, left to right."""
    _sheet, _bang, place = problem.where.rpartition("!")
    match = re.fullmatch(r"([A-Z]+)(\d+)|(\d+):\d+", place)
    if match is None:
        return (0, 0)  # the whole sheet
    if match[3]:
        return (int(match[3]), 0)  # a whole row
    return (int(match[2]), column_index_from_string(match[1]))


def _unsaved(cell: _Cell) -> str:
    """The message for a formula with no saved result."""
    return (
        f'formula "{cell.formula}" has no saved value; open the workbook in a spreadsheet '
        "program and save it so the result is stored"
    )


# --- Values -----------------------------------------------------------------------------


def _key(text: str) -> str:
    """The form names are compared in: case-folded, with spaces collapsed and trimmed."""
    return " ".join(text.split()).casefold()


def _split_unit(text: str) -> tuple[str, str]:
    """Split ``Crude protein (%)`` into ("Crude protein", "%"); no unit gives ""."""
    text = text.strip()
    match = _TRAILING_UNIT.fullmatch(text)
    if match is None:
        return text, ""
    return match["name"].strip(), match["unit"].strip()


def _text(value: object) -> str:
    """A cell value as the text a user would recognise, trimmed."""
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    if isinstance(value, (datetime, date, time)):
        return value.isoformat(sep=" ") if isinstance(value, datetime) else value.isoformat()
    return str(value).strip()


def _is_percent_format(number_format: str) -> bool:
    """True when the format shows numbers as percentages (an unquoted, unescaped %)."""
    return "%" in _LITERAL_FORMAT_PARTS.sub("", number_format)


def _number(cell: _Cell | None, what: str, problems: list[Problem]) -> float | None:
    """The cell's number; None when blank, missing or wrong (wrong ones are reported)."""
    if cell is None or cell.kind in ("blank", "unsaved"):
        return None
    if cell.kind == "error":
        problems.append(Problem(cell.ref, f'{what} "{cell.value}" is not a number'))
        return None
    value = cell.value
    number: float | None = None
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        try:
            number = float(value)
        except OverflowError:  # an integer too large for a float
            number = None
    elif isinstance(value, str) and _PLAIN_NUMBER.fullmatch(value.strip()):
        number = float(value.strip())
    if number is None or not math.isfinite(number):
        problems.append(Problem(cell.ref, f'{what} "{_text(value)}" is not a number{_hint(value)}'))
        return None
    if not isinstance(value, str) and _is_percent_format(cell.number_format):
        number = float(Decimal(repr(number)) * 100)  # via Decimal so 0.07 gives 7, not 7.000000000000001
    return number


def _hint(value: object) -> str:
    """A short fix for the common ways a number is mistyped, or ""."""
    if isinstance(value, (datetime, date, time, timedelta)):
        return " (the cell is formatted as a date or time; format it as a number)"
    if isinstance(value, str):
        text = value.strip()
        if re.fullmatch(r"[+-]?[\d.,\s]*\d[\d.,\s]*", text):
            return " (write it with no commas or spaces, with a point for decimals, as in 1250.5)"
        if text.endswith("%") and _PLAIN_NUMBER.fullmatch(text[:-1].strip()):
            return " (type the number alone; put a unit in the column header, as in \"Min (%)\")"
    return ""


def _name(cell: _Cell | None, what: str, problems: list[Problem]) -> str | None:
    """The text of a name cell; None when blank, missing or an error value (reported)."""
    if cell is None or cell.kind in ("blank", "unsaved"):
        return None
    if cell.kind == "error":
        problems.append(Problem(cell.ref, (
            f'{what} "{cell.value}" is an error value from a formula; fix the formula or type the {what}'
        )))
        return None
    return _text(cell.value)


def _fmt(number: float) -> str:
    """A number for a message: no needless decimals."""
    return f"{number:g}"


# --- Names that sheets refer to ---------------------------------------------------------


@dataclass(frozen=True)
class _Names:
    """The names other sheets may refer to (key -> name as written), from one sheet.

    `names` is None when they could not be read (references then go unchecked: the
    reason is already reported); `sheet` is the sheet's title, and `present` is False when
    the workbook has no such sheet.
    """

    sheet: str
    names: dict[str, str] | None
    present: bool = True


def _refer(cell: _Cell, text: str, what: str, names: _Names, problems: list[Problem], *,
           blank_ok: bool = False, adding: str = "") -> str | None:
    """The name that `text` refers to, as written where defined; None when unknown (reported).

    `blank_ok` says that a blank cell would mean "every <what>"; `adding` is how to add
    the missing sheet, for when there is none.
    """
    if names.names is None:
        return text
    found = names.names.get(_key(text))
    if found is not None:
        return found
    or_blank = f", or clear the cell (blank means every {what})" if blank_ok else ""
    if not names.present:
        message = f'no {what} "{text}": the workbook has no {names.sheet} sheet; {adding}{or_blank}'
    elif not names.names:
        message = f'no {what} "{text}" in {names.sheet}, which lists none; add it there{or_blank}'
    else:
        message = f'no {what} "{text}" in {names.sheet}; name one listed there{or_blank}'
        otherwise = f"check the spelling against {names.sheet}"
        message += _suggestions(text, names.names, f"the {what}s are", otherwise)
    problems.append(Problem(cell.ref, message))
    return None


def _suggestions(name: str, known: dict[str, str], listing: str, otherwise: str) -> str:
    """The end of an unknown-name message: the closest known name and the list, if short."""
    message = ""
    close = difflib.get_close_matches(_key(name), list(known), n=1, cutoff=0.6)
    if close:
        message += f'; did you mean "{known[close[0]]}"?'
    if len(known) <= _LIST_AT_MOST:
        message += f"; {listing}: " + ", ".join(f'"{shown}"' for shown in known.values())
    elif not close:
        message += f"; {otherwise}"
    return message


_ADD_PRODUCTS = 'add a sheet named "Products" with the columns Product and Amount listing it'


def _product_of(row: dict[str, _Cell], products: _Names, problems: list[Problem]) -> tuple[bool, str | None]:
    """The optional Product cell of a Specs or Groups row: (readable, product or None for every)."""
    cell = row.get("product")
    if cell is None or cell.kind == "blank":
        return True, None
    text = _name(cell, "product", problems)
    if text is None:
        return False, None
    product = _refer(cell, text, "product", products, problems, blank_ok=True, adding=_ADD_PRODUCTS)
    return product is not None, product


def _for_product(product: str | None) -> str:
    """' for product "X"', or "" for every product, to qualify a message."""
    return f' for product "{product}"' if product is not None else ""


# --- Ingredients ------------------------------------------------------------------------


def _read_ingredients(
    table: _Table, settings: Settings, problems: list[Problem]
) -> tuple[list[Ingredient], list[_Column], _Names]:
    """The ingredients, the nutrient columns and every ingredient name of the Ingredients sheet."""
    nutrients = [column for column in table.columns if column.key not in _INGREDIENT_COLUMNS]
    missing = _check_columns(table, _INGREDIENT_COLUMNS, problems)
    if "ingredient" in missing:
        return [], nutrients, _Names(table.title, None)  # rows cannot be told apart without names

    diet = settings.mode == DIET_MODE
    currency = f"{settings.currency} " if settings.currency else ""
    ingredients: list[Ingredient] = []
    seen: dict[str, str] = {}  # name key -> cell of its first appearance
    names: dict[str, str] = {}  # name key -> name as written
    for row in table.rows:
        problems_before = len(problems)
        name_cell = row["ingredient"]
        name = _name(name_cell, "ingredient name", problems)
        if name_cell.kind == "blank":
            problems.append(Problem(name_cell.ref, (
                "this row has values but no ingredient name; type a name, or clear the row"
            )))
        elif name is not None:
            key = _key(name)
            if key in seen:
                problems.append(Problem(name_cell.ref, (
                    f'ingredient "{name}" is already listed in {seen[key]} (names are compared '
                    "ignoring case and spaces); give each ingredient its own name, or delete one row"
                )))
            else:
                seen[key] = name_cell.ref
                names[key] = name

        unit = _name(row.get("unit"), "unit", problems) or ""
        cost = _number(row.get("cost"), "cost", problems)
        if "cost" in row and row["cost"].kind == "blank":
            per = (unit or "unit written in the Unit column") if diet else settings.cost_per
            problems.append(Problem(row["cost"].ref, (
                f"cost is blank; type the price of this ingredient ({currency}per {per})"
            )))
        minimum = _inclusion(row.get("min"), "min", diet, problems)
        maximum = _inclusion(row.get("max"), "max", diet, problems)
        if minimum is not None and maximum is not None and minimum > maximum:
            problems.append(_min_above_max(row, minimum, maximum))
        use = _use(row.get("use"), problems)
        stock = _number(row.get("stock"), "stock", problems)
        if stock is not None and stock < 0:
            problems.append(Problem(row["stock"].ref, (
                f"stock {_fmt(stock)} is below 0; it is the quantity on hand in {settings.mass_unit} "
                "(blank means no limit)"
            )))

        contents: dict[str, float] = {}
        blanks: list[str] = []
        for column in nutrients:
            cell = row[column.key]
            if cell.kind == "blank":
                contents[column.name] = 0.0
                blanks.append(column.name)
                continue
            content = _number(cell, column.name, problems)
            if content is not None:
                contents[column.name] = content

        if len(problems) > problems_before or name is None or cost is None or use is None:
            continue
        ingredients.append(Ingredient(
            name=name,
            cost=cost,
            minimum=minimum,
            maximum=maximum,
            use=use,
            contents=contents,
            blanks=tuple(blanks),
            cells={_CELL_KEYS[key]: cell.ref for key, cell in row.items() if key in _CELL_KEYS},
            content_cells={column.name: row[column.key].ref for column in nutrients},
            unit=unit,
            stock=stock,
        ))

    if not table.rows:
        problems.append(Problem(table.header_ref, (
            "there are no ingredients under the header row; add at least one ingredient row"
        )))
    return ingredients, nutrients, _Names(table.title, names)


def _inclusion(
    cell: _Cell | None, what: str, diet: bool, problems: list[Problem], *, of: str = "inclusion limits"
) -> float | None:
    """An inclusion limit (None when blank): % within 0..100, or in diet mode an amount >= 0."""
    limit = _number(cell, what, problems)
    if limit is None:
        return None
    if diet and limit < 0:
        problems.append(Problem(cell.ref, (
            f"{what} {_fmt(limit)} is below 0; in diet mode {of} are amounts in each food's unit, "
            "0 or more"
        )))
        return None
    if not diet and not 0 <= limit <= 100:
        problems.append(Problem(cell.ref, (
            f"{what} {_fmt(limit)} is outside 0 to 100; {of} are % of the blend"
        )))
        return None
    return limit


def _min_above_max(row: dict[str, _Cell], minimum: float, maximum: float) -> Problem:
    """The problem for a row whose min is above its max, on the max cell."""
    return Problem(row["max"].ref, (
        f"max {_fmt(maximum)} is below min {_fmt(minimum)} in {row['min'].ref}; make max at least min"
    ))


def _use(cell: _Cell | None, problems: list[Problem]) -> bool | None:
    """The Use cell as True/False (blank or missing is True); None when wrong (reported)."""
    if cell is None or cell.kind == "blank":
        return True
    if cell.kind == "unsaved":
        return None
    if cell.kind == "value":
        if isinstance(cell.value, bool):
            return cell.value
        word = _text(cell.value).casefold()
        if word in _YES:
            return True
        if word in _NO:
            return False
    problems.append(Problem(cell.ref, (
        f'use "{_text(cell.value)}" is not yes or no; write yes or no (blank means yes)'
    )))
    return None


# --- Dry matter -------------------------------------------------------------------------


def _resolve_dry_matter(
    settings: Settings, nutrients: list[_Column] | None, ingredients_title: str, problems: list[Problem]
) -> tuple[Settings, _Column | None]:
    """The settings with Dry matter named as in the header, and its column (None if none)."""
    if nutrients is None:
        return settings, None  # the Ingredients header could not be read
    name, _unit = _split_unit(settings.dry_matter)
    column = next((column for column in nutrients if column.key == _key(name)), None)
    if column is not None:
        return replace(settings, dry_matter=column.name), column
    if "dry matter" in settings.cells:
        message = (
            f'dry matter "{settings.dry_matter}" is not a nutrient column of {ingredients_title}; '
            "name the column that holds dry matter in % as fed"
        )
        if nutrients:
            known = {column.key: column.name for column in nutrients}
            message += _suggestions(name, known, "the nutrient columns are",
                                    f"check the spelling against the headers of {ingredients_title}")
        else:
            message += f"; {ingredients_title} has no nutrient columns"
        problems.append(Problem(settings.cells["dry matter"], message))
    return settings, None


def _check_dry_matter(table: _Table, column: _Column, used_at: str, problems: list[Problem]) -> None:
    """Dry-matter specs (the first in `used_at`) need dry matter in %, within 0..100."""
    if column.unit and _key(column.unit) != "%":
        problems.append(Problem(column.ref, (
            f'the dry-matter column "{column.name}" is in "{column.unit}", but dry-matter specs '
            f"(as in {used_at}) need dry matter in % as fed; give the column in % and head it "
            f'"{column.name} (%)"'
        )))
        return
    for row in table.rows:
        cell = row[column.key]
        content = _number(cell, column.name, [])  # a cell that is not a number is already reported
        if content is not None and not 0 <= content <= 100:
            problems.append(Problem(cell.ref, (
                f"{column.name} {_fmt(content)} is outside 0 to 100; dry-matter specs (as in "
                f"{used_at}) need dry matter in % as fed"
            )))


# --- Specs ------------------------------------------------------------------------------


@dataclass(frozen=True)
class _SpecContext:
    """What checking a Specs row needs from the rest of the workbook."""

    nutrients: list[_Column] | None  # None when the Ingredients header could not be read
    ingredients_title: str
    dry_matter: _Column | None
    settings: Settings
    products: _Names


@dataclass(frozen=True)
class _Target:
    """What a spec bounds: one nutrient column, or the ratio of two.

    `identity` tells repeated specs apart (it is set even when the nutrient is unknown).
    """

    identity: tuple
    column: _Column | None = None
    ratio: tuple[_Column, _Column] | None = None


def _read_specs(
    table: _Table, context: _SpecContext, problems: list[Problem]
) -> tuple[list[Spec], str | None]:
    """The specs, and the Basis cell of the first valid dry-matter spec on a nutrient (or None)."""
    missing = _check_columns(table, _SPEC_COLUMNS, problems)
    if "nutrient" in missing:
        return [], None
    specs: list[Spec] = []
    dry_matter_used: str | None = None
    seen: dict[tuple, str] = {}  # (target, basis, product) -> cell of its first spec
    for row in table.rows:
        problems_before = len(problems)
        name_cell = row["nutrient"]
        text = _name(name_cell, "nutrient", problems)
        target: _Target | None = None
        if name_cell.kind == "blank":
            problems.append(Problem(name_cell.ref, (
                "this row has values but no nutrient; type the nutrient's name as in the "
                f"{context.ingredients_title} header, or clear the row"
            )))
        elif text is not None:
            target = _spec_target(name_cell, text, context, problems)

        basis = _basis(row.get("basis"), problems)
        product_ok, product = _product_of(row, context.products, problems)
        if target is not None and basis == DRY_MATTER and target.ratio is None:
            _needs_dry_matter(row["basis"], context, problems)
        if target is not None and basis is not None and product_ok:
            product_key = _key(product) if product is not None else None
            identity = (target.identity, basis, product_key)
            if identity in seen:
                shown = _split_unit(text)[0] if target.ratio is None else text
                dry = " on a dry-matter basis" if basis == DRY_MATTER else ""
                problems.append(Problem(name_cell.ref, (
                    f'"{shown}"{dry}{_for_product(product)} already has a spec in {seen[identity]}; '
                    "put both bounds in one row and delete the other"
                )))
            else:
                seen[identity] = name_cell.ref

        minimum = _number(row.get("min"), "min", problems)
        maximum = _number(row.get("max"), "max", problems)
        penalty = _number(row.get("penalty"), "penalty", problems)
        priority = _priority(row.get("priority"), problems)
        if penalty is not None and penalty <= 0:
            problems.append(Problem(row["penalty"].ref, (
                f"penalty {penalty:g} must be above 0: it is the cost per unit by which the spec "
                "may be missed; leave it blank for a spec that must be met"
            )))
        elif penalty is not None and target is not None and (target.ratio is not None or basis == DRY_MATTER):
            problems.append(Problem(row["penalty"].ref, (
                "a penalty makes only an as-fed nutrient spec soft; ratio and dry-matter specs "
                "must be met: clear the penalty, or give the limit a low Priority instead"
            )))
        both_blank = "min" in row and "max" in row and row["min"].kind == row["max"].kind == "blank"
        if both_blank and text is not None:
            problems.append(Problem(name_cell.ref, (
                f'the spec for "{text}" has neither a min nor a max; give at least one, '
                "or delete the row"
            )))
        if minimum is not None and maximum is not None and minimum > maximum:
            problems.append(_min_above_max(row, minimum, maximum))
        if len(problems) > problems_before or target is None or basis is None or not product_ok:
            continue
        if target.column is None and target.ratio is None:
            continue  # the Ingredients header could not be read
        if "min" not in row or "max" not in row or "unsaved" in (row["min"].kind, row["max"].kind):
            continue
        if basis == DRY_MATTER and target.ratio is None and dry_matter_used is None:
            dry_matter_used = row["basis"].ref
        cells = {"nutrient": name_cell.ref, "min": row["min"].ref, "max": row["max"].ref}
        cells.update({key: row[key].ref for key in ("basis", "product", "penalty", "priority") if key in row})
        if target.ratio is None:
            nutrient, ratio = target.column.name, None
        else:
            nutrient, ratio = text, (target.ratio[0].name, target.ratio[1].name)
        specs.append(Spec(
            nutrient=nutrient,
            minimum=minimum,
            maximum=maximum,
            cells=cells,
            basis=basis,
            ratio=ratio,
            product=product,
            penalty=penalty,
            priority=priority,
        ))
    return specs, dry_matter_used


def _priority(cell: _Cell | None, problems: list[Problem]) -> float | None:
    """A Priority cell: a number from 1 to 9, or None when blank (wrong ones are reported)."""
    value = _number(cell, "priority", problems)
    if value is not None and not 1 <= value <= 9:
        problems.append(Problem(cell.ref, (
            f"priority {value:g} must be from 1 to 9: limits with a lower priority give way first "
            "when limits conflict (the defaults are in the README)"
        )))
        return None
    return value


def _spec_target(cell: _Cell, text: str, context: _SpecContext, problems: list[Problem]) -> _Target:
    """The nutrient or ratio a Specs row names; unknown names and bad ratios are reported."""
    name, unit = _split_unit(text)
    if context.nutrients is None:
        return _Target((_key(name),))
    by_key = {column.key: column for column in context.nutrients}
    column = by_key.get(_key(name))
    slashes = _top_level_slashes(text)
    if column is not None or not slashes:
        if column is None:
            message = _unknown_nutrient(name, context.nutrients, context.ingredients_title)
            problems.append(Problem(cell.ref, message))
        else:
            _check_unit(cell, unit, column, problems)
        return _Target((_key(name),), column=column)

    # A ratio: the first "/" with a nutrient column on each side.
    for at in slashes:
        left, right = _nutrient(text[:at], by_key), _nutrient(text[at + 1:], by_key)
        if left[0] is not None and right[0] is not None:
            break
    else:
        if len(slashes) == 1:
            _report_ratio_sides(cell, text, slashes[0], by_key, context, problems)
        else:
            problems.append(Problem(cell.ref, (
                f'"{text}" is neither a nutrient column of {context.ingredients_title} nor a ratio of '
                'two of them; write a ratio as two nutrient columns around one "/", as in '
                '"Calcium / Phosphorus"'
            )))
        return _Target((_key(text),))
    (numerator, numerator_unit), (denominator, denominator_unit) = left, right
    _check_unit(cell, numerator_unit, numerator, problems)
    _check_unit(cell, denominator_unit, denominator, problems)
    if numerator.key == denominator.key:
        problems.append(Problem(cell.ref, (
            f'the ratio "{text}" divides "{numerator.name}" by itself; name two different nutrient '
            "columns"
        )))
    return _Target(("ratio", numerator.key, denominator.key), ratio=(numerator, denominator))


def _top_level_slashes(text: str) -> list[int]:
    """Where "/" splits a ratio: every "/" outside parentheses (those belong to units)."""
    depth = 0
    found = []
    for index, character in enumerate(text):
        if character == "(":
            depth += 1
        elif character == ")":
            depth = max(depth - 1, 0)
        elif character == "/" and depth == 0:
            found.append(index)
    return found


def _nutrient(side: str, by_key: dict[str, _Column]) -> tuple[_Column | None, str]:
    """The nutrient column one side of a ratio names (None if none), and the unit written."""
    name, unit = _split_unit(side)
    return by_key.get(_key(name)), unit


def _report_ratio_sides(
    cell: _Cell, text: str, at: int, by_key: dict[str, _Column], context: _SpecContext,
    problems: list[Problem],
) -> None:
    """Report each side of the ratio `text` (split at `at`) that names no nutrient column."""
    title = context.ingredients_title
    for side, where in ((text[:at], "before"), (text[at + 1:], "after")):
        name = _split_unit(side)[0]
        if not name:
            problems.append(Problem(cell.ref, (
                f'the ratio "{text}" has no nutrient {where} the "/"; write a ratio as two nutrient '
                'columns around one "/", as in "Calcium / Phosphorus"'
            )))
        elif _key(name) not in by_key:
            message = (
                f'the ratio "{text}" names "{name}" {where} the "/", which is not a nutrient column '
                f"of {title}; a ratio divides one nutrient column by another"
            )
            if by_key:
                known = {key: column.name for key, column in by_key.items()}
                message += _suggestions(name, known, "the nutrient columns are",
                                        f"check the spelling against the headers of {title}")
            else:
                message += f"; {title} has no nutrient columns"
            problems.append(Problem(cell.ref, message))


def _check_unit(cell: _Cell, unit: str, column: _Column, problems: list[Problem]) -> None:
    """A unit written in a spec must agree with the nutrient column's unit, if both have one."""
    if unit and column.unit and _key(unit) != _key(column.unit):
        problems.append(Problem(cell.ref, (
            f'the unit "{unit}" differs from the unit "{column.unit}" of the column '
            f'"{column.name}" in {column.ref}; give the bounds in "{column.unit}" '
            "and write that unit, or leave the unit out"
        )))


def _basis_key(text: str) -> str:
    """A basis as compared: case-folded, hyphens and runs of spaces made one space."""
    return " ".join(text.replace("-", " ").split()).casefold()


def _basis(cell: _Cell | None, problems: list[Problem]) -> str | None:
    """The Basis cell: AS_FED when blank or missing; None when wrong (reported)."""
    if cell is None or cell.kind == "blank":
        return AS_FED
    text = _name(cell, "basis", problems)
    if text is None:
        return None
    basis = _BASES.get(_basis_key(text))
    if basis is None:
        problems.append(Problem(cell.ref, (
            f'basis "{text}" is not {AS_FED} or {DRY_MATTER}; write {AS_FED} or {DRY_MATTER} '
            f"(blank means {AS_FED})"
        )))
    return basis


def _needs_dry_matter(cell: _Cell, context: _SpecContext, problems: list[Problem]) -> None:
    """A dry-matter spec on a nutrient needs the dry-matter column; report on the Basis cell if none."""
    if context.dry_matter is not None or context.nutrients is None:
        return
    if "dry matter" in context.settings.cells:
        return  # the Dry matter setting names no column: reported on the setting
    name = context.settings.dry_matter
    title = context.ingredients_title
    problems.append(Problem(cell.ref, (
        f'a dry-matter spec needs the dry-matter column, and {title} has no nutrient column "{name}"; '
        f'add a column "{name} (%)" with each ingredient\'s dry matter in % as fed, or name the '
        "column that holds it with the Dry matter setting in Settings"
    )))


def _unknown_nutrient(name: str, nutrients: list[_Column], ingredients_title: str) -> str:
    """The message for a spec naming no nutrient column: the columns, or the closest one."""
    if not nutrients:
        return (
            f'no nutrient column "{name}" in {ingredients_title}, which has no nutrient columns; '
            f'add a column headed "{name}" to {ingredients_title}, or delete this row'
        )
    message = (
        f'no nutrient column "{name}" in {ingredients_title}; '
        "a spec must name one of its nutrient columns"
    )
    known = {column.key: column.name for column in nutrients}
    return message + _suggestions(name, known, "the nutrient columns are",
                                  f"check the spelling against the headers of {ingredients_title}")


# --- Groups -----------------------------------------------------------------------------


def _read_groups(
    table: _Table, ingredients: _Names, products: _Names, settings: Settings, problems: list[Problem]
) -> list[Group]:
    """The groups of the Groups sheet."""
    missing = _check_columns(table, _GROUP_COLUMNS, problems)
    if "group" in missing:
        return []
    diet = settings.mode == DIET_MODE
    groups: list[Group] = []
    seen: dict[str, str] = {}  # name key -> cell of its first appearance
    for row in table.rows:
        problems_before = len(problems)
        name_cell = row["group"]
        name = _name(name_cell, "group name", problems)
        if name_cell.kind == "blank":
            problems.append(Problem(name_cell.ref, (
                "this row has values but no group name; type a name, or clear the row"
            )))
        elif name is not None:
            key = _key(name)
            if key in seen:
                problems.append(Problem(name_cell.ref, (
                    f'group "{name}" is already listed in {seen[key]} (names are compared ignoring '
                    "case and spaces); give each group its own name, or delete one row"
                )))
            else:
                seen[key] = name_cell.ref

        members: list[str] = []
        list_cell = row.get("ingredients")
        if list_cell is not None:
            members = _group_members(list_cell, name, ingredients, problems)
        minimum = _inclusion(row.get("min"), "min", diet, problems, of="group limits")
        maximum = _inclusion(row.get("max"), "max", diet, problems, of="group limits")
        both_blank = "min" in row and "max" in row and row["min"].kind == row["max"].kind == "blank"
        if both_blank and name is not None:
            problems.append(Problem(name_cell.ref, (
                f'the group "{name}" has neither a min nor a max; give at least one, or delete the row'
            )))
        if minimum is not None and maximum is not None and minimum > maximum:
            problems.append(_min_above_max(row, minimum, maximum))
        product_ok, product = _product_of(row, products, problems)

        if len(problems) > problems_before or name is None or not members or not product_ok:
            continue
        if "min" not in row or "max" not in row or "unsaved" in (row["min"].kind, row["max"].kind):
            continue
        groups.append(Group(
            name=name,
            ingredients=tuple(members),
            minimum=minimum,
            maximum=maximum,
            cells={key: cell.ref for key, cell in row.items() if key in _GROUP_COLUMNS},
            product=product,
            priority=_priority(row.get("priority"), problems),
        ))
    return groups


def _group_members(cell: _Cell, group: str | None, ingredients: _Names, problems: list[Problem]) -> list[str]:
    """The ingredients a group's Ingredients cell lists, as named in Ingredients (problems reported)."""
    if cell.kind == "blank":
        named = f' "{group}"' if group else ""
        problems.append(Problem(cell.ref, (
            f"the group{named} lists no ingredients; list them separated by commas or semicolons, "
            'as in "Maize, Wheat"'
        )))
        return []
    text = _name(cell, "ingredient list", problems)
    if text is None:
        return []
    members: list[str] = []
    for written in _split_list(text, ingredients.names):
        member = _refer(cell, written, "ingredient", ingredients, problems)
        if member is None:
            continue
        if member in members:
            problems.append(Problem(cell.ref, (
                f'the ingredient "{member}" is listed twice in this group; list each ingredient once'
            )))
            continue
        members.append(member)
    return members


def _split_list(text: str, known: dict[str, str] | None) -> list[str]:
    """Split a list of names at commas and semicolons, keeping together any run of pieces
    that is a known name holding a separator (the longest such run wins)."""
    pieces = _LIST_SEPARATOR.split(text)  # name, separator, name, ... , name
    names = pieces[0::2]
    found: list[str] = []
    start = 0
    while start < len(names):
        end = start  # the last piece of the name that starts at `start`
        if known:
            for last in range(len(names) - 1, start, -1):
                joined = "".join(pieces[2 * start: 2 * last + 1]).strip()
                if _key(joined) in known:
                    end = last
                    break
        name = "".join(pieces[2 * start: 2 * end + 1]).strip()
        if name:
            found.append(name)
        start = end + 1
    return found


# --- Products ---------------------------------------------------------------------------


def _read_products(
    table: _Table, settings: Settings, problems: list[Problem]
) -> tuple[list[Product], _Names]:
    """The products of the Products sheet, in sheet order, and every product name."""
    missing = _check_columns(table, _PRODUCT_COLUMNS, problems)
    if "product" in missing:
        return [], _Names(table.title, None)
    products: list[Product] = []
    seen: dict[str, str] = {}  # name key -> cell of its first appearance
    names: dict[str, str] = {}
    for row in table.rows:
        problems_before = len(problems)
        name_cell = row["product"]
        name = _name(name_cell, "product name", problems)
        if name_cell.kind == "blank":
            problems.append(Problem(name_cell.ref, (
                "this row has values but no product name; type a name, or clear the row"
            )))
        elif name is not None:
            key = _key(name)
            if key in seen:
                problems.append(Problem(name_cell.ref, (
                    f'product "{name}" is already listed in {seen[key]} (names are compared ignoring '
                    "case and spaces); give each product its own name, or delete one row"
                )))
            else:
                seen[key] = name_cell.ref
                names[key] = name

        amount = _number(row.get("amount"), "amount", problems)
        if "amount" in row and row["amount"].kind == "blank":
            problems.append(Problem(row["amount"].ref, (
                f"amount is blank; type how much of this product to make (in {settings.mass_unit})"
            )))
        if amount is not None and amount <= 0:
            problems.append(Problem(row["amount"].ref, (
                f"amount {_fmt(amount)} must be more than 0; it is how much of this product to make, "
                f"in {settings.mass_unit}"
            )))
        if len(problems) > problems_before or name is None or amount is None:
            continue
        products.append(Product(
            name=name, amount=amount, cells={"product": name_cell.ref, "amount": row["amount"].ref}
        ))

    if settings.mode == DIET_MODE and table.rows:
        mode_cell = settings.cells.get("mode", SETTINGS)
        problems.append(Problem(table.rows[0]["product"].ref, (
            f'products are for blend mode, and the Mode setting in {mode_cell} is "{DIET_MODE}"; '
            f"a diet is planned on its own: clear the rows of {table.title}, or set Mode to "
            f"{BLEND_MODE}"
        )))
    return products, _Names(table.title, names)


# --- Limits -----------------------------------------------------------------------------


def _read_limits(
    table: _Table, ingredients: _Names, products: _Names, settings: Settings, problems: list[Problem]
) -> list[ProductLimit]:
    """The product-specific inclusion limits of the Limits sheet."""
    missing = _check_columns(table, _LIMIT_COLUMNS, problems)
    if missing & {"product", "ingredient"}:
        return []
    diet = settings.mode == DIET_MODE
    limits: list[ProductLimit] = []
    seen: dict[tuple[str, str], str] = {}  # (product key, ingredient key) -> cell of the first
    for row in table.rows:
        problems_before = len(problems)
        product_cell, ingredient_cell = row["product"], row["ingredient"]
        product = ingredient = None
        if product_cell.kind == "blank":
            problems.append(Problem(product_cell.ref, (
                "this row has no product; type the product the limit applies to, or clear the row"
            )))
        else:
            text = _name(product_cell, "product", problems)
            if text is not None:
                product = _refer(product_cell, text, "product", products, problems, adding=_ADD_PRODUCTS)
        if ingredient_cell.kind == "blank":
            problems.append(Problem(ingredient_cell.ref, (
                "this row has no ingredient; type the ingredient to limit, or clear the row"
            )))
        else:
            text = _name(ingredient_cell, "ingredient", problems)
            if text is not None:
                ingredient = _refer(ingredient_cell, text, "ingredient", ingredients, problems)
        if product is not None and ingredient is not None:
            pair = (_key(product), _key(ingredient))
            if pair in seen:
                problems.append(Problem(ingredient_cell.ref, (
                    f'"{ingredient}" already has a limit for product "{product}" in {seen[pair]}; '
                    "put both bounds in one row and delete the other"
                )))
            else:
                seen[pair] = ingredient_cell.ref

        minimum = _inclusion(row.get("min"), "min", diet, problems)
        maximum = _inclusion(row.get("max"), "max", diet, problems)
        both_blank = "min" in row and "max" in row and row["min"].kind == row["max"].kind == "blank"
        if both_blank and product is not None and ingredient is not None:
            problems.append(Problem(ingredient_cell.ref, (
                f'the limit for "{ingredient}" in "{product}" has neither a min nor a max; give at '
                "least one, or delete the row"
            )))
        if minimum is not None and maximum is not None and minimum > maximum:
            problems.append(_min_above_max(row, minimum, maximum))
        if len(problems) > problems_before or product is None or ingredient is None:
            continue
        if "min" not in row or "max" not in row or "unsaved" in (row["min"].kind, row["max"].kind):
            continue
        limits.append(ProductLimit(
            product=product,
            ingredient=ingredient,
            minimum=minimum,
            maximum=maximum,
            cells={key: cell.ref for key, cell in row.items() if key in _LIMIT_COLUMNS},
            priority=_priority(row.get("priority"), problems),
        ))
    return limits


# --- Settings ---------------------------------------------------------------------------


def _read_settings(table: _Table, problems: list[Problem]) -> Settings:
    """The settings given, with defaults for the rest; `cells` holds where each was read."""
    if _check_columns(table, _SETTING_COLUMNS, problems):
        return Settings()
    given: dict[str, object] = {}
    cells: dict[str, str] = {}
    seen: dict[str, str] = {}
    known = ", ".join(_KNOWN_SETTINGS.values())
    for row in table.rows:
        name_cell, value_cell = row["setting"], row["value"]
        text = _name(name_cell, "setting", problems)
        if name_cell.kind == "blank":
            problems.append(Problem(name_cell.ref, (
                f"this row has a value but no setting name; type one of {known}, or clear the row"
            )))
            continue
        if text is None:
            continue
        key = _key(_split_unit(text)[0])
        if key not in _KNOWN_SETTINGS:
            message = f'unknown setting "{text}"; the settings are: {known}'
            close = difflib.get_close_matches(key, list(_KNOWN_SETTINGS), n=1, cutoff=0.6)
            if close:
                message += f'; did you mean "{_KNOWN_SETTINGS[close[0]]}"?'
            problems.append(Problem(name_cell.ref, message))
            continue
        if key in seen:
            problems.append(Problem(name_cell.ref, (
                f'"{_KNOWN_SETTINGS[key]}" is already set in {seen[key]}; keep one of the two rows'
            )))
            continue
        seen[key] = name_cell.ref
        if value_cell.kind == "blank" or value_cell.kind == "unsaved":
            continue  # blank keeps the default; unsaved is already reported
        value = _setting_value(key, value_cell, problems)
        if value is not None:
            given[key.replace(" ", "_")] = value
            cells[key] = value_cell.ref
    return Settings(**given, cells=cells)


def _setting_value(key: str, cell: _Cell, problems: list[Problem]) -> object | None:
    """One setting's value, checked; None when wrong (reported)."""
    label = _KNOWN_SETTINGS[key]
    if key == "batch size":
        size = _number(cell, "batch size", problems)
        if size is not None and size <= 0:
            problems.append(Problem(cell.ref, (
                f"batch size {_fmt(size)} must be more than 0; "
                "it is the mass of one batch in the mass unit"
            )))
            return None
        return size
    text = _name(cell, label.lower(), problems)
    if text is None:
        return None
    if key in ("mass unit", "cost per"):
        unit = _key(text)
        if unit not in MASS_UNITS_KG:
            problems.append(Problem(cell.ref, (
                f'{label.lower()} "{text}" is not a unit blendkit knows; use one of: '
                + ", ".join(MASS_UNITS_KG)
            )))
            return None
        return unit
    if key == "mode":
        mode = _key(text)
        if mode not in (BLEND_MODE, DIET_MODE):
            problems.append(Problem(cell.ref, (
                f'mode "{text}" is not {BLEND_MODE} or {DIET_MODE}; write {BLEND_MODE} (inclusions in % '
                f"of the blend, the default) or {DIET_MODE} (amounts of each ingredient in its unit)"
            )))
            return None
        return mode
    return text  # currency, name, dry matter (checked against the columns later)

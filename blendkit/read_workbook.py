"""Read a blend workbook (.xlsx) into the domain model, reporting every mistake at once.

`read_workbook(path)` returns a `Blend`, or raises one `WorkbookError` that lists every
problem found in the whole workbook (all sheets, all cells), each with its cell, such as
``Ingredients!D7: cost "n/a" is not a number``. Problems with the file come first, then
those of Ingredients, Specs and Settings, each sheet's row by row. The file is read into
memory once and never written to.

The workbook format
===================

Files
    An Office Open XML workbook: .xlsx (also .xlsm, .xltx, .xltm). Old binary .xls files,
    password-protected workbooks, CSV and other files are refused with a problem whose
    place is the file name.

Sheets
    Found by name, ignoring case and surrounding spaces: ``Ingredients`` (required),
    ``Specs`` (required, may have no data rows) and ``Settings`` (optional). Other sheets
    are ignored. Cell references in problems use the sheet title as written in the file.

Tables
    In each sheet the header row is the first row with any non-empty cell; the table
    may start in any column. The rows below it are data rows; rows that are blank in every
    headed column are skipped (a cell holding only spaces is blank). Columns with an empty
    header are ignored, and so are the cells under them. A required sheet with no header
    row is reported as empty. A missing required column is reported on the header row
    (``Specs!1:1``); when the column that names the rows (Ingredient, Nutrient, Setting)
    or Settings' Value column is missing, that sheet's rows are not checked further.

Headers
    Compared without regard to case, surrounding spaces or runs of inner spaces, and
    without a trailing unit in parentheses: ``Cost (EUR/t)`` is the Cost column and
    ``Crude protein (%)`` is the nutrient "Crude protein" with unit "%". Only the last
    parenthesised part is a unit, so ``Lysine (digestible) (%)`` is the nutrient
    "Lysine (digestible)". Two headers that are the same after this are an error, reported
    on the second.

Ingredients sheet, one row per ingredient
    ``Ingredient``  required column; the name, unique ignoring case and spaces.
    ``Cost``        required column; price per ``Cost per`` unit of mass (see Settings),
                    any finite number (a negative price is a credit).
    ``Min``, ``Max`` optional columns; inclusion limits in % of the blend, each within
                    0..100 and min <= max. Blank means no limit.
    ``Use``         optional column; yes/y/true/1 or no/n/false/0 (any case), or a
                    TRUE/FALSE cell. Blank means yes. "no" holds the ingredient at 0.
    any other header is a nutrient column: the ingredient's content, as fed, in the unit
    given in the header. A blank content cell counts as 0 and is listed in
    `Ingredient.blanks`; negative contents are allowed. There may be no nutrient columns.
    At least one ingredient row is required. A row with values but no name is an error.

Specs sheet, one row per nutrient with bounds
    ``Nutrient``, ``Min``, ``Max`` are required columns; other columns are ignored (use
    them for notes). The nutrient must name a nutrient column of Ingredients, compared like
    headers; a unit in parentheses may be given and, if both it and the column have one,
    they must agree. Each nutrient at most once; at least one of Min and Max; min <= max.
    `Spec.nutrient` is the nutrient's name as written in the Ingredients header.

Settings sheet, optional: columns ``Setting`` and ``Value``; names compared like headers
    ``Batch size``  positive number, default 1000 (in the mass unit).
    ``Mass unit``   default kg; ``Cost per`` default tonne. Both must be one of
                    `blendkit.model.MASS_UNITS_KG` (any case) and are stored in lower case.
    ``Currency``    a text label, default none.  ``Name``  the blend's title, default none.
    A blank value keeps the default. Unknown and repeated settings are errors.

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
from dataclasses import dataclass, field
from datetime import date, datetime, time, timedelta
from decimal import Decimal
from pathlib import Path

import openpyxl
from openpyxl.utils import column_index_from_string
from openpyxl.worksheet.formula import ArrayFormula

from blendkit.errors import Problem, WorkbookError
from blendkit.model import MASS_UNITS_KG, Blend, Ingredient, Settings, Spec

INGREDIENTS = "Ingredients"
SPECS = "Specs"
SETTINGS = "Settings"

# Column keys (normalised headers) with what each column is for, for missing-column messages.
_INGREDIENT_COLUMNS = {
    "ingredient": ("Ingredient", "the name of each ingredient", True),
    "cost": ("Cost", "the price of each ingredient per Cost per unit of mass", True),
    "min": ("Min", "the least inclusion in % of the blend", False),
    "max": ("Max", "the most inclusion in % of the blend", False),
    "use": ("Use", "yes or no, whether the ingredient may be used", False),
}
_SPEC_COLUMNS = {
    "nutrient": ("Nutrient", "the nutrient column of Ingredients that the row limits", True),
    "min": ("Min", "the least level of the nutrient in the blend", True),
    "max": ("Max", "the most level of the nutrient in the blend", True),
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
}

# Ingredient cell keys as stored in Ingredient.cells, by column key.
_CELL_KEYS = {"ingredient": "name", "cost": "cost", "min": "min", "max": "max", "use": "use"}

_YES = {"yes", "y", "true", "1"}
_NO = {"no", "n", "false", "0"}

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

# How many nutrient columns an unknown-nutrient message lists in full.
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

    settings_problems: list[Problem] = []
    settings = Settings()
    if SETTINGS in sheets:
        table = _read_table(*sheets[SETTINGS], settings_problems)
        if table is not None:
            settings = _read_settings(table, settings_problems)

    ingredient_problems: list[Problem] = []
    ingredients: list[Ingredient] = []
    nutrients: list[_Column] | None = None
    if INGREDIENTS in sheets:
        table = _read_table(*sheets[INGREDIENTS], ingredient_problems)
        if table is None:
            ingredient_problems.append(_empty_sheet(sheets[INGREDIENTS][0].title, _INGREDIENT_COLUMNS))
        else:
            ingredients, nutrients = _read_ingredients(table, settings, ingredient_problems)

    spec_problems: list[Problem] = []
    specs: list[Spec] = []
    if SPECS in sheets:
        table = _read_table(*sheets[SPECS], spec_problems)
        if table is None:
            spec_problems.append(_empty_sheet(sheets[SPECS][0].title, _SPEC_COLUMNS))
        else:
            ingredients_title = sheets[INGREDIENTS][0].title if INGREDIENTS in sheets else INGREDIENTS
            specs = _read_specs(table, nutrients, ingredients_title, spec_problems)

    problems = file_problems + [
        problem
        for sheet_problems in (ingredient_problems, spec_problems, settings_problems)
        for problem in sorted(sheet_problems, key=_reading_order)
    ]
    if problems:
        raise WorkbookError(problems)
    assert nutrients is not None  # the Ingredients sheet was read without problems
    return Blend(
        ingredients=tuple(ingredients),
        nutrients=tuple(column.name for column in nutrients),
        specs=tuple(specs),
        settings=settings,
        source=path,
        nutrient_units={column.name: column.unit for column in nutrients if column.unit},
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
    wanted = {_key(name): name for name in (INGREDIENTS, SPECS, SETTINGS)}
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
        INGREDIENTS: "with the columns Ingredient and Cost (Min, Max and Use are optional) "
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


# --- Ingredients ------------------------------------------------------------------------


def _read_ingredients(
    table: _Table, settings: Settings, problems: list[Problem]
) -> tuple[list[Ingredient], list[_Column]]:
    """The ingredients and nutrient columns of the Ingredients sheet."""
    nutrients = [column for column in table.columns if column.key not in _INGREDIENT_COLUMNS]
    missing = _check_columns(table, _INGREDIENT_COLUMNS, problems)
    if "ingredient" in missing:
        return [], nutrients  # rows cannot be told apart without names; fix the header first

    price_unit = f"{settings.currency + ' ' if settings.currency else ''}per {settings.cost_per}"
    ingredients: list[Ingredient] = []
    seen: dict[str, str] = {}  # name key -> cell of its first appearance
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

        cost = _number(row.get("cost"), "cost", problems)
        if "cost" in row and row["cost"].kind == "blank":
            problems.append(Problem(row["cost"].ref, (
                f"cost is blank; type the price of this ingredient ({price_unit})"
            )))
        minimum = _inclusion(row.get("min"), "min", problems)
        maximum = _inclusion(row.get("max"), "max", problems)
        if minimum is not None and maximum is not None and minimum > maximum:
            problems.append(Problem(row["max"].ref, (
                f"max {_fmt(maximum)} is below min {_fmt(minimum)} in {row['min'].ref}; "
                "make max at least min"
            )))
        use = _use(row.get("use"), problems)

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
        ))

    if not table.rows:
        problems.append(Problem(table.header_ref, (
            "there are no ingredients under the header row; add at least one ingredient row"
        )))
    return ingredients, nutrients


def _inclusion(cell: _Cell | None, what: str, problems: list[Problem]) -> float | None:
    """An inclusion limit in % of the blend (None when blank); must be within 0..100."""
    limit = _number(cell, what, problems)
    if limit is not None and not 0 <= limit <= 100:
        problems.append(Problem(cell.ref, (
            f"{what} {_fmt(limit)} is outside 0 to 100; inclusion limits are % of the blend"
        )))
        return None
    return limit


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


# --- Specs ------------------------------------------------------------------------------


def _read_specs(
    table: _Table, nutrients: list[_Column] | None, ingredients_title: str, problems: list[Problem]
) -> list[Spec]:
    """The specs; `nutrients` is None when the Ingredients header could not be read."""
    missing = _check_columns(table, _SPEC_COLUMNS, problems)
    if "nutrient" in missing:
        return []
    by_key = {column.key: column for column in nutrients or []}
    specs: list[Spec] = []
    seen: dict[str, str] = {}  # nutrient key -> cell of its first spec
    for row in table.rows:
        problems_before = len(problems)
        name_cell = row["nutrient"]
        text = _name(name_cell, "nutrient", problems)
        column: _Column | None = None
        if name_cell.kind == "blank":
            problems.append(Problem(name_cell.ref, (
                "this row has values but no nutrient; type the nutrient's name as in the "
                f"{ingredients_title} header, or clear the row"
            )))
        elif text is not None:
            name, unit = _split_unit(text)
            key = _key(name)
            if nutrients is not None:
                column = by_key.get(key)
                if column is None:
                    message = _unknown_nutrient(name, nutrients, ingredients_title)
                    problems.append(Problem(name_cell.ref, message))
                elif unit and column.unit and _key(unit) != _key(column.unit):
                    problems.append(Problem(name_cell.ref, (
                        f'the unit "{unit}" differs from the unit "{column.unit}" of the column '
                        f'"{column.name}" in {column.ref}; give the bounds in "{column.unit}" '
                        "and write that unit, or leave the unit out"
                    )))
            if key in seen:
                problems.append(Problem(name_cell.ref, (
                    f'"{name}" already has a spec in {seen[key]}; put both bounds in one row '
                    "and delete the other"
                )))
            else:
                seen[key] = name_cell.ref

        minimum = _number(row.get("min"), "min", problems)
        maximum = _number(row.get("max"), "max", problems)
        both_blank = "min" in row and "max" in row and row["min"].kind == row["max"].kind == "blank"
        if both_blank and text is not None:
            problems.append(Problem(name_cell.ref, (
                f'the spec for "{text}" has neither a min nor a max; give at least one, '
                "or delete the row"
            )))
        if minimum is not None and maximum is not None and minimum > maximum:
            problems.append(Problem(row["max"].ref, (
                f"max {_fmt(maximum)} is below min {_fmt(minimum)} in {row['min'].ref}; "
                "make max at least min"
            )))
        if len(problems) > problems_before or column is None or "min" not in row or "max" not in row:
            continue
        if row["min"].kind == "unsaved" or row["max"].kind == "unsaved":
            continue
        specs.append(Spec(
            nutrient=column.name,
            minimum=minimum,
            maximum=maximum,
            cells={"nutrient": name_cell.ref, "min": row["min"].ref, "max": row["max"].ref},
        ))
    return specs


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
    close = difflib.get_close_matches(_key(name), [column.key for column in nutrients], n=1, cutoff=0.6)
    if close:
        closest = next(column for column in nutrients if column.key == close[0])
        message += f'; did you mean "{closest.name}"?'
    if len(nutrients) <= _LIST_AT_MOST:
        message += "; the nutrient columns are: " + ", ".join(f'"{column.name}"' for column in nutrients)
    elif not close:
        message += f"; check the spelling against the headers of {ingredients_title}"
    return message


# --- Settings ---------------------------------------------------------------------------


def _read_settings(table: _Table, problems: list[Problem]) -> Settings:
    """The settings given, with defaults for the rest."""
    if _check_columns(table, _SETTING_COLUMNS, problems):
        return Settings()
    given: dict[str, object] = {}
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
    return Settings(**given)


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
    return text

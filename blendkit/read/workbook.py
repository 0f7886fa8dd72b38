"""Read a blend workbook (.xlsx) into the domain model, reporting every mistake at once.

`read_workbook(path)` returns a `Blend`, or raises one `WorkbookError` that lists every
problem found in the whole workbook (all sheets, all cells), each with its cell, such as
``Ingredients!D7: cost "n/a" is not a number``. Problems with the file come first, then
those of Ingredients, Combined, Specs, Groups, Products, Limits and Settings, each sheet's row by
row. The file is read into memory once and never written to; it is loaded once, with its
formulas, and the results saved with the formula cells are read from the package
(`blendkit.read.saved_values`).

The format is described in the `blendkit.read` package docstring, each sheet's columns in
the docstring of that sheet's module.

To add an input sheet: write a module beside the others that names the sheet and has a
reader `read_<sheet>_sheet(reading)`, which takes the sheet's table from the `Reading`,
reports its problems there and stores what it read on it; then add the name to `SHEETS`
(where its problems are listed) and the reader to `READERS` (after the sheets it refers
to). What it adds to the `Blend` goes on `Reading` and into `_blend`.
"""

from __future__ import annotations

import io
import re
import warnings
import zipfile
from pathlib import Path

import openpyxl
from openpyxl.utils import column_index_from_string

from blendkit.errors import Problem, WorkbookError
from blendkit.model.blend import OUTPUT_SHEETS_PROPERTY, Blend, kept_sheet_titles, written_sheets
from blendkit.read.combined import COMBINED, read_combined_sheet
from blendkit.read.dry_matter import find_dry_matter_column
from blendkit.read.groups import GROUPS, read_groups_sheet
from blendkit.read.ingredients import INGREDIENTS, read_ingredients_sheet
from blendkit.read.layout import check_layout
from blendkit.read.limits import LIMITS, read_limits_sheet
from blendkit.read.package import ReadLimits, check_package, open_archive
from blendkit.read.products import PRODUCTS, read_products_sheet
from blendkit.read.reading import Reading
from blendkit.read.saved_values import SheetValues, saved_values
from blendkit.read.settings import SETTINGS, read_settings_sheet
from blendkit.read.specs import SPECS, read_specs_sheet
from blendkit.read.tables import read_table
from blendkit.read.undefined_specs import check_undefined_specs
from blendkit.read.values import name_key
from blendkit.read.weigh_cells import check_diet_maxima
from blendkit.read.weigh_fit import check_weigh_fit

# Every sheet the reader knows, in the order its problems are listed.
SHEETS = (INGREDIENTS, COMBINED, SPECS, GROUPS, PRODUCTS, LIMITS, SETTINGS)

# The readers, in the order they run: each after the sheets it refers to.
READERS = (
    check_layout,  # hidden and merged parts, data under blank headers: on the tables alone
    read_settings_sheet,  # first: the mode and the units say how the other sheets read
    read_ingredients_sheet,
    find_dry_matter_column,  # the Dry matter setting's column among the nutrient columns
    read_combined_sheet,  # refers to the nutrient columns; adds nutrients for the Specs
    read_products_sheet,
    read_specs_sheet,  # refers to the nutrient columns, the dry-matter column and the products
    read_groups_sheet,  # refers to the ingredients and the products
    read_limits_sheet,  # refers to the ingredients and the products
    check_undefined_specs,  # needs the ingredients' contents and the specs
    check_diet_maxima,  # Max ingredients in a diet: needs the settings and the ingredients
    check_weigh_fit,  # packs and steps against the batch, Min if used against Limits: needs them all
)

# The first bytes of an old binary Excel file, which is also how password-protected
# .xlsx files are stored (an OLE compound document).
_OLE_MAGIC = bytes.fromhex("D0CF11E0A1B11AE1")

_SAVE_AS = "open it in a spreadsheet program and save it as an Excel workbook (.xlsx)"


def read_workbook(path: str | Path, *, data: bytes | None = None, limits: ReadLimits = ReadLimits()) -> Blend:
    """Read the blend workbook at `path` into a `Blend`.

    With `data`, those bytes are parsed as the file at `path` (the caller read the file
    once, so that what is solved, hashed and copied is the same); the file itself is
    then not opened. Raises `WorkbookError` with every problem found (each with its
    sheet and cell) when the file cannot be read, is larger than `limits` allow (checked
    before anything is parsed) or breaks any rule of the format described in the
    `blendkit.read` package docstring. The file is never modified.
    """
    return read_with_workbook(path, data=data, limits=limits)[0]


def read_with_workbook(
    path: str | Path, *, data: bytes | None = None, limits: ReadLimits = ReadLimits()
) -> tuple[Blend, openpyxl.Workbook]:
    """`read_workbook`, and the workbook as it was loaded (with its formulas), which the
    reader never changes: the writer copies it into the output without loading the file
    a second time."""
    path = Path(path)
    book, saved = _load(path, data, limits)
    sheets, file_problems = _find_sheets(path, book, saved)
    reading = _start_reading(sheets)
    reading.notes.extend(_kept_sheet_notes(book))
    for read_sheet in READERS:
        read_sheet(reading)
    found = file_problems + [
        problem for name in SHEETS for problem in sorted(reading.problems[name], key=_reading_order)
    ]
    if found:
        raise WorkbookError(found)
    return _blend(path, reading), book


def _start_reading(sheets: dict[str, tuple]) -> Reading:
    """A `Reading` with the table of every known sheet present, before any sheet is read."""
    problems: dict[str, list[Problem]] = {name: [] for name in SHEETS}
    return Reading(
        tables={name: read_table(*pair, problems[name]) for name, pair in sheets.items()},
        titles={name: sheets[name][0].title if name in sheets else name for name in SHEETS},
        problems=problems,
    )


def _blend(path: Path, reading: Reading) -> Blend:
    """The `Blend` of a workbook read without problems."""
    nutrients = reading.nutrients
    assert nutrients is not None  # the Ingredients sheet was read without problems
    return Blend(
        ingredients=tuple(reading.ingredients),
        nutrients=tuple(column.name for column in nutrients),
        specs=tuple(reading.specs),
        settings=reading.settings,
        source=path,
        nutrient_units={column.name: column.unit for column in nutrients if column.unit},
        groups=tuple(reading.groups),
        products=tuple(reading.products),
        limits=tuple(reading.limits),
        notes=tuple(reading.notes),
        combined=tuple(reading.combined),
    )


def _kept_sheet_notes(book: openpyxl.Workbook) -> list[str]:
    """A note for each sheet of the user's that bears an output sheet's name: the output
    keeps it under a new title (see `blendkit.model.blend.kept_sheet_titles`)."""
    written = written_sheets(_custom_property(book, OUTPUT_SHEETS_PROPERTY))
    return [
        f'the sheet "{title}" was not written by blendkit, whose output has a sheet of that name: '
        f'the output workbook keeps it as "{kept}"'
        for title, kept in kept_sheet_titles(book.sheetnames, written).items()
        if kept is not None
    ]


def _custom_property(book: openpyxl.Workbook, name: str) -> object:
    """The value of the workbook's custom document property `name`, or None."""
    for prop in book.custom_doc_props:
        if prop.name == name:
            return prop.value
    return None


def _reading_order(problem: Problem) -> tuple[int, int]:
    """Sort key that lists a sheet's problems row by row, left to right."""
    _sheet, _bang, place = problem.where.rpartition("!")
    match = re.fullmatch(r"([A-Z]+)(\d+)|(\d+):\d+", place)
    if match is None:
        return (0, 0)  # the whole sheet
    if match[3]:
        return (int(match[3]), 0)  # a whole row
    return (int(match[2]), column_index_from_string(match[1]))


# --- The file -------------------------------------------------------------------------


def _load(path: Path, data: bytes | None, limits: ReadLimits) -> tuple[openpyxl.Workbook, dict[str, SheetValues]]:
    """Load the workbook with its formulas, and the results saved with its formula cells
    (by sheet title), or say why the file is unreadable or too large to load."""
    if data is None:
        data = _read_bytes(path)
    _check_is_xlsx(path, data)
    _check_size(path, data, limits)
    book = _open(path, data)
    try:
        saved = saved_values(data)
    except Exception as error:  # a part openpyxl skipped but that will not parse
        raise _unreadable(path, error) from None
    return book, saved


def _file_error(path: Path, message: str) -> WorkbookError:
    """The error for a file that cannot be read: one problem, placed on the file name."""
    return WorkbookError([Problem(path.name or str(path), message)])


def _read_bytes(path: Path) -> bytes:
    """The file's contents, or an error saying why they cannot be read."""
    try:
        if not path.exists():
            raise _file_error(path, f'cannot find the file "{path}"; check the file name and folder')
        if path.is_dir():
            raise _file_error(path, f'"{path}" is a folder, not a workbook; give the path of an .xlsx file')
        return path.read_bytes()
    except (OSError, ValueError) as error:  # ValueError: a path the system cannot hold
        reason = getattr(error, "strerror", None) or error
        raise _file_error(
            path, f"cannot read the file ({reason}); check its name and that you may read it"
        ) from None


def _check_is_xlsx(path: Path, data: bytes) -> None:
    """Refuse empty files, old binary or password-protected workbooks, and non-zip files."""
    if not data:
        raise _file_error(
            path, "the file is empty; give an .xlsx workbook with the Ingredients and Specs sheets"
        )
    if data.startswith(_OLE_MAGIC):
        raise _file_error(path, (
            "the file is an old binary Excel workbook (.xls) or a password-protected one; "
            f"blendkit reads .xlsx workbooks: {_SAVE_AS} without a password"
        ))
    if not zipfile.is_zipfile(io.BytesIO(data)):
        kind = "not a zip archive, as .xlsx files are"
        if _looks_like_text(data):
            kind = "a text file, perhaps CSV"
        raise _file_error(path, f"the file is not an .xlsx workbook (it is {kind}); {_SAVE_AS}")


def _check_size(path: Path, data: bytes, limits: ReadLimits) -> None:
    """Refuse a workbook that unpacks to more, or holds more cells, than `limits` allow."""
    try:
        with open_archive(data) as archive:
            problems = check_package(archive, limits, path.name or str(path))
    except Exception as error:  # any failure to unpack means a damaged archive
        raise _unreadable(path, error) from None
    if problems:
        raise WorkbookError(problems)


def _unreadable(path: Path, error: Exception) -> WorkbookError:
    """The error for a zip archive that is no readable workbook, with the reason."""
    return _file_error(path, (
        f"the file is a zip archive but not a readable .xlsx workbook ({type(error).__name__}: "
        f"{error}); it may be damaged or another kind of file: {_SAVE_AS}"
    ))


def _open(path: Path, data: bytes) -> openpyxl.Workbook:
    """The one load of the workbook, with its formulas (their saved results are read
    from the package by `saved_values`)."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # openpyxl warns about features it skips
            book = openpyxl.load_workbook(io.BytesIO(data), data_only=False)
    except Exception as error:  # any failure inside openpyxl means the file is unusable
        raise _unreadable(path, error) from None
    _share_styles(book)
    return book


def _share_styles(book: openpyxl.Workbook) -> None:
    """Let the cells of one style share one style record.

    openpyxl gives every loaded cell its own copy (about 110 bytes; 45 MB for a sheet of
    400,000 cells). openpyxl's style properties (fill, font, number_format...) change a
    cell's record in place, so a writer that styles an input cell gives it its own copy
    first, as `blendkit.write.workbook.replaced` does (the only one that does); the reader
    only reads styles.
    """
    shared: dict = {}
    for sheet in book.worksheets:
        for cell in sheet._cells.values():
            style = cell._style
            if style is not None:
                cell._style = shared.setdefault(style, style)


def _looks_like_text(data: bytes) -> bool:
    """True when the start of the file decodes as text (a CSV or similar)."""
    head = data[:4096]
    try:
        head.decode("utf-8")
    except UnicodeDecodeError:
        return False
    return b"\x00" not in head


def _find_sheets(
    path: Path, book: openpyxl.Workbook, saved: dict[str, SheetValues]
) -> tuple[dict[str, tuple], list[Problem]]:
    """The known sheets, by name ignoring case and spaces, each with its saved results."""
    problems: list[Problem] = []
    wanted = {name_key(name): name for name in SHEETS}
    found: dict[str, tuple] = {}
    for sheet in book.worksheets:
        name = wanted.get(name_key(sheet.title))
        if name is None:
            continue
        if name in found:
            problems.append(Problem(path.name, (
                f'two sheets are named "{name}": "{found[name][0].title}" and "{sheet.title}" '
                "(sheet names are compared ignoring case and spaces); rename or delete one"
            )))
            continue
        found[name] = (sheet, saved.get(sheet.title, {}))
    problems.extend(_missing_sheets(path, book, found))
    return found, problems


def _missing_sheets(path: Path, book: openpyxl.Workbook, found: dict[str, tuple]) -> list[Problem]:
    """A problem for each required sheet the workbook lacks, with the columns it needs."""
    present = ", ".join(f'"{title}"' for title in book.sheetnames) or "none"
    needs = {
        INGREDIENTS: "with the columns Ingredient and Cost (Min, Max, Use, Unit and Stock are optional) "
        "and one column per nutrient",
        SPECS: "with the columns Nutrient, Min and Max (it may have no rows)",
    }
    return [
        Problem(path.name, (
            f'no sheet named "{name}"; add a sheet named "{name}" {columns}; '
            f"sheets present: {present}"
        ))
        for name, columns in needs.items()
        if name not in found
    ]

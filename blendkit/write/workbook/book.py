"""Write the result workbook: the input sheets unchanged, plus the output sheets.

The writer renders a `Formula`; it computes nothing of its own. For the reviewer it adds
live spreadsheet formulas that recompute the blend cost and every nutrient level from the
input cells, so the numbers can be checked in any spreadsheet program.

Output sheets (replaced, never duplicated, when an output workbook is solved again):

* ``Result``: title, caution, status, cost, a highlighted block of broken soft limits (if
  any), the ingredient table and the nutrient table (a diet shows amounts in each food's
  unit; with several products, the run's total cost and one block of both tables per
  product), then the stocks, if the run has any. An infeasible run's Result points to
  the Conflicts sheet.
* ``Conflicts`` (only when the run is infeasible): each irreducible conflicting set of
  limits with the cells they were read from and how far each bound alone would have to
  move, then the least-cost relaxation and the cost of the blend once it is made. A
  Conflicts sheet left by an earlier run is removed when the workbook is now feasible.
* ``Shadow prices``: one row per limit the user wrote (spec, ratio, group, stock or
  inclusion limit, with its product), with its shadow price and unit.
* ``Run info``: tool version, time, input file name and SHA-256, status, caution.

The save is atomic: a temporary file in the output's folder is moved into place, so a
failed run leaves no half-written output. The source file is only ever read.
"""

from __future__ import annotations

import datetime
import hashlib
import io
import math
import os
import re
import tempfile
import zipfile
from pathlib import Path
from xml.etree import ElementTree
from xml.sax.saxutils import escape as xml_escape

from openpyxl import load_workbook
from openpyxl.styles import Alignment, Border, Font, PatternFill, Side
from openpyxl.utils import get_column_letter
from openpyxl.utils.cell import coordinate_to_tuple
from openpyxl.utils.datetime import to_excel
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.hyperlink import Hyperlink
from openpyxl.worksheet.worksheet import Worksheet

from blendkit import CAUTION
from blendkit.model.formula import (
    SOFT_LIMIT_NOTE,
    ConflictLine,
    Formula,
    IngredientLine,
    Limit,
    NutrientLine,
    ProductFormula,
    RunInfo,
)
from blendkit.model.blend import AS_FED, DRY_MATTER, Blend
from blendkit.model.units import cost_unit, run_cost_unit, shadow_price_unit

# Sheets this writer owns; any sheet with one of these names (any case) is replaced.
OUTPUT_SHEETS = ("Result", "Conflicts", "Shadow prices", "Run info")
RESULT, CONFLICTS, SHADOW_PRICES, RUN_INFO = OUTPUT_SHEETS

# The sheet a bare cell reference from the reader (no "Sheet!" part) belongs to.
INGREDIENTS_SHEET = "Ingredients"

# Parts of a number format that never make it a percentage: quoted text, escaped
# characters and [bracketed] sections. The same rule as the reader's.
_LITERAL_FORMAT_PARTS = re.compile(r'"[^"]*"|\\.|\[[^\]]*\]')

# Namespaces of the spreadsheet package parts we touch.
_MAIN_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_REL_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
# A cell element (empty or not), its formula and its value, in a worksheet part.
_CELL_ELEMENT = re.compile(r"<c\b(?P<attrs>[^>]*?)(?:/>|>(?P<body>.*?)</c>)", re.DOTALL)
_FORMULA_ELEMENT = re.compile(r"<f\b[^>]*?(?:/>|>.*?</f>)", re.DOTALL)
_VALUE_ELEMENT = re.compile(r"<v\b[^>]*?(?:/>|>.*?</v>)", re.DOTALL)
# The error values a formula can leave as its result.
_ERROR_VALUES = {"#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A",
                 "#GETTING_DATA"}

# Longest formula the common spreadsheet programs accept (Excel's limit, in characters).
MAX_FORMULA_LENGTH = 8192

# Fixed number formats; nutrient values and shadow prices get a format by magnitude.
INCLUSION_FORMAT = "0.000"  # inclusions in %, and diet amounts
MONEY_FORMAT = "#,##0.00"
AMOUNT_FORMAT = "#,##0.00"
REDUCED_COST_FORMAT = "#,##0.00##"  # two decimals, up to four where the value has them

_BOLD = Font(bold=True)
_TITLE = Font(bold=True, size=14)
_STATUS_ALERT = Font(bold=True, size=12)
_SECTION = Font(bold=True, size=12)  # a product's name, the Stocks heading
_THIN = Side(style="thin")
_HEADER_BORDER = Border(bottom=_THIN)
_BOX = Border(left=_THIN, right=_THIN, top=_THIN, bottom=_THIN)
_WRAP_TOP = Alignment(wrap_text=True, vertical="top")
_LINK = Font(bold=True, size=12, underline="single", color="0563C1")
# The broken soft limits block: a warm fill that stands out from the plain tables.
_ALERT_FILL = PatternFill(fill_type="solid", start_color="FCE4D6", end_color="FCE4D6")
_ALERT_TEXT = Font(bold=True, color="9C0006")
# How the analysis starts a broken soft limit's note; the Result sheet shows those in a
# block of its own near the top, so its notes list skips them.

# Result sheet column widths, in characters: name column, then the number columns.
_NAME_WIDTH = 30
_NUMBER_WIDTH = 16
_RESULT_COLUMNS = 8
# The nutrient table's column of live formulas; ratio and dry-matter lines divide its cells.
_LIVE_COLUMN = 8
# Rows of broken soft limits (with their heading) that may join the frozen top of Result.
_MOST_FROZEN_ROWS = 6
# Conflicts sheet column widths, in characters: Kind, Name, Product, Side, Bound, Cell, move.
_CONFLICT_WIDTHS = (12, 28, 18, 8, 14, 18, 34)


def write_workbook(formula: Formula, run: RunInfo, source: Path, output: Path) -> Path:
    """Write `formula` into a copy of the `source` workbook at `output`; return `output`.

    Every input sheet is kept unchanged; existing output sheets (see `OUTPUT_SHEETS`) are
    removed and written afresh. Raises ValueError if `output` is the source file itself,
    or if the source no longer matches the SHA-256 recorded in `run` (it changed on disk
    since it was read). The write is atomic: on any failure no output file is left behind
    and an existing output is untouched.
    """
    source = Path(source)
    output = Path(output)
    if _same_file(source, output):
        raise ValueError(
            f"output {output} is the input workbook itself; blendkit never overwrites its "
            "input. Choose another output file name."
        )
    data = source.read_bytes()
    digest = hashlib.sha256(data).hexdigest()
    if run.input_sha256 and digest != run.input_sha256.lower():
        raise ValueError(
            f"{source.name} changed since it was read (SHA-256 {digest}, expected "
            f"{run.input_sha256}); solve it again so the result matches the file."
        )

    workbook = load_workbook(io.BytesIO(data), data_only=False)
    _remove_output_sheets(workbook)
    saved = _saved_results(data, workbook)
    title = formula.blend.settings.name or source.stem
    result = _write_result(workbook, formula, title)
    if formula.status == "infeasible":
        _write_conflicts(workbook, formula, title)
    _write_shadow_prices(workbook, formula)
    _write_run_info(workbook, formula, run, title)
    _show_first(workbook, result)
    # The live formulas on Result have no saved result yet: ask for a full recalculation.
    workbook.calculation.fullCalcOnLoad = True
    buffer = io.BytesIO()
    workbook.save(buffer)
    _save_atomically(_with_saved_results(buffer.getvalue(), saved), output)
    return output


# --- file handling -----------------------------------------------------------------------


def _same_file(source: Path, output: Path) -> bool:
    """Catch the same file under another spelling (relative path, symlink, hard link)."""
    if output.resolve() == source.resolve():
        return True
    try:
        return output.exists() and os.path.samefile(source, output)
    except OSError:
        return False


def _save_atomically(content: bytes, output: Path) -> None:
    """Write next to `output` and move into place, so readers never see a partial file."""
    handle, temp_name = tempfile.mkstemp(
        prefix=f".{output.name}.", suffix=".tmp", dir=output.parent
    )
    temp = Path(temp_name)
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(content)
        os.chmod(temp, _file_mode(output))
        os.replace(temp, output)
    except BaseException:
        temp.unlink(missing_ok=True)
        raise


def _file_mode(output: Path) -> int:
    """mkstemp makes owner-only files; give the output the mode a plain save would."""
    if output.exists():
        return output.stat().st_mode & 0o777
    umask = os.umask(0)
    os.umask(umask)
    return 0o666 & ~umask


def _saved_results(data: bytes, workbook: Workbook) -> dict[str, dict[str, object]]:
    """The results saved with the input's formula cells, per sheet title and cell.

    openpyxl keeps a formula or its saved result, never both. Without the results, solving
    the output workbook again would fail (the reader needs them) until it is opened and
    saved in a spreadsheet program; so they are put back after saving (see
    `_with_saved_results`). Dates come back as serial numbers, as the file stores them.
    """
    results = load_workbook(io.BytesIO(data), data_only=True)
    saved: dict[str, dict[str, object]] = {}
    for sheet in workbook.worksheets:
        cells: dict[str, object] = {}
        for row in sheet.iter_rows():
            for cell in row:
                if cell.data_type != "f":
                    continue
                value = results[sheet.title][cell.coordinate].value
                if isinstance(value, (datetime.datetime, datetime.date, datetime.time)):
                    value = to_excel(value, results.epoch)
                elif isinstance(value, datetime.timedelta):
                    value = value.total_seconds() / 86400
                if value is not None:
                    cells[cell.coordinate] = value
        if cells:
            saved[sheet.title] = cells
    return saved


def _with_saved_results(content: bytes, saved: dict[str, dict[str, object]]) -> bytes:
    """The saved workbook `content` with each input formula cell's saved result restored."""
    if not saved:
        return content
    with zipfile.ZipFile(io.BytesIO(content)) as archive:
        members = [(info, archive.read(info)) for info in archive.infolist()]
    parts = _worksheet_parts(dict((info.filename, data) for info, data in members))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        for info, data in members:
            title = parts.get(info.filename)
            if title in saved:
                data = _restore_results(data, saved[title])
            archive.writestr(info, data)
    return out.getvalue()


def _worksheet_parts(members: dict[str, bytes]) -> dict[str, str]:
    """Map each worksheet's part name in the package to its sheet title."""
    rels = ElementTree.fromstring(members["xl/_rels/workbook.xml.rels"])
    targets = {}
    for rel in rels:
        target = rel.get("Target", "")
        targets[rel.get("Id")] = target.lstrip("/") if target.startswith("/") else f"xl/{target}"
    book = ElementTree.fromstring(members["xl/workbook.xml"])
    parts = {}
    for sheet in book.iter(f"{{{_MAIN_NS}}}sheet"):
        target = targets.get(sheet.get(f"{{{_REL_NS}}}id"))
        if target:
            parts[target] = sheet.get("name")
    return parts


def _restore_results(xml: bytes, results: dict[str, object]) -> bytes:
    """Fill in the result of each formula cell of one worksheet part.

    The part is patched as text, cell by cell, rather than parsed and written again, so
    everything else in it stays exactly as openpyxl wrote it.
    """

    def patch(match: re.Match) -> str:
        attrs, body = match.group("attrs"), match.group("body")
        where = re.search(r'\br="\$?([A-Z]+)\$?([0-9]+)"', attrs)
        formula = body and _FORMULA_ELEMENT.search(body)
        value = results.get(where.group(1) + where.group(2)) if where else None
        if value is None or not formula:
            return match.group(0)
        kind, text = _result_text(value)
        attrs = re.sub(r'\s+t="[^"]*"', "", attrs) + f' t="{kind}"'
        rest = _VALUE_ELEMENT.sub("", body[formula.end():])
        return f"<c{attrs}>{body[:formula.end()]}<v>{text}</v>{rest}</c>"

    return _CELL_ELEMENT.sub(patch, xml.decode("utf-8")).encode("utf-8")


def _result_text(value: object) -> tuple[str, str]:
    """A saved result as a cell type code and the text of its <v> element."""
    if isinstance(value, bool):
        return "b", "1" if value else "0"
    if isinstance(value, int):
        return "n", str(value)
    if isinstance(value, float):
        return "n", repr(value)
    if isinstance(value, str) and value in _ERROR_VALUES:
        return "e", value
    return "str", xml_escape(str(value))


def _new_sheet(workbook: Workbook, title: str) -> Worksheet:
    """An output sheet that prints landscape, one page wide, for a reviewer's paper copy."""
    sheet = workbook.create_sheet(title)
    sheet.page_setup.orientation = "landscape"
    sheet.sheet_properties.pageSetUpPr.fitToPage = True
    sheet.page_setup.fitToWidth = 1
    sheet.page_setup.fitToHeight = 0
    return sheet


def _remove_output_sheets(workbook: Workbook) -> None:
    """Drop earlier output sheets so a second solve replaces rather than adds copies."""
    owned = {name.casefold() for name in OUTPUT_SHEETS}
    for sheet in list(workbook._sheets):  # worksheets and chart sheets alike
        if sheet.title.casefold() in owned:
            workbook.remove(sheet)


def _show_first(workbook: Workbook, sheet: Worksheet) -> None:
    """Open the workbook on the Result sheet, with no other tab selected."""
    for other in workbook.worksheets:
        other.sheet_view.tabSelected = False
    sheet.sheet_view.tabSelected = True
    workbook.active = workbook.index(sheet)


# --- Result sheet --------------------------------------------------------------------------


def _write_result(workbook: Workbook, formula: Formula, title: str) -> Worksheet:
    """The reviewer's main sheet: caution and status on top, then the tables."""
    sheet = _new_sheet(workbook, RESULT)
    sheet.column_dimensions["A"].width = _NAME_WIDTH
    for column in range(2, _RESULT_COLUMNS + 1):
        sheet.column_dimensions[get_column_letter(column)].width = _NUMBER_WIDTH

    _put(sheet, 1, 1, title)
    sheet["A1"].font = _TITLE
    _write_caution(sheet, row=2)
    sheet["A4"] = "Status"
    _put(sheet, 4, 2, formula.status)
    sheet["A5"] = "Message"
    _put(sheet, 5, 2, formula.message)
    for cell in ("A4", "A5"):
        sheet[cell].font = _BOLD

    if not formula.solved:
        sheet["B4"].font = _STATUS_ALERT
        sheet["B5"].font = _STATUS_ALERT
        if formula.status == "infeasible":
            _write_conflicts_pointer(sheet, formula, row=6)
        sheet["A7"] = (
            "No blend was found, so this sheet shows no numbers. Read the message above "
            "and the notes below, correct the workbook and solve again."
        )
        _write_notes(sheet, formula.notes, row=9)
        return sheet
    if formula.several:
        _write_several(sheet, workbook, formula)
    else:
        _write_one(sheet, workbook, formula)
    return sheet


def _write_one(sheet: Worksheet, workbook: Workbook, formula: Formula) -> None:
    """One blend or one diet: its cost, the cost's live check and the batch, then the tables.

    Rows 6-8 hold the top block; the ingredient table's header is on row 10, or below the
    broken soft limits block when there is one.
    """
    blend = formula.blend
    settings = blend.settings
    header = _write_broken(sheet, formula, 10)
    rows = _ingredient_rows(formula.ingredients, header)
    label = "Diet cost" if blend.diet else "Blend cost"
    _write_cost(sheet, workbook, blend, 6, label, formula.cost, run_cost_unit(blend),
                formula.ingredients, rows)
    if blend.diet:
        sheet["A8"] = "Amounts"
        _put(sheet, 8, 2, "each in the food's own unit (Unit column); nutrient levels are totals")
    else:
        sheet["A8"] = "Batch"
        _number(sheet.cell(8, 2), settings.batch_size, _whole_format(settings.batch_size))
        _put(sheet, 8, 3, settings.mass_unit)
    sheet["A8"].font = _BOLD

    below = _write_tables(sheet, workbook, blend, formula.ingredients, formula.nutrients, header,
                          settings.batch_size, rows)
    below = _write_stocks(sheet, formula, below)
    _write_notes(sheet, _notes(formula), below)
    if header - 10 <= _MOST_FROZEN_ROWS:
        sheet.freeze_panes = sheet.cell(header + 1, 2)  # top block, table header and names stay
    else:
        sheet.freeze_panes = "B1"  # a long soft limits block would fill the screen: names only


def _write_several(sheet: Worksheet, workbook: Workbook, formula: Formula) -> None:
    """Several products: the run's total cost, one block per product, then the stocks.

    The total's live check adds up each product's live cost check times the amount made
    in `Cost per` units, so it follows any edit of an inclusion or an input price.
    """
    blend = formula.blend
    settings = blend.settings
    sheet["A6"] = "Total cost"
    _number(sheet.cell(6, 2), formula.cost, MONEY_FORMAT)
    _put(sheet, 6, 3, run_cost_unit(blend))
    _put(sheet, 6, 4, "all products together")
    sheet["A7"] = "Total cost from input prices"
    for cell in ("A6", "A7"):
        sheet[cell].font = _BOLD

    row = _write_broken(sheet, formula, 9)
    checks: list[tuple[int, int]] = []  # (row of the amount made, row of the live cost)
    for product in formula.products:
        row, check = _write_product(sheet, workbook, formula, product, row)
        if check is not None:
            checks.append(check)
    if formula.products and len(checks) == len(formula.products):
        per = settings.cost_unit_in_mass_units
        terms = "+".join(f"B{cost}*B{amount}" for amount, cost in checks)
        _live(sheet.cell(7, 2), f"=({terms})/{_plain(per) if per.is_integer() else repr(per)}",
              MONEY_FORMAT)
        _put(sheet, 7, 3, f"{run_cost_unit(blend)} (live formula: each product's cost from "
                          "input prices x amount made)".strip())
    else:
        sheet["C7"] = "not available: input cells unknown or formula too long"
    row = _write_stocks(sheet, formula, row)
    _write_notes(sheet, _notes(formula), row)
    sheet.freeze_panes = "B1"  # the name column stays; blocks scroll by


def _write_product(
    sheet: Worksheet, workbook: Workbook, formula: Formula, product: ProductFormula, row: int
) -> tuple[int, tuple[int, int] | None]:
    """One product's block from `row`: name, amount made, cost and its check, the tables.

    Returns the first row after the block, and the rows of its amount and live cost check
    (None when the check could not be written).
    """
    blend = formula.blend
    settings = blend.settings
    _put(sheet, row, 1, "Product").font = _SECTION
    _put(sheet, row, 2, product.name).font = _SECTION
    _put(sheet, row + 1, 1, "Amount made").font = _BOLD
    _number(sheet.cell(row + 1, 2), product.amount, _whole_format(product.amount))
    _put(sheet, row + 1, 3, settings.mass_unit)
    header = row + 5
    rows = _ingredient_rows(product.ingredients, header)
    check = _write_cost(sheet, workbook, blend, row + 2, "Cost", product.cost, cost_unit(settings),
                        product.ingredients, rows)
    below = _write_tables(sheet, workbook, blend, product.ingredients, product.nutrients, header,
                          product.amount, rows, made=True)
    return below + 1, (row + 1, check) if check is not None else None


def _write_cost(
    sheet: Worksheet,
    workbook: Workbook,
    blend: Blend,
    row: int,
    label: str,
    cost: float | None,
    unit: str,
    lines: tuple[IngredientLine, ...],
    rows: dict[str, int],
) -> int | None:
    """The cost on `row` and its live check from the input prices on the row below.

    Returns the check's row, or None when it could not be written.
    """
    _put(sheet, row, 1, label).font = _BOLD
    _number(sheet.cell(row, 2), cost, MONEY_FORMAT)
    _put(sheet, row, 3, unit)
    _put(sheet, row + 1, 1, f"{label} from input prices").font = _BOLD
    check = _recompute_formula(blend, lines, rows, workbook, lambda item: item.cells.get("cost"))
    if check is None:
        _put(sheet, row + 1, 3, "not available: input cells unknown or formula too long")
        return None
    _live(sheet.cell(row + 1, 2), check, MONEY_FORMAT)
    what = "amounts" if blend.diet else "inclusions"
    _put(sheet, row + 1, 3, f"{unit} (live formula: {what} below x Cost column)".strip())
    return row + 1


def _write_caution(
    sheet: Worksheet,
    row: int,
    columns: int = _RESULT_COLUMNS,
    width: int = _NAME_WIDTH + _NUMBER_WIDTH * (_RESULT_COLUMNS - 1),
) -> None:
    """The caution in a boxed, wrapped cell across `columns` columns, `width` characters."""
    _paragraph(sheet, row, CAUTION, columns, width, bold=True)
    for column in range(1, columns + 1):
        sheet.cell(row, column).border = _BOX


def _paragraph(sheet: Worksheet, row: int, text: str, columns: int, width: int,
               bold: bool = False):
    """Text wrapped in one cell merged across `columns` columns (`width` characters in all),
    its row tall enough to show it; returns the cell."""
    cell = _put(sheet, row, 1, text)
    cell.alignment = _WRAP_TOP
    if bold:
        cell.font = _BOLD
    sheet.merge_cells(start_row=row, start_column=1, end_row=row, end_column=columns)
    lines = math.ceil(len(text) * (1.15 if bold else 1.05) / width)  # bold runs wider
    sheet.row_dimensions[row].height = 15 * lines + 4
    return cell


def _broken_limits(formula: Formula) -> list[Limit]:
    """The soft limits the formula breaks, each once (a product's limits are also the run's)."""
    every = [*formula.limits, *(limit for product in formula.products for limit in product.limits)]
    return [limit for limit in dict.fromkeys(every) if limit.broken]


def _notes(formula: Formula) -> tuple[str, ...]:
    """The notes, less those for broken soft limits when the Result shows them in a block."""
    if not _broken_limits(formula):
        return formula.notes
    return tuple(note for note in formula.notes if not note.startswith(SOFT_LIMIT_NOTE))


def _write_broken(sheet: Worksheet, formula: Formula, row: int) -> int:
    """The broken soft limits, highlighted, from `row`; returns the first row for what
    follows (`row` itself when every limit is met)."""
    broken = _broken_limits(formula)
    if not broken:
        return row
    blend = formula.blend
    unit = run_cost_unit(blend) if blend.diet else cost_unit(blend.settings)
    money = unit if blend.settings.currency else f"cost {unit}"
    labels = ["Soft limit", "Side", "Bound", "Level", "Violation (shortfall or excess)",
              f"Penalty ({money} per unit of violation)", "Bound read from"]
    if formula.several:
        labels.insert(1, "Product")
    if len(broken) == 1:
        count = "1 soft spec missed: meeting it would cost more than its penalty."
    else:
        count = f"{len(broken)} soft specs missed: meeting them would cost more than their penalties."
    _put(sheet, row, 1, "SOFT LIMITS BROKEN").font = _ALERT_TEXT
    _put(sheet, row, 2, f"{count} Check that this is acceptable.").font = _ALERT_TEXT
    _header(sheet, row + 1, labels)
    for offset, limit in enumerate(broken, start=2):
        at = row + offset
        values = [limit.name, limit.side]
        if formula.several:
            values.insert(1, limit.product)
        for column, value in enumerate(values, start=1):
            _put(sheet, at, column, value)
        first = len(values) + 1
        number_format = _format_by_size([limit.bound, limit.level], 1)
        for column, value in enumerate((limit.bound, limit.level, limit.violation), start=first):
            _number(sheet.cell(at, column), value, number_format)
        _number(sheet.cell(at, first + 3), limit.penalty, _format_by_size([limit.penalty], 2))
        _put(sheet, at, first + 4, limit.cell)
    last = row + 1 + len(broken)
    for at in range(row, last + 1):
        for column in range(1, len(labels) + 1):
            sheet.cell(at, column).fill = _ALERT_FILL
    return last + 2


def _write_conflicts_pointer(sheet: Worksheet, formula: Formula, row: int) -> None:
    """A line in the Result's message area that sends the reader to the Conflicts sheet."""
    count = len({line.conflict for line in formula.conflicts})
    if count:
        sets = f"{count} set{'s' if count != 1 else ''} of limits that cannot all hold together"
        text = f"See the Conflicts sheet: {sets}, their cells, and the cheapest way out."
    else:
        text = "See the Conflicts sheet."
    _put(sheet, row, 1, "Conflicts").font = _BOLD
    cell = _put(sheet, row, 2, text)
    cell.font = _LINK
    cell.hyperlink = Hyperlink(ref=cell.coordinate, location=f"{_quote_sheet(CONFLICTS)}!A1")


def _ingredient_rows(lines: tuple[IngredientLine, ...], header_row: int) -> dict[str, int]:
    """Where each ingredient's inclusion (or diet amount) will be: column B below the header."""
    return {line.name: header_row + offset for offset, line in enumerate(lines, start=1)}


def _write_tables(
    sheet: Worksheet,
    workbook: Workbook,
    blend: Blend,
    lines: tuple[IngredientLine, ...],
    nutrients: tuple[NutrientLine, ...],
    header_row: int,
    amount: float,
    rows: dict[str, int],
    made: bool = False,
) -> int:
    """The ingredient table with its Total row, then the nutrient table; returns the first
    free row after a blank one."""
    _write_ingredients(sheet, blend, lines, header_row, amount, made)
    first, last = header_row + 1, header_row + len(lines)
    total_row = last + 1
    _put(sheet, total_row, 1, "Total").font = _BOLD
    # Diet amounts are in each food's own unit: only their cost adds up.
    sums = ((4, MONEY_FORMAT),) if blend.diet else (
        (2, INCLUSION_FORMAT), (3, AMOUNT_FORMAT), (4, MONEY_FORMAT))
    if lines:
        for column, number_format in sums:
            letter = get_column_letter(column)
            cell = sheet.cell(total_row, column, f"=SUM({letter}{first}:{letter}{last})")
            cell.number_format = number_format
            cell.font = _BOLD
            cell.border = Border(top=_THIN)
    nutrient_header = total_row + 2
    _write_nutrients(sheet, workbook, blend, lines, nutrients, nutrient_header, rows)
    return nutrient_header + len(nutrients) + 2


def _write_ingredients(
    sheet: Worksheet,
    blend: Blend,
    lines: tuple[IngredientLine, ...],
    header_row: int,
    amount: float,
    made: bool,
) -> None:
    """One row per ingredient line, numbers as numbers.

    Blend mode: inclusion % in column B; diet mode: the amount in B and the food's unit
    in C. `made` words the amount and cost columns for a product rather than a batch.
    """
    settings = blend.settings
    money = settings.currency or "currency"
    if blend.diet:
        labels = [
            "Ingredient",
            "Amount",
            "Unit",
            f"Cost ({money})",
            f"Price ({money} per unit)",
            f"Reduced cost ({money} per 1 unit)",
            f"Price at which it would come in ({money} per unit)",
            f"Used more if its price falls below ({money} per unit)",
            f"Used less if its price rises above ({money} per unit)",
        ]
    else:
        unit_of_cost = cost_unit(settings)
        mass = settings.mass_unit
        if made:
            amount_label = f"Amount ({mass} in {_plain(amount)} {mass} made)"
            cost_label = f"Cost of the amount made ({money})"
        else:
            amount_label = f"Amount ({mass} per {_plain(amount)} {mass} batch)"
            cost_label = f"Cost per batch ({money})"
        labels = [
            "Ingredient",
            "Inclusion (%)",
            amount_label,
            cost_label,
            f"Price ({unit_of_cost})",
            f"Reduced cost ({unit_of_cost} per 1 % inclusion)",
            f"Price at which it would come in ({unit_of_cost})",
            f"Used more if its price falls below ({unit_of_cost})",
            f"Used less if its price rises above ({unit_of_cost})",
        ]
    _header(sheet, header_row, labels)
    for offset, line in enumerate(lines, start=1):
        row = header_row + offset
        _put(sheet, row, 1, line.name)
        _number(sheet.cell(row, 2), line.inclusion, INCLUSION_FORMAT)
        if blend.diet:
            _put(sheet, row, 3, _food_unit(blend, line.name))
        else:
            _number(sheet.cell(row, 3), line.amount, AMOUNT_FORMAT)
        _number(sheet.cell(row, 4), line.batch_cost, MONEY_FORMAT)
        _number(sheet.cell(row, 5), line.cost, MONEY_FORMAT)
        _number(sheet.cell(row, 6), line.reduced_cost, REDUCED_COST_FORMAT)
        if not line.used:
            _put(sheet, row, 7, "not in use (Use = no)")
        elif line.entry_price is not None:
            _number(sheet.cell(row, 7), line.entry_price, MONEY_FORMAT)
        # The price range over which this formula stays the cheapest (cost ranging); an
        # unused ingredient's lower end is its entry price, already in column 7.
        if line.more_below is not None and line.entry_price is None:
            _number(sheet.cell(row, 8), line.more_below, MONEY_FORMAT)
        if line.less_above is not None:
            _number(sheet.cell(row, 9), line.less_above, MONEY_FORMAT)


def _write_nutrients(
    sheet: Worksheet,
    workbook: Workbook,
    blend: Blend,
    lines: tuple[IngredientLine, ...],
    nutrients: tuple[NutrientLine, ...],
    header_row: int,
    inclusion_rows: dict[str, int],
) -> None:
    """One row per nutrient line, with a live formula recomputing its level.

    An as-fed level is recomputed from the input contents and the inclusions (amounts) on
    this sheet; a ratio divides the two recomputed levels it names, and a dry-matter
    level divides the recomputed level by the recomputed dry matter (in %).
    """
    level = "Total" if blend.diet else "Level"
    _header(
        sheet,
        header_row,
        ["Nutrient", "Basis", "Unit", "Min", "Max", level, "Position",
         f"{level} from input contents"],
    )
    live_rows: dict[str, int] = {}  # as-fed nutrient -> row of its live formula
    for offset, line in enumerate(nutrients, start=1):
        if line.kind == "nutrient" and line.basis == AS_FED:
            check = _recompute_formula(
                blend, lines, inclusion_rows, workbook,
                lambda item, nutrient=line.name: item.content_cells.get(nutrient),
            )
            if check is not None:
                _live(sheet.cell(header_row + offset, _LIVE_COLUMN), check, _nutrient_format(line))
                live_rows.setdefault(line.name, header_row + offset)
    live = get_column_letter(_LIVE_COLUMN)
    for offset, line in enumerate(nutrients, start=1):
        row = header_row + offset
        number_format = _nutrient_format(line)
        _put(sheet, row, 1, line.name)
        _put(sheet, row, 2, _basis(line.kind, line.basis))
        _put(sheet, row, 3, line.unit)
        _number(sheet.cell(row, 4), line.minimum, number_format)
        _number(sheet.cell(row, 5), line.maximum, number_format)
        _number(sheet.cell(row, 6), line.level, number_format)
        _put(sheet, row, 7, line.position)
        if line.level is None:
            continue  # an undefined ratio (a zero level below the line) has nothing to check
        if line.kind == "ratio":
            parts = _ratio_parts(blend, line.name)
            if parts and parts[0] in live_rows and parts[1] in live_rows:
                top, bottom = (live_rows[part] for part in parts)
                _live(sheet.cell(row, _LIVE_COLUMN), f"={live}{top}/{live}{bottom}", number_format)
        elif line.basis == DRY_MATTER:
            dry = blend.settings.dry_matter
            if line.name in live_rows and dry in live_rows:
                text = f"={live}{live_rows[line.name]}/{live}{live_rows[dry]}*100"
                _live(sheet.cell(row, _LIVE_COLUMN), text, number_format)


def _write_stocks(sheet: Worksheet, formula: Formula, row: int) -> int:
    """The Stocks table from `row`, if the run has stocks; returns the first free row after."""
    if not formula.stocks:
        return row
    blend = formula.blend
    money = blend.settings.currency or "currency"
    title = "Stocks (shared by all products)" if formula.several else "Stocks"
    _put(sheet, row, 1, title).font = _SECTION
    header = row + 1
    _header(
        sheet,
        header,
        [
            "Ingredient",
            "Used",
            "Available",
            "Unit",
            "Binding",
            f"Shadow price ({money} per 1 unit of stock)",
            f"Worth of one more unit ({money})",
            "Stock read from",
        ],
    )
    for offset, line in enumerate(formula.stocks, start=1):
        at = header + offset
        unit = _food_unit(blend, line.ingredient) if blend.diet else blend.settings.mass_unit
        _put(sheet, at, 1, line.ingredient)
        _number(sheet.cell(at, 2), line.used, AMOUNT_FORMAT)
        _number(sheet.cell(at, 3), line.available, AMOUNT_FORMAT)
        _put(sheet, at, 4, unit)
        _put(sheet, at, 5, "yes" if line.binding else "no")
        price_format = _format_by_size([line.shadow_price], 2)
        _number(sheet.cell(at, 6), line.shadow_price, price_format)
        _number(sheet.cell(at, 7), -line.shadow_price, price_format)
        _put(sheet, at, 8, line.cell)
    return header + len(formula.stocks) + 2


def _write_notes(sheet: Worksheet, notes: tuple[str, ...], row: int) -> None:
    """Advisory notes, one per row, under a bold heading."""
    if not notes:
        return
    _put(sheet, row, 1, "Notes").font = _BOLD
    for offset, note in enumerate(notes, start=1):
        _put(sheet, row + offset, 1, note)


def _food_unit(blend: Blend, name: str) -> str:
    """A diet food's unit as written in its Unit cell (blank when unknown)."""
    try:
        return blend.ingredient(name).unit
    except KeyError:
        return ""


def _ratio_parts(blend: Blend, name: str) -> tuple[str, str] | None:
    """The two nutrient columns of the ratio spec written as `name`, if there is one."""
    for spec in blend.specs:
        if spec.ratio is not None and spec.nutrient == name:
            return spec.ratio
    return None


def _basis(kind: str, basis: str) -> str:
    """The Basis column's word: "ratio" for a ratio, else the line's basis; blank for
    limits that have none (ingredients, groups, stocks)."""
    if kind == "ratio":
        return "ratio"
    return basis if kind == "nutrient" else ""


def _recompute_formula(
    blend: Blend,
    lines: tuple[IngredientLine, ...],
    inclusion_rows: dict[str, int],
    workbook: Workbook,
    input_cell,
) -> str | None:
    """A live formula: sum of (inclusion cell on Result x input cell) / 100; in diet mode
    the sum of (amount cell x input cell).

    `input_cell(ingredient)` gives the reader's reference for the value to weigh. Every
    ingredient is included, so editing any inclusion cell updates the result; if that
    would pass the spreadsheet formula length limit, only the ingredients in the blend
    are kept. Returns None when an input cell is unknown.
    """
    terms: list[tuple[float, str]] = []
    for line in lines:
        try:
            reference = input_cell(blend.ingredient(line.name))
        except KeyError:
            return None
        operand = _input_operand(workbook, reference)
        if operand is None:
            return None
        terms.append((line.inclusion, f"B{inclusion_rows[line.name]}*{operand}"))
    if not terms:
        return None
    percent = not blend.diet
    text = _sum_formula([term for _, term in terms], percent)
    if len(text) > MAX_FORMULA_LENGTH:
        text = _sum_formula([term for inclusion, term in terms if inclusion != 0] or ["0"], percent)
    return text if len(text) <= MAX_FORMULA_LENGTH else None


def _sum_formula(terms: list[str], percent: bool = True) -> str:
    """Plain + and * only, so every spreadsheet program evaluates it the same way."""
    return "=(" + "+".join(terms) + (")/100" if percent else ")")


def _input_operand(workbook: Workbook, reference: str | None) -> str | None:
    """The reader's "Sheet!A1" (or bare "A1", on Ingredients) as a formula operand.

    A number shown as a percentage (0.05 shown as 5%) was read as the number shown, so
    the operand is scaled the same way: ``Ingredients!F2*100``. None when the sheet is
    not in the workbook.
    """
    if not reference:
        return None
    sheet_name, bang, coordinate = reference.rpartition("!")
    if not bang:
        sheet_name = INGREDIENTS_SHEET
    if len(sheet_name) > 1 and sheet_name[0] == sheet_name[-1] == "'":
        sheet_name = sheet_name[1:-1].replace("''", "'")
    sheet = _sheet_named(workbook, sheet_name)
    if sheet is None:
        return None
    try:
        row, column = coordinate_to_tuple(coordinate.replace("$", ""))
    except (ValueError, TypeError):
        return None
    operand = f"{_quote_sheet(sheet.title)}!{coordinate}"
    cell = sheet._cells.get((row, column))  # never sheet[...]: that would add a cell
    if cell is not None and _scaled_as_percent(cell.value, cell.number_format):
        operand += "*100"
    return operand


def _sheet_named(workbook: Workbook, name: str) -> Worksheet | None:
    """The worksheet called `name`, ignoring case as spreadsheet programs do."""
    for sheet in workbook.worksheets:
        if sheet.title.casefold() == name.casefold():
            return sheet
    return None


def _scaled_as_percent(value: object, number_format: str) -> bool:
    """The reader's rule: a number (typed or computed) in a format with an unquoted,
    unescaped % outside [brackets] is read as the percentage shown. Keep in step with
    `blendkit.read.workbook`."""
    if isinstance(value, str) and not value.startswith("="):
        return False  # text that looks like a number is read as written
    return "%" in _LITERAL_FORMAT_PARTS.sub("", number_format or "")


def _quote_sheet(name: str) -> str:
    """Quote a sheet name only when a formula needs it (spaces, symbols, cell-like)."""
    plain = re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", name)
    cell_like = re.fullmatch(r"[A-Za-z]{1,3}[0-9]+|[Rr][0-9]*([Cc][0-9]*)?", name)
    if plain and not cell_like:
        return name
    return "'" + name.replace("'", "''") + "'"


# --- Conflicts sheet -----------------------------------------------------------------------


def _write_conflicts(workbook: Workbook, formula: Formula, title: str) -> None:
    """Why no blend was found: each conflicting set, then the least-cost way out.

    Layout, top to bottom: title, caution, a short explanation, one block per conflict
    (heading, then Kind, Name, Product, Side, Bound, Cell, "Alone it would have to move
    to"), the least-cost relaxation (the same columns with "New bound" last) and the
    cost of the blend once it is made.
    """
    sheet = _new_sheet(workbook, CONFLICTS)
    columns, width = len(_CONFLICT_WIDTHS), sum(_CONFLICT_WIDTHS)
    for column, size in enumerate(_CONFLICT_WIDTHS, start=1):
        sheet.column_dimensions[get_column_letter(column)].width = size
    _put(sheet, 1, 1, f"{title}: limits that cannot all be met").font = _TITLE
    _write_caution(sheet, 2, columns, width)

    lines = formula.conflicts
    kinds = {line.kind for line in (*lines, *(formula.relaxation.changes if formula.relaxation else ()))}
    explain = [
        ("Each conflict below is an irreducible set of limits: they cannot all hold together, "
         "but drop or move any one of them and the rest of that set can be met."),
        ('"Alone it would have to move to": the value that one bound, moved on its own, would '
         "need for the workbook to become feasible (other conflicts set aside); "
         '"no single move" where moving it alone is not enough.'),
    ]
    if "use" in kinds:
        explain.append('Kind "use" is a Use = no (a max of 0): its new value is the most of that '
                       "ingredient to allow once Use is yes.")
    if "total" in kinds:
        explain.append('Kind "total" is the rule that the inclusions sum to 100 % (for a product, '
                       "tied to its Amount cell); it cannot move.")
    row = 4
    for text in explain:
        _paragraph(sheet, row, text, columns, width)
        row += 1
    if not formula.conflicts_complete:
        cell = _paragraph(sheet, row, "More conflicts may remain after these are fixed: fix these, "
                                      "then solve again to see the rest.", columns, width)
        cell.font = _ALERT_TEXT
        row += 1
    row += 1

    numbers = sorted({line.conflict for line in lines})
    if not numbers:
        _put(sheet, row, 1, "No conflicting set of limits was found for this run.").font = _BOLD
        row += 2
    for number in numbers:
        heading = f"Conflict {number}" + (f" of {len(numbers)}" if len(numbers) > 1 else "")
        _put(sheet, row, 1, heading).font = _SECTION
        _header(sheet, row + 1, ["Kind", "Name", "Product", "Side", "Bound", "Cell",
                                 "Alone it would have to move to"])
        # The sum-to-100 rows last: the limits the user can change come first.
        members = sorted((line for line in lines if line.conflict == number),
                         key=lambda line: line.kind == "total")
        for offset, line in enumerate(members, start=2):
            number_format = _conflict_format(line)
            _write_member(sheet, row + offset, line, number_format)
            if line.kind == "total":
                _put(sheet, row + offset, 7, "cannot move: inclusions sum to 100 %")
            elif line.relax_to is None:
                _put(sheet, row + offset, 7, "no single move")
            else:
                _number(sheet.cell(row + offset, 7), line.relax_to, number_format)
        row += len(members) + 3

    _write_relaxation(sheet, formula, row, columns, width)


def _write_relaxation(sheet: Worksheet, formula: Formula, row: int, columns: int, width: int) -> None:
    """The least-cost relaxation from `row`: the changes, then the cost once they are made."""
    _put(sheet, row, 1, "Least-cost way out").font = _SECTION
    relaxation = formula.relaxation
    if relaxation is None or not relaxation.changes:
        _put(sheet, row + 1, 1, "No relaxation was found: change the limits above by hand; "
                                "one move per conflict is enough.")
        return
    _paragraph(sheet, row + 1, "Move all of these bounds together: the smallest moves that make the "
                               "workbook feasible (limits with a lower Priority give way first), and "
                               "among those the one with the cheapest blend.", columns, width)
    _header(sheet, row + 2, ["Kind", "Name", "Product", "Side", "Old bound", "Cell", "New bound"])
    for offset, line in enumerate(relaxation.changes, start=3):
        number_format = _conflict_format(line)
        _write_member(sheet, row + offset, line, number_format)
        _number(sheet.cell(row + offset, 7), line.relax_to, number_format)
    at = row + 3 + len(relaxation.changes) + 1
    blend = formula.blend
    label = "Total cost" if formula.several else "Diet cost" if blend.diet else "Blend cost"
    _put(sheet, at, 1, f"{label} once all of them are moved").font = _BOLD
    sheet.merge_cells(start_row=at, start_column=1, end_row=at, end_column=2)
    moved = relaxation.formula
    if moved is not None and moved.cost is not None:
        _number(sheet.cell(at, 3), moved.cost, MONEY_FORMAT)
        sheet.cell(at, 3).font = _BOLD
        _put(sheet, at, 4, run_cost_unit(blend))
    else:
        _put(sheet, at, 3, "unknown: the workbook with these moves did not solve")


def _write_member(sheet: Worksheet, row: int, line: ConflictLine, number_format: str) -> None:
    """Kind, name, product, side, bound and cell of one conflict member (columns A-F)."""
    total = line.kind == "total"
    _put(sheet, row, 1, line.kind)
    _put(sheet, row, 2, "sum of inclusions" if total else line.name)
    _put(sheet, row, 3, line.product)
    _put(sheet, row, 4, "=" if line.side == "eq" else line.side)
    _number(sheet.cell(row, 5), line.bound, number_format)
    _put(sheet, row, 6, line.cell)


def _conflict_format(line: ConflictLine) -> str:
    """A member's bound and move in one format: inclusions to 0.001 %, stocks as amounts,
    specs by size."""
    if line.kind in ("ingredient", "use", "group", "total"):
        return INCLUSION_FORMAT
    if line.kind == "stock":
        return AMOUNT_FORMAT
    return _format_by_size([line.bound, line.relax_to], 1)


# --- Shadow prices sheet -------------------------------------------------------------------


def _write_shadow_prices(workbook: Workbook, formula: Formula) -> None:
    """One row per limit the user wrote: how much the cost moves per unit of its bound."""
    sheet = _new_sheet(workbook, SHADOW_PRICES)
    _put(sheet, 1, 1, _shadow_price_intro(formula))
    headers = [
        "Kind",
        "Product",
        "Name",
        "Basis",
        "Side",
        "Bound",
        "Level",
        "Binding",
        "Shadow price",
        "Shadow price unit",
        "Bound read from",
        "Shadow price holds for bounds from",
        "to",
    ]
    _header(sheet, 3, headers)
    nutrient_formats = {}
    for product in (formula.products if formula.several else ()):
        for line in product.nutrients:
            nutrient_formats[(product.name, line.kind, line.name, line.basis)] = _nutrient_format(line)
    for line in formula.nutrients:
        nutrient_formats[(None, line.kind, line.name, line.basis)] = _nutrient_format(line)
    for offset, limit in enumerate(formula.limits, start=1):
        row = 3 + offset
        if limit.kind in ("ingredient", "group"):
            number_format = INCLUSION_FORMAT
        elif limit.kind == "stock":
            number_format = AMOUNT_FORMAT
        else:
            number_format = nutrient_formats.get(
                (limit.product, limit.kind, limit.name, limit.basis)
            ) or _format_by_size([limit.bound, limit.level], 1)
        _put(sheet, row, 1, limit.kind)
        _put(sheet, row, 2, limit.product)
        _put(sheet, row, 3, limit.name)
        _put(sheet, row, 4, _basis(limit.kind, limit.basis))
        _put(sheet, row, 5, limit.side)
        _number(sheet.cell(row, 6), limit.bound, number_format)
        _number(sheet.cell(row, 7), limit.level, number_format)
        _put(sheet, row, 8, "yes" if limit.binding else "no")
        _number(sheet.cell(row, 9), limit.shadow_price, _format_by_size([limit.shadow_price], 2))
        _put(sheet, row, 10, shadow_price_unit(limit, formula.blend))
        _put(sheet, row, 11, limit.cell)
        # How far the bound may move with the same shadow price (blank: no end, or not
        # known, as for ratio and dry-matter bounds).
        if limit.holds_from is not None:
            _number(sheet.cell(row, 12), limit.holds_from, number_format)
        if limit.holds_to is not None:
            _number(sheet.cell(row, 13), limit.holds_to, number_format)
    if not formula.limits:
        if formula.solved:
            empty = "No limits to show: the workbook sets no specs or inclusion limits."
        else:
            empty = f"No shadow prices: the solve ended with status {formula.status!r}."
        _put(sheet, 4, 1, empty)
    widths = [12, 18, 28, 11, 8, 14, 14, 9, 14, 44, 16, 16, 14]
    for column, width in enumerate(widths, start=1):
        sheet.column_dimensions[get_column_letter(column)].width = width
    sheet.freeze_panes = "A4"


def _shadow_price_intro(formula: Formula) -> str:
    """The sheet's first line: whose cost a shadow price moves, in which unit."""
    blend = formula.blend
    settings = blend.settings
    total = settings.currency or "currency"
    if formula.several:
        whose = (f"a product's cost ({cost_unit(settings)}) for that product's own limits, or "
                 f"the run's total cost ({total}) for a stock,")
    elif blend.diet:
        whose = f"the diet's cost ({run_cost_unit(blend)})"
    else:
        whose = f"the blend cost ({cost_unit(settings)})"
        if formula.stocks:
            whose += f", or the batch's cost ({total}) for a stock,"
    return (f"Shadow price: change in {whose} when the bound is raised by 1 unit; 0 where "
            "the bound does not bind. It holds for small changes only.")


# --- Run info sheet ------------------------------------------------------------------------


def _write_run_info(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """Key/value facts that tie the output to its input and to this run."""
    sheet = _new_sheet(workbook, RUN_INFO)
    rows = [
        ("Blend", title),
        ("Tool version", f"blendkit {run.tool_version}"),
        ("Run at (UTC)", run.started_utc),
        ("Input file", run.input_name),
        ("Input SHA-256", run.input_sha256),
        ("Status", formula.status),
        ("Message", formula.message),
        ("Iterations", formula.iterations),
        ("Caution", CAUTION),
    ]
    _header(sheet, 1, ["Item", "Value"])
    for offset, (key, value) in enumerate(rows, start=2):
        _put(sheet, offset, 1, key).font = _BOLD
        cell = _put(sheet, offset, 2, value)
        if key == "Caution":
            cell.alignment = _WRAP_TOP
            cell.font = _BOLD
            sheet.row_dimensions[offset].height = 15 * math.ceil(len(CAUTION) / 70) + 4
    sheet.column_dimensions["A"].width = 16
    sheet.column_dimensions["B"].width = 80
    sheet.freeze_panes = "A2"


# --- small shared helpers ------------------------------------------------------------------


def _header(sheet: Worksheet, row: int, labels: list[str]) -> None:
    """Bold, wrapped header labels with a rule underneath."""
    for column, label in enumerate(labels, start=1):
        cell = _put(sheet, row, column, label)
        cell.font = _BOLD
        cell.border = _HEADER_BORDER
        # Numbers sit right-aligned below; centred labels stay over their own column.
        cell.alignment = Alignment(wrap_text=True, vertical="bottom", horizontal="left" if column == 1 else "center")
    longest = max(len(label) for label in labels[1:]) if len(labels) > 1 else 0
    lines = max(1, math.ceil(longest / _NUMBER_WIDTH))
    sheet.row_dimensions[row].height = 15 * min(lines + 1, 6) + 2


def _put(sheet: Worksheet, row: int, column: int, value: object):
    """Write a plain value; text starting with "=" stays text, never becomes a formula."""
    cell = sheet.cell(row, column, value)
    if isinstance(value, str) and cell.data_type == "f":
        cell.data_type = "s"
    return cell


def _number(cell, value: float | None, number_format: str) -> None:
    """Write a number (never a string); blank for None and for non-finite values."""
    if value is None or not math.isfinite(value):
        return
    cell.value = float(value) + 0.0  # a plain float: no numpy scalar, no -0.0
    cell.number_format = number_format


def _live(cell, formula_text: str, number_format: str) -> None:
    """Write a live spreadsheet formula for the reviewer, formatted like the value it checks."""
    cell.value = formula_text
    cell.number_format = number_format


def _nutrient_format(line: NutrientLine) -> str:
    """One format for a nutrient's min, max and level, wherever they appear."""
    return _format_by_size([line.minimum, line.maximum, line.level], 1)


def _format_by_size(values: list[float | None], least: int) -> str:
    """A format showing about four significant digits of the largest value, comma-grouped."""
    sizes = [abs(v) for v in values if v is not None and math.isfinite(v) and v != 0]
    if not sizes:
        decimals = least
    else:
        decimals = 3 - math.floor(math.log10(max(sizes)))
        decimals = min(6, max(least, decimals))
    return "#,##0." + "0" * decimals




def _whole_format(value: float) -> str:
    """No decimals for a whole amount (a 2000 kg batch), two otherwise."""
    return "#,##0" if float(value).is_integer() else AMOUNT_FORMAT


def _plain(value: float) -> str:
    """A number without a needless ".0" (1000, not 1000.0)."""
    return f"{value:g}"

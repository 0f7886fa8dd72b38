"""How every sheet of the output prints: one page wide on A4 or Letter, with the title on
top and, below, the page number, the run time and the start of the input's SHA-256, so a
reviewer's paper copy is tied to the run that made it.

`book` applies `set_print_layout` to every worksheet once the sheet writers have run: the
output sheets and the input sheets alike (an input sheet's cells are never changed, only
its print settings). `fit_column_widths` sizes a sheet's columns to what they hold, for a
sheet (such as Shadow prices) whose text would otherwise run into the next cell.
"""

from __future__ import annotations

from collections.abc import Collection

from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.formula import RunInfo

# A sheet whose columns are wider than this, in characters, prints landscape: about what
# a portrait A4 or Letter page holds at the default font and margins.
PORTRAIT_CHARACTERS = 100
# The width, in characters, of a column the sheet gives no width.
DEFAULT_COLUMN_WIDTH = 8.43
# How many characters of the input's SHA-256 the footer shows: enough to tell files apart.
SHA_CHARACTERS = 12
# A header or footer holds at most 255 characters in all: a longer title is cut to this.
TITLE_CHARACTERS = 100
# Rows above the frozen pane repeat on every printed page when there are at most this many.
MOST_REPEATED_ROWS = 5


def apply_to_workbook(workbook: Workbook, title: str, run: RunInfo,
                      one_page: Collection[str] = ()) -> None:
    """Give every worksheet of `workbook` the print layout of `set_print_layout`; the
    sheets titled in `one_page` print on one page."""
    for sheet in workbook.worksheets:
        set_print_layout(sheet, title, run, one_page=sheet.title in one_page)


def set_print_layout(sheet: Worksheet, title: str, run: RunInfo, one_page: bool = False) -> None:
    """Print `sheet` one page wide (as many pages down as it needs, or one page in all with
    `one_page`), portrait or landscape by its width, its header rows repeated on every
    page, with a header and a footer."""
    sheet.sheet_properties.pageSetUpPr.fitToPage = True
    sheet.page_setup.fitToWidth = 1
    sheet.page_setup.fitToHeight = 1 if one_page else 0
    wide = used_width(sheet) > PORTRAIT_CHARACTERS
    sheet.page_setup.orientation = "landscape" if wide else "portrait"
    rows = _frozen_rows(sheet)
    if rows and not sheet.print_title_rows:
        sheet.print_title_rows = f"1:{rows}"
    _header_and_footer(sheet, title, run)


def used_width(sheet: Worksheet) -> float:
    """The width, in characters, of the sheet's columns up to the last one used."""
    total = 0.0
    for column in range(1, sheet.max_column + 1):
        dimension = sheet.column_dimensions.get(get_column_letter(column))
        if dimension is not None and dimension.hidden:
            continue
        width = dimension.width if dimension is not None and dimension.width else None
        total += width or DEFAULT_COLUMN_WIDTH
    return total


def footer_text(run: RunInfo) -> tuple[str, str, str]:
    """The footer's left, centre and right text (page codes unexpanded): the page of all
    pages, the run time, the first characters of the input's SHA-256."""
    sha = (run.input_sha256 or "")[:SHA_CHARACTERS]
    return (
        "Page &P of &N",
        _escaped(f"Run {run.started_utc}") if run.started_utc else "",
        _escaped(f"Input SHA-256 {sha}") if sha else "",
    )


def fit_column_widths(sheet: Worksheet, first_row: int, least: float, most: float) -> None:
    """Size each column to its longest cell from `first_row` down (at least `least`, at
    most `most` characters), so no text runs into the next cell; a cell longer than `most`
    should wrap."""
    longest: dict[int, float] = {}
    places: dict[int, int] = {}  # a number format's decimals, by the format's id
    # The stored cells (iter_rows would first make every empty cell exist), in any order:
    # only each column's longest counts.
    for (row, column), cell in sheet._cells.items():
        value = cell._value
        if value is None or row < first_row:
            continue
        kind = type(value)
        if kind is str:
            size = len(value)
        elif kind is bool or not isinstance(value, (int, float)):
            size = len(str(value))
        else:
            key = cell._style.numFmtId if cell._style else 0
            if key not in places:
                places[key] = _places(cell.number_format)
            size = len(f"{value:,.{places[key]}f}")
        if size > longest.get(column, -1):
            longest[column] = size
    for column in sorted(longest):
        # Bold headers and a spreadsheet's own padding need a little more than the text.
        width = min(max(longest[column] * 1.1 + 2, least), most)
        sheet.column_dimensions[get_column_letter(column)].width = width


def _places(number_format: str) -> int:
    """The decimals a number format shows (the digits after its point)."""
    return len(number_format.split(".", 1)[1]) if "." in number_format else 0


def _frozen_rows(sheet: Worksheet) -> int:
    """How many rows sit above the frozen pane (0 when none, or too many to repeat)."""
    pane = sheet.freeze_panes
    if not pane:
        return 0
    digits = "".join(ch for ch in pane if ch.isdigit())
    rows = int(digits) - 1 if digits else 0
    return rows if 0 < rows <= MOST_REPEATED_ROWS else 0


def _header_and_footer(sheet: Worksheet, title: str, run: RunInfo) -> None:
    """The title and the sheet's name on top; page, run time and input SHA-256 below."""
    for header, footer in ((sheet.oddHeader, sheet.oddFooter), (sheet.evenHeader, sheet.evenFooter)):
        header.left.text = _escaped(_shortened(title))
        header.right.text = "&A"  # the sheet's name
        left, centre, right = footer_text(run)
        footer.left.text = left
        footer.center.text = centre
        footer.right.text = right


def _shortened(title: str) -> str:
    """The title, cut with "..." when too long for a page header."""
    if len(title) <= TITLE_CHARACTERS:
        return title
    return title[: TITLE_CHARACTERS - 3].rstrip() + "..."


def _escaped(text: str) -> str:
    """Text as a header or footer shows it: "&" starts a code there, so it is doubled."""
    return text.replace("&", "&&")

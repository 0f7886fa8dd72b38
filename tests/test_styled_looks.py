"""`cells.styled`: a look copied from the workbook's first cell of that look is the style
openpyxl's own setters give a cell (the reference here: openpyxl's Font, Border,
Alignment and number-format setters, applied directly to a twin cell), whatever style the
cell had before; and each cell gets its own copy, so restyling one leaves the others."""

from __future__ import annotations

from openpyxl import Workbook
from openpyxl.styles import Font

from blendkit.write.workbook.cells import BOLD, BOX, HEADER_ALIGNMENT, HEADER_BORDER, styled


def _header_look(cell) -> None:
    cell.font = BOLD
    cell.border = HEADER_BORDER
    cell.alignment = HEADER_ALIGNMENT[False]


def _parts(cell) -> tuple:
    """Everything a cell's style says, as openpyxl reads it back (each part's repr lists
    all its settings), and the style indices the cell is saved with."""
    parts = (cell.font, cell.border, cell.alignment, cell.fill, cell.protection)
    return (*(repr(part) for part in parts), cell.number_format, tuple(cell._style))


def _before(cell, kind: str) -> None:
    """Give a cell a style before the look: none, a number format, a font, a box."""
    if kind == "format":
        cell.number_format = "0.000"
    elif kind == "font":
        cell.font = Font(italic=True, color="FF0000")
    elif kind == "box":
        cell.border = BOX


def test_a_copied_look_is_the_style_openpyxls_setters_give():
    book = Workbook()
    sheet = book.active
    for row, kind in enumerate(("none", "format", "font", "box", "none", "format", "font", "box"), start=1):
        ours, twin = sheet.cell(row, 1, "label"), sheet.cell(row, 2, "label")
        _before(ours, kind)
        _before(twin, kind)
        styled(ours, "header", _header_look)  # rows 5-8: a copy of rows 1-4's finished style
        _header_look(twin)  # openpyxl's setters, directly
        assert _parts(ours) == _parts(twin), (row, kind)
    # What the look does not set stays as it was (a number format); what it sets replaces
    # the cell's own (its font, its box), as openpyxl's setters do.
    assert sheet.cell(6, 1).number_format == "0.000"
    assert sheet.cell(7, 1).font.b and not sheet.cell(7, 1).font.i
    assert not (sheet.cell(8, 1).border.left and sheet.cell(8, 1).border.left.style)
    assert sheet.cell(8, 1).border.bottom.style == "thin"


def test_each_cell_gets_its_own_copy_of_a_look():
    book = Workbook()
    sheet = book.active
    cells = [sheet.cell(row, 1, "label") for row in range(1, 4)]
    for cell in cells:
        styled(cell, "header", _header_look)
    cells[1].font = Font(size=20)  # restyle one of the copies
    later = sheet.cell(4, 1, "label")
    styled(later, "header", _header_look)  # and the look is still the look
    for cell in (cells[0], cells[2], later):
        assert cell.font.b and cell.font.sz != 20
    assert cells[1].font.sz == 20


def test_looks_are_kept_per_workbook():
    # A style index means something only in its own workbook: the second workbook's cell
    # is styled through openpyxl again, not given the first workbook's indices.
    one, two = Workbook(), Workbook()
    two.active.cell(1, 1).font = Font(name="Arial", size=9)  # other fonts listed first
    cells = [book.active.cell(3, 3, "label") for book in (one, two)]
    for cell in cells:
        styled(cell, "header", _header_look)
    for cell in cells:
        assert cell.font.b and cell.border.bottom.style == "thin"
        assert cell.alignment.horizontal == "center" and cell.alignment.wrap_text

"""`in_memory.workbook_bytes` against openpyxl's own `Workbook.save` (the reference): every
part of the package holds the same bytes, in the same order, for an output workbook of
each sample (its sheets, styles, merged cells, conditional formats, hidden sheet) with a
chart added (drawing parts), and the output of a solve opens with the same cells."""

from __future__ import annotations

import datetime
import io
import re
import zipfile
from decimal import Decimal
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from hypothesis import given
from hypothesis import strategies as st
from openpyxl.cell.rich_text import CellRichText, TextBlock
from openpyxl.cell.text import InlineFont
from openpyxl.chart import BarChart, Reference
from openpyxl.comments import Comment
from openpyxl.styles import Border, Font, PatternFill, Side
from openpyxl.worksheet.formula import ArrayFormula, DataTableFormula

from blendkit.pipeline import solve_workbook
from blendkit.write.workbook import sheet_rows
from blendkit.write.workbook.in_memory import workbook_bytes

SAMPLES = Path(__file__).resolve().parents[1] / "sample_workbooks"
# The package's modification time, set by each save to the second.
_TIMED_PART = "docProps/core.xml"


def _parts(content: bytes) -> list[tuple[str, bytes]]:
    with zipfile.ZipFile(io.BytesIO(content)) as archive:
        return [(name, archive.read(name)) for name in archive.namelist() if name != _TIMED_PART]


@pytest.mark.parametrize("sample", sorted(path.stem for path in SAMPLES.glob("*.xlsx")))
def test_the_parts_are_those_of_openpyxls_own_save(sample, tmp_path, text_rows):
    output = solve_workbook(SAMPLES / f"{sample}.xlsx", tmp_path / "out.xlsx").output
    # Two loads of the output, each saved once: a save changes a sheet's settings a
    # little (openpyxl fills in outlineLevelCol), so a second save of one workbook differs.
    reference, ours = io.BytesIO(), None
    text_rows["rows"] = 0  # the rows of the save below, not those of the solve
    for save in ("openpyxl", "ours"):
        book = openpyxl.load_workbook(output)
        chart = BarChart()
        chart.add_data(Reference(book["Result"], min_col=2, min_row=1, max_row=10))
        book["Result"].add_chart(chart, "L2")
        if save == "openpyxl":
            book.save(reference)
        else:
            ours = workbook_bytes(book)
    assert [name for name, _ in _parts(ours)] == [name for name, _ in _parts(reference.getvalue())]
    assert _parts(ours) == _parts(reference.getvalue())
    assert len(_parts(ours)) > 20  # sheets, their relationships, the drawing and the chart
    assert text_rows["rows"] == _rows_in(ours) > 0  # written by sheet_rows, not a fallback


# --- The cell table written as text (sheet_rows) against openpyxl's own Workbook.save ---
# The reference for every check below is openpyxl 3.1's `Workbook.save`: each part of the
# package must hold the bytes it writes. `_text_rows` counts the rows the text path wrote,
# so a test fails should workbook_bytes have quietly fallen back to Workbook.save.

@pytest.fixture
def text_rows(monkeypatch):
    """The rows written by sheet_rows' text path and the cells it left to openpyxl."""
    seen = {"rows": 0, "openpyxl": []}
    write, openpyxl_cell = sheet_rows._RowText.write, sheet_rows._RowText._openpyxl_cell

    def counted_write(self, row, row_idx):
        seen["rows"] += 1
        write(self, row, row_idx)

    def counted_cell(self, cell):
        seen["openpyxl"].append(f"{cell.parent.title}!{cell.coordinate}")
        openpyxl_cell(self, cell)

    monkeypatch.setattr(sheet_rows._RowText, "write", counted_write)
    monkeypatch.setattr(sheet_rows._RowText, "_openpyxl_cell", counted_cell)
    return seen


def _rows_in(content: bytes) -> int:
    return sum(part.count(b"<row ") for name, part in _parts(content) if name.startswith("xl/worksheets/sheet"))


def _same_as_openpyxls_save(make) -> bytes:
    """Two workbooks from `make`, one saved by openpyxl, one by workbook_bytes (a save
    changes a workbook a little, so each is saved once); every part compared."""
    reference = io.BytesIO()
    make().save(reference)
    ours = workbook_bytes(make())
    assert [name for name, _ in _parts(ours)] == [name for name, _ in _parts(reference.getvalue())]
    for (name, mine), (_, theirs) in zip(_parts(ours), _parts(reference.getvalue())):
        assert mine == theirs, name
    return ours


# Every kind of cell value openpyxl 3.1 takes, in one column each.
_NUMBERS = [0, 1, -7, 2**53 + 1, 10**20, 12345678901234567890, 0.1, 1 / 3, 1e-300, 5e-324, 1e20,
            1.7976931348623157e308, -0.0, -2.5, float("nan"), float("inf"), float("-inf"),
            Decimal("1.10"), np.float64(0.1), np.int64(7)]
_TEXTS = ["plain", "a & b < c > d", 'say "yes"', "it's", " leading", "trailing ", " both ", "   ",
          "", "tab\there", "line\nbreak", "carriage\rreturn", "\ttab first", "é 中文 😀", "lone \ud800",
          "&amp; already", "]]>", "=", "#N/A but longer"]
_FORMULAS = ["=SUM(A1:A3)", '=IF(A1<2,"a&b",">")', "=A1&\" \"&B1", "=TODAY()", "='My sheet'!A1"]
_OTHERS = [True, False, "#N/A", "#DIV/0!", "#REF!", "#VALUE!", datetime.date(2024, 6, 11),
           datetime.datetime(2024, 6, 11, 13, 45, 30, 250000), datetime.time(7, 30), datetime.timedelta(hours=3)]


def _every_cell_kind() -> openpyxl.Workbook:
    book = openpyxl.Workbook()
    sheet = book.active
    for column, values in enumerate((_NUMBERS, _TEXTS, _FORMULAS, _OTHERS), start=1):
        for row, value in enumerate(values, start=2):
            sheet.cell(row, column, value)
    sheet["E2"] = CellRichText("plain ", TextBlock(InlineFont(b=True), "bold & <b>"), " end")
    sheet["E3"] = ArrayFormula("E3:E4", "=SUM(A2:A4*A2:A4)")
    sheet["E5"] = DataTableFormula(ref="E5:E6", dt2D=False, r1="A2")
    sheet["E7"] = "with a comment"
    sheet["E7"].comment = Comment("a note & more", "blendkit")
    sheet["E8"] = "a link"
    sheet["E8"].hyperlink = "https://example.com/?a=1&b=2"
    sheet["E9"].hyperlink = "#Sheet!A1"  # a link on an empty cell
    sheet["E10"].comment = Comment("on an empty cell", "blendkit")
    _styles_and_rows(book, sheet)
    return book


def _styles_and_rows(book: openpyxl.Workbook, sheet) -> None:
    """Styled cells with and without values (looks met in an order of their own), merged
    cells, far columns, row heights, hidden rows, outline levels, a styled row."""
    for row in range(2, 30, 3):
        sheet.cell(row, 6).font = Font(bold=row % 2 == 0, size=9 + row % 5)
        sheet.cell(row, 7).number_format = "0.00" if row % 4 else "0.000%"
        sheet.cell(row, 8, row * 1.5).fill = PatternFill("solid", fgColor="FFEE00")
    sheet.cell(3, 1).font = Font(italic=True)
    sheet["Z40"]  # an empty, unstyled cell: left out
    sheet["AA41"] = 3
    sheet["XFD42"] = "last column"
    sheet.merge_cells("B45:D46")
    sheet["B45"] = "merged"
    sheet["C45"].border = Border(top=Side(style="thin"))
    sheet.row_dimensions[3].height = 30
    sheet.row_dimensions[4].hidden = True
    sheet.row_dimensions[5].outlineLevel = 1
    sheet.row_dimensions[6].outlineLevel = 2
    sheet.row_dimensions[6].hidden = True
    sheet.row_dimensions[60].height = 12.75  # a row with a height and no cells
    sheet.row_dimensions[61].font = Font(bold=True)  # a styled row
    other = book.create_sheet("Second & <sheet>")
    other.append(["name", "value", "share"])
    for index in range(1, 200):
        other.append([f"item {index}", index * 0.37, f"=B{index + 1}/SUM(B:B)"])


def test_every_cell_kind_has_the_bytes_of_openpyxls_save(text_rows):
    content = _same_as_openpyxls_save(_every_cell_kind)
    assert text_rows["rows"] == _rows_in(content) > 200
    # What only openpyxl's own cell writer writes (see sheet_rows' docstring): non-finite
    # numbers, other number types (Decimal, numpy's), dates and times, rich text, array and
    # data-table formulas, comments and hyperlinks; every other cell went the text path.
    expected = {*(f"Sheet!A{row}" for row in range(16, 22)), *(f"Sheet!D{row}" for row in range(8, 12)),
                *(f"Sheet!E{row}" for row in (2, 3, 5, 7, 8, 9, 10))}
    assert set(text_rows["openpyxl"]) == expected



# Text holding every character ElementTree escapes, in awkward company: entities already
# written out, the same character twice, escapes next to each other, line ends both ways.
_AWKWARD = ["", "plain", "&", "&&", "&lt;", "&amp;lt;", "<>", "><", "a<b>c&d", '"', '""', "'\"'", "\r\n", "\n\r",
            "\t\t", "&#10;\n", "&#13;\r", "&#09;\t", "&quot;\"", '&<>"\r\n\t', '\t\n\r"><&', "]]>", "<![CDATA[x]]>",
            " & ", "é & 中文 < 😀 >", "&gt;>", "x" * 600 + "&<>" + '"\r\n\t']


@pytest.mark.parametrize("text", _AWKWARD)
def test_text_and_attributes_are_escaped_as_elementtree_escapes_them(text):
    from xml.etree.ElementTree import _escape_attrib, _escape_cdata

    # Reference: ElementTree's own escaping, which openpyxl's cell writer goes through.
    assert sheet_rows._escape(text) == _escape_cdata(text)
    assert sheet_rows._attribute(text) == _escape_attrib(text)


@given(st.text(alphabet='&<>"\r\n\t;#ltgampquo10 x', max_size=40))
def test_any_mix_of_special_characters_is_escaped_as_elementtree_escapes_it(text):
    from xml.etree.ElementTree import _escape_attrib, _escape_cdata

    # Reference: ElementTree's own escaping, on random mixes of the characters it escapes
    # and the letters of the entities it writes.
    assert sheet_rows._escape(text) == _escape_cdata(text)
    assert sheet_rows._attribute(text) == _escape_attrib(text)

def test_a_reloaded_workbook_has_the_bytes_of_openpyxls_save(text_rows):
    # Read back, openpyxl's own empty text is a cell of type "inlineStr" with no value.
    saved, book = io.BytesIO(), _every_cell_kind()
    assert book.active["B16"].value == "lone \ud800"
    # openpyxl writes a lone surrogate as a character reference it cannot read back.
    book.active["B16"] = "no lone surrogate"
    book.save(saved)

    def reloaded():
        book = openpyxl.load_workbook(io.BytesIO(saved.getvalue()))
        book.active["B10"].font = Font(bold=True)  # the empty text, styled: written
        return book

    content = _same_as_openpyxls_save(reloaded)
    assert text_rows["rows"] == _rows_in(content)
    assert re.search(rb'<c r="B10" s="\d+" t="inlineStr" />', dict(_parts(content))["xl/worksheets/sheet1.xml"])


def test_plant_output_has_the_bytes_of_openpyxls_save(tmp_path, text_rows):
    from blendkit.bench.plant import plant_workbook

    book = plant_workbook(tmp_path / "plant.xlsx", 4, 15, 8, 20240611)
    output = solve_workbook(book, tmp_path / "out.xlsx").output
    text_rows["rows"], text_rows["openpyxl"] = 0, []  # the save below, not the solve's
    content = _same_as_openpyxls_save(lambda: openpyxl.load_workbook(output))
    assert text_rows["rows"] == _rows_in(content) > 100
    # Only the Overview's links to each product go to openpyxl's writer.
    assert all(cell.startswith("Overview!") for cell in text_rows["openpyxl"])


def test_with_another_cell_writer_openpyxls_rows_are_written(monkeypatch, text_rows):
    # lxml's cell writer (or any but ElementTree's) writes other bytes: then openpyxl's own
    # write_rows writes the cells, and the bytes are still those of its save.
    from openpyxl.cell import _writer as cell_writer
    from openpyxl.worksheet import _writer as worksheet_writer

    def wrapped(*args, **kwargs):
        return cell_writer.etree_write_cell(*args, **kwargs)

    monkeypatch.setattr(worksheet_writer, "write_cell", wrapped)
    _same_as_openpyxls_save(_every_cell_kind)
    assert text_rows["rows"] == 0


def test_without_et_xmlfiles_text_writer_openpyxls_rows_are_written(monkeypatch, text_rows):
    # Should a later et_xmlfile keep its text writer elsewhere, openpyxl's own rows are
    # written into the same element stream: the bytes are still those of its save.
    monkeypatch.setattr(sheet_rows, "_text_writer", lambda xf: None)
    _same_as_openpyxls_save(_every_cell_kind)
    assert text_rows["rows"] == 0

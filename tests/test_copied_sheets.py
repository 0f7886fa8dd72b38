"""Input sheets copied into the output byte for byte (`blendkit.write.workbook.copied_sheets`).

The copy is used for big sheets only; here every sheet is copied (the threshold set to 0),
and the output is compared with the one openpyxl writes cell by cell, as openpyxl itself
loads both (outside reference: openpyxl's reader), and with the input's own bytes.
"""

from __future__ import annotations

import dataclasses
import os
import re
import shutil
import subprocess
import zipfile
from pathlib import Path
from xml.etree import ElementTree

import pytest
from openpyxl import load_workbook

import blendkit.write.workbook.copied_sheets as copied_sheets
from blendkit.pipeline import solve_workbook
from blendkit.read.workbook import read_workbook

SAMPLES = Path(__file__).resolve().parent.parent / "sample_workbooks"
PROGRAM = shutil.which("soffice") or shutil.which("libreoffice")
MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
RELS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
# Cells that name the run (its time, the output's name) and so differ between two runs.
RUN_CELLS = ("Run info", "Result data", "Result", "Changes")


def sheet_parts(path: Path) -> dict[str, str]:
    """Each sheet title with its worksheet part, from the package's workbook part."""
    with zipfile.ZipFile(path) as archive:
        rels = ElementTree.fromstring(archive.read("xl/_rels/workbook.xml.rels"))
        book = ElementTree.fromstring(archive.read("xl/workbook.xml"))
    targets = {rel.get("Id"): rel.get("Target").lstrip("/") for rel in rels}
    targets = {key: value if value.startswith("xl/") else f"xl/{value}" for key, value in targets.items()}
    return {sheet.get("name"): targets[sheet.get(f"{{{RELS}}}id")] for sheet in book.iter(f"{{{MAIN}}}sheet")}


def cell_table(path: Path, title: str) -> bytes:
    """The sheetData element of sheet `title`, as stored."""
    with zipfile.ZipFile(path) as archive:
        xml = archive.read(sheet_parts(path)[title])
    return re.search(rb"<sheetData\b.*?(?:/>|</sheetData>)", xml, re.S).group(0)


def excel_style(source: Path, target: Path) -> Path:
    """`source` (saved by openpyxl, its text inline) as Excel stores a workbook: the text of
    the Ingredients sheet in a shared strings part, each row with x14ac:dyDescent, the
    worksheet declaring the mc and x14ac namespaces with mc:Ignorable="x14ac"."""
    part = sheet_parts(source)["Ingredients"]
    with zipfile.ZipFile(source) as archive:
        members = {info: archive.read(info) for info in archive.infolist()}
    strings: list[bytes] = []

    def shared(match: re.Match) -> bytes:
        strings.append(match.group(2))
        return match.group(1) + b' t="s"><v>' + str(len(strings) - 1).encode() + b"</v></c>"

    with zipfile.ZipFile(target, "w", zipfile.ZIP_DEFLATED) as archive:
        for info, data in members.items():
            if info.filename == part:
                data = re.sub(rb'(<c [^>]*?) t="inlineStr"><is><t[^>]*>(.*?)</t></is></c>', shared, data)
                data = data.replace(b"<row ", b'<row x14ac:dyDescent="0.25" ')
                data = data.replace(f'<worksheet xmlns="{MAIN}">'.encode(), (
                    f'<worksheet xmlns="{MAIN}" xmlns:mc="http://schemas.openxmlformats.org/markup-compatibility/2006" '
                    'xmlns:x14ac="http://schemas.microsoft.com/office/spreadsheetml/2009/9/ac" '
                    'mc:Ignorable="x14ac">').encode())
            elif info.filename == "xl/_rels/workbook.xml.rels":
                data = data.replace(b"</Relationships>", (
                    f'<Relationship Id="rIdStrings" Type="{RELS}/sharedStrings" Target="sharedStrings.xml"/>'
                    "</Relationships>").encode())
            elif info.filename == "[Content_Types].xml":
                data = data.replace(b"</Types>", (
                    '<Override PartName="/xl/sharedStrings.xml" ContentType="application/'
                    'vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/></Types>').encode())
            archive.writestr(info, data)
        items = b"".join(b"<si><t>" + text + b"</t></si>" for text in strings)
        archive.writestr("xl/sharedStrings.xml", f'<sst xmlns="{MAIN}" count="{len(strings)}" '
                         f'uniqueCount="{len(strings)}">'.encode() + items + b"</sst>")
    assert strings, "the Ingredients sheet has text"
    return target


def solved(book: Path, output: Path, least: int, monkeypatch) -> Path:
    """`book` solved into `output`, input sheets of `least` cells or more copied."""
    monkeypatch.setattr(copied_sheets, "LEAST_COPIED_CELLS", least)
    return solve_workbook(book, output, check=False).output


def assert_same_cells(copied: Path, written: Path) -> None:
    """Every cell of every sheet the same in both outputs, as openpyxl loads them: value,
    number format and style, with the formulas and with the saved results."""
    for data_only in (False, True):
        one, other = load_workbook(copied, data_only=data_only), load_workbook(written, data_only=data_only)
        assert one.sheetnames == other.sheetnames
        for title in one.sheetnames:
            if title.startswith(RUN_CELLS):
                continue
            a, b = one[title], other[title]
            assert set(a._cells) == set(b._cells), title
            for place, cell in a._cells.items():
                twin = b._cells[place]
                assert (cell.value, cell.number_format) == (twin.value, twin.number_format), (title, place)
                for style in ("font", "fill", "border", "alignment", "protection"):
                    assert repr(getattr(cell, style)) == repr(getattr(twin, style)), (title, place, style)
            assert a.print_title_rows == b.print_title_rows and a.freeze_panes == b.freeze_panes
            assert a.page_setup.orientation == b.page_setup.orientation
            assert (a.oddFooter.left.text, a.oddFooter.right.text, a.oddHeader.center.text) == (
                b.oddFooter.left.text, b.oddFooter.right.text, b.oddHeader.center.text)
            assert a.dimensions == b.dimensions, title


@pytest.mark.parametrize("name", ["broiler_starter", "pig_feed_plant"])
@pytest.mark.parametrize("excel", [False, True], ids=["openpyxl-made", "excel-style"])
def test_copied_sheets_read_as_the_sheets_openpyxl_writes(name, excel, tmp_path, monkeypatch):
    book = SAMPLES / f"{name}.xlsx"
    if excel:
        book = excel_style(book, tmp_path / f"{name}.xlsx")
    copied = solved(book, tmp_path / "copied.xlsx", 0, monkeypatch)
    written = solved(book, tmp_path / "written.xlsx", 10**12, monkeypatch)
    assert_same_cells(copied, written)
    for title in load_workbook(book).sheetnames:  # byte for byte, and openpyxl's are not
        assert cell_table(copied, title) == cell_table(book, title), title
    if excel:
        assert cell_table(written, "Ingredients") != cell_table(book, "Ingredients")
    again = read_workbook(copied)  # solved again, the same blend
    assert dataclasses.replace(again, source=None) == dataclasses.replace(read_workbook(written), source=None)


def test_a_sheet_with_a_comment_is_written_cell_by_cell_and_a_merged_range_copied(tmp_path, monkeypatch):
    from openpyxl.comments import Comment

    book = tmp_path / "book.xlsx"
    workbook = load_workbook(SAMPLES / "broiler_starter.xlsx")
    workbook["Specs"]["A2"].comment = Comment("checked", "a reviewer")
    workbook["Ingredients"].merge_cells("T2:U2")  # a merged range, copied with its sheet
    workbook.save(book)
    copied = solved(book, tmp_path / "copied.xlsx", 0, monkeypatch)
    # openpyxl writes a comment from its cell: held back, the cell would lose it.
    assert load_workbook(copied)["Specs"]["A2"].comment.text == "checked"
    assert cell_table(copied, "Ingredients") == cell_table(book, "Ingredients")
    assert [str(merged) for merged in load_workbook(copied)["Ingredients"].merged_cells.ranges] == ["T2:U2"]


def test_small_sheets_are_written_cell_by_cell_by_default(tmp_path):
    # The copy is for big sheets; a sample's sheets keep the path every program has opened.
    book = excel_style(SAMPLES / "broiler_starter.xlsx", tmp_path / "book.xlsx")
    output = solve_workbook(book, tmp_path / "out.xlsx", check=False).output
    assert cell_table(output, "Ingredients") != cell_table(book, "Ingredients")
    with zipfile.ZipFile(output) as archive:
        assert "xl/sharedStrings.xml" not in archive.namelist()


# Under CI the LibreOffice check must run: a missing program is a failure there (as in
# test_result_sheet).
@pytest.mark.skipif(PROGRAM is None and os.environ.get("CI") != "true", reason="LibreOffice is not installed")
def test_spreadsheet_program_opens_and_recalculates_copied_sheets(tmp_path, monkeypatch):
    # Outside reference: LibreOffice's formula engine recalculates the live levels of an
    # output whose input sheets (Excel-style, shared strings) were copied.
    assert PROGRAM, "LibreOffice is needed here (CI=true)"
    book = excel_style(SAMPLES / "broiler_starter.xlsx", tmp_path / "book.xlsx")
    outcome_path = solved(book, tmp_path / "out.xlsx", 0, monkeypatch)
    formula = solve_workbook(book, tmp_path / "again.xlsx", check=False).formula
    subprocess.run([PROGRAM, "--headless", f"-env:UserInstallation=file://{tmp_path / 'profile'}",
                    "--convert-to", "xlsx", "--outdir", str(tmp_path / "converted"), str(outcome_path)],
                   check=True, capture_output=True, timeout=300)
    converted = load_workbook(tmp_path / "converted" / "out.xlsx", data_only=True)
    assert [row[0] for row in converted["Ingredients"].iter_rows(values_only=True)][1] is not None
    result = converted["Result"]
    cost_row = next(row for row in range(1, result.max_row + 1)
                    if result.cell(row, 1).value == "Blend cost from input prices")
    assert result.cell(cost_row, 2).value == pytest.approx(formula.cost, rel=1e-9)

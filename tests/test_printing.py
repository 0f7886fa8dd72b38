"""How the output workbook prints: every sheet one page wide, with a header and a footer
that tie the paper copy to its run, and a Shadow prices sheet whose text stays in its cells.
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from openpyxl import Workbook, load_workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.formula import RunInfo
from blendkit.pipeline import solve_workbook
from blendkit.write.workbook.printing import (
    PORTRAIT_CHARACTERS,
    TITLE_CHARACTERS,
    fit_column_widths,
    footer_text,
    set_print_layout,
    used_width,
)

SAMPLES = Path(__file__).resolve().parent.parent / "sample_workbooks"
INPUT_SHEETS = ("Ingredients", "Specs", "Settings", "Notes")


def run_info(**changes) -> RunInfo:
    """A run record with a known time and SHA-256."""
    fields = dict(tool_version="0", started_utc="2026-12-02T04:00:00Z", input_name="in.xlsx",
                  input_sha256="0123456789abcdef" * 4)
    fields.update(changes)
    return RunInfo(**fields)


@pytest.fixture(scope="module")
def broiler_output(tmp_path_factory) -> tuple[Path, Path]:
    """The broiler sample solved once: (its input copy, its output workbook)."""
    folder = tmp_path_factory.mktemp("broiler")
    source = folder / "broiler.xlsx"
    shutil.copyfile(SAMPLES / "broiler_starter.xlsx", source)
    output = folder / "broiler.result.xlsx"
    solve_workbook(source, output, check=False)
    return source, output


def test_every_sheet_prints_one_page_wide_with_header_and_footer(broiler_output):
    source, output = broiler_output
    workbook = load_workbook(output)
    run = load_workbook(output)["Run info"]
    facts = {row[0]: row[1] for row in run.iter_rows(min_row=2, values_only=True)}
    for sheet in workbook.worksheets:
        assert sheet.sheet_properties.pageSetUpPr.fitToPage, sheet.title
        # A Batch sheet is one page in all; every other sheet as many pages down as it needs.
        tall = 1 if sheet.title.startswith("Batch sheet") else 0
        assert (sheet.page_setup.fitToWidth, sheet.page_setup.fitToHeight) == (1, tall), sheet.title
        assert sheet.oddHeader.left.text == facts["Title"]
        assert sheet.oddHeader.right.text == "&A"
        assert sheet.oddFooter.left.text == "Page &P of &N"
        assert sheet.oddFooter.center.text == f"Run {facts['Run at (UTC)']}"
        assert sheet.oddFooter.right.text == f"Input SHA-256 {facts['Input SHA-256'][:12]}"


def test_input_sheets_keep_their_cells(broiler_output):
    source, output = broiler_output
    before, after = load_workbook(source), load_workbook(output)
    for title in INPUT_SHEETS:
        assert [[c.value for c in row] for row in after[title].iter_rows()] == [
            [c.value for c in row] for row in before[title].iter_rows()]


def test_orientation_follows_the_sheet_width():
    workbook = Workbook()
    narrow = workbook.active
    narrow.append(["Ingredient", "Cost"])
    wide = workbook.create_sheet("Wide")
    wide.append(list(range(int(PORTRAIT_CHARACTERS / 8.43) + 2)))
    for sheet in (narrow, wide):
        set_print_layout(sheet, "Title", run_info())
    assert used_width(narrow) < PORTRAIT_CHARACTERS < used_width(wide)
    assert narrow.page_setup.orientation == "portrait"
    assert wide.page_setup.orientation == "landscape"


def test_header_rows_above_the_frozen_pane_repeat():
    workbook = Workbook()
    sheet = workbook.active
    sheet.freeze_panes = "A4"
    set_print_layout(sheet, "Title", run_info())
    assert sheet.print_title_rows == "$1:$3"


def test_an_ampersand_in_the_title_prints_as_itself():
    workbook = Workbook()
    sheet = workbook.active
    set_print_layout(sheet, "Corn & soy", run_info())
    assert sheet.oddHeader.left.text == "Corn && soy"


def test_a_long_title_is_cut_to_fit_the_header():
    # Outside reference: Excel's specifications and limits, 255 characters in a page header
    # or footer.
    workbook = Workbook()
    sheet = workbook.active
    set_print_layout(sheet, "x" * 300, run_info())
    assert len(sheet.oddHeader.left.text) == TITLE_CHARACTERS
    assert sheet.oddHeader.left.text.endswith("...")


def test_footer_without_a_sha_leaves_its_place_empty():
    assert footer_text(run_info(input_sha256="")) == (
        "Page &P of &N", "Run 2026-12-02T04:00:00Z", "")


def test_fit_column_widths_holds_the_longest_cell():
    workbook = Workbook()
    sheet: Worksheet = workbook.active
    sheet.append(["a long heading that is left alone"])
    sheet.append(["short", 1234567.5])
    sheet.append(["a much longer name", 1.0])
    sheet["B2"].number_format = "#,##0.00"
    fit_column_widths(sheet, 2, least=4, most=40)
    assert sheet.column_dimensions["A"].width >= len("a much longer name")
    assert sheet.column_dimensions["B"].width >= len("1,234,567.50")


def test_shadow_prices_text_stays_in_its_cells(broiler_output):
    _, output = broiler_output
    sheet = load_workbook(output)["Shadow prices"]
    assert sheet.print_title_rows == "$1:$3"
    assert sheet.page_setup.orientation == "landscape"
    for row in sheet.iter_rows(min_row=4):
        for cell in row:
            if cell.value is None or cell.alignment.wrap_text:
                continue
            width = sheet.column_dimensions[cell.column_letter].width
            shown = f"{cell.value:,.4f}" if isinstance(cell.value, float) else str(cell.value)
            assert len(shown) <= width, (cell.coordinate, cell.value, width)


# --- Rendered by a spreadsheet program ----------------------------------------------------


def office_program() -> str:
    """LibreOffice, which must be there on CI; elsewhere the test skips without it."""
    program = shutil.which("soffice") or shutil.which("libreoffice")
    if program is None:
        if os.environ.get("CI") == "true":
            pytest.fail("LibreOffice is needed on CI to render the output to PDF")
        pytest.skip("LibreOffice is not installed")
    return program


def render_pdf(workbook: Path, folder: Path) -> Path:
    """`workbook` printed to PDF by LibreOffice, run headless with its own profile."""
    subprocess.run(
        [office_program(), "--headless", f"-env:UserInstallation=file://{folder / 'profile'}",
         "--convert-to", "pdf", "--outdir", str(folder), str(workbook)],
        check=True, capture_output=True, timeout=180,
    )
    return folder / f"{workbook.stem}.pdf"


def pages_per_sheet(pdf: Path, titles: list[str]) -> dict[str, int] | None:
    """How many pages each sheet printed on, read from each page's header (the sheet's
    name, top right); None when pdftotext (poppler-utils) is not installed."""
    reader = shutil.which("pdftotext")
    if reader is None:
        return None
    text = subprocess.run([reader, "-layout", str(pdf), "-"], check=True, capture_output=True,
                          text=True, timeout=60).stdout
    counts = dict.fromkeys(titles, 0)
    longest_first = sorted(titles, key=len, reverse=True)
    for page in text.split("\f"):
        lines = [line.rstrip() for line in page.splitlines() if line.strip()]
        # The header is the first line that ends with a sheet's name (a chart's labels may
        # come before it in the extracted text).
        name = next((t for line in lines for t in longest_first if line.endswith(t)), None)
        if name is not None:
            counts[name] += 1
    return counts


def page_count(pdf: Path) -> int:
    """The PDF's number of pages: its page objects (LibreOffice writes them uncompressed)."""
    return len(re.findall(rb"/Type\s*/Page\b(?!s)", pdf.read_bytes()))


@pytest.mark.parametrize("paper", ["A4", "Letter"])
def test_each_sheet_prints_one_page_wide(broiler_output, tmp_path: Path, paper: str):
    # Outside reference: LibreOffice's own print layout, run headless to PDF. Before, the
    # broiler sample's output printed its input sheets as pages of vertical strips.
    _, output = broiler_output
    workbook = load_workbook(output)
    for sheet in workbook.worksheets:
        sheet.page_setup.paperSize = {"A4": sheet.PAPERSIZE_A4, "Letter": sheet.PAPERSIZE_LETTER}[paper]
    printed = tmp_path / f"broiler_{paper}.xlsx"
    workbook.save(printed)
    pdf = render_pdf(printed, tmp_path)
    visible = [s.title for s in workbook.worksheets if s.sheet_state == "visible"]
    counts = pages_per_sheet(pdf, visible)
    if counts is not None:
        assert {title: counts[title] for title in INPUT_SHEETS} == dict.fromkeys(INPUT_SHEETS, 1)
        assert counts["Shadow prices"] == 1
        assert counts["Run info"] == 1
        assert 1 <= counts["Result"] <= 3  # page one to sign, the tables, the charts
    assert page_count(pdf) <= len(visible) + 2

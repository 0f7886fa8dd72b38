"""The earlier result's record is read straight from the package (`read.previous`,
`read.saved_values.sheet_values`); the rows must be exactly those openpyxl's own
read-only reader gives for the same file (outside reference: openpyxl), for blendkit's
outputs and for outputs saved again by openpyxl (shared strings) or edited."""

from __future__ import annotations

import shutil
from pathlib import Path

import openpyxl
import pytest

from blendkit.model import record
from blendkit.pipeline import solve_workbook
from blendkit.read import previous
from blendkit.read.previous import read_run_record

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = sorted((ROOT / "sample_workbooks").glob("*.xlsx"))


def _by_openpyxl(path: Path) -> tuple[list[tuple], set[str]]:
    """The record rows as openpyxl's read-only reader gives them, padded to four columns."""
    book = openpyxl.load_workbook(path, read_only=True, data_only=True)
    try:
        titles = {title.casefold() for title in book.sheetnames}
        rows = [tuple(row) for row in book[record.SHEET].iter_rows(values_only=True)]
    finally:
        book.close()
    return [tuple(row[:4]) + (None,) * (4 - len(row)) for row in rows], titles


def _assert_same_rows(path: Path) -> None:
    rows, titles = previous._rows_from_package(path, None)
    expected_rows, expected_titles = _by_openpyxl(path)
    assert titles == expected_titles
    # openpyxl may stop at the last row holding a value; trailing empty rows aside, equal.
    while rows and rows[-1] == (None,) * 4:
        rows.pop()
    while expected_rows and expected_rows[-1] == (None,) * 4:
        expected_rows.pop()
    assert rows == expected_rows
    assert all(type(a) is type(b) for row, other in zip(rows, expected_rows) for a, b in zip(row, other))


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda path: path.stem)
def test_the_record_of_each_sample_reads_as_openpyxl_reads_it(sample, tmp_path):
    source = tmp_path / sample.name
    shutil.copyfile(sample, source)
    output = solve_workbook(source, tmp_path / "out.xlsx", check=False).output
    _assert_same_rows(output)
    # Saved again by openpyxl: shared strings instead of inline text, and a cell edited
    # with characters XML escapes.
    book = openpyxl.load_workbook(output)
    book[record.SHEET].cell(3, 4).value = 'a <b> & "c" \'d\''
    book.save(tmp_path / "saved.xlsx")
    _assert_same_rows(tmp_path / "saved.xlsx")


def test_a_record_the_pattern_cannot_read_is_read_by_the_parser(tmp_path, monkeypatch):
    # A formula cell in the record (a user's edit): the plain pattern gives up, the XML
    # parser reads it, and the run reads as openpyxl reads it.
    output = solve_workbook(ROOT / "sample_workbooks" / "layer_feed.xlsx", tmp_path / "out.xlsx",
                            check=False).output
    book = openpyxl.load_workbook(output)
    book[record.SHEET]["F2"] = "=1+1"
    book.save(output)
    _assert_same_rows(output)
    assert read_run_record(output).formulas

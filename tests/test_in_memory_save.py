"""`in_memory.workbook_bytes` against openpyxl's own `Workbook.save` (the reference): every
part of the package holds the same bytes, in the same order, for an output workbook of
each sample (its sheets, styles, merged cells, conditional formats, hidden sheet) with a
chart added (drawing parts), and the output of a solve opens with the same cells."""

from __future__ import annotations

import io
import zipfile
from pathlib import Path

import openpyxl
import pytest
from openpyxl.chart import BarChart, Reference

from blendkit.pipeline import solve_workbook
from blendkit.write.workbook.in_memory import workbook_bytes

SAMPLES = Path(__file__).resolve().parents[1] / "sample_workbooks"
# The package's modification time, set by each save to the second.
_TIMED_PART = "docProps/core.xml"


def _parts(content: bytes) -> list[tuple[str, bytes]]:
    with zipfile.ZipFile(io.BytesIO(content)) as archive:
        return [(name, archive.read(name)) for name in archive.namelist() if name != _TIMED_PART]


@pytest.mark.parametrize("sample", ["pig_feed_plant", "day_menu"])
def test_the_parts_are_those_of_openpyxls_own_save(sample, tmp_path):
    output = solve_workbook(SAMPLES / f"{sample}.xlsx", tmp_path / "out.xlsx").output
    # Two loads of the output, each saved once: a save changes a sheet's settings a
    # little (openpyxl fills in outlineLevelCol), so a second save of one workbook differs.
    reference, ours = io.BytesIO(), None
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

"""The output sheets built by blendkit's quick cell helpers hold the bytes that openpyxl's
own API calls give.

The reference (outside blendkit's quick paths): the same output written with every quick
helper replaced by the plain openpyxl call it stands for (`Worksheet.cell`, the `value`
and `number_format` setters, each style part set on every cell) and saved by openpyxl's
`Workbook.save`. Every part of the package must hold the same bytes, the run's time and the
package's modification time made equal (the only bytes a run's clock writes). Two quick
paths are remembered answers of blendkit's own functions, not openpyxl calls: for those
the reference recomputes the answer on every call (`live._column_run`, the scan of every
limit in `step_words._pinned`); no outside program computes them.

Covered: the five samples (one product, diets, fertiliser, a plant with stocks), a small
plant of several products (Overview, several Batch sheets, the big Shadow prices sheet),
a set of formulas sharing one ingredient table, an infeasible blend (Conflicts) and a
second run compared with the first (Changes). A larger plant and the 200-formula set
run behind `long`.
"""

from __future__ import annotations

import dataclasses
import io
import re
import zipfile
from pathlib import Path

import openpyxl
import pytest
from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.utils.exceptions import IllegalCharacterError

from blendkit.pipeline import finish, formulate, prepare
from blendkit.write import step_words
from blendkit.write.workbook import book, cells, live
from tests.workbooks import make_workbook

SAMPLES = Path(__file__).resolve().parents[1] / "sample_workbooks"
SEED = 20240611
# The run's start, written on Run info and in every page footer: the same in both runs.
STARTED = "2026-01-01T00:00:00Z"
# The package's modification time, set by each save to the second.
_MODIFIED = re.compile(rb"<dcterms:modified[^>]*>[^<]*</dcterms:modified>")


def _plain_cell_at(sheet, row, column, value=None):
    """openpyxl's own way to a cell."""
    return sheet.cell(row, column, value)


def _plain_number(cell, value, number_format):
    """`cells.number` as plain openpyxl setters."""
    if value is None or not cells.math.isfinite(value):
        return
    cell.value = float(value) + 0.0
    cell.number_format = number_format


def _plain_live(cell, formula_text, number_format):
    """`cells.live` as plain openpyxl setters."""
    cell.value = formula_text
    cell.number_format = number_format


def _plain_formatted(cell, number_format):
    """`cells.formatted` as openpyxl's setter."""
    cell.number_format = number_format


def _plain_styled(cell, look, apply):
    """`cells.styled` with every style part set on every cell."""
    apply(cell)


def _plain_bind(cell, value):
    """`cells._bind` as openpyxl's value setter."""
    cell.value = value


def _recomputed_run(workbook, references):
    """`live._known_run` recomputed on every call."""
    return live._column_run(workbook, references)


def _scanned_same_item(limits):
    """`step_words._same_item` built afresh on every call (the scan of every limit)."""
    by_item: dict = {}
    for each in limits:
        by_item.setdefault(step_words._item(each), []).append(each)
    return by_item


_PLAIN = {
    "cell_at": _plain_cell_at, "number": _plain_number, "live": _plain_live,
    "formatted": _plain_formatted, "styled": _plain_styled, "_bind": _plain_bind,
    "_known_run": _recomputed_run, "_same_item": _scanned_same_item,
}


def _openpyxl_save(workbook) -> bytes:
    """openpyxl's own `Workbook.save`."""
    buffer = io.BytesIO()
    workbook.save(buffer)
    return buffer.getvalue()


@pytest.fixture
def plain(monkeypatch):
    """A function that puts openpyxl's own calls in place of every quick helper, in every
    module that holds one, and openpyxl's `Workbook.save` in place of the in-memory save."""
    def apply() -> None:
        import sys

        originals = {name: getattr(module, name) for module in (cells, live, step_words)
                     for name in _PLAIN if hasattr(module, name)}
        assert len(originals) == len(_PLAIN)  # every helper found: none renamed unseen
        for module in list(sys.modules.values()):
            if not getattr(module, "__name__", "").startswith("blendkit.write"):
                continue
            for name, original in originals.items():
                if getattr(module, name, None) is original:
                    monkeypatch.setattr(module, name, _PLAIN[name])
        monkeypatch.setattr(book, "workbook_bytes", _openpyxl_save)
    return apply


def _output(source: Path, out: Path, formula=None, compare: Path | None = None):
    """Write the output of `source` at `out` (the run's time fixed); its parts, with the
    package's modification time taken out, and the formula (solved once, reused)."""
    out.unlink(missing_ok=True)
    prepared = prepare(source, out, compare=compare)
    prepared = dataclasses.replace(prepared, run=dataclasses.replace(prepared.run, started_utc=STARTED))
    formula = formula if formula is not None else formulate(prepared.blend)
    finish(prepared, formula, compare=compare)
    with zipfile.ZipFile(out) as archive:
        parts = [(name, _MODIFIED.sub(b"", archive.read(name))) for name in archive.namelist()]
    return parts, formula


def _check_same_bytes(source: Path, tmp_path: Path, plain, compare: Path | None = None) -> None:
    """The quick output and the plain-openpyxl output of `source` hold the same parts."""
    quick, formula = _output(source, tmp_path / "quick.xlsx", compare=compare)
    plain()
    reference, _ = _output(source, tmp_path / "plain.xlsx", formula, compare=compare)
    assert [name for name, _ in quick] == [name for name, _ in reference]
    for (name, ours), (_, theirs) in zip(quick, reference):
        assert ours == theirs, name
    assert any(name.startswith("xl/worksheets/") for name, _ in quick)


@pytest.mark.parametrize("sample", sorted(path.stem for path in SAMPLES.glob("*.xlsx")))
def test_a_sample_output_has_the_bytes_of_plain_openpyxl_calls(sample, tmp_path, plain):
    _check_same_bytes(SAMPLES / f"{sample}.xlsx", tmp_path, plain)


def test_a_plant_output_has_the_bytes_of_plain_openpyxl_calls(tmp_path, plain):
    from blendkit.bench.plant import plant_workbook

    _check_same_bytes(plant_workbook(tmp_path / "plant.xlsx", 6, 30, 15, SEED), tmp_path, plain)


def test_a_formula_set_output_has_the_bytes_of_plain_openpyxl_calls(tmp_path, plain):
    from blendkit.bench.formula_set import formula_set_workbook

    _check_same_bytes(formula_set_workbook(tmp_path / "set.xlsx", 12, SEED), tmp_path, plain)


def test_an_infeasible_output_has_the_bytes_of_plain_openpyxl_calls(tmp_path, plain):
    header = ["Ingredient", "Cost", "Min", "Max", "Crude protein (%)", "Calcium (%)"]
    feeds = [["Barley", 180, None, None, 11.0, 0.05], ["Soybean meal", 420, None, 25, 46.0, 0.30],
             ["Limestone", 60, None, 3, 0.0, 38.0]]
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 30, None]]  # above what the feeds reach
    source = make_workbook(tmp_path, [header, *feeds], specs)
    _check_same_bytes(source, tmp_path, plain)
    with zipfile.ZipFile(tmp_path / "quick.xlsx") as archive:
        assert b"Conflicts" in archive.read("xl/workbook.xml")


def test_a_compared_output_has_the_bytes_of_plain_openpyxl_calls(tmp_path, plain):
    earlier, _ = _output(SAMPLES / "layer_feed.xlsx", tmp_path / "earlier.xlsx")
    _check_same_bytes(SAMPLES / "layer_feed.xlsx", tmp_path, plain, compare=tmp_path / "earlier.xlsx")
    with zipfile.ZipFile(tmp_path / "quick.xlsx") as archive:
        assert b"Changes" in archive.read("xl/workbook.xml")


@pytest.mark.long
@pytest.mark.parametrize("size", ["plant 40", "formulas 200"])
def test_a_big_output_has_the_bytes_of_plain_openpyxl_calls(size, tmp_path, plain):
    from blendkit.bench.formula_set import formula_set_workbook
    from blendkit.bench.plant import plant_workbook

    path = tmp_path / "big.xlsx"
    source = plant_workbook(path, 40, 80, 40, SEED) if size == "plant 40" else formula_set_workbook(path, 200, SEED)
    _check_same_bytes(source, tmp_path, plain)


@pytest.mark.parametrize("text", ["plain", "=1+2", "#N/A", "a & b < c", " spaced ", "x" * 40_000, "", "#DIV/0!"])
def test_a_text_gets_the_value_and_type_openpyxls_setter_gives(text):
    # openpyxl's `Worksheet.cell(row, column, value)` is the reference; twice, the second
    # time from what `cells._bind` remembers.
    workbook = openpyxl.Workbook()
    sheet = workbook.active
    expected = sheet.cell(1, 1, text)
    for row in (2, 3):
        cell = cells.cell_at(sheet, row, 1, text)
        assert (cell._value, cell.data_type) == (expected._value, expected.data_type)
        assert sheet._cells[(row, 1)] is cell and sheet._current_row == row
    assert cells.put(sheet, 4, 1, text).data_type == ("s" if expected.data_type == "f" else expected.data_type)


def test_a_text_with_an_illegal_character_raises_as_in_openpyxl():
    # openpyxl's own check (ILLEGAL_CHARACTERS_RE) is the reference, every time it is written.
    sheet = openpyxl.Workbook().active
    text = "bad \x07 bell"
    assert ILLEGAL_CHARACTERS_RE.search(text)
    for row in (1, 2):
        with pytest.raises(IllegalCharacterError):
            cells.put(sheet, row, 1, text)


def test_a_number_format_gets_the_id_openpyxls_setter_gives():
    # openpyxl's `number_format` setter is the reference, in a second workbook.
    ours, theirs = openpyxl.Workbook().active, openpyxl.Workbook().active
    for row, fmt in enumerate(["0.00", "#,##0.000", "0.00", "General", '#,##0.0" g"', "#,##0.000"], start=1):
        cells.number(cells.cell_at(ours, row, 1), 1.5, fmt)
        expected = theirs.cell(row, 1, 1.5)
        expected.number_format = fmt
        assert ours.cell(row, 1).number_format == fmt
        assert tuple(ours.cell(row, 1)._style) == tuple(expected._style)

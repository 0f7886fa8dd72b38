"""The result workbook: input sheets kept, output sheets written, replaced and saved safely."""

from __future__ import annotations

import dataclasses
import hashlib
import io
import math
import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from openpyxl import load_workbook
from openpyxl.workbook.workbook import Workbook
from openpyxl.writer.excel import ExcelWriter

import blendkit.write.workbook.save
from blendkit import CAUTION
from blendkit.model.batch import batches
from blendkit.model.blend import batch_sheet_title
from blendkit.read.workbook import read_workbook
from blendkit.write.workbook.book import write_workbook
from blendkit.write.workbook.shadow_prices import ordered
from tests import formulas
from tests.workbooks import store_saved_values

INPUT_SHEETS = ["Ingredients", "Specs", "Settings"]
# The output sheets of a solved run, and of an infeasible one (Conflicts after Result).
# "Result data" is the hidden record of the run, which a later run compares with.
SOLVED_SHEETS = ["Result", "Batch sheet", "Shadow prices", "Run info", "Result data"]
INFEASIBLE_SHEETS = ["Result", "Conflicts", "Shadow prices", "Run info", "Result data"]
LIVE = 8  # the nutrient table's column of live formulas (H)


@pytest.fixture
def source(tmp_path: Path) -> Path:
    return formulas.write_source(tmp_path / "meadowbank.xlsx")


def sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def write(formula, source: Path, output: Path) -> Path:
    """Write with run facts that match the source file on disk."""
    return write_workbook(formula, formulas.run_info(sha256(source)), source, output)


def cell_values(path: Path, sheet: str) -> list[tuple]:
    workbook = load_workbook(path)
    return [tuple(c.value for c in row) for row in workbook[sheet].iter_rows()]


def is_number(value) -> bool:
    """A number cell (openpyxl reads 232.0 back as 232), never text."""
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def row_of(sheet, label: str, column: int = 1, below: int = 0) -> int:
    """The first row (after row `below`) whose cell in `column` reads `label`."""
    for row in range(below + 1, sheet.max_row + 1):
        if sheet.cell(row, column).value == label:
            return row
    raise AssertionError(f"no {label!r} in column {column} of {sheet.title}")


# --- a tiny evaluator for the live formulas we emit: numbers, cell references,
# + - * /, parentheses, SUM over a range and SUMPRODUCT of two ranges. Enough to check
# them without a spreadsheet.

_TOKEN = re.compile(
    r"\s*(?:(?P<ref>(?:'(?:[^']|'')+'|[A-Za-z_][A-Za-z0-9_]*)!\$?[A-Z]+\$?\d+(?::\$?[A-Z]+\$?\d+)?"
    r"|\$?[A-Z]+\$?\d+(?::\$?[A-Z]+\$?\d+)?)"
    r"|(?P<sumproduct>SUMPRODUCT)\(|(?P<sum>SUM)\(|(?P<num>\d+(?:\.\d*)?(?:[eE][-+]?\d+)?)"
    r"|(?P<op>[-+*/(),]))"
)
# A live level as blendkit writes it: one SUMPRODUCT of aligned ranges; `{sheet}` is the
# input sheet's name in the formula.
SUMPRODUCT = r"=SUMPRODUCT\(B\d+:B\d+,{sheet}![A-Z]+\d+:[A-Z]+\d+\)"


def evaluate(workbook: Workbook, sheet: str, text: str) -> float:
    """Value of a formula (or plain value) as a spreadsheet would compute it."""
    if not isinstance(text, str):
        return 0.0 if text is None else float(text)
    assert text.startswith("="), text
    tokens, position, body = [], 0, text[1:]
    while position < len(body):
        match = _TOKEN.match(body, position)
        assert match and match.end() > position, f"unexpected text in {text!r} at {position}"
        tokens.append((match.lastgroup, match.group(match.lastgroup)))
        position = match.end()
    tokens.append(("end", ""))
    index = 0

    def peek():
        return tokens[index]

    def take():
        nonlocal index
        index += 1
        return tokens[index - 1]

    def values_in(span: str) -> list[float]:
        where, bang, cells = span.rpartition("!")
        name = sheet
        if bang:
            name = where[1:-1].replace("''", "'") if where.startswith("'") else where
        start, end = cells.replace("$", "").split(":")
        return [evaluate(workbook, name, c.value) for row in workbook[name][start:end] for c in row]

    def value_at(reference: str) -> float:
        where, bang, cell = reference.rpartition("!")
        name = sheet
        if bang:
            name = where[1:-1].replace("''", "'") if where.startswith("'") else where
        return evaluate(workbook, name, workbook[name][cell.replace("$", "")].value)

    def expression() -> float:
        total = term()
        while peek() in (("op", "+"), ("op", "-")):
            total = total + term() if take()[1] == "+" else total - term()
        return total

    def term() -> float:
        total = factor()
        while peek() in (("op", "*"), ("op", "/")):
            total = total * factor() if take()[1] == "*" else total / factor()
        return total

    def factor() -> float:
        kind, text_ = take()
        if kind == "num":
            return float(text_)
        if kind == "op" and text_ == "-":
            return -factor()
        if kind == "op" and text_ == "(":
            inner = expression()
            assert take() == ("op", ")")
            return inner
        if kind == "sumproduct":
            kind, first = take()
            assert kind == "ref" and ":" in first and take() == ("op", ","), first
            kind, second = take()
            assert kind == "ref" and ":" in second and take() == ("op", ")"), second
            pairs = zip(values_in(first), values_in(second), strict=True)
            return sum(a * b for a, b in pairs)
        if kind == "sum":
            kind, span = take()
            assert kind == "ref" and ":" in span, span
            assert take() == ("op", ")")
            start, end = span.split(":")
            cells = workbook[sheet][start:end]
            return sum(evaluate(workbook, sheet, c.value) for row in cells for c in row)
        assert kind == "ref" and ":" not in text_, (kind, text_)
        return value_at(text_)

    result = expression()
    assert peek() == ("end", ""), f"trailing text in {text!r}"
    return result


def test_evaluator_knows_the_rules_it_checks_by():
    # The expected values: the cells of `_tiny_workbook` put through the same arithmetic
    # in Python.
    workbook = load_workbook(_tiny_workbook())
    assert evaluate(workbook, "S", "=(A1*'My sheet'!B2+A2*3)/4-1") == pytest.approx(
        (2 * 5 + 3 * 3) / 4 - 1
    )
    assert evaluate(workbook, "S", "=SUM(A1:A2)*2") == 10.0
    assert evaluate(workbook, "S", "=SUMPRODUCT(A1:A2,'My sheet'!B1:B2)/5") == 2 * 0 / 5 + 3 * 5 / 5


def _tiny_workbook() -> io.BytesIO:
    """S!A1 = 2, S!A2 = =1+2, 'My sheet'!B2 = 5."""
    workbook = Workbook()
    workbook.active.title = "S"
    workbook["S"]["A1"], workbook["S"]["A2"] = 2, "=1+2"
    workbook.create_sheet("My sheet")["B2"] = 5
    buffer = io.BytesIO()
    workbook.save(buffer)
    buffer.seek(0)
    return buffer


# --- sheets and inputs ------------------------------------------------------------------


def test_adds_output_sheets_after_the_unchanged_input_sheets(source: Path, tmp_path: Path):
    output = write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    workbook = load_workbook(output)
    assert workbook.sheetnames == [*INPUT_SHEETS, *SOLVED_SHEETS]
    assert workbook.active.title == "Result"
    for name in INPUT_SHEETS:
        assert cell_values(output, name) == cell_values(source, name), name
    # Input formulas are kept as formulas, not replaced by values.
    assert workbook["Ingredients"]["B2"].value == formulas.BARLEY_COST_FORMULA


def test_source_bytes_unchanged(source: Path, tmp_path: Path):
    before = source.read_bytes()
    write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    assert source.read_bytes() == before


def test_second_write_replaces_output_sheets(source: Path, tmp_path: Path):
    first = write(formulas.optimal_formula(), source, tmp_path / "first.xlsx")
    second = write(formulas.optimal_formula(), first, tmp_path / "second.xlsx")
    assert load_workbook(second).sheetnames == [*INPUT_SHEETS, *SOLVED_SHEETS]
    for name in [*INPUT_SHEETS, *SOLVED_SHEETS]:
        if name not in ("Run info", "Result data"):  # the recorded input file differs, by design
            assert cell_values(second, name) == cell_values(first, name), name


def test_output_sheets_matched_whatever_their_case(tmp_path: Path):
    source = formulas.write_source(tmp_path / "in.xlsx", extra_sheets=("RESULT", "shadow PRICES"))
    output = write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    names = load_workbook(output).sheetnames
    assert [n.casefold() for n in names].count("result") == 1
    assert names == [*INPUT_SHEETS, *SOLVED_SHEETS]


def test_rewriting_an_existing_output_in_place(source: Path, tmp_path: Path):
    output = tmp_path / "out.xlsx"
    write(formulas.infeasible_formula(), source, output)
    write(formulas.optimal_formula(), source, output)
    result = load_workbook(output)["Result"]
    assert result["B4"].value == "optimal"


# --- Result sheet -----------------------------------------------------------------------


def test_result_top_block(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    result = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Result"]
    assert result["A1"].value == "Meadowbank goat ration"
    assert result["A1"].font.b
    assert result["A2"].value == CAUTION
    assert result["B4"].value == "optimal"
    assert result["B5"].value == formula.message
    row = row_of(result, "Blend cost")
    assert result.cell(row, 2).value == pytest.approx(formulas.blend_cost())
    assert is_number(result.cell(row, 2).value)
    assert result.cell(row, 3).value == "EUR per tonne"


def test_title_falls_back_to_file_stem(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    unnamed = dataclasses.replace(formula.blend.settings, name="")
    blend = dataclasses.replace(formula.blend, settings=unnamed)
    formula = dataclasses.replace(formula, blend=blend)
    result = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Result"]
    assert result["A1"].value == "meadowbank"


def test_ingredient_table_numbers(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    result = workbook["Result"]
    header = row_of(result, "Ingredient")
    labels = [result.cell(header, c).value for c in range(1, 8)]
    assert labels[:2] == ["Ingredient", "Inclusion (%)"]
    assert "kg" in labels[2] and "EUR" in labels[3]
    assert all(result.cell(header, c).font.b for c in range(1, 8))
    for offset, line in enumerate(formula.ingredients, start=1):
        row = header + offset
        assert result.cell(row, 1).value == line.name
        # The amount and the cost per batch are live: inclusion x batch, amount x price.
        assert result.cell(row, 3).value == f"=B{row}*$B$8/100"
        assert result.cell(row, 4).value.startswith(f"=C{row}*Ingredients!B")
        numbers = [evaluate(workbook, "Result", result.cell(row, c).value) for c in range(2, 7)]
        expected = [line.inclusion, line.amount, line.batch_cost, line.cost, line.reduced_cost]
        assert numbers == pytest.approx(expected, rel=1e-12)
        assert all(is_number(result.cell(row, c).value) for c in (2, 5, 6))
    assert result.cell(header + 1, 2).number_format == "0.000"
    wheat = row_of(result, "Wheat feed")
    assert result.cell(wheat, 7).value == 195.0
    assert result.cell(row_of(result, "Barley"), 7).value is None  # in the blend: no entry price
    assert "Use = no" in result.cell(row_of(result, "Oat hulls"), 7).value
    assert result.freeze_panes == "B1"  # page one is long: only the name column stays


def test_nutrient_table_numbers(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    result = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Result"]
    header = row_of(result, "Nutrient")
    assert [result.cell(header, c).value for c in range(1, 9)] == [
        "Nutrient", "Basis", "Unit", "Min", "Max", "Level", "Position",
        "Level from input contents"]
    for offset, line in enumerate(formula.nutrients, start=1):
        row = header + offset
        texts = [result.cell(row, c).value for c in (1, 2, 3, 7)]
        assert texts == [line.name, "as fed", line.unit, line.position]
        assert result.cell(row, 4).value == line.minimum
        assert result.cell(row, 5).value == line.maximum
        assert result.cell(row, 6).value == pytest.approx(line.level)
    assert result.cell(row_of(result, "Notes"), 1).font.b
    assert result.cell(row_of(result, "Notes") + 1, 1).value == formulas.NOTES[0]


def test_live_formulas_recompute_levels_and_cost(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    result = workbook["Result"]
    header = row_of(result, "Nutrient")
    for offset, line in enumerate(formula.nutrients, start=1):
        text = result.cell(header + offset, LIVE).value
        # Plain arithmetic and cell references only, so any spreadsheet program agrees.
        # The input contents are one aligned column each: one SUMPRODUCT, scaled once.
        assert re.fullmatch(SUMPRODUCT.format(sheet="Ingredients") + "/100", text), text
        assert evaluate(workbook, "Result", text) == pytest.approx(line.level, rel=1e-12)
    cost_check = result.cell(row_of(result, "Blend cost from input prices"), 2).value
    assert "Ingredients!B2" in cost_check  # reads the input Cost cell, itself a formula
    assert evaluate(workbook, "Result", cost_check) == pytest.approx(formula.cost, rel=1e-12)
    total = row_of(result, "Total")
    assert evaluate(workbook, "Result", result.cell(total, 2).value) == pytest.approx(100.0)
    batch = sum(line.batch_cost for line in formula.ingredients)
    assert evaluate(workbook, "Result", result.cell(total, 4).value) == pytest.approx(batch)


def test_live_formulas_quote_sheet_names_that_need_it(tmp_path: Path):
    formula = formulas.optimal_formula()
    source = formulas.write_source(tmp_path / "in.xlsx")
    workbook = load_workbook(source)
    workbook["Ingredients"].title = "Feed list"
    workbook.save(source)
    # The reader writes references as "<sheet title>!<cell>", spaces and all.
    def moved(cells: dict[str, str]) -> dict[str, str]:
        return {key: ref.replace("Ingredients!", "Feed list!") for key, ref in cells.items()}

    renamed = tuple(
        dataclasses.replace(item, cells=moved(item.cells), content_cells=moved(item.content_cells))
        for item in formula.blend.ingredients
    )
    formula = dataclasses.replace(
        formula, blend=dataclasses.replace(formula.blend, ingredients=renamed)
    )
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    result = workbook["Result"]
    text = result.cell(row_of(result, "Nutrient") + 1, LIVE).value
    assert "'Feed list'!F2" in text
    assert evaluate(workbook, "Result", text) == pytest.approx(formula.nutrients[0].level)


@pytest.mark.skipif(
    not (shutil.which("soffice") or shutil.which("libreoffice")),
    reason="LibreOffice is not installed",
)
def test_spreadsheet_program_agrees_with_written_levels(source: Path, tmp_path: Path):
    # Outside reference: LibreOffice's own formula engine, run headless. Limestone's
    # Calcium is shown as a percentage, so the scaled operand is checked too.
    workbook = load_workbook(source)
    workbook["Ingredients"]["H5"] = 0.38
    workbook["Ingredients"]["H5"].number_format = "0.0%"
    workbook.save(source)
    formula = formulas.optimal_formula()
    output = write(formula, source, tmp_path / "out.xlsx")
    converted = tmp_path / "converted"
    program = shutil.which("soffice") or shutil.which("libreoffice")
    subprocess.run(
        [program, "--headless", f"-env:UserInstallation=file://{tmp_path / 'profile'}",
         "--convert-to", "xlsx", "--outdir", str(converted), str(output)],
        check=True, capture_output=True, timeout=180,
    )
    result = load_workbook(converted / "out.xlsx", data_only=True)["Result"]
    header = row_of(result, "Nutrient")
    for offset, line in enumerate(formula.nutrients, start=1):
        assert result.cell(header + offset, LIVE).value == pytest.approx(line.level, rel=1e-9)
    cost_row = row_of(result, "Blend cost from input prices")
    assert result.cell(cost_row, 2).value == pytest.approx(formula.cost, rel=1e-9)
    total = row_of(result, "Total")
    assert result.cell(total, 2).value == pytest.approx(100.0)


def test_not_optimal_shows_status_and_no_tables(source: Path, tmp_path: Path):
    formula = formulas.infeasible_formula()
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    assert workbook.sheetnames == [*INPUT_SHEETS, *INFEASIBLE_SHEETS]
    result = workbook["Result"]
    assert result["A2"].value == CAUTION
    assert result["B4"].value == "infeasible"
    assert result["B4"].font.b
    assert result["B5"].value == formula.message
    values = [c.value for row in result.iter_rows() for c in row]
    assert "Ingredient" not in values and "Nutrient" not in values and "Blend cost" not in values
    assert formula.notes[0] in values
    shadow = [c.value for row in workbook["Shadow prices"].iter_rows() for c in row]
    assert any(isinstance(v, str) and "infeasible" in v for v in shadow)
    assert workbook["Run info"]["B7"].value == "infeasible"


# --- Shadow prices and Run info -------------------------------------------------------------


def test_shadow_prices_sheet(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    sheet = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Shadow prices"]
    assert "Shadow price" in sheet["A1"].value
    header = row_of(sheet, "Kind")
    assert sheet.freeze_panes == f"A{header + 1}"
    rows = [[c.value for c in row] for row in sheet.iter_rows(min_row=header + 1)]
    assert len(rows) == len(formula.limits)
    assert [c.value for c in sheet[header]] == [
        "Kind", "Product", "Name", "Basis", "Side", "Bound", "Level", "Binding", "Shadow price",
        "Shadow price unit", "Bound read from", "Holds from", "Holds to", "Step", "Cost of a step",
        "Cost change, raised a step", "Cost change, lowered a step", "Per step, in words", "Note"]
    # Binding limits first, the larger cost of a step first: rapeseed meal max (1.25 per 1 %
    # inclusion, a step of 0.1 %: 0.125) before crude protein min (4.5 per 1 %, a step of
    # 0.01 %: 0.045); the limits that do not bind keep the workbook's order.
    binding = [limit for limit in formula.limits if limit.binding]
    expected = [binding[1], binding[0], *(limit for limit in formula.limits if not limit.binding)]
    for row, limit in zip(rows, expected):
        kind, product, name, basis, side, bound, level, binding_word, shadow, unit, cell, low, high = row[:13]
        assert (low, high) == (limit.holds_from, limit.holds_to)
        assert (kind, name, side, cell) == (limit.kind, limit.name, limit.side, limit.cell)
        assert product is None  # one blend
        assert basis == ("as fed" if limit.kind == "nutrient" else None)
        assert bound == limit.bound and level == pytest.approx(limit.level)
        assert binding_word == ("yes" if limit.binding else "no")
        assert shadow == limit.shadow_price and is_number(shadow)
    assert rows[1][9] == "EUR/tonne per 1 unit of Crude protein (%)"
    assert rows[0][9] == "EUR/tonne per 1 % inclusion"
    assert rows[0][13:16] == [0.1, pytest.approx(-0.125), None]
    assert rows[0][17] == "-0.1250 EUR/tonne per +0.1 % inclusion of Rapeseed meal"
    assert rows[1][13:15] == [0.01, pytest.approx(0.045)]
    assert rows[1][17] == "+0.04500 EUR/tonne per +0.01 % Crude protein"
    assert sheet["A1"].value.startswith("Shadow price: change in the blend cost (EUR per tonne) ")


def test_run_info_sheet(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    output = write(formula, source, tmp_path / "out.xlsx")
    sheet = load_workbook(output)["Run info"]
    info = {row[0]: row[1] for row in sheet.iter_rows(min_row=2, values_only=True)}
    assert info["Tool version"] == "blendkit 0.1.0"
    assert info["Run at (UTC)"] == "2026-12-01T21:41:45Z"
    assert info["Input file"] == "meadowbank.xlsx"
    assert info["Input SHA-256"] == sha256(source)
    assert info["Status"] == "optimal"
    assert info["Message"] == formula.message
    assert info["Iterations"] == 7
    assert info["Caution"] == CAUTION


def test_refuses_a_source_that_changed_since_it_was_read(source: Path, tmp_path: Path):
    run = formulas.run_info("0" * 64)
    with pytest.raises(ValueError, match="changed since it was read"):
        write_workbook(formulas.optimal_formula(), run, source, tmp_path / "out.xlsx")
    assert list(tmp_path.iterdir()) == [source]


# --- safe saving ----------------------------------------------------------------------------


@pytest.mark.parametrize("spelling", ["same", "relative", "symlink"])
def test_refuses_to_overwrite_the_source(source: Path, tmp_path: Path, monkeypatch, spelling):
    before = source.read_bytes()
    output = source
    if spelling == "relative":
        monkeypatch.chdir(tmp_path)
        output = Path("sub") / ".." / source.name
        (tmp_path / "sub").mkdir()
    elif spelling == "symlink":
        output = tmp_path / "link.xlsx"
        output.symlink_to(source)
    with pytest.raises(ValueError, match="never overwrites its input"):
        write(formulas.optimal_formula(), source, output)
    assert source.read_bytes() == before


def test_failed_save_leaves_no_file(source: Path, tmp_path: Path, monkeypatch):
    def broken_save(self):
        raise OSError("disk full")

    # openpyxl's package writer, which every save of the writer goes through.
    monkeypatch.setattr(ExcelWriter, "save", broken_save)
    with pytest.raises(OSError, match="disk full"):
        write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    assert list(tmp_path.iterdir()) == [source]


def test_failed_move_removes_the_temporary_file(source: Path, tmp_path: Path, monkeypatch):
    # The temporary file is complete by now; the failure is in moving it into place.
    def broken_replace(src, dst):
        assert Path(src).parent == tmp_path and Path(src).stat().st_size > 0
        raise PermissionError("output is open in another program")

    monkeypatch.setattr(blendkit.write.workbook.save.os, "replace", broken_replace)
    with pytest.raises(PermissionError):
        write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    assert list(tmp_path.iterdir()) == [source]


def test_failed_save_keeps_the_previous_output(source: Path, tmp_path: Path, monkeypatch):
    output = write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    before = output.read_bytes()

    def broken_save(self):
        raise OSError("disk full")

    monkeypatch.setattr(ExcelWriter, "save", broken_save)
    with pytest.raises(OSError):
        write(formulas.infeasible_formula(), source, output)
    assert output.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["meadowbank.xlsx", "out.xlsx"]


def test_output_gets_ordinary_file_permissions(source: Path, tmp_path: Path):
    output = write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    umask = os.umask(0)
    os.umask(umask)
    assert output.stat().st_mode & 0o777 == 0o666 & ~umask


def test_numbers_are_never_nan(source: Path, tmp_path: Path):
    workbook = load_workbook(write(formulas.optimal_formula(), source, tmp_path / "out.xlsx"))
    for sheet in SOLVED_SHEETS:
        for row in workbook[sheet].iter_rows(values_only=True):
            assert not any(isinstance(v, float) and not math.isfinite(v) for v in row)


def test_live_formulas_read_percent_cells_as_shown(source: Path, tmp_path: Path):
    # Limestone's Calcium typed as 0.38 and shown as 38.0%: the reader takes it as 38.
    workbook = load_workbook(source)
    workbook["Ingredients"]["H5"] = 0.38
    workbook["Ingredients"]["H5"].number_format = "0.0%"
    workbook.save(source)
    formula = formulas.optimal_formula()
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    result = workbook["Result"]
    calcium = row_of(result, "Calcium", below=row_of(result, "Nutrient"))
    text = result.cell(calcium, LIVE).value
    # One cell of the column is a percentage: a sum of products, each scaled on its own.
    assert text.startswith("=(")
    assert "Ingredients!H5*100" in text and "Ingredients!H4*100" not in text
    expected = next(line.level for line in formula.nutrients if line.name == "Calcium")
    assert evaluate(workbook, "Result", text) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    "number_format",
    ["General", "0%", "0.00%", '0.0" %"', "0\\%", "[Red]0.0", "[$%-409]0.0", "#,##0.00",
     "0.0%;-0.0%"],
)
def test_percent_rule_matches_the_reader(number_format: str):
    from blendkit.read.values import is_percent_format
    from blendkit.write.workbook.live import _scaled_as_percent

    assert _scaled_as_percent(1.0, number_format) == is_percent_format(number_format)


# --- saved formula results ---------------------------------------------------------------


def test_saved_results_of_input_formulas_are_kept(tmp_path: Path):
    source = formulas.write_source(tmp_path / "in.xlsx")
    workbook = load_workbook(source)
    checks = workbook.create_sheet("Checks")
    for row, text in enumerate(['=1/0', '="a"&"<b>"', "=1>0", "=Ingredients!B2*2"], start=1):
        checks.cell(row, 1, text)
    workbook.save(source)
    store_saved_values(source, "Ingredients", {"B2": 210})
    saved = {"A1": "#DIV/0!", "A2": "a<b>", "A3": True, "A4": 420.5}
    store_saved_values(source, "Checks", saved)

    output = write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    for sheet in [*INPUT_SHEETS, "Checks"]:
        for data_only in (False, True):
            before = load_workbook(source, data_only=data_only)[sheet]
            after = load_workbook(output, data_only=data_only)[sheet]
            assert [[c.value for c in row] for row in after.iter_rows()] == [
                [c.value for c in row] for row in before.iter_rows()], (sheet, data_only)
    assert load_workbook(output, data_only=True)["Checks"]["A4"].value == 420.5


def test_solving_the_output_again_reads_the_same_blend(tmp_path: Path):
    # The reader needs saved results for formula cells; the output must still have them.
    source = formulas.write_source(tmp_path / "in.xlsx")
    store_saved_values(source, "Ingredients", {"B2": 210})
    output = write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    again = read_workbook(output)
    assert again.ingredients == read_workbook(source).ingredients
    assert again.ingredients == formulas.make_blend().ingredients
    assert again.specs == formulas.make_blend().specs


def test_text_starting_with_equals_stays_text(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    formula = dataclasses.replace(formula, message="=1+1", notes=("=HYPERLINK(\"x\")",))
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    result = workbook["Result"]
    assert (result["B5"].value, result["B5"].data_type) == ("=1+1", "s")
    note = result.cell(row_of(result, "Notes") + 1, 1)
    assert (note.value, note.data_type) == ('=HYPERLINK("x")', "s")
    message = workbook["Run info"].cell(row_of(workbook["Run info"], "Message"), 2)
    assert message.data_type == "s"


# --- the full model: ratios and dry matter, a diet, several products, stocks ------------

# name -> (writes the source workbook, builds the formula, input sheets in order)
SCENARIOS = {
    "ration": (formulas.write_ration_source, formulas.ration_formula,
               ["Ingredients", "Specs", "Groups", "Settings"]),
    "diet": (formulas.write_diet_source, formulas.diet_formula,
             ["Ingredients", "Specs", "Groups", "Settings"]),
    "products": (formulas.write_mill_source, formulas.mill_formula,
                 ["Ingredients", "Specs", "Products", "Settings"]),
}


def solved_sheets(formula) -> list[str]:
    """The output sheets of a solved formula: one Batch sheet per product with a batch to
    weigh (none for a diet), numbered from the second."""
    count = len(batches(formula))
    return ["Result", *(batch_sheet_title(k) for k in range(1, count + 1)), *SOLVED_SHEETS[2:]]


def written(scenario: str, tmp_path: Path):
    """The scenario's formula and its output workbook, loaded with formulas."""
    write_source, make, _ = SCENARIOS[scenario]
    source = write_source(tmp_path / f"{scenario}.xlsx")
    formula = make()
    return formula, load_workbook(write(formula, source, tmp_path / f"{scenario}.result.xlsx"))


def table(sheet, header_row: int, count: int, columns: int = 8) -> list[list]:
    """The `count` rows under a table's header, `columns` cells each."""
    return [[sheet.cell(row, c).value for c in range(1, columns + 1)]
            for row in range(header_row + 1, header_row + count + 1)]


def rows_of(sheet, label: str, column: int = 1) -> list[int]:
    """Every row whose cell in `column` reads `label`."""
    return [row for row in range(1, sheet.max_row + 1) if sheet.cell(row, column).value == label]


@pytest.mark.parametrize("scenario", list(SCENARIOS))
def test_every_scenario_keeps_inputs_and_the_caution(scenario: str, tmp_path: Path):
    formula, workbook = written(scenario, tmp_path)
    overview = ["Overview"] if len(formula.products) > 1 else []  # first with several products
    assert workbook.sheetnames == [*overview, *SCENARIOS[scenario][2], *solved_sheets(formula)]
    assert workbook["Result"]["A2"].value == CAUTION
    assert workbook["Result"]["B4"].value == "optimal"
    info = {row[0]: row[1] for row in workbook["Run info"].iter_rows(min_row=2, values_only=True)}
    assert info["Caution"] == CAUTION
    for sheet in solved_sheets(formula):
        for row in workbook[sheet].iter_rows(values_only=True):
            assert not any(isinstance(v, float) and not math.isfinite(v) for v in row)


@pytest.mark.parametrize("scenario", list(SCENARIOS))
def test_every_scenario_is_replaced_when_solved_again(scenario: str, tmp_path: Path):
    write_source, make, inputs = SCENARIOS[scenario]
    source = write_source(tmp_path / "in.xlsx")
    first = write(make(), source, tmp_path / "first.xlsx")
    second = write(make(), first, tmp_path / "second.xlsx")
    overview = ["Overview"] if len(make().products) > 1 else []
    assert load_workbook(second).sheetnames == [*overview, *inputs, *solved_sheets(make())]
    for name in [*inputs, "Result", "Shadow prices"]:
        assert cell_values(second, name) == cell_values(first, name), name
    # The output still reads as the same blend, Groups and Products sheets included.
    again, blend = read_workbook(second), make().blend
    for field in ("ingredients", "nutrients", "specs", "groups", "products"):
        assert getattr(again, field) == getattr(blend, field), field


def test_ratio_and_dry_matter_lines_with_live_formulas(tmp_path: Path):
    formula, workbook = written("ration", tmp_path)
    result = workbook["Result"]
    header = row_of(result, "Nutrient")
    rows = table(result, header, len(formula.nutrients))
    for row, line in zip(rows, formula.nutrients):
        name, basis, unit, low, high, level, position, _ = row
        assert (name, unit or "", position) == (line.name, line.unit, line.position)
        assert basis == {"ratio": "ratio"}.get(line.kind, line.basis)
        assert (low, high) == (line.minimum, line.maximum)
        assert level == pytest.approx(line.level) and is_number(level)
    assert [row[1] for row in rows] == ["as fed"] * 5 + ["dry matter", "dry matter", "ratio"]
    special = formulas.ration_special_levels()
    assert rows[5][5] == pytest.approx(special["Crude protein (dry matter)"])
    assert rows[7][:3] == [formulas.RATIO, "ratio", None]
    # Dry-matter and ratio levels divide the live as-fed levels above them.
    live = {name: header + 1 + i for i, name in enumerate(formulas.RATION_NUTRIENTS)}
    dry, ratio = header + 6, header + 8
    assert result.cell(dry, LIVE).value == f"=H{live['Crude protein']}/H{live['Dry matter']}*100"
    assert result.cell(ratio, LIVE).value == f"=H{live['Calcium']}/H{live['Available phosphorus']}"
    for offset, line in enumerate(formula.nutrients, start=1):
        text = result.cell(header + offset, LIVE).value
        assert evaluate(workbook, "Result", text) == pytest.approx(line.level, rel=1e-10)


def test_a_ratio_that_cannot_be_worked_out_has_no_live_formula(tmp_path: Path):
    source = formulas.write_ration_source(tmp_path / "in.xlsx")
    formula = formulas.ration_formula()
    undefined = dataclasses.replace(formula.nutrients[-1], level=None, position="undefined")
    formula = dataclasses.replace(formula, nutrients=(*formula.nutrients[:-1], undefined))
    result = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Result"]
    row = row_of(result, formulas.RATIO, below=row_of(result, "Nutrient"))
    assert result.cell(row, 6).value is None and result.cell(row, LIVE).value is None
    assert result.cell(row, 7).value == "undefined"


def test_stocks_table_for_one_blend(tmp_path: Path):
    formula, workbook = written("ration", tmp_path)
    result = workbook["Result"]
    title = row_of(result, "Stocks")
    assert title > row_of(result, formulas.RATIO)  # under the nutrient table
    assert [c.value for c in result[title + 1]][:8] == [
        "Ingredient", "Used", "Available", "Unit", "Binding",
        "Shadow price (EUR per 1 unit of stock)", "Value of one more unit (EUR)", "Stock read from"]
    rows = table(result, title + 1, len(formula.stocks))
    assert rows == [
        ["Barley", 300, 5000, "kg", "no", 0, 0, "Ingredients!F3"],
        ["Soybean meal", 440, 440, "kg", "yes", -0.0375, 0.0375, "Ingredients!F4"],
    ]
    assert all(is_number(v) for row in rows for v in row[1:3] + row[5:7])


def test_no_stocks_table_without_stocks(source: Path, tmp_path: Path):
    workbook = load_workbook(write(formulas.optimal_formula(), source, tmp_path / "out.xlsx"))
    values = [c.value for row in workbook["Result"].iter_rows() for c in row]
    assert not any(isinstance(v, str) and v.startswith("Stocks") for v in values)


def test_shadow_prices_of_ratio_group_and_stock_limits(tmp_path: Path):
    formula, workbook = written("ration", tmp_path)
    sheet = workbook["Shadow prices"]
    assert "the batch's cost (EUR) for a stock" in sheet["A1"].value
    rows = table(sheet, 3, len(formula.limits), columns=11)
    assert sheet.cell(4 + len(formula.limits), 1).value is None
    by_kind = {}
    row_of_limit = {id(limit): row for row, limit in zip(rows, ordered(formula, formula.limits))}
    for limit in formula.limits:  # in the workbook's order, whatever the sheet's
        row = row_of_limit[id(limit)]
        assert (row[0], row[2], row[4], row[10]) == (limit.kind, limit.name, limit.side, limit.cell)
        assert row[1] is None  # one blend: no product, and stocks have none
        assert row[8] == limit.shadow_price
        by_kind.setdefault(limit.kind, []).append(row)
    dry = by_kind["nutrient"][1]
    assert dry[3] == "dry matter" and dry[7] == "yes"
    assert dry[9] == "EUR/tonne per 1 unit of Crude protein (%) in dry matter"
    ratio = by_kind["ratio"][1]
    assert ratio[3] == "ratio"
    assert ratio[9] == "EUR/tonne per 1 unit of the ratio Calcium / Available phosphorus"
    assert ratio[5] == pytest.approx(formulas.ration_special_levels()[formulas.RATIO])
    group = by_kind["group"][0]
    assert group[2:10] == ["Cereals", None, "max", 70, 70, "yes", -0.55, "EUR/tonne per 1 % inclusion"]
    stock = by_kind["stock"][1]
    assert stock[2:10] == ["Soybean meal", None, "max", 440, 440, "yes", -0.0375,
                           "EUR per 1 kg of stock"]
    stock_row = 4 + next(k for k, row in enumerate(rows) if row[0] == "stock")
    assert sheet.cell(stock_row, 6).number_format == "#,##0.00"  # a stock


def test_diet_result_shows_amounts_in_each_foods_unit(tmp_path: Path):
    formula, workbook = written("diet", tmp_path)
    result = workbook["Result"]
    assert result["A1"].value == "Wrenhill hostel day menu"
    cost = row_of(result, "Diet cost")
    assert [result.cell(cost, c).value for c in (2, 3)] == [pytest.approx(formulas.diet_cost()),
                                                             "EUR per day"]
    values = [c.value for row in result.iter_rows() for c in row]
    assert "Batch" not in values and "Blend cost" not in values and "Inclusion (%)" not in values
    header = row_of(result, "Food")
    assert [c.value for c in result[header]][:7] == [
        "Food", "Amount", "Measure", "Cost (EUR)", "Price (EUR per unit)",
        "Reduced cost (EUR per 1 unit)", "Price at which it would come in (EUR per unit)"]
    rows = table(result, header, len(formula.ingredients), columns=7)
    for row, food in zip(rows, formulas.DIET_ROWS):
        assert row[:3] == [food.name, food.x[0], food.unit]
        live = evaluate(workbook, "Result", row[3])  # amount x input price, live
        assert live == pytest.approx(food.x[0] * food.cost, rel=1e-12)
        assert row[4:6] == [food.cost, food.reduced_cost]
    assert rows[-2][6] == 0.31 and rows[-1][6] == "not in use (Use = no)"
    total = row_of(result, "Total")
    # Amounts in different units do not add up: only the cost column has a total.
    assert result.cell(total, 2).value is None and result.cell(total, 3).value is None
    assert evaluate(workbook, "Result", result.cell(total, 4).value) == pytest.approx(formula.cost)
    check = result.cell(row_of(result, "Diet cost from input prices"), 2).value
    assert "/100" not in check
    assert evaluate(workbook, "Result", check) == pytest.approx(formula.cost, rel=1e-12)
    assert result.freeze_panes == "B1"  # page one is long: only the name column stays


def test_diet_nutrients_are_totals(tmp_path: Path):
    formula, workbook = written("diet", tmp_path)
    result = workbook["Result"]
    header = row_of(result, "Nutrient")
    assert [c.value for c in result[header]][5:8] == ["Total", "Position", "Total from input contents"]
    rows = table(result, header, len(formula.nutrients))
    totals = formulas.diet_levels()
    for row, line in zip(rows, formula.nutrients):
        assert row[:3] == [line.name, "as fed", line.unit]
        assert row[5] == pytest.approx(totals[line.name])
        assert re.fullmatch(SUMPRODUCT.format(sheet="Ingredients"), row[7]), row[7]
        assert evaluate(workbook, "Result", row[7]) == pytest.approx(line.level, rel=1e-12)
    assert rows[3][6] == "at min"


def test_diet_shadow_prices(tmp_path: Path):
    formula, workbook = written("diet", tmp_path)
    sheet = workbook["Shadow prices"]
    assert "the diet's cost (EUR per day)" in sheet["A1"].value
    rows = table(sheet, 3, len(formula.limits), columns=11)
    units = {(row[2], row[4]): row[9] for row in rows}
    assert units[("Vitamin C", "min")] == "EUR per 1 unit of Vitamin C (mg)"
    assert units[("Wholemeal bread", "max")] == "EUR per unit (slice)"
    assert units[("Fruit", "min")] == "EUR per unit"
    bread = next(row for row in rows if row[2] == "Wholemeal bread")
    assert bread[5:9] == [6, 6, "yes", -0.012]
    assert bread[0] == "food"  # a diet's ingredients are foods, in every label


def test_shadow_price_never_shows_negative_zero(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    first = dataclasses.replace(formula.limits[0], shadow_price=-1e-12)
    formula = dataclasses.replace(formula, limits=(first, *formula.limits[1:]))
    sheet = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Shadow prices"]
    at = 4 + ordered(formula, formula.limits).index(first)
    assert sheet.cell(at, 9).value == 0
    assert math.copysign(1.0, sheet.cell(at, 9).value) == 1.0  # not -0.0


def test_products_total_cost_and_its_live_check(tmp_path: Path):
    formula, workbook = written("products", tmp_path)
    result = workbook["Result"]
    total = row_of(result, "Total cost")
    assert [result.cell(total, c).value for c in (2, 3)] == [pytest.approx(formulas.mill_total()),
                                                              "EUR"]
    assert is_number(result.cell(total, 2).value)
    check = result.cell(row_of(result, "Total cost from input prices"), 2).value
    assert evaluate(workbook, "Result", check) == pytest.approx(formula.cost, rel=1e-12)
    values = [c.value for row in result.iter_rows() for c in row]
    assert "Blend cost" not in values and "Batch" not in values


def test_one_block_per_product(tmp_path: Path):
    formula, workbook = written("products", tmp_path)
    result = workbook["Result"]
    starts = rows_of(result, "Product")
    assert [result.cell(row, 2).value for row in starts] == [name for name, _ in formulas.PRODUCTS]
    ingredient_headers = rows_of(result, "Ingredient")
    nutrient_headers = rows_of(result, "Nutrient")
    for p, (start, product) in enumerate(zip(starts, formula.products)):
        assert [result.cell(start + 1, c).value for c in (1, 2, 3)] == [
            "Amount made", product.amount, "kg"]
        assert [result.cell(start + 2, c).value for c in (1, 2, 3)] == [
            "Cost", pytest.approx(formulas.mill_costs()[p]), "EUR per tonne"]
        check = result.cell(start + 3, 2).value
        assert result.cell(start + 3, 1).value == "Cost from input prices"
        assert evaluate(workbook, "Result", check) == pytest.approx(product.cost, rel=1e-12)

        header = ingredient_headers[p]
        assert start < header < (starts + [10**6])[p + 1]
        assert result.cell(header, 3).value == f"Amount (kg in {product.amount:g} kg made)"
        rows = table(result, header, len(product.ingredients), columns=6)
        for row, item in zip(rows, formulas.MILL_ROWS):
            inclusion = item.x[p]
            amount, cost = (evaluate(workbook, "Result", value) for value in row[2:4])
            assert row[:2] == [item.name, inclusion]
            assert amount == pytest.approx(inclusion / 100 * product.amount)
            assert cost == pytest.approx(inclusion / 100 * product.amount / 1000 * item.cost)
            assert all(is_number(v) for v in row[4:])
        total = header + len(product.ingredients) + 1
        assert result.cell(total, 1).value == "Total"
        assert evaluate(workbook, "Result", result.cell(total, 2).value) == pytest.approx(100.0)

        header = nutrient_headers[p]
        levels = formulas.mill_levels(p)
        for row, line in zip(table(result, header, len(product.nutrients)), product.nutrients):
            assert row[:3] == [line.name, "as fed", line.unit]
            assert row[5] == pytest.approx(levels[line.name]) and row[6] == line.position
            assert evaluate(workbook, "Result", row[7]) == pytest.approx(line.level, rel=1e-12)
    starter = table(result, ingredient_headers[0], 5, columns=7)
    assert starter[2][5:7] == [0.18, 262]  # rapeseed meal is out of the starter


def test_stocks_table_for_products(tmp_path: Path):
    formula, workbook = written("products", tmp_path)
    result = workbook["Result"]
    title = row_of(result, "Stocks (shared by all products)")
    assert title > max(rows_of(result, "Nutrient"))
    assert result.cell(title + 1, 7).value == "Value of one more unit (EUR)"
    assert table(result, title + 1, 2) == [
        ["Soybean meal", 7000, 7000, "kg", "yes", -0.095, 0.095, "Ingredients!F3"],
        ["Rapeseed meal", 3820, 4000, "kg", "no", 0, 0, "Ingredients!F4"],
    ]


def test_products_shadow_prices_name_the_product(tmp_path: Path):
    formula, workbook = written("products", tmp_path)
    sheet = workbook["Shadow prices"]
    assert "a product's cost (EUR per tonne)" in sheet["A1"].value
    assert "the run's total cost (EUR) for a stock" in sheet["A1"].value
    rows = table(sheet, 3, len(formula.limits), columns=11)
    assert [row[1] for row in rows] == [limit.product for limit in ordered(formula, formula.limits)]
    assert {row[1] for row in rows if row[0] != "stock"} == {name for name, _ in formulas.PRODUCTS}
    stock = next(row for row in rows if row[0] == "stock" and row[7] == "yes")
    assert stock[1:10] == [None, "Soybean meal", None, "max", 7000, 7000, "yes", -0.095,
                           "EUR per 1 kg of stock"]
    oil = next(row for row in rows if row[1] == "Finisher pellet" and row[2] == "Vegetable oil")
    assert oil[4:10] == ["max", 6, 6, "yes", -2.4, "EUR/tonne per 1 % inclusion"]


@pytest.mark.skipif(
    not (shutil.which("soffice") or shutil.which("libreoffice")),
    reason="LibreOffice is not installed",
)
def test_spreadsheet_program_agrees_with_every_scenario(tmp_path: Path):
    # Outside reference: LibreOffice's own formula engine, run headless, on all three
    # scenarios at once: dry-matter and ratio lines, diet totals and product blocks.
    outputs, formulas_by_name = [], {}
    for scenario, (write_source, make, _) in SCENARIOS.items():
        source = write_source(tmp_path / f"{scenario}.xlsx")
        formulas_by_name[scenario] = make()
        outputs.append(write(formulas_by_name[scenario], source, tmp_path / f"{scenario}.out.xlsx"))
    converted = tmp_path / "converted"
    program = shutil.which("soffice") or shutil.which("libreoffice")
    subprocess.run(
        [program, "--headless", f"-env:UserInstallation=file://{tmp_path / 'profile'}",
         "--convert-to", "xlsx", "--outdir", str(converted), *map(str, outputs)],
        check=True, capture_output=True, timeout=300,
    )
    for scenario, formula in formulas_by_name.items():
        result = load_workbook(converted / f"{scenario}.out.xlsx", data_only=True)["Result"]
        blocks = formula.products if formula.several else (formula,)
        for header, block in zip(rows_of(result, "Nutrient"), blocks):
            for offset, line in enumerate(block.nutrients, start=1):
                assert result.cell(header + offset, LIVE).value == pytest.approx(line.level, rel=1e-9)
        label = {"ration": "Blend cost from input prices", "diet": "Diet cost from input prices",
                 "products": "Total cost from input prices"}[scenario]
        assert result.cell(row_of(result, label), 2).value == pytest.approx(formula.cost, rel=1e-9)
        for row, product in zip(rows_of(result, "Cost from input prices"), formula.products):
            assert result.cell(row, 2).value == pytest.approx(product.cost, rel=1e-9)


# --- conflicts of an infeasible run, and broken soft limits ----------------------------------


def conflicts_rows(sheet) -> list[tuple]:
    """Every non-empty row of a sheet as a tuple of its values, trailing blanks dropped."""
    rows = []
    for row in sheet.iter_rows(values_only=True):
        values = list(row)
        while values and values[-1] is None:
            values.pop()
        if values:
            rows.append(tuple(values))
    return rows


def test_conflicts_sheet(source: Path, tmp_path: Path):
    formula = formulas.conflicted_formula()
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    assert workbook.sheetnames == [*INPUT_SHEETS, *INFEASIBLE_SHEETS]
    sheet = workbook["Conflicts"]
    assert sheet["A1"].value == "Meadowbank goat ration: limits that cannot all be met"
    assert sheet["A2"].value == CAUTION
    text = " ".join(str(v) for row in conflicts_rows(sheet)[:8] for v in row if v)
    assert "irreducible set of limits" in text
    assert "drop or move any one of them" in text
    assert "More conflicts may remain after these are fixed" in text
    assert 'Kind "use" is a Use = no' in text and 'Kind "total"' in text

    header = ("Kind", "Name", "Product", "Side", "Bound", "Cell", "Move this bound alone to")
    first, second = rows_of(sheet, "Conflict 1 of 2"), rows_of(sheet, "Conflict 2 of 2")
    assert len(first) == len(second) == 1
    assert sheet.cell(first[0], 1).font.b
    assert table(sheet, first[0], 4, 7) == [
        list(header),
        # The sum-to-100 row comes last, whatever the order it was found in.
        ["nutrient", "Crude protein", None, "min", 26, "Specs!B2", 21.5],
        ["ingredient", "Rapeseed meal", None, "max", 18, "Ingredients!D4", 44.25],
        ["total", "sum of inclusions", None, "=", 100, None, "cannot move: inclusions sum to 100 %"],
    ]
    assert table(sheet, second[0], 4, 7) == [
        list(header),
        ["nutrient", "Calcium", None, "min", 0.8, "Specs!B4", 0.1326],
        ["use", "Limestone", None, "max", 0, "Ingredients!E5", 1.75],
        ["total", "sum of inclusions", None, "=", 100, None, "cannot move: inclusions sum to 100 %"],
    ]
    assert is_number(sheet.cell(first[0] + 2, 7).value)
    assert sheet.cell(first[0] + 3, 7).number_format == "0.000"  # an inclusion limit

    way_out = row_of(sheet, "Least-cost way out")
    assert way_out > second[0]
    assert "Move all of these bounds together" in sheet.cell(way_out + 1, 1).value
    assert table(sheet, way_out + 1, 3, 7) == [
        ["Kind", "Name", "Product", "Side", "Old bound", "Cell", "New bound"],
        ["nutrient", "Crude protein", None, "min", 26, "Specs!B2", 21.5],
        ["use", "Limestone", None, "max", 0, "Ingredients!E5", 1.75],
    ]
    cost = row_of(sheet, "Blend cost once all of them are moved")
    assert sheet.cell(cost, 3).value == pytest.approx(formulas.blend_cost())
    assert sheet.cell(cost, 4).value == "EUR per tonne"
    for row in sheet.iter_rows(values_only=True):
        assert not any(isinstance(v, float) and not math.isfinite(v) for v in row)


def test_one_complete_conflict_is_not_numbered(source: Path, tmp_path: Path):
    formula = formulas.conflicted_formula(complete=True)
    one = tuple(line for line in formula.conflicts if line.conflict == 1)
    relaxation = dataclasses.replace(formula.relaxation, changes=formula.relaxation.changes[:1])
    formula = dataclasses.replace(formula, conflicts=one, relaxation=relaxation)
    sheet = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Conflicts"]
    values = [v for row in conflicts_rows(sheet) for v in row]
    assert "Conflict 1" in values and "Conflict 1 of 1" not in values
    assert not any(isinstance(v, str) and "More conflicts may remain" in v for v in values)
    # No Use = no among the members or changes: no word about it.
    assert not any(isinstance(v, str) and 'Kind "use"' in v for v in values)


def test_conflicts_sheet_without_a_way_out(source: Path, tmp_path: Path):
    formula = dataclasses.replace(formulas.conflicted_formula(), relaxation=None)
    sheet = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Conflicts"]
    way_out = row_of(sheet, "Least-cost way out")
    assert sheet.cell(way_out + 1, 1).value.startswith("No way out was found")
    assert sheet.max_row == way_out + 1


def test_a_way_out_whose_blend_did_not_solve(source: Path, tmp_path: Path):
    formula = formulas.conflicted_formula()
    formula = dataclasses.replace(formula, relaxation=dataclasses.replace(formula.relaxation, formula=None))
    sheet = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Conflicts"]
    cost = row_of(sheet, "Blend cost once all of them are moved")
    assert sheet.cell(cost, 3).value.startswith("unknown")


def test_infeasible_without_conflicts_still_gets_the_sheet(source: Path, tmp_path: Path):
    sheet = load_workbook(write(formulas.infeasible_formula(), source, tmp_path / "out.xlsx"))["Conflicts"]
    values = [v for row in conflicts_rows(sheet) for v in row]
    assert "No conflicting set of limits was found for this run." in values


def test_result_points_to_the_conflicts_sheet(source: Path, tmp_path: Path):
    formula = formulas.conflicted_formula()
    result = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Result"]
    assert result["B4"].value == "infeasible"
    assert result["A6"].value == "Conflicts"
    assert result["B6"].value == ("See the Conflicts sheet: 2 sets of limits that cannot all hold "
                                  "together, their cells, and the least-cost way out.")
    assert result["B6"].hyperlink.location == "Conflicts!A1"
    assert formula.notes[0] in [c.value for row in result.iter_rows() for c in row]


def test_no_conflicts_sheet_or_pointer_when_solved(source: Path, tmp_path: Path):
    workbook = load_workbook(write(formulas.optimal_formula(), source, tmp_path / "out.xlsx"))
    assert "Conflicts" not in workbook.sheetnames
    assert workbook["Result"]["A6"].value == "Blend cost"


def test_conflicts_sheet_is_removed_when_the_workbook_is_solved_again(source: Path, tmp_path: Path):
    output = tmp_path / "out.xlsx"
    write(formulas.conflicted_formula(), source, output)
    assert load_workbook(output).sheetnames == [*INPUT_SHEETS, *INFEASIBLE_SHEETS]
    write(formulas.conflicted_formula(), source, output)  # infeasible again: replaced
    assert load_workbook(output).sheetnames == [*INPUT_SHEETS, *INFEASIBLE_SHEETS]
    write(formulas.optimal_formula(), source, output)  # feasible now: removed
    assert load_workbook(output).sheetnames == [*INPUT_SHEETS, *SOLVED_SHEETS]
    # Also when the output of the infeasible run is itself solved again.
    first = write(formulas.conflicted_formula(), source, tmp_path / "first.xlsx")
    second = write(formulas.optimal_formula(), first, tmp_path / "second.xlsx")
    assert load_workbook(second).sheetnames == [*INPUT_SHEETS, *SOLVED_SHEETS]


def test_broken_soft_limits_block_on_result(source: Path, tmp_path: Path):
    formula = formulas.soft_formula()
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    result = workbook["Result"]
    block = row_of(result, "Soft specs not met: 1")
    assert block == row_of(result, "Spec check") + 2  # right under the top block
    assert result.cell(block, 2).value == ("Meeting it would cost more than its "
                                           "penalty. Check that this is acceptable.")
    assert [result.cell(block + 1, c).value for c in range(1, 8)] == [
        "Soft limit", "Side", "Bound", "Level", "Violation (shortfall or excess)",
        "Penalty (EUR per tonne per unit of violation)", "Bound read from"]
    row = [result.cell(block + 2, c).value for c in range(1, 8)]
    assert row[:2] == ["Crude protein", "min"]
    assert row[2:6] == pytest.approx([18.5, 17.12, 1.38, 6.0])
    assert row[6] == "Specs!B2"
    assert result.cell(block, 1).font.b
    assert result.cell(block + 2, 4).fill.fgColor.rgb.endswith("FCE4D6")  # highlighted
    # The tables follow on page two, their live formulas still right; the notes skip the
    # soft limit.
    assert row_of(result, "Ingredient") > row_of(result, "Date") > block
    header = row_of(result, "Nutrient")
    protein = result.cell(header + 1, LIVE).value
    assert evaluate(workbook, "Result", protein) == pytest.approx(formulas.levels()["Crude protein"])
    cost_check = result.cell(row_of(result, "Blend cost from input prices"), 2).value
    assert evaluate(workbook, "Result", cost_check) == pytest.approx(formula.cost)
    notes = row_of(result, "Notes")
    assert result.cell(notes + 1, 1).value == formulas.NOTES[0]
    values = [c.value for r in result.iter_rows() for c in r]
    assert formulas.SOFT_NOTE in formula.notes and formulas.SOFT_NOTE not in values
    assert result.freeze_panes == "B1"  # page one is long: only the name column stays


def test_broken_soft_limits_of_products_name_the_product(tmp_path: Path):
    source = formulas.write_mill_source(tmp_path / "mill.xlsx")
    workbook = load_workbook(write(formulas.soft_mill_formula(), source, tmp_path / "out.xlsx"))
    result = workbook["Result"]
    block = row_of(result, "Soft specs not met: 1")
    assert block == row_of(result, "Spec check") + 2
    assert result.cell(block + 1, 2).value == "Product"
    row = [result.cell(block + 2, c).value for c in range(1, 9)]
    assert row[:3] == ["Energy", "Grower pellet", "min"]
    assert row[3:7] == pytest.approx([12.7, 12.5, 0.2, 3.5])
    assert row[7] == "Specs!B6"
    assert row_of(result, "Product") > row_of(result, "Date") > block
    assert result.cell(block + 3, 1).value is None  # listed once, not again for its product


def test_no_soft_limits_block_when_every_limit_is_met(source: Path, tmp_path: Path):
    result = load_workbook(write(formulas.optimal_formula(), source, tmp_path / "out.xlsx"))["Result"]
    assert not any(str(c.value).startswith("Soft specs not met") for row in result.iter_rows() for c in row)
    assert row_of(result, "Ingredient") > row_of(result, "Date")  # page two


def test_cli_writes_the_conflicts_sheet_of_an_infeasible_workbook(tmp_path: Path):
    # The "Hilltop Hens" layer mash asked for 40 % protein: with soybean meal capped at
    # 30 % and limestone at least 5 %, about 20 % is the most the feeds can give.
    from typer.testing import CliRunner

    from blendkit.cli import app
    from tests.workbooks import INGREDIENTS, SPECS, make_workbook

    specs = [row[:] for row in SPECS]
    specs[1][1] = 40
    book = make_workbook(tmp_path, INGREDIENTS, specs, name="hens.xlsx")
    result = CliRunner().invoke(app, ["solve", str(book)])
    assert result.exit_code == 3, result.output
    assert "These limits cannot all hold together:" in result.stdout
    assert "Specs!B2  Crude protein  min 40" in result.stdout
    workbook = load_workbook(tmp_path / "hens.result.xlsx")
    assert workbook.sheetnames == ["Ingredients", "Specs", *INFEASIBLE_SHEETS]
    sheet = workbook["Conflicts"]
    protein = [row for row in sheet.iter_rows(values_only=True) if "Specs!B2" in row]
    assert protein and protein[0][:5] == ("nutrient", "Crude protein", None, "min", 40)
    assert workbook["Result"]["B6"].value.startswith("See the Conflicts sheet")


# --- a solve copies the workbook the reader loaded ------------------------------------------


def _stored(path: Path, data_only: bool) -> dict[str, dict[tuple[int, int], object]]:
    """Every stored cell of every sheet, as openpyxl loads it (formulas, or saved results)."""
    workbook = load_workbook(path, data_only=data_only)
    return {sheet.title: {key: cell.value for key, cell in sheet._cells.items() if cell.value is not None}
            for sheet in workbook.worksheets}


def _assert_inputs_kept(source: Path, output: Path) -> None:
    """Every input sheet is in the output with every cell as openpyxl reads it in the
    input: formulas as written, and the saved results of the formula cells."""
    for data_only in (False, True):
        before, after = _stored(source, data_only), _stored(output, data_only)
        for title, cells in before.items():
            assert after[title] == cells, (title, data_only)


SAMPLE_BOOKS = sorted((Path(__file__).resolve().parents[1] / "sample_workbooks").glob("*.xlsx"))


@pytest.mark.parametrize("sample", SAMPLE_BOOKS, ids=lambda path: path.stem)
def test_a_solved_sample_keeps_every_input_cell(sample: Path, tmp_path: Path):
    # Outside reference: openpyxl's own load of the input file.
    from blendkit.pipeline import solve_workbook

    source = tmp_path / sample.name
    shutil.copyfile(sample, source)
    outcome = solve_workbook(source, tmp_path / "out.xlsx", check=False)
    _assert_inputs_kept(source, outcome.output)


def test_a_generated_big_book_keeps_every_input_cell(tmp_path: Path):
    # The benchmark's workbook at a test's size, with a formula cell and its saved result
    # added, solved the way `blendkit solve` does (the reader's load copied, not reloaded).
    from blendkit.bench.books import books_workbook
    from blendkit.pipeline import solve_workbook

    source = books_workbook(tmp_path / "book.xlsx", 120, 30)
    workbook = load_workbook(source)
    cost = workbook["Ingredients"]["B3"].value
    workbook["Ingredients"]["B3"] = f"={cost}*1"
    workbook.save(source)
    store_saved_values(source, "Ingredients", {"B3": cost})
    outcome = solve_workbook(source, tmp_path / "out.xlsx", check=False)
    assert outcome.formula.status == "optimal"
    _assert_inputs_kept(source, outcome.output)
    assert load_workbook(outcome.output, data_only=True)["Ingredients"]["B3"].value == cost


def test_saved_text_is_escaped_as_the_standard_library_escapes_it():
    # Outside reference: xml.sax.saxutils.escape, which the writer no longer imports (it
    # brings in urllib and http at start-up).
    from xml.sax.saxutils import escape

    from blendkit.write.workbook.saved_results import _xml_escape

    for text in ["a<b>", "&amp;", "x > y & z < w", "plain", "", "<<&>>", "&lt;"]:
        assert _xml_escape(text) == escape(text)

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

import blendkit.write_workbook
from blendkit import CAUTION
from blendkit.read_workbook import read_workbook
from blendkit.write_workbook import OUTPUT_SHEETS, write_workbook
from tests import formulas
from tests.workbooks import store_saved_values

INPUT_SHEETS = ["Ingredients", "Specs", "Settings"]


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


def row_of(sheet, label: str, column: int = 1) -> int:
    """The first row whose cell in `column` reads `label`."""
    for row in range(1, sheet.max_row + 1):
        if sheet.cell(row, column).value == label:
            return row
    raise AssertionError(f"no {label!r} in column {column} of {sheet.title}")


# --- a tiny evaluator for the live formulas we emit: numbers, cell references,
# + - * /, parentheses and SUM over a range. Enough to check them without a spreadsheet.

_TOKEN = re.compile(
    r"\s*(?:(?P<ref>(?:'(?:[^']|'')+'|[A-Za-z_][A-Za-z0-9_]*)!\$?[A-Z]+\$?\d+"
    r"|\$?[A-Z]+\$?\d+(?::\$?[A-Z]+\$?\d+)?)"
    r"|(?P<sum>SUM)\(|(?P<num>\d+(?:\.\d*)?(?:[eE][-+]?\d+)?)|(?P<op>[-+*/()]))"
)


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
    # Checked by hand against the cells of `_tiny_workbook`.
    workbook = load_workbook(_tiny_workbook())
    assert evaluate(workbook, "S", "=(A1*'My sheet'!B2+A2*3)/4-1") == pytest.approx(
        (2 * 5 + 3 * 3) / 4 - 1
    )
    assert evaluate(workbook, "S", "=SUM(A1:A2)*2") == 10.0


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
    assert workbook.sheetnames == [*INPUT_SHEETS, *OUTPUT_SHEETS]
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
    assert load_workbook(second).sheetnames == [*INPUT_SHEETS, *OUTPUT_SHEETS]
    for name in [*INPUT_SHEETS, *OUTPUT_SHEETS]:
        if name != "Run info":  # the recorded input file differs, by design
            assert cell_values(second, name) == cell_values(first, name), name


def test_output_sheets_matched_whatever_their_case(tmp_path: Path):
    source = formulas.write_source(tmp_path / "in.xlsx", extra_sheets=("RESULT", "shadow PRICES"))
    output = write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    names = load_workbook(output).sheetnames
    assert [n.casefold() for n in names].count("result") == 1
    assert names == [*INPUT_SHEETS, *OUTPUT_SHEETS]


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
    result = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Result"]
    header = row_of(result, "Ingredient")
    labels = [result.cell(header, c).value for c in range(1, 8)]
    assert labels[:2] == ["Ingredient", "Inclusion (%)"]
    assert "kg" in labels[2] and "EUR" in labels[3]
    assert all(result.cell(header, c).font.b for c in range(1, 8))
    for offset, line in enumerate(formula.ingredients, start=1):
        row = header + offset
        assert result.cell(row, 1).value == line.name
        numbers = [result.cell(row, c).value for c in range(2, 7)]
        expected = [line.inclusion, line.amount, line.batch_cost, line.cost, line.reduced_cost]
        assert numbers == pytest.approx(expected)
        assert all(is_number(v) for v in numbers)
    assert result.cell(header + 1, 2).number_format == "0.000"
    wheat = row_of(result, "Wheat feed")
    assert result.cell(wheat, 7).value == 195.0
    assert result.cell(row_of(result, "Barley"), 7).value is None  # in the blend: no entry price
    assert "Use = no" in result.cell(row_of(result, "Oat hulls"), 7).value
    assert result.freeze_panes == f"B{header + 1}"


def test_nutrient_table_numbers(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    result = load_workbook(write(formula, source, tmp_path / "out.xlsx"))["Result"]
    header = row_of(result, "Nutrient")
    assert [result.cell(header, c).value for c in range(1, 7)] == [
        "Nutrient", "Unit", "Min", "Max", "Level", "Position"]
    for offset, line in enumerate(formula.nutrients, start=1):
        row = header + offset
        texts = [result.cell(row, c).value for c in (1, 2, 6)]
        assert texts == [line.name, line.unit, line.position]
        assert result.cell(row, 3).value == line.minimum
        assert result.cell(row, 4).value == line.maximum
        assert result.cell(row, 5).value == pytest.approx(line.level)
    assert result.cell(row_of(result, "Notes"), 1).font.b
    assert result.cell(row_of(result, "Notes") + 1, 1).value == formulas.NOTES[0]


def test_live_formulas_recompute_levels_and_cost(source: Path, tmp_path: Path):
    formula = formulas.optimal_formula()
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    result = workbook["Result"]
    header = row_of(result, "Nutrient")
    for offset, line in enumerate(formula.nutrients, start=1):
        text = result.cell(header + offset, 7).value
        # Plain arithmetic and cell references only, so any spreadsheet program agrees.
        assert re.fullmatch(r"=\(B\d+\*Ingredients!\$?[A-Z]+\d+(\+B\d+\*Ingredients!"
                            r"[A-Z]+\d+)*\)/100", text), text
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
    text = result.cell(row_of(result, "Nutrient") + 1, 7).value
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
        assert result.cell(header + offset, 7).value == pytest.approx(line.level, rel=1e-9)
    cost_row = row_of(result, "Blend cost from input prices")
    assert result.cell(cost_row, 2).value == pytest.approx(formula.cost, rel=1e-9)
    total = row_of(result, "Total")
    assert result.cell(total, 2).value == pytest.approx(100.0)


def test_not_optimal_shows_status_and_no_tables(source: Path, tmp_path: Path):
    formula = formulas.infeasible_formula()
    workbook = load_workbook(write(formula, source, tmp_path / "out.xlsx"))
    assert workbook.sheetnames == [*INPUT_SHEETS, *OUTPUT_SHEETS]
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
    for row, limit in zip(rows, formula.limits):
        kind, name, side, bound, level, binding, shadow, unit, cell = row
        assert (kind, name, side, cell) == (limit.kind, limit.name, limit.side, limit.cell)
        assert bound == limit.bound and level == pytest.approx(limit.level)
        assert binding == ("yes" if limit.binding else "no")
        assert shadow == limit.shadow_price and is_number(shadow)
    assert rows[0][7] == "EUR/tonne per 1 unit of Crude protein (%)"
    assert rows[5][7] == "EUR/tonne per 1 % inclusion"


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
    def broken_save(self, filename):
        raise OSError("disk full")

    monkeypatch.setattr(Workbook, "save", broken_save)
    with pytest.raises(OSError, match="disk full"):
        write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    assert list(tmp_path.iterdir()) == [source]


def test_failed_move_removes_the_temporary_file(source: Path, tmp_path: Path, monkeypatch):
    # The temporary file is complete by now; the failure is in moving it into place.
    def broken_replace(src, dst):
        assert Path(src).parent == tmp_path and Path(src).stat().st_size > 0
        raise PermissionError("output is open in another program")

    monkeypatch.setattr(blendkit.write_workbook.os, "replace", broken_replace)
    with pytest.raises(PermissionError):
        write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    assert list(tmp_path.iterdir()) == [source]


def test_failed_save_keeps_the_previous_output(source: Path, tmp_path: Path, monkeypatch):
    output = write(formulas.optimal_formula(), source, tmp_path / "out.xlsx")
    before = output.read_bytes()

    def broken_save(self, filename):
        raise OSError("disk full")

    monkeypatch.setattr(Workbook, "save", broken_save)
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
    for sheet in OUTPUT_SHEETS:
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
    calcium = row_of(result, "Calcium")
    text = result.cell(calcium, 7).value
    assert "Ingredients!H5*100" in text and "Ingredients!H4*100" not in text
    expected = next(line.level for line in formula.nutrients if line.name == "Calcium")
    assert evaluate(workbook, "Result", text) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    "number_format",
    ["General", "0%", "0.00%", '0.0" %"', "0\\%", "[Red]0.0", "[$%-409]0.0", "#,##0.00",
     "0.0%;-0.0%"],
)
def test_percent_rule_matches_the_reader(number_format: str):
    from blendkit.read_workbook import _is_percent_format
    from blendkit.write_workbook import _scaled_as_percent

    assert _scaled_as_percent(1.0, number_format) == _is_percent_format(number_format)


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

"""The blank template and `write_new`: sheets, drop-down lists, look, never overwriting.

The template is checked with openpyxl alone and solved with an independent HiGHS
formulation (tests/test_examples.py); reading it with blendkit's reader is checked last.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from openpyxl import load_workbook

from blendkit import CAUTION
from blendkit.authoring.examples import EXAMPLES, write_example
from blendkit.authoring.template import main, write_new, write_template
from tests.test_examples import assert_specs_met, formulate_with_highs, records

TEMPLATES = Path(__file__).resolve().parent.parent / "templates"

# The HiGHS optimum of the template's example rows, in cost per tonne. Change it together
# with the rows.
TEMPLATE_COST = 240.303656

SHEETS = ["Read me", "Ingredients", "Specs", "Combined", "Groups", "Products", "Limits", "Settings", "Notes"]


@pytest.fixture(scope="module")
def template(tmp_path_factory) -> Path:
    """The blank template written to a fresh file, once for this module's read-only tests."""
    return write_template(tmp_path_factory.mktemp("template") / "blank.xlsx")


def validations(sheet) -> dict[str, str]:
    """Each list validation's cell range -> its choices, as written in the sheet."""
    return {str(v.sqref): v.formula1 for v in sheet.data_validations.dataValidation if v.type == "list"}


def test_sheets_headers_and_look(template: Path):
    book = load_workbook(template)
    assert book.sheetnames == SHEETS
    headers = {sheet.title: [c.value for c in sheet[1] if c.value is not None] for sheet in book}
    assert headers["Ingredients"][:7] == ["Ingredient", "Cost (per t)", "Min (%)", "Max (%)", "Use", "Unit", "Stock (kg)"]
    assert headers["Specs"] == ["Nutrient", "Basis", "Min", "Max", "Product", "Penalty", "Priority", "Step", "Margin"]
    assert headers["Groups"] == ["Group", "Ingredients", "Min (%)", "Max (%)", "Product", "Priority"]
    assert headers["Ingredients"][7:10] == ["Min if used (%)", "Pack size (kg)", "Scale step (kg)"]
    assert headers["Products"] == ["Product", "Amount (kg)", "Max ingredients"]
    assert headers["Limits"] == ["Product", "Ingredient", "Min (%)", "Max (%)", "Priority", "Min if used (%)",
                                 "Pack size (kg)"]
    assert headers["Settings"] == ["Setting", "Value"]
    for sheet in book:
        assert sheet.freeze_panes in ("A2", "B2"), sheet.title
        assert all(cell.font.bold for cell in sheet[1] if cell.value is not None), sheet.title
        widths = [sheet.column_dimensions[c.column_letter].width for c in sheet[1] if c.value is not None]
        assert all(width >= 10 for width in widths), sheet.title
    assert book["Ingredients"]["B2"].number_format == "#,##0.00"
    assert book["Ingredients"]["H3"].number_format == "0.00##"
    assert book["Specs"]["C20"].number_format == "0.00##"  # rows still to be typed, too


def test_drop_down_lists(template: Path):
    book = load_workbook(template)
    assert validations(book["Ingredients"]) == {"E2:E500": '"yes,no"'}
    assert validations(book["Specs"]) == {"B2:B500": '"as fed,dry matter"'}
    settings = validations(book["Settings"])
    mode_row = next(c.row for c in book["Settings"]["A"] if c.value == "Mode")
    assert settings[f"B{mode_row}"] == '"blend,diet"'
    assert book["Settings"][f"B{mode_row}"].value == "blend"


def test_example_rows_show_each_construct(template: Path):
    specs = records(template, "Specs")
    assert any("/" in spec["nutrient"] for spec in specs)  # a ratio
    assert any(spec["basis"] == "dry matter" for spec in specs)
    assert len(records(template, "Groups")) == 1
    assert all("(example row)" in row["ingredient"] for row in records(template, "Ingredients"))
    assert records(template, "Products") == [] and records(template, "Limits") == []


def test_read_me_explains_every_sheet_and_column_and_the_caution(template: Path):
    text = " ".join(str(value) for row in load_workbook(template)["Read me"].values for value in row if value)
    for sheet in SHEETS[1:-1]:
        assert f"{sheet} sheet" in text, sheet
    for word in ("Ingredient", "Cost", "Min", "Max", "Use", "Unit", "Stock", "Basis", "A / B",
                 "commas or semicolons", "Amount", "Mode", "Batch size", "Mass unit", "Cost per",
                 "Currency", "Dry matter", "diet", "Penalty", "Priority", "Min if used", "Pack size",
                 "Scale step", "Max ingredients", "Hand-add below", "Time limit"):  # fmt: skip
        assert word in text, word
    assert CAUTION in text
    notes = [row[0] for row in load_workbook(template)["Notes"].values]
    assert CAUTION in notes


def test_template_as_written_solves_with_highs(template: Path):
    # Reference: scipy.optimize.linprog with HiGHS, independent of blendkit's engine.
    reference = formulate_with_highs(template)
    assert reference.result.status == 0, reference.result.message
    assert reference.result.fun == pytest.approx(TEMPLATE_COST, rel=1e-6)
    binding = {text for _, text in assert_specs_met(reference)}
    assert {"Crude protein", "Calcium / Phosphorus"} <= binding  # the dry-matter and ratio rows bite


def test_write_new_writes_the_template_or_an_example(tmp_path: Path):
    blank = write_new(tmp_path / "new.xlsx")
    assert load_workbook(blank).sheetnames == SHEETS
    plant = write_new(tmp_path / "plant.xlsx", "plant")
    reference = write_example(tmp_path / "reference.xlsx", "plant")
    fresh, expected = load_workbook(plant), load_workbook(reference)
    assert fresh.sheetnames == expected.sheetnames
    for sheet in expected.sheetnames:
        assert list(fresh[sheet].values) == list(expected[sheet].values), sheet


def test_write_new_refuses_to_overwrite(tmp_path: Path):
    existing = tmp_path / "mine.xlsx"
    existing.write_bytes(b"someone's work")
    with pytest.raises(FileExistsError):
        write_new(existing)
    with pytest.raises(FileExistsError):
        write_new(existing, "diet")
    assert existing.read_bytes() == b"someone's work"
    with pytest.raises(FileExistsError):
        write_new(tmp_path)  # a directory is not replaced either


def test_write_new_unknown_example_writes_nothing(tmp_path: Path):
    with pytest.raises(KeyError, match="broiler"):  # the message lists the examples
        write_new(tmp_path / "x.xlsx", "no such example")
    assert not (tmp_path / "x.xlsx").exists()
    assert set(EXAMPLES) >= {"broiler", "layer", "diet", "fertilizer", "plant"}


def test_main_writes_the_template(tmp_path: Path, capsys):
    main([str(tmp_path / "t.xlsx")])
    assert load_workbook(tmp_path / "t.xlsx").sheetnames == SHEETS
    assert capsys.readouterr().out.strip() == str(tmp_path / "t.xlsx")


def test_committed_template_is_current(template: Path):
    stored = TEMPLATES / "blank.xlsx"
    assert stored.is_file(), "run: python -m blendkit.authoring.template templates/blank.xlsx"
    fresh_book, stored_book = load_workbook(template), load_workbook(stored)
    assert stored_book.sheetnames == fresh_book.sheetnames
    for sheet in fresh_book.sheetnames:
        assert list(stored_book[sheet].values) == list(fresh_book[sheet].values), (
            f"{stored} is out of date: run python -m blendkit.authoring.template templates/blank.xlsx"
        )
        assert validations(stored_book[sheet]) == validations(fresh_book[sheet]), sheet


def test_template_reads_and_solves_in_blendkit(template: Path):
    from blendkit.pipeline import formulate
    from blendkit.read.workbook import read_workbook

    blend = read_workbook(template)
    assert len(blend.ingredients) == 3 and len(blend.groups) == 1 and blend.products == ()
    assert {spec.basis for spec in blend.specs} == {"as fed", "dry matter"}
    assert any(spec.ratio for spec in blend.specs)
    formula = formulate(blend)
    assert formula.status == "optimal", formula.message
    assert formula.cost == pytest.approx(TEMPLATE_COST, rel=1e-6)

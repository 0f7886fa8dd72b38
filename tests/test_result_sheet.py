"""The Result sheet a reviewer signs: page one, live spec checks, clean numbers, charts.

The live formulas are checked by an outside reference: LibreOffice's own formula engine,
run headless (`soffice --convert-to xlsx` recalculates every formula on load).
"""

from __future__ import annotations

import math
import os
import re
import shutil
import subprocess
import zipfile
from pathlib import Path

import pytest
from openpyxl import load_workbook

from blendkit import CAUTION
from blendkit.model.steps import step_for
from blendkit.pipeline import solve_workbook
from blendkit.write.workbook.spec_checks import ALL_MET, BROKEN

SAMPLES = Path(__file__).resolve().parent.parent / "sample_workbooks"
SAMPLE_NAMES = sorted(path.stem for path in SAMPLES.glob("*.xlsx"))
PROGRAM = shutil.which("soffice") or shutil.which("libreoffice")
# Under CI the LibreOffice checks must run: a missing program is a failure there.
needs_libreoffice = pytest.mark.skipif(
    PROGRAM is None and os.environ.get("CI") != "true", reason="LibreOffice is not installed")
LIVE, CHECK = 8, 9  # the nutrient table's live level and check columns (H, I)


def row_of(sheet, label: str, column: int = 1, below: int = 0) -> int:
    """The first row (after row `below`) whose cell in `column` reads `label`."""
    for row in range(below + 1, sheet.max_row + 1):
        if sheet.cell(row, column).value == label:
            return row
    raise AssertionError(f"no {label!r} in column {column} of {sheet.title}")


def rows_of(sheet, label: str, column: int = 1) -> list[int]:
    """Every row whose cell in `column` reads `label`."""
    return [row for row in range(1, sheet.max_row + 1) if sheet.cell(row, column).value == label]


def recalculate(paths: list[Path], folder: Path) -> Path:
    """Every workbook in `paths` opened, recalculated and saved again by LibreOffice."""
    assert PROGRAM, "LibreOffice is needed here (CI=true)"
    converted = folder / "converted"
    subprocess.run(
        [PROGRAM, "--headless", f"-env:UserInstallation=file://{folder / 'profile'}",
         "--convert-to", "xlsx", "--outdir", str(converted), *map(str, paths)],
        check=True, capture_output=True, timeout=600,
    )
    return converted


@pytest.fixture(scope="module")
def outputs(tmp_path_factory) -> dict[str, Path]:
    """Every sample workbook solved, by name."""
    folder = tmp_path_factory.mktemp("samples")
    written = {}
    for name in SAMPLE_NAMES:
        written[name] = folder / f"{name}.out.xlsx"
        solve_workbook(SAMPLES / f"{name}.xlsx", written[name], check=False)
    return written


# --- steps ------------------------------------------------------------------------------


def test_steps_fit_the_unit():
    # The table documented in the README.
    assert step_for("%", "nutrient", 21.5) == 0.01
    assert step_for("MJ/kg", "nutrient", 12.55) == 0.1
    assert step_for("kcal/kg", "nutrient", 3000) == 10
    assert step_for("mg/kg", "nutrient", 80) == step_for("ppm", "nutrient", 80) == 1
    assert step_for("g/kg", "nutrient", 8) == 1
    assert step_for("", "ratio", 0.65) == 0.01
    assert step_for("%", "ingredient", 4) == 0.1
    assert step_for("kcal", "nutrient", 2400) == pytest.approx(24)  # 1 % of the bound
    assert step_for("t", "stock", 0) == 1


# --- page one ---------------------------------------------------------------------------


def test_first_page_tells_the_story(outputs):
    sheet = load_workbook(outputs["broiler_starter"])["Result"]
    assert sheet["A2"].value == CAUTION
    assert sheet["B4"].value == "optimal"
    check = row_of(sheet, "Spec check")
    assert sheet.cell(check, 2).value.startswith("=IF(")
    binding = row_of(sheet, "Binding limits")
    labels = [sheet.cell(binding + 1, c).value for c in range(1, 10)]
    assert labels == ["Limit", "Kind", "Side", "Bound", "Unit", "Step", "Shadow price",
                      "Cost of a step", "Cost unit"]
    worth = []
    row = binding + 2
    while sheet.cell(row, 1).value:
        worth.append(sheet.cell(row, 8).value)
        shadow, step = sheet.cell(row, 7).value, sheet.cell(row, 6).value
        assert worth[-1] == pytest.approx(abs(shadow * step), rel=1e-9)
        row += 1
    assert worth and worth == sorted(worth, reverse=True)
    # ME is a bound in MJ/kg: one step is 0.1 MJ/kg.
    me = row_of(sheet, "ME", below=binding)
    assert [sheet.cell(me, c).value for c in (5, 6)] == ["MJ/kg", 0.1]
    signed = [row_of(sheet, label) for label in ("Prepared by", "Checked by", "Date")]
    assert signed == [signed[0], signed[0] + 1, signed[0] + 2]
    assert row_of(sheet, "Notes") < signed[0] < row_of(sheet, "Ingredient")
    assert signed[0] + 3 in [item.id for item in sheet.row_breaks.brk]  # tables on page two


@pytest.mark.parametrize("name", SAMPLE_NAMES)
def test_first_page_fits_one_printed_page(outputs, name: str):
    # About 48 rows of default height fit a landscape page printed one page wide; the
    # binding limits beyond the first 20 are left to the Shadow prices sheet.
    sheet = load_workbook(outputs[name])["Result"]
    page_break = min(item.id for item in sheet.row_breaks.brk)
    assert page_break <= 48, (name, page_break)
    assert page_break == row_of(sheet, "Date") + 1  # page two starts after a blank row


def test_ingredient_limits_that_bind_are_marked(outputs):
    sheet = load_workbook(outputs["broiler_starter"])["Result"]
    header = row_of(sheet, "Ingredient")
    assert sheet.cell(header, 10).value == "Limit"
    wheat = row_of(sheet, "Wheat", below=header)
    assert sheet.cell(wheat, 10).value == "at max"
    maize = row_of(sheet, "Maize", below=header)
    assert sheet.cell(maize, 10).value is None
    # The sample holds fish meal out (Use = no) and fixes the premix (Min = Max = 0.5 %).
    fish = row_of(sheet, "Fish meal 65", below=header)
    assert sheet.cell(fish, 10).value == "held at 0 (Use = no)"
    premix = row_of(sheet, "Vitamin-mineral premix", below=header)
    assert sheet.cell(premix, 10).value == "fixed (min = max)"


# --- live checks, recalculated by LibreOffice --------------------------------------------


@needs_libreoffice
def test_libreoffice_agrees_with_every_sample(outputs, tmp_path: Path):
    # Outside reference: LibreOffice recalculates every live formula of every sample's
    # Result sheet; each must match the value blendkit wrote beside it, and no check is on.
    converted = recalculate(list(outputs.values()), tmp_path)
    for name, path in outputs.items():
        sheet = load_workbook(converted / path.name, data_only=True)["Result"]
        assert sheet.cell(row_of(sheet, "Spec check"), 2).value == ALL_MET, name
        checked = 0
        for header in rows_of(sheet, "Nutrient"):
            row = header + 1
            while sheet.cell(row, 1).value:
                live, level = sheet.cell(row, LIVE).value, sheet.cell(row, 6).value
                if isinstance(live, (int, float)):
                    assert live == pytest.approx(level, rel=1e-9, abs=1e-12), (name, row)
                    assert sheet.cell(row, CHECK).value == "ok", (name, row)
                    checked += 1
                row += 1
        assert checked, name
        assert_amounts_shown(sheet, name)
        for label in ("Blend cost", "Diet cost", "Total cost", "Cost"):
            for row in rows_of(sheet, label):
                live = sheet.cell(row + 1, 2).value
                assert live == pytest.approx(sheet.cell(row, 2).value, rel=1e-9), (name, label)


@needs_libreoffice
def test_a_broken_spec_turns_its_check_on(outputs, tmp_path: Path):
    # Outside reference: LibreOffice. Taking the maize out of the broiler starter drops
    # its energy below the minimum; the ME check and the overall check must turn on.
    path = outputs["broiler_starter"]
    workbook = load_workbook(path)
    sheet = workbook["Result"]
    header = row_of(sheet, "Ingredient")
    sheet.cell(row_of(sheet, "Maize", below=header), 2).value = 0
    edited = tmp_path / "edited.xlsx"
    workbook.save(edited)
    sheet = load_workbook(recalculate([edited], tmp_path) / "edited.xlsx", data_only=True)["Result"]
    overall = sheet.cell(row_of(sheet, "Spec check"), 2).value
    assert overall != ALL_MET and overall.endswith("spec(s) broken")
    me = row_of(sheet, "ME", below=row_of(sheet, "Nutrient"))
    assert sheet.cell(me, CHECK).value == BROKEN
    assert int(overall.split()[0]) == sum(
        1 for row in sheet.iter_rows(min_col=CHECK, max_col=CHECK, values_only=True)
        if row[0] == BROKEN)


def test_check_cells_are_coloured_when_on(outputs):
    sheet = load_workbook(outputs["broiler_starter"])["Result"]
    rules = [rule for ranges in sheet.conditional_formatting for rule in ranges.rules]
    assert any(rule.type == "cellIs" and rule.formula == [f'"{BROKEN}"'] for rule in rules)
    assert any(rule.type == "expression" for rule in rules)  # the overall check


# --- clean numbers and layout -----------------------------------------------------------


@pytest.mark.parametrize("name", SAMPLE_NAMES)
def test_no_float_noise_or_e_notation(outputs, name: str):
    sheet = load_workbook(outputs[name])["Result"]
    for row in sheet.iter_rows():
        for cell in row:
            value = cell.value
            if isinstance(value, float):
                # At most 12 significant digits: no 0.9500000000000001, no 8.88e-16.
                assert float(f"{value:.12g}") == value, (cell.coordinate, value)
                assert value == 0 or abs(value) >= 1e-12, (cell.coordinate, value)
            assert "E" not in re.sub(r'"[^"]*"', "", cell.number_format or ""), cell.coordinate


def assert_amounts_shown(sheet, name: str) -> None:
    """No nonzero inclusion, amount or cost in an ingredient table shows as 0.00 in its
    format; the live amounts add up to the batch (the amount made)."""
    headers = rows_of(sheet, "Ingredient") + rows_of(sheet, "Food")  # a diet says Food
    assert headers, name
    for header in headers:
        if sheet.cell(header, 10).value != "Limit":
            continue  # the stocks table
        total = row_of(sheet, "Total", below=header)
        amounts = sheet.cell(total, 3).value
        if isinstance(amounts, (int, float)):  # a blend: amounts in one mass unit
            made = sheet.cell(header - 4, 2).value if sheet.cell(header - 4, 1).value == (
                "Amount made") else sheet.cell(row_of(sheet, "Batch"), 2).value
            assert amounts == pytest.approx(made, rel=1e-9), name
        row = header + 1
        while sheet.cell(row, 1).value not in (None, "Total"):
            for column in (2, 3, 4):
                cell = sheet.cell(row, column)
                if isinstance(cell.value, float) and cell.value:
                    places = len(cell.number_format.partition(".")[2])
                    assert round(abs(cell.value), places) > 0, (name, cell.coordinate)
            row += 1


@pytest.mark.parametrize("name", SAMPLE_NAMES)
def test_columns_fit_their_content(outputs, name: str):
    sheet = load_workbook(outputs[name])["Result"]
    widths = {letter: dimension.width for letter, dimension in sheet.column_dimensions.items()}
    for column in range(1, sheet.max_column + 1):
        letter = sheet.cell(1, column).column_letter
        assert widths.get(letter, 13) >= 8, (name, letter)  # no zero-width column
    for header in rows_of(sheet, "Ingredient") + rows_of(sheet, "Food") + rows_of(sheet, "Nutrient"):
        for column in range(1, sheet.max_column + 1):
            label = sheet.cell(header, column).value
            if label:
                width = widths.get(sheet.cell(header, column).column_letter, 13)
                assert math.ceil(len(label) / (width - 1)) <= 5, (name, label, width)


def test_a_diet_shows_grams_where_the_unit_is_100_g(outputs):
    # "1.000 100 g" reads badly: the Measure column shows the amount in grams, live.
    sheet = load_workbook(outputs["day_menu"])["Result"]
    header = row_of(sheet, "Food")  # a diet says Food
    assert sheet.cell(header, 3).value == "Measure"
    oats = row_of(sheet, "Rolled oats", below=header)
    assert sheet.cell(oats, 3).value == f"=B{oats}*100"
    assert sheet.cell(oats, 3).number_format == '#,##0" g"'


def test_an_amount_too_small_for_the_mass_unit_is_shown_in_grams(outputs):
    # The pig feed plant counts in tonnes: a few kilograms of L-threonine would show 0.00 t.
    sheet = load_workbook(outputs["pig_feed_plant"])["Result"]
    shown = [(row, sheet.cell(row, 3).value) for row in range(1, sheet.max_row + 1)
             if sheet.cell(row, 3).number_format.endswith('" g"')]
    assert shown
    for row, text in shown:
        assert text.endswith("/100*1000000") and "e" not in text, text
        assert "Total" in [sheet.cell(r, 1).value for r in range(row, row + 30)]


# --- charts -----------------------------------------------------------------------------


@pytest.mark.parametrize("name", SAMPLE_NAMES)
def test_charts_present(outputs, name: str):
    with zipfile.ZipFile(outputs[name]) as archive:
        charts = [item for item in archive.namelist() if re.fullmatch(r"xl/charts/chart\d+\.xml", item)]
        titles = " ".join(archive.read(item).decode() for item in charts)
    assert charts, name
    assert "Share of the cost" in titles
    if name == "pig_feed_plant":
        assert "Cost per product" in titles and "Composition" in titles


# --- a Step column on Specs ---------------------------------------------------------------


def broiler_with_steps(tmp_path: Path, steps: dict[str, object]) -> Path:
    """The broiler sample with a Step column on Specs, filled for the named nutrients."""
    workbook = load_workbook(SAMPLES / "broiler_starter.xlsx")
    specs = workbook["Specs"]
    column = specs.max_column + 1
    specs.cell(1, column, "Step")
    for row in range(2, specs.max_row + 1):
        if specs.cell(row, 1).value in steps:
            specs.cell(row, column, steps[specs.cell(row, 1).value])
    path = tmp_path / "stepped.xlsx"
    workbook.save(path)
    return path


def test_a_step_on_specs_overrides_the_default(tmp_path: Path):
    output = tmp_path / "out.xlsx"
    solve_workbook(broiler_with_steps(tmp_path, {"ME": 0.5}), output, check=False)
    sheet = load_workbook(output)["Result"]
    me = row_of(sheet, "ME", below=row_of(sheet, "Binding limits"))
    assert sheet.cell(me, 6).value == 0.5
    assert sheet.cell(me, 8).value == pytest.approx(abs(sheet.cell(me, 7).value) * 0.5)


def test_a_step_must_be_above_zero(tmp_path: Path):
    from blendkit.errors import WorkbookError

    with pytest.raises(WorkbookError, match="step 0 must be above 0"):
        solve_workbook(broiler_with_steps(tmp_path, {"ME": 0}), tmp_path / "out.xlsx", check=False)

"""The Batch sheet a mill weighs from: weights, hand additions, total, live spec check.

Every spec is recomputed here from the sheet's weights alone (read back with openpyxl)
and the ingredients' contents, with our own arithmetic: a level is sum(weight x content)
/ sum(weight), a dry-matter level that over the dry matter x 100, a ratio one level over
the other (the definitions of the trade: common practice). The live formulas are
evaluated by an outside reference, LibreOffice's formula engine (`recalculate`).
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import shutil
from pathlib import Path

import openpyxl
import pytest

from blendkit.errors import WorkbookError
from blendkit.model.batch import ON_STEP, batches
from blendkit.model.blend import DRY_MATTER, Blend
from blendkit.pipeline import check_workbook, finish, formulate, prepare, solve_workbook
from blendkit.write.json import formula_to_dict
from blendkit.write.workbook import write_workbook
from blendkit.write.workbook.batch_sheet import ALL_MET, MET, NOT_MET
from tests import formulas
from tests.test_result_sheet import needs_libreoffice, recalculate
from tests.workbooks import make_workbook

SAMPLES = Path(__file__).resolve().parent.parent / "sample_workbooks"
# Every sample with a batch to weigh (day_menu is a diet: amounts per food unit, no batch).
BLENDS = ["broiler_starter", "layer_feed", "npk_15_15_15", "pig_feed_plant"]
# The weights are the formula's own: the specs hold to this, relative to the bound.
RTOL = 1e-9


# --- reading a Batch sheet back ---------------------------------------------------------------


def read_batch_sheet(sheet) -> dict:
    """The product's name, batch size, weighed and hand-added weights, total row and spec
    rows of one Batch sheet, as its cells hold them."""
    found = {"product": sheet["B4"].value, "size": sheet["B5"].value, "unit": sheet["C5"].value,
             "tables": {}, "specs": {}, "rows": {}}
    for row in range(1, sheet.max_row + 1):
        label = sheet.cell(row, 1).value
        if label == "Ingredient":
            heading = sheet.cell(row - 1, 1).value
            lines = {}
            at = row + 1
            while sheet.cell(at, 1).value not in (None, "none", "Total"):
                lines[sheet.cell(at, 1).value] = sheet.cell(at, 2).value
                found["rows"][sheet.cell(at, 1).value] = at
                at += 1
            found["tables"][heading] = lines
        elif label == "Total":
            found["total_row"] = row
        elif label == "Spec":
            at = row + 1
            while sheet.cell(at, 1).value not in (None, "All specs"):
                found["specs"][sheet.cell(at, 1).value] = at
                at += 1
            found["overall_row"] = at
    return found


def weights_of(found: dict) -> dict[str, float]:
    """Every weight on the sheet, weighed and hand-added together."""
    return {name: weight for lines in found["tables"].values() for name, weight in lines.items()}


def batch_sheets(book) -> list:
    """The Batch sheets of an output workbook, in tab order."""
    return [sheet for sheet in book.worksheets if sheet.title.startswith("Batch sheet")]


# --- our own arithmetic ------------------------------------------------------------------------


def level(blend: Blend, weights: dict[str, float], nutrient: str) -> float:
    """sum(weight x content) / sum(weight): the as-fed level of the mix (common practice)."""
    total = sum(weights.values())
    return sum(weight * blend.ingredient(name).contents.get(nutrient, 0.0)
               for name, weight in weights.items()) / total


def spec_levels(blend: Blend, weights: dict[str, float], product: str | None) -> list[tuple]:
    """(label, min, max, level) for every spec of `product` (None: the single blend)."""
    rows = []
    for spec in blend.specs:
        if spec.product not in (None, product):
            continue
        if spec.ratio is not None:
            value = level(blend, weights, spec.ratio[0]) / level(blend, weights, spec.ratio[1])
            label = spec.nutrient
        elif spec.basis == DRY_MATTER:
            value = (level(blend, weights, spec.nutrient)
                     / level(blend, weights, blend.settings.dry_matter) * 100)
            label = f"{spec.nutrient} (dry matter)"
        else:
            value, label = level(blend, weights, spec.nutrient), spec.nutrient
        rows.append((label, spec.minimum, spec.maximum, value))
    return rows


def meets(value: float, minimum: float | None, maximum: float | None) -> bool:
    """Within the bounds to RTOL of each bound."""
    low = minimum is None or value >= minimum - RTOL * abs(minimum)
    high = maximum is None or value <= maximum + RTOL * abs(maximum)
    return low and high


def close(a: float, b: float) -> bool:
    """Equal to RTOL, relative to the larger."""
    return abs(a - b) <= RTOL * max(abs(a), abs(b), 1e-300)


# --- the samples -------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def solved(tmp_path_factory) -> dict[str, tuple]:
    """Each sample solved and written: (blend, formula, output path)."""
    folder = tmp_path_factory.mktemp("batch")
    found = {}
    for name in BLENDS:
        output = folder / f"{name}.out.xlsx"
        outcome = solve_workbook(SAMPLES / f"{name}.xlsx", output, check=False)
        found[name] = (outcome.formula.blend, outcome.formula, output)
    return found


def product_name(formula, found: dict) -> str | None:
    """The product a sheet is for (None for the single blend)."""
    return found["product"] if formula.several else None


@pytest.mark.parametrize("name", BLENDS)
def test_every_product_has_a_batch_sheet_whose_weights_meet_every_spec(solved, name):
    blend, formula, output = solved[name]
    assert formula.status == "optimal"
    sheets = batch_sheets(openpyxl.load_workbook(output))
    expected = [p.name for p in formula.products] if formula.several else [None]
    assert len(sheets) == len(expected) and len(set(s.title for s in sheets)) == len(sheets)
    for sheet, product in zip(sheets, expected):
        found = read_batch_sheet(sheet)
        if product is not None:
            assert found["product"] == product
        assert found["size"] == blend.settings.batch_size and found["unit"] == blend.settings.mass_unit
        weights = weights_of(found)
        assert weights and all(weight > 0 for weight in weights.values())
        assert close(sum(weights.values()), blend.settings.batch_size)
        specs = spec_levels(blend, weights, product)
        assert specs, "a sample without specs checks nothing"
        for label, minimum, maximum, value in specs:
            assert meets(value, minimum, maximum), (sheet.title, label, minimum, maximum, value)
        assert set(found["specs"]) == {label for label, *_ in specs}


@pytest.mark.parametrize("name", BLENDS)
def test_the_json_batch_holds_the_sheets_weights(solved, name):
    _, formula, output = solved[name]
    data = formula_to_dict(formula)
    entries = ([data["products"][p.name]["batch"] for p in formula.products] if formula.several
               else [data["batch"]])
    for sheet, entry in zip(batch_sheets(openpyxl.load_workbook(output)), entries):
        weights = weights_of(read_batch_sheet(sheet))
        assert entry["size"] == sheet["B5"].value and entry["unit"] == sheet["C5"].value
        # The same numbers, to the digits openpyxl writes (it may drop the 17th).
        assert {w["ingredient"]: w["weight"] for w in entry["weights"]} == pytest.approx(weights, rel=1e-14)
        assert not any(w["hand_add"] for w in entry["weights"])  # no Hand-add below setting
    json.dumps(data, allow_nan=False)


def test_a_diet_and_an_infeasible_run_have_no_batch_sheet(tmp_path):
    outcome = solve_workbook(SAMPLES / "day_menu.xlsx", tmp_path / "menu.xlsx", check=False)
    assert outcome.formula.solved and not batch_sheets(openpyxl.load_workbook(tmp_path / "menu.xlsx"))
    assert formula_to_dict(outcome.formula)["batch"] is None
    source = formulas.write_source(tmp_path / "in.xlsx")
    run = formulas.run_info(hashlib.sha256(source.read_bytes()).hexdigest())
    output = write_workbook(formulas.infeasible_formula(source), run, source, tmp_path / "out.xlsx")
    assert not batch_sheets(openpyxl.load_workbook(output))


def test_batch_sheets_print_on_one_portrait_page(solved):
    for _, _, output in solved.values():
        for sheet in batch_sheets(openpyxl.load_workbook(output)):
            assert sheet.page_setup.orientation == "portrait"
            assert sheet.page_setup.fitToHeight == 1 and sheet.page_setup.fitToWidth == 1
            assert sheet.print_area.endswith(f"!$A$1:$G${sheet.max_row}")
            texts = [c.value for row in sheet.iter_rows() for c in row if isinstance(c.value, str)]
            assert any(t.startswith("Caution:") for t in texts)
            assert {"Mixed by", "Checked by", "Date"} <= set(texts)


def test_a_second_solve_replaces_the_batch_sheets(solved, tmp_path):
    _, formula, output = solved["pig_feed_plant"]
    again = tmp_path / "again.xlsx"
    solve_workbook(output, again, check=False)
    titles = [sheet.title for sheet in batch_sheets(openpyxl.load_workbook(again))]
    assert titles == [f"Batch sheet{'' if k == 1 else f' {k}'}" for k in range(1, len(formula.products) + 1)]


# --- hand additions ----------------------------------------------------------------------------


def with_setting(tmp_path: Path, name: str, key: str, value) -> Path:
    """A copy of sample `name` with one more row on its Settings sheet."""
    path = tmp_path / f"{name}.xlsx"
    shutil.copy(SAMPLES / f"{name}.xlsx", path)
    book = openpyxl.load_workbook(path)
    sheet = book["Settings"]
    sheet.append([key, value])
    book.save(path)
    return path, f"Settings!B{sheet.max_row}"


@pytest.mark.parametrize("name, below", [("layer_feed", 5.0), ("pig_feed_plant", 2.0)])
def test_weights_below_the_hand_add_setting_are_listed_apart(tmp_path, name, below):
    path, _ = with_setting(tmp_path, name, "Hand-add below", below)
    outcome = solve_workbook(path, tmp_path / "out.xlsx", check=False)
    entries = [batch for batch in batches(outcome.formula)]
    hand_added = 0
    for sheet, batch in zip(batch_sheets(openpyxl.load_workbook(tmp_path / "out.xlsx")), entries):
        found = read_batch_sheet(sheet)
        heading = f"Hand additions (below {below:g} {batch.unit})"
        assert set(found["tables"]) == {"Weigh on the scale", heading}
        assert all(weight >= below for weight in found["tables"]["Weigh on the scale"].values())
        assert all(weight < below for weight in found["tables"][heading].values())
        hand_added += len(found["tables"][heading])
        assert close(sum(weights_of(found).values()), batch.size)
    assert hand_added > 0, "the threshold splits nothing: the test would pass vacuously"


def test_without_the_setting_there_is_no_hand_add_list(solved):
    for _, _, output in solved.values():
        for sheet in batch_sheets(openpyxl.load_workbook(output)):
            assert list(read_batch_sheet(sheet)["tables"]) == ["Weigh"]


@pytest.mark.parametrize("value", [0, -1, "some"])
def test_a_wrong_hand_add_setting_names_its_cell(tmp_path, value):
    path, cell = with_setting(tmp_path, "layer_feed", "Hand-add below", value)
    with pytest.raises(WorkbookError) as error:
        check_workbook(path)
    assert cell in str(error.value)


# --- weights on the step and in whole packs ----------------------------------------------------


def stepped_formula(source: Path):
    """The hand-built formula (inclusions 60/20/18/2 % of 2000 kg: 1200/400/360/40 kg) with
    a 0.5 kg scale step, packs of 20 kg rapeseed meal and 25 kg limestone, and inclusions
    moved off the whole kilogram: Barley by 4e-12 kg (rounding), Pea meal by 2 g and
    Limestone back by 2 g (off the step and off whole packs)."""
    formula = formulas.optimal_formula(source)
    blend = formula.blend
    packs = {"Rapeseed meal": 20.0, "Limestone": 25.0}
    blend = dataclasses.replace(
        blend, settings=dataclasses.replace(blend.settings, scale_step=0.5, hand_add_below=50.0),
        ingredients=tuple(dataclasses.replace(item, pack_size=packs.get(item.name))
                          for item in blend.ingredients))
    moved = {"Barley": 2e-13, "Pea meal": 1e-4, "Limestone": -1e-4}
    lines = tuple(dataclasses.replace(line, inclusion=line.inclusion + moved.get(line.name, 0.0))
                  for line in formula.ingredients)
    return dataclasses.replace(formula, blend=blend, ingredients=lines)


def test_weights_on_the_step_are_snapped_and_others_kept_exact(tmp_path):
    source = formulas.write_source(tmp_path / "in.xlsx")
    formula = stepped_formula(source)
    run = formulas.run_info(hashlib.sha256(source.read_bytes()).hexdigest())
    output = write_workbook(formula, run, source, tmp_path / "out.xlsx")
    sheet = batch_sheets(openpyxl.load_workbook(output))[0]
    found = read_batch_sheet(sheet)
    weights = weights_of(found)
    rows = found["rows"]
    # Barley: 1200.000000000004 kg is on the 0.5 kg step to ON_STEP: exactly 1200.
    assert weights["Barley"] == 1200.0 and sheet.cell(rows["Barley"], 5).value == 0.5
    assert sheet.cell(rows["Barley"], 7).value is None
    # Rapeseed meal: 360 kg is 18 packs of 20 kg.
    assert weights["Rapeseed meal"] == 360.0 and sheet.cell(rows["Rapeseed meal"], 4).value == "18 x 20 kg"
    # Pea meal: 400.002 kg is not on the step: exact, with a note.
    assert weights["Pea meal"] == pytest.approx(400.002, rel=1e-12) and weights["Pea meal"] % 0.5 > ON_STEP
    assert "not on the 0.5 kg step" in sheet.cell(rows["Pea meal"], 7).value
    # Limestone: 39.998 kg is not whole packs of 25 kg, and it is a hand addition (< 50 kg).
    assert "not whole packs of 25 kg" in sheet.cell(rows["Limestone"], 7).value
    assert list(found["tables"]["Hand additions (below 50 kg)"]) == ["Limestone"]
    assert close(sum(weights.values()), 2000.0)
    entry = {w["ingredient"]: w for w in formula_to_dict(formula)["batch"]["weights"]}
    assert entry["Barley"] == {"ingredient": "Barley", "weight": 1200.0, "step": 0.5, "hand_add": False}
    assert entry["Rapeseed meal"] == {"ingredient": "Rapeseed meal", "weight": 360.0, "packs": 18,
                                      "hand_add": False}
    assert "step" not in entry["Pea meal"] and "note" in entry["Pea meal"]
    assert entry["Limestone"]["hand_add"] and "packs" not in entry["Limestone"]


def test_a_solved_optimum_on_whole_kilograms_is_weighed_on_the_step(tmp_path):
    # Crude protein 10 % and 40 %, at least 25 %: the cheapest mix is 50/50 (500 kg of
    # each in a 1000 kg batch), on any step that divides 500 kg.
    path = make_workbook(tmp_path, [
        ["Ingredient", "Cost", "Crude protein (%)"], ["Grain", 100, 10], ["Meal", 300, 40],
    ], [["Nutrient", "Min", "Max"], ["Crude protein", 25, None]])
    prepared = prepare(path, tmp_path / "out.xlsx")
    blend = dataclasses.replace(prepared.blend, settings=dataclasses.replace(
        prepared.blend.settings, scale_step=0.5))
    formula = formulate(blend, check=False)
    finish(prepared, formula)
    found = read_batch_sheet(batch_sheets(openpyxl.load_workbook(tmp_path / "out.xlsx"))[0])
    assert weights_of(found) == {"Grain": 500.0, "Meal": 500.0}
    (label, minimum, _, value), = spec_levels(blend, weights_of(found), None)
    assert meets(value, minimum, None)


# --- the live formulas, evaluated by LibreOffice -----------------------------------------------


def spoil(output: Path, folder: Path) -> Path:
    """A copy of `output` whose first Batch sheet weighs nothing of its largest ingredient:
    its total and some spec checks must then read as broken."""
    book = openpyxl.load_workbook(output)
    sheet = batch_sheets(book)[0]
    found = read_batch_sheet(sheet)
    largest = max(weights_of(found).items(), key=lambda item: item[1])[0]
    sheet.cell(found["rows"][largest], 2).value = 0
    path = folder / f"spoilt-{output.name}"
    book.save(path)
    return path


@needs_libreoffice
def test_the_live_formulas_recompute_the_same_numbers(solved, tmp_path):
    outputs = [output for _, _, output in solved.values()]
    spoilt = spoil(solved["broiler_starter"][2], tmp_path)
    path, _ = with_setting(tmp_path, "pig_feed_plant", "Hand-add below", 2.0)
    split = solve_workbook(path, tmp_path / "split.xlsx", check=False)  # hand additions apart
    converted = recalculate([*outputs, spoilt, split.output], tmp_path)
    runs = [*solved.values(), (split.formula.blend, split.formula, split.output)]
    for blend, formula, output in runs:
        book = openpyxl.load_workbook(converted / output.name, data_only=True)
        for sheet in batch_sheets(book):
            check_live_sheet(sheet, blend, product_name(formula, read_batch_sheet(sheet)))
    sheet = batch_sheets(openpyxl.load_workbook(converted / spoilt.name, data_only=True))[0]
    found = read_batch_sheet(sheet)
    assert sheet.cell(found["total_row"], 4).value == "differs from the batch size"
    checks = [sheet.cell(row, 5).value for row in found["specs"].values()]
    assert NOT_MET in checks
    assert sheet.cell(found["overall_row"], 5).value == f"{checks.count(NOT_MET)} {NOT_MET}"


def check_live_sheet(sheet, blend: Blend, product: str | None) -> None:
    """The recalculated total, shares, levels and checks of one sheet against ours."""
    found = read_batch_sheet(sheet)
    weights = weights_of(found)
    total = sum(weights.values())
    assert close(sheet.cell(found["total_row"], 2).value, total)
    assert sheet.cell(found["total_row"], 4).value == "equals the batch size"
    for name, row in found["rows"].items():
        assert close(sheet.cell(row, 3).value, weights[name] / total * 100)
    for label, minimum, maximum, value in spec_levels(blend, weights, product):
        row = found["specs"][label]
        assert close(sheet.cell(row, 4).value, value), (sheet.title, label)
        assert sheet.cell(row, 5).value == MET
    assert sheet.cell(found["overall_row"], 5).value == ALL_MET


def test_a_users_own_batch_sheet_is_kept_under_a_new_title(tmp_path):
    from blendkit.model.blend import is_output_title, kept_sheet_titles

    assert is_output_title("Batch sheet") and is_output_title("batch SHEET 12")
    assert not is_output_title("Batch sheet 0") and not is_output_title("Batch sheets")
    assert kept_sheet_titles(["Batch sheet 2", "Batch sheet notes"], frozenset()) == {
        "Batch sheet 2": "Batch sheet 2 (input)"}
    path, _ = with_setting(tmp_path, "layer_feed", "Hand-add below", 1)
    book = openpyxl.load_workbook(path)
    book.create_sheet("Batch sheet").append(["my own weighing notes"])
    book.save(path)
    solve_workbook(path, tmp_path / "out.xlsx", check=False)
    out = openpyxl.load_workbook(tmp_path / "out.xlsx")
    assert out["Batch sheet (input)"]["A1"].value == "my own weighing notes"
    assert out["Batch sheet"]["A1"].value.startswith("Batch sheet: ")


def test_a_product_without_a_formula_has_no_batch_sheet(tmp_path):
    from tests.workbooks import INGREDIENTS, PRODUCTS, SPECS

    # Pullet grower held to at least 50 % limestone (37.5 % calcium) cannot keep calcium
    # at most 4.1 %: no formula, so nothing to weigh; Layer mash still has its sheet.
    limits = [["Product", "Ingredient", "Min", "Max"], ["Pullet grower", "Limestone", 50, None]]
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, sheets={"Products": PRODUCTS, "Limits": limits})
    outcome = solve_workbook(path, tmp_path / "out.xlsx", check=False)
    status = {p.name: p.status for p in outcome.formula.products}
    assert status == {"Layer mash": "optimal", "Pullet grower": "infeasible"}
    sheets = batch_sheets(openpyxl.load_workbook(tmp_path / "out.xlsx"))
    assert [(s.title, s["B4"].value) for s in sheets] == [("Batch sheet", "Layer mash")]
    products = formula_to_dict(outcome.formula)["products"]
    assert products["Pullet grower"]["batch"] is None and products["Layer mash"]["batch"]["weights"]


@needs_libreoffice
def test_a_spec_on_a_combined_nutrient_is_checked_live_from_the_weights(tmp_path):
    # The broiler's electrolyte balance (Na + K - Cl, mEq/kg) held to 200-300 and a ratio
    # on it: both are recomputed from the weights like any nutrient (common practice:
    # a level is linear in the contents, so the Sum of the parts' levels).
    path = tmp_path / "broiler.xlsx"
    shutil.copy(SAMPLES / "broiler_starter.xlsx", path)
    book = openpyxl.load_workbook(path)
    specs = book["Specs"]
    specs.append(["Electrolyte balance", 200, 300])
    specs.append(["Electrolyte balance / Sodium", None, 2000])
    book.save(path)
    outcome = solve_workbook(path, tmp_path / "out.xlsx", check=False)
    assert outcome.formula.status == "optimal"
    converted = recalculate([outcome.output], tmp_path)
    sheet, = batch_sheets(openpyxl.load_workbook(converted / outcome.output.name, data_only=True))
    found = read_batch_sheet(sheet)
    for label in ("Electrolyte balance", "Electrolyte balance / Sodium"):
        assert isinstance(sheet.cell(found["specs"][label], 4).value, (int, float)), label
    check_live_sheet(sheet, outcome.formula.blend, None)

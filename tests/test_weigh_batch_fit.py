"""Rules a mill can weigh that no batch can meet: a pack or a scale step larger than the
batch or than the ingredient's Max share of it, a Scale step setting that does not divide
the batch, a Min if used above a product's Max on Limits. Each is a mistake at its cell,
as a Min if used above the row's Max is, instead of an infeasible run that names no cell.

The facts checked are arithmetic of the trade (common practice): the weights of one batch
add up to the batch size, so weights that are all whole multiples of one step can only add
up to a batch size that is itself a whole multiple of that step; and a weight of at least
one pack is at least the pack size.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from typer.testing import CliRunner

from blendkit.cli import app
from blendkit.errors import WorkbookError
from blendkit.pipeline import formulate
from blendkit.read import read_workbook
from tests.workbooks import make_workbook

runner = CliRunner()

INGREDIENTS = [
    ["Ingredient", "Cost", "Min", "Max", "Pack size", "Scale step", "Crude protein"],
    ["Maize", 200, None, None, None, None, 9],
    ["Soybean meal", 400, None, 40, None, None, 45],
    ["Premix", 2000, None, 0.5, None, None, 0],
]
SPECS = [["Nutrient", "Min", "Max"], ["Crude protein", 18, None]]


def ingredients(**cells) -> list[list]:
    """INGREDIENTS with cells set: {"E4": 25} sets column E of row 4 (sheet rows)."""
    rows = [list(row) for row in INGREDIENTS]
    for ref, value in cells.items():
        rows[int(ref[1:]) - 1][ord(ref[0]) - ord("A")] = value
    return rows


def problems(path: Path) -> list[str]:
    """The problems read_workbook reports, as text."""
    with pytest.raises(WorkbookError) as caught:
        read_workbook(path)
    return [str(problem) for problem in caught.value.problems]


def test_a_pack_larger_than_the_batch_is_reported_at_its_cell(tmp_path):
    settings = [["Setting", "Value"], ["Batch size", 20]]
    path = make_workbook(tmp_path, ingredients(E3=25), SPECS, settings)
    assert problems(path) == [
        "Ingredients!E3: pack size 25 kg is more than the batch size 20 kg (Settings!B2), so not one pack "
        "fits in a batch and Soybean meal could never be used; check the pack size and the Batch size setting, "
        "or set Use to no",
    ]


def test_a_pack_above_the_max_share_of_the_batch_is_reported_at_its_cell(tmp_path):
    # A 25 kg bag of premix at most 0.5 % of a 1000 kg batch (5 kg): not one bag fits.
    path = make_workbook(tmp_path, ingredients(E4=25), SPECS)
    assert problems(path) == [
        "Ingredients!E4: pack size 25 kg is 2.5 % of the batch size 1000 kg (the default), above the max 0.5 "
        "in Ingredients!D4, so not one pack fits in a batch and Premix could never be used; use a smaller pack "
        "(weigh it from an opened one), raise the max, or set Use to no",
    ]


def test_an_ingredients_own_scale_step_larger_than_the_batch_is_reported(tmp_path):
    settings = [["Setting", "Value"], ["Batch size", 20]]
    path = make_workbook(tmp_path, ingredients(F2=50), SPECS, settings)
    assert problems(path) == [
        "Ingredients!F2: scale step 50 kg is more than the batch size 20 kg (Settings!B2), so not one step "
        "fits in a batch and Maize could never be used; check the scale step and the Batch size setting, "
        "or set Use to no",
    ]


def test_a_scale_step_setting_larger_than_the_batch_is_reported(tmp_path):
    settings = [["Setting", "Value"], ["Batch size", 20], ["Scale step", 50]]
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, settings)
    assert problems(path) == [
        "Settings!B3: scale step 50 kg is more than the batch size 20 kg (Settings!B2), so no weight could be "
        "weighed on it; check the scale step and the Batch size setting",
    ]


def test_a_scale_step_setting_that_does_not_divide_the_batch_is_reported(tmp_path):
    # 1000 kg is not a whole number of 3 kg steps (333.3): weights that are each whole
    # steps can never add up to it (arithmetic, common practice).
    settings = [["Setting", "Value"], ["Scale step", 3]]
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, settings)
    assert problems(path) == [
        "Settings!B2: scale step 3 kg does not divide the batch size 1000 kg (the default): weights that are "
        "each a whole number of steps could never add up to the batch; choose a step that divides it, or give "
        "some ingredients their own Scale step or Pack size",
    ]
    result = runner.invoke(app, ["solve", str(path), "-o", str(tmp_path / "out.xlsx")])
    assert result.exit_code == 1 and "Settings!B2: scale step 3 kg does not divide" in result.output
    assert not (tmp_path / "out.xlsx").exists()


def test_a_step_that_divides_the_batch_or_an_own_step_beside_it_solves(tmp_path):
    # 0.1 kg divides 1000 kg (to rounding); a 3 kg step beside a 1 kg step of one
    # ingredient can make up 1000 kg (1000 = 333 x 3 + 1).
    for rows, step in ((INGREDIENTS, 0.1), (ingredients(F2=1), 3)):
        path = make_workbook(tmp_path, rows, SPECS, [["Setting", "Value"], ["Scale step", step]])
        formula = formulate(read_workbook(path), check=False)
        assert formula.status == "optimal", step
        tmp_path = tmp_path / "again"
        tmp_path.mkdir()


def test_limits_pack_larger_than_the_batch_and_min_if_used_above_a_products_max(tmp_path):
    rows = [row[:4] + [None, row[-1]] for row in INGREDIENTS]
    rows[0][4] = "Min if used"
    rows[2][4] = 20  # Soybean meal: 0 or at least 20 %
    sheets = {
        "Products": [["Product", "Amount"], ["Starter", 100], ["Grower", 100]],
        "Limits": [["Product", "Ingredient", "Min", "Max", "Pack size"],
                   ["Starter", "Soybean meal", None, 15, None], ["Grower", "Maize", None, None, 1500]],
    }
    path = make_workbook(tmp_path, rows, SPECS, sheets=sheets)
    assert problems(path) == [
        "Limits!D2: max 15 is below the min if used 20 of Soybean meal in Ingredients!E3, so it could never be "
        "used in Starter; raise this max, lower the min if used, or give this row its own Min if used",
        "Limits!E3: pack size 1500 kg is more than the batch size 1000 kg (the default), so not one pack fits "
        "in a batch and Maize could never be used in Grower; check the pack size and the Batch size setting, "
        "or give this row a Max of 0",
    ]


def test_a_min_if_used_of_an_ingredient_already_out_is_kept_for_later(tmp_path):
    # Use = no, or a Max of 0, keeps the ingredient out by the user's own choice: a Min if
    # used above its Max is then no mistake (the message would say "set Use to no").
    rows = [row[:5] + [row[-1]] for row in INGREDIENTS]
    rows[0][4] = "Min if used"
    rows[0].insert(4, "Use")
    for row in rows[1:]:
        row.insert(4, "yes")
    rows[2][3:6] = [5, "no", 20]  # Soybean meal: max 5, not used, min if used 20
    rows[3][3:6] = [0, "yes", 0.3]  # Premix: max 0, min if used 0.3
    sheets = {"Products": [["Product", "Amount"], ["Starter", 100]],
              "Limits": [["Product", "Ingredient", "Min", "Max"], ["Starter", "Soybean meal", None, 0]]}
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 8, None]]
    formula = formulate(read_workbook(make_workbook(tmp_path, rows, specs, sheets=sheets)), check=False)
    assert formula.status == "optimal"
    assert {line.name: line.inclusion for line in formula.products[0].ingredients}["Soybean meal"] == 0


@pytest.mark.parametrize("where, setting, column", [("Settings!B2", True, None), ("Ingredients!F3", False, "F3"),
                                                     ("Ingredients!E3", False, "E3")])
def test_a_step_or_pack_too_fine_for_the_search_is_reported_at_its_cell(tmp_path, where, setting, column):
    # 0.1 g in a 1000 kg batch is 1e7 steps... 0.00005 kg is 2e7: beyond the exact count.
    # (The run said "the specs and limits cannot all be met" for such a step.)
    settings = [["Setting", "Value"], ["Scale step", 0.00005]] if setting else None
    rows = ingredients(**{column: 0.00005}) if column else INGREDIENTS
    found = problems(make_workbook(tmp_path, rows, SPECS, settings))
    assert len(found) == 1 and found[0].startswith(f"{where}: "), found
    assert "too fine" in found[0] and "give at least 0.0001 kg" in found[0], found


def test_the_finest_step_allowed_solves(tmp_path):
    # 1e7 steps of 0.0001 kg make the 1000 kg batch: allowed, and solved on the step.
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, [["Setting", "Value"], ["Scale step", 0.0001]])
    formula = formulate(read_workbook(path), check=False)
    assert formula.status == "optimal"


def test_a_pack_above_the_ingredients_max_share_is_fine_where_a_product_allows_more(tmp_path):
    # Premix at most 0.5 % (5 kg of a 1000 kg batch) on Ingredients, but 2.5 % in Starter on
    # Limits: one 25 kg bag fits in Starter, so the pack size is no mistake.
    sheets = {"Products": [["Product", "Amount"], ["Starter", 100], ["Grower", 100]],
              "Limits": [["Product", "Ingredient", "Min", "Max"], ["Starter", "Premix", None, 2.5]]}
    path = make_workbook(tmp_path, ingredients(E4=25), SPECS, sheets=sheets)
    formula = formulate(read_workbook(path), check=False)
    assert formula.status == "optimal"

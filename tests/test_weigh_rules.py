"""Workbooks with rules a mill can weigh: Min if used, Pack size, Scale step, Max ingredients.

Each rule is checked on a whole workbook against scipy.optimize.milp (HiGHS's MIP solver)
on the same problem, posed here from the workbook's numbers and the LP rows of
`blendkit.lp.build` (the rules are written out in this file, not taken from
`blendkit.lp.weigh`); the weights of a scale-step formula are checked against every spec
recomputed from the weights alone; and a worked example of the trade is checked by hand.
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from scipy.optimize import Bounds, LinearConstraint, milp
from typer.testing import CliRunner

from blendkit.cli import app
from blendkit.errors import WorkbookError
from blendkit.lp.build import build_lp
from blendkit.pipeline import formulate
from blendkit.read import read_workbook
from blendkit.write.json import formula_to_dict
from tests.workbooks import make_workbook

SAMPLES = Path(__file__).resolve().parents[1] / "sample_workbooks"
MIP_RTOL = 1e-6  # both solvers stop within a 1e-6 relative gap (the agreement)
WEIGHT_RTOL = 1e-9  # a weight recomputed from whole steps, and specs from those weights
runner = CliRunner()


def sample_with(tmp_path: Path, sample: str, *, columns=None, settings=None, products=None, limits=None) -> Path:
    """A copy of a sample workbook with rule columns added: `columns` {header: {ingredient:
    value}} on Ingredients, `settings` {setting: value}, `products` {header: {product:
    value}} on Products, `limits` {header: {(product, ingredient): value}} on Limits."""
    path = tmp_path / f"{sample}.xlsx"
    shutil.copy(SAMPLES / f"{sample}.xlsx", path)
    book = openpyxl.load_workbook(path)
    for sheet, table in (("Ingredients", columns), ("Products", products), ("Limits", limits)):
        for header, values in (table or {}).items():
            _add_column(book[sheet], header, values, keys=2 if sheet == "Limits" else 1)
    for name, value in (settings or {}).items():
        book["Settings"].append([name, value])
    book.save(path)
    return path


def _add_column(sheet, header: str, values: dict, keys: int) -> None:
    """One more column, filled by the row's name (or (product, ingredient) pair)."""
    column = sheet.max_column + 1
    sheet.cell(1, column, header)
    for row in range(2, sheet.max_row + 1):
        key = tuple(sheet.cell(row, c).value for c in range(1, keys + 1))
        value = values.get(key[0] if keys == 1 else key)
        if value is not None:
            sheet.cell(row, column, value)


# --- The reference: the same rules posed for scipy.optimize.milp ------------------------


def highs_optimum(path: Path, *, min_if_used=None, most=None, packs=None, step=None) -> tuple[int, float | None]:
    """scipy.optimize.milp's status and optimum on the workbook's LP (one product per
    column block) with: `min_if_used` {(product index, ingredient): %} as semi-continuous
    columns (HiGHS kind 2), `most` {product index: n} as binaries z with x <= M z (M the
    column's bound, else 100) and sum z <= n, `packs` {(product index, ingredient): kg} and
    `step` (kg, every ingredient without a pack) as x = 100 u n / batch with n whole."""
    blend = read_workbook(path)
    lp = build_lp(blend)
    form, J = lp.form, lp.n_ingredients
    names = [item.name for item in blend.ingredients]
    n0 = form.c.size
    upper = form.col_upper.copy()
    upper[: len(lp.products) * J] = np.minimum(upper[: len(lp.products) * J], 100.0)
    lower, kind = form.col_lower.copy(), np.zeros(n0)
    cols_low, cols_up, rows = [], [], []  # added columns and rows (dict, low, high)
    for (p, name), s in (min_if_used or {}).items():
        k = p * J + names.index(name)
        if lower[k] <= 0 and upper[k] > 0:
            kind[k], lower[k] = 2, max(s, lower[k])
    wholes = dict(packs or {})
    if step is not None:
        for p in range(len(lp.products)):
            for name in names:
                wholes.setdefault((p, name), step)
    for (p, name), mass in wholes.items():
        k = p * J + names.index(name)
        unit = 100.0 * mass / blend.settings.batch_size
        cols_low.append(math.ceil(lower[k] / unit - 1e-9) if kind[k] == 0 else 0)
        cols_up.append(math.floor(upper[k] / unit + 1e-9))
        rows.append(({k: 1.0, n0 + len(cols_low) - 1: -unit}, 0.0, 0.0))
    for p, n in (most or {}).items():
        zs = []
        for j in range(J):
            k = p * J + j
            if upper[k] > 0:
                cols_low.append(0), cols_up.append(1)
                zs.append(n0 + len(cols_low) - 1)
                rows.append(({k: 1.0, zs[-1]: -upper[k]}, -np.inf, 0.0))
        rows.append(({z: 1.0 for z in zs}, -np.inf, n))
    added = len(cols_low)
    A = np.zeros((form.A.shape[0] + len(rows), n0 + added))
    A[: form.A.shape[0], :n0] = form.A
    for i, (coefficients, _, _) in enumerate(rows):
        for k, value in coefficients.items():
            A[form.A.shape[0] + i, k] = value
    result = milp(
        np.concatenate([form.c, np.zeros(added)]),
        constraints=LinearConstraint(A, np.concatenate([form.row_lower, [r[1] for r in rows]]),
                                     np.concatenate([form.row_upper, [r[2] for r in rows]])),
        bounds=Bounds(np.concatenate([lower, cols_low]), np.concatenate([upper, cols_up])),
        integrality=np.concatenate([kind, np.ones(added)]),
        options={"mip_rel_gap": 1e-7},
    )
    return result.status, (float(result.fun) if result.status == 0 else None)


def our_objective(formula) -> float:
    """Our optimum in the LP's objective units: the blend's cost, or the run's total cost
    (the objective of a plant's LP)."""
    return formula.cost


def assert_same_optimum(path: Path, **rules) -> object:
    """Our workbook solve and HiGHS's MIP agree: status and optimum within MIP_RTOL."""
    formula = formulate(read_workbook(path), check=False)
    status, optimum = highs_optimum(path, **rules)
    assert status == 0 and formula.status == "optimal"  # reference: scipy.optimize.milp
    assert our_objective(formula) == pytest.approx(optimum, rel=MIP_RTOL)  # reference: scipy.optimize.milp
    return formula


# --- Each rule on a whole workbook, against HiGHS ---------------------------------------

BROILER_THRESHOLDS = {"Wheat": 5, "Full-fat soybean, extruded": 3, "Sunflower meal 36": 3, "Rapeseed meal": 3,
                      "Meat and bone meal 50": 2, "Wheat middlings": 3, "Soybean oil": 1, "Sodium bicarbonate": 0.1,
                      "L-threonine": 0.1}


def test_min_if_used_matches_highs(tmp_path):
    path = sample_with(tmp_path, "broiler_starter", columns={"Min if used (%)": BROILER_THRESHOLDS})
    formula = assert_same_optimum(path, min_if_used={(0, k): v for k, v in BROILER_THRESHOLDS.items()})
    practical = formula.products[0].practical
    for line in formula.ingredients:
        s = BROILER_THRESHOLDS.get(line.name)
        assert s is None or line.inclusion == 0 or line.inclusion >= s * (1 - 1e-9)
        at_threshold = s is not None and line.inclusion == pytest.approx(s, rel=1e-7)
        assert at_threshold == any(b.startswith(f"{line.name} at its Min if used") for b in practical.binding)
    assert practical.cost >= practical.lp_cost - 1e-9  # a rule never makes a blend cheaper


def test_max_ingredients_matches_highs(tmp_path):
    path = sample_with(tmp_path, "broiler_starter", settings={"Max ingredients": 11})
    formula = assert_same_optimum(path, most={0: 11})
    used = [line.name for line in formula.ingredients if line.inclusion > 0]
    assert len(used) <= 11
    practical = formula.products[0].practical
    assert any(line.startswith("Max ingredients 11 reached") for line in practical.binding)


def test_pack_size_matches_highs(tmp_path):
    # Monocalcium phosphate in 25 kg bags (common practice), amino acids in pre-weighed
    # portions of 5 and 2.5 kg, on a 2000 kg batch.
    packs = {"L-lysine HCl": 5, "DL-methionine": 5, "L-threonine": 2.5, "Monocalcium phosphate": 25}
    path = sample_with(tmp_path, "broiler_starter", columns={"Pack size (kg)": packs})
    formula = assert_same_optimum(path, packs={(0, k): v for k, v in packs.items()})
    for line in formula.ingredients:
        if line.name in packs:
            bags = line.amount / packs[line.name]
            assert bags == pytest.approx(round(bags), abs=WEIGHT_RTOL)


def test_plant_rules_per_product_match_highs(tmp_path):
    # Per-product rules in a plant solved jointly (shared stocks): Max ingredients per
    # product on Products, a Min if used on Limits for one product only.
    path = sample_with(tmp_path, "pig_feed_plant", products={"Max ingredients": {"Grower": 10, "Sow feed": 11}},
                       limits={"Min if used (%)": {("Grower", "Rapeseed meal"): 4}})
    formula = assert_same_optimum(path, most={0: 10, 2: 11}, min_if_used={(0, "Rapeseed meal"): 4})
    assert formula.several and all(product.practical is not None for product in formula.products)
    for product in formula.products:
        limit = {"Grower": 10, "Sow feed": 11}.get(product.name)
        assert limit is None or sum(line.inclusion > 0 for line in product.ingredients) <= limit


def spec_levels_from_weights(blend, weights: dict[str, float]) -> dict[str, float]:
    """Each nutrient's level recomputed from batch weights alone: sum w c / sum w."""
    total = sum(weights.values())
    return {n: sum(w * blend.ingredient(name).contents[n] for name, w in weights.items()) / total
            for n in blend.nutrients}


def test_scale_step_weights_are_whole_steps_and_meet_every_spec(tmp_path):
    step = 0.5  # kg, a platform scale reading in half kilograms
    path = sample_with(tmp_path, "broiler_starter", settings={"Scale step": step})
    formula = assert_same_optimum(path, step=step)
    blend = formula.blend
    weights = {}
    for line in formula.ingredients:
        steps = round(line.amount / step)
        assert line.amount == pytest.approx(steps * step, rel=WEIGHT_RTOL, abs=1e-12)
        weights[line.name] = steps * step
    assert sum(weights.values()) == blend.settings.batch_size
    levels = spec_levels_from_weights(blend, weights)
    for spec in blend.specs:  # every spec from the weights alone, within 1e-9 relative
        level = levels[spec.nutrient]
        if spec.minimum is not None:
            assert level >= spec.minimum * (1 - WEIGHT_RTOL), spec.nutrient
        if spec.maximum is not None:
            assert level <= spec.maximum * (1 + WEIGHT_RTOL), spec.nutrient


# --- A worked example of the trade, checked by hand -------------------------------------

BAG_INGREDIENTS = [
    ["Ingredient", "Cost (EUR/t)", "Pack size (kg)", "Crude protein (%)", "Vitamin mix (units/kg)"],
    ["Maize", 200, None, 9, 0],
    ["Soybean meal", 400, None, 45, 0],
    ["Premix", 2000, 25, 0, 100],
]
BAG_SPECS = [["Nutrient", "Min", "Max"], ["Crude protein", 18, None], ["Vitamin mix", 0.6, None]]


def test_premix_in_whole_25_kg_bags_by_hand(tmp_path):
    # Premix bought in 25 kg bags, opened whole into the mixer (common practice). By hand:
    # the LP needs premix 0.6 % (30 kg of a 5000 kg batch), maize 74.25 %, soybean meal
    # 25.15 % (9 a + 45 b = 18 x 100, a + b = 99.4): 261.10 EUR/t. One bag (0.5 %) is too
    # little, so two bags (50 kg, 1.0 %): 9 a + 45 (99 - a) = 1800 gives maize 73.75 %,
    # soybean meal 25.25 %, cost (200 x 73.75 + 400 x 25.25 + 2000 x 1.0) / 100 = 268.50.
    path = make_workbook(tmp_path, BAG_INGREDIENTS, BAG_SPECS, [["Setting", "Value"], ["Batch size", 5000]])
    formula = formulate(read_workbook(path), check=False)
    lines = {line.name: line for line in formula.ingredients}
    assert lines["Premix"].amount == pytest.approx(50.0, rel=1e-9)  # by hand: two bags
    assert lines["Maize"].inclusion == pytest.approx(73.75, rel=1e-9)  # by hand
    assert lines["Soybean meal"].inclusion == pytest.approx(25.25, rel=1e-9)  # by hand
    assert formula.cost == pytest.approx(268.50, rel=1e-9)  # by hand
    practical = formula.products[0].practical
    assert practical.lp_cost == pytest.approx(261.10, rel=1e-9)  # by hand
    assert practical.status == "optimal" and practical.gap <= MIP_RTOL


LYSINE_INGREDIENTS = [
    ["Ingredient", "Cost", "Min if used", "Crude protein", "Lysine"],
    ["Maize", 200, None, 9, 0.25],
    ["Soybean meal", 400, None, 45, 2.8],
    ["L-lysine HCl", 3000, 2, 95, 78],
]
LYSINE_SPECS = [["Nutrient", "Min", "Max"], ["Crude protein", 16, None], ["Lysine", 1.1, None]]


def test_an_ingredient_held_out_by_its_min_if_used_by_hand(tmp_path):
    # By hand (figures invented for the example). The LP: maize a, soybean meal b, lysine L
    # with a + b + L = 100 and both specs at their minimum: 36 b + 86 L = 700 and
    # 2.55 b + 77.75 L = 85, so L = (85 - 2.55 x 700 / 36) / (77.75 - 2.55 x 86 / 36).
    lysine = (85 - 2.55 * 700 / 36) / (77.75 - 2.55 * 86 / 36)
    soy = (700 - 86 * lysine) / 36
    lp_cost = (200 * (100 - soy - lysine) + 400 * soy + 3000 * lysine) / 100
    # Under "0 or at least 2 %": at 2 % lysine, protein needs b >= 14.67 and the cost is
    # 225.33 + 3000 x 2 / 100 = 285.33; without it, lysine needs b = 100 / 3 (25 + 2.55 b =
    # 110) and the cost is (200 x 200 / 3 + 400 x 100 / 3) / 100 = 800 / 3 = 266.67: held out.
    path = make_workbook(tmp_path, LYSINE_INGREDIENTS, LYSINE_SPECS)
    formula = formulate(read_workbook(path), check=False)
    practical = formula.products[0].practical
    assert practical.lp_cost == pytest.approx(lp_cost, rel=1e-9)  # by hand
    assert formula.cost == pytest.approx(800 / 3, rel=1e-9)  # by hand
    assert {line.name: line.inclusion for line in formula.ingredients}["L-lysine HCl"] == 0
    assert practical.binding == (
        f"L-lysine HCl held out by its Min if used 2 (Ingredients!C4); the LP used {lysine:.4g}",
    )


# --- When the rules leave no formula ----------------------------------------------------


def test_rules_infeasible_though_the_lp_is_feasible_names_the_rule(tmp_path):
    # At most 4 ingredients cannot meet 13 broiler specs; the Min if used rules alone can.
    path = sample_with(tmp_path, "broiler_starter", settings={"Max ingredients": 4},
                       columns={"Min if used (%)": {"Wheat": 5, "Soybean oil": 1}})
    assert highs_optimum(path, most={0: 4}, min_if_used={(0, "Wheat"): 5, (0, "Soybean oil"): 1})[0] == 2
    # reference: scipy.optimize.milp says infeasible (status 2)
    result = runner.invoke(app, ["solve", str(path), "-o", str(tmp_path / "out.xlsx"), "--json"])
    assert result.exit_code == 3  # as for an infeasible LP
    doc = json.loads(result.stdout)
    assert doc["status"] == "infeasible"
    assert doc["practical"]["blocking"] == ["max ingredients"]
    assert doc["practical"]["lp_cost"] == pytest.approx(formulate(read_workbook(SAMPLES / "broiler_starter.xlsx"),
                                                                  check=False).cost, rel=1e-9)
    assert '"Max ingredients" (Settings!B7)' in doc["message"]


# --- Reading: every mistake with its cell -----------------------------------------------

INGREDIENTS = [
    ["Ingredient", "Cost", "Min", "Max", "Min if used", "Pack size", "Scale step", "Crude protein"],
    ["Maize", 200, None, 60, -1, None, None, 9],
    ["Soybean meal", 400, None, 30, 40, 0, None, 45],
    ["Premix", 2000, None, None, None, None, 0, 0],
]
SPECS = [["Nutrient", "Min", "Max"], ["Crude protein", 18, None]]


def problems(path: Path) -> list[str]:
    """The problems read_workbook reports, as text."""
    with pytest.raises(WorkbookError) as caught:
        read_workbook(path)
    return [str(problem) for problem in caught.value.problems]


def test_bad_rule_cells_are_reported_with_their_cells(tmp_path):
    settings = [["Setting", "Value"], ["Max ingredients", 2.5], ["Scale step", -0.5], ["Hand-add below", 0],
                ["Time limit", 0]]
    found = problems(make_workbook(tmp_path, INGREDIENTS, SPECS, settings))
    assert found == [
        "Ingredients!E2: min if used -1 must be more than 0 and at most 100 (in % of the blend): the ingredient "
        "is then either left out or used at least this much; leave it blank for no such rule",
        "Ingredients!E3: min if used 40 is above max 30 in Ingredients!D3, so the ingredient could never be used; "
        "lower min if used, raise max, or set Use to no",
        "Ingredients!F3: pack size 0 must be more than 0; it is a mass in kg (leave it blank for no such rule)",
        "Ingredients!G4: scale step 0 must be more than 0; it is a mass in kg (leave it blank for no such rule)",
        "Settings!B2: max ingredients 2.5 must be a whole number, 1 or more: at most this many ingredients above "
        "0 in a formula (leave it blank for no limit)",
        "Settings!B3: scale step -0.5 must be more than 0; it is a mass in kg (leave it blank for no such rule)",
        "Settings!B4: hand-add below 0 must be more than 0; it is a mass in kg (leave it blank for no such rule)",
        "Settings!B5: time limit 0 must be more than 0; it is how many seconds the search for a formula under "
        "Min if used, Pack size, Scale step and Max ingredients may take",
    ]


def test_products_and_limits_rule_cells(tmp_path):
    ingredients = [row[:4] + row[7:] for row in INGREDIENTS]
    sheets = {
        "Products": [["Product", "Amount", "Max ingredients"], ["Starter", 100, 0], ["Grower", 100, 3]],
        "Limits": [["Product", "Ingredient", "Min", "Max", "Min if used", "Pack size"],
                   ["Grower", "Maize", None, None, 70, None], ["Starter", "Premix", None, 1, None, "bag"]],
    }
    found = problems(make_workbook(tmp_path, ingredients, SPECS, sheets=sheets))
    assert found == [
        "Products!C2: max ingredients 0 must be a whole number, 1 or more: at most this many ingredients above 0 "
        "in a formula (leave it blank for no limit)",
        "Limits!E2: min if used 70 is above the max 60 of Maize in Ingredients!D2, so it could never be used in "
        "Grower; lower min if used, or give this row a Max",
        'Limits!F3: pack size "bag" is not a number',
    ]


def test_diet_rules_need_blend_mode_or_a_max(tmp_path):
    ingredients = [["Food", "Cost", "Max", "Unit", "Pack size", "Protein"],
                   ["Bread", 0.3, None, "slice", 2, 3], ["Milk", 0.5, 4, "cup", None, 8]]
    settings = [["Setting", "Value"], ["Mode", "diet"], ["Max ingredients", 1]]
    found = problems(make_workbook(tmp_path, ingredients, [["Nutrient", "Min", "Max"], ["Protein", 10, None]],
                                   settings))
    assert found == [
        "Ingredients!E2: pack size is for blend mode (masses weighed per batch), and this workbook is a diet, "
        "whose amounts are in each food's own unit; clear the cell",
    ]
    ingredients[1][4] = None
    found = problems(make_workbook(tmp_path, ingredients, [["Nutrient", "Min", "Max"], ["Protein", 10, None]],
                                   settings, name="diet2.xlsx"))
    assert found == [
        "Ingredients!C2: Bread has no max, and the Max ingredients setting in Settings!B3 needs one for every food "
        "a diet may use (the most of it that makes sense); give it a max, or set Use to no",
    ]


def test_check_command_reports_rule_cells(tmp_path):
    path = make_workbook(tmp_path, INGREDIENTS, SPECS)
    result = runner.invoke(app, ["check", str(path)])
    assert result.exit_code == 1
    assert "Ingredients!G4: scale step 0 must be more than 0" in result.output


# --- A workbook without the rules solves exactly as before ------------------------------


@pytest.mark.parametrize("sample", ["layer_feed", "pig_feed_plant"])
def test_without_rules_the_integer_program_is_never_entered(tmp_path, sample, monkeypatch):
    # A workbook without the rules takes the plain LP path: the integer program's entry
    # point is replaced by one that fails, and the solve must still succeed with no
    # `practical` key (its optimum is checked against HiGHS in test_examples.py).
    import blendkit.pipeline

    def refuse(*args, **kwargs):
        raise AssertionError("the integer program was entered without rules")

    monkeypatch.setattr(blendkit.pipeline, "formulate_weighed", refuse)
    path = tmp_path / f"{sample}.xlsx"
    shutil.copy(SAMPLES / f"{sample}.xlsx", path)
    result = runner.invoke(app, ["solve", str(path), "-o", str(tmp_path / "out.xlsx"), "--json", "--no-cross-check"])
    assert result.exit_code == 0, result.output
    document = json.loads(result.stdout)
    assert "practical" not in json.dumps(document)


def test_json_practical_keys(tmp_path):
    path = sample_with(tmp_path, "broiler_starter", settings={"Scale step": 0.5})
    doc = formula_to_dict(formulate(read_workbook(path), check=False))
    assert list(doc["practical"]) == ["lp_cost", "cost", "gap", "nodes", "status", "binding", "blocking",
                                      "lp_penalty", "penalty"]
    assert doc["practical"]["cost"] == doc["cost"] and doc["practical"]["lp_cost"] < doc["cost"]


# --- The time limit ---------------------------------------------------------------------


def test_stopped_search_keeps_the_best_formula_and_its_proven_gap(tmp_path, monkeypatch):
    # A node limit stands in for the clock (no timed assertion): 100 nodes is past the
    # first formula found on this problem and short of the proof (129 nodes).
    import blendkit.lp.practical as practical

    solve = practical.solve_mip_form
    monkeypatch.setattr(practical, "solve_mip_form", lambda *a, **k: solve(*a, **{**k, "node_limit": 100}))
    path = sample_with(tmp_path, "broiler_starter", settings={"Scale step": 0.5, "Max ingredients": 12})
    formula = formulate(read_workbook(path), check=False)
    record = formula.products[0].practical
    assert record.status == "time_limit" and formula.cost is not None
    assert "time limit" in formula.message and "proven gap" in formula.message
    _, optimum = highs_optimum(path, step=0.5, most={0: 12})
    # reference: scipy.optimize.milp; the proven gap bounds how far the formula is from it
    assert record.cost >= optimum * (1 - MIP_RTOL)
    assert (record.cost - optimum) / record.cost <= record.gap + MIP_RTOL


def test_no_formula_before_the_time_limit_exits_as_an_engine_stop(tmp_path):
    path = sample_with(tmp_path, "broiler_starter", settings={"Scale step": 0.5, "Time limit": 1e-9})
    result = runner.invoke(app, ["solve", str(path), "-o", str(tmp_path / "out.xlsx"), "--json"])
    assert result.exit_code == 4  # the engine stopped without an answer
    doc = json.loads(result.stdout)
    assert doc["status"] == "time_limit" and doc["practical"]["cost"] is None
    assert "raise the Time limit setting" in doc["message"]



def test_products_with_no_formula_before_the_time_limit_end_as_an_engine_stop(tmp_path, monkeypatch):
    # Two products no stock links: two separate integer programs. node_limit=0 stands in
    # for a Time limit that runs out before the root (as 0.001 s can on a loaded machine):
    # neither part has a formula, while HiGHS's cross-check has each optimum. Adding up
    # the parts' cross-checks once raised TypeError (int + None) instead of exit code 4.
    import blendkit.lp.practical as practical

    solve = practical.solve_mip_form
    monkeypatch.setattr(practical, "solve_mip_form", lambda *a, **k: solve(*a, **{**k, "node_limit": 0}))
    ingredients = [["Ingredient", "Cost", "Min if used", "Protein"], ["A", 1, 5, 10], ["B", 2, None, 20]]
    specs = [["Nutrient", "Min", "Max"], ["Protein", 12, None]]
    path = make_workbook(tmp_path, ingredients, specs, [["Setting", "Value"]],
                         sheets={"Products": [["Product", "Amount"], ["P1", 2000], ["P2", 1000]]})
    result = runner.invoke(app, ["solve", str(path), "-o", str(tmp_path / "out.xlsx"), "--json"])
    assert isinstance(result.exception, SystemExit) and result.exit_code == 4, repr(result.exception)
    doc = json.loads(result.stdout)
    assert doc["status"] == "time_limit" and doc["total_cost"] is None
    status, optimum = highs_optimum(path, min_if_used={(0, "A"): 5, (1, "A"): 5})
    assert status == 0  # reference: scipy.optimize.milp; the joint LP is the two parts side by side
    assert doc["cross_check"]["status"] == "optimal"
    assert doc["cross_check"]["cost"] == pytest.approx(optimum, rel=MIP_RTOL)  # reference: scipy.optimize.milp
    # out of time before a formula: no disagreement between the engines
    assert doc["cross_check"]["difference"] is None and doc["cross_check"]["agrees"]


def test_frames_read_the_rule_columns_and_settings():
    import pandas as pd

    from blendkit.model.blend import Blend
    from blendkit.model.weighing import max_ingredients, weigh_rule

    ingredients = pd.DataFrame({"Ingredient": ["Maize", "Soybean meal", "Premix"], "Cost": [200, 400, 2000],
                                "Pack size": [None, None, 25], "Min if used": [None, 5, None],
                                "Crude protein": [9, 45, 0]})
    blend = Blend.from_frames(ingredients, pd.DataFrame({"Nutrient": ["Crude protein"], "Min": [18], "Max": [None]}),
                              settings={"Max ingredients": 3, "Scale step": 0.5})
    assert weigh_rule(blend, blend.ingredient("Premix")).pack_size == 25
    assert weigh_rule(blend, blend.ingredient("Soybean meal")).min_if_used == 5
    assert weigh_rule(blend, blend.ingredient("Maize")).scale_step == 0.5
    assert max_ingredients(blend) == 3
    above = r'ingredients\[row 1, column "Min if used"\]: min if used 5 is above max 4 in ingredients\[row 1, column "Max"\]'
    with pytest.raises(WorkbookError, match=above):
        Blend.from_frames(ingredients.assign(**{"Min if used": [None, 5, None], "Max": [None, 4, None]}),
                          pd.DataFrame({"Nutrient": ["Crude protein"], "Min": [18], "Max": [None]}))


def test_sweep_refuses_a_workbook_with_rules_it_cannot_apply(tmp_path):
    path = sample_with(tmp_path, "broiler_starter", settings={"Scale step": 0.5})
    result = runner.invoke(app, ["sweep", str(path), "--ingredient", "Maize"])
    assert result.exit_code == 2
    assert "cannot apply the weighing rules" in result.output


def test_output_workbook_says_what_the_rules_cost_and_how_prices_hold(tmp_path):
    path = sample_with(tmp_path, "broiler_starter", settings={"Scale step": 0.5})
    out = tmp_path / "out.xlsx"
    result = runner.invoke(app, ["solve", str(path), "-o", str(out), "--no-cross-check"])
    assert result.exit_code == 0 and "Weighing rules: LP cost" in result.output
    book = openpyxl.load_workbook(out)
    text = [value for row in book["Result"].iter_rows(values_only=True) for value in row if isinstance(value, str)]
    assert "Weighing rules" in text
    assert any(value.startswith("Weighing rules: LP cost") and "proven cheapest" in value for value in text)
    assert "with the whole-number choices fixed" in book["Shadow prices"]["A1"].value
    assert any("formulations must be checked" in value.lower() for value in text)  # the caution stays


def test_export_mps_writes_the_integer_program_that_highs_solves_to_our_optimum(tmp_path):
    from tests.mps_reference import _highs

    packs = {"L-lysine HCl": 5, "DL-methionine": 5, "L-threonine": 2.5, "Monocalcium phosphate": 25}
    path = sample_with(tmp_path, "broiler_starter", settings={"Max ingredients": 12},
                       columns={"Min if used (%)": BROILER_THRESHOLDS, "Pack size (kg)": packs})
    mps_file = tmp_path / "broiler.mps"
    result = runner.invoke(app, ["solve", str(path), "-o", str(tmp_path / "out.xlsx"), "--json",
                                 "--export-mps", str(mps_file), "--no-cross-check"])
    assert result.exit_code == 0
    doc = json.loads(result.stdout)
    ours = doc["cost"]
    assert ours > doc["practical"]["lp_cost"] * (1 + MIP_RTOL)  # the rules cost something: the file holds them
    highs = _highs(mps_file)  # reference: HiGHS reading the MPS file (integer markers) and solving the MIP
    highs.setOptionValue("mip_rel_gap", 1e-7)
    highs.run()
    assert highs.getInfo().objective_function_value == pytest.approx(ours, rel=MIP_RTOL)
    assert int(np.sum(np.asarray(highs.getLp().integrality_) != 0)) > 0

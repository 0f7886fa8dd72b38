"""The worked examples: workbook structure, and an independent solve with scipy's HiGHS.

These tests read the written workbooks back with openpyxl alone and build each LP from
their cells (`formulate_with_highs`), so they check the example data and the writer
without blendkit's own reader or engine.
"""

from __future__ import annotations

import functools
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest
from openpyxl import Workbook, load_workbook
from scipy.optimize import OptimizeResult, linprog

from blendkit import CAUTION
from blendkit.authoring.examples import EXAMPLES, main, write_example

SAMPLE_WORKBOOKS = Path(__file__).resolve().parent.parent / "sample_workbooks"

# Looser than HiGHS's own feasibility tolerance (1e-7), in the nutrients' own units.
LEVEL_TOLERANCE = 1e-6

# The HiGHS optimum of each example as the data stands: EUR per tonne of blend (broiler,
# feed, fertilizer), EUR for the day's food (diet), EUR for the whole run (plant). Change
# one together with its data, after checking the new formula still makes sense.
BROILER_STARTER_COST = 349.12665
OPTIMUM = {
    "broiler": BROILER_STARTER_COST,
    "layer": 265.788105,
    "diet": 2.50626496,
    "fertilizer": 409.695180,
    "plant": 42504.3284,
}

# Ingredients columns that are not nutrients, by column key.
INGREDIENT_KEYS = {"ingredient", "cost", "min", "max", "use", "unit", "stock"}

# Mass units in kg, for the few the examples use (an independent copy, not blendkit's).
KG = {"kg": 1.0, "t": 1000.0, "tonne": 1000.0}


def column_key(header: str) -> str:
    """How the reader matches headers: case-insensitive, a trailing "(unit)" ignored."""
    return re.sub(r"\s*\([^)]*\)\s*$", "", str(header)).strip().lower()


def workbook_at(path: Path) -> Workbook:
    """The workbook at `path`, loaded once while the file is unchanged (callers only read it)."""
    stat = Path(path).stat()
    return _load(str(path), stat.st_mtime_ns, stat.st_size)


@functools.lru_cache(maxsize=16)
def _load(path: str, mtime_ns: int, size: int) -> Workbook:
    """Cache behind `workbook_at`: openpyxl loads are the slow part of these tests."""
    return load_workbook(path, data_only=True)


def rows(path: Path, sheet: str) -> list[tuple]:
    """Every row of one sheet as plain values, header first."""
    return list(workbook_at(path)[sheet].iter_rows(values_only=True))


def records(path: Path, sheet: str) -> list[dict]:
    """The data rows of one sheet as dicts keyed by column key; [] if there is no such sheet."""
    workbook = workbook_at(path)
    if sheet not in workbook.sheetnames:
        return []
    header, *data = workbook[sheet].iter_rows(values_only=True)
    return [dict(zip(map(column_key, header), row)) for row in data if any(v is not None for v in row)]


def names_in(text: str) -> list[str]:
    """The ingredient names in a Groups cell, separated by commas or semicolons."""
    return [name.strip() for name in re.split(r"[,;]", text) if name.strip()]


@dataclass
class Reference:
    """A workbook's LP solved by HiGHS, with what is needed to read the answer.

    Columns are x[p, j], product p's inclusion of ingredient j in % (amount in the food's
    unit in diet mode). `products` are (name, amount), name None without a Products sheet.
    """

    result: OptimizeResult
    names: list[str]
    nutrients: list[str]  # column keys
    contents: np.ndarray  # ingredient x nutrient
    products: list[tuple[str | None, float]]
    per: float  # 1/100 in blend mode, 1 in diet mode
    specs: list[dict]

    def inclusion(self, product: str | None = None) -> dict[str, float]:
        """Inclusion (or amount) of each ingredient in one product."""
        p = [name for name, _ in self.products].index(product)
        J = len(self.names)
        return dict(zip(self.names, self.result.x[p * J : (p + 1) * J]))

    def levels(self, product: str | None = None) -> dict[str, float]:
        """Level (or diet total) of each nutrient in one product, as fed."""
        x = np.array(list(self.inclusion(product).values()))
        return dict(zip(self.nutrients, self.per * x @ self.contents))

    def level(self, spec: dict, product: str | None = None) -> float:
        """The quantity a Specs row bounds: a level, a ratio, or a level on dry matter."""
        levels = self.levels(product)
        if spec["ratio"]:
            a, b = spec["ratio"]
            return levels[a] / levels[b]
        if spec["basis"] == "dry matter":
            return levels[spec["nutrient"]] / levels[spec["dm"]] * 100
        return levels[spec["nutrient"]]


def formulate_with_highs(path: Path) -> Reference:
    """Formulate the blend, diet or run of products in a workbook and solve it with HiGHS.

    Written from the workbook format alone: inclusions sum to 100 per product (not in
    diet mode); a level is sum x * content / 100 (sum x * content in diet mode); a ratio
    A / B in [lo, hi] is sum x (A - lo B) >= 0 and sum x (A - hi B) <= 0; a dry-matter
    level L is sum x (content - L dm / 100) against 0; groups bound sums of x; Limits
    replace Ingredients' Min / Max in one product; Stock bounds sum_p amount_p x / 100.
    """
    settings = {column_key(r["setting"]): r["value"] for r in records(path, "Settings")}
    diet = str(settings.get("mode") or "blend").lower() == "diet"
    per = 1.0 if diet else 0.01
    dm_key = column_key(settings.get("dry matter") or "Dry matter")

    header, *table = rows(path, "Ingredients")
    table = [row for row in table if any(value is not None for value in row)]
    keys = [column_key(h) for h in header]
    nutrient_columns = [i for i, key in enumerate(keys) if key not in INGREDIENT_KEYS]
    nutrients = [keys[i] for i in nutrient_columns]
    items = [dict(zip(keys, row)) for row in table]
    names = [item["ingredient"] for item in items]
    J = len(names)
    cost = np.array([item["cost"] for item in items], dtype=float)
    contents = np.array([[row[i] or 0.0 for i in nutrient_columns] for row in table], dtype=float)

    product_rows = records(path, "Products")
    products = [(r["product"], float(r["amount"])) for r in product_rows] or [
        (None, float(settings.get("batch size") or 1000))
    ]
    P = len(products)
    unit_mass = KG[str(settings.get("cost per") or "tonne").lower()] / KG[str(settings.get("mass unit") or "kg").lower()]

    specs = []
    for r in records(path, "Specs"):
        parts = [column_key(part) for part in str(r["nutrient"]).split("/")]
        specs.append(
            {
                "text": r["nutrient"],
                "nutrient": parts[0] if len(parts) == 1 else None,
                "ratio": tuple(parts) if len(parts) == 2 else None,
                "basis": str(r.get("basis") or "as fed").lower(),
                "product": r.get("product"),
                "min": r["min"],
                "max": r["max"],
                "dm": dm_key,
            }
        )
    limits = {(r["product"], r["ingredient"]): (r["min"], r["max"]) for r in records(path, "Limits")}
    groups = records(path, "Groups")

    a_ub, b_ub, a_eq, b_eq, bounds = [], [], [], [], []

    def wide(p: int, values: np.ndarray) -> np.ndarray:
        """A row over every column with `values` in product p's columns."""
        full = np.zeros(P * J)
        full[p * J : (p + 1) * J] = values
        return full

    def at_least(row: np.ndarray, bound: float) -> None:
        a_ub.append(-row)
        b_ub.append(-bound)

    def at_most(row: np.ndarray, bound: float) -> None:
        a_ub.append(row)
        b_ub.append(bound)

    column = {key: contents[:, i] for i, key in enumerate(nutrients)}
    for p, (product, _) in enumerate(products):
        for j, item in enumerate(items):
            low, high = limits.get((product, item["ingredient"]), (item.get("min"), item.get("max")))
            used = str(item.get("use") or "yes").strip().lower() == "yes"
            bounds.append(((low or 0.0), high) if used else (0.0, 0.0))
        if not diet:
            a_eq.append(wide(p, np.ones(J)))
            b_eq.append(100.0)
        for spec in specs:
            if spec["product"] not in (None, product):
                continue
            for bound, side in ((spec["min"], at_least), (spec["max"], at_most)):
                if bound is None:
                    continue
                if spec["ratio"]:
                    a, b = spec["ratio"]
                    side(wide(p, per * (column[a] - bound * column[b])), 0.0)
                elif spec["basis"] == "dry matter":
                    side(wide(p, per * (column[spec["nutrient"]] - bound * column[dm_key] / 100)), 0.0)
                else:
                    side(wide(p, per * column[spec["nutrient"]]), bound)
        for group in groups:
            if group.get("product") not in (None, product):
                continue
            assert set(names_in(group["ingredients"])) <= set(names), group
            members = np.isin(names, names_in(group["ingredients"])).astype(float)
            if group["min"] is not None:
                at_least(wide(p, members), group["min"])
            if group["max"] is not None:
                at_most(wide(p, members), group["max"])
    for j, item in enumerate(items):
        if item.get("stock") is not None:
            row = np.zeros(P * J)
            for p, (_, amount) in enumerate(products):
                row[p * J + j] = amount * per
            at_most(row, item["stock"])

    if product_rows:
        objective = np.concatenate([amount / unit_mass * per * cost for _, amount in products])
    else:
        objective = per * cost
    result = linprog(
        objective,
        A_ub=np.array(a_ub) if a_ub else None,
        b_ub=b_ub or None,
        A_eq=np.array(a_eq) if a_eq else None,
        b_eq=b_eq or None,
        bounds=bounds,
        method="highs",
    )
    return Reference(result, names, nutrients, contents, products, per, specs)


def solve_with_highs(path: Path):
    """The broiler-style view of `formulate_with_highs` for one blend: the scipy result,
    the ingredient names, the nutrient keys, the content matrix (ingredient x nutrient)
    and the plain specs as {nutrient: (min, max)}."""
    reference = formulate_with_highs(path)
    specs = {
        spec["nutrient"]: (spec["min"], spec["max"])
        for spec in reference.specs
        if spec["nutrient"] and spec["basis"] == "as fed"
    }
    return reference.result, reference.names, reference.nutrients, reference.contents, specs


def assert_specs_met(reference: Reference) -> set[str]:
    """Every Specs row holds in every product it applies to; returns the binding rows."""
    binding = set()
    for product, _ in reference.products:
        for spec in reference.specs:
            if spec["product"] not in (None, product):
                continue
            level = reference.level(spec, product)
            for bound, sign in ((spec["min"], 1), (spec["max"], -1)):
                if bound is None:
                    continue
                # ratios and dry-matter levels: the tolerance scaled by the denominator's size
                assert sign * (level - bound) >= -LEVEL_TOLERANCE * max(1.0, abs(bound)), (product, spec["text"])
                if abs(level - bound) < 1e-5 * max(1.0, abs(bound)):
                    binding.add((product, spec["text"]))
    return binding


def used(path: Path, sheet: str, column: int = 0) -> set:
    """The values in one column of a sheet's data rows (blank rows skipped)."""
    return {row[column] for row in rows(path, sheet)[1:] if row[column] is not None}


@pytest.fixture(params=sorted(EXAMPLES))
def example(request, tmp_path: Path) -> tuple[str, Path]:
    """Each example, by name, written to a fresh file."""
    return request.param, write_example(tmp_path, request.param)


@pytest.fixture
def broiler(tmp_path: Path) -> Path:
    """The broiler starter example written to a fresh file."""
    return write_example(tmp_path / "broiler.xlsx", "broiler")


# --- Every example ----------------------------------------------------------------------


def test_every_example_has_its_sheets_in_order(example):
    name, path = example
    data = EXAMPLES[name]
    expected = ["Ingredients", "Specs"] + ["Combined"] * bool(data.combined)
    expected += ["Groups"] * bool(data.groups) + ["Products"] * bool(data.products) + ["Limits"] * bool(data.limits)
    expected += ["Settings", "Notes"]
    workbook = load_workbook(path)
    assert workbook.sheetnames == expected
    for sheet in workbook:
        assert sheet.freeze_panes is not None, sheet.title
        assert all(cell.font.bold for cell in sheet[1] if cell.value is not None), sheet.title


def test_every_example_ingredients_header(example):
    name, path = example
    header = rows(path, "Ingredients")[0]
    unit = "units" if EXAMPLES[name].diet else "%"
    assert header[:5] == ("Ingredient", EXAMPLES[name].cost_header, f"Min ({unit})", f"Max ({unit})", "Use")
    nutrients = header[5 + len(EXAMPLES[name].extra_columns) :]
    assert nutrients and all(re.fullmatch(r".+ \([^)]+\)", h) for h in nutrients), nutrients
    assert len(set(map(column_key, header))) == len(header)
    names = [row[0] for row in rows(path, "Ingredients")[1:]]
    assert len(set(names)) == len(names)


def test_every_example_names_only_what_exists(example):
    _, path = example
    header = rows(path, "Ingredients")[0]
    nutrients = {column_key(h) for h in header} - INGREDIENT_KEYS
    ingredients = used(path, "Ingredients")
    products = used(path, "Products") if "Products" in workbook_at(path).sheetnames else set()
    for spec in records(path, "Specs"):
        parts = [column_key(part) for part in str(spec["nutrient"]).split("/")]
        assert len(parts) in (1, 2) and set(parts) <= nutrients, spec
        assert spec["min"] is not None or spec["max"] is not None, spec
        assert spec["min"] is None or spec["max"] is None or spec["min"] <= spec["max"], spec
        assert spec.get("basis") in (None, "as fed", "dry matter"), spec
        assert spec.get("product") is None or spec["product"] in products, spec
    for group in records(path, "Groups"):
        assert set(names_in(group["ingredients"])) <= ingredients, group
        assert group.get("product") is None or group["product"] in products, group
    for limit in records(path, "Limits"):
        assert limit["product"] in products and limit["ingredient"] in ingredients, limit
    keys = [(s["nutrient"], s.get("basis") or "as fed", s.get("product")) for s in records(path, "Specs")]
    assert len(set(keys)) == len(keys)  # each nutrient once per basis and product


def test_every_example_notes_state_scenario_sources_and_caution(example):
    _, path = example
    notes = " ".join(row[0] for row in rows(path, "Notes")[1:])
    assert "Scenario (invented)" in notes
    assert "from memory of published" in notes or "common practice" in notes
    assert CAUTION in notes


def test_every_example_solves_with_highs_to_its_recorded_optimum(example):
    # Reference: scipy.optimize.linprog with HiGHS, independent of blendkit's engine.
    name, path = example
    reference = formulate_with_highs(path)
    assert reference.result.status == 0, reference.result.message
    assert reference.result.fun == pytest.approx(OPTIMUM[name], rel=1e-7)
    assert_specs_met(reference)


def test_every_example_solves_in_blendkit_to_the_highs_optimum(example):
    from blendkit.pipeline import formulate
    from blendkit.read.workbook import read_workbook

    name, path = example
    formula = formulate(read_workbook(path))
    assert formula.status == "optimal", formula.message
    assert formula.cost == pytest.approx(OPTIMUM[name], rel=1e-6)


# --- The broiler starter ------------------------------------------------------------------


def test_broiler_sheets_and_columns(broiler: Path):
    workbook = load_workbook(broiler)
    assert workbook.sheetnames == ["Ingredients", "Specs", "Combined", "Settings", "Notes"]
    header = [cell.value for cell in workbook["Ingredients"][1]]
    assert header[:5] == ["Ingredient", "Cost (EUR/t)", "Min (%)", "Max (%)", "Use"]
    assert [c.value for c in workbook["Specs"][1]] == ["Nutrient", "Min", "Max"]
    assert [c.value for c in workbook["Settings"][1]] == ["Setting", "Value"]


def test_broiler_settings(broiler: Path):
    settings = dict(rows(broiler, "Settings")[1:])
    assert settings == {
        "Name": "Broiler starter, days 0-10",
        "Batch size": 2000,
        "Mass unit": "kg",
        "Cost per": "tonne",
        "Currency": "EUR",
    }


def test_broiler_ingredients_show_use_no_blanks_and_a_fixed_premix(broiler: Path):
    table = rows(broiler, "Ingredients")[1:]
    assert 14 <= len(table) <= 18
    assert [row[0] for row in table if row[4] == "no"] == ["Fish meal 65"]
    assert {row[4] for row in table} == {"yes", "no"}
    assert sum(value is None for row in table for value in row[5:]) >= 2
    premix = next(row for row in table if row[0] == "Vitamin-mineral premix")
    assert premix[2] == premix[3] == 0.5


def test_broiler_notes_name_the_feed_tables(broiler: Path):
    notes = " ".join(row[0] for row in rows(broiler, "Notes")[1:])
    assert "from memory of published feed tables; for demonstration only, not for feeding" in notes


def test_highs_finds_a_plausible_least_cost_starter(broiler: Path):
    # Reference: scipy.optimize.linprog with HiGHS, independent of blendkit's engine.
    result, names, nutrients, contents, specs = solve_with_highs(broiler)
    assert result.status == 0, result.message
    assert result.fun == pytest.approx(BROILER_STARTER_COST, rel=1e-6)
    # Broiler starter feeds cost a few hundred euros a tonne (common practice, from memory).
    assert 250 < result.fun < 500

    inclusion = dict(zip(names, result.x))
    assert sum(inclusion.values()) == pytest.approx(100)
    largest = sorted(inclusion, key=inclusion.get, reverse=True)[:3]
    assert largest == ["Maize", "Soybean meal 47", "Wheat"]
    assert inclusion["Fish meal 65"] == 0  # Use = no
    assert inclusion["Vitamin-mineral premix"] == pytest.approx(0.5)
    assert inclusion["Meat and bone meal 50"] == pytest.approx(4)  # at its Max
    assert inclusion["Soybean oil"] > 0

    levels = dict(zip(nutrients, result.x @ contents / 100))
    for nutrient, (minimum, maximum) in specs.items():
        assert minimum is None or levels[nutrient] >= minimum - LEVEL_TOLERANCE, nutrient
        assert maximum is None or levels[nutrient] <= maximum + LEVEL_TOLERANCE, nutrient
    binding = {
        nutrient
        for nutrient, bounds in specs.items()
        if any(bound is not None and abs(levels[nutrient] - bound) < LEVEL_TOLERANCE for bound in bounds)
    }
    essentials = {"me", "calcium", "available phosphorus", "sodium", "digestible lysine"}
    assert essentials <= binding


# --- The layer feed -----------------------------------------------------------------------


def test_layer_feed_structure(tmp_path: Path):
    path = write_example(tmp_path, "layer")
    table = rows(path, "Ingredients")
    assert 12 <= len(table) - 1 <= 18
    assert 10 <= len(table[0]) - 5 <= 14
    specs = [spec["nutrient"] for spec in records(path, "Specs")]
    assert "Calcium / Available phosphorus" in specs
    groups = {group["group"]: group for group in records(path, "Groups")}
    assert groups["Animal proteins"]["max"] == 5
    assert set(names_in(groups["Animal proteins"]["ingredients"])) == {"Meat and bone meal 50", "Fish meal 65"}


def test_layer_feed_is_a_plausible_layer_mash(tmp_path: Path):
    # Reference: scipy's HiGHS; plausibility from common practice for layer feeds (from
    # memory): mostly cereal, about 8-10 % limestone, calcium near 4 % and a Ca : available
    # P ratio of roughly 8-12.
    reference = formulate_with_highs(write_example(tmp_path, "layer"))
    inclusion, levels = reference.inclusion(), reference.levels()
    assert 200 < reference.result.fun < 400  # EUR per tonne
    assert max(inclusion, key=inclusion.get) == "Maize"
    assert 7 <= inclusion["Limestone grit"] <= 10
    assert 3.8 - LEVEL_TOLERANCE <= levels["calcium"] <= 4.2 + LEVEL_TOLERANCE
    assert 8 <= levels["calcium"] / levels["available phosphorus"] <= 12
    animal = inclusion["Meat and bone meal 50"] + inclusion["Fish meal 65"]
    assert animal == pytest.approx(5)  # the Animal proteins group binds
    binding = assert_specs_met(reference)
    assert (None, "Calcium / Available phosphorus") in binding  # the ratio limits the mix


# --- The day's menu -----------------------------------------------------------------------


def test_day_menu_structure(tmp_path: Path):
    path = write_example(tmp_path, "diet")
    settings = {r["setting"]: r["value"] for r in records(path, "Settings")}
    assert settings["Mode"] == "diet"
    foods = records(path, "Ingredients")
    assert 15 <= len(foods) <= 25
    assert {food["unit"] for food in foods} == {"100 g"}
    assert all(food["max"] is not None and food["max"] <= 5 for food in foods)  # portion limits
    assert all(food["cost"] < 2 for food in foods)  # prices per 100 g
    nutrients = {column_key(h) for h in rows(path, "Ingredients")[0]} - INGREDIENT_KEYS
    assert {"energy", "protein", "fat", "carbohydrate", "fibre", "calcium", "iron", "vitamin c", "sodium"} <= nutrients


def test_day_menu_is_a_plausible_days_food(tmp_path: Path):
    # Reference: scipy's HiGHS. Plausibility from common dietary advice (from memory): about
    # 1-2.5 kg of food a day, at least 400 g of vegetables and fruit, fat 20-35 % and
    # carbohydrate at least 45 % of energy (fat 9 kcal/g, carbohydrate 4 kcal/g).
    reference = formulate_with_highs(write_example(tmp_path, "diet"))
    amounts, totals = reference.inclusion(), reference.levels()
    assert 1 < reference.result.fun < 10  # EUR for the day
    assert 10 <= sum(amounts.values()) <= 25  # units of 100 g
    produce = ["Carrots", "Cabbage", "Broccoli", "Tomatoes", "Onions", "Frozen peas", "Bananas", "Apples", "Oranges"]
    assert sum(amounts[food] for food in produce) >= 4 - LEVEL_TOLERANCE
    assert 2400 - LEVEL_TOLERANCE <= totals["energy"] <= 2600 + LEVEL_TOLERANCE
    assert 0.20 <= 9 * totals["fat"] / totals["energy"] <= 0.35
    assert 4 * totals["carbohydrate"] / totals["energy"] >= 0.45
    assert sum(amount > 1e-9 for amount in amounts.values()) >= 8  # a varied menu, not one food


# --- The N-P-K blend ----------------------------------------------------------------------


def test_npk_blend_structure(tmp_path: Path):
    path = write_example(tmp_path, "fertilizer")
    assert [column_key(h) for h in rows(path, "Ingredients")[0][5:]] == ["n", "p2o5", "k2o", "s"]
    grades = {r["ingredient"]: (r["n"], r["p2o5"], r["k2o"], r["s"]) for r in records(path, "Ingredients")}
    # The usual nominal grades of the straight materials (common practice).
    assert grades == {
        "Urea 46-0-0": (46, 0, 0, 0),
        "Diammonium phosphate 18-46-0": (18, 46, 0, 0),
        "Muriate of potash 0-0-60": (0, 0, 60, 0),
        "Ammonium sulphate 21-0-0 24S": (21, 0, 0, 24),
        "Limestone filler 0-0-0": (0, 0, 0, 0),
    }


def test_npk_blend_meets_the_grade_calculation(tmp_path: Path):
    # Reference: scipy's HiGHS, and the hand calculation of a bulk blend's grade (common
    # practice): nutrient % = sum of inclusion % x the material's nutrient % / 100.
    path = write_example(tmp_path, "fertilizer")
    reference = formulate_with_highs(path)
    x = reference.inclusion()
    assert sum(x.values()) == pytest.approx(100)
    n = (x["Urea 46-0-0"] * 46 + x["Diammonium phosphate 18-46-0"] * 18 + x["Ammonium sulphate 21-0-0 24S"] * 21) / 100
    p2o5 = x["Diammonium phosphate 18-46-0"] * 46 / 100
    k2o = x["Muriate of potash 0-0-60"] * 60 / 100
    s = x["Ammonium sulphate 21-0-0 24S"] * 24 / 100
    for value in (n, p2o5, k2o):
        assert 15 - LEVEL_TOLERANCE <= value <= 15.5 + LEVEL_TOLERANCE
    assert s >= 2 - LEVEL_TOLERANCE

    # The same calculation worked through: P2O5 comes only from DAP and K2O only from
    # potash, so at the grade's minimum DAP = 15 / 46 and potash = 15 / 60 of the blend;
    # sulphur only from ammonium sulphate (2 / 24); urea tops N up to 15; the filler makes
    # up the rest. Cheapest, as HiGHS found.
    dap, potash, sulphate = 15 / 46 * 100, 15 / 60 * 100, 2 / 24 * 100
    urea = (15 - 0.18 * dap - 0.21 * sulphate) / 0.46
    filler = 100 - dap - potash - sulphate - urea
    worked = {
        "Diammonium phosphate 18-46-0": dap,
        "Muriate of potash 0-0-60": potash,
        "Ammonium sulphate 21-0-0 24S": sulphate,
        "Urea 46-0-0": urea,
        "Limestone filler 0-0-0": filler,
    }
    assert x == pytest.approx(worked, abs=1e-6)
    cost = (dap * 650 + potash * 380 + sulphate * 280 + urea * 450 + filler * 40) / 100
    assert reference.result.fun == pytest.approx(cost, rel=1e-9)
    # Bulk blends of straight materials cost a few hundred euros a tonne (common practice).
    assert 250 < reference.result.fun < 700


# --- The feed plant -----------------------------------------------------------------------


def test_feed_plant_structure(tmp_path: Path):
    path = write_example(tmp_path, "plant")
    products = {r["product"]: r["amount"] for r in records(path, "Products")}
    assert products == {"Grower": 60, "Finisher": 90, "Sow feed": 30}
    specs = records(path, "Specs")
    assert any(spec["product"] is None for spec in specs)
    assert {spec["product"] for spec in specs} == {None, *products}
    assert any(spec["basis"] == "dry matter" for spec in specs)
    assert len(records(path, "Limits")) >= 3
    stocks = {r["ingredient"]: r["stock"] for r in records(path, "Ingredients") if r["stock"] is not None}
    assert stocks == {"Sugar beet pulp": 3, "Field peas": 12}


def test_feed_plant_shares_scarce_stocks_plausibly(tmp_path: Path):
    # Reference: scipy's HiGHS. Plausibility from common practice for pig feeds (from
    # memory): cereal-based, a couple of hundred euros a tonne, sow feed the cheapest.
    path = write_example(tmp_path, "plant")
    reference = formulate_with_highs(path)
    prices = {r["ingredient"]: r["cost"] for r in records(path, "Ingredients")}
    per_tonne = {}
    for product, _ in reference.products:
        inclusion = reference.inclusion(product)
        assert sum(inclusion.values()) == pytest.approx(100)
        assert inclusion["Barley"] + inclusion["Wheat"] + inclusion["Maize"] >= 50, product
        per_tonne[product] = sum(inclusion[name] * price for name, price in prices.items()) / 100
    assert all(150 < cost < 350 for cost in per_tonne.values()), per_tonne
    assert per_tonne["Sow feed"] == min(per_tonne.values())
    # The run's cost is the products' amounts (t) times their costs per tonne.
    assert reference.result.fun == pytest.approx(sum(amount * per_tonne[p] for p, amount in reference.products))

    def stock_used(name: str) -> float:
        return sum(amount * reference.inclusion(product)[name] / 100 for product, amount in reference.products)

    assert stock_used("Field peas") == pytest.approx(12)  # the whole stock: it binds
    assert stock_used("Sugar beet pulp") == pytest.approx(3)
    assert reference.inclusion("Grower")["Field peas"] <= 15 + LEVEL_TOLERANCE  # Limits rows
    assert reference.inclusion("Grower")["Rapeseed meal"] <= 5 + LEVEL_TOLERANCE
    assert reference.inclusion("Sow feed")["Sugar beet pulp"] > 5  # above Ingredients' Max, as Limits allows
    binding = assert_specs_met(reference)
    assert ("Sow feed", "Crude fibre") in binding  # the dry-matter spec
    assert ("Grower", "SID threonine / SID lysine") in binding  # a ratio for every product


# --- Writing --------------------------------------------------------------------------------


def test_write_into_a_directory_uses_the_example_file_name(tmp_path: Path):
    assert write_example(tmp_path) == tmp_path / "broiler_starter.xlsx"
    assert (tmp_path / "broiler_starter.xlsx").is_file()
    assert write_example(tmp_path, "plant") == tmp_path / "pig_feed_plant.xlsx"


def test_unknown_example_name(tmp_path: Path):
    with pytest.raises(KeyError):
        write_example(tmp_path, "no such example")


def test_main_writes_every_example(tmp_path: Path, capsys):
    out = tmp_path / "out"
    main([str(out)])
    expected = {f"{example.file_stem}.xlsx" for example in EXAMPLES.values()}
    assert {p.name for p in out.iterdir()} == expected
    assert len(expected) == len(EXAMPLES)
    assert len(capsys.readouterr().out.splitlines()) == len(EXAMPLES)


@pytest.mark.parametrize("name", sorted(EXAMPLES))
def test_sample_workbook_is_current(name: str, tmp_path: Path):
    fresh = write_example(tmp_path, name)
    stored = SAMPLE_WORKBOOKS / fresh.name
    assert stored.is_file(), f"run: python -m blendkit.authoring.examples {SAMPLE_WORKBOOKS.name}"
    fresh_book, stored_book = load_workbook(fresh), load_workbook(stored)
    assert stored_book.sheetnames == fresh_book.sheetnames
    for sheet in fresh_book.sheetnames:
        assert list(stored_book[sheet].values) == list(fresh_book[sheet].values), (
            f"{stored} is out of date: run python -m blendkit.authoring.examples {SAMPLE_WORKBOOKS.name}"
        )

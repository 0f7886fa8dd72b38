"""Diet mode against a published problem: Stigler's diet problem (1945).

Source: G. J. Stigler, "The Cost of Subsistence", Journal of Farm Economics 27 (1945)
303-314, with the 1939 prices and the data as transcribed in ../shared/reference/
stigler1939.csv (see the README there; tests/reference_data.py finds the folder). The
exact optimum of that table is computed here by scipy's HiGHS from the same file (the
README gives 0.1086622782 dollars a day, five foods); the published annual figures are
only a loose check. The test skips when the file is absent, and fails under CI (CI=true).
"""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest
from scipy.optimize import linprog
from typer.testing import CliRunner

from blendkit.cli import app
from tests.reference_data import reference_file
from tests.workbooks import make_workbook

# Daily allowances used by Stigler (US National Research Council, 1943), from the
# reference README, in the table's units.
ALLOWANCES = {
    "Calories": 3.0,  # thousand kcal
    "Protein": 70.0,  # g
    "Calcium": 0.8,  # g
    "Iron": 12.0,  # mg
    "Vitamin A": 5.0,  # thousand IU
    "Thiamine": 1.8,  # mg
    "Riboflavin": 2.7,  # mg
    "Niacin": 18.0,  # mg
    "Ascorbic acid": 75.0,  # mg
}
COLUMNS = {
    "Calories": "calories_kcal_thousands",
    "Protein": "protein_g",
    "Calcium": "calcium_g",
    "Iron": "iron_mg",
    "Vitamin A": "vitamin_a_kiu",
    "Thiamine": "thiamine_mg",
    "Riboflavin": "riboflavin_mg",
    "Niacin": "niacin_mg",
    "Ascorbic acid": "ascorbic_acid_mg",
}
# ../shared/reference/README.md: "the simplex solution computed by hand in 1947 was reported
# as $39.69 a year (the rounding and day count behind that figure are not stated)", and
# Stigler's own diet (found without the simplex method) cost $39.93 a year.
PUBLISHED_SIMPLEX_DOLLARS_A_YEAR = 39.69
STIGLER_OWN_DOLLARS_A_YEAR = 39.93


def highs_diet(foods):
    """The README's model solved by scipy's HiGHS: minimise the dollars spent a day,
    sum over foods of y_f x value[f, n] >= minimum[n] for the nine nutrients."""
    values = np.array([[float(food[c]) for c in COLUMNS.values()] for food in foods])
    minimum = np.array(list(ALLOWANCES.values()))
    res = linprog(np.ones(len(foods)), A_ub=-values.T, b_ub=-minimum, bounds=(0, None), method="highs")
    assert res.status == 0, res.message
    return res


def test_stigler_diet_in_diet_mode(tmp_path):
    data = reference_file("stigler1939.csv")
    # Each food's amount is in "dollars' worth" (the table gives nutrients per $1 spent),
    # so every food costs 1 per unit and the optimum is the dollars spent a day.
    with data.open(newline="") as handle:
        foods = list(csv.DictReader(handle))
    assert len(foods) == 77  # reference README: 77 foods
    header = ["Ingredient", "Cost", "Unit", *COLUMNS]
    rows = [[food["food"], 1.0, "$1 of food", *(float(food[c]) for c in COLUMNS.values())] for food in foods]
    specs = [["Nutrient", "Min", "Max"], *([name, value, None] for name, value in ALLOWANCES.items())]
    book = make_workbook(
        tmp_path,
        [header, *rows],
        specs,
        [["Setting", "Value"], ["Mode", "diet"], ["Currency", "USD"], ["Name", "Stigler 1939"]],
    )
    result = CliRunner().invoke(app, ["solve", str(book), "--json"])
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    # The exact optimum of the table: scipy's HiGHS on the same data.
    reference = highs_diet(foods)
    assert doc["cost"] == pytest.approx(reference.fun, rel=1e-9)
    chosen = {name for name, amount in doc["ingredients"].items() if amount > 1e-9}
    assert chosen == {food["food"] for food, y in zip(foods, reference.x) if y > 1e-9}
    # Reference README: HiGHS gives 0.1086622782 dollars a day with these five foods.
    assert doc["cost"] == pytest.approx(0.1086622782, rel=1e-9)
    assert chosen == {"Wheat Flour (Enriched)", "Liver (Beef)", "Cabbage", "Spinach", "Navy Beans, Dried"}
    # Loose checks against the published annual figures (day count and rounding unstated):
    # within 10 cents a year of the 1947 simplex figure over 365 days, and below the cost
    # of Stigler's own diet, which met the same allowances (from memory) and so cannot be
    # cheaper than the optimum.
    assert doc["cost"] * 365 == pytest.approx(PUBLISHED_SIMPLEX_DOLLARS_A_YEAR, abs=0.10)
    assert doc["cost"] * 365 < STIGLER_OWN_DOLLARS_A_YEAR

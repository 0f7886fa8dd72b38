"""Diet mode against a published optimum: Stigler's diet problem (1945).

Source: G. J. Stigler, "The Cost of Subsistence", Journal of Farm Economics 27 (1945)
303-314, with the 1939 prices and the data as transcribed in ../shared/reference/
(see the README there). The exact LP optimum for that table is 0.1086622782 dollars a
day ($39.69 a year), using wheat flour (enriched), beef liver, cabbage, spinach and dried
navy beans. The test runs only when that folder exists.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

import pytest
from typer.testing import CliRunner

from blendkit.cli import app
from tests.workbooks import make_workbook

DATA = Path(__file__).resolve().parents[1].parent / "shared" / "reference" / "stigler1939.csv"

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
PUBLISHED_DOLLARS_A_DAY = 0.1086622782
PUBLISHED_FOODS = {"Wheat Flour (Enriched)", "Liver (Beef)", "Cabbage", "Spinach", "Navy Beans, Dried"}


@pytest.mark.skipif(not DATA.exists(), reason="../shared/reference/stigler1939.csv is not here")
def test_stigler_diet_in_diet_mode(tmp_path):
    # Each food's amount is in "dollars' worth" (the table gives nutrients per $1 spent),
    # so every food costs 1 per unit and the optimum is the dollars spent a day.
    with DATA.open(newline="") as handle:
        foods = list(csv.DictReader(handle))
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
    assert doc["cost"] == pytest.approx(PUBLISHED_DOLLARS_A_DAY, rel=1e-8)
    chosen = {name for name, amount in doc["ingredients"].items() if amount > 1e-9}
    assert chosen == PUBLISHED_FOODS
    assert doc["cost"] * 365.25 == pytest.approx(39.69, abs=0.005)

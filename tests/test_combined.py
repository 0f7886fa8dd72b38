"""Combined nutrients (the Combined sheet): levels, specs, live formulas and mistakes.

The demo data is the invented "Hilltop Hens" layer mash of `tests.workbooks` with sodium,
potassium and chloride added; the figures are made up for tests (rough values of the size
found in feed tables, from memory), not feeding advice. Each level is checked against a
hand calculation written out here, each optimum against scipy.optimize.linprog (HiGHS) on
an LP built here by hand with the combined row, and each live formula against LibreOffice.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from openpyxl import load_workbook
from scipy.optimize import linprog

from blendkit import Blend, WorkbookError
from blendkit.model.prices import PriceEntry, PriceList, apply_price_list
from blendkit.pipeline import formulate, solve_workbook
from blendkit.read.sums import SumError, parse_sum
from blendkit.read.values import name_key
from blendkit.read.workbook import read_workbook
from blendkit.write.json import formula_to_dict
from tests.test_result_sheet import LIVE, needs_libreoffice, recalculate, row_of
from tests.workbooks import INGREDIENTS, SPECS, make_workbook

# The usual electrolyte-balance coefficients, mEq/kg per % of the element: 10 g/kg per %
# divided by the equivalent weight (g/mEq = atomic mass / 1000 for a single charge), so
# 10000 / atomic mass: Na 10000 / 23.0, K 10000 / 39.1, Cl 10000 / 35.45 (common practice;
# atomic masses rounded as the trade rounds them).
NA, K, CL = 434.8, 255.8, 282.1
BALANCE = f"{NA} * Sodium + {K} * Potassium - {CL} * Chloride"

# Ingredients with sodium, potassium and chloride in % as fed (rough values, from memory).
MINERALS = {  # name: (sodium, potassium, chloride)
    "Maize": (0.02, 0.33, 0.05),
    "Soybean meal": (0.02, 2.10, 0.05),
    "Wheat bran": (0.05, 1.20, 0.07),
    "Limestone": (0.06, 0.0, 0.0),
    "Salt": (39.3, 0.0, 60.0),
    "Sodium bicarbonate": (27.3, 0.0, 0.0),
}
PRICES = {"Salt": 120, "Sodium bicarbonate": 450}
DEB_MIN = 200.0  # mEq/kg, a floor a layer mash might get (invented for the test)
SODIUM = (0.15, 0.25)  # % as fed
CHLORIDE_MAX = 0.30


def ingredients() -> list[list]:
    """The layer-mash Ingredients with Sodium, Potassium and Chloride columns, salt and bicarbonate."""
    rows = [INGREDIENTS[0] + ["Sodium (%)", "Potassium (%)", "Chloride (%)"]]
    for row in INGREDIENTS[1:]:
        rows.append(row + list(MINERALS[row[0]]))
    for name, price in PRICES.items():
        rows.append([name, price, None, None, "yes", None, None, None, *MINERALS[name]])
    return rows


def specs(balance_min: float | None = DEB_MIN) -> list[list]:
    """The layer specs plus sodium and chloride, and the electrolyte balance floor."""
    rows = SPECS + [["Sodium", *SODIUM], ["Chloride", None, CHLORIDE_MAX]]
    return rows + ([["Electrolyte balance", balance_min, None]] if balance_min is not None else [])


COMBINED = [["Nutrient", "Sum", "Unit"], ["Electrolyte balance", BALANCE, "mEq/kg"]]


def workbook(tmp_path: Path, combined=COMBINED, spec_rows=None, name="deb.xlsx") -> Path:
    """The test workbook, with the given Combined sheet (None: none)."""
    sheets = {"Combined": combined} if combined is not None else {}
    return make_workbook(tmp_path, ingredients(), spec_rows if spec_rows is not None else specs(),
                         sheets=sheets, name=name)


def hand_balance(name: str) -> float:
    """An ingredient's electrolyte balance in mEq/kg, by hand: 434.8 Na + 255.8 K - 282.1 Cl."""
    sodium, potassium, chloride = MINERALS[name]
    return NA * sodium + K * potassium - CL * chloride


# --- Levels against a hand calculation -----------------------------------------------------


def test_contents_and_level_match_a_hand_calculation(tmp_path):
    blend = read_workbook(workbook(tmp_path))
    assert blend.nutrients[-1] == "Electrolyte balance"
    assert blend.nutrient_units["Electrolyte balance"] == "mEq/kg"
    # Hand calculation: salt is 434.8 x 39.3 - 282.1 x 60.0 = 17087.64 - 16926 = 161.64 mEq/kg.
    assert blend.ingredient("Salt").contents["Electrolyte balance"] == pytest.approx(161.64, abs=1e-9)
    for item in blend.ingredients:
        assert item.contents["Electrolyte balance"] == pytest.approx(hand_balance(item.name), rel=1e-12)
    formula = formulate(blend)
    assert formula.status == "optimal"
    level = next(line.level for line in formula.nutrients if line.name == "Electrolyte balance")
    # Hand calculation: the level is the inclusion-weighted sum of the contents above.
    by_hand = sum(line.inclusion / 100 * hand_balance(line.name) for line in formula.ingredients)
    assert level == pytest.approx(by_hand, rel=1e-9)
    assert level >= DEB_MIN - 1e-6


def test_a_combined_nutrient_of_a_combined_nutrient_written_above_it(tmp_path):
    combined = [["Nutrient", "Sum", "Unit"],
                ["Twice the balance less sodium", "2 * Electrolyte balance (mEq/kg) − Sodium", ""],
                ["Electrolyte balance", BALANCE.replace("Potassium", "potassium (%)"), "mEq/kg"]]
    blend = read_workbook(workbook(tmp_path, combined, specs(None)))
    assert blend.nutrients[-2:] == ("Electrolyte balance", "Twice the balance less sodium")  # parts first
    for item in blend.ingredients:
        # Hand calculation: 2 x (434.8 Na + 255.8 K - 282.1 Cl) - Na.
        expected = 2 * hand_balance(item.name) - MINERALS[item.name][0]
        assert item.contents["Twice the balance less sodium"] == pytest.approx(expected, rel=1e-12)


def test_dry_matter_and_ratio_specs_on_a_combined_nutrient(tmp_path):
    rows = [row + ([88] if index else ["Dry matter (%)"]) for index, row in enumerate(ingredients())]
    combined = [["Nutrient", "Sum"], ["Calcium plus sodium", "Calcium + Sodium"]]
    spec_rows = specs(None) + [["Calcium plus sodium", 3.0, None, "dry matter"],
                               ["Calcium plus sodium / Crude protein", None, 1.0]]
    spec_rows[0] = spec_rows[0] + ["Basis"]
    path = make_workbook(tmp_path, rows, spec_rows, sheets={"Combined": combined})
    formula = formulate(read_workbook(path))
    assert formula.status == "optimal"
    lines = {(line.name, line.basis, line.kind): line.level for line in formula.nutrients}
    # Hand calculation: calcium + sodium from the inclusions; on dry matter divided by 88 %.
    as_fed = sum(line.inclusion / 100 * ((row[7] or 0) + MINERALS[line.name][0])
                 for line in formula.ingredients for row in rows[1:] if row[0] == line.name)
    protein = sum(line.inclusion / 100 * (row[5] or 0)
                  for line in formula.ingredients for row in rows[1:] if row[0] == line.name)
    assert lines[("Calcium plus sodium", "as fed", "nutrient")] == pytest.approx(as_fed, rel=1e-9)
    assert lines[("Calcium plus sodium", "dry matter", "nutrient")] == pytest.approx(as_fed / 88 * 100, rel=1e-9)
    assert lines[("Calcium plus sodium / Crude protein", "as fed", "ratio")] == pytest.approx(as_fed / protein, rel=1e-9)


# --- The optimum against HiGHS on the LP built by hand --------------------------------------


def highs_cost(balance_min: float | None) -> float:
    """The least cost by scipy.optimize.linprog (HiGHS), the LP written out here: inclusions
    in %, summing to 100, the Ingredients bounds, the specs, and the combined row by hand."""
    rows = ingredients()[1:]
    cost = np.array([row[1] / 100 for row in rows], dtype=float)  # per tonne, per % of the tonne
    bounds = [(row[2] or 0.0, row[3] if row[3] is not None else 100.0) for row in rows]

    def column(index: int) -> np.ndarray:
        """One content column, per % of inclusion (a blank content is 0)."""
        return np.array([(row[index] or 0.0) / 100 for row in rows])

    protein, energy, calcium, sodium, potassium, chloride = (column(i) for i in (5, 6, 7, 8, 9, 10))
    A_ub = [-protein, -energy, energy, -calcium, calcium, -sodium, sodium, chloride]
    b_ub = [-16.5, -11.2, 12.0, -3.6, 4.1, -SODIUM[0], SODIUM[1], CHLORIDE_MAX]
    if balance_min is not None:
        A_ub.append(-(NA * sodium + K * potassium - CL * chloride))  # the combined row, by hand
        b_ub.append(-balance_min)
    result = linprog(cost, A_ub=np.array(A_ub), b_ub=b_ub, A_eq=[np.ones(len(rows))], b_eq=[100.0],
                     bounds=bounds, method="highs")
    assert result.status == 0, result.message
    return float(result.fun)


def test_a_balance_spec_gives_the_highs_optimum(tmp_path):
    formula = formulate(read_workbook(workbook(tmp_path)))
    # Reference: scipy.optimize.linprog (HiGHS) on the LP with the combined row built by hand.
    assert formula.cost == pytest.approx(highs_cost(DEB_MIN), rel=1e-7)
    # The floor bites: without it HiGHS finds a cheaper blend, so the combined row mattered.
    assert highs_cost(None) < highs_cost(DEB_MIN) - 1e-3
    limit = next(limit for limit in formula.limits if limit.name == "Electrolyte balance")
    assert limit.binding and limit.shadow_price > 0


def test_without_a_combined_sheet_the_blend_solves_as_before(tmp_path):
    plain = read_workbook(workbook(tmp_path, None, specs(None)))
    assert plain.combined == () and plain.nutrients == ("Crude protein", "Energy", "Calcium", "Sodium",
                                                        "Potassium", "Chloride")
    formula = formulate(plain)
    # Reference: scipy.optimize.linprog (HiGHS) on the LP without the combined row.
    assert formula.cost == pytest.approx(highs_cost(None), rel=1e-7)
    # A combined nutrient with no spec adds a level to the report and nothing to the LP.
    with_sheet = formulate(read_workbook(workbook(tmp_path, COMBINED, specs(None), name="with.xlsx")))
    assert with_sheet.cost == formula.cost
    assert [line.inclusion for line in with_sheet.ingredients] == [line.inclusion for line in formula.ingredients]


# --- Live formulas in the output --------------------------------------------------------------


@needs_libreoffice
def test_the_live_formula_recomputes_the_level_in_libreoffice(tmp_path):
    output = tmp_path / "deb.out.xlsx"
    outcome = solve_workbook(workbook(tmp_path), output, check=False)
    level = next(line.level for line in outcome.formula.nutrients if line.name == "Electrolyte balance")
    sheet = load_workbook(output)["Result"]
    table = row_of(sheet, "Nutrient")  # the nutrient table (the first page lists limits above it)
    row = row_of(sheet, "Electrolyte balance", below=table)
    text = sheet.cell(row, LIVE).value
    parts = {name: row_of(sheet, name, below=table) for name in ("Sodium", "Potassium", "Chloride")}
    assert text == f"={NA}*H{parts['Sodium']}+{K}*H{parts['Potassium']}-{CL}*H{parts['Chloride']}"
    # Reference: LibreOffice recalculates every formula from the copied Ingredients cells.
    recalculated = load_workbook(recalculate([output], tmp_path) / output.name, data_only=True)["Result"]
    assert recalculated.cell(row, LIVE).value == pytest.approx(level, rel=1e-9)
    assert recalculated.cell(row, LIVE + 1).value == "ok"


# --- Mistakes, each with its cell ---------------------------------------------------------------


@pytest.mark.parametrize(("text", "words"), [
    ("", "the Sum of \"Electrolyte balance\" is blank"),
    ("434.8 * Sodum", 'did you mean "Sodium"?'),
    ("* Sodium + Potassium", '"*" has no number before it'),
    ("434.8 * Sodium + - Potassium", 'two operators in a row ("+ -")'),
    ("434.8 * * Sodium", 'two operators in a row ("* *")'),
    ("434.8 * Sodium +", 'the Sum ends with "+"'),
    ("−", 'the Sum is only "-"'),
    ("434.8 Sodium", 'no "*" between the number and the nutrient; write 434.8 * Sodium'),
    ("434,8 * Sodium", "write decimals with a point, as in 434.8"),
    ("Sodium * Potassium", "multiplies two nutrients"),
    ("2 * 3", "multiplies two numbers"),
    ("Sodium + 5", "the number 5 multiplies no nutrient"),
    ("2 * (Sodium + Potassium)", "brackets cannot group terms"),
    ("Sodium (g/kg)", '"Sodium (g/kg)" is in "g/kg" but "Sodium"'),
    ("Sodium * 2 * 3", '"*" after "Sodium * 2" joins nothing'),
    ("Electrolyte balance - Sodium", 'refers to "Electrolyte balance" itself'),
])
def test_each_sum_mistake_is_reported_on_its_cell(tmp_path, text, words):
    combined = [["Nutrient", "Sum"], ["Electrolyte balance", text or None]]
    with pytest.raises(WorkbookError) as caught:
        read_workbook(workbook(tmp_path, combined, specs(None)))
    problems = [(problem.where, problem.message) for problem in caught.value.problems]
    assert len(problems) == 1 and problems[0][0] == "Combined!B2", problems
    assert words in problems[0][1], problems


@pytest.mark.parametrize(("rows", "where", "words"), [
    ([["Sodium", "Sodium + Chloride"]], "Combined!A2", '"Sodium" is already a nutrient column of Ingredients'),
    ([["Na and Cl", "Sodium + Chloride"], ["na AND  cl", "Sodium"]], "Combined!A3", "is already listed in Combined!A2"),
    ([[None, "Sodium + Chloride"]], "Combined!A2", "no combined nutrient name"),
    ([["A", "B + Sodium"], ["B", "2 * A"]], "Combined!B2", '("A" -> "B" -> "A")'),
])
def test_each_name_mistake_is_reported_on_its_cell(tmp_path, rows, where, words):
    with pytest.raises(WorkbookError) as caught:
        read_workbook(workbook(tmp_path, [["Nutrient", "Sum"], *rows], specs(None)))
    problems = [(problem.where, problem.message) for problem in caught.value.problems]
    assert len(problems) == 1 and problems[0][0] == where, problems
    assert words in problems[0][1], problems


def test_a_sum_typed_as_a_formula_with_no_saved_value_is_reported_on_its_cell(tmp_path):
    combined = [["Nutrient", "Sum"], ["Electrolyte balance", "=A1"]]
    with pytest.raises(WorkbookError) as caught:
        read_workbook(workbook(tmp_path, combined, specs(None)))
    assert [problem.where for problem in caught.value.problems] == ["Combined!B2"]
    assert "no saved value" in caught.value.problems[0].message


def test_a_name_with_a_hyphen_is_one_name_when_it_exists(tmp_path):
    rows = [[*ingredients()[0], "Omega-3 (%)"]] + [[*row, 0.5] for row in ingredients()[1:]]
    combined = [["Nutrient", "Sum"], ["Omega plus sodium", "Omega-3 + 2*Sodium"]]
    blend = read_workbook(make_workbook(tmp_path, rows, specs(None), sheets={"Combined": combined}))
    # Hand calculation: 0.5 + 2 x sodium.
    assert blend.ingredient("Salt").contents["Omega plus sodium"] == pytest.approx(0.5 + 2 * 39.3)


def test_a_spec_on_a_combined_nutrient_with_a_mistake_is_not_reported_twice(tmp_path):
    combined = [["Nutrient", "Sum"], ["Electrolyte balance", "434.8 * Sodum"]]
    with pytest.raises(WorkbookError) as caught:
        read_workbook(workbook(tmp_path, combined))  # Specs names Electrolyte balance
    assert [problem.where for problem in caught.value.problems] == ["Combined!B2"]


# --- Frames and price lists -------------------------------------------------------------------


def test_frames_take_a_combined_frame(tmp_path):
    header, *rows = ingredients()
    frame = pd.DataFrame(rows, columns=header)
    spec_frame = pd.DataFrame(specs()[1:], columns=specs()[0])
    combined = pd.DataFrame({"Nutrient": ["Electrolyte balance"], "Sum": [BALANCE], "Unit": ["mEq/kg"]})
    blend = Blend.from_frames(frame, spec_frame, combined=combined)
    assert blend.combined[0].cells["sum"] == 'combined[row 0, column "Sum"]'
    for item in blend.ingredients:
        assert item.contents["Electrolyte balance"] == pytest.approx(hand_balance(item.name), rel=1e-12)
    with pytest.raises(WorkbookError) as caught:
        Blend.from_frames(frame, spec_frame, combined=combined.assign(Sum=["434.8 * Sodum"]))
    assert caught.value.problems[0].where == 'combined[row 0, column "Sum"]'


def test_a_price_list_content_change_moves_the_combined_content(tmp_path):
    blend = read_workbook(workbook(tmp_path))
    entry = PriceEntry(name="Salt", key="salt", cost=None, stock=None, contents={"chloride": 58.0},
                       cells={"chloride": "D2"})
    prices = PriceList(file_name="prices.xlsx", sha256="", entries=(entry,), units={"chloride": "%"},
                       names={"chloride": "Chloride"})
    changed, _replaced, _notes = apply_price_list(blend, prices, name_key)
    # Hand calculation: 434.8 x 39.3 - 282.1 x 58.0 = 17087.64 - 16361.8 = 725.84 mEq/kg.
    assert changed.ingredient("Salt").contents["Electrolyte balance"] == pytest.approx(725.84, abs=1e-9)
    assert math.isclose(blend.ingredient("Salt").contents["Electrolyte balance"], 161.64, abs_tol=1e-9)


# --- Any text: terms or a plain message, never a crash -------------------------------------


@settings(max_examples=300, deadline=None)
@given(st.text(alphabet="NaKCl 0123456789.,+-\u2212*\u00d7()", max_size=30))
def test_any_sum_text_parses_or_gets_a_message(text):
    known = {"na", "k", "cl", "na k"}
    try:
        terms = parse_sum(text, lambda name: name_key(name) in known)
    except SumError as error:
        assert str(error)
        return
    # What parses names something (a name between operators) and has a finite number.
    assert terms and all(term.name.strip() and math.isfinite(term.number) for term in terms)


# --- The definitions in the JSON -------------------------------------------------------------


def test_json_lists_each_combined_nutrients_definition(tmp_path):
    combined = [["Nutrient", "Sum", "Unit"],
                ["Twice the balance less sodium", "2 * Electrolyte balance - Sodium + 0.5 * Sodium", None],
                ["Electrolyte balance", BALANCE, "mEq/kg"]]
    formula = formulate(read_workbook(workbook(tmp_path, combined)))
    document = formula_to_dict(formula)
    assert list(document).index("combined") == list(document).index("cross_check") + 1
    assert document["combined"] == [
        # the electrolyte-balance coefficients of common practice (above), as written
        {"name": "Electrolyte balance", "unit": "mEq/kg", "terms": {"Sodium": NA, "Potassium": K, "Chloride": -CL}},
        # by hand: sodium named twice, -1 + 0.5 = -0.5
        {"name": "Twice the balance less sodium", "unit": None,
         "terms": {"Electrolyte balance": 2.0, "Sodium": -0.5}},
    ]
    # The terms recompute each level: by hand from the levels in the same document.
    levels = document["nutrients"]
    for entry in document["combined"]:
        assert levels[entry["name"]] == pytest.approx(
            sum(number * levels[part] for part, number in entry["terms"].items()), rel=1e-9)


def test_json_has_no_combined_key_without_a_combined_sheet(tmp_path):
    formula = formulate(read_workbook(workbook(tmp_path, None, specs(None))))
    assert "combined" not in formula_to_dict(formula)


def test_a_name_with_a_spaced_plus_is_one_name_when_it_exists(tmp_path):
    # "Methionine + cystine" is how the trade heads that column (common practice), beside a
    # "Methionine" column of its own: cystine alone is then M+C less methionine.
    rows = [[*ingredients()[0], "Methionine (%)", "Methionine + cystine (%)"]]
    rows += [[*row, 0.2, 0.5] for row in ingredients()[1:]]
    combined = [["Nutrient", "Sum"], ["Cys", "Methionine + cystine - Methionine"],
                ["Twice M+C", "2 * Methionine + cystine"]]
    blend = read_workbook(make_workbook(tmp_path, rows, specs(None), sheets={"Combined": combined}))
    # Hand calculation: 0.5 - 0.2 and 2 x 0.5.
    assert blend.ingredient("Maize").contents["Cys"] == pytest.approx(0.3)
    assert blend.ingredient("Maize").contents["Twice M+C"] == pytest.approx(1.0)


@pytest.mark.parametrize("text", ["1e3 * Sodium", "1e-3 * Sodium", "2.5E+2 * Sodium"])
def test_a_number_with_an_exponent_is_named_as_such(tmp_path, text):
    combined = [["Nutrient", "Sum"], ["Electrolyte balance", text]]
    with pytest.raises(WorkbookError) as caught:
        read_workbook(workbook(tmp_path, combined, specs(None)))
    (problem,) = caught.value.problems
    assert problem.where == "Combined!B2"
    assert "exponent" in problem.message and "write 1 * e" not in problem.message, problem.message


def test_a_combined_name_that_reads_as_a_ratio_of_two_nutrients_is_refused(tmp_path):
    # Specs would read "Sodium / Chloride" as this combined nutrient, never as the ratio.
    combined = [["Nutrient", "Sum"], ["Sodium / Chloride", "Sodium - Chloride"]]
    with pytest.raises(WorkbookError) as caught:
        read_workbook(workbook(tmp_path, combined, specs(None)))
    (problem,) = caught.value.problems
    assert problem.where == "Combined!A2" and "ratio" in problem.message, problem


@pytest.mark.parametrize("header, sum_text", [
    ("25-OH-D3 (IU/kg)", "0.5 * 25-OH-D3 + Sodium"),  # a name that starts with digits, two hyphens
    ("Omega-3-6 (%)", "Omega-3-6 - 2 * Sodium"),
    ("C18:2 n-6 (%)", "2 * C18:2 n-6"),
])
def test_a_name_with_digits_and_several_signs_is_one_name_when_it_exists(tmp_path, header, sum_text):
    rows = [[*ingredients()[0], header]] + [[*row, 4.0] for row in ingredients()[1:]]
    combined = [["Nutrient", "Sum"], ["Mixed", sum_text]]
    blend = read_workbook(make_workbook(tmp_path, rows, specs(None), sheets={"Combined": combined}))
    terms = blend.combined[0].terms
    # Hand calculation from the terms as written: each number times 4 (or sodium's content).
    expected = sum(number * (4.0 if name != "Sodium" else MINERALS["Salt"][0]) for number, name in terms)
    assert blend.ingredient("Salt").contents["Mixed"] == pytest.approx(expected)
    assert header.split(" (")[0] in [name for _, name in terms]

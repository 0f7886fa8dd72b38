"""The pandas API: Blend.from_frames, Formula.to_frames and formulate_many.

Frames are checked against the workbook path (the same data read by `read_workbook` from a
file) and the formulas against scipy's HiGHS through `tests/test_examples.py`, which builds
its LP from the workbook cells alone.
"""

from __future__ import annotations

import dataclasses
import math
import re
import subprocess
import sys
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

import blendkit
from blendkit import Blend, WorkbookError, formulate_many
from blendkit.pipeline import formulate
from blendkit.read import read_workbook
from blendkit.write.json import formula_to_dict
from tests.formulas import infeasible_formula
from tests.test_examples import OPTIMUM, SAMPLE_WORKBOOKS, formulate_with_highs
from tests.workbooks import INGREDIENTS, LIMITS, PRODUCTS, SPECS, make_workbook

ROOT = Path(__file__).resolve().parent.parent

# Each sample workbook and its example's name in OPTIMUM.
SAMPLES = {
    "broiler_starter.xlsx": "broiler",
    "layer_feed.xlsx": "layer",
    "day_menu.xlsx": "diet",
    "npk_15_15_15.xlsx": "fertilizer",
    "pig_feed_plant.xlsx": "plant",
}


def sample_frames(path: Path) -> dict[str, pd.DataFrame]:
    """The input sheets of a workbook read by pandas, keyed like from_frames' arguments."""
    sheets = pd.read_excel(path, sheet_name=None)
    return {title.lower(): frame for title, frame in sheets.items() if title != "Notes"}


def without_places(blend: Blend) -> Blend:
    """The blend with every cell it keeps and its source left out, to compare the data."""

    def bare(record):
        """The record without its cells."""
        return dataclasses.replace(record, cells={})

    return dataclasses.replace(
        blend,
        ingredients=tuple(dataclasses.replace(bare(item), content_cells={}) for item in blend.ingredients),
        specs=tuple(map(bare, blend.specs)),
        groups=tuple(map(bare, blend.groups)),
        products=tuple(map(bare, blend.products)),
        limits=tuple(map(bare, blend.limits)),
        combined=tuple(map(bare, blend.combined)),
        settings=bare(blend.settings),
        source=None,
    )


def inclusions(formula) -> dict[tuple, float]:
    """Every product's inclusion of every ingredient."""
    return {(product.name, line.name): line.inclusion for product in formula.products for line in product.ingredients}


# --- The same formula as the workbook path ------------------------------------------------


@pytest.mark.parametrize("name", sorted(SAMPLES))
def test_frames_give_the_workbook_formula_and_the_highs_cost(name):
    path = SAMPLE_WORKBOOKS / name
    from_book = read_workbook(path)
    from_frames = Blend.from_frames(**sample_frames(path))
    assert without_places(from_frames) == without_places(from_book)
    expected, found = formulate(from_book), formulate(from_frames)
    assert found.status == expected.status == "optimal"
    assert found.cost == pytest.approx(expected.cost, rel=1e-12)
    assert inclusions(found) == pytest.approx(inclusions(expected), abs=1e-9)
    # Reference: scipy.optimize.linprog(method="highs") on the LP built from the workbook's
    # cells by tests/test_examples.py, independent of blendkit's reader and engine.
    highs = formulate_with_highs(path)
    assert found.cost == pytest.approx(highs.result.fun, rel=1e-6)
    assert found.cost == pytest.approx(OPTIMUM[SAMPLES[name]], rel=1e-6)


def test_an_index_named_like_the_naming_column_is_that_column():
    frames = sample_frames(SAMPLE_WORKBOOKS / "pig_feed_plant.xlsx")
    named = dict(
        frames,
        ingredients=frames["ingredients"].set_index("Ingredient"),
        limits=frames["limits"].set_index(["Product", "Ingredient"]),
        settings=dict(zip(frames["settings"]["Setting"], frames["settings"]["Value"])),
    )
    assert without_places(Blend.from_frames(**named)) == without_places(Blend.from_frames(**frames))


def test_places_kept_by_the_blend_are_in_frame_words():
    frames = sample_frames(SAMPLE_WORKBOOKS / "pig_feed_plant.xlsx")
    frames["ingredients"] = frames["ingredients"].set_index("Ingredient")
    blend = Blend.from_frames(**frames)
    assert blend.source is None
    peas = blend.ingredient("Field peas")
    assert peas.cells["stock"] == 'ingredients[row "Field peas", column "Stock (t)"]'
    assert peas.content_cells["Crude protein"] == 'ingredients[row "Field peas", column "Crude protein (%)"]'
    assert blend.specs[0].cells["min"] == 'specs[row 0, column "Min"]'
    assert blend.settings.cells["currency"] == 'settings[row 3, column "Value"]'


# --- Mistakes: the reader's messages, placed by frame, row label and column ----------------


def book_problems(tmp_path: Path, sheets: dict[str, list[list]]) -> list[tuple[str, str]]:
    """The problems `read_workbook` finds in the same tables written as a workbook file."""
    path = make_workbook(tmp_path, sheets=sheets)
    with pytest.raises(WorkbookError) as caught:
        read_workbook(path)
    return [(problem.where, problem.message) for problem in caught.value.problems]


def frame_problems(sheets: dict[str, list[list]], **keep) -> list[tuple[str, str]]:
    """The problems from_frames finds in the tables as frames (`keep`: frames to use as
    given instead of building them from `sheets`)."""
    frames = {title.lower(): pd.DataFrame(rows[1:], columns=rows[0]) for title, rows in sheets.items()}
    with pytest.raises(WorkbookError) as caught:
        Blend.from_frames(**{**frames, **keep})
    return [(problem.where, problem.message) for problem in caught.value.problems]


def with_row(table: list[list], row: int, column: int, value: object) -> list[list]:
    """A copy of a table (header first) with one data cell changed."""
    copy = [list(line) for line in table]
    copy[row][column] = value
    return copy


# Mistakes and where each is placed: in the workbook (the reader's cell) and in the frames
# (default row labels 0, 1, ...). A cell named inside a message moves the same way.
MISTAKES = {
    "cost not a number": (
        {"Ingredients": with_row(INGREDIENTS, 1, 1, "n/a"), "Specs": SPECS},
        {"Ingredients!B2": 'ingredients[row 0, column "Cost (EUR/t)"]'},
    ),
    "unknown nutrient": (
        {"Ingredients": INGREDIENTS, "Specs": with_row(SPECS, 2, 0, "Energie")},
        {"Specs!A3": 'specs[row 1, column "Nutrient"]'},
    ),
    "repeated ingredient": (
        {"Ingredients": with_row(INGREDIENTS, 3, 0, "maize "), "Specs": SPECS},
        {"Ingredients!A4": 'ingredients[row 2, column "Ingredient"]',
         "Ingredients!A2": 'ingredients[row 0, column "Ingredient"]'},
    ),
    "max below min": (
        {"Ingredients": with_row(INGREDIENTS, 4, 3, 2), "Specs": SPECS},
        {"Ingredients!D5": 'ingredients[row 3, column "Max (%)"]',
         "Ingredients!C5": 'ingredients[row 3, column "Min (%)"]'},
    ),
    "missing column": (
        {"Ingredients": INGREDIENTS, "Specs": [["Nutrient", "Min"], *[row[:2] for row in SPECS[1:]]]},
        {"Specs!1:1": "specs[columns]"},
    ),
    "repeated column": (
        {"Ingredients": [[*INGREDIENTS[0], "calcium"], *[[*row, 1] for row in INGREDIENTS[1:]]], "Specs": SPECS},
        {"Ingredients!I1": 'ingredients[column "calcium"]', "Ingredients!H1": 'ingredients[column "Calcium (%)"]'},
    ),
    "product and limit": (
        {"Ingredients": INGREDIENTS, "Specs": SPECS, "Products": with_row(PRODUCTS, 2, 1, -5),
         "Limits": with_row(LIMITS, 2, 1, "Wheat brain")},
        {"Products!B3": 'products[row 1, column "Amount (kg)"]',
         "Limits!B3": 'limits[row 1, column "Ingredient"]'},
    ),
}


@pytest.mark.parametrize("mistake", sorted(MISTAKES))
def test_a_bad_frame_gets_the_readers_message_placed_in_the_frame(mistake, tmp_path):
    # Reference: the same tables written as a workbook and read by read_workbook.
    sheets, places = MISTAKES[mistake]
    expected = [
        (places[where], re.sub(r"[A-Z][a-z]+![A-Z]*\d+(:\d+)?", lambda m: places[m[0]], message))
        for where, message in book_problems(tmp_path, sheets)
    ]
    assert expected  # every case is a mistake the reader reports
    assert frame_problems(sheets) == expected


def test_a_bad_cost_in_a_row_labelled_by_name(tmp_path):
    ingredients = pd.DataFrame(INGREDIENTS[1:], columns=INGREDIENTS[0]).set_index("Ingredient").astype(object)
    ingredients.loc["Maize", "Cost (EUR/t)"] = "n/a"
    problems = frame_problems({"Specs": SPECS}, ingredients=ingredients)
    (reader_message,) = [m for _, m in book_problems(tmp_path, MISTAKES["cost not a number"][0])]
    assert problems == [('ingredients[row "Maize", column "Cost (EUR/t)"]', reader_message)]
    assert reader_message == 'cost "n/a" is not a number'


def test_the_error_counts_problems_in_the_frames():
    specs = pd.DataFrame(SPECS[1:], columns=SPECS[0])
    with pytest.raises(WorkbookError) as caught:
        Blend.from_frames(pd.DataFrame(INGREDIENTS[1:], columns=INGREDIENTS[0][1:] + ["Extra"]), specs)
    assert str(caught.value).startswith("1 problem in the frames:\n  ingredients[columns]: ")
    assert caught.value.within == "the frames"


def test_settings_as_a_dict_are_labelled_by_setting(tmp_path):
    settings = {"Batch size": 0, "Mode": "blend", "Cost per": "barrel"}
    problems = frame_problems({"Ingredients": INGREDIENTS, "Specs": SPECS}, settings=settings)
    assert [where for where, _ in problems] == [
        'settings[row "Batch size", column "Value"]', 'settings[row "Cost per", column "Value"]',
    ]
    book = [["Setting", "Value"], *([name, value] for name, value in settings.items())]
    expected = book_problems(tmp_path, {"Ingredients": INGREDIENTS, "Specs": SPECS, "Settings": book})
    assert [message for _, message in problems] == [message for _, message in expected]


def test_values_a_workbook_cannot_hold_as_typed():
    ingredients = pd.DataFrame(INGREDIENTS[1:], columns=INGREDIENTS[0]).astype(object)
    ingredients.loc[0, "Cost (EUR/t)"] = "=1+2"  # text, never a formula
    ingredients.loc[1, "Cost (EUR/t)"] = math.inf
    ingredients.loc[2, "Ingredient"] = "Wheat\x07bran"
    problems = frame_problems({"Specs": SPECS}, ingredients=ingredients)
    assert problems == [
        ('ingredients[row 2, column "Ingredient"]',
         'text "Wheatbran" holds control characters, which a workbook cannot store; remove them'),
        ('ingredients[row 0, column "Cost (EUR/t)"]', 'cost "=1+2" is not a number'),
        ('ingredients[row 1, column "Cost (EUR/t)"]', 'cost "inf" is not a number'),
    ]


def test_frames_are_not_changed():
    frames = sample_frames(SAMPLE_WORKBOOKS / "pig_feed_plant.xlsx")
    frames["ingredients"] = frames["ingredients"].set_index("Ingredient")
    copies = {name: frame.copy() for name, frame in frames.items()}
    Blend.from_frames(**frames)
    for name, frame in frames.items():
        pd.testing.assert_frame_equal(frame, copies[name])


# --- Formula.to_frames --------------------------------------------------------------------


def same(value: object, expected: object) -> bool:
    """A frame value against a Formula's: NaN stands for None."""
    if expected is None:
        return value is None or (isinstance(value, float) and math.isnan(value))
    return value == expected


# Frame columns that are Formula attributes under another name.
ATTRIBUTES = {"ingredient": "name", "nutrient": "name", "min": "minimum", "max": "maximum"}


def assert_rows_are_lines(frame: pd.DataFrame, lines: list[tuple], skip: tuple[str, ...] = ()) -> None:
    """Each frame row holds the fields of the (product, line) at the same position."""
    assert len(frame) == len(lines)
    for (_, row), (product, line) in zip(frame.iterrows(), lines):
        for column, value in row.items():
            if column in skip:
                continue
            if column == "product" and not hasattr(line, "product"):
                expected = product
            else:
                expected = getattr(line, column if hasattr(line, column) else ATTRIBUTES[column])
            assert same(value, expected), (column, value, expected)


@pytest.mark.parametrize("name", ["pig_feed_plant.xlsx", "day_menu.xlsx"])
def test_to_frames_holds_the_formulas_lines(name):
    formula = formulate(read_workbook(SAMPLE_WORKBOOKS / name))
    frames = formula.to_frames()
    assert list(frames) == ["inclusions", "nutrients", "limits", "prices", "stocks"]
    every = [(product.name, line) for product in formula.products for line in product.ingredients]
    assert_rows_are_lines(frames["inclusions"], every)
    assert_rows_are_lines(frames["prices"], every)
    nutrients = [(product.name, line) for product in formula.products for line in product.nutrients]
    assert_rows_are_lines(frames["nutrients"], nutrients, skip=("basis",))
    assert_rows_are_lines(frames["limits"], [(None, limit) for limit in formula.limits], skip=("basis",))
    assert_rows_are_lines(frames["stocks"], [(None, stock) for stock in formula.stocks])
    for frame, lines in ((frames["nutrients"], [line for _, line in nutrients]), (frames["limits"], formula.limits)):
        assert [same(b, line.basis if line.kind == "nutrient" else None)
                for b, line in zip(frame["basis"], lines)] == [True] * len(lines)


def test_to_frames_of_several_products_cost_what_the_formula_says():
    formula = formulate(read_workbook(SAMPLE_WORKBOOKS / "pig_feed_plant.xlsx"))
    inclusions = formula.to_frames()["inclusions"]
    for product in formula.products:
        rows = inclusions[inclusions["product"] == product.name]
        assert (rows["inclusion"] * rows["cost"]).sum() / 100 == pytest.approx(product.cost, rel=1e-12)
        assert rows["inclusion"].sum() == pytest.approx(100, rel=1e-9)


def test_to_frames_of_an_unsolved_formula_are_empty_with_their_columns():
    frames = infeasible_formula().to_frames()
    assert all(frame.empty for frame in frames.values())
    assert list(frames["limits"].columns)[-4:] == ["holds_to", "violation", "penalty", "cell"]
    assert frames["inclusions"]["inclusion"].dtype == "float64"


# --- formulate_many ---------------------------------------------------------------------


def test_formulate_many_is_the_same_for_any_jobs_and_keeps_the_order():
    blends = [read_workbook(SAMPLE_WORKBOOKS / name) for name in sorted(SAMPLES)]
    blends += blends[::-1]
    alone = formulate_many(blends, jobs=1)
    pooled = formulate_many(blends, jobs=2)
    assert pooled == alone
    assert [formula.blend for formula in pooled] == blends
    assert [formula.cost for formula in pooled] == [formulate(blend).cost for blend in blends]


def test_formulate_many_edges():
    assert formulate_many([], jobs=3) == []
    with pytest.raises(ValueError, match="jobs must be 1 or more"):
        formulate_many([], jobs=0)
    assert blendkit.formulate_many is formulate_many


# --- The README and the cost of importing ------------------------------------------------


def readme_example() -> str:
    """The code block of the README's "Python API with pandas" section."""
    readme = (ROOT / "README.md").read_text()
    section = readme.split("## Python API with pandas\n", 1)[1].split("\n## ", 1)[0]
    (block,) = re.findall(r"```python\n(.*?)```", section, re.DOTALL)
    return block


def test_readme_pandas_example_runs(monkeypatch, capsys):
    monkeypatch.chdir(ROOT)
    exec(compile(readme_example(), "README.md", "exec"), {"__name__": "readme_example"})
    printed = capsys.readouterr().out.splitlines()
    costs = [float(line.split("mash at ")[1].split()[0]) for line in printed if line.startswith("maize at")]
    assert costs == sorted(costs) and len(costs) == 4
    # Reference: the layer feed's HiGHS optimum at its own maize price (215 EUR/t), OPTIMUM
    # in tests/test_examples.py.
    assert costs[1] == pytest.approx(OPTIMUM["layer"], abs=0.005)
    assert printed[-1] == 'ingredients[row "Maize", column "Cost (EUR/t)"]: cost "n/a" is not a number'
    assert printed[-1] in readme_example()


def test_the_command_line_does_not_import_pandas():
    code = (
        "import sys\n"
        "from blendkit.start import main\n"
        "sys.argv = ['blendkit', '--help']\n"
        "try:\n    main()\nexcept SystemExit:\n    pass\n"
        "import blendkit.pipeline, blendkit.model.formula\n"
        "print('pandas' in sys.modules)\n"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.splitlines()[-1] == "False"


def test_to_frames_limits_carry_margin_and_target_as_the_json_does(tmp_path):
    # Margins on the broiler sample's Specs (invented, in each spec's unit): the formula
    # is made to min + margin and max - margin.
    frames = sample_frames(SAMPLE_WORKBOOKS / "broiler_starter.xlsx")
    specs = frames["specs"].copy()
    margins = {"Crude protein": 0.3, "Sodium": 0.005}
    specs["Margin"] = [margins.get(name) for name in specs["Nutrient"]]
    frames["specs"] = specs
    formula = formulate(Blend.from_frames(**frames))
    limits = formula.to_frames()["limits"]
    document = formula_to_dict(formula)["limits"]
    assert len(document) == len(limits)
    for (_, row), entry in zip(limits.iterrows(), document):
        assert (row["name"], row["side"]) == (entry["name"], entry["side"])
        assert row["margin"] == entry["margin"] and row["target"] == entry["target"]
    protein = limits[(limits["name"] == "Crude protein") & (limits["basis"] == "as fed")].set_index("side")
    written = specs.set_index("Nutrient").loc["Crude protein"]
    assert protein.loc["min", "bound"] == written["Min"] and protein.loc["min", "margin"] == 0.3
    assert protein.loc["min", "target"] == pytest.approx(written["Min"] + 0.3, abs=1e-12)
    assert protein.loc["max", "target"] == pytest.approx(written["Max"] - 0.3, abs=1e-12)
    others = limits[~limits["name"].isin(list(margins))]
    assert (others["margin"] == 0).all() and (others["target"] == others["bound"]).all()
    # The cost against HiGHS (scipy.optimize.linprog through tests/test_examples.py) with
    # the targets written into Min and Max instead of the margins.
    book = openpyxl.load_workbook(SAMPLE_WORKBOOKS / "broiler_starter.xlsx")
    sheet = book["Specs"]
    header = [cell.value for cell in sheet[1]]
    for row in range(2, sheet.max_row + 1):
        margin = margins.get(sheet.cell(row, 1).value)
        for label, sign in (("Min", 1), ("Max", -1)):
            cell = sheet.cell(row, header.index(label) + 1)
            if margin is not None and cell.value is not None:
                cell.value += sign * margin
    tight = tmp_path / "tight.xlsx"
    book.save(tight)
    assert formula.cost == pytest.approx(formulate_with_highs(tight).result.fun, rel=1e-7)

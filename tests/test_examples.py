"""The worked examples: workbook structure, and an independent solve with scipy's HiGHS.

These tests read the written workbook back with openpyxl alone and build the LP from its
cells, so they check the example data and the writer without blendkit's own reader or engine.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest
from openpyxl import load_workbook
from scipy.optimize import linprog

from blendkit.examples import EXAMPLES, main, write_example

SAMPLE_WORKBOOKS = Path(__file__).resolve().parent.parent / "sample_workbooks"

# Looser than HiGHS's own feasibility tolerance (1e-7), in the nutrients' own units.
LEVEL_TOLERANCE = 1e-6

# The HiGHS optimum of the broiler starter example as the data stands, in EUR per tonne.
# Change it together with the data, after checking the new formula still makes sense.
BROILER_STARTER_COST = 349.12665


def column_key(header: str) -> str:
    """How the reader matches headers: case-insensitive, a trailing "(unit)" ignored."""
    return re.sub(r"\s*\([^)]*\)\s*$", "", str(header)).strip().lower()


def rows(path: Path, sheet: str) -> list[tuple]:
    """Every row of one sheet as plain values, header first."""
    return list(load_workbook(path, data_only=True)[sheet].iter_rows(values_only=True))


def solve_with_highs(path: Path):
    """Formulate the blend in a workbook as an LP and solve it with scipy's HiGHS.

    Variables are inclusions in % of the blend. Returns the scipy result, the ingredient
    names, the nutrient keys, the content matrix (ingredient x nutrient) and the specs.
    """
    ingredients = rows(path, "Ingredients")
    nutrients = [column_key(h) for h in ingredients[0][5:]]
    names = [row[0] for row in ingredients[1:]]
    cost = np.array([row[1] for row in ingredients[1:]], dtype=float)
    contents = np.array(
        [[0.0 if value is None else value for value in row[5:]] for row in ingredients[1:]], dtype=float
    )
    bounds = []
    for _, _, minimum, maximum, use, *_ in ingredients[1:]:
        used = use is None or str(use).strip().lower() == "yes"
        bounds.append((minimum or 0.0, 100.0 if maximum is None else maximum) if used else (0.0, 0.0))

    specs = {column_key(n): (lo, hi) for n, lo, hi in rows(path, "Specs")[1:]}
    a_ub, b_ub = [], []
    for nutrient, (minimum, maximum) in specs.items():
        column = contents[:, nutrients.index(nutrient)] / 100
        if minimum is not None:
            a_ub.append(-column)
            b_ub.append(-minimum)
        if maximum is not None:
            a_ub.append(column)
            b_ub.append(maximum)

    result = linprog(
        cost / 100,
        A_ub=np.array(a_ub),
        b_ub=b_ub,
        A_eq=np.ones((1, len(names))),
        b_eq=[100.0],
        bounds=bounds,
        method="highs",
    )
    return result, names, nutrients, contents, specs


@pytest.fixture
def feed(tmp_path: Path) -> Path:
    """The broiler starter example written to a fresh file."""
    return write_example(tmp_path / "feed.xlsx", "feed")


def test_sheets_and_columns(feed: Path):
    workbook = load_workbook(feed)
    assert workbook.sheetnames == ["Ingredients", "Specs", "Settings", "Notes"]

    header = [cell.value for cell in workbook["Ingredients"][1]]
    assert header[:5] == ["Ingredient", "Cost (EUR/t)", "Min (%)", "Max (%)", "Use"]
    assert all(re.fullmatch(r".+ \([^)]+\)", h) for h in header[5:]), header[5:]
    assert len(set(map(column_key, header))) == len(header)
    assert [c.value for c in workbook["Specs"][1]] == ["Nutrient", "Min", "Max"]
    assert [c.value for c in workbook["Settings"][1]] == ["Setting", "Value"]
    for sheet in workbook:
        assert sheet.freeze_panes is not None, sheet.title
        assert all(cell.font.bold for cell in sheet[1] if cell.value is not None), sheet.title


def test_specs_name_nutrient_columns_and_bound_something(feed: Path):
    nutrients = {column_key(h) for h in rows(feed, "Ingredients")[0][5:]}
    for nutrient, minimum, maximum in rows(feed, "Specs")[1:]:
        assert column_key(nutrient) in nutrients
        assert minimum is not None or maximum is not None, nutrient
        if minimum is not None and maximum is not None:
            assert minimum <= maximum, nutrient


def test_settings(feed: Path):
    settings = dict(rows(feed, "Settings")[1:])
    assert settings == {
        "Name": "Broiler starter, days 0-10",
        "Batch size": 2000,
        "Mass unit": "kg",
        "Cost per": "tonne",
        "Currency": "EUR",
    }


def test_ingredients_show_use_no_blanks_and_a_fixed_premix(feed: Path):
    table = rows(feed, "Ingredients")[1:]
    assert 14 <= len(table) <= 18
    assert [row[0] for row in table if row[4] == "no"] == ["Fish meal 65"]
    assert {row[4] for row in table} == {"yes", "no"}
    assert sum(value is None for row in table for value in row[5:]) >= 2
    premix = next(row for row in table if row[0] == "Vitamin-mineral premix")
    assert premix[2] == premix[3] == 0.5


def test_notes_state_scenario_sources_and_caution(feed: Path):
    notes = " ".join(row[0] for row in rows(feed, "Notes")[1:])
    assert "invented" in notes
    assert "from memory of published feed tables; for demonstration only, not for feeding" in notes
    assert "qualified nutritionist" in notes and "local regulations" in notes


def test_highs_finds_a_plausible_least_cost_starter(feed: Path):
    # Reference: scipy.optimize.linprog with HiGHS, independent of blendkit's engine.
    result, names, nutrients, contents, specs = solve_with_highs(feed)
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


def test_write_into_a_directory_uses_the_example_file_name(tmp_path: Path):
    assert write_example(tmp_path) == tmp_path / "broiler_starter.xlsx"
    assert (tmp_path / "broiler_starter.xlsx").is_file()


def test_unknown_example_name(tmp_path: Path):
    with pytest.raises(KeyError):
        write_example(tmp_path, "no such example")


def test_main_writes_every_example(tmp_path: Path, capsys):
    out = tmp_path / "out"
    main([str(out)])
    expected = {f"{example.file_stem}.xlsx" for example in EXAMPLES.values()}
    assert {p.name for p in out.iterdir()} == expected
    assert len(capsys.readouterr().out.splitlines()) == len(EXAMPLES)


@pytest.mark.parametrize("name", sorted(EXAMPLES))
def test_sample_workbook_is_current(name: str, tmp_path: Path):
    fresh = write_example(tmp_path, name)
    stored = SAMPLE_WORKBOOKS / fresh.name
    assert stored.is_file(), f"run: python -m blendkit.examples {SAMPLE_WORKBOOKS.name}"
    fresh_book, stored_book = load_workbook(fresh), load_workbook(stored)
    assert stored_book.sheetnames == fresh_book.sheetnames
    for sheet in fresh_book.sheetnames:
        assert list(stored_book[sheet].values) == list(fresh_book[sheet].values), (
            f"{stored} is out of date: run python -m blendkit.examples {SAMPLE_WORKBOOKS.name}"
        )

"""Prices a buyer can trust: the price at which an ingredient comes in, checked by
re-solving with HiGHS just above and just below it (tests/test_examples.py builds the LP
from the workbook cells alone)."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.cli import app
from tests.test_examples import formulate_with_highs

ROOT = Path(__file__).resolve().parents[1]


def _inclusion_at_price(tmp_path: Path, source: Path, name: str, price: float, allow: bool) -> float:
    """HiGHS's inclusion of `name` in `source` with its Cost cell set to `price` (and its
    Use set to yes when `allow`)."""
    book = openpyxl.load_workbook(source)
    sheet = book["Ingredients"]
    header = [str(cell.value or "").lower() for cell in sheet[1]]
    row = next(r for r in sheet.iter_rows(min_row=2) if r[0].value == name)
    row[next(k for k, h in enumerate(header) if h.startswith("cost"))].value = price
    if allow:
        row[header.index("use")].value = "yes"
    path = tmp_path / f"at-{price:.6f}.xlsx"
    book.save(path)
    reference = formulate_with_highs(path)
    assert reference.result.status == 0
    return float(reference.result.x[reference.names.index(name)])


def test_a_use_no_ingredient_gets_the_price_at_which_it_would_come_in(tmp_path):
    source = tmp_path / "broiler_starter.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "broiler_starter.xlsx", source)
    doc = json.loads(CliRunner().invoke(app, ["solve", str(source), "--json", "--no-cross-check"]).stdout)
    price = doc["prices"]["Fish meal 65"]["more_below"]
    assert price is not None and doc["prices"]["Fish meal 65"]["less_above"] is None
    # Allowed at a price just above it, HiGHS leaves it out; just below, HiGHS uses it.
    assert _inclusion_at_price(tmp_path, source, "Fish meal 65", price * 1.001, allow=True) <= 1e-9
    assert _inclusion_at_price(tmp_path, source, "Fish meal 65", price * 0.999, allow=True) > 1e-6


def _cost_with_cell(tmp_path: Path, source: Path, cell: str, value: float) -> float:
    """HiGHS's optimum of `source` with one bound cell set to `value`."""
    sheet, _, coordinate = cell.partition("!")
    book = openpyxl.load_workbook(source)
    book[sheet][coordinate] = value
    path = tmp_path / f"bound-{value:.9f}.xlsx"
    book.save(path)
    reference = formulate_with_highs(path)
    assert reference.result.status == 0
    return float(reference.result.fun)


def test_one_sided_values_match_highs_just_above_and_below(tmp_path):
    # The day menu's optimum is degenerate: some group minimums cost more to raise than
    # they save when lowered. Each one-sided value is checked against HiGHS re-solved with
    # the bound moved a little up and a little down (the optimum is piecewise linear in the
    # bound, so a small move gives the rate exactly, up to HiGHS's own accuracy).
    source = tmp_path / "day_menu.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "day_menu.xlsx", source)
    doc = json.loads(CliRunner().invoke(app, ["solve", str(source), "--json", "--no-cross-check"]).stdout)
    uneven = [limit for limit in doc["limits"] if limit["binding"] and limit["kind"] in ("nutrient", "group")
              and limit["shadow_price_up"] != limit["shadow_price_down"]]
    assert uneven, "the day menu has limits whose cost changes differently up and down"
    base = _cost_with_cell(tmp_path, source, uneven[0]["cell"], uneven[0]["bound"])
    for limit in uneven[:3]:
        h = 1e-5 * (1 + abs(limit["bound"]))
        up = (_cost_with_cell(tmp_path, source, limit["cell"], limit["bound"] + h) - base) / h
        down = (base - _cost_with_cell(tmp_path, source, limit["cell"], limit["bound"] - h)) / h
        assert up == pytest.approx(limit["shadow_price_up"], rel=1e-4, abs=1e-7), limit["name"]
        assert down == pytest.approx(limit["shadow_price_down"], rel=1e-4, abs=1e-7), limit["name"]


def test_a_range_end_below_zero_is_an_honest_note(tmp_path):
    # Salt in the broiler sample: no price of 0 or more makes the formula use more of it, so
    # the lower end is null with a note; HiGHS at a price of 0 agrees (same inclusion).
    source = tmp_path / "broiler_starter.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "broiler_starter.xlsx", source)
    doc = json.loads(CliRunner().invoke(app, ["solve", str(source), "--json", "--no-cross-check"]).stdout)
    salt = doc["prices"]["Salt"]
    assert salt["more_below"] is None and salt["note"] == "used no more at any price of 0 or more"
    assert _inclusion_at_price(tmp_path, source, "Salt", 0.0, allow=False) == pytest.approx(
        doc["ingredients"]["Salt"], abs=1e-7)
    premix = next(limit for limit in doc["limits"] if limit["name"] == "Vitamin-mineral premix" and limit["side"] == "min")
    assert premix["holds_from"] == 0.0  # an inclusion limit's range never starts below 0


def _plan_at_price(tmp_path: Path, source: Path, name: str, price: float):
    """HiGHS's plan (every product's inclusions) for `source` with the one price of `name`
    (its Cost cell, which every product pays) set to `price`."""
    book = openpyxl.load_workbook(source)
    sheet = book["Ingredients"]
    header = [str(cell.value or "").lower() for cell in sheet[1]]
    row = next(r for r in sheet.iter_rows(min_row=2) if r[0].value == name)
    row[next(k for k, h in enumerate(header) if h.startswith("cost"))].value = price
    path = tmp_path / f"plan-{name}-{price:.6f}.xlsx"
    book.save(path)
    reference = formulate_with_highs(path)
    assert reference.result.status == 0
    return reference.result.x


def test_one_price_per_ingredient_for_a_plant_matches_highs_moving_every_product_together(tmp_path):
    # Outside check: HiGHS re-solves the plant with the ingredient's one Cost cell (paid by
    # every product) just inside each end of its range (same plan) and just outside it
    # (another plan).
    source = tmp_path / "pig_feed_plant.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "pig_feed_plant.xlsx", source)
    doc = json.loads(CliRunner().invoke(app, ["solve", str(source), "--json", "--no-cross-check"]).stdout)
    ends = {name: (doc["prices"][name]["more_below"], doc["prices"][name]["less_above"])
            for name in ("Barley", "Wheat", "Soybean meal 47", "Field peas")}
    assert _ends_checked_by_highs(tmp_path, source, ends) >= 4


@pytest.mark.parametrize("sparse_basis", [False, True])
def test_one_price_ranges_solved_in_blocks_match_highs(tmp_path, monkeypatch, sparse_basis):
    # The ranges of a plant's ingredients are found in blocks of RANGES_AT_ONCE price
    # directions from one factorisation of the basis; with blocks of 3, ingredients of the
    # first and of later blocks are checked against HiGHS re-solving just inside and just
    # outside each end, as above (outside check: HiGHS). With `sparse_basis` the basis is
    # factorised by the engine's sparse factors, as a large plant's is.
    from blendkit.lp import shared_prices
    from blendkit.pipeline import formulate, prepare

    monkeypatch.setattr(shared_prices, "RANGES_AT_ONCE", 3)
    monkeypatch.setattr(shared_prices, "held_sparse", lambda *shape: sparse_basis)
    source = tmp_path / "pig_feed_plant.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "pig_feed_plant.xlsx", source)
    formula = formulate(prepare(source, tmp_path / "out.xlsx").blend, check=False)
    lines = {line.name: line for line in formula.shared_prices}
    assert len(lines) == 17
    names = ("Wheat", "Maize", "Soybean meal 47", "Field peas", "Rapeseed oil", "Limestone")  # blocks 1, 1, 2, 3, 3, 4
    ends = {name: (lines[name].more_below, lines[name].less_above) for name in names}
    assert _ends_checked_by_highs(tmp_path, source, ends) >= 6


def _ends_checked_by_highs(tmp_path: Path, source: Path, ends: dict) -> int:
    """Check each finite end of each ingredient's one-price range against HiGHS: just
    inside it the plan is the plan at today's price, just outside it is another; returns
    how many ends were checked."""
    checked = 0
    for name, (more_below, less_above) in ends.items():
        price = _plan_price(source, name)
        at_price = _plan_at_price(tmp_path, source, name, price)
        for end, outward in ((more_below, -1), (less_above, +1)):
            if end is None:
                continue
            gap = 1e-3 * max(1.0, abs(end))
            inside = _plan_at_price(tmp_path, source, name, end - outward * gap)
            outside = _plan_at_price(tmp_path, source, name, end + outward * gap)
            assert inside == pytest.approx(at_price, abs=1e-6), (name, end)
            assert abs(outside - at_price).max() > 1e-6, (name, end)
            checked += 1
    return checked


def _plan_price(source: Path, name: str) -> float:
    """The Cost cell of `name` in `source`."""
    sheet = openpyxl.load_workbook(source)["Ingredients"]
    header = [str(cell.value or "").lower() for cell in sheet[1]]
    row = next(r for r in sheet.iter_rows(min_row=2) if r[0].value == name)
    return float(row[next(k for k, h in enumerate(header) if h.startswith("cost"))].value)

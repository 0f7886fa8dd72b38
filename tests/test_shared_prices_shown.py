"""The one price per ingredient of a plant run, shown where a buyer looks: the Overview
sheet and the console, the same numbers as JSON `prices` (whose ends tests/test_prices.py
checks against HiGHS re-solves); a linked product's own ranges labelled "this product
alone" on the Result sheet and in JSON."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.cli import app

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def plant(tmp_path_factory) -> tuple[dict, str, Path]:
    """The pig plant sample solved twice: its JSON, and its console text and workbook."""
    folder = tmp_path_factory.mktemp("plant")
    source = folder / "pig_feed_plant.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "pig_feed_plant.xlsx", source)
    doc = CliRunner().invoke(app, ["solve", str(source), "--json", "--no-cross-check", "-o", str(folder / "j.xlsx")])
    out = folder / "out.xlsx"
    text = CliRunner().invoke(app, ["solve", str(source), "--no-cross-check", "-o", str(out)])
    assert doc.exit_code == 0 and text.exit_code == 0
    return json.loads(doc.stdout), text.stdout, out


def _overview_prices(path: Path) -> dict[str, list]:
    """The Overview sheet's one-price table: ingredient -> [price, below, above, note]."""
    sheet = openpyxl.load_workbook(path)["Overview"]
    rows = [[cell.value for cell in row][:5] for row in sheet.iter_rows()]
    top = next(k for k, row in enumerate(rows) if row[0] == "One price per ingredient, every product at once")
    assert rows[top + 2][:3] == ["Ingredient", "Price (EUR per tonne)", "Used more if its price falls below"]
    table = {}
    for row in rows[top + 3:]:
        if row[0] is None:
            break
        table[row[0]] = row[1:]
    return table


def test_overview_shows_every_ingredients_one_price_as_json_does(plant):
    doc, _, out = plant
    table = _overview_prices(out)
    assert list(table) == list(doc["prices"])
    for name, entry in doc["prices"].items():
        _, below, above, note = table[name]
        assert entry["scope"] == "one price for every product"
        assert below == (None if entry["more_below"] is None else pytest.approx(entry["more_below"]))
        assert above == (None if entry["less_above"] is None else pytest.approx(entry["less_above"]))
        if entry["note"]:
            assert entry["note"] in note  # an end only a negative price reaches, in words
        if entry["more_below"] is None or entry["less_above"] is None:
            assert note, name  # a blank end always says why


def test_console_lists_one_line_per_ingredient_as_json_does(plant):
    doc, text, _ = plant
    lines = text.splitlines()
    top = next(k for k, line in enumerate(lines) if line.startswith("One price per ingredient"))
    body = lines[top + 3: top + 3 + len(doc["prices"])]
    for line, (name, entry) in zip(body, doc["prices"].items()):
        assert line.startswith(name)
        for end in (entry["more_below"], entry["less_above"]):
            assert (f"{end:,.2f}" if end is not None else " - ") in line + " ", (name, line)


def test_linked_products_ranges_say_this_product_alone(plant):
    doc, _, out = plant
    # Grower, Finisher and Sow feed share stocks in the sample: all three are linked.
    assert {entry["scope"] for product in doc["products"].values() for entry in product["prices"].values()} == {
        "this product alone"}
    sheet = openpyxl.load_workbook(out)["Result"]
    headers = [[cell.value for cell in row] for row in sheet.iter_rows() if row[0].value == "Ingredient" and row[1].value == "Inclusion (%)"]
    assert len(headers) == len(doc["products"])
    assert all(row[7] == "Used more if its price falls below (EUR per tonne, this product alone)" for row in headers)


def test_products_no_stock_links_keep_their_own_ranges(tmp_path):
    # Two invented products with no stock between them are separate LPs: each product's
    # range is its own ("this product"), and the run's one price is the narrowest of the
    # two (HiGHS re-solves of each product alone, with the one Cost cell moved, agree).
    from tests.test_examples import formulate_with_highs
    from tests.workbooks import INGREDIENTS, LIMITS, PRODUCTS, SPECS, make_workbook

    # Layer mash may take at most 10 % wheat bran (a Limits row); the pullet grower is free.
    sheets = {"Products": PRODUCTS, "Limits": [LIMITS[0], LIMITS[2]]}
    source = make_workbook(tmp_path, INGREDIENTS, SPECS, sheets=sheets, name="two.xlsx")
    run = CliRunner().invoke(app, ["solve", str(source), "--json", "--no-cross-check", "-o", str(tmp_path / "o.xlsx")])
    doc = json.loads(run.stdout)
    scopes = {entry["scope"] for product in doc["products"].values() for entry in product["prices"].values()}
    assert scopes == {"this product"}
    maize = [product["prices"]["Maize"] for product in doc["products"].values()]
    assert maize[0] != maize[1]  # the two formulas differ
    one = doc["prices"]["Maize"]
    assert one["less_above"] == pytest.approx(min(entry["less_above"] for entry in maize))
    assert one["more_below"] == pytest.approx(max(entry["more_below"] for entry in maize))
    before = formulate_with_highs(source).result.x
    for factor, changes in ((0.999, False), (1.001, True)):
        book = openpyxl.load_workbook(source)
        book["Ingredients"]["B2"] = one["less_above"] * factor  # Maize's Cost cell
        moved = tmp_path / f"moved{factor}.xlsx"
        book.save(moved)
        after = formulate_with_highs(moved).result.x
        # Just inside the one-price end no product changes; just outside, one does.
        assert (abs(after - before).max() > 1e-6) == changes

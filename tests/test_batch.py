"""The weekly job: many formulas in one workbook, many workbooks with one price list,
in parallel, with an overview.

Outside checks: scipy's HiGHS (`tests/test_examples.py` builds each LP from the workbook
cells with openpyxl only, never with blendkit's reader).
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.cli import app
from tests.test_examples import formulate_with_highs
from tests.workbooks import INGREDIENTS, make_workbook

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_workbooks"
runner = CliRunner()

# Four formulas from one ingredient list (the Hilltop Hens demo data of tests/workbooks.py;
# made-up figures, not feeding advice); "Impossible" asks for more protein than any mix has.
SPECS = [
    ["Nutrient", "Min", "Max", "Product"],
    ["Crude protein", 16.5, None, None],
    ["Energy", 11.2, 12.0, "Layer"],
    ["Calcium", 3.6, 4.1, "Layer"],
    ["Energy", 11.5, 12.5, "Grower"],
    ["Calcium", 1.0, 6.0, "Grower"],
    ["Energy", 11.0, 12.5, "Pullet"],
    ["Calcium", 2.0, 2.5, "Pullet"],
    ["Crude protein", 60, None, "Impossible"],
]
PRODUCTS = [["Product"], ["Layer"], ["Grower"], ["Pullet"], ["Impossible"]]


def run(*args):
    """Invoke the CLI in-process; returns the click Result (stdout and stderr separate)."""
    return runner.invoke(app, [str(a) for a in args])


def formulas_book(folder: Path, products=PRODUCTS, name: str = "week.xlsx") -> Path:
    """The four-formula workbook in `folder` (or with fewer products and their specs)."""
    names = {row[0] for row in products[1:]}
    specs = [SPECS[0], *(row for row in SPECS[1:] if row[3] is None or row[3] in names)]
    return make_workbook(folder, INGREDIENTS, specs, sheets={"Products": products}, name=name)


def alone(folder: Path, product: str) -> Path:
    """The same workbook as a single blend of `product` alone: its specs, no Products."""
    specs = [row[:3] for row in SPECS[1:] if row[3] in (None, product)]
    return make_workbook(folder, INGREDIENTS, [SPECS[0][:3], *specs], name=f"{product}.xlsx")


def test_every_formula_of_a_batch_is_that_formula_solved_alone(tmp_path):
    result = run("solve", formulas_book(tmp_path), "--json", "--jobs", "1")
    assert result.exit_code == 3, result.output  # one formula is infeasible
    doc = json.loads(result.stdout)
    statuses = {name: entry["status"] for name, entry in doc["products"].items()}
    assert statuses == {"Layer": "optimal", "Grower": "optimal", "Pullet": "optimal", "Impossible": "infeasible"}
    assert doc["products"]["Impossible"]["relaxation"]["changes"]
    for product in ("Layer", "Grower", "Pullet"):
        path = alone(tmp_path, product)
        single = json.loads(run("solve", path, "--json").stdout)
        entry = doc["products"][product]
        assert entry["cost"] == pytest.approx(single["cost"], rel=1e-9)
        assert entry["ingredients"] == pytest.approx(single["ingredients"], abs=1e-7)
        # Outside check: HiGHS on the single blend built from its cells.
        assert entry["cost"] == pytest.approx(formulate_with_highs(path).result.fun, rel=1e-7)


def test_products_apart_give_exactly_what_each_gives_on_its_own_products_sheet(tmp_path):
    batch = json.loads(run("solve", formulas_book(tmp_path), "--json", "--jobs", "1").stdout)
    for product in ("Layer", "Pullet"):
        folder = tmp_path / product
        folder.mkdir()
        own = json.loads(run("solve", formulas_book(folder, [["Product"], [product]]), "--json").stdout)
        ours, theirs = own["products"][product], batch["products"][product]
        for limit in (*ours["limits"], *theirs["limits"]):
            limit.pop("cell")  # Specs rows sit on other rows in the smaller workbook
        assert ours == theirs


def test_jobs_one_and_two_give_identical_json(tmp_path):
    book = formulas_book(tmp_path)
    one = run("solve", book, "-o", tmp_path / "a.xlsx", "--json", "--jobs", "1")
    two = run("solve", book, "-o", tmp_path / "b.xlsx", "--json", "--jobs", "2")
    assert one.exit_code == two.exit_code == 3
    assert one.stdout == two.stdout


def test_the_overview_sheet_lists_every_formula_with_a_link(tmp_path):
    output = tmp_path / "week.result.xlsx"
    assert run("solve", formulas_book(tmp_path), "--jobs", "1").exit_code == 3
    book = openpyxl.load_workbook(output)
    assert book.sheetnames[0] == "Overview"
    rows = {row[0]: row for row in book["Overview"].iter_rows(min_row=8, values_only=True) if row[0]}
    assert set(rows) == {"Layer", "Grower", "Pullet", "Impossible"}
    assert rows["Impossible"][1] == "infeasible" and rows["Layer"][1] == "optimal"
    for cell in book["Overview"]["I"][7:11]:
        target = cell.hyperlink.location
        sheet, _, coordinate = target.partition("!")
        assert book[sheet][coordinate].value == "Product"  # the link lands on the block's heading
        assert book[sheet][coordinate].offset(0, 1).value == book["Overview"].cell(cell.row, 1).value


def test_a_stock_without_amounts_is_not_applied_and_says_so(tmp_path):
    ingredients = [[*INGREDIENTS[0], "Stock"], *[[*row, 10] for row in INGREDIENTS[1:]]]
    path = make_workbook(tmp_path, ingredients, SPECS[:4], sheets={"Products": [["Product"], ["Layer"], ["Grower"]]})
    doc = json.loads(run("solve", path, "--json").stdout)
    assert doc["status"] == "optimal"
    assert any("stock in Ingredients!I2 is not applied" in note for note in doc["notes"])


# --- many workbooks, one price list ----------------------------------------------------------


def _price_list(folder: Path) -> Path:
    """New prices for maize, soybean meal and limestone (made-up figures for the test),
    plus a name no book has."""
    return make_workbook(folder, [
        ["Ingredient", "Cost (EUR/t)", "Min"],
        ["Maize", 260, 99],  # Min is ignored in a price list
        ["soybean  MEAL", 380, None],
        ["Limestone", 55, None],
        ["Unobtainium", 1, None],
    ], None, sheets={}, name="prices.xlsx")


def _with_prices(book: Path, prices: dict[str, float], target: Path) -> Path:
    """A copy of `book` with the Cost cells of these ingredients set (for HiGHS)."""
    workbook = openpyxl.load_workbook(book)
    sheet = workbook["Ingredients"]
    header = [str(cell.value or "") for cell in sheet[1]]
    cost = next(k for k, text in enumerate(header) if text.lower().startswith("cost"))
    for row in sheet.iter_rows(min_row=2):
        name = str(row[0].value or "").strip().lower()
        for key, value in prices.items():
            if " ".join(name.split()) == key:
                row[cost].value = value
    workbook.save(target)
    return target


def test_a_price_list_applied_to_three_books_gives_the_highs_optimum(tmp_path):
    books = []
    for name in ("layer_feed.xlsx", "broiler_starter.xlsx", "pig_feed_plant.xlsx"):
        books.append(tmp_path / name)
        shutil.copyfile(SAMPLES / name, books[-1])
    before = [book.read_bytes() for book in books]
    prices = _price_list(tmp_path)
    result = run("solve", *books, "--prices", prices, "--json", "--overview", tmp_path / "all.xlsx", "--jobs", "2")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)["books"]
    assert [book.read_bytes() for book in books] == before  # inputs untouched
    new = {"maize": 260, "soybean meal": 380, "limestone": 55}
    for book in books:
        reference = formulate_with_highs(_with_prices(book, new, tmp_path / f"ref-{book.name}"))
        entry = doc[str(book)]
        cost = entry.get("cost", entry.get("total_cost"))
        assert cost == pytest.approx(reference.result.fun, rel=1e-7), book.name
    overview = openpyxl.load_workbook(tmp_path / "all.xlsx")["Overview"]
    listed = [row[0] for row in overview.iter_rows(min_row=5, values_only=True) if row[0]]
    assert set(listed) == {book.name for book in books}


def test_replaced_cells_are_marked_and_recorded(tmp_path):
    book = tmp_path / "layer_feed.xlsx"
    shutil.copyfile(SAMPLES / "layer_feed.xlsx", book)
    prices = _price_list(tmp_path)
    result = run("solve", book, "--prices", prices, "--json")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert any(note.startswith("Not in the price list prices.xlsx, so kept their own values: ") for note in doc["notes"])
    output = openpyxl.load_workbook(tmp_path / "layer_feed.result.xlsx")
    sheet = output["Ingredients"]
    maize = next(row for row in sheet.iter_rows(min_row=2) if row[0].value == "Maize")
    cost_cell = maize[1]
    assert cost_cell.value == 260
    assert "From the price list prices.xlsx Ingredients!B2" in cost_cell.comment.text
    info = {row[0]: row[1] for row in output["Run info"].iter_rows(values_only=True) if row and row[0]}
    assert info["Price list"] == "prices.xlsx"


def test_only_the_replaced_cells_change_their_look(tmp_path):
    # The reader lets cells of one style share a style record; marking a replaced cell
    # must not repaint the others. Checked against openpyxl's own load of the input.
    book = tmp_path / "layer_feed.xlsx"
    shutil.copyfile(SAMPLES / "layer_feed.xlsx", book)
    assert run("solve", book, "--prices", _price_list(tmp_path), "--json").exit_code == 0
    before = openpyxl.load_workbook(book)["Ingredients"]
    after = openpyxl.load_workbook(tmp_path / "layer_feed.result.xlsx")["Ingredients"]

    def look(cell):  # styles of two workbooks compare by what they print
        return repr(cell.fill), repr(cell.font), repr(cell.border), cell.number_format

    changed = {cell.coordinate for row in after.iter_rows() for cell in row
               if look(cell) != look(before[cell.coordinate])}
    assert changed == {f"B{row}" for row in range(2, before.max_row + 1)
                       if str(before[f"A{row}"].value).lower() in ("maize", "soybean meal", "limestone")}


def test_a_bad_book_does_not_stop_the_others(tmp_path):
    good = formulas_book(tmp_path)
    bad = make_workbook(tmp_path, [["Ingredient", "Cost"], ["Maize", "n/a"]], [["Nutrient", "Min"]], name="bad.xlsx")
    result = run("solve", good, bad, "--json", "--jobs", "1")
    assert result.exit_code == 3  # the worst of: infeasible formula (3), workbook problem (1)
    books = json.loads(result.stdout)["books"]
    assert books[str(bad)]["status"] == "workbook_error"
    assert books[str(bad)]["problems"][0]["where"] == "Ingredients!B2"
    assert books[str(good)]["products"]["Layer"]["status"] == "optimal"


def test_output_options_take_one_book_only(tmp_path):
    one, two = formulas_book(tmp_path), formulas_book(tmp_path, name="two.xlsx")
    result = run("solve", one, two, "-o", tmp_path / "x.xlsx")
    assert result.exit_code == 2
    assert "take one workbook only" in result.stderr


def test_the_progress_bar_never_reaches_stdout(tmp_path, monkeypatch):
    import blendkit.write.progress as progress

    monkeypatch.setattr(progress, "stderr_is_terminal", lambda: True)
    result = run("solve", formulas_book(tmp_path), "--json", "--jobs", "1")
    json.loads(result.stdout)  # nothing but the document on stdout
    assert "Solving formulas" in result.stderr

"""What changed since the last run: the Changes sheet, JSON `changes`, the console line,
the hidden Result data record, and the cost change split into price and formula effects.

Outside checks: the price effect is recomputed here from the earlier output's visible
inclusions and the two workbooks' Cost cells, read with openpyxl alone (plain
arithmetic, not blendkit's code); the formulas before and after are re-solved with
scipy's HiGHS from the workbook cells (`formulate_with_highs`, tests/test_examples.py).
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import pytest
from openpyxl import load_workbook
from typer.testing import CliRunner

from blendkit.cli import app
from blendkit.lp.changes import compare_runs
from blendkit.model.record import RecordedFormula, RunRecord, run_record
from blendkit.pipeline import solve_workbook
from blendkit.read.previous import NoRecord, read_run_record
from tests.test_examples import SAMPLE_WORKBOOKS, formulate_with_highs

LAYER = SAMPLE_WORKBOOKS / "layer_feed.xlsx"
PLANT = SAMPLE_WORKBOOKS / "pig_feed_plant.xlsx"
BROILER = SAMPLE_WORKBOOKS / "broiler_starter.xlsx"
LAYER_KEY = "Layer feed, peak lay"  # the layer sample's Name setting
# An inclusion HiGHS reports above this (in %) is in the formula; below, solver noise.
IN_FORMULA = 1e-6
runner = CliRunner()


def run(*args):
    """Invoke the CLI in-process; returns the click Result."""
    return runner.invoke(app, [str(a) for a in args])


def solve_json(*args) -> dict:
    """`blendkit solve ... --json`, which must succeed; the JSON document."""
    result = run("solve", *args, "--json")
    assert result.exit_code == 0, result.output
    return json.loads(result.stdout)


def copy(source: Path, target: Path) -> Path:
    """A copy of a sample workbook at `target`."""
    shutil.copyfile(source, target)
    return target


def cost_cells(path: Path) -> dict[str, float]:
    """Each ingredient's Cost cell on the Ingredients sheet, read with openpyxl alone."""
    header, *rows = load_workbook(path, data_only=True)["Ingredients"].iter_rows(values_only=True)
    column = next(i for i, label in enumerate(header) if str(label).lower().startswith("cost"))
    return {row[0]: float(row[column]) for row in rows if row[0] is not None}


def set_prices(path: Path, prices: dict[str, float]) -> None:
    """Write new Cost cells for some ingredients, as a user edits the workbook."""
    book = load_workbook(path)
    sheet = book["Ingredients"]
    header = [cell.value for cell in sheet[1]]
    column = next(i for i, label in enumerate(header, start=1) if str(label).lower().startswith("cost"))
    for row in range(2, sheet.max_row + 1):
        name = sheet.cell(row, 1).value
        if name in prices:
            sheet.cell(row, column).value = prices[name]
    book.save(path)


def result_inclusions(output: Path) -> dict[str, float]:
    """The inclusions on an output's visible Result sheet (one blend), read with openpyxl:
    the rows under the "Ingredient" header, down to "Total"."""
    rows = list(load_workbook(output)["Result"].iter_rows(values_only=True))
    start = next(i for i, row in enumerate(rows) if row[0] == "Ingredient") + 1
    inclusions = {}
    for row in rows[start:]:
        if row[0] == "Total":
            break
        inclusions[row[0]] = float(row[1])
    return inclusions


def close(a: float, b: float, rel: float = 1e-9) -> bool:
    """Equal to `rel` relative (an absolute floor of `rel` for values near 0)."""
    return math.isclose(a, b, rel_tol=rel, abs_tol=rel)


@pytest.fixture
def layer(tmp_path: Path) -> Path:
    """The layer sample as the user's feed.xlsx."""
    return copy(LAYER, tmp_path / "feed.xlsx")


# --- the weekly run ----------------------------------------------------------------------


def test_weekly_run_shows_what_changed(layer: Path, tmp_path: Path):
    first = solve_json(layer)
    assert "changes" not in first  # the first run has nothing to compare with
    old_input = copy(layer, tmp_path / "last_week.xlsx")
    set_prices(layer, {"Maize": 240})
    second = solve_json(layer)

    assert second["compared_with"]["output"] == "feed.result.xlsx"
    assert second["compared_with"]["input"] == "feed.xlsx"
    changes = second["changes"][LAYER_KEY]
    assert close(changes["cost_before"], first["cost"]) and close(changes["cost_after"], second["cost"])
    assert close(changes["price_effect"] + changes["formula_effect"], second["cost"] - first["cost"])
    assert changes["inclusions"]

    # Outside check: both price sets re-solved with scipy's HiGHS from the workbook cells.
    before, after = formulate_with_highs(old_input), formulate_with_highs(layer)
    assert close(before.result.fun, changes["cost_before"], 1e-6)
    assert close(after.result.fun, changes["cost_after"], 1e-6)
    x0, x1 = before.inclusion(), after.inclusion()
    came_in = [name for name in x1 if x0[name] <= IN_FORMULA < x1[name]]
    went_out = [name for name in x0 if x1[name] <= IN_FORMULA < x0[name]]
    assert came_in and went_out  # the price rise reformulates, not only reprices
    assert changes["came_in"] == came_in and changes["went_out"] == went_out
    moved = {name for name in x0 if abs(x1[name] - x0[name]) > 1e-5}
    assert set(changes["inclusions"]) == moved
    for name, (was, now) in changes["inclusions"].items():
        assert abs(was - x0[name]) < 1e-5 and abs(now - x1[name]) < 1e-5, name

    book = load_workbook(tmp_path / "feed.result.xlsx")
    assert "Changes" in book.sheetnames and book["Result data"].sheet_state == "hidden"


def test_price_effect_is_the_old_formula_repriced(layer: Path, tmp_path: Path):
    solve_json(layer)
    old_output = copy(tmp_path / "feed.result.xlsx", tmp_path / "last_week.result.xlsx")
    old_prices = cost_cells(layer)
    set_prices(layer, {"Maize": 231.5, "Soybean meal 47": 433, "Limestone grit": 61, "Fish meal 65": 1200})
    changes = solve_json(layer)["changes"][LAYER_KEY]

    # Outside check: the old formula (visible Result sheet) at the new and the old Cost
    # cells, by plain arithmetic: sum inclusion x price / 100 is the cost per tonne.
    inclusions, new_prices = result_inclusions(old_output), cost_cells(layer)
    repriced = sum(x * new_prices[name] for name, x in inclusions.items()) / 100
    as_was = sum(x * old_prices[name] for name, x in inclusions.items()) / 100
    assert close(as_was, changes["cost_before"])
    assert close(changes["price_effect"], repriced - as_was)
    total = changes["cost_after"] - changes["cost_before"]
    assert close(changes["price_effect"] + changes["formula_effect"], total)


def test_console_shows_one_line_per_formula(layer: Path):
    assert run("solve", layer).exit_code == 0
    set_prices(layer, {"Maize": 240})
    result = run("solve", layer)
    assert result.exit_code == 0, result.output
    assert "Changes since feed.result.xlsx" in result.stdout
    line = next(line for line in result.stdout.splitlines() if line.startswith(f"  {LAYER_KEY}: cost "))
    assert "->" in line and "price effect +" in line and "formula effect -" in line


def test_changes_sheet_matches_the_json(layer: Path, tmp_path: Path):
    solve_json(layer)
    set_prices(layer, {"Maize": 240})
    changes = solve_json(layer)["changes"][LAYER_KEY]
    rows = list(load_workbook(tmp_path / "feed.result.xlsx")["Changes"].iter_rows(values_only=True))
    labels = {row[0]: row for row in rows if row[0]}
    assert labels["Cost"][1:4] == pytest.approx([changes["cost_before"], changes["cost_after"],
                                                  changes["cost_after"] - changes["cost_before"]])
    assert labels["of which price effect"][3] == pytest.approx(changes["price_effect"])
    assert labels["of which formula effect"][3] == pytest.approx(changes["formula_effect"])
    assert labels["Came in"][1] == changes["came_in"][0]
    for name, (was, now) in changes["inclusions"].items():
        assert labels[name][1:3] == pytest.approx((was, now))


# --- which earlier result ----------------------------------------------------------------


def test_compare_names_an_earlier_output(layer: Path, tmp_path: Path):
    old = copy(layer, tmp_path / "week13.xlsx")
    first = solve_json(old)
    set_prices(layer, {"Soybean meal 47": 600})
    second = solve_json(layer, "--compare", tmp_path / "week13.result.xlsx")
    assert second["compared_with"] == {
        "output": "week13.result.xlsx", "input": "week13.xlsx",
        "run_at": second["compared_with"]["run_at"],
    }
    changes = second["changes"][LAYER_KEY]
    assert close(changes["cost_before"], first["cost"])
    assert any("not of feed.xlsx, as --compare asked" in note for note in second["notes"])


def test_an_output_of_another_workbook_is_not_compared(layer: Path, tmp_path: Path):
    broiler = copy(BROILER, tmp_path / "broiler.xlsx")
    assert run("solve", broiler, "-o", tmp_path / "feed.result.xlsx").exit_code == 0
    doc = solve_json(layer)
    assert "changes" not in doc and "compared_with" not in doc
    assert any("held a result of broiler.xlsx, not of feed.xlsx" in note for note in doc["notes"])
    assert "Changes" not in load_workbook(tmp_path / "feed.result.xlsx").sheetnames


def test_in_place_compares_with_the_file_it_replaces(layer: Path, tmp_path: Path):
    first = solve_json(layer)
    output = tmp_path / "feed.result.xlsx"
    set_prices(output, {"Maize": 240})  # the user edits the output workbook itself
    second = solve_json(output, "--in-place")
    assert second["compared_with"]["output"] == "feed.result.xlsx"
    assert second["compared_with"]["input"] == "feed.xlsx"
    changes = second["changes"][LAYER_KEY]
    assert close(changes["cost_before"], first["cost"]) and close(changes["cost_after"], second["cost"])
    assert changes["cost_after"] > changes["cost_before"]
    # The record now in the file is this run's, of the output itself.
    assert read_run_record(output).input_name == "feed.result.xlsx"
    assert (tmp_path / "feed.result.backup.xlsx").exists()


def test_plant_changes_per_product(tmp_path: Path):
    plant = copy(PLANT, tmp_path / "plant.xlsx")
    first = solve_json(plant)
    old_prices = cost_cells(plant)
    set_prices(plant, {"Soybean meal 47": 520, "Barley": 160})
    second = solve_json(plant)
    new_prices = cost_cells(plant)
    changes = second["changes"]
    assert list(changes) == ["Grower", "Finisher", "Sow feed"]
    for name, item in changes.items():
        before, after = first["products"][name], second["products"][name]
        assert close(item["cost_before"], before["cost"]) and close(item["cost_after"], after["cost"])
        # Outside check: the earlier product formula at both sets of Cost cells.
        repriced = sum(x * (new_prices[i] - old_prices[i]) for i, x in before["ingredients"].items()) / 100
        assert close(item["price_effect"], repriced)
        assert close(item["price_effect"] + item["formula_effect"], item["cost_after"] - item["cost_before"])
    sheet = load_workbook(tmp_path / "plant.result.xlsx")["Changes"]
    headings = [row[0] for row in sheet.iter_rows(values_only=True)]
    assert {"Grower", "Finisher", "Sow feed"} <= set(headings)


# --- outputs without a usable record, and bad --compare files ----------------------------


def test_an_older_output_gives_a_note(layer: Path, tmp_path: Path):
    solve_json(layer)
    output = tmp_path / "feed.result.xlsx"
    book = load_workbook(output)
    book.remove(book["Result data"])  # as an older version wrote it
    book.save(output)
    doc = solve_json(layer)
    assert "changes" not in doc
    assert any("older version of blendkit" in note for note in doc["notes"])


def test_a_damaged_record_gives_a_note_not_a_crash(layer: Path, tmp_path: Path):
    solve_json(layer)
    output = tmp_path / "feed.result.xlsx"
    book = load_workbook(output)
    sheet = book["Result data"]
    cost_row = next(row for row in sheet.iter_rows() if row[1].value == "cost")
    cost_row[3].value = "lots"
    book.save(output)
    doc = solve_json(layer)
    assert "changes" not in doc
    assert any("cannot be read" in note and "the cost is not a number" in note for note in doc["notes"])


def test_compare_refuses_a_missing_file(layer: Path, tmp_path: Path):
    result = run("solve", layer, "--compare", tmp_path / "nowhere.xlsx")
    assert result.exit_code == 2
    assert "nowhere.xlsx: no such file" in result.output


def test_compare_refuses_a_workbook_that_is_no_output(layer: Path, tmp_path: Path):
    other = copy(BROILER, tmp_path / "broiler.xlsx")
    result = run("solve", layer, "--compare", other)
    assert result.exit_code == 2
    assert "broiler.xlsx is not a blendkit output workbook" in result.output
    assert not (tmp_path / "feed.result.xlsx").exists()


def test_compare_refuses_a_file_that_is_no_workbook(layer: Path, tmp_path: Path):
    junk = tmp_path / "junk.xlsx"
    junk.write_bytes(b"not a workbook")
    result = run("solve", layer, "--compare", junk)
    assert result.exit_code == 2
    assert "junk.xlsx cannot be read as a workbook" in result.output


# --- the record and the comparison themselves --------------------------------------------


def test_record_reads_back(layer: Path, tmp_path: Path):
    outcome = solve_workbook(layer)
    written = run_record(outcome.formula, outcome.run)
    read = read_run_record(outcome.output)
    assert read.output == "feed.result.xlsx"
    assert (read.input_name, read.mode, read.status) == ("feed.xlsx", "blend", "optimal")
    (was,), (back,) = written.formulas, read.formulas
    assert (back.key, back.binding.keys()) == (was.key, was.binding.keys())
    # The file keeps 16 significant digits of each number.
    assert back.cost == pytest.approx(was.cost, rel=1e-15)
    for field in ("inclusions", "prices", "nutrients"):
        assert getattr(back, field) == pytest.approx(getattr(was, field), rel=1e-15), field


def test_an_infeasible_record_has_no_formulas(tmp_path: Path):
    book = copy(LAYER, tmp_path / "feed.xlsx")
    solve_json(book)
    load = load_workbook(book)
    load["Specs"]["B2"], load["Specs"]["C2"] = 15, 16  # ME 15 to 16 MJ/kg: cannot be met
    load.save(book)
    result = run("solve", book, "--json")
    assert result.exit_code == 3
    doc = json.loads(result.stdout)
    assert "changes" not in doc
    assert any("this run found no formula (status infeasible)" in note for note in doc["notes"])
    assert read_run_record(tmp_path / "feed.result.xlsx").formulas == ()


def _recorded(key="mix", cost=30.0, inclusions=None, prices=None, binding=None) -> RecordedFormula:
    """A small recorded formula for the comparison's own tests."""
    inclusions = inclusions or {"A": 50.0, "B": 50.0}
    return RecordedFormula(key=key, cost=cost, inclusions=inclusions, prices=prices or {"A": 20.0, "B": 40.0},
                           nutrients={"Protein": 10.0}, binding=binding or {})


def _run(*formulas: RecordedFormula, mode="blend", status="optimal") -> RunRecord:
    """A small run record."""
    return RunRecord(input_name="mix.xlsx", input_sha256="", started_utc="", tool_version="",
                     mode=mode, status=status, formulas=formulas, output="mix.result.xlsx")


def test_compare_runs_worked_example():
    # The README's definitions (price effect = sum of old inclusion x (new price - old
    # price) / 100; formula effect = new cost - old cost - price effect), worked through:
    # the old formula 50 % A + 50 % B costs (50 x 20 + 50 x 40) / 100 = 30; at the new
    # prices (A 30) it costs 35: price effect 5. The new formula (100 % A at 30) costs 30,
    # so the formula effect is 30 - 30 - 5 = -5.
    old = _recorded(binding={"nutrient Protein min": 10.0})
    new = _recorded(cost=30.0, inclusions={"A": 100.0, "B": 0.0}, prices={"A": 30.0, "B": 40.0},
                    binding={"ingredient A max": 100.0})
    changes, notes = compare_runs(_run(old), _run(new))
    item = changes.formulas[0]
    assert (item.price_effect, item.formula_effect) == pytest.approx((5.0, -5.0))
    assert item.came_in == () and item.went_out == ("B",)
    assert item.started_binding == ("ingredient A max",) and item.stopped_binding == ("nutrient Protein min",)
    assert notes == ()


def test_compare_runs_with_an_ingredient_gone_from_the_workbook():
    old = _recorded()
    new = _recorded(cost=20.0, inclusions={"A": 100.0}, prices={"A": 20.0})
    changes, notes = compare_runs(_run(old), _run(new))
    item = changes.formulas[0]
    assert item.price_effect == 0.0 and item.formula_effect == pytest.approx(-10.0)
    assert item.went_out == ("B",)
    assert any("B was in the earlier formula but is no longer in the workbook" in n for n in notes)


def test_compare_runs_refuses_another_mode():
    changes, notes = compare_runs(_run(_recorded(), mode="diet"), _run(_recorded()))
    assert changes is None and "holds a diet result, this run is a blend run" in notes[0]


def test_no_record_for_a_missing_file(tmp_path: Path):
    with pytest.raises(NoRecord) as caught:
        read_run_record(tmp_path / "gone.xlsx")
    assert not caught.value.output

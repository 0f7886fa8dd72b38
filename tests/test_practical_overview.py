"""What the rules a mill can weigh cost, where a run is summed up: the Overview sheet, the
--overview workbook of a batch, and for a plant the run's totals in the console and JSON.

Outside checks: the LP optimum without the rules is HiGHS's (scipy.optimize.linprog on the
workbook's LP), the optimum under them HiGHS's MIP solver (scipy.optimize.milp, posed in
tests/test_weigh_rules.py from the workbook's numbers, not from blendkit.lp.weigh).
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.cli import app
from blendkit.lp.build import build_lp
from blendkit.read import read_workbook
from tests.reference import highs_form
from tests.test_weigh_rules import MIP_RTOL, SAMPLES, highs_optimum, sample_with

runner = CliRunner()
LABELS = ["LP cost (no weighing rules)", "Weighing rules add", "Proven gap"]
PLANT_RULES = {"products": {"Max ingredients": {"Grower": 10, "Sow feed": 11}},
               "limits": {"Min if used (%)": {("Grower", "Rapeseed meal"): 4}}}
PLANT_HIGHS = {"most": {0: 10, 2: 11}, "min_if_used": {(0, "Rapeseed meal"): 4}}


def _lp_optimum(path: Path) -> float:
    """HiGHS's optimum of the workbook's LP without the weighing rules."""
    reference = highs_form(build_lp(read_workbook(path)).form)
    assert reference.status == "optimal"  # reference: scipy.optimize.linprog (HiGHS)
    return reference.objective


def _solve(path: Path, tmp_path: Path, *extra) -> tuple[dict, Path]:
    """`solve --json` of one book: the document and the output workbook."""
    out = tmp_path / f"{path.stem}.out.xlsx"
    result = runner.invoke(app, ["solve", str(path), "-o", str(out), "--json", "--no-cross-check", *extra])
    assert result.exit_code == 0, result.output
    return json.loads(result.stdout), out


def _table(sheet, header_row: int) -> tuple[list, dict[str, dict]]:
    """A sheet's header at `header_row` and its rows below, by their key (first, or
    second column when the first is a book name), as {label: value}."""
    labels = [cell.value for cell in sheet[header_row] if cell.value is not None]
    rows = {}
    for values in sheet.iter_rows(min_row=header_row + 1, values_only=True):
        if not values[0]:
            break
        rows[values[1] if labels[0] == "Book" else values[0]] = dict(zip(labels, values))
    return labels, rows


def test_plant_overview_sheet_and_run_totals_match_highs(tmp_path):
    path = sample_with(tmp_path, "pig_feed_plant", **PLANT_RULES)
    lp_total = _lp_optimum(path)
    status, rules_total = highs_optimum(path, **PLANT_HIGHS)
    assert status == 0  # reference: scipy.optimize.milp
    doc, out = _solve(path, tmp_path)
    assert list(doc).index("practical") == list(doc).index("cross_check") + 1
    assert doc["practical"]["lp_cost"] == pytest.approx(lp_total, rel=1e-9)  # reference: linprog (HiGHS)
    assert doc["practical"]["cost"] == pytest.approx(rules_total, rel=MIP_RTOL)  # reference: milp (HiGHS)
    assert doc["practical"]["cost"] == pytest.approx(doc["total_cost"], rel=1e-12)

    labels, rows = _table(openpyxl.load_workbook(out)["Overview"], 7)
    assert labels[-3:] == LABELS
    blend = read_workbook(path)
    per = blend.settings.cost_unit_in_mass_units
    amounts = {product.name: product.amount for product in blend.products}
    # The products' LP costs add up to HiGHS's LP optimum, their costs to its MIP optimum.
    assert sum(row[LABELS[0]] * amounts[name] / per for name, row in rows.items()) == pytest.approx(lp_total, rel=1e-9)
    assert sum(row["Cost"] * amounts[name] / per for name, row in rows.items()) == pytest.approx(rules_total,
                                                                                                 rel=MIP_RTOL)
    for name, row in rows.items():
        assert row[LABELS[1]] == pytest.approx(row["Cost"] - row[LABELS[0]], abs=1e-9)
        assert row[LABELS[1]] == pytest.approx(doc["products"][name]["practical"]["cost"]
                                               - doc["products"][name]["practical"]["lp_cost"], abs=1e-9)
        assert 0 <= row[LABELS[2]] <= MIP_RTOL


def test_plant_console_states_the_run_totals(tmp_path):
    path = sample_with(tmp_path, "pig_feed_plant", **PLANT_RULES)
    lp_total = _lp_optimum(path)
    _, rules_total = highs_optimum(path, **PLANT_HIGHS)
    result = runner.invoke(app, ["solve", str(path), "-o", str(tmp_path / "out.xlsx"), "--no-cross-check"])
    assert result.exit_code == 0, result.output
    line = next(text for text in result.output.splitlines() if text.startswith("Weighing rules, whole run"))
    # reference: linprog and milp (HiGHS), as printed with two decimals
    assert f"without them {lp_total:,.2f} EUR" in line and f"with them {rules_total:,.2f} EUR" in line


def test_plant_without_rules_has_no_practical_columns_or_totals(tmp_path):
    path = tmp_path / "pig_feed_plant.xlsx"
    shutil.copy(SAMPLES / "pig_feed_plant.xlsx", path)
    doc, out = _solve(path, tmp_path)
    assert "practical" not in doc
    labels, _ = _table(openpyxl.load_workbook(out)["Overview"], 7)
    assert labels[-1] == "Result"


def test_overview_workbook_shows_what_the_rules_cost_each_formula(tmp_path):
    broiler = sample_with(tmp_path, "broiler_starter", settings={"Scale step": 0.5})
    layer = tmp_path / "layer_feed.xlsx"
    shutil.copy(SAMPLES / "layer_feed.xlsx", layer)
    overview = tmp_path / "all.xlsx"
    result = runner.invoke(app, ["solve", str(broiler), str(layer), "--json", "--no-cross-check", "--jobs", "1",
                                 "--overview", str(overview)])
    assert result.exit_code == 0, result.output
    labels, rows = _table(openpyxl.load_workbook(overview)["Overview"], 4)
    assert labels[-3:] == LABELS
    by_book = {row["Book"]: row for row in rows.values()}
    weighed, plain = by_book[broiler.name], by_book[layer.name]
    status, optimum = highs_optimum(broiler, step=0.5)
    assert status == 0 and weighed["Cost"] == pytest.approx(optimum, rel=MIP_RTOL)  # reference: milp (HiGHS)
    assert weighed[LABELS[0]] == pytest.approx(_lp_optimum(broiler), rel=1e-9)  # reference: linprog (HiGHS)
    assert weighed[LABELS[1]] == pytest.approx(weighed["Cost"] - weighed[LABELS[0]], abs=1e-9)
    assert weighed[LABELS[1]] >= -1e-9  # a rule never makes a blend cheaper
    assert all(plain[label] is None for label in LABELS)


def test_overview_workbook_without_rules_keeps_its_columns(tmp_path):
    layer = tmp_path / "layer_feed.xlsx"
    shutil.copy(SAMPLES / "layer_feed.xlsx", layer)
    overview = tmp_path / "all.xlsx"
    result = runner.invoke(app, ["solve", str(layer), "--no-cross-check", "--overview", str(overview)])
    assert result.exit_code == 0, result.output
    labels, _ = _table(openpyxl.load_workbook(overview)["Overview"], 4)
    assert labels[-1] == "Output workbook"

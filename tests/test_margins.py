"""A Margin column on Specs: the formula is made to min + margin and max - margin. A solve
with margins is checked against HiGHS (scipy.optimize.linprog, tests/test_examples.py
builds the LP from the workbook cells alone) solving the same workbook with those
tightened bounds written in; results show the spec and the target; mistakes are named by
their cell; a workbook without the column solves as before."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from openpyxl import load_workbook
from typer.testing import CliRunner

from blendkit.cli import app
from tests.test_examples import formulate_with_highs

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_workbooks" / "broiler_starter.xlsx"
# Invented safety margins for the broiler sample, each in its spec's unit.
MARGINS = {"ME": 0.05, "Sodium": 0.005, "Digestible lysine": 0.02, "Crude fibre": 0.5}


def _with_margins(tmp_path: Path, margins: dict[str, object], tighten: bool = False, name: str = "m.xlsx") -> Path:
    """The broiler sample with a Margin column filled for the named specs, or (`tighten`)
    with no Margin column and the tightened bounds written into Min and Max instead."""
    workbook = load_workbook(SAMPLE)
    specs = workbook["Specs"]
    header = [cell.value for cell in specs[1]]
    low, high = header.index("Min") + 1, header.index("Max") + 1
    column = specs.max_column + 1
    if not tighten:
        specs.cell(1, column, "Margin")
    for row in range(2, specs.max_row + 1):
        margin = margins.get(specs.cell(row, 1).value)
        if margin is None:
            continue
        if not tighten:
            specs.cell(row, column, margin)
            continue
        for at, sign in ((low, +1), (high, -1)):
            if specs.cell(row, at).value is not None:
                specs.cell(row, at).value += sign * margin
    path = tmp_path / name
    workbook.save(path)
    return path


def _solve(path: Path, *extra: str):
    return CliRunner().invoke(app, ["solve", str(path), "--no-cross-check", *extra])


def test_a_margin_solves_as_highs_with_the_bound_tightened(tmp_path):
    source = _with_margins(tmp_path, MARGINS)
    run = _solve(source, "--json", "-o", str(tmp_path / "m.out.xlsx"))
    assert run.exit_code == 0, run.output
    doc = json.loads(run.stdout)
    reference = formulate_with_highs(_with_margins(tmp_path, MARGINS, tighten=True, name="tight.xlsx"))
    assert reference.result.status == 0
    assert doc["cost"] == pytest.approx(reference.result.fun, rel=1e-9)
    for name, inclusion in zip(reference.names, reference.result.x):
        assert doc["ingredients"][name] == pytest.approx(inclusion, abs=1e-6), name
    # And it costs more than the sample without margins (the margins bind).
    plain = formulate_with_highs(SAMPLE)
    assert doc["cost"] > plain.result.fun + 0.01


def test_json_and_sheets_show_the_spec_and_the_target(tmp_path):
    source = _with_margins(tmp_path, MARGINS)
    out = tmp_path / "m.out.xlsx"
    doc = json.loads(_solve(source, "--json", "-o", str(out)).stdout)
    sodium = {limit["side"]: limit for limit in doc["limits"] if limit["name"] == "Sodium"}
    # The sample's sodium spec is 0.16 to 0.23 % (tests/test_examples.py reads the same cells).
    assert (sodium["min"]["bound"], sodium["min"]["margin"]) == (0.16, 0.005)
    assert sodium["min"]["target"] == pytest.approx(0.165) and sodium["max"]["target"] == pytest.approx(0.225)
    assert sodium["min"]["level"] == pytest.approx(0.165) and sodium["min"]["binding"]
    result = load_workbook(out)["Result"]
    rows = [[cell.value for cell in row] for row in result.iter_rows()]
    top = next(k for k, row in enumerate(rows) if row[0] == "Nutrient" and row[1] == "Basis")
    assert rows[top][9:11] == ["Target min (min + margin)", "Target max (max - margin)"]
    line = next(row for row in rows[top:] if row[0] == "Sodium")
    assert line[3:5] == [0.16, 0.23] and line[9:11] == [pytest.approx(0.165), pytest.approx(0.225)]
    shadow = load_workbook(out)["Shadow prices"]
    header = [cell.value for cell in shadow[3]]
    assert header[-2:] == ["Margin", "Target (bound with margin)"]
    row = next(row for row in shadow.iter_rows(min_row=4, values_only=True) if row[2] == "Sodium" and row[4] == "min")
    assert (row[5], row[19], row[20]) == (0.16, 0.005, pytest.approx(0.165))


def test_the_shadow_price_of_a_spec_with_a_margin_matches_highs(tmp_path):
    # d cost / d spec = d cost / d target (the margin is a constant): HiGHS re-solves of the
    # tightened workbook with the lysine bound moved a little each way.
    source = _with_margins(tmp_path, MARGINS)
    doc = json.loads(_solve(source, "--json", "-o", str(tmp_path / "o.xlsx")).stdout)
    lysine = next(limit for limit in doc["limits"] if limit["name"] == "Digestible lysine")
    h = 1e-5
    costs = []
    for move in (-h, +h):
        margins = dict(MARGINS, **{"Digestible lysine": MARGINS["Digestible lysine"] + move})
        path = _with_margins(tmp_path, margins, tighten=True, name=f"lys{move:+g}.xlsx")
        costs.append(formulate_with_highs(path).result.fun)
    assert lysine["shadow_price"] == pytest.approx((costs[1] - costs[0]) / (2 * h), rel=1e-4)


@pytest.mark.parametrize(("margins", "message"), [
    ({"ME": -0.1}, "margin -0.1 must be 0 or more"),
    # ME is 12.55 to 12.95 MJ/kg in the sample: a margin of 0.25 leaves 12.80 above 12.70.
    ({"ME": 0.25}, "margin 0.25 crosses: min + margin is 12.8, above max - margin 12.7"),
    ({"ME": "wide"}, "margin"),
])
def test_a_bad_margin_is_a_workbook_error_with_its_cell(tmp_path, margins, message):
    source = _with_margins(tmp_path, margins)
    before = source.read_bytes()
    run = _solve(source, "-o", str(tmp_path / "bad.out.xlsx"))
    assert run.exit_code == 1 and "Traceback" not in run.output
    column = load_workbook(source)["Specs"].max_column
    cell = f"Specs!{chr(ord('A') + column - 1)}2"  # ME is the sample's first spec row
    assert f"{cell}: {message}" in run.stderr
    assert source.read_bytes() == before and not (tmp_path / "bad.out.xlsx").exists()


def test_without_margins_the_solve_is_unchanged(tmp_path):
    # A blank Margin column, and no column at all, give the same formula; both are the
    # HiGHS optimum of the sample.
    blank = json.loads(_solve(_with_margins(tmp_path, {}), "--json", "-o", str(tmp_path / "a.xlsx")).stdout)
    none = json.loads(_solve(SAMPLE, "--json", "-o", str(tmp_path / "b.xlsx")).stdout)
    assert blank["ingredients"] == none["ingredients"] and blank["cost"] == none["cost"]
    assert none["cost"] == pytest.approx(formulate_with_highs(SAMPLE).result.fun, rel=1e-9)
    assert all(limit["margin"] == 0 and limit["target"] == limit["bound"] for limit in none["limits"])
    sheet = load_workbook(tmp_path / "b.xlsx")["Shadow prices"]
    assert "Margin" not in [cell.value for cell in sheet[3]]


def test_a_conflict_names_the_spec_as_written_and_the_value_to_write(tmp_path):
    # An invented two-feed blend: no mix exceeds 20 % protein, so a min of 20 with a
    # margin of 0.5 (target 20.5) cannot be met. The conflict line gives the Min cell's
    # value (20) and what to write there (19.5: its target, 20, is what feed B alone
    # reaches); HiGHS agrees that a target of 20 is feasible and one a little above is not.
    from tests.workbooks import make_workbook

    ingredients = [["Ingredient", "Cost (EUR/t)", "Crude protein (%)"], ["A", 100, 10], ["B", 300, 20]]
    specs = [["Nutrient", "Min", "Max", "Margin"], ["Crude protein", 20, None, 0.5]]
    source = make_workbook(tmp_path, ingredients, specs, name="short.xlsx")
    doc = json.loads(_solve(source, "--json", "-o", str(tmp_path / "short.out.xlsx")).stdout)
    assert doc["status"] == "infeasible"
    protein = next(line for line in doc["conflicts"] if line["name"] == "Crude protein")
    assert (protein["bound"], protein["cell"]) == (20, "Specs!B2")
    assert protein["relax_to"] == pytest.approx(19.5)
    for written, status in ((protein["relax_to"] + 0.5, 0), (protein["relax_to"] + 0.5 + 1e-6, 2)):
        tight = make_workbook(tmp_path, ingredients, [["Nutrient", "Min", "Max"], ["Crude protein", written, None]],
                              name=f"t{written}.xlsx")
        assert formulate_with_highs(tight).result.status == status  # scipy: 0 optimal, 2 infeasible

"""The order of binding limits on the Shadow prices sheet for a plant: by the cost of one
step in the run's money, so that a product's own limits (priced per Cost per unit of that
product) and stocks (priced in the run's total) compare.

Outside check: the cost of one step in the run's money is the change in the run's total
cost when that one bound moves a step, re-solved with HiGHS (scipy.optimize.linprog) on
the plant's LP with that row's bound moved (a spec row of one product, or a stock row).
"""

from __future__ import annotations

import dataclasses
import shutil
from pathlib import Path

import openpyxl
from typer.testing import CliRunner

from blendkit.cli import app
from blendkit.lp.build import build_lp
from blendkit.read import read_workbook
from tests.reference import highs_form

SAMPLES = Path(__file__).resolve().parents[1] / "sample_workbooks"
HEADER_ROW = 3
# Columns of the Shadow prices sheet (1-based).
KIND, PRODUCT, NAME, BASIS, SIDE, BOUND, BINDING = 1, 2, 3, 4, 5, 6, 8
HOLDS_FROM, HOLDS_TO, STEP, WORTH, RAISED, LOWERED = 12, 13, 14, 15, 16, 17
ORDER_RTOL = 1e-7  # two step costs this close are a tie


def _binding_rows(path: Path, tmp_path: Path) -> list[tuple]:
    """The Shadow prices sheet's binding rows, in the sheet's order."""
    out = tmp_path / "plant.out.xlsx"
    result = CliRunner().invoke(app, ["solve", str(path), "-o", str(out), "--no-cross-check"])
    assert result.exit_code == 0, result.output
    sheet = openpyxl.load_workbook(out)["Shadow prices"]
    rows = [tuple(cell.value for cell in row) for row in sheet.iter_rows(min_row=HEADER_ROW + 1)]
    return [row for row in rows if row[BINDING - 1] == "yes"]


def _highs_step_cost(lp, row: tuple) -> float | None:
    """The largest change of the run's total cost, by HiGHS, when this nutrient or stock
    bound moves one step up or down (None for other kinds, or where the step leaves the
    range over which its shadow price holds: the sheet's figure is the rate times the step)."""
    kind, product, name, side = row[KIND - 1], row[PRODUCT - 1], row[NAME - 1], row[SIDE - 1]
    step, bound = row[STEP - 1], row[BOUND - 1]
    low, high = row[HOLDS_FROM - 1], row[HOLDS_TO - 1]
    if kind not in ("nutrient", "stock") or row[BASIS - 1] not in ("as fed", None, ""):
        return None
    if low is None or high is None or not low <= bound - step or not bound + step <= high:
        return None
    index = [name for name, _ in lp.products].index(product) if product else None
    i = next(i for i, meaning in enumerate(lp.rows) if meaning.kind == kind and meaning.name == name
             and meaning.product == index and any(s.side == side for s in meaning.sides))
    base = highs_form(lp.form).objective
    changes = []
    for move in (step, -step):
        lower, upper = lp.form.row_lower.copy(), lp.form.row_upper.copy()
        target = lower if side == "min" else upper
        assert target[i] == next(s.bound for s in lp.rows[i].sides if s.side == side)  # the row is the spec
        target[i] += move
        reference = highs_form(dataclasses.replace(lp.form, row_lower=lower, row_upper=upper))
        assert reference.status == "optimal"  # reference: scipy.optimize.linprog (HiGHS)
        changes.append(abs(reference.objective - base))
    return max(changes)


def test_plant_binding_limits_sorted_by_the_cost_of_a_step_for_the_whole_run(tmp_path):
    path = tmp_path / "pig_feed_plant.xlsx"
    shutil.copy(SAMPLES / "pig_feed_plant.xlsx", path)
    rows = _binding_rows(path, tmp_path)
    lp = build_lp(read_workbook(path))
    checked = [(row, _highs_step_cost(lp, row)) for row in rows]
    checked = [(row, cost) for row, cost in checked if cost is not None]
    kinds = {row[KIND - 1] for row, _ in checked}
    assert kinds == {"nutrient", "stock"} and len(checked) >= 10
    totals = [cost for _, cost in checked]
    # reference: scipy.optimize.linprog (HiGHS); the sheet's order is that of the run's cost
    for earlier, later in zip(totals, totals[1:]):
        assert earlier >= later * (1 - ORDER_RTOL) - 1e-9
    # The sheet's own figures are in mixed units (per tonne of a product, or the run's
    # total for a stock): sorted by them, this plant's order would differ.
    own = [max(abs(row[WORTH - 1] or 0), abs(row[RAISED - 1] or 0), abs(row[LOWERED - 1] or 0))
           for row, _ in checked]
    assert own != sorted(own, reverse=True)


def test_intro_line_states_the_rule(tmp_path):
    path = tmp_path / "pig_feed_plant.xlsx"
    shutil.copy(SAMPLES / "pig_feed_plant.xlsx", path)
    _binding_rows(path, tmp_path)
    sheet = openpyxl.load_workbook(tmp_path / "plant.out.xlsx")["Shadow prices"]
    assert "times its amount in Cost per units" in sheet["A2"].value

"""The Shadow prices sheet per step: the cost change when a bound is raised a step and when
it is lowered a step, checked against HiGHS (scipy.optimize.linprog) re-solved with the
bound moved a little up and a little down; binding limits first, by the cost of a step;
the words a degenerate optimum gets."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.cli import app
from tests.test_examples import formulate_with_highs
from tests.workbooks import make_workbook

ROOT = Path(__file__).resolve().parents[1]
HEADER_ROW = 3
# Columns of the sheet (1-based): Binding, Shadow price, Bound read from, Step, Cost of a
# step, raised a step, lowered a step, per step in words, note.
BINDING, SHADOW, CELL, STEP, WORTH, RAISED, LOWERED, WORDS, NOTE = 8, 9, 11, 14, 15, 16, 17, 18, 19


def _solve(source: Path, tmp_path: Path) -> tuple[dict, list[tuple]]:
    """The JSON of a solve and the Shadow prices sheet's rows under its header."""
    out = tmp_path / f"{source.stem}.out.xlsx"
    run = CliRunner().invoke(app, ["solve", str(source), "-o", str(out), "--json", "--no-cross-check"])
    assert run.exit_code == 0, run.output
    sheet = openpyxl.load_workbook(out)["Shadow prices"]
    assert sheet.cell(HEADER_ROW, 1).value == "Kind"
    rows = [tuple(cell.value for cell in row) for row in sheet.iter_rows(min_row=HEADER_ROW + 1)]
    return json.loads(run.stdout), rows


def _cost_with_cell(tmp_path: Path, source: Path, cell: str, value: float) -> float:
    """HiGHS's optimum of `source` with one bound cell set to `value`."""
    sheet, _, coordinate = cell.partition("!")
    book = openpyxl.load_workbook(source)
    book[sheet][coordinate] = value
    path = tmp_path / f"bound-{coordinate}-{value:.12g}.xlsx"
    book.save(path)
    reference = formulate_with_highs(path)
    assert reference.result.status == 0
    return float(reference.result.fun)


def _highs_rates(tmp_path: Path, source: Path, cell: str, bound: float) -> tuple[float, float]:
    """d cost / d bound just above and just below `bound` by HiGHS re-solves (the optimum
    is piecewise linear in a bound, so a small move gives each one-sided rate)."""
    h = 1e-5 * (1 + abs(bound))
    base = _cost_with_cell(tmp_path, source, cell, bound)
    up = (_cost_with_cell(tmp_path, source, cell, bound + h) - base) / h
    down = (base - _cost_with_cell(tmp_path, source, cell, bound - h)) / h
    return up, down


def _check_steps_against_highs(tmp_path: Path, source: Path, rows: list[tuple], limits: list[dict]) -> int:
    """Each binding spec or group row's raised and lowered cost per step against HiGHS."""
    checked = 0
    for row in rows:
        if row[BINDING - 1] != "yes" or row[0] not in ("nutrient", "group") or row[3] == "dry matter":
            continue
        limit = next(each for each in limits if each["cell"] == row[CELL - 1] and each["binding"])
        up, down = _highs_rates(tmp_path, source, limit["cell"], limit["bound"])
        step = row[STEP - 1]
        assert row[RAISED - 1] == pytest.approx(up * step, rel=1e-4, abs=1e-9), limit["name"]
        assert row[LOWERED - 1] == pytest.approx(-down * step, rel=1e-4, abs=1e-9), limit["name"]
        checked += 1
    return checked


def test_day_menu_raised_and_lowered_steps_match_highs(tmp_path):
    # The day menu's optimum is degenerate: some group minimums cost more to raise than
    # they save when lowered, and the sheet says so in a note.
    source = tmp_path / "day_menu.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "day_menu.xlsx", source)
    doc, rows = _solve(source, tmp_path)
    uneven = [row for row in rows if row[RAISED - 1] is not None and row[LOWERED - 1] is not None
              and abs(row[RAISED - 1] + row[LOWERED - 1]) > 1e-9]
    assert uneven and all("degenerate" in (row[NOTE - 1] or "") for row in uneven)
    assert _check_steps_against_highs(tmp_path, source, rows, doc["limits"]) >= 5


def test_binding_limits_come_first_by_the_cost_of_a_step(tmp_path):
    source = tmp_path / "broiler_starter.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "broiler_starter.xlsx", source)
    doc, rows = _solve(source, tmp_path)
    binding = [row[BINDING - 1] == "yes" for row in rows]
    assert binding == sorted(binding, reverse=True) and any(binding) and not all(binding)
    worth = [max(abs(row[WORTH - 1]), abs(row[RAISED - 1] or 0), abs(row[LOWERED - 1] or 0))
             for row, bound in zip(rows, binding) if bound]
    assert worth == sorted(worth, reverse=True)
    # The cost of a step is the shadow price times the step, and JSON says the same.
    by_cell = {(limit["cell"], limit["side"]): limit for limit in doc["limits"]}
    for row in rows:
        limit = by_cell[(row[CELL - 1], row[4])]
        assert row[STEP - 1] == pytest.approx(limit["step"])
        assert row[WORTH - 1] == pytest.approx(limit["per_step"], abs=1e-12)
        assert limit["per_step"] == pytest.approx(limit["shadow_price"] * limit["step"])
    # Sodium, as the buyer reads it: a step of 0.01 % (the default for a % content).
    sodium = next(row for row in rows if row[2] == "Sodium" and row[4] == "min")
    assert sodium[WORDS - 1].startswith(f"{sodium[WORTH - 1]:+.4f} EUR/tonne per +0.01 % Sodium, holds from ")


# An invented three-ingredient blend with a degenerate optimum: 80 % A and 20 % C give
# exactly 10.4 % crude protein, so the minimum binds, but lowering it saves nothing (A
# is at its max) while raising it swaps A for C.
DEGENERATE = [
    ["Ingredient", "Cost (EUR/t)", "Min (%)", "Max (%)", "Use", "Crude protein (%)"],
    ["A", 100, None, 80, "yes", 10],
    ["B", 300, None, None, "yes", 20],
    ["C", 120, None, None, "yes", 12],
]
DEGENERATE_SPECS = [["Nutrient", "Min", "Max"], ["Crude protein", 10.4, None]]


def test_a_constructed_degenerate_blend_is_worded_and_checked(tmp_path):
    source = make_workbook(tmp_path, DEGENERATE, DEGENERATE_SPECS, name="degenerate.xlsx")
    doc, rows = _solve(source, tmp_path)
    protein = next(row for row in rows if row[2] == "Crude protein")
    assert protein[BINDING - 1] == "yes"
    # Hand calculation: a step of 0.01 % protein swaps 0.5 % of A (10 % protein, 100 EUR/t)
    # for C (12 %, 120 EUR/t), 0.10 EUR/t more (cheaper than C for B: 0.225); lowered, the
    # blend stays 80 % A and 20 % C (A at its max), no saving.
    assert protein[RAISED - 1] == pytest.approx(0.10)
    assert protein[LOWERED - 1] == pytest.approx(0.0, abs=1e-12)
    assert "degenerate" in protein[NOTE - 1]
    if protein[SHADOW - 1] == 0:
        assert protein[NOTE - 1].startswith("binding, no cost (degenerate)")
    assert _check_steps_against_highs(tmp_path, source, rows, doc["limits"]) == 1
    assert rows[0][2] == "Crude protein"  # the costliest step either way comes first

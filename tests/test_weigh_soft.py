"""The rules a mill can weigh beside soft specs (a Penalty on Specs).

With soft specs the LP and the integer program minimise the cost plus the penalties of
the specs they break. What the rules cost is then the rise of that sum: the integer
program is the LP with more restrictions, so its optimum can never be below the LP's (a
fact of optimisation), and a cost under the rules below the LP cost, with more specs
broken, would read as if the rules saved money. The LP optimum is checked against HiGHS
(scipy.optimize.linprog) on the same LP.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import openpyxl
import pytest

from blendkit.lp.build import build_lp
from blendkit.pipeline import formulate
from blendkit.read import read_workbook
from blendkit.write.json import formula_to_dict
from tests.reference import highs_form

SAMPLES = Path(__file__).resolve().parents[1] / "sample_workbooks"


def soft_broiler(tmp_path: Path) -> Path:
    """The broiler example with every spec soft (penalty 5 EUR per unit of violation per
    tonne), at most 6 ingredients, and a 1 kg scale step: the rules break more specs."""
    path = tmp_path / "soft.xlsx"
    shutil.copy(SAMPLES / "broiler_starter.xlsx", path)
    book = openpyxl.load_workbook(path)
    specs = book["Specs"]
    column = specs.max_column + 1
    specs.cell(1, column, "Penalty")
    for row in range(2, specs.max_row + 1):
        specs.cell(row, column, 5)
    book["Settings"].append(["Max ingredients", 6])
    book["Settings"].append(["Scale step", 1])
    book.save(path)
    return path


def test_what_the_rules_cost_counts_the_penalties_of_broken_soft_specs(tmp_path):
    blend = read_workbook(soft_broiler(tmp_path))
    formula = formulate(blend, check=False)
    assert formula.status == "optimal"
    record = formula.products[0].practical
    # The LP optimum (cost plus penalties), as HiGHS finds it (scipy.optimize.linprog).
    assert record.lp_cost + record.lp_penalty == pytest.approx(highs_form(build_lp(blend).form).objective, rel=1e-9)
    # The formula's own penalties: violation x penalty of each broken soft spec (arithmetic).
    broken = sum(limit.violation * limit.penalty for limit in formula.broken_limits)
    assert broken > 0 and record.penalty == pytest.approx(broken, rel=1e-9)
    assert record.cost == pytest.approx(formula.cost, rel=1e-12)
    # A restriction of the LP can only cost more (fact of optimisation).
    assert record.rise == pytest.approx(record.cost + record.penalty - record.lp_cost - record.lp_penalty)
    assert record.rise >= 0
    practical = formula_to_dict(formula)["practical"]
    assert practical["penalty"] == pytest.approx(record.penalty) and practical["lp_penalty"] == record.lp_penalty
    assert any("penalties" in line for line in record.lines())


def test_without_soft_specs_the_penalties_are_zero(tmp_path):
    path = tmp_path / "hard.xlsx"
    shutil.copy(SAMPLES / "broiler_starter.xlsx", path)
    book = openpyxl.load_workbook(path)
    book["Settings"].append(["Scale step", 1])
    book.save(path)
    formula = formulate(read_workbook(path), check=False)
    record = formula.products[0].practical
    assert record.lp_penalty == 0 and record.penalty == 0
    assert record.rise == pytest.approx(record.cost - record.lp_cost) and record.rise >= 0
    assert not any("penalties" in line for line in record.lines())

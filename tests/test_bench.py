"""Smoke tests of the benchmark: its LPs are well made and its report has the columns.

No timing assertions: speed is what the benchmark prints, not what tests check.
"""

from __future__ import annotations

import re
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.optimize import linprog

from blendkit import bench
from blendkit.engine import StandardForm

SEED = 7
SMALLEST = bench.DEFAULT_SIZES[0]  # (ingredients, nutrients)


def _args(lp):
    return lp.c, lp.A_ub, lp.b_ub, lp.A_eq, lp.b_eq, lp.bounds


def test_smallest_blend_has_the_right_shape_and_sums_to_100():
    n_ing, n_nut = SMALLEST
    lp = bench.make_blend(n_ing, n_nut, SEED)
    assert lp.shape == (n_ing, n_nut)
    assert lp.c.shape == (n_ing,)
    assert lp.A_ub.shape[1] == n_ing and lp.A_ub.shape[0] == lp.b_ub.shape[0] >= n_nut // 2
    np.testing.assert_array_equal(lp.A_eq, np.ones((1, n_ing)))
    np.testing.assert_array_equal(lp.b_eq, [100.0])
    assert len(lp.bounds) == n_ing
    # The mixture the specs were set around meets every limit.
    assert abs(lp.x0.sum() - 100) < 1e-9
    assert np.all(lp.A_ub @ lp.x0 <= lp.b_ub + 1e-9)
    for x, (lo, hi) in zip(lp.x0, lp.bounds):
        assert lo - 1e-12 <= x <= (np.inf if hi is None else hi) + 1e-12


def test_smallest_blend_is_feasible_per_highs():
    # Outside reference: scipy's linprog with HiGHS.
    for index in range(5):
        lp = bench.make_blend(*SMALLEST, SEED, index)
        result = linprog(*_args(lp), method="highs")
        assert result.status == 0, result.message
        assert abs(result.x.sum() - 100) < 1e-7


def test_blends_look_like_formulation_data():
    lp = bench.make_blend(60, 30, SEED)
    lower = np.array([lo for lo, _ in lp.bounds])
    upper = np.array([np.inf if hi is None else hi for _, hi in lp.bounds])
    assert np.any(lower > 0) and np.any((lower == upper) & (lower > 0)) and np.any(np.isinf(upper))
    assert 50 <= lp.prices.min() and lp.prices.max() <= 3000
    assert 0.2 < np.mean(lp.contents == 0) < 0.9  # sparse-ish: minerals carry few nutrients
    assert lp.contents.max() > 1000 and {"%", "MJ/kg", "mg/kg", "ppm"} <= set(lp.nutrient_units)


def test_generator_is_deterministic_and_the_sweep_changes_prices_only():
    a, b = bench.make_blend(*SMALLEST, SEED, 1), bench.make_blend(*SMALLEST, SEED, 1)
    np.testing.assert_array_equal(a.c, b.c)
    np.testing.assert_array_equal(a.A_ub, b.A_ub)
    assert not np.array_equal(a.c, bench.make_blend(*SMALLEST, SEED, 2).c)
    sweep = bench.price_sweep(a, 3, SEED)
    assert len(sweep) == 3
    for step in sweep:
        assert step.A_ub is a.A_ub and step.b_ub is a.b_ub and step.bounds is a.bounds
    assert not np.array_equal(sweep[-1].c, a.c)


def test_report_lines_carry_a_ratio():
    lps = [bench.make_blend(*SMALLEST, SEED, k) for k in range(2)]
    row = bench.measure("20x10", lps, repeat=1)
    assert row.lps == 2 and row.solves == 2 and row.mismatches == 0, row.first_mismatch
    lines = bench.measurement_lines([row])
    assert "ours/HiGHS" in lines[0]
    ratio = re.search(r"(\d+\.\d+)x", lines[2])
    assert lines[2].startswith("20x10") and ratio
    assert float(ratio.group(1)) == round(row.ours_seconds / row.highs_seconds, 2)


def test_netlib_is_skipped_with_a_reason_when_the_folder_is_missing(tmp_path):
    rows, notes = bench.run_netlib(tmp_path / "nowhere", repeat=1)
    assert rows == [] and notes and notes[0].startswith("NETLIB skipped")


def test_quick_run_prints_machine_table_and_netlib_line(tmp_path, capsys):
    bench.main(["--quick", "--sizes", "20x10", "--netlib", str(tmp_path / "nowhere")])
    out = capsys.readouterr().out
    assert out.startswith("machine: ")
    assert "numpy" in out and "highspy" in out
    assert re.search(r"^20x10 .*\d+\.\d\dx", out, re.M)
    assert re.search(r"^20x10 sweep, cold .*\d+\.\d\dx", out, re.M)
    assert re.search(r"^20x10 sweep, warm .*\d+\.\d\dx.*started warm \d+ of 3", out, re.M)
    assert "NETLIB skipped" in out


TINY_MPS = """NAME          TINY
ROWS
 N  COST
 L  LIM1
 G  LIM2
COLUMNS
    X1        COST         1.0   LIM1         1.0
    X1        LIM2         1.0
    X2        COST         2.0   LIM1         1.0
RHS
    RHS       LIM1         4.0   LIM2         1.0
ENDATA
"""


def test_netlib_row_from_a_stand_in_reader(tmp_path):
    # A stand-in for blendkit.engine.mps, so the NETLIB path is checked before and
    # independently of the real reader: min x1 + 2 x2, x1 + x2 <= 4, x1 >= 1; optimum 1.
    path = tmp_path / "tiny.mps"
    path.write_text(TINY_MPS)
    form = StandardForm(
        c=np.array([1.0, 2.0]),
        A=np.array([[1.0, 1.0], [1.0, 0.0]]),
        row_lower=np.array([-np.inf, 1.0]),
        row_upper=np.array([4.0, np.inf]),
        col_lower=np.zeros(2),
        col_upper=np.full(2, np.inf),
        n_ub=2,
    )
    reader = SimpleNamespace(read=lambda p: SimpleNamespace(form=form, objective_constant=0.0, name="TINY"))
    row = bench.solve_netlib(path, 1, reader)
    assert (row.name, row.rows, row.cols, row.status, row.highs_status) == ("TINY", 2, 2, "optimal", "optimal")
    assert row.objective == pytest.approx(1.0) and row.highs_objective == pytest.approx(1.0)
    assert row.agrees == ""
    lines = bench.netlib_lines([row])
    assert lines[2].startswith("TINY") and re.search(r"\d+\.\d\dx", lines[2]) and lines[2].endswith("yes")

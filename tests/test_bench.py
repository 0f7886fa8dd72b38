"""Tests of the benchmark: its LPs are well made (feasible, or infeasible, per HiGHS), the
answers it times agree with HiGHS and a wrong one is counted, its report has the columns,
and without highspy it says what to install.

No timing assertions: speed is what the benchmark prints, not what tests check.
"""

from __future__ import annotations

import re
import subprocess
import sys
from dataclasses import replace
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.optimize import linprog

from blendkit import bench
from blendkit.bench.highs import MISSING_HIGHSPY
from blendkit.engine import StandardForm, solve
from blendkit.lp.build import build_lp
from tests.reference import highs_form

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


@pytest.mark.parametrize("size", bench.DEFAULT_SIZES)
def test_blends_of_every_default_size_are_feasible_per_highs_and_no_dearer_than_their_mixture(size):
    # Outside reference: scipy's linprog with HiGHS. The mixture x0 the specs were set
    # around is feasible, so the least cost can be no higher than its cost.
    lp = bench.make_blend(*size, SEED)
    result = linprog(*_args(lp), method="highs")
    assert result.status == 0, result.message
    assert result.fun <= lp.c @ lp.x0 + 1e-9 * max(1.0, abs(lp.c @ lp.x0))


def test_generator_is_deterministic_and_the_sweep_changes_prices_only():
    a, b = bench.make_blend(*SMALLEST, SEED, 1), bench.make_blend(*SMALLEST, SEED, 1)
    np.testing.assert_array_equal(a.c, b.c)
    np.testing.assert_array_equal(a.A_ub, b.A_ub)
    assert not np.array_equal(a.c, bench.make_blend(*SMALLEST, SEED, 2).c)
    sweep = bench.price_sweep(a, 3, SEED)
    assert len(sweep) == 3
    before = a
    for step in sweep:
        for same in ("A_ub", "b_ub", "A_eq", "b_eq", "bounds", "contents", "x0", "nutrient_units"):
            assert getattr(step, same) is getattr(a, same), same
        np.testing.assert_array_equal(step.c, step.prices / 100)  # costs follow the prices
        assert not np.array_equal(step.prices, before.prices)  # every step moves some price
        before = step
    np.testing.assert_array_equal(a.prices, b.prices)  # the sweep leaves its start alone


def test_timed_solves_agree_with_highs_on_status_and_objective():
    # Outside reference: scipy's linprog with HiGHS, on the LPs the benchmark times, cold
    # and along a price sweep started warm from the previous basis (as `measure` does).
    lps = [bench.make_blend(*SMALLEST, SEED, k) for k in range(3)]
    sweep = bench.price_sweep(lps[0], 3, SEED)
    start = basis = solve(*_args(lps[0])).basis
    for lp, warm in [*((lp, False) for lp in lps), *((lp, True) for lp in sweep)]:
        ours = solve(*_args(lp), basis=basis if warm else None)
        ref = linprog(*_args(lp), method="highs")
        assert (ours.status, ref.status) == ("optimal", 0), lp.name
        assert ours.objective == pytest.approx(ref.fun, rel=bench.OBJECTIVE_RTOL), lp.name
        assert ours.warm_start == warm, lp.name
        basis = ours.basis if warm else basis
    assert bench.measure("20x10", lps, repeat=1).mismatches == 0
    assert bench.measure("20x10 sweep, warm", sweep, repeat=1, warm_from=start).mismatches == 0


def test_the_limit_sweep_moves_limits_only_and_keeps_the_mixture_feasible():
    # Outside reference: scipy's linprog with HiGHS on every step (feasible, as the
    # mixture x0 meets each), and the re-solve rows agree with it.
    from blendkit.bench.resolves import measure_resolves

    lp = bench.make_blend(*SMALLEST, SEED)
    steps = bench.bound_sweep(lp, 3, SEED)
    before = lp
    for step in steps:
        assert step.c is lp.c and step.A_ub is lp.A_ub
        upper = np.array([np.inf if hi is None else hi for _, hi in step.bounds])
        assert np.all(lp.x0 <= upper + 1e-12) and np.all(lp.A_ub @ lp.x0 <= step.b_ub + 1e-9)
        assert step.bounds != before.bounds or not np.array_equal(step.b_ub, before.b_ub)
        assert linprog(*_args(step), method="highs").status == 0, step.name
        before = step
    assert measure_resolves("limits", lp, steps, "limits", repeat=1).mismatches == 0
    assert measure_resolves("prices", lp, bench.price_sweep(lp, 3, SEED), "costs", repeat=1).mismatches == 0


def test_a_wrong_answer_is_counted_as_a_mismatch_and_named(monkeypatch):
    # The mismatch column must catch an engine that goes wrong: make ours 1 % dearer.
    def dearer(*args, **kwargs):
        result = solve(*args, **kwargs)
        return replace(result, objective=result.objective * 1.01)

    monkeypatch.setattr("blendkit.bench.timing.solve", dearer)
    lps = [bench.make_blend(*SMALLEST, SEED, k) for k in range(2)]
    row = bench.measure("20x10", lps, repeat=1)
    assert row.mismatches == 2
    assert row.first_mismatch.startswith(f"{lps[0].name}: objective ")
    lines = bench.measurement_lines([row])
    assert re.search(r"\s2  optimal 2$", lines[2]) and lines[3].startswith("    first mismatch: ")


def test_agreement_compares_status_then_objective_within_the_tolerance():
    assert bench.agreement("optimal", 100.0, "optimal", 100.0 * (1 + bench.OBJECTIVE_RTOL / 2)) == ""
    assert bench.agreement("optimal", 100.0, "optimal", 100.0 * (1 + 2 * bench.OBJECTIVE_RTOL)).startswith("objective")
    assert bench.agreement("infeasible", None, "optimal", 5.0) == "status infeasible vs HiGHS optimal"
    assert bench.agreement("infeasible", None, "infeasible", None) == ""


def test_infeasible_blends_are_infeasible_per_highs():
    # Outside reference: scipy's linprog with HiGHS (tests/reference.py) on the LP our
    # builder makes of the diagnosis family's blend, which must have no feasible mix.
    blend = bench.infeasible_blend(*SMALLEST, SEED)
    assert highs_form(build_lp(blend).form).status == "infeasible"


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
    assert re.search(r"^20x10 sweep, re-solve .*\d+\.\d\dx\s.*\s0  optimal 3; re-solved from the basis held \d of 3",
                     out, re.M)
    assert re.search(r"^20x10 limits, re-solve .*\d+\.\d\dx\s.*\s0  optimal 3; re-solved from the basis held \d of 3",
                     out, re.M)
    assert "NETLIB skipped" in out


def test_without_highspy_the_benchmark_says_to_install_it_and_exits_2(tmp_path, monkeypatch, capsys):
    monkeypatch.setitem(sys.modules, "highspy", None)  # what `import highspy` meets when it is not installed
    with pytest.raises(SystemExit) as exit:
        bench.main(["--quick", "--sizes", "20x10", "--netlib", str(tmp_path / "nowhere")])
    assert exit.value.code == 2
    captured = capsys.readouterr()
    assert captured.out == ""  # nothing measured before the message
    assert captured.err.count("\n") == 1 and "highspy" in captured.err and "pip install highspy" in captured.err


def test_the_package_imports_without_highspy_and_python_m_exits_2():
    # A fresh interpreter: importing blendkit.bench and making a blend must not touch
    # highspy; `python -m blendkit.bench` then ends with the one-line message.
    script = (
        "import runpy, sys\n"
        "import blendkit.bench\n"
        "assert 'highspy' not in sys.modules\n"
        "sys.modules['highspy'] = None\n"
        "blendkit.bench.make_blend(20, 10, 1)\n"
        "sys.argv = ['blendkit.bench', '--quick', '--sizes', '20x10']\n"
        "runpy.run_module('blendkit.bench', run_name='__main__')\n"
    )
    done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=120)
    assert done.returncode == 2, done.stderr
    assert done.stdout == ""
    assert done.stderr.strip().splitlines() == [MISSING_HIGHSPY]


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


def test_the_generated_workbook_is_feasible_and_solves_to_the_highs_optimum(tmp_path):
    # Outside reference: HiGHS on the LP written from the workbook's cells alone
    # (tests.test_examples.formulate_with_highs).
    from blendkit.bench.books import books_workbook
    from blendkit.pipeline import solve_workbook
    from tests.test_examples import formulate_with_highs

    path = books_workbook(tmp_path / "book.xlsx", 80, 24)
    reference = formulate_with_highs(path)
    assert reference.result.status == 0, reference.result.message
    formula = solve_workbook(path, tmp_path / "out.xlsx", check=False).formula
    assert formula.status == "optimal"
    assert formula.cost == pytest.approx(reference.result.fun, rel=1e-7)


def test_plant_lp_has_the_plant_shape_and_agrees_with_highs_three_ways():
    # Outside references: scipy's linprog with HiGHS and highspy called directly (the
    # benchmark's own HighsLp), on a small plant of the family; ours must match both.
    from blendkit.bench.highs import highs_answer, highs_lp, run_highs
    from blendkit.bench.plant import make_plant

    products, n_ing, n_nut = 4, 15, 8
    plant = make_plant(products, n_ing, n_nut, SEED)
    assert plant.c.shape == (products * n_ing,)
    assert plant.A_ub.shape == (products * 2 * n_nut + n_ing, products * n_ing)
    assert plant.A_eq.shape == (products, products * n_ing)
    ref = linprog(*_args(plant), method="highs")
    assert ref.status == 0  # feasible by construction, per HiGHS
    status, objective = highs_answer(run_highs(highs_lp(*_args(plant))))
    assert status == "optimal" and objective == pytest.approx(ref.fun, rel=1e-9)
    ours = solve(*_args(plant))
    assert ours.status == "optimal"
    assert ours.objective == pytest.approx(ref.fun, rel=bench.OBJECTIVE_RTOL)
    # Some stock binds: the stock rows (the last n_ing) carry a non-zero HiGHS marginal.
    assert np.any(np.abs(ref.ineqlin.marginals[-n_ing:]) > 1e-9)


def test_warm_highspy_timing_resolves_the_sweep_to_linprogs_optima():
    # Outside reference: linprog with HiGHS, cold, on each step of a price sweep that the
    # benchmark's warm highspy re-solves from the previous basis.
    from blendkit.bench.timing import _WarmHighs

    lp = bench.make_blend(*SMALLEST, SEED)
    sweep = bench.price_sweep(lp, 3, SEED)
    warm = _WarmHighs(lp)
    for step in sweep:
        warm.time(step.c, repeat=2)
        ref = linprog(*_args(step), method="highs")
        assert warm.h.getInfo().objective_function_value == pytest.approx(ref.fun, rel=1e-9), step.name


def test_scaling_family_agrees_with_highs_on_its_smallest_sizes():
    # Outside reference: scipy's linprog with HiGHS, on the smallest LP of each part of the
    # scaling family: a blend, a plant, and the batch API's formula of a blend (cost per tonne).
    from blendkit.batch import solve_lps
    from blendkit.bench import scaling

    lp = bench.make_blend(scaling.INGREDIENT_STEPS[0], scaling.AT_NUTRIENTS, scaling.SEED)
    ref = linprog(*_args(lp), method="highs")
    ours = solve(*_args(lp))
    assert ours.status == "optimal" and ref.status == 0
    assert abs(ours.objective - ref.fun) <= 1e-7 * max(1.0, abs(ref.fun))

    plant = scaling.time_plant(scaling.PLANT_PRODUCTS[0])
    assert plant.status == "optimal" and plant.agrees

    instance = bench.make_blend(*scaling.THROUGHPUT_SHAPE, scaling.SEED)
    formula = solve_lps([scaling.feasible_blend(instance)], jobs=1, check=False)[0]
    ref = linprog(*_args(instance), method="highs")
    assert formula.status == "optimal" and ref.status == 0
    assert abs(formula.cost - ref.fun) <= 1e-6 * max(1.0, abs(ref.fun))


def test_growth_exponent_recovers_a_power_law():
    # Outside reference: arithmetic; time = 3 * size^1.7 has exponent 1.7 exactly.
    from blendkit.bench.scaling import growth_exponent

    sizes = [25, 50, 100, 200, 400]
    assert abs(growth_exponent(sizes, [3 * s**1.7 for s in sizes]) - 1.7) < 1e-9


def test_the_plant_workbook_is_the_plant_lp_and_solves_to_the_highs_optimum(tmp_path):
    # Outside references: HiGHS on the LP written from the workbook's cells alone
    # (tests.test_examples.formulate_with_highs), and linprog(method="highs") on the plant
    # family's own LP of the same numbers (total cost = the LP's objective, amounts in t).
    from blendkit.bench.plant import make_plant, plant_workbook
    from blendkit.pipeline import solve_workbook
    from tests.test_examples import formulate_with_highs

    path = plant_workbook(tmp_path / "plant.xlsx", 4, 15, 8, SEED)
    reference = formulate_with_highs(path)
    assert reference.result.status == 0, reference.result.message
    family = linprog(*_args(make_plant(4, 15, 8, SEED)), method="highs")
    assert reference.result.fun == pytest.approx(family.fun, rel=1e-9)
    formula = solve_workbook(path, tmp_path / "out.xlsx", check=False).formula
    assert formula.status == "optimal" and len(formula.products) == 4
    assert formula.cost == pytest.approx(reference.result.fun, rel=1e-7)

"""The cross-check's own HiGHS solve (`blendkit.lp.highs`, through highspy) on small LPs and
MIPs, each compared with scipy's `linprog(method="highs")` or `milp` on the same problem
(the outside reference, and what the cross-check called before it went through highspy):
the same status, the same optimum, nothing printed, and the refusal of what HiGHS would
misread."""

from __future__ import annotations

import os
import signal
import subprocess
import sys

import numpy as np
import pytest
from scipy.optimize import Bounds, LinearConstraint, linprog, milp

from blendkit.engine import solve_form, solve_mip_form
from blendkit.engine.standard_form import StandardForm, to_standard_form
from blendkit.lp.cross_check import MIP_SOLVER, SOLVER, combined, cross_check, cross_check_mip, warning
from blendkit.lp.highs import solve_with_highs

# scipy's linprog status codes in the engine's words (scipy's documentation of linprog).
SCIPY_STATUS = {0: "optimal", 1: "iteration_limit", 2: "infeasible", 3: "unbounded", 4: "numerical_trouble"}

# linprog-style LPs: (c, A_ub, b_ub, A_eq, b_eq, bounds).
LPS = {
    "optimal": ([2.0, 3.0, 1.0], [[-1.0, -1.0, 0.0], [0.0, -1.0, -1.0]], [-2.0, -3.0], [[1.0, 1.0, 1.0]], [4.0],
                [(0, 3), (0, None), (0.5, 2)]),
    "infeasible": ([1.0, 1.0], [[1.0, 1.0]], [1.0], [[1.0, -1.0]], [3.0], [(0, None), (0, None)]),
    "unbounded": ([-1.0, 1.0], [[-1.0, 1.0]], [1.0], None, None, [(0, None), (0, None)]),
    "free columns": ([1.0, -1.0], [[1.0, 1.0], [-1.0, 1.0]], [4.0, 2.0], None, None, [(None, None), (-1, 5)]),
}


@pytest.mark.parametrize("name", sorted(LPS))
def test_the_cross_check_solve_matches_scipy_linprog(name, capfd):
    c, A_ub, b_ub, A_eq, b_eq, bounds = LPS[name]
    form = to_standard_form(c, A_ub, b_ub, A_eq, b_eq, bounds)
    ours = solve_form(form)
    check = cross_check(form, ours)
    # Outside reference: scipy's linprog with HiGHS on the same arguments.
    reference = linprog(c, A_ub=A_ub, b_ub=b_ub, A_eq=A_eq, b_eq=b_eq, bounds=bounds, method="highs")
    assert check.solver == SOLVER == "HiGHS (highspy)"
    assert check.status == SCIPY_STATUS[reference.status] == name.replace("free columns", "optimal")
    assert check.agrees and warning(check, ours.objective) is None
    if reference.status == 0:
        assert check.cost == pytest.approx(reference.fun, rel=1e-9, abs=1e-12)
        assert check.difference == pytest.approx(ours.objective - check.cost, abs=1e-12)
    else:
        assert check.cost is None and check.difference is None
    assert capfd.readouterr().out == ""  # HiGHS's banner and log stay off stdout


def test_a_sparse_lp_gives_the_dense_ones_answer():
    import scipy.sparse as sp

    c, A_ub, b_ub, A_eq, b_eq, bounds = LPS["optimal"]
    dense = to_standard_form(c, A_ub, b_ub, A_eq, b_eq, bounds)
    sparse = to_standard_form(c, sp.csr_matrix(A_ub), b_ub, sp.csr_matrix(A_eq), b_eq, bounds)
    # Outside reference: scipy's linprog with HiGHS.
    expected = linprog(c, A_ub=A_ub, b_ub=b_ub, A_eq=A_eq, b_eq=b_eq, bounds=bounds, method="highs").fun
    for form in (dense, sparse):
        answer = solve_with_highs(form.c, form.A, form.row_lower, form.row_upper, form.col_lower, form.col_upper)
        assert answer.status == "optimal" and answer.cost == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize("where", ["cost", "coefficient"])
def test_an_lp_with_a_value_that_is_not_finite_is_refused(where):
    # HiGHS itself would take a NaN coefficient or cost and solve another LP (tried with
    # highspy 1.16), and scipy's linprog refuses both with a ValueError (its input checks):
    # the cross-check says "refused" and does not agree.
    c = np.array([1.0, 1.0])
    A = np.array([[1.0, 1.0]])
    if where == "cost":
        c[0] = np.nan
    else:
        A[0, 0] = np.nan
    with pytest.raises(ValueError):
        linprog(c, A_ub=-A, b_ub=[-1.0], method="highs")
    form = StandardForm(c=c, A=A, row_lower=np.array([1.0]), row_upper=np.array([np.inf]),
                        col_lower=np.zeros(2), col_upper=np.full(2, np.inf))
    ours = solve_form(to_standard_form([1.0, 1.0], -np.ones((1, 2)), [-1.0]))
    check = cross_check(form, ours)
    assert check.status == f"refused: a {where} that is not a finite number"
    assert not check.agrees and check.cost is None
    assert "ends with status refused" in warning(check, ours.objective)


def _mip():
    """A small blend MIP: 4 ingredients, sum 1, a nutrient minimum, ingredient 2 used at 0
    or from 0.3 up (semi-continuous), ingredient 3 an integer count (0, 1)."""
    c = np.array([3.0, 2.0, 1.0, 0.5])
    A = np.array([[1.0, 1.0, 1.0, 1.0], [1.0, 2.0, 4.0, 0.5]])
    form = StandardForm(c=c, A=A, row_lower=np.array([1.0, 2.2]), row_upper=np.array([1.0, np.inf]),
                        col_lower=np.zeros(4), col_upper=np.array([1.0, 1.0, 1.0, 1.0]))
    return form, np.array([0, 0, 0, 1]), np.array([0.0, 0.0, 0.3, 0.0])


def test_the_mip_cross_check_matches_scipy_milp(capfd):
    form, integrality, semicontinuous = _mip()
    ours = solve_mip_form(form, integrality, semicontinuous, time_limit=10.0)
    check = cross_check_mip(form, integrality, semicontinuous, ours, time_limit=10.0)
    # Outside reference: scipy's milp (HiGHS), semi-continuous as its integrality code 2.
    reference = milp(form.c, constraints=LinearConstraint(form.A, form.row_lower, form.row_upper),
                     bounds=Bounds([0, 0, 0.3, 0], form.col_upper), integrality=[0, 0, 2, 1])
    assert reference.status == 0
    assert check.solver == MIP_SOLVER == "HiGHS MIP (highspy)"
    assert check.status == "optimal" and check.agrees
    assert check.cost == pytest.approx(reference.fun, rel=1e-9)
    # The semi-continuous rule binds: without it the LP relaxation is cheaper.
    relaxed = linprog(form.c, A_ub=-form.A[1:], b_ub=[-2.2], A_eq=form.A[:1], b_eq=[1.0], bounds=(0, 1), method="highs")
    assert relaxed.fun < reference.fun - 1e-6
    assert capfd.readouterr().out == ""


def test_an_infeasible_mip_agrees_on_the_status():
    form, integrality, semicontinuous = _mip()
    form = StandardForm(c=form.c, A=form.A, row_lower=np.array([1.0, 4.5]), row_upper=np.array([1.0, np.inf]),
                        col_lower=form.col_lower, col_upper=form.col_upper)
    ours = solve_mip_form(form, integrality, semicontinuous, time_limit=10.0)
    check = cross_check_mip(form, integrality, semicontinuous, ours, time_limit=10.0)
    # Outside reference: scipy's milp on the same problem (status 2: infeasible).
    reference = milp(form.c, constraints=LinearConstraint(form.A, form.row_lower, form.row_upper),
                     bounds=Bounds([0, 0, 0.3, 0], form.col_upper), integrality=[0, 0, 2, 1])
    assert reference.status == 2
    assert ours.status == check.status == "infeasible" and check.agrees and check.cost is None



def test_a_mip_search_stopped_before_any_solution_keeps_highs_cost_and_parts_add_up():
    # Our search stopped before its root (node_limit=0 stands in for a Time limit that ran
    # out that early, as a tiny one does on a loaded machine): no formula, while HiGHS has
    # the optimum. The check keeps HiGHS's cost, so a run of two such parts adds up; it
    # once held an "optimal" check with no cost, and adding the parts' costs raised TypeError.
    form, integrality, semicontinuous = _mip()
    ours = solve_mip_form(form, integrality, semicontinuous, node_limit=0)
    assert ours.status == "time_limit" and ours.objective is None and ours.nodes == 0
    check = cross_check_mip(form, integrality, semicontinuous, ours, time_limit=10.0)
    # Outside reference: scipy's milp on the same problem (as in the test above).
    reference = milp(form.c, constraints=LinearConstraint(form.A, form.row_lower, form.row_upper),
                     bounds=Bounds([0, 0, 0.3, 0], form.col_upper), integrality=[0, 0, 2, 1])
    assert reference.status == 0
    assert check.status == "optimal" and check.cost == pytest.approx(reference.fun, rel=1e-9)
    # Out of time before a formula is no disagreement (no "please report it" note).
    assert check.difference is None and check.agrees and warning(check, ours.objective) is None
    both = combined([check, check])
    assert both.status == "optimal" and both.cost == pytest.approx(2 * reference.fun, rel=1e-9)
    assert both.difference is None and both.agrees
    assert both.solver == check.solver == "HiGHS MIP (highspy)"  # the parts' solver, not the LP one


def test_a_mip_search_that_failed_without_a_formula_still_disagrees():
    # Reference: scipy's milp finds the optimum, so a search that ended for another reason
    # than time with no formula is a disagreement to report.
    from dataclasses import replace

    form, integrality, semicontinuous = _mip()
    ours = replace(solve_mip_form(form, integrality, semicontinuous, node_limit=0), status="numerical_trouble")
    check = cross_check_mip(form, integrality, semicontinuous, ours, time_limit=10.0)
    reference = milp(form.c, constraints=LinearConstraint(form.A, form.row_lower, form.row_upper),
                     bounds=Bounds([0, 0, 0.3, 0], form.col_upper), integrality=[0, 0, 2, 1])
    assert reference.status == 0 and check.cost == pytest.approx(reference.fun, rel=1e-9)
    assert not check.agrees and "ends with status optimal" in warning(check, ours.objective)


def test_a_mip_cross_check_in_a_forked_worker_ends_after_one_in_the_parent():
    # HiGHS's worker threads do not survive a fork: without blendkit.lp.highs stopping them
    # before it, a forked worker's MIP waited forever for them (as `--jobs 2` after a run in
    # this process did). A fresh interpreter runs it, so a regression fails by the timeout
    # instead of hanging the suite; each answer is checked against scipy's milp (HiGHS).
    script = (
        "import numpy as np\n"
        "from concurrent.futures import ProcessPoolExecutor\n"
        "from scipy.optimize import Bounds, LinearConstraint, milp\n"
        "from blendkit.lp.highs import solve_with_highs\n"
        "rng = np.random.default_rng(1)\n"
        "A, c = rng.uniform(0, 1, (12, 30)), rng.uniform(1, 2, 30)\n"
        "def mip(_=None):\n"
        "    answer = solve_with_highs(c, A, np.full(12, 3.0), np.full(12, np.inf), np.zeros(30), np.full(30, 10.0),\n"
        "                              integrality=np.ones(30, dtype=int), time_limit=60)\n"
        "    return answer.status, answer.cost\n"
        "first = mip()\n"
        "with ProcessPoolExecutor(2) as pool:\n"
        "    answers = list(pool.map(mip, range(2)))\n"
        "reference = milp(c, constraints=LinearConstraint(A, 3.0, np.inf), bounds=Bounds(0, 10), integrality=1)\n"
        "assert reference.status == 0\n"
        "for status, cost in [first, *answers]:\n"
        "    assert status == 'optimal' and abs(cost - reference.fun) <= 1e-6 * max(1, abs(reference.fun)), (status, cost)\n"
        "print('ended')\n"
    )
    child = subprocess.Popen([sys.executable, "-c", script], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                             text=True, start_new_session=True)
    try:
        out, err = child.communicate(timeout=300)
    except subprocess.TimeoutExpired:
        os.killpg(child.pid, signal.SIGKILL)  # the child and its hung workers
        child.communicate()
        pytest.fail("a forked worker's HiGHS MIP never ended")
    assert child.returncode == 0, err
    assert out.strip() == "ended"


def _plant_form(seed: int):
    from blendkit.bench.plant import make_plant

    plant = make_plant(5, 60, 30, seed)
    return plant, to_standard_form(plant.c, plant.A_ub, plant.b_ub, plant.A_eq, plant.b_eq, plant.bounds)


@pytest.mark.parametrize("start", ["ours", "slack", "other costs"])
def test_highs_started_from_a_basis_still_finds_the_optimum(start):
    # The cross-check starts HiGHS from our optimal basis. From a basis that is not optimal
    # (all slacks; the optimum of other costs, feasible but not optimal here) HiGHS must
    # still reach the optimum, so a wrong basis of ours would show as a cost difference.
    # Outside reference: scipy's linprog(method="highs") solving from scratch.
    from blendkit.engine.result import Basis

    plant, form = _plant_form(11)
    m, n = form.shape
    if start == "ours":
        basis = solve_form(form).basis
    elif start == "slack":
        basis = Basis(head=n + np.arange(m), at_upper=np.zeros(n + m, dtype=bool), shape=(m, n))
    else:
        other = StandardForm(form.c[::-1].copy(), form.A, form.row_lower, form.row_upper, form.col_lower,
                             form.col_upper, form.n_ub, form.from_linprog)
        basis = solve_form(other).basis
    expected = linprog(plant.c, plant.A_ub, plant.b_ub, plant.A_eq, plant.b_eq, plant.bounds, method="highs").fun
    answer = solve_with_highs(form.c, form.A, form.row_lower, form.row_upper, form.col_lower, form.col_upper,
                              basis=basis)
    assert answer.status == "optimal" and answer.cost == pytest.approx(expected, rel=1e-9)


def test_the_cross_check_of_a_wrong_optimum_disagrees():
    # Our result swapped for the optimum of other costs (its basis and cost): HiGHS, started
    # from that basis, moves on to the true optimum and the check reports the difference.
    plant, form = _plant_form(12)
    other = StandardForm(form.c[::-1].copy(), form.A, form.row_lower, form.row_upper, form.col_lower,
                         form.col_upper, form.n_ub, form.from_linprog)
    wrong = solve_form(other)
    from dataclasses import replace

    wrong = replace(wrong, objective=float(form.c @ wrong.x))
    check = cross_check(form, wrong)
    expected = linprog(plant.c, plant.A_ub, plant.b_ub, plant.A_eq, plant.b_eq, plant.bounds, method="highs").fun
    assert check.cost == pytest.approx(expected, rel=1e-9)  # outside reference: linprog
    assert not check.agrees and warning(check, wrong.objective) is not None

"""Cost perturbation of the dual simplex (`engine.perturbation`): the logicals of ranged rows
are perturbed too, and the answer is still the LP's own, against linprog(method="highs")."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.optimize import linprog

from blendkit.bench.plant import TOTAL, make_plant, plant_data
from blendkit.engine import dual, solve_form
from blendkit.engine.simplex_state import SimplexState
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.perturbation import perturbed_costs
from blendkit.engine.tolerances import PERTURBATION_BASE, Tolerances


def _ranged_plant(products: int, seed: int) -> StandardForm:
    """The bench plant of `make_plant` with each spec's min and max as one ranged row, as
    the workbook path builds it."""
    d = plant_data(products, 40, 20, seed)
    n = d.prices.size
    A = sp.vstack([
        sp.block_diag([sp.csr_matrix(d.contents / TOTAL)] * products),
        sp.hstack([sp.identity(n) * (a / TOTAL) for a in d.amounts]),
        sp.kron(sp.identity(products), np.ones((1, n))),
    ], format="csr")
    return StandardForm(
        c=np.concatenate([d.prices * a / TOTAL for a in d.amounts]), A=A,
        row_lower=np.concatenate([*d.minimums, np.full(n, -np.inf), np.full(products, TOTAL)]),
        row_upper=np.concatenate([*d.maximums, d.stock, np.full(products, TOTAL)]),
        col_lower=np.zeros(products * n), col_upper=np.tile(d.upper, products))


def test_every_nonbasic_cost_moves_the_way_that_keeps_its_sign():
    # Fact of the method (common practice): a perturbation that keeps the basis dual
    # feasible raises the cost of a variable at its lower bound and lowers it at its upper
    # bound; basic and fixed variables keep theirs. Checked at the optimal basis of a
    # small ranged plant, where binding rows' logicals sit at either end of their range.
    form = _ranged_plant(3, 4)
    basis = solve_form(form, scale=False).basis
    state = SimplexState(form, Tolerances(), 1000)
    state.start_from(basis.head, basis.at_upper)
    logical_nonbasic = ~state.basic[state.n : state.n + state.m]
    assert np.any(logical_nonbasic & state.at_upper[state.n : state.n + state.m])
    assert np.any(logical_nonbasic & ~state.at_upper[state.n : state.n + state.m])
    cost = np.concatenate([form.c, np.zeros(state.m)])
    out = perturbed_costs(state, cost)
    moved = out - cost
    basic = state.basic[: state.n + state.m]
    assert np.all(moved[basic] == 0.0)
    rise, fall = state.mobility()
    up, down = (rise > 0)[: moved.size], (fall > 0)[: moved.size]
    assert np.all(moved[up] > 0) and np.all(moved[down] < 0)
    size = np.abs(moved[up | down])
    base = PERTURBATION_BASE * (1 + np.abs(cost[up | down]))
    assert np.all(size >= base) and np.all(size <= 2 * base)


@pytest.mark.parametrize("products, seed", [(12, 1), (20, 20240611)])
def test_ranged_plants_perturbed_end_on_the_true_optimum(monkeypatch, products, seed):
    # Reference: linprog(method="highs") on the same plant with split min and max rows
    # (`make_plant`). The run must have perturbed its costs, logicals included, and still
    # end on the true costs' optimum, inside every row range.
    calls = []
    original = dual.perturbed_costs
    monkeypatch.setattr(dual, "perturbed_costs", lambda state, cost: calls.append(1) or original(state, cost))
    monkeypatch.setattr(dual, "PERTURB_AFTER", 5)
    form = _ranged_plant(products, seed)
    result = solve_form(form)
    split = make_plant(products, 40, 20, seed)
    ref = linprog(split.c, split.A_ub, split.b_ub, split.A_eq, split.b_eq, split.bounds, method="highs")
    assert calls, "the run was meant to perturb"
    assert result.status == "optimal" and ref.status == 0
    assert abs(result.objective - ref.fun) <= 1e-7 * max(1.0, abs(ref.fun))
    activity = form.A @ result.x
    assert np.all(activity >= form.row_lower - 1e-6) and np.all(activity <= form.row_upper + 1e-6)

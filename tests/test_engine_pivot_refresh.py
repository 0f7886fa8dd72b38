"""Pivots that disagree: when the pivot row and the entering column give different pivot
elements, an iteration loop refactorises and tries again, at most PIVOT_REFRESH_LIMIT
times in a row; one more and the run ends as "numerical_trouble", which its callers
handle as any numerical trouble (the dual simplex hands over to the two-phase method, a
re-solve solves from scratch, the two-phase method reports the status).

The disagreement is forced by replacing `pivots_disagree` in both iteration loops. A
replacement that answers True for ever must leave `solve` ending, with the status
"numerical_trouble" (the public behaviour: `solve` reports the trouble it cannot get
past); each replacement also counts its calls and raises after CALLS_MAX of them, so that
a loop that never ends fails the test rather than hanging it. A replacement that answers
True PIVOT_REFRESH_LIMIT times in a row before each real check must still reach the
optimum HiGHS finds (scipy.optimize.linprog(method="highs"), the outside reference).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import linprog

from blendkit.bench.blends import bound_sweep, make_blend
from blendkit.engine import dual, primal, solve
from blendkit.engine.resolve import Resolver
from blendkit.engine.simplex_state import pivots_disagree
from blendkit.engine.tolerances import PIVOT_REFRESH_LIMIT

CALLS_MAX = 10_000  # far more checks than these small solves make; more means a loop
OBJECTIVE_RTOL = 1e-9  # optima equal to HiGHS's, relative (as in tests/test_resolve.py)


class _Disagreeing:
    """A stand-in for `pivots_disagree`: True `in_a_row` times, then the real check, and so
    on (None: True always); raises after CALLS_MAX calls."""

    def __init__(self, in_a_row: int | None):
        self.in_a_row = in_a_row
        self.calls = 0

    def __call__(self, row_entry: float, pivot: float) -> bool:
        self.calls += 1
        if self.calls > CALLS_MAX:
            raise AssertionError("the iteration loop keeps refactorising: no limit on disagreements")
        if self.in_a_row is None or self.calls % (self.in_a_row + 1):
            return True
        return pivots_disagree(row_entry, pivot)


@pytest.fixture
def blend():
    return make_blend(20, 10, 20240611, 0)


def _args(instance):
    return dict(A_ub=instance.A_ub, b_ub=instance.b_ub, A_eq=instance.A_eq, b_eq=instance.b_eq,
                bounds=instance.bounds)


def _move_limits(model: Resolver, step) -> None:
    """Tell the resolver the limits of a step of `bound_sweep` (None: no upper bound)."""
    lower = [lo for lo, _ in step.bounds]
    upper = [np.inf if hi is None else hi for _, hi in step.bounds]
    model.change_col_bounds(lower, upper)
    model.change_rhs(b_ub=step.b_ub)


def _force(monkeypatch, fake: _Disagreeing) -> None:
    monkeypatch.setattr(dual, "pivots_disagree", fake)
    monkeypatch.setattr(primal, "pivots_disagree", fake)


@pytest.mark.parametrize("algorithm", ["auto", "primal"])
def test_pivots_that_always_disagree_end_in_numerical_trouble(monkeypatch, blend, algorithm):
    fake = _Disagreeing(None)
    _force(monkeypatch, fake)
    result = solve(blend.c, **_args(blend), algorithm=algorithm)
    assert fake.calls > 0  # the loops did meet a pivot to check
    assert result.status == "numerical_trouble", result.message


def test_a_resolve_whose_pivots_always_disagree_ends_in_numerical_trouble(monkeypatch, blend):
    model = Resolver(blend.c, **_args(blend))
    assert model.solve().status == "optimal"
    fake = _Disagreeing(None)
    _force(monkeypatch, fake)
    statuses = []
    for step in bound_sweep(blend, 8, 20240611):
        _move_limits(model, step)
        before = fake.calls
        result = model.solve()  # the dual re-solve gives up, and so does the solve from scratch
        if fake.calls == before:  # the basis held stayed optimal: no pivot to check
            assert result.status == "optimal"
            assert result.objective == pytest.approx(linprog(step.c, **_args(step), method="highs").fun,
                                                     rel=OBJECTIVE_RTOL)  # the outside reference
        else:
            assert result.status == "numerical_trouble", result.message
        statuses.append(result.status)
    assert "numerical_trouble" in statuses


@pytest.mark.parametrize("algorithm", ["auto", "primal"])
def test_disagreements_up_to_the_limit_still_reach_highs_optimum(monkeypatch, blend, algorithm):
    fake = _Disagreeing(PIVOT_REFRESH_LIMIT)
    _force(monkeypatch, fake)
    result = solve(blend.c, **_args(blend), algorithm=algorithm)
    reference = linprog(blend.c, **_args(blend), method="highs")  # the outside reference
    assert fake.calls > PIVOT_REFRESH_LIMIT
    assert reference.status == 0
    assert result.status == "optimal", result.message
    assert result.objective == pytest.approx(reference.fun, rel=OBJECTIVE_RTOL)


def test_a_resolve_with_disagreements_up_to_the_limit_reaches_highs_optimum(monkeypatch, blend):
    model = Resolver(blend.c, **_args(blend))
    assert model.solve().status == "optimal"
    fake = _Disagreeing(PIVOT_REFRESH_LIMIT)
    _force(monkeypatch, fake)
    warm = 0
    for step in bound_sweep(blend, 4, 20240611):
        _move_limits(model, step)
        result = model.solve()
        warm += result.warm_start and result.algorithm == "dual"
        reference = linprog(step.c, **_args(step), method="highs")  # the outside reference
        assert reference.status == 0
        assert result.status == "optimal", result.message
        assert result.objective == pytest.approx(reference.fun, rel=OBJECTIVE_RTOL)
    assert fake.calls > PIVOT_REFRESH_LIMIT
    assert warm  # the dual re-solve itself got past the disagreements

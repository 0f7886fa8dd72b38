"""Re-solves after changes of costs and bounds (blendkit.engine.resolve.Resolver) against
scipy's HiGHS and highspy (the outside references).

Random blend LPs (the benchmark's generator) go through sequences of changes drawn by
hypothesis: prices, inclusion minimums and maximums, spec sides and the batch total. After
each change the re-solve must give what linprog(method="highs") gives for that LP solved
cold: the same status; for an optimum the objective to 1e-9 relative, the rows and bounds
kept, and where the answer is unique the same point (no reduced cost of a nonbasic
variable at zero) and the same row marginals and reduced costs (no basic variable at a
bound). highspy, told the same changes and re-solving from its own model, must reach the
same optima along the benchmark's sweeps. General-form LPs (ranged rows, free, fixed and
boxed columns, near-dependent rows, mixed units; tests/test_engine_families.py) go through
changes of costs, column bounds and row bounds and are checked as those families are.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.optimize import linprog

from blendkit.bench.blends import bound_sweep, make_blend, price_sweep
from blendkit.bench.highs import highs_lp
from blendkit.bench.plant import make_plant
from blendkit.engine.resolve import Resolver
from tests.lp_checks import assert_rows_hold, assert_within_bounds, from_form
from tests.reference import highs_form
from tests.test_engine_families import check_form_against_highs, general_lps

OBJECTIVE_RTOL = 1e-9  # the demand: optima equal to 1e-9 relative
ROW_TOL = 1e-7  # rows kept, relative to their terms (as in tests/test_engine_families.py)
UNIQUE_MARGIN = 1e-7  # a value this far (relative) from zero or a bound counts as away from it
VALUE_RTOL = 1e-7  # unique points, marginals and reduced costs agree to this, relative
SETTINGS = dict(deadline=None, max_examples=25, suppress_health_check=[HealthCheck.too_slow])

# Factors a change applies: exact in binary where possible, both ways.
FACTORS = st.sampled_from([0.25, 0.5, 0.75, 0.9, 1.125, 1.5, 2.0, 4.0])
# Spec sides move less: a min four times higher is out of reach of most blends.
SPEC_FACTORS = st.sampled_from([0.75, 0.875, 0.96875, 1.03125, 1.125, 1.25])
PLACE = st.integers(0, 10_000)  # which column or row, modulo their count
CHANGE = st.one_of(
    st.tuples(st.just("price"), st.lists(st.tuples(PLACE, FACTORS), min_size=1, max_size=5)),
    st.tuples(st.just("negative price"), st.lists(st.tuples(PLACE, FACTORS), min_size=1, max_size=2)),
    st.tuples(st.just("maximum"), st.lists(st.tuples(PLACE, FACTORS), min_size=1, max_size=4)),
    st.tuples(st.just("minimum"), st.lists(st.tuples(PLACE, st.sampled_from([0.0, 0.1, 0.25])), min_size=1,
                                           max_size=2)),
    st.tuples(st.just("spec"), st.lists(st.tuples(PLACE, SPEC_FACTORS), min_size=1, max_size=4)),
    st.tuples(st.just("total"), st.lists(st.tuples(PLACE, st.sampled_from([0.875, 0.96875, 1.03125, 1.125])),
                                         min_size=1, max_size=1)),
)


def _apply(resolver: Resolver, change) -> None:
    """Tell the resolver one drawn change."""
    kind, moves = change
    form = resolver.form
    n, k = form.c.size, form.n_ub
    for place, factor in moves:
        j = place % n
        if kind == "price":
            resolver.change_costs([form.c[j] * factor], index=[j])
        elif kind == "negative price":
            resolver.change_costs([-form.c[j] * factor], index=[j])
        elif kind == "maximum":
            lower, upper = form.col_lower[j], form.col_upper[j]
            new = 50.0 * factor if np.isinf(upper) else upper * factor
            resolver.change_col_bounds([lower], [max(lower, new)], index=[j])
        elif kind == "minimum":  # a share of the maximum (or of 10 % without one)
            upper = form.col_upper[j]
            resolver.change_col_bounds([factor * (10.0 if np.isinf(upper) else upper)], [upper], index=[j])
        elif kind == "spec" and k:
            i = place % k
            b = form.row_upper[:k].copy()
            b[i] = b[i] * factor
            resolver.change_rhs(b_ub=b)
        elif kind == "total":
            resolver.change_rhs(b_eq=form.row_upper[k:] * factor)
        form = resolver.form


def _basic_values(form, result) -> np.ndarray:
    """The values of the variables basic in the result: x_j, or the activity of row i."""
    values = np.concatenate([result.x, np.asarray(form.A @ result.x)])
    return values[result.basis.head]


def _assert_matches_highs(resolver: Resolver, result) -> None:
    """The re-solve's answer is HiGHS's for the LP as it stands (see the module docstring)."""
    form = resolver.form
    ref = highs_form(form)  # outside reference: linprog(method="highs"), solved cold
    assert result.status == ref.status, result.message
    if ref.status != "optimal":
        return
    assert abs(result.objective - ref.objective) <= OBJECTIVE_RTOL * max(1.0, abs(ref.objective))
    lp = from_form(form)
    assert_within_bounds(lp, result.x)
    assert_rows_hold(lp, result.x, ROW_TOL)
    n = form.c.size
    lower = np.concatenate([form.col_lower, form.row_lower])
    upper = np.concatenate([form.col_upper, form.row_upper])
    head = result.basis.head
    basic_value = _basic_values(form, result)
    room = np.minimum(basic_value - lower[head], upper[head] - basic_value)
    if np.all(room > UNIQUE_MARGIN * (1 + np.abs(basic_value))):  # primal non-degenerate: unique duals
        scale = 1 + np.abs(form.c).max()
        np.testing.assert_allclose(result.reduced_costs, ref.reduced_costs, rtol=VALUE_RTOL, atol=VALUE_RTOL * scale)
        np.testing.assert_allclose(result.row_marginals, ref.marginals_eq, rtol=VALUE_RTOL, atol=VALUE_RTOL * scale)
    prices = np.concatenate([result.reduced_costs, result.row_marginals])
    nonbasic = np.ones(lower.size, dtype=bool)
    nonbasic[head] = False
    movable = nonbasic & (lower < upper)
    if np.all(np.abs(prices[movable]) > UNIQUE_MARGIN * (1 + np.abs(form.c).max())):  # dual non-degenerate
        np.testing.assert_allclose(result.x, ref.x, rtol=VALUE_RTOL, atol=VALUE_RTOL * (1 + np.abs(ref.x).max()))
    assert n == result.x.size


@settings(**SETTINGS)
@given(size=st.sampled_from([(8, 5), (20, 10), (40, 20)]), index=st.integers(0, 30),
       changes=st.lists(CHANGE, min_size=1, max_size=6))
def test_each_resolve_after_a_change_is_highs_cold_answer(size, index, changes):
    instance = make_blend(*size, seed=20240611, index=index)
    resolver = Resolver(instance.c, instance.A_ub, instance.b_ub, instance.A_eq, instance.b_eq, instance.bounds)
    _assert_matches_highs(resolver, resolver.solve())
    for change in changes:
        _apply(resolver, change)
        _assert_matches_highs(resolver, resolver.solve())


@pytest.mark.long
@settings(**dict(SETTINGS, max_examples=60))
@given(size=st.sampled_from([(60, 30), (150, 60)]), index=st.integers(0, 30),
       changes=st.lists(CHANGE, min_size=1, max_size=8))
def test_each_resolve_of_a_bigger_blend_is_highs_cold_answer(size, index, changes):
    test_each_resolve_after_a_change_is_highs_cold_answer.hypothesis.inner_test(size, index, changes)


@pytest.mark.parametrize("size", [(20, 10), (60, 30), (150, 60)])
def test_sweeps_resolved_from_the_basis_held_reach_highspys_optima(size):
    # Outside reference: highspy told the same changes, re-solving from its own model.
    highspy = pytest.importorskip("highspy")
    first = make_blend(*size, seed=20240611)
    ours = Resolver(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds)
    assert ours.solve().status == "optimal"
    h = highspy.Highs()
    h.setOptionValue("output_flag", False)
    lower = np.array([lo for lo, _ in first.bounds])
    upper = np.array([np.inf if hi is None else hi for _, hi in first.bounds])
    h.passModel(highs_lp(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds))
    h.run()
    n, k = first.c.size, first.b_ub.size
    cols, rows = np.arange(n, dtype=np.int32), np.arange(k, dtype=np.int32)
    for kind, steps in (("costs", price_sweep(first, 6, 1)), ("limits", bound_sweep(first, 6, 1))):
        for step in steps:
            if kind == "costs":
                ours.change_costs(step.c)
                h.changeColsCost(n, cols, step.c)
            else:
                up = np.array([np.inf if hi is None else hi for _, hi in step.bounds])
                ours.change_col_bounds(lower, up)
                ours.change_rhs(b_ub=step.b_ub)
                h.changeColsBounds(n, cols, lower, up)
                h.changeRowsBounds(k, rows, np.full(k, -np.inf), step.b_ub)
            result = ours.solve()
            h.run()
            reference = h.getInfo().objective_function_value
            assert result.status == "optimal" and result.warm_start
            assert result.algorithm == ("primal" if kind == "costs" else "dual") or result.iterations == 0
            assert abs(result.objective - reference) <= OBJECTIVE_RTOL * max(1.0, abs(reference))


def test_a_cost_change_keeps_the_basis_and_refactorises_nothing():
    # Outside reference: linprog(method="highs") on the changed LP.
    first = make_blend(60, 30, seed=20240611)
    resolver = Resolver(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds)
    resolver.solve()
    factor = resolver._state.factor
    resolver.change_costs(first.c * 1.5)  # every price up by half: the same formula, cost x 1.5
    result = resolver.solve()
    ref = linprog(first.c * 1.5, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds, method="highs")
    assert result.iterations == 0 and result.warm_start
    assert resolver._state.factor is factor and factor.updates == 0
    assert abs(result.objective - ref.fun) <= OBJECTIVE_RTOL * abs(ref.fun)


@pytest.mark.parametrize("size", [(60, 30), (150, 60)])  # 36 and 84 rows: smaller bases are refactorised
def test_a_long_series_resolved_on_the_factors_held_stays_at_highs_optima(size):
    # Outside reference: linprog(method="highs") on each LP of the series, solved cold
    # (_assert_matches_highs: status, objective to 1e-9, rows to 1e-7, unique points and
    # prices). A re-solve ends on the factors it holds, updates pending, without a final
    # refactorisation; over 60 alternating price and limit steps (the benchmark's sweeps,
    # 30 of each) those updates pile up from one re-solve to the next, and the dual runs
    # take up to 17 iterations at 150 x 60.
    first = make_blend(*size, seed=20240611)
    resolver = Resolver(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds)
    resolver.solve()
    lower = np.array([lo for lo, _ in first.bounds])
    pending, dual_iterations = 0, []
    for price, limit in zip(price_sweep(first, 30, 3), bound_sweep(first, 30, 3)):
        for change in ("costs", "limits"):
            if change == "costs":
                resolver.change_costs(price.c)
            else:
                resolver.change_col_bounds(lower, [np.inf if hi is None else hi for _, hi in limit.bounds])
                resolver.change_rhs(b_ub=limit.b_ub)
            result = resolver.solve()
            _assert_matches_highs(resolver, result)
            assert result.warm_start, result.message  # from the basis held, never the cold fallback
            pending += resolver._state.factor.updates > 0
            if result.algorithm == "dual":
                dual_iterations.append(result.iterations)
    assert pending >= 40  # most re-solves ended with updates pending: the path under test
    assert max(dual_iterations) >= {(60, 30): 8, (150, 60): 15}[size]


def test_a_sparse_plant_resolved_on_the_factors_held_stays_at_highs_optima():
    # Outside reference: linprog(method="highs") on each LP, solved cold (_assert_matches_highs).
    # A plant of 340 rows is held sparse (SuperLU factors, updates as etas): its re-solves
    # too end on the factors they hold, and the next one goes on with them.
    plant = make_plant(10, 30, 15, seed=7)
    resolver = Resolver(plant.c, plant.A_ub, plant.b_ub, plant.A_eq, plant.b_eq, plant.bounds)
    resolver.solve()
    assert resolver._state.sparse
    rng = np.random.default_rng(2)
    pending = 0
    for step in range(12):
        if step % 2 == 0:  # prices within -20 % .. +25 %
            resolver.change_costs(plant.c * rng.uniform(0.8, 1.25, plant.c.size))
        else:  # the stocks (the last 30 rows of A_ub) within -3 % .. +10 %
            b_ub = plant.b_ub.copy()
            b_ub[-30:] *= rng.uniform(0.97, 1.1, 30)
            resolver.change_rhs(b_ub=b_ub)
        result = resolver.solve()
        _assert_matches_highs(resolver, result)
        assert result.warm_start, result.message
        pending += resolver._state.factor.updates > 0
    assert pending >= 8


def test_an_infeasible_change_is_reported_and_the_next_one_recovers():
    # Outside reference: linprog(method="highs") on each LP.
    first = make_blend(20, 10, seed=20240611)
    resolver = Resolver(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds)
    resolver.solve()
    lower, upper = resolver.form.col_lower, resolver.form.col_upper.copy()
    small = np.maximum(lower, np.minimum(upper, 1.0))  # minimums (40 % at most) and 1 % of each other: under 100
    resolver.change_col_bounds(lower, small)
    result = resolver.solve()
    ref = linprog(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, list(zip(lower, small)), method="highs")
    assert ref.status == 2 and result.status == "infeasible" and result.certificate is not None
    resolver.change_col_bounds(lower, upper)
    again = resolver.solve()
    ref = linprog(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds, method="highs")
    assert again.status == "optimal"
    assert abs(again.objective - ref.fun) <= OBJECTIVE_RTOL * abs(ref.fun)


@pytest.mark.parametrize("call, message", [
    (lambda r: r.change_costs([1.0, 2.0]), "costs must have 3 entries"),
    (lambda r: r.change_costs([np.nan], index=[0]), "costs must be finite"),
    (lambda r: r.change_col_bounds([np.inf], [np.inf], index=[1]), "admits no value"),
    (lambda r: r.change_row_bounds([0.0], [np.nan], index=[0]), "must not be NaN"),
    (lambda r: r.change_col_bounds([0.0, 0.0], [1.0, 1.0], index=[0, 7]), "places among 3"),
])
def test_malformed_changes_raise_and_leave_the_problem_alone(call, message):
    # Outside reference: linprog(method="highs") on the LP, which the failed change left as it was.
    c, A_ub, b_ub = [1.0, 2.0, 3.0], [[-1.0, -1.0, -1.0]], [-1.0]
    resolver = Resolver(c, A_ub, b_ub)
    resolver.solve()
    with pytest.raises(ValueError, match=message):
        call(resolver)
    result = resolver.solve()
    assert result.objective == pytest.approx(linprog(c, A_ub, b_ub, method="highs").fun, rel=OBJECTIVE_RTOL)


GENERAL_CHANGE = st.tuples(st.sampled_from(["costs", "column", "row"]), PLACE,
                           st.integers(-8, 8).map(lambda k: k / 4), st.integers(0, 8).map(lambda k: k / 4))


@settings(max_examples=80, derandomize=True, **{k: v for k, v in SETTINGS.items() if k != "max_examples"})
@given(form=general_lps(max_rows=20, max_cols=15), changes=st.lists(GENERAL_CHANGE, min_size=1, max_size=5))
def test_general_lps_resolved_after_changes_agree_with_highs(form, changes):
    # Outside reference: linprog(method="highs") through check_form_against_highs, with its
    # tolerances for these families (1e-7: HiGHS's own on their badly scaled members) and
    # its rules for the known weaknesses on them. Derandomized as those families are.
    resolver = Resolver.from_form(form)
    check_form_against_highs(resolver.form, ours=resolver.solve())
    for kind, place, shift, width in changes:
        now = resolver.form
        if kind == "costs":
            j = place % now.c.size
            resolver.change_costs([now.c[j] + shift], index=[j])
        elif kind == "column":
            j = place % now.c.size
            low = now.col_lower[j] + shift if np.isfinite(now.col_lower[j]) else shift
            resolver.change_col_bounds([low], [low + width], index=[j])
        elif now.row_lower.size:
            i = place % now.row_lower.size
            low = now.row_lower[i] + shift if np.isfinite(now.row_lower[i]) else -np.inf
            high = now.row_upper[i] + shift if np.isfinite(now.row_upper[i]) else np.inf
            resolver.change_row_bounds([low], [max(high, low + width) if np.isfinite(low) else high], index=[i])
        check_form_against_highs(resolver.form, ours=resolver.solve())

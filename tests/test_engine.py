"""The engine against known optima and against scipy's HiGHS as the outside reference."""

from __future__ import annotations

import dataclasses
import importlib

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from scipy.optimize import linprog
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from blendkit.engine import STATUSES, solve
from tests.lp_checks import (
    assert_improving_ray,
    assert_proves_infeasible,
    assert_within_bounds,
    general_form,
)
from tests.reference import highs

RTOL = 1e-7


def assert_optimal(result, objective, x=None, rtol=RTOL):
    """The result is optimal with the given objective (and point, if given)."""
    assert result.status == "optimal", result.message
    assert result.objective == pytest.approx(objective, rel=rtol, abs=rtol)
    if x is not None:
        np.testing.assert_allclose(result.x, x, rtol=rtol, atol=1e-9)


# ----- hand-made problems with published optima --------------------------------------


def test_two_product_example_from_textbooks():
    # The two-product plant problem of Hillier & Lieberman, "Introduction to Operations
    # Research" (ch. 3): max 3x + 5y, x <= 4, 2y <= 12, 3x + 2y <= 18; optimum 36 at (2, 6).
    result = solve([-3, -5], A_ub=[[1, 0], [0, 2], [3, 2]], b_ub=[4, 12, 18])
    assert_optimal(result, -36, [2, 6])
    # Shadow prices published there: 0, 1.5, 1 per unit of each resource (for max);
    # HiGHS's marginals agree.
    np.testing.assert_allclose(result.marginals_ub, [0, -1.5, -1], atol=1e-9)
    ref = highs([-3, -5], A_ub=[[1, 0], [0, 2], [3, 2]], b_ub=[4, 12, 18])
    np.testing.assert_allclose(result.marginals_ub, ref.marginals_ub, atol=1e-9)


def test_cycling_example_of_beale():
    # E. M. L. Beale, "Cycling in the dual simplex algorithm", Naval Research Logistics
    # Quarterly 2 (1955) 269-275: max 3/4 x4 - 150 x5 + 1/50 x6 - 6 x7 (the example and its
    # optimum 1/20 at x4 = 1/25, x6 = 1 from memory; HiGHS checks the optimum below).
    # Dantzig's rule with a careless tie-break cycles on it.
    c = [-0.75, 150, -0.02, 6]
    A = [[0.25, -60, -0.04, 9], [0.5, -90, -0.02, 3], [0, 0, 1, 0]]
    result = solve(c, A_ub=A, b_ub=[0, 0, 1])
    assert_optimal(result, -0.05, [0.04, 0, 1, 0])
    ref = highs(c, A_ub=A, b_ub=[0, 0, 1])
    assert_optimal(result, ref.objective, ref.x)


def test_cycling_example_of_chvatal():
    # V. Chvatal, "Linear Programming" (1983), ch. 3, the example on which the largest-
    # coefficient rule cycles: max 10 x1 - 57 x2 - 9 x3 - 24 x4 subject to
    # 0.5 x1 - 5.5 x2 - 2.5 x3 + 9 x4 <= 0, 0.5 x1 - 1.5 x2 - 0.5 x3 + x4 <= 0, x1 <= 1
    # (from memory: optimum 1 at x1 = x3 = 1); HiGHS checks the optimum and the point.
    c = [-10, 57, 9, 24]
    A = [[0.5, -5.5, -2.5, 9], [0.5, -1.5, -0.5, 1], [1, 0, 0, 0]]
    result = solve(c, A_ub=A, b_ub=[0, 0, 1])
    assert_optimal(result, -1, [1, 0, 1, 0])
    ref = highs(c, A_ub=A, b_ub=[0, 0, 1])
    assert_optimal(result, ref.objective, ref.x)


@pytest.mark.parametrize("n", [3, 5, 8])
def test_klee_minty_cube(n):
    # Klee & Minty (1972): max sum 2^(n-j) x_j subject to
    # sum_{j<i} 2^(i-j+1) x_j + x_i <= 5^i; optimum 5^n (from memory), checked here
    # against HiGHS too.
    A = np.zeros((n, n))
    for i in range(n):
        for j in range(i):
            A[i, j] = 2 ** (i - j + 1)
        A[i, i] = 1
    b = 5.0 ** np.arange(1, n + 1)
    c = -(2.0 ** np.arange(n - 1, -1, -1))
    result = solve(c, A_ub=A, b_ub=b)
    assert_optimal(result, -(5.0**n))
    assert result.objective == pytest.approx(highs(c, A_ub=A, b_ub=b).objective, rel=RTOL)


def test_pearson_square_as_an_lp():
    # Two feeds at 8.5 % and 44 % crude protein blended to 16 %: the Pearson square gives
    # 28/35.5 = 78.87 % and 7.5/35.5 = 21.13 % (common practice).
    result = solve([0, 0], A_eq=[[1, 1], [8.5, 44]], b_eq=[100, 1600])
    assert_optimal(result, 0, [100 * 28 / 35.5, 100 * 7.5 / 35.5])


def test_equality_bounds_and_free_variables():
    # min x - y, x + y = 2, x in [0, 1], y free: HiGHS finds -2 at x=0, y=2, with the
    # equality's marginal -1.
    lp = dict(c=[1, -1], A_eq=[[1, 1]], b_eq=[2], bounds=[(0, 1), (None, None)])
    result = solve(**lp)
    ref = highs(**lp)
    assert_optimal(result, ref.objective, ref.x)
    assert_optimal(result, -2, [0, 2])
    assert result.marginals_eq == pytest.approx(ref.marginals_eq, abs=1e-9)


def test_upper_bounds_without_rows():
    # max x + y with x <= 1.5, y <= 2 as bounds and x + y <= 3: HiGHS finds 3.
    lp = dict(c=[-1, -1], A_ub=[[1, 1]], b_ub=[3], bounds=[(0, 1.5), (0, 2)])
    result = solve(**lp)
    assert_optimal(result, highs(**lp).objective)
    assert_within_bounds(general_form(**lp), result.x)


def test_no_constraints():
    # Without rows each variable sits at the bound its cost points to; HiGHS agrees.
    lp = dict(c=[1, -2], bounds=[(1, 4), (-1, 3)])
    ref = highs(**lp)
    assert_optimal(solve(**lp), ref.objective, ref.x)
    open_above = dict(c=[1, -2], bounds=[(1, 4), (0, None)])
    result = solve(**open_above)
    assert result.status == "unbounded" == highs(**open_above).status
    assert_improving_ray(general_form(**open_above), result.ray)


def test_infeasible_with_certificate():
    # x + y >= 2 with x, y in [0, 0.5] cannot hold (HiGHS agrees); the certificate proves it.
    lp = dict(c=[1, 1], A_ub=[[-1, -1]], b_ub=[-2], bounds=(0, 0.5))
    result = solve(**lp)
    assert result.status == "infeasible" == highs(**lp).status
    assert result.x is None and result.objective is None
    assert_proves_infeasible(general_form(**lp), result.farkas)


def test_inconsistent_bounds_are_infeasible():
    # A lower bound above the upper bound admits no value; HiGHS agrees.
    assert solve([1], bounds=[(2, 1)]).status == "infeasible" == highs([1], bounds=[(2, 1)]).status


def test_unbounded():
    # min -x with -x + y <= 1: x can grow without limit (HiGHS agrees); the ray proves it.
    lp = dict(c=[-1, 0], A_ub=[[-1, 1]], b_ub=[1])
    result = solve(**lp)
    assert result.status == "unbounded" == highs(**lp).status
    assert_improving_ray(general_form(**lp), result.ray)


def test_a_ray_that_crosses_a_bound_proves_nothing():
    # min -x0 with x0 - x1 <= 1, x >= 0: unbounded along (1, 1) (HiGHS agrees). Our own
    # check of a ray (certificate.proves_unbounded) accepts the engine's ray and rejects
    # (1, 0.5), along which the row rises, and (1, -1), along which x1 falls below 0, just
    # as the plain arithmetic of tests/lp_checks.py does.
    from blendkit.engine.certificate import proves_unbounded
    from blendkit.engine.standard_form import to_standard_form

    lp = dict(c=[-1.0, 0.0], A_ub=[[1.0, -1.0]], b_ub=[1.0])
    assert highs(**lp).status == "unbounded"
    form, general = to_standard_form(**lp), general_form(**lp)
    result = solve(**lp)
    assert result.status == "unbounded" and proves_unbounded(form, result.ray)
    assert_improving_ray(general, result.ray)
    for bad in ([1.0, 0.5], [1.0, -1.0], [-1.0, -1.0]):
        assert not proves_unbounded(form, np.array(bad))
        with pytest.raises(AssertionError):
            assert_improving_ray(general, np.array(bad))


def test_an_unproven_ray_is_numerical_trouble(monkeypatch):
    # Should the simplex ever end "unbounded" with a ray that crosses a bound (here forced:
    # (1, 0.5) makes the row x0 - x1 <= 1 rise), the solve is repeated unscaled and then
    # reported as numerical trouble, never as "unbounded" with a wrong ray.
    solve_module = importlib.import_module("blendkit.engine.solve")  # the package's `solve` hides it
    real = solve_module.run_simplex

    def wrong_ray(*args, **kwargs):
        outcome = real(*args, **kwargs)
        return dataclasses.replace(outcome, ray=np.array([1.0, 0.5]))

    monkeypatch.setattr(solve_module, "run_simplex", wrong_ray)
    lp = dict(c=[-1.0, 0.0], A_ub=[[1.0, -1.0]], b_ub=[1.0])
    with pytest.raises(AssertionError):
        assert_improving_ray(general_form(**lp), np.array([1.0, 0.5]))  # the ray is wrong
    result = solve(**lp)
    assert result.status == "numerical_trouble" and result.ray is None
    assert "ray does not prove it" in result.message


def test_iteration_limit_is_a_status():
    result = solve([-3, -5], A_ub=[[1, 0], [0, 2], [3, 2]], b_ub=[4, 12, 18], max_iterations=1)
    assert result.status == "iteration_limit"


@pytest.mark.parametrize(
    "kwargs",
    [
        dict(c=[1, 2], A_ub=[[1, 2, 3]], b_ub=[1]),
        dict(c=[1, 2], A_ub=[[1, 2]], b_ub=[1, 2]),
        dict(c=[1, 2], A_ub=[[1, 2]]),
        dict(c=[1, np.nan]),
        dict(c=[1, 2], bounds=[(0, 1)] * 3),
        dict(c=[1, 2], A_eq=[[1, 1]], b_eq=[np.inf]),
    ],
)
def test_malformed_arguments_raise(kwargs):
    with pytest.raises(ValueError):
        solve(**kwargs)


def test_inputs_are_not_modified():
    c = np.array([-3.0, -5.0])
    A = np.array([[1.0, 0.0], [0.0, 2.0], [3.0, 2.0]])
    b = np.array([4.0, 12.0, 18.0])
    copies = [c.copy(), A.copy(), b.copy()]
    solve(c, A_ub=A, b_ub=b)
    for original, copy in zip([c, A, b], copies):
        np.testing.assert_array_equal(original, copy)


# ----- random problems against HiGHS ---------------------------------------------------


def _ints(draw, shape, low: int, high: int) -> np.ndarray:
    """An array of integers low..high as floats, drawn by hypothesis (so it shrinks)."""
    return draw(arrays(np.int64, shape, elements=st.integers(low, high))).astype(float)


@st.composite
def random_lps(draw):
    """Small LPs in four families: feasible, degenerate, random right-hand side, mixed.
    Every number is drawn by hypothesis, so a failure shrinks to a small example."""
    m_ub, m_eq, n = draw(st.integers(0, 7)), draw(st.integers(0, 3)), draw(st.integers(1, 8))
    family = draw(st.sampled_from(["feasible", "degenerate", "random", "tight"]))
    A_ub = _ints(draw, (m_ub, n), -5, 5)
    A_eq = _ints(draw, (m_eq, n), -5, 5)
    x0 = _ints(draw, n, 0, 3)
    if family == "feasible":
        b_ub, b_eq = A_ub @ x0 + _ints(draw, m_ub, 0, 4), A_eq @ x0
    elif family == "degenerate":
        b_ub, b_eq = A_ub @ x0, A_eq @ x0
    elif family == "random":
        b_ub, b_eq = _ints(draw, m_ub, -5, 5), _ints(draw, m_eq, -5, 5)
    else:
        b_ub, b_eq = A_ub @ x0 + _ints(draw, m_ub, 0, 2), A_eq @ x0
    kinds = [(0, None), (None, None), (-2, 3), (0, 4), (None, 5)]
    bounds = [kinds[int(k)] for k in draw(arrays(np.int64, n, elements=st.integers(0, len(kinds) - 1)))]
    fixed = draw(arrays(np.int64, n, elements=st.integers(0, 9))) == 9  # about one in ten
    for j in np.flatnonzero(fixed):
        bounds[j] = (x0[j], x0[j])  # a fixed variable
    c = _ints(draw, n, -5, 5)
    return dict(
        c=c,
        A_ub=A_ub if m_ub else None,
        b_ub=b_ub if m_ub else None,
        A_eq=A_eq if m_eq else None,
        b_eq=b_eq if m_eq else None,
        bounds=bounds,
    )


def _nondegenerate(lp, x, tol=1e-9):
    """True when exactly n constraints are active at x and they are linearly independent
    (so the duals are unique: two copies of one equality row share any split of its dual)."""
    n = len(x)
    rows = []
    if lp["A_ub"] is not None:
        rows += list(lp["A_ub"][np.abs(lp["A_ub"] @ x - lp["b_ub"]) <= tol])
    if lp["A_eq"] is not None:
        rows += list(lp["A_eq"])
    for j, (xj, (lo, hi)) in enumerate(zip(x, lp["bounds"])):
        hits = int(lo is not None and abs(xj - lo) <= tol) + int(hi is not None and abs(xj - hi) <= tol)
        rows += [np.eye(n)[j]] * hits
    return len(rows) == n and np.linalg.matrix_rank(np.array(rows)) == n


def assert_certificate_or_crossed_bounds(lp, result):
    """An infeasible result's certificate proves it, unless a variable's own bounds cross
    (then no certificate is needed, and the engine gives none)."""
    form = general_form(**lp)
    if np.any(form.col_lower > form.col_upper):
        assert result.certificate is None
    else:
        assert_proves_infeasible(form, result.farkas)


def check_against_highs(lp, algorithm="auto"):
    """Same status as HiGHS; when optimal, same objective, a feasible x, equal duals if unique."""
    ours = solve(**lp, algorithm=algorithm)
    ref = highs(**lp)
    assert ours.status in STATUSES
    assert ours.status == ref.status, ours.message
    if ref.status == "unbounded":
        assert_improving_ray(general_form(**lp), ours.ray)
    if ref.status == "infeasible":
        assert_certificate_or_crossed_bounds(lp, ours)
    if ref.status != "optimal":
        return ours
    assert ours.objective == pytest.approx(ref.objective, rel=RTOL, abs=RTOL)
    x = ours.x
    if lp["A_ub"] is not None:
        assert np.all(lp["A_ub"] @ x <= lp["b_ub"] + 1e-7)
    if lp["A_eq"] is not None:
        np.testing.assert_allclose(lp["A_eq"] @ x, lp["b_eq"], atol=1e-7)
    assert_within_bounds(general_form(**lp), x)
    if _nondegenerate(lp, ref.x) and _nondegenerate(lp, x):
        # HiGHS's duals are accurate to its own tolerances (1e-7 on its scaled problem),
        # which on ill-conditioned bases leaves a few parts in a million: in one blend
        # with a basis condition number of 1e6 its reduced cost was 24.160516 where an
        # exact solve of the optimality conditions gives 24.160613 (and so do we).
        np.testing.assert_allclose(ours.marginals_ub, ref.marginals_ub, rtol=1e-5, atol=1e-7)
        np.testing.assert_allclose(ours.marginals_eq, ref.marginals_eq, rtol=1e-5, atol=1e-7)
        np.testing.assert_allclose(ours.reduced_costs, ref.reduced_costs, rtol=1e-5, atol=1e-7)
    return ours


@settings(max_examples=1200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_lps())
def test_random_lps_agree_with_highs(lp):
    check_against_highs(lp)


@settings(max_examples=600, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_lps())
def test_random_lps_two_phase_primal_agrees_with_highs(lp):
    check_against_highs(lp, algorithm="primal")


def _unit(draw, shape, low: float = 0.0, high: float = 1.0) -> np.ndarray:
    """An array of floats in [low, high], drawn by hypothesis (so it shrinks to low)."""
    return draw(arrays(np.float64, shape, elements=st.floats(low, high, allow_nan=False)))


@st.composite
def random_blends(draw):
    """Blend-shaped LPs: inclusions summing to 100, nutrient min/max rows on mixed scales,
    inclusion limits; about one in five made infeasible by an unreachable spec. Every
    number is drawn by hypothesis, so a failure shrinks to a small example."""
    n, k = draw(st.integers(2, 24)), draw(st.integers(1, 11))
    # Contents from 1e-4 up: HiGHS drops matrix entries below 1e-9 (its
    # small_matrix_value), which would make it solve a slightly different problem.
    scale = 10.0 ** _ints(draw, (k, 1), -2, 3)
    contents = _unit(draw, (k, n), 0.01, 1) * scale
    contents[_unit(draw, (k, n)) < 0.35] = 0.0
    weights = _unit(draw, n, 0.01, 1)
    mixture = weights / weights.sum() * 100
    levels = contents @ mixture / 100
    low = levels * _unit(draw, k, 0.8, 1.0)
    high = levels * _unit(draw, k, 1.0, 1.5)
    if draw(st.integers(0, 4)) == 4:
        low[draw(st.integers(0, k - 1))] = contents.max() * 1.01  # no blend reaches it
    has_low, has_high = _unit(draw, k) < 0.8, _unit(draw, k) < 0.4
    A_ub = np.vstack([-contents[has_low] / 100, contents[has_high] / 100])
    b_ub = np.concatenate([-low[has_low], high[has_high]])
    upper = np.where(_unit(draw, n) < 0.5, np.maximum(mixture * _unit(draw, n, 1, 3), 1), 100.0)
    lower = np.where(_unit(draw, n) < 0.15, mixture * _unit(draw, n), 0.0)
    return dict(
        c=_unit(draw, n, 50, 3000) / 100,
        A_ub=A_ub if A_ub.size else None,
        b_ub=b_ub if A_ub.size else None,
        A_eq=np.ones((1, n)),
        b_eq=np.array([100.0]),
        bounds=list(zip(lower, upper)),
    )


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_blends())
def test_random_blends_agree_with_highs(lp):
    # Costs >= 0, so the engine starts with the dual simplex; which method finishes is not
    # checked, only the answer: when the dual simplex finds no entering column it hands over
    # to phase one, which may find the LP feasible within tolerance (inclusion caps whose
    # sum falls short of 100 by one rounding, 3 x 33.33333333333333).
    check_against_highs(lp)


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_blends())
def test_random_blends_two_phase_primal_agrees_with_highs(lp):
    check_against_highs(lp, algorithm="primal")


@pytest.mark.long
@settings(max_examples=6000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_lps())
def test_many_random_lps_agree_with_highs(lp):
    check_against_highs(lp)


@pytest.mark.long
@settings(max_examples=3000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_lps())
def test_many_random_lps_two_phase_primal_agree_with_highs(lp):
    check_against_highs(lp, algorithm="primal")


@pytest.mark.long
@settings(max_examples=3000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_blends())
def test_many_random_blends_agree_with_highs(lp):
    check_against_highs(lp)


# ----- warm starts, certificates, badly scaled data ------------------------------------


def _blend_lp(seed, n=30, k=12):
    """A blend-shaped LP: inclusions summing to 100, nutrient mins, inclusion limits."""
    rng = np.random.default_rng(seed)
    contents = rng.uniform(0, 1, (k, n)) * 10.0 ** rng.integers(-1, 4, (k, 1))
    contents[rng.random((k, n)) < 0.3] = 0.0
    mixture = rng.dirichlet(np.ones(n)) * 100
    levels = contents @ mixture / 100
    A_ub = -contents / 100
    b_ub = -levels * rng.uniform(0.9, 1.0, k)
    c = rng.uniform(50, 3000, n) / 100
    bounds = [(0, float(hi)) for hi in rng.uniform(20, 100, n)]
    return dict(c=c, A_ub=A_ub, b_ub=b_ub, A_eq=np.ones((1, n)), b_eq=[100.0], bounds=bounds)


def test_warm_start_after_a_price_change_skips_phase_one():
    lp = _blend_lp(7)
    first = solve(**lp)
    assert_optimal(first, highs(**lp).objective)
    rng = np.random.default_rng(8)
    changed = dict(lp, c=lp["c"] * rng.uniform(0.8, 1.2, lp["c"].size))
    cold = solve(**changed)
    warm = solve(**changed, basis=first.basis)
    assert warm.warm_start and warm.phase_one_iterations == 0
    assert warm.iterations < cold.iterations
    # The warm solve reaches the optimum HiGHS finds for the new prices.
    assert_optimal(warm, highs(**changed).objective)


def test_warm_start_after_a_bound_change_uses_the_dual_simplex():
    lp = _blend_lp(7)
    first = solve(**lp)
    # Cap each basic ingredient at half its old inclusion: with the nonbasics where they
    # were, the old basis now puts its basic variables above their bounds, but its
    # reduced costs still have the right signs, so the dual simplex can start from it.
    bounds = list(lp["bounds"])
    for j in first.basis.head[first.basis.head < len(bounds)]:
        if first.x[j] > 1e-6:
            bounds[j] = (0, first.x[j] / 2)
    tighter = dict(lp, bounds=bounds)
    result = solve(**tighter, basis=first.basis)
    ref = highs(**tighter)
    assert result.status == ref.status
    if ref.status == "optimal":
        assert result.warm_start and result.algorithm == "dual"
        assert_optimal(result, ref.objective)


@pytest.mark.parametrize("seed", range(6))
def test_warm_start_after_prices_and_bounds_both_changed_reaches_the_optimum(seed):
    # Prices and limits changed together: the old basis is (usually) neither primal nor
    # dual feasible. The engine shifts the costs where the basis is not dual feasible, runs
    # the dual simplex, puts the costs back and finishes by the primal simplex; the answer
    # is the optimum HiGHS finds for the new LP (outside reference).
    lp = _blend_lp(20 + seed)
    first = solve(**lp)
    rng = np.random.default_rng(seed)
    changed = dict(lp, c=lp["c"] * rng.uniform(0.3, 3.0, lp["c"].size), b_ub=lp["b_ub"] * rng.uniform(1.05, 1.15, lp["b_ub"].size))
    ref = highs(**changed)
    result = solve(**changed, basis=first.basis)
    assert result.status == ref.status
    if ref.status == "optimal":
        assert result.warm_start and result.phase_one_iterations == 0
        assert_optimal(result, ref.objective)


def test_a_basis_of_another_shape_is_ignored():
    first = solve(**_blend_lp(7))
    other = _blend_lp(8, n=20, k=6)
    result = solve(**other, basis=first.basis)
    assert not result.warm_start
    assert_optimal(result, highs(**other).objective)


def _certificate_checks(lp, result):
    """Farkas: the listed constraints' multipliers x bounds add up to the infeasibility,
    and those constraints alone are infeasible according to HiGHS."""
    cert = result.certificate
    assert cert is not None and cert.infeasibility > 0 and cert.parts
    n = len(lp["c"])
    lower = np.array([-np.inf if lo is None else lo for lo, _ in lp["bounds"]])
    upper = np.array([np.inf if hi is None else hi for _, hi in lp["bounds"]])
    total = 0.0
    keep_ub, keep_eq = [], []
    sub_lower, sub_upper = np.full(n, -np.inf), np.full(n, np.inf)
    for part in cert.parts:
        if part.kind == "ub":
            total += part.multiplier * lp["b_ub"][part.index]
            keep_ub.append(part.index)
        elif part.kind == "eq":
            total += part.multiplier * lp["b_eq"][part.index]
            keep_eq.append(part.index)
        else:
            bound = upper[part.index] if part.side == "upper" else lower[part.index]
            total += part.multiplier * bound
            if part.side in ("upper", "eq"):
                sub_upper[part.index] = upper[part.index]
            if part.side in ("lower", "eq"):
                sub_lower[part.index] = lower[part.index]
    assert total == pytest.approx(cert.infeasibility, rel=1e-6, abs=1e-9)
    sub = highs(
        np.zeros(n),
        A_ub=np.asarray(lp["A_ub"])[keep_ub] if keep_ub else None,
        b_ub=np.asarray(lp["b_ub"])[keep_ub] if keep_ub else None,
        A_eq=np.asarray(lp["A_eq"])[keep_eq] if keep_eq else None,
        b_eq=np.asarray(lp["b_eq"])[keep_eq] if keep_eq else None,
        bounds=list(zip(sub_lower, sub_upper)),
    )
    assert sub.status == "infeasible"


def test_infeasible_blend_certificate_names_the_conflict():
    # Protein at least 30 % from feeds of at most 20 % and 44 %, with the 44 % one capped
    # at 10 % inclusion: at most 0.9*20 + 0.1*44 = 22.4 %.
    lp = dict(c=[2.0, 4.0], A_ub=[[-0.20, -0.44]], b_ub=[-0.30],
              A_eq=[[1.0, 1.0]], b_eq=[1.0], bounds=[(0, None), (0, 0.1)])
    result = solve(**lp)
    assert result.status == "infeasible"
    kinds = {(p.kind, p.index, p.side) for p in result.certificate.parts}
    assert kinds == {("ub", 0, "upper"), ("eq", 0, "eq"), ("bound", 1, "upper")}
    _certificate_checks(lp, result)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_lps())
def test_certificates_of_random_infeasible_lps(lp):
    result = solve(**lp)
    if result.status == "infeasible" and result.certificate is not None:
        _certificate_checks(lp, result)
        assert_proves_infeasible(general_form(**lp), result.farkas)


@pytest.mark.parametrize("seed", range(5))
def test_badly_scaled_blends_agree_with_highs(seed):
    # Contents from 1e-3 to 1e5 (ppm, mg/kg, %, MJ/kg) in one LP.
    rng = np.random.default_rng(seed)
    n, k = 40, 15
    contents = rng.uniform(0.01, 1, (k, n)) * 10.0 ** rng.integers(-3, 6, (k, 1))
    contents[rng.random((k, n)) < 0.4] = 0.0
    mixture = rng.dirichlet(np.ones(n)) * 100
    levels = contents @ mixture / 100
    lp = dict(
        c=rng.uniform(50, 3000, n) / 100,
        A_ub=np.vstack([-contents / 100, contents / 100]),
        b_ub=np.concatenate([-levels * 0.95, levels * 1.2]),
        A_eq=np.ones((1, n)),
        b_eq=[100.0],
        bounds=[(0, 60)] * n,
    )
    check_against_highs(lp)


def test_large_sparse_problem_uses_sparse_factors_and_agrees_with_highs():
    # 450 rows at 2 % density: above the engine's sparse threshold (SPARSE_ROWS).
    import scipy.sparse as sp

    from blendkit.engine import tolerances

    rng = np.random.default_rng(3)
    m, n = 450, 700
    assert m >= tolerances.SPARSE_ROWS
    A = sp.random(m, n, density=0.02, random_state=3, format="csr")
    A.data = rng.uniform(-1, 1, A.nnz) * 10
    b = A @ rng.uniform(0, 2, n) + rng.uniform(0, 1, m)
    c = rng.uniform(-1, 1, n)
    result = solve(c, A_ub=A, b_ub=b, bounds=(0, 3))
    assert_optimal(result, highs(c, A_ub=A, b_ub=b, bounds=(0, 3)).objective)


@pytest.mark.parametrize("size", [8, 15])
def test_degenerate_assignment_problems(size):
    # Assignment problems are as degenerate as LPs get (n of the 2n - 1 basic variables sit
    # at zero at every vertex); the optimum is checked against HiGHS.
    rng = np.random.default_rng(size)
    cost = rng.integers(1, 20, (size, size)).astype(float)
    rows = np.kron(np.eye(size), np.ones(size))
    cols = np.kron(np.ones(size), np.eye(size))
    A_eq = np.vstack([rows, cols])
    b_eq = np.ones(2 * size)
    result = solve(cost.ravel(), A_eq=A_eq, b_eq=b_eq)
    assert_optimal(result, highs(cost.ravel(), A_eq=A_eq, b_eq=b_eq).objective)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_lps())
def test_blands_rule_after_every_stall_still_agrees_with_highs(lp):
    # With a stall limit of 1, Bland's smallest-index rule takes over after every
    # degenerate step, so this exercises the anti-cycling path on the same families.
    from blendkit.engine import tolerances

    saved = tolerances.STALL_LIMIT
    tolerances.STALL_LIMIT = 1
    try:
        check_against_highs(lp)
    finally:
        tolerances.STALL_LIMIT = saved


def test_residual_check_turns_a_doubtful_answer_into_numerical_trouble():
    # The check after solving compares the answer with the original rows in their own
    # units. This LP's optimum breaks a row by rounding (about 1.4e-16, relative, solved
    # scaled or unscaled); with a residual tolerance below that, the answer must come back
    # as numerical trouble that names the residual and the tolerance, not as "optimal"
    # (a scaled solve that breaks it is solved once more unscaled, which breaks it too).
    from blendkit.engine import Tolerances

    rng = np.random.default_rng(25)
    A, b, c = rng.uniform(0.1, 1, (4, 6)), rng.uniform(1, 3, 4), rng.uniform(0.1, 1, 6)
    normal = solve(c, A_ub=-A, b_ub=-b)
    unscaled = solve(c, A_ub=-A, b_ub=-b, scale=False)
    for result in (normal, unscaled):
        assert_optimal(result, highs(c, A_ub=-A, b_ub=-b).objective)
        assert 0 < result.residual < 1e-12
    strict_tolerance = min(normal.residual, unscaled.residual) / 2
    strict = solve(c, A_ub=-A, b_ub=-b, tolerances=Tolerances(residual=strict_tolerance))
    assert strict.status == "numerical_trouble"
    assert "inequality row" in strict.message and "above the residual tolerance" in strict.message


def test_a_gap_scaling_hides_is_found_unscaled():
    # x >= 0 with 5000 x >= 0.125 and 2500 x <= 0.0624881875...: x must be at least 2.5e-5
    # and at most 2.49953e-5, a gap of 2e-5 relative to row 0 (shrunk by a hypothesis
    # family, tests/test_engine_families.py). Scaled by 1/4096, the rows' bounds are
    # 3e-5 and the gap (phase one's total, 5.8e-9) sits below phase one's threshold
    # (1e-8 x (1 + the largest bound)): the phase-one duals must prove it on the scaled
    # LP, or the residual check catch the answer and the LP be solved once more unscaled.
    # HiGHS calls it infeasible too.
    lp = dict(c=[0.0], A_ub=[[-5000.0], [2500.0]], b_ub=[-0.125, 0.062488187511249994])
    assert highs(**lp).status == "infeasible"
    result = solve(**lp)
    assert result.status == "infeasible", result.message
    assert_proves_infeasible(general_form(**lp), result.farkas)


def test_a_gap_a_large_bound_elsewhere_hides():
    # x0 >= 25000 and 0.25 x1 <= -1.025e-5 with x1 >= 0: infeasible by 1e-5 relative to the
    # second row (shrunk by a hypothesis family), and HiGHS says so. Phase one's total
    # infeasibility threshold, 1e-8 x (1 + the largest bound of the whole LP), is above
    # this gap; the phase-one duals must decide, and they prove it.
    lp = dict(c=[0.0, 0.0], A_ub=[[0.0, 0.25]], b_ub=[-1.025e-05], bounds=[(25000.0, None), (0, None)])
    assert highs(**lp).status == "infeasible"
    result = solve(**lp)
    assert result.status == "infeasible", result.message
    assert_proves_infeasible(general_form(**lp), result.farkas)  # Farkas, checked by arithmetic


def test_a_row_of_a_general_form_lp_is_named_as_such():
    # A general-form LP (as an MPS file gives: no A_ub/A_eq split) names its rows by their
    # place in that form; only a row whose two sides are equal is an equality. The worst
    # row here is the ranged row 1 (1 <= x0 + x1 <= 2 at x = (2, 2), violated by 2).
    from blendkit.engine.standard_form import StandardForm
    from blendkit.engine.verify import worst_violation

    form = StandardForm(
        c=np.zeros(2), A=np.array([[1.0, 0.0], [1.0, 1.0]]),
        row_lower=np.array([2.0, 1.0]), row_upper=np.array([2.0, 2.0]),
        col_lower=np.array([0.0, -np.inf]), col_upper=np.full(2, np.inf))
    worst, where = worst_violation(form, np.array([2.0, 2.0]))
    assert where == "row 1"
    assert worst == pytest.approx(2.0 / 3.0)  # violation 2 over 1 + max(|2|, |2|, |1|, |2|)
    # x = (4, -0.5): row 0 is off by 2 (size 1 + 4), row 1 by 1.5 (size 1 + 4).
    worst, where = worst_violation(form, np.array([4.0, -0.5]))
    assert where == "equality row 0"
    assert worst == pytest.approx(0.4)


def test_near_dependent_rows_loosened_by_scaling_are_solved_exactly():
    # Shrunk from a long general-LP family draw in CI: two equality rows 2.5e-5 apart
    # (250 x1 - 4250.10625 x2 = -1.00002656 and 250 x1 - 4250 x2 = -1) pin x2 = 0.00025.
    # The scaled solve stopped on a point that broke a row by 7.8e-7 relative, inside the
    # residual tolerance (1e-6) but not exact; above RESIDUAL_RETRY the LP is solved
    # unscaled too. Reference: HiGHS through linprog on the same LP.
    c = np.array([0.0, 0.0, 250.0])
    A_eq = np.array([[0.0, 250.0, -4250.10625], [0.0, 250.0, -4250.0], [250.0, 0.0, 250.0]])
    b_eq = np.array([-1.00002656, -1.0, 0.125])
    ours = solve(c, A_eq=A_eq, b_eq=b_eq)
    ref = highs(c, A_eq=A_eq, b_eq=b_eq)
    assert ours.status == ref.status == "optimal"
    assert ours.objective == pytest.approx(ref.objective, rel=1e-9)
    np.testing.assert_allclose(A_eq @ ours.x, b_eq, rtol=1e-9, atol=1e-12)


def test_near_dependent_rows_broken_by_a_hair_are_solved_exactly():
    # Shrunk from the long two-phase primal general-LP family in CI: two equality rows
    # whose x1 coefficients differ by 1.25e-4 pin x1 = x2 = 0.00025; a point that breaks
    # one of them by only 7.8e-9 lets x1 fall to its lower limit 0.0075 / 40 and the cost
    # from 0.1875 to 0.1406. The scaled solve stopped there; above RESIDUAL_RETRY (1e-9)
    # the LP is solved unscaled too. Reference: HiGHS through linprog told a primal
    # feasibility tolerance of 1e-10 (at its default 1e-7 it stops on the loose point).
    c = np.array([750.0, 0.0, 0.0])
    A_eq = np.array([[0.0, 5629640271701475 / 2**50, -10.0], [0.0, 5.0, -10.0], [-2.5, 0.0, 5.0]])
    b_eq = np.array([-0.00124996875, -0.00125, 0.000625])
    A_ub = np.array([[0.0, 40.0, 0.0], [0.0, -40.0, 0.0]])
    b_ub = np.array([0.01, -0.0075])
    ours = solve(c, A_ub=A_ub, b_ub=b_ub, A_eq=A_eq, b_eq=b_eq, algorithm="primal")
    ref = linprog(c, A_ub=A_ub, b_ub=b_ub, A_eq=A_eq, b_eq=b_eq, method="highs",
                  options={"primal_feasibility_tolerance": 1e-10})
    assert ref.status == 0 and ours.status == "optimal"
    assert ours.objective == pytest.approx(ref.fun, rel=1e-9)
    np.testing.assert_allclose(A_eq @ ours.x, b_eq, rtol=1e-9, atol=1e-14)


@pytest.mark.parametrize("where", ["c", "A", "row_upper"])
def test_a_nan_in_a_general_form_is_refused(where):
    # A NaN compares false, so the checks after a solve cannot see it: an LP holding one
    # came back "optimal" with a NaN point. Reference: scipy's linprog (HiGHS) refuses a
    # NaN in c, A or b with a ValueError too.
    from blendkit.engine import StandardForm, solve_form

    parts = {"c": np.array([1.0, 1.0]), "A": np.array([[1.0, 1.0]]), "row_upper": np.array([1.0])}
    parts[where] = parts[where].copy()
    parts[where].flat[0] = np.nan
    with pytest.raises(ValueError):
        linprog(parts["c"], A_ub=parts["A"], b_ub=parts["row_upper"], method="highs")
    form = StandardForm(parts["c"], parts["A"], np.array([-np.inf]), parts["row_upper"], np.zeros(2), np.full(2, np.inf))
    with pytest.raises(ValueError, match="finite|NaN"):
        solve_form(form)

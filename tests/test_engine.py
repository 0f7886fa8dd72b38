"""The engine against known optima and against scipy's HiGHS as the outside reference."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from blendkit.engine import STATUSES, solve
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
    # Shadow prices published there: 0, 1.5, 1 per unit of each resource (for max).
    np.testing.assert_allclose(result.marginals_ub, [0, -1.5, -1], atol=1e-9)


def test_cycling_example_of_beale():
    # Beale (1955), in the form given by Chvatal, "Linear Programming" (1983) ch. 3,
    # from memory: optimum -1/20 at x4 = 1/25, x6 = 1. Dantzig's rule with a careless
    # tie-break cycles on it.
    c = [-0.75, 150, -0.02, 6]
    A = [[0.25, -60, -0.04, 9], [0.5, -90, -0.02, 3], [0, 0, 1, 0]]
    result = solve(c, A_ub=A, b_ub=[0, 0, 1])
    assert_optimal(result, -0.05, [0.04, 0, 1, 0])


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
    # min x - y, x + y = 2, x in [0, 1], y free: optimum -2 at x=0, y=2 (by hand).
    result = solve([1, -1], A_eq=[[1, 1]], b_eq=[2], bounds=[(0, 1), (None, None)])
    assert_optimal(result, -2, [0, 2])
    assert result.marginals_eq[0] == pytest.approx(-1)


def test_upper_bounds_without_rows():
    # max x + y with x <= 1.5, y <= 2 as bounds and x + y <= 3: optimum 3 (by hand).
    result = solve([-1, -1], A_ub=[[1, 1]], b_ub=[3], bounds=[(0, 1.5), (0, 2)])
    assert_optimal(result, -3)


def test_no_constraints():
    assert_optimal(solve([1, -2], bounds=[(1, 4), (-1, 3)]), 1 - 6, [1, 3])
    assert solve([1, -2], bounds=[(1, 4), (0, None)]).status == "unbounded"


def test_infeasible_with_certificate():
    # x + y >= 2 with x, y in [0, 0.5] cannot hold.
    result = solve([1, 1], A_ub=[[-1, -1]], b_ub=[-2], bounds=(0, 0.5))
    assert result.status == "infeasible"
    assert result.x is None and result.objective is None
    assert result.farkas is not None and np.any(result.farkas != 0)


def test_inconsistent_bounds_are_infeasible():
    assert solve([1], bounds=[(2, 1)]).status == "infeasible"


def test_unbounded():
    result = solve([-1, 0], A_ub=[[-1, 1]], b_ub=[1])
    assert result.status == "unbounded"
    assert result.ray is not None and result.ray[0] > 0


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


@st.composite
def random_lps(draw):
    """Small LPs in four families: feasible, degenerate, random right-hand side, mixed."""
    seed = draw(st.integers(0, 2**32 - 1))
    rng = np.random.default_rng(seed)
    m_ub, m_eq, n = int(rng.integers(0, 8)), int(rng.integers(0, 4)), int(rng.integers(1, 9))
    family = draw(st.sampled_from(["feasible", "degenerate", "random", "tight"]))
    A_ub = rng.integers(-5, 6, (m_ub, n)).astype(float)
    A_eq = rng.integers(-5, 6, (m_eq, n)).astype(float)
    x0 = rng.integers(0, 4, n).astype(float)
    if family == "feasible":
        b_ub, b_eq = A_ub @ x0 + rng.integers(0, 5, m_ub), A_eq @ x0
    elif family == "degenerate":
        b_ub, b_eq = A_ub @ x0, A_eq @ x0
    elif family == "random":
        b_ub, b_eq = rng.integers(-5, 6, m_ub).astype(float), rng.integers(-5, 6, m_eq).astype(float)
    else:
        b_ub, b_eq = A_ub @ x0 + rng.integers(0, 3, m_ub), A_eq @ x0
    kinds = [(0, None), (None, None), (-2, 3), (0, 4), (None, 5)]
    bounds = [kinds[int(k)] for k in rng.integers(0, len(kinds), n)]
    for j in np.flatnonzero(rng.random(n) < 0.1):
        bounds[j] = (x0[j], x0[j])  # a fixed variable
    c = rng.integers(-5, 6, n).astype(float)
    return dict(
        c=c,
        A_ub=A_ub if m_ub else None,
        b_ub=b_ub if m_ub else None,
        A_eq=A_eq if m_eq else None,
        b_eq=b_eq if m_eq else None,
        bounds=bounds,
    )


def _nondegenerate(lp, x, tol=1e-9):
    """True when exactly n constraints are active at x (so the duals are unique)."""
    active = 0
    if lp["A_ub"] is not None:
        active += int(np.sum(np.abs(lp["A_ub"] @ x - lp["b_ub"]) <= tol))
    if lp["A_eq"] is not None:
        active += lp["A_eq"].shape[0]
    for xj, (lo, hi) in zip(x, lp["bounds"]):
        active += int(lo is not None and abs(xj - lo) <= tol) + int(hi is not None and abs(xj - hi) <= tol)
    return active == len(x)


def check_against_highs(lp):
    """Same status as HiGHS; when optimal, same objective, a feasible x, equal duals if unique."""
    ours = solve(**lp)
    ref = highs(**lp)
    assert ours.status in STATUSES
    assert ours.status == ref.status, ours.message
    if ref.status != "optimal":
        return
    assert ours.objective == pytest.approx(ref.objective, rel=RTOL, abs=RTOL)
    x = ours.x
    if lp["A_ub"] is not None:
        assert np.all(lp["A_ub"] @ x <= lp["b_ub"] + 1e-7)
    if lp["A_eq"] is not None:
        np.testing.assert_allclose(lp["A_eq"] @ x, lp["b_eq"], atol=1e-7)
    if _nondegenerate(lp, ref.x) and _nondegenerate(lp, x):
        np.testing.assert_allclose(ours.marginals_ub, ref.marginals_ub, atol=1e-7)
        np.testing.assert_allclose(ours.marginals_eq, ref.marginals_eq, atol=1e-7)
        np.testing.assert_allclose(ours.reduced_costs, ref.reduced_costs, atol=1e-7)


@settings(max_examples=1200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_lps())
def test_random_lps_agree_with_highs(lp):
    check_against_highs(lp)


@pytest.mark.long
@settings(max_examples=6000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_lps())
def test_many_random_lps_agree_with_highs(lp):
    check_against_highs(lp)

"""The branch and bound (blendkit.engine.solve_mip) against HiGHS and published MIPLIB optima.

The outside references: `scipy.optimize.milp`, which is HiGHS's branch and cut, solved to
a zero relative gap, on random blend-shaped MIPs of the kinds the product makes (minimum
if used, most ingredients, pack sizes, scale steps); the published optima of the MIPLIB 3
problems in ../shared/reference/miplib (see the README there); and highspy reading the
same MPS files. Each check names its reference beside it.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import highspy
import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.optimize import Bounds, LinearConstraint, linprog, milp

from blendkit.engine import MIP_STATUSES, StandardForm, Tolerances, solve_mip, solve_mip_form
from blendkit.engine.mps import MPSError, read, write
from tests.reference_data import reference_file

RTOL = 1e-6  # optima agree to this, relative
FEASIBLE = 1e-7  # our solutions meet every row to this, relative to 1 + the row's size
TOTAL = 100.0  # inclusions in % of the blend
SLOW = dict(deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])


# ----- a MIP in linprog's arguments, and HiGHS's answer to it ------------------------------


@dataclass(frozen=True)
class Case:
    """A MIP in linprog's arguments, with integrality (0/1) and semi-continuous thresholds."""

    c: np.ndarray
    A_ub: np.ndarray
    b_ub: np.ndarray
    A_eq: np.ndarray
    b_eq: np.ndarray
    upper: np.ndarray  # column upper bounds; lower bounds are 0
    integrality: np.ndarray
    semicontinuous: np.ndarray

    def solve(self, **options):
        """Our answer."""
        bounds = [(0.0, u) for u in self.upper]
        return solve_mip(self.c, self.A_ub, self.b_ub, self.A_eq, self.b_eq, bounds, self.integrality,
                         self.semicontinuous, **options)


def highs_milp(case: Case) -> tuple[str, float | None]:
    """scipy.optimize.milp (HiGHS) on the same MIP, to a zero relative gap.

    A semi-continuous column is HiGHS's integrality 2 (3 when also integer) with the
    threshold as its lower bound.
    """
    semi = case.semicontinuous > 0
    integrality = case.integrality.astype(float)
    integrality[semi] = np.where(case.integrality[semi] == 1, 3, 2)
    lower = np.where(semi, case.semicontinuous, 0.0)
    constraints = [LinearConstraint(case.A_ub, -np.inf, case.b_ub), LinearConstraint(case.A_eq, case.b_eq, case.b_eq)]
    res = milp(case.c, constraints=constraints, bounds=Bounds(lower, case.upper), integrality=integrality,
               options={"mip_rel_gap": 0.0})
    if res.status == 4:
        # HiGHS's own "solve error" (seen on a pack-size blend where its presolve found a
        # point the original rejects) is no answer: ask HiGHS again without its presolve.
        res = milp(case.c, constraints=constraints, bounds=Bounds(lower, case.upper), integrality=integrality,
                   options={"mip_rel_gap": 0.0, "presolve": False})
    status = {0: "optimal", 2: "infeasible", 3: "unbounded"}.get(res.status, f"milp status {res.status}")
    return status, (float(res.fun) if res.status == 0 else None)


def assert_meets_every_constraint(case: Case, x: np.ndarray) -> None:
    """x meets the rows and bounds, its integer columns are whole numbers exactly, and each
    semi-continuous column is 0 or at least its threshold."""
    for A, b, equal in ((case.A_ub, case.b_ub, False), (case.A_eq, case.b_eq, True)):
        activity = A @ x
        size = 1 + np.abs(A * x).max(axis=1, initial=0) + np.abs(b)
        assert np.all(activity - b <= FEASIBLE * size)
        if equal:
            assert np.all(b - activity <= FEASIBLE * size)
    assert np.all(x >= 0) and np.all(x <= case.upper * (1 + FEASIBLE))
    whole = case.integrality == 1
    assert np.array_equal(x[whole], np.round(x[whole]))
    semi = case.semicontinuous > 0
    assert np.all((x[semi] == 0) | (x[semi] >= case.semicontinuous[semi] * (1 - FEASIBLE)))


def check_against_highs(case: Case, **options):
    """Our answer has HiGHS's status and optimum, and is a solution of the MIP."""
    ours = case.solve(**options)
    status, optimum = highs_milp(case)
    # scipy.optimize.milp (HiGHS) is the outside reference for status and optimum.
    assert ours.status == status, ours.message
    if status == "optimal":
        assert ours.objective == pytest.approx(optimum, rel=RTOL)
        assert_meets_every_constraint(case, ours.x)
        assert ours.lp_objective <= ours.objective + RTOL * abs(ours.objective)
        assert ours.bound <= ours.objective and ours.gap <= Tolerances().relative_gap
        assert ours.fixed_lp.status == "optimal" and ours.fixed_lp.objective == pytest.approx(ours.objective)
    return ours


# ----- blend-shaped MIPs, drawn by hypothesis (every number shrinks) ------------------------


@dataclass(frozen=True)
class Blend:
    """A least-cost blend: inclusions x (% of the blend) of n ingredients summing to 100,
    nutrient spec rows (A_ub x <= b_ub), prices per tonne and inclusion limits."""

    prices: np.ndarray
    upper: np.ndarray
    A_ub: np.ndarray
    b_ub: np.ndarray

    @property
    def n(self) -> int:
        """How many ingredients."""
        return self.prices.size


def _whole_numbers(draw, low: int, high: int, size: int) -> np.ndarray:
    """`size` whole numbers drawn in low..high, as floats."""
    return np.array(draw(st.lists(st.integers(low, high), min_size=size, max_size=size)), dtype=float)


def _mixture(shares: np.ndarray, upper: np.ndarray) -> np.ndarray:
    """Inclusions summing to 100 in proportion to `shares` where the limits allow: what one
    ingredient cannot take goes to the others, in proportion, then to any with room."""
    x = np.zeros(shares.size)
    for weights in (shares, np.ones(shares.size)):
        room = upper - x
        while TOTAL - x.sum() > 1e-9 and np.any((weights > 0) & (room > 1e-12)):
            open_ = (weights > 0) & (room > 1e-12)
            add = np.minimum((TOTAL - x.sum()) * np.where(open_, weights, 0) / weights[open_].sum(), room)
            x += add
            room = upper - x
    return x


@st.composite
def blends(draw, max_ingredients: int = 8, max_nutrients: int = 5) -> Blend:
    """Contents 0-50 per unit, prices 50-900 per tonne, inclusion limits of 5-100 % (at
    least one ingredient up to 100 %), and specs (a min, a max or both, 1-20 % away)
    around the levels of a drawn mixture within those limits.

    A spec is never an equality: with every inclusion on a grid (scale steps), proving
    that no grid point meets an exact level is number theory (HiGHS's presolve does it;
    our branch and bound would search until its limit), and specs are ranges in practice.
    """
    n = draw(st.integers(3, max_ingredients))
    k = draw(st.integers(2, max_nutrients))
    contents = _whole_numbers(draw, 0, 500, n * k).reshape(k, n) / 10
    prices = _whole_numbers(draw, 50, 900, n)
    upper = np.array(draw(st.lists(st.sampled_from([100.0, 60.0, 30.0, 15.0, 5.0]), min_size=n, max_size=n)))
    upper[draw(st.integers(0, n - 1))] = TOTAL
    shares = _whole_numbers(draw, 0, 9, n)
    shares[0] += 1
    levels = contents @ _mixture(shares, upper) / TOTAL
    sides = draw(st.lists(st.sampled_from(["min", "max", "both", "none"]), min_size=k, max_size=k))
    slack = _whole_numbers(draw, 1, 20, k) / 100
    rows, rhs = [], []
    for i, side in enumerate(sides):
        if side in ("min", "both"):
            rows.append(-contents[i] / TOTAL)
            rhs.append(-levels[i] * (1 - slack[i]))
        if side in ("max", "both"):
            rows.append(contents[i] / TOTAL)
            rhs.append(levels[i] * (1 + slack[i]))
    return Blend(prices=prices, upper=upper, A_ub=np.array(rows).reshape(len(rows), n), b_ub=np.array(rhs))


def _case(blend: Blend, extra: int = 0, A_ub=None, b_ub=None, A_eq=None, b_eq=None, upper=None,
          integrality=None, semicontinuous=None) -> Case:
    """The blend's MIP with `extra` columns after the inclusions, and extra rows."""
    n = blend.n
    width = n + extra
    widen = lambda A: np.hstack([A, np.zeros((A.shape[0], extra))])  # noqa: E731
    spec_rows = widen(blend.A_ub)
    total_row = widen(np.ones((1, n)))
    return Case(
        c=np.concatenate([blend.prices / TOTAL, np.zeros(extra)]),
        A_ub=spec_rows if A_ub is None else np.vstack([spec_rows, A_ub]),
        b_ub=blend.b_ub if b_ub is None else np.concatenate([blend.b_ub, b_ub]),
        A_eq=total_row if A_eq is None else np.vstack([total_row, A_eq]),
        b_eq=np.array([TOTAL]) if b_eq is None else np.concatenate([[TOTAL], b_eq]),
        upper=np.concatenate([blend.upper, upper if upper is not None else np.zeros(0)]),
        integrality=np.zeros(width) if integrality is None else integrality,
        semicontinuous=np.zeros(width) if semicontinuous is None else semicontinuous,
    )


@st.composite
def min_if_used(draw, max_ingredients: int = 8, max_nutrients: int = 5) -> Case:
    """A blend where some ingredients have a minimum inclusion if used (semi-continuous)."""
    blend = draw(blends(max_ingredients, max_nutrients))
    thresholds = np.array(draw(st.lists(st.sampled_from([0.0, 1.0, 2.5, 5.0, 10.0, 20.0]),
                                        min_size=blend.n, max_size=blend.n)))
    return _case(blend, semicontinuous=np.minimum(thresholds, blend.upper))


@st.composite
def max_ingredients(draw, max_ingredients: int = 8, max_nutrients: int = 5) -> Case:
    """A blend of at most K ingredients: binary z_j with x_j <= u_j z_j, sum z <= K (the
    builder's model), with some minimums if used too."""
    blend = draw(blends(max_ingredients, max_nutrients))
    n = blend.n
    K = draw(st.integers(1, n - 1))
    thresholds = np.array(draw(st.lists(st.sampled_from([0.0, 0.0, 2.0, 5.0]), min_size=n, max_size=n)))
    indicator = np.hstack([np.eye(n), -np.diag(blend.upper)])
    count = np.concatenate([np.zeros(n), np.ones(n)])[None, :]
    return _case(blend, extra=n, A_ub=np.vstack([indicator, count]), b_ub=np.concatenate([np.zeros(n), [K]]),
                 upper=np.ones(n), integrality=np.concatenate([np.zeros(n), np.ones(n)]),
                 semicontinuous=np.concatenate([np.minimum(thresholds, blend.upper), np.zeros(n)]))


def _counted(blend: Blend, unit_percent: np.ndarray) -> Case:
    """The blend with x_j = unit_percent_j * n_j for a whole number n_j, where unit_percent_j
    > 0 (the % of the batch one pack or one scale step is); other inclusions stay free."""
    n = blend.n
    counted = np.flatnonzero(unit_percent > 0)
    link = np.zeros((counted.size, n + counted.size))
    link[np.arange(counted.size), counted] = 1.0
    link[np.arange(counted.size), n + np.arange(counted.size)] = -unit_percent[counted]
    most = np.floor(blend.upper[counted] / unit_percent[counted] + 1e-9)
    integrality = np.concatenate([np.zeros(n), np.ones(counted.size)])
    return _case(blend, extra=counted.size, A_eq=link, b_eq=np.zeros(counted.size), upper=most,
                 integrality=integrality)


@st.composite
def pack_sizes(draw, max_ingredients: int = 8, max_nutrients: int = 5) -> Case:
    """A blend where some ingredients come in whole packs (20, 25 or 50 kg) of a 500-2000 kg
    batch: the amount per batch is pack * n_j, so x_j = pack * n_j / batch * 100."""
    blend = draw(blends(max_ingredients, max_nutrients))
    batch = draw(st.sampled_from([500.0, 1000.0, 2000.0]))
    packs = np.array(draw(st.lists(st.sampled_from([0.0, 0.0, 20.0, 25.0, 50.0]), min_size=blend.n,
                                   max_size=blend.n)))
    if not packs.any():
        packs[0] = 25.0
    return _counted(blend, packs / batch * TOTAL)


@st.composite
def scale_steps(draw, max_ingredients: int = 8, max_nutrients: int = 5) -> Case:
    """A blend weighed on a scale with a step of 1-10 kg in a 500-2000 kg batch: every
    ingredient's amount is step * n_j."""
    blend = draw(blends(max_ingredients, max_nutrients))
    batch = draw(st.sampled_from([500.0, 1000.0, 2000.0]))
    step = draw(st.sampled_from([1.0, 2.5, 5.0, 10.0]))
    return _counted(blend, np.full(blend.n, step / batch * TOTAL))


FAMILIES = [min_if_used, max_ingredients, pack_sizes, scale_steps]


@pytest.mark.parametrize("family", FAMILIES, ids=lambda f: f.__name__)
@settings(max_examples=120, **SLOW)
@given(data=st.data())
def test_blend_mips_agree_with_highs(family, data):
    check_against_highs(data.draw(family()))


@pytest.mark.parametrize("family", FAMILIES, ids=lambda f: f.__name__)
@settings(max_examples=25, **SLOW)
@given(data=st.data())
def test_blend_mips_with_the_primal_method_agree_with_highs(family, data):
    check_against_highs(data.draw(family()), algorithm="primal")


@pytest.mark.long
@pytest.mark.parametrize("family", FAMILIES, ids=lambda f: f.__name__)
@settings(max_examples=1500, **SLOW)
@given(data=st.data())
def test_many_larger_blend_mips_agree_with_highs(family, data):
    check_against_highs(data.draw(family(max_ingredients=12, max_nutrients=6)))


def test_one_ingredient_at_most_picks_the_cheapest_that_meets_the_specs():
    # Max ingredients 1: the blend is one ingredient at 100 %; by hand the cheapest one
    # meeting protein >= 20 is the second (30 % protein at 300), not the first (10 %).
    blend = Blend(prices=np.array([100.0, 300.0, 500.0]), upper=np.full(3, 100.0),
                  A_ub=np.array([[-10.0, -30.0, -40.0]]) / TOTAL, b_ub=np.array([-20.0]))
    n = blend.n
    case = _case(blend, extra=n, A_ub=np.vstack([np.hstack([np.eye(n), -np.diag(blend.upper)]),
                                                 np.concatenate([np.zeros(n), np.ones(n)])[None, :]]),
                 b_ub=np.concatenate([np.zeros(n), [1]]), upper=np.ones(n),
                 integrality=np.concatenate([np.zeros(n), np.ones(n)]))
    ours = check_against_highs(case)
    np.testing.assert_allclose(ours.x[:n], [0, 100, 0], atol=1e-9)
    assert ours.objective == pytest.approx(300.0)  # by hand


# ----- MIPLIB 3 problems with published optima ------------------------------------------------

# Published optima: the "BEST SOLN" of each file's MIPLIB 3 header, as listed (with the LP
# relaxation) in ../shared/reference/miplib/README.md.
PUBLISHED = {"stein9": (5.0, 4.0), "stein15": (9.0, 7.0)}


def miplib_file(name: str) -> Path:
    """The problem's MPS file; absent, a skip (a failure under CI; tests/reference_data.py)."""
    return reference_file(f"miplib/{name}.mps")


@pytest.mark.parametrize("name", list(PUBLISHED))
def test_miplib_problems_reach_the_published_optimum(name):
    model = read(miplib_file(name))
    result = solve_mip_form(model.form, model.integrality)
    optimum, relaxation = PUBLISHED[name]
    # MIPLIB 3 published optimum and LP relaxation (README of the reference folder).
    assert result.status == "optimal", result.message
    assert result.objective == pytest.approx(optimum, abs=1e-9)
    assert result.lp_objective == pytest.approx(relaxation, abs=1e-9)
    assert result.gap == 0 and result.nodes >= 1
    x = result.x
    assert np.array_equal(x, np.round(x))
    assert np.all(model.form.A @ x >= model.form.row_lower - 1e-9)


def test_diamond_is_integer_infeasible_though_its_lp_is_feasible():
    model = read(miplib_file("diamond"))
    result = solve_mip_form(model.form, model.integrality)
    # MIPLIB 3 (README of the reference folder): integer infeasible, LP optimum -1.0.
    assert result.status == "infeasible" and result.x is None and result.objective is None
    assert result.lp_objective == pytest.approx(-1.0)


@pytest.mark.parametrize("name", [*PUBLISHED, "diamond"])
def test_miplib_problems_in_highs_agree(name):
    path = miplib_file(name)
    model = read(path)
    ours = solve_mip_form(model.form, model.integrality)
    h = _highs(path)
    h.run()
    # HiGHS reading and solving the same file.
    if name == "diamond":
        assert h.getModelStatus() == highspy.HighsModelStatus.kInfeasible
    else:
        assert h.getInfo().objective_function_value == pytest.approx(ours.objective, abs=1e-9)


# ----- node and time limits --------------------------------------------------------------------


def test_node_limit_returns_the_best_solution_with_its_proven_gap():
    model = read(miplib_file("stein15"))
    result = solve_mip_form(model.form, model.integrality, node_limit=2)
    assert result.status == "time_limit" and "node limit (2)" in result.message
    assert result.nodes == 2
    x = result.x
    assert x is not None and np.array_equal(x, np.round(x))
    assert np.all(model.form.A @ x >= model.form.row_lower - 1e-9)
    assert result.objective == pytest.approx(model.form.c @ x)
    optimum = PUBLISHED["stein15"][0]
    # MIPLIB 3 published optimum: the bound is below it, the solution not below it.
    assert result.bound <= optimum <= result.objective
    assert result.gap == pytest.approx((result.objective - result.bound) / abs(result.objective))


def test_time_limit_before_any_solution_says_so():
    model = read(miplib_file("stein9"))
    result = solve_mip_form(model.form, model.integrality, time_limit=0)
    assert result.status == "time_limit" and result.x is None and result.gap == np.inf
    assert "time limit" in result.message and "before any solution" in result.message


@settings(max_examples=10, **SLOW)
@given(case=scale_steps())
def test_every_node_limit_leaves_a_solution_of_the_mip_or_none(case):
    status, optimum = highs_milp(case)
    ours = case.solve(node_limit=3)
    assert ours.status in ("optimal", "time_limit", "infeasible")
    if ours.x is not None:
        assert_meets_every_constraint(case, ours.x)
        # scipy.optimize.milp (HiGHS): its optimum lies between our bound and our solution.
        assert ours.bound <= optimum * (1 + RTOL) and optimum <= ours.objective * (1 + RTOL)


# ----- the API ---------------------------------------------------------------------------------


def test_without_integer_columns_it_is_the_lp():
    c, A_ub, b_ub = [2.0, 3.0], [[-1.0, -1.0]], [-4.0]
    ours = solve_mip(c, A_ub, b_ub, bounds=[(0, 3), (0, None)])
    # scipy.optimize.linprog (HiGHS) on the same LP.
    assert ours.status == "optimal"
    assert ours.objective == pytest.approx(linprog(c, A_ub, b_ub, bounds=[(0, 3), (0, None)]).fun)
    assert ours.nodes == 1 and ours.lp_objective == pytest.approx(ours.objective)


def test_semi_continuous_edge_cases_by_hand():
    # max x + y, x + y <= 4; x semi-continuous from 5 but at most 3, so always 0; y with a
    # positive lower bound 1 and threshold 2, so always at least 2: optimum -4 at (0, 4).
    ours = solve_mip([-1, -1], [[1, 1]], [4], bounds=[(0, 3), (1, None)], semicontinuous=[5, 2])
    assert ours.status == "optimal" and ours.objective == pytest.approx(-4)
    np.testing.assert_allclose(ours.x, [0, 4])
    # min x with x semi-continuous from 2.5 and x >= 0.5 as a row: x = 2.5 (by hand).
    ours = solve_mip([1.0], [[-1.0]], [-0.5], bounds=[(0, 10)], semicontinuous=[2.5])
    assert ours.objective == pytest.approx(2.5)
    # Integer and semi-continuous at once (semi-integer): x = 0 or a whole number in 3..10,
    # with x >= 3.5: x = 4 (by hand).
    ours = solve_mip([1.0], [[-1.0]], [-3.5], bounds=[(0, 10)], integrality=1, semicontinuous=[3])
    assert ours.objective == pytest.approx(4.0) and ours.x[0] == 4.0


def test_ranging_and_marginals_of_the_solution_found():
    case = Case(c=np.array([3.0, 2.0, 3.5]), A_ub=np.array([[-1.0, -1.0, -1.0]]), b_ub=np.array([-2.5]),
                A_eq=np.zeros((0, 3)), b_eq=np.zeros(0), upper=np.array([5.0, 1.0, 5.0]),
                integrality=np.array([1.0, 0.0, 0.0]), semicontinuous=np.zeros(3))
    ours = check_against_highs(case, ranging=True)
    # By hand: y = 1 (cheapest), x = 1 (whole), z = 0.5: cost 3 + 2 + 1.75 = 6.75, below
    # x = 2, y = 0.5 (7). With x fixed at 1, one more unit of the row costs z's 3.5.
    np.testing.assert_allclose(ours.x, [1, 1, 0.5])
    fixed = ours.fixed_lp
    assert fixed.cost_ranges is not None and fixed.marginals_ub[0] == pytest.approx(-3.5)


def test_inputs_are_never_modified():
    c, A_ub, b_ub = np.array([1.0, 1.0]), np.array([[-1.0, -1.0]]), np.array([-1.5])
    integrality, semi, bounds = np.array([1, 0]), np.array([0.0, 0.7]), [(0, 4), (0, 4)]
    before = [a.copy() for a in (c, A_ub, b_ub, integrality, semi)]
    solve_mip(c, A_ub, b_ub, bounds=bounds, integrality=integrality, semicontinuous=semi)
    for a, b in zip((c, A_ub, b_ub, integrality, semi), before):
        np.testing.assert_array_equal(a, b)
    assert bounds == [(0, 4), (0, 4)]


@pytest.mark.parametrize(
    "kwargs, message",
    [
        (dict(integrality=[1, 2]), "0 (continuous) or 1 (integer)"),
        (dict(integrality=[1, 0, 1]), "integrality must have 2 entries"),
        (dict(semicontinuous=[-1, 0]), "a threshold must be a finite number >= 0"),
        (dict(semicontinuous=[1, 0], bounds=[(-1, 5), (0, 5)]), "lower bound -1.0; it must be 0 or more"),
        (dict(node_limit=-1), "node_limit must be None or a number >= 0"),
        (dict(algorithm="dual"), 'algorithm must be "auto" or "primal"'),
    ],
)
def test_malformed_arguments_raise(kwargs, message):
    with pytest.raises(ValueError, match=message.replace("(", r"\(").replace(")", r"\)")):
        solve_mip([1, 1], [[1, 1]], [3], **kwargs)


def test_statuses_are_the_documented_ones():
    assert set(MIP_STATUSES) == {"optimal", "infeasible", "unbounded", "time_limit", "numerical_trouble"}
    assert solve_mip([-1], bounds=[(0, None)], integrality=[1]).status == "unbounded"


# ----- integer columns in MPS files --------------------------------------------------------------


def _highs(path) -> highspy.Highs:
    """A quiet HiGHS that has read `path`."""
    h = highspy.Highs()
    h.setOptionValue("output_flag", False)
    assert h.readModel(str(path)) != highspy.HighsStatus.kError
    return h


def _highs_columns(path) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """HiGHS's integrality (0/1), lower and upper bounds of the columns of an MPS file."""
    lp = _highs(path).getLp()
    integrality = np.array([int(v) for v in lp.integrality_]) if len(lp.integrality_) else np.zeros(lp.num_col_)
    return integrality, np.array(lp.col_lower_), np.array(lp.col_upper_)


MARKERS = """\
NAME          MARKERS
ROWS
 N  COST
 L  CAP
COLUMNS
    A         COST               1.0   CAP                1.0
    MARKER    'MARKER'                 'INTORG'
    B         COST               2.0   CAP                1.0
    C         COST               3.0   CAP                1.0
    D         COST               4.0   CAP                1.0
    MARKER    'MARKER'                 'INTEND'
    E         COST               5.0   CAP                1.0
    F         COST               6.0   CAP                1.0
    G         COST               7.0   CAP                1.0
RHS
    RHS       CAP               10.0
BOUNDS
 LO BND       C                  2.0
 UP BND       D                  7.0
 BV BND       E
 LI BND       F                  1.0
 UI BND       G                  9.0
ENDATA
"""


@pytest.mark.parametrize("name", ["markers", *PUBLISHED, "diamond"])
def test_integer_columns_read_as_highs_reads_them(tmp_path, name):
    if name == "markers":
        path = tmp_path / "markers.mps"
        path.write_text(MARKERS)
    else:
        path = miplib_file(name)
    model = read(path)
    integrality, lower, upper = _highs_columns(path)
    # highspy reading the same file: integer columns, and binary bounds for an integer
    # column that no BOUNDS line names.
    np.testing.assert_array_equal(model.integrality, integrality)
    np.testing.assert_array_equal(model.form.col_lower, lower)
    np.testing.assert_array_equal(model.form.col_upper, upper)
    if name == "markers":
        assert model.integrality.tolist() == [0, 1, 1, 1, 1, 1, 1] and model.is_mip
        assert model.form.col_upper[1] == 1.0 and model.form.col_upper[2] == np.inf


@pytest.mark.parametrize("free", [False, True], ids=["fixed", "free"])
@pytest.mark.parametrize("name", ["markers", "stein15"])
def test_written_mip_reads_back_with_its_integer_columns(tmp_path, name, free):
    if name == "markers":
        source = tmp_path / "markers.mps"
        source.write_text(MARKERS)
    else:
        source = miplib_file(name)
    model = read(source)
    path = tmp_path / "copy.mps"
    write(path, model, free=free)
    again = read(path)
    np.testing.assert_array_equal(again.integrality, model.integrality)
    for key in ("c", "A", "row_lower", "row_upper", "col_lower", "col_upper"):
        np.testing.assert_array_equal(getattr(again.form, key), getattr(model.form, key), err_msg=key)
    # highspy reads our copy with the same integer columns and bounds.
    integrality, lower, upper = _highs_columns(path)
    np.testing.assert_array_equal(integrality, model.integrality)
    np.testing.assert_array_equal(lower, model.form.col_lower)
    np.testing.assert_array_equal(upper, model.form.col_upper)
    assert solve_mip_form(again.form, again.integrality).objective == pytest.approx(
        solve_mip_form(model.form, model.integrality).objective)


def test_a_form_written_with_integrality_keeps_unbounded_integer_columns(tmp_path):
    form = StandardForm(c=np.array([1.0, 1.0]), A=np.array([[1.0, 1.0]]), row_lower=np.array([2.5]),
                        row_upper=np.array([np.inf]), col_lower=np.zeros(2), col_upper=np.full(2, np.inf))
    path = tmp_path / "form.mps"
    write(path, form, integrality=[1, 0])
    assert " PL BND" in path.read_text()
    again = read(path)
    assert again.integrality.tolist() == [1, 0] and np.all(again.form.col_upper == np.inf)
    integrality, _, upper = _highs_columns(path)
    # highspy: the integer column keeps its infinite upper bound.
    assert integrality.tolist() == [1, 0] and np.all(upper == np.inf)


def test_an_unknown_marker_is_an_error_naming_the_line(tmp_path):
    path = tmp_path / "bad.mps"
    path.write_text(MARKERS.replace("'INTEND'", "'SOSEND'"))
    with pytest.raises(MPSError, match="line 11: a MARKER line must say 'INTORG' or 'INTEND'"):
        read(path, format="fixed")


def test_packs_no_batch_can_meet_are_infeasible_where_highs_presolve_errs():
    # A pack-size blend drawn by the family above: x0 = 4 n0, x1 = 4 n1, x2 = 5 n2 whole
    # packs, x0 <= 60, so x1 + x2 >= 40 with x1 <= 12; the only mix of whole packs, x2 = 40,
    # breaks 0.001 x1 + 0.002 x2 <= 0.06565. HiGHS's milp with presolve ends in "solve
    # error" (status 4) here; without presolve it says infeasible, as we do.
    case = Case(c=np.array([0.5, 0.5, 0.5, 0.0, 0.0, 0.0]),
                A_ub=np.array([[0.0, 0.001, 0.002, 0.0, 0.0, 0.0], [0.0] * 6]), b_ub=np.array([0.06565, 0.0]),
                A_eq=np.array([[1.0, 1, 1, 0, 0, 0], [1, 0, 0, -4, 0, 0], [0, 1, 0, 0, -4, 0], [0, 0, 1, 0, 0, -5]]),
                b_eq=np.array([100.0, 0.0, 0.0, 0.0]), upper=np.array([60.0, 15.0, 100.0, 15.0, 3.0, 20.0]),
                integrality=np.array([0.0, 0, 0, 1, 1, 1]), semicontinuous=np.zeros(6))
    assert check_against_highs(case).status == "infeasible"

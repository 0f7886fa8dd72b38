"""Every construct of the formulation model, from a small workbook to the JSON, checked
against an independent LP written out in each test from the workbook's meaning (not with
blendkit's builder) and solved with scipy's HiGHS.

The scenarios (the "Fenwick Cross" mill and its customers) are invented; the numbers are
made up for the tests and are not feeding advice.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from scipy.optimize import linprog
from typer.testing import CliRunner

from blendkit.cli import app
from tests.workbooks import make_workbook

runner = CliRunner()

# Three feeds: barley, soybean meal, limestone (made-up analyses).
HEADER = ["Ingredient", "Cost", "Min", "Max", "Crude protein (%)", "Calcium (%)", "Phosphorus (%)", "Dry matter (%)"]
FEEDS = [
    ["Barley", 180, None, None, 11.0, 0.05, 0.35, 87.0],
    ["Soybean meal", 420, None, None, 46.0, 0.30, 0.65, 89.0],
    ["Limestone", 60, None, None, 0.0, 38.0, 0.0, 99.0],
    ["Wheat bran", 150, None, None, 15.5, 0.10, 1.10, 88.0],
]
COST = np.array([row[1] for row in FEEDS], dtype=float)
CP, CA, P, DM = (np.array([row[k] for row in FEEDS], dtype=float) for k in (4, 5, 6, 7))


def solve(book, *extra):
    """Run `blendkit solve BOOK --json`; returns the JSON document."""
    result = runner.invoke(app, ["solve", str(book), "--json", *map(str, extra)])
    assert result.exit_code in (0, 3), result.output
    return json.loads(result.stdout)


def reference(c, A_ub, b_ub, A_eq=None, b_eq=None, bounds=(0, None)):
    """The independent optimum from scipy's HiGHS."""
    res = linprog(c, A_ub=np.array(A_ub), b_ub=np.array(b_ub), A_eq=A_eq, b_eq=b_eq, bounds=bounds, method="highs")
    assert res.status == 0, res.message
    return res


def blend_reference(rows, rhs):
    """A one-blend LP in inclusions (%): cost/100, sum = 100, the given <= rows."""
    return reference(COST / 100, rows, rhs, A_eq=np.ones((1, len(COST))), b_eq=[100])


def test_ratio_spec(tmp_path):
    # Calcium / Phosphorus between 1.8 and 2.2, protein at least 18 %.
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 18, None], ["Calcium / Phosphorus", 1.8, 2.2]]
    doc = solve(make_workbook(tmp_path, [HEADER, *FEEDS], specs))
    # The independent LP: Ca - 1.8 P >= 0 and Ca - 2.2 P <= 0 on the levels (x / 100 * content).
    ref = blend_reference([-CP / 100, -(CA - 1.8 * P) / 100, (CA - 2.2 * P) / 100], [-18, 0, 0])
    assert doc["cost"] == pytest.approx(ref.fun, rel=1e-9)
    ratio = doc["nutrients"]["Calcium / Phosphorus"]
    assert 1.8 - 1e-9 <= ratio <= 2.2 + 1e-9
    assert ratio == pytest.approx((CA @ ref.x) / (P @ ref.x), rel=1e-7)


def test_ratio_shadow_price_is_the_slope_of_the_cost(tmp_path):
    # The reported shadow price of a binding ratio bound against the slope of the
    # independent LP's optimum (HiGHS). The ratio r sits in the matrix, not in a right-hand
    # side, so the optimum is a smooth (rational) function of r while the basis stays:
    # a central difference (cost(r + h) - cost(r - h)) / 2h is then off by O(h^2), about
    # 1e-10 relative at h = 1e-4 here, and HiGHS's optima are exact to rounding.
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 18, None], ["Calcium / Phosphorus", 3.0, None]]
    doc = solve(make_workbook(tmp_path, [HEADER, *FEEDS], specs))
    limit = next(item for item in doc["limits"] if item["kind"] == "ratio")
    assert limit["binding"] and limit["cell"] == "Specs!B3"

    def cost(r):
        return blend_reference([-CP / 100, -(CA - r * P) / 100], [-18, 0]).fun

    h = 1e-4
    assert limit["shadow_price"] == pytest.approx((cost(3.0 + h) - cost(3.0 - h)) / (2 * h), rel=1e-7)
    assert doc["cost"] == pytest.approx(cost(3.0), rel=1e-9)


def test_dry_matter_spec(tmp_path):
    # Protein at least 21 % of dry matter (as-fed protein / (dry matter / 100)).
    specs = [["Nutrient", "Min", "Max", "Basis"], ["Crude protein", 21, None, "dry matter"], ["Calcium", 0.9, None, None]]
    doc = solve(make_workbook(tmp_path, [HEADER, *FEEDS], specs))
    ref = blend_reference([-(CP - 21 * DM / 100) / 100, -CA / 100], [0, -0.9])
    assert doc["cost"] == pytest.approx(ref.fun, rel=1e-9)
    level = doc["nutrients"]["Crude protein (dry matter)"]
    assert level == pytest.approx(21, rel=1e-7)
    assert level == pytest.approx((CP @ ref.x) / (DM @ ref.x) * 100, rel=1e-7)
    limit = next(item for item in doc["limits"] if item["name"] == "Crude protein")

    def cost(low):
        return blend_reference([-(CP - low * DM / 100) / 100, -CA / 100], [0, -0.9]).fun

    # The bound sits in the matrix (as for a ratio above): a central difference of
    # HiGHS's optima, off by O(h^2).
    h = 1e-4
    assert limit["shadow_price"] == pytest.approx((cost(21 + h) - cost(21 - h)) / (2 * h), rel=1e-7)


def test_group_limit(tmp_path):
    # Soybean meal and wheat bran together at most 20 % of the blend.
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 17, None], ["Calcium", 1.0, None]]
    groups = [["Group", "Ingredients", "Min", "Max"], ["Protein feeds", "Soybean meal; Wheat bran", None, 20]]
    doc = solve(make_workbook(tmp_path, [HEADER, *FEEDS], specs, sheets={"Groups": groups}))
    ref = blend_reference([-CP / 100, -CA / 100, [0, 1, 0, 1]], [-17, -1.0, 20])
    assert doc["cost"] == pytest.approx(ref.fun, rel=1e-9)
    group = next(item for item in doc["limits"] if item["kind"] == "group")
    assert group["level"] == pytest.approx(ref.x[1] + ref.x[3], rel=1e-7)
    assert group["cell"] == "Groups!D2"


def test_diet_mode(tmp_path):
    # Foods per 100 g, daily totals; amounts in 100 g units with portion limits.
    header = ["Ingredient", "Cost", "Unit", "Min", "Max", "Energy (kcal)", "Protein (g)", "Calcium (mg)"]
    foods = [
        ["Oat flakes", 0.30, "100 g", None, 2, 370, 13, 50],
        ["Milk", 0.12, "100 g", None, 6, 64, 3.4, 120],
        ["Lentils", 0.35, "100 g", None, 3, 350, 24, 50],
        ["Bread", 0.25, "100 g", None, 4, 250, 9, 100],
    ]
    specs = [["Nutrient", "Min", "Max"], ["Energy", 2000, 2600], ["Protein", 60, None], ["Calcium", 900, None]]
    doc = solve(make_workbook(tmp_path, [header, *foods], specs, [["Setting", "Value"], ["Mode", "diet"]]))
    c = np.array([f[1] for f in foods])
    energy, protein, calcium = (np.array([f[k] for f in foods], dtype=float) for k in (5, 6, 7))
    ref = reference(c, [-energy, energy, -protein, -calcium], [-2000, 2600, -60, -900],
                    bounds=[(0, f[4]) for f in foods])
    assert doc["cost"] == pytest.approx(ref.fun, rel=1e-9)
    for (name, amount), expected in zip(doc["ingredients"].items(), ref.x):
        assert amount == pytest.approx(expected, abs=1e-7)
    assert doc["nutrients"]["Calcium"] == pytest.approx(calcium @ ref.x, rel=1e-9)


def test_products_stocks_and_product_limits(tmp_path):
    # Two products from shared stocks; soybean meal is scarce (5 t on hand).
    header = [*HEADER, "Stock"]
    feeds = [[*row, None] for row in FEEDS]
    feeds[1][-1] = 5000  # kg of soybean meal on hand
    specs = [
        ["Nutrient", "Min", "Max", "Product"],
        ["Calcium", 0.8, None, None],
        ["Crude protein", 20, None, "Starter"],
        ["Crude protein", 15, None, "Grower"],
    ]
    products = [["Product", "Amount"], ["Starter", 10000], ["Grower", 30000]]
    limits = [["Product", "Ingredient", "Min", "Max"], ["Grower", "Wheat bran", None, 10]]
    book = make_workbook(tmp_path, [header, *feeds], specs, sheets={"Products": products, "Limits": limits})
    doc = solve(book)
    # The independent LP: variables x[s, j], x[g, j] in %; cost in EUR = sum amount_t * x/100 * cost.
    J = len(FEEDS)
    tonnes = np.array([10.0, 30.0])
    c = np.concatenate([tonnes[0] * COST / 100, tonnes[1] * COST / 100])
    zero = np.zeros(J)
    rows = [
        np.concatenate([-CA / 100, zero]), np.concatenate([zero, -CA / 100]),
        np.concatenate([-CP / 100, zero]), np.concatenate([zero, -CP / 100]),
        np.concatenate([np.eye(J)[1] * 10000 / 100, np.eye(J)[1] * 30000 / 100]),  # stock
    ]
    rhs = [-0.8, -0.8, -20, -15, 5000]
    A_eq = np.vstack([np.concatenate([np.ones(J), zero]), np.concatenate([zero, np.ones(J)])])
    bounds = [(0, None)] * J + [(0, None)] * 3 + [(0, 10)]
    ref = reference(c, rows, rhs, A_eq=A_eq, b_eq=[100, 100], bounds=bounds)
    assert doc["total_cost"] == pytest.approx(ref.fun, rel=1e-9)
    assert doc["products"]["Starter"]["ingredients"]["Soybean meal"] == pytest.approx(ref.x[1], abs=1e-7)
    assert doc["products"]["Grower"]["ingredients"]["Wheat bran"] == pytest.approx(ref.x[J + 3], abs=1e-7)
    stock = doc["stocks"]["Soybean meal"]
    assert stock["available"] == 5000
    assert stock["used"] == pytest.approx(5000, rel=1e-7)  # the scarce stock is used up
    # What one more kg of soybean meal is worth: the slope of the independent optimum
    # (HiGHS). The stock is a right-hand side, so the optimum is piecewise linear in it:
    # the slopes over 1 kg and 10 kg agree (one linear piece), and a step inside one
    # piece gives the slope exactly, to rounding.
    def slope(h):
        more = reference(c, rows, rhs[:-1] + [5000 + h], A_eq=A_eq, b_eq=[100, 100], bounds=bounds).fun
        return (more - ref.fun) / h

    assert slope(1.0) == pytest.approx(slope(10.0), rel=1e-9)
    assert stock["shadow_price"] == pytest.approx(slope(10.0), rel=1e-7)
    assert stock["shadow_price"] < 0
    # Each product's cost is per tonne of that product; they add up to the total.
    total = sum(doc["products"][name]["cost"] * t for name, t in zip(("Starter", "Grower"), tonnes))
    assert total == pytest.approx(doc["total_cost"], rel=1e-9)
    limit = next(item for item in doc["products"]["Grower"]["limits"] if item["cell"] == "Limits!D2")
    assert limit["product"] == "Grower" and limit["kind"] == "ingredient"


def test_stock_in_a_single_blend(tmp_path):
    # 2000 kg batch with only 100 kg of limestone on hand: at most 5 % limestone.
    header = [*HEADER, "Stock"]
    feeds = [[*row, None] for row in FEEDS]
    feeds[2][-1] = 100
    specs = [["Nutrient", "Min", "Max"], ["Calcium", 1.5, None], ["Crude protein", 14, None]]
    book = make_workbook(tmp_path, [header, *feeds], specs, [["Setting", "Value"], ["Batch size", 2000]])
    doc = solve(book)
    with_stock = blend_reference([-CA / 100, -CP / 100, [0, 0, 2000 / 100, 0]], [-1.5, -14, 100])
    assert doc["status"] == "optimal"
    assert doc["cost"] == pytest.approx(with_stock.fun, rel=1e-9)
    assert doc["ingredients"]["Limestone"] == pytest.approx(5.0, rel=1e-9)


def _ranging_reference(c, A_ub, b_ub, A_eq, b_eq, bounds):
    """HiGHS's own cost ranging (highspy's getRanging) for the same LP."""
    import highspy
    import scipy.sparse as sp

    n = len(c)
    A = np.vstack([A_ub, A_eq])
    h = highspy.Highs()
    h.setOptionValue("output_flag", False)
    lp = highspy.HighsLp()
    lp.num_col_, lp.num_row_ = n, A.shape[0]
    lp.col_cost_ = np.asarray(c, dtype=float)
    lp.col_lower_ = np.array([lo for lo, _ in bounds], dtype=float)
    lp.col_upper_ = np.array([highspy.kHighsInf if hi is None else hi for _, hi in bounds], dtype=float)
    lp.row_lower_ = np.concatenate([np.full(len(b_ub), -highspy.kHighsInf), b_eq])
    lp.row_upper_ = np.concatenate([b_ub, b_eq])
    matrix = sp.csc_matrix(A)
    lp.a_matrix_.format_ = highspy.MatrixFormat.kColwise
    lp.a_matrix_.start_, lp.a_matrix_.index_, lp.a_matrix_.value_ = matrix.indptr, matrix.indices, matrix.data
    h.passModel(lp)
    h.run()
    ranging = h.getRanging()[1]
    return np.array(ranging.col_cost_dn.value_)[:n], np.array(ranging.col_cost_up.value_)[:n]


@pytest.mark.parametrize("seed", range(4))
def test_engine_cost_ranging_matches_highs(seed):
    # Cost ranging: the interval of each cost over which the optimal basis stays optimal,
    # against HiGHS's own ranging on the same blend-shaped LPs (outside reference).
    from blendkit.bench import make_blend
    from blendkit.engine import solve as engine_solve

    lp = make_blend(40, 15, 7, seed)
    args = (lp.c, lp.A_ub, lp.b_ub, lp.A_eq, lp.b_eq, lp.bounds)
    result = engine_solve(*args, ranging=True)
    low, high = _ranging_reference(*args)
    np.testing.assert_allclose(result.cost_ranges[:, 0], low, rtol=1e-6, atol=1e-9)
    np.testing.assert_allclose(np.minimum(result.cost_ranges[:, 1], 1e30), np.minimum(high, 1e30), rtol=1e-6, atol=1e-9)


def test_price_at_which_an_ingredient_is_used_less(tmp_path):
    # The reported price above which wheat bran would be used less: just below it the
    # independent LP (HiGHS) keeps the same inclusion, just above it the inclusion falls;
    # and the price below which it would be used more, likewise.
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 14, None], ["Calcium", 0.9, None]]
    doc = solve(make_workbook(tmp_path, [HEADER, *FEEDS], specs))
    bran = doc["prices"]["Wheat bran"]
    used = doc["ingredients"]["Wheat bran"]
    assert used > 0 and bran["less_above"] > 150 > bran["more_below"]

    def bran_at(price):
        cost = COST.copy()
        cost[3] = price
        res = reference(cost / 100, [-CP / 100, -CA / 100], [-14, -0.9], A_eq=np.ones((1, 4)), b_eq=[100])
        return res.x[3]

    # Steps of 1e-6 relative either side of each end: the ends are exact to that.
    assert bran_at(bran["less_above"] * (1 - 1e-6)) == pytest.approx(used, rel=1e-9)
    assert bran_at(bran["less_above"] * (1 + 1e-6)) < used - 1e-6
    assert bran_at(bran["more_below"] * (1 + 1e-6)) == pytest.approx(used, rel=1e-9)
    assert bran_at(bran["more_below"] * (1 - 1e-6)) > used + 1e-6


def test_range_over_which_a_shadow_price_holds(tmp_path):
    # Each binding spec's shadow price holds while its bound stays within the reported
    # range: re-solving the independent LP (HiGHS) inside the range moves the cost by
    # exactly shadow price x change; past the end the slope is different.
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 16, None], ["Calcium", 0.9, None]]
    doc = solve(make_workbook(tmp_path, [HEADER, *FEEDS], specs))

    def cost(protein, calcium):
        res = linprog(COST / 100, A_ub=[-CP / 100, -CA / 100], b_ub=[-protein, -calcium],
                      A_eq=np.ones((1, 4)), b_eq=[100], method="highs")
        return res.fun if res.status == 0 else None  # None: no blend at all

    base = cost(16, 0.9)
    checked = 0
    for limit in doc["limits"]:
        if limit["kind"] != "nutrient" or not limit["binding"] or limit["holds_to"] is None:
            continue
        bounds = {"Crude protein": 16, "Calcium": 0.9}

        def at(value, name=limit["name"]):
            moved = dict(bounds, **{name: value})
            return cost(moved["Crude protein"], moved["Calcium"])

        bound, end, price = limit["bound"], limit["holds_to"], limit["shadow_price"]
        inside = bound + (end - bound) / 2
        assert at(inside) - base == pytest.approx(price * (inside - bound), rel=1e-8, abs=1e-9)
        below = bound - (bound - limit["holds_from"]) / 2
        assert at(below) - base == pytest.approx(price * (below - bound), rel=1e-8, abs=1e-9)
        beyond = end + (end - bound) / 10
        past = at(beyond)  # past the end: another slope, or no blend at all
        assert past is None or past - base != pytest.approx(price * (beyond - bound), rel=1e-4)
        checked += 1
    assert checked == 2

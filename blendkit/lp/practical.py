"""The formula under the rules a mill can weigh, and what those rules cost.

When a workbook has Min if used, Pack size, Scale step or Max ingredients
(`blendkit.model.weighing.has_weigh_rules`), its LP's optimum is only the start: the
integer program of `blendkit.lp.weigh` is solved exactly by the engine's branch and bound
(`blendkit.engine.solve_mip_form`, within the Time limit setting), and the formula found
is analysed as the LP with those whole-number choices fixed (every ingredient in or out,
every count of packs or steps held): its levels are those of the weights, and its shadow
prices and price ranges hold while the choices stay as they are. Each product carries a
`Practical` record: the LP's cost, the cost under the rules, the proven gap, the nodes,
and which rules bind. When the rules leave no formula although the LP has one, each rule
family is dropped alone and those whose removal restores a formula are named.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from blendkit.engine import LPResult, MIPResult, solve_form, solve_mip_form
from blendkit.lp.analyse import analyse
from blendkit.lp.build import BlendLP
from blendkit.lp.tolerances import AT_BOUND, WEIGH_TIME_LIMIT, ZERO_INCLUSION
from blendkit.lp.weigh import MAX_INGREDIENTS, WeighMIP, build_mip, present_families
from blendkit.model.blend import Blend
from blendkit.model.formula import INFEASIBLE, Formula, Practical, ProductFormula

FIXED_NOTE = ("Shadow prices and price ranges hold with the whole-number choices fixed (each ingredient "
              "in or out, each count of packs or scale steps as found)")
TIME_LIMIT = "time_limit"


def time_limit(blend: Blend) -> float:
    """The seconds the search may take: the Time limit setting, else WEIGH_TIME_LIMIT."""
    return blend.settings.time_limit if blend.settings.time_limit is not None else WEIGH_TIME_LIMIT


def solve_weighed(blend: Blend, lp: BlendLP, families=None) -> tuple[WeighMIP, MIPResult]:
    """The integer program of `blend` (under `families`, default all) and its solution."""
    mip = build_mip(blend, lp) if families is None else build_mip(blend, lp, frozenset(families))
    result = solve_mip_form(mip.form, mip.integrality, mip.semicontinuous, time_limit=time_limit(blend))
    return mip, result


def practical_formula(blend: Blend, lp: BlendLP, lp_result: LPResult) -> tuple[Formula, WeighMIP, MIPResult]:
    """The formula of `blend` under its rules, given its LP `lp` solved optimally as
    `lp_result` (see the module docstring), with the integer program and its solution."""
    mip, result = solve_weighed(blend, lp)
    return _formula(blend, lp, lp_result, mip, result), mip, result


def _formula(blend: Blend, lp: BlendLP, lp_result: LPResult, mip: WeighMIP, result: MIPResult) -> Formula:
    """The Formula of the search's outcome."""
    if result.x is None or not np.isfinite(result.x).all():
        return _without_formula(blend, lp, lp_result, result)
    fixed_lp = dataclasses.replace(lp, form=fixed_form(lp, mip, result.x))
    fixed = solve_form(fixed_lp.form, ranging=True)
    formula = analyse(blend, fixed_lp, fixed)
    if not formula.solved:  # the weights found fail the LP's own check: say so, keep the status
        return dataclasses.replace(formula, message=f"{formula.message} (the formula under the weighing rules)")
    products = tuple(
        dataclasses.replace(product, practical=_practical(blend, lp, lp_result, mip, result, p, product))
        for p, product in enumerate(formula.products)
    )
    notes = (*_status_notes(result), FIXED_NOTE, *formula.notes)
    message = formula.message
    if result.status == TIME_LIMIT:
        message = (f"the time limit of {time_limit(blend):g} s ran out: the best formula found is shown, with a "
                   f"proven gap of {result.gap:.3g} to the cheapest possible")
    return dataclasses.replace(formula, products=products, notes=notes, message=message)


def fixed_form(lp: BlendLP, mip: WeighMIP, x: np.ndarray):
    """The LP with the solution's whole-number choices fixed: columns weighed in whole
    units at count x unit, columns left out at 0, columns used at least their Min if used."""
    lower, upper = lp.form.col_lower.copy(), lp.form.col_upper.copy()
    for k, z in mip.indicators:
        if round(x[z]) == 0:
            upper[k] = 0.0
    used = x[: mip.lp_columns] > ZERO_INCLUSION
    on = (mip.thresholds > 0) & used
    lower[on] = np.maximum(lower[on], mip.thresholds[on])
    upper[(mip.thresholds > 0) & ~used] = 0.0
    for whole in mip.wholes:
        lower[whole.column] = upper[whole.column] = round(x[whole.count]) * whole.unit
    return dataclasses.replace(lp.form, col_lower=lower, col_upper=upper)


def _status_notes(result: MIPResult) -> tuple[str, ...]:
    """A note when the search stopped at its time limit."""
    if result.status != TIME_LIMIT:
        return ()
    return (f"Time limit reached: the best formula found is shown; no formula under the weighing rules "
            f"costs less than {result.bound:.6g} (proven gap {result.gap:.3g}); raise the Time limit "
            "setting to search longer",)


def _lp_costs(lp: BlendLP, lp_result: LPResult) -> np.ndarray:
    """Each product's cost per `Cost per` unit in the LP without the rules."""
    J, P = lp.n_ingredients, len(lp.products)
    x = lp_result.x[: P * J].reshape(P, J)
    return x @ lp.costs * lp.per


def penalties(lp: BlendLP, x: np.ndarray) -> np.ndarray:
    """Each product's penalties of broken soft specs per `Cost per` unit, at the point `x`
    (its first columns the LP's): penalty x violation summed over the elastic columns."""
    found = np.zeros(len(lp.products))
    for row, _side, column in lp.elastic:
        meaning = lp.rows[row]
        found[meaning.product] += meaning.penalty * max(float(x[column]), 0.0)
    return found


def _practical(blend: Blend, lp: BlendLP, lp_result: LPResult, mip: WeighMIP, result: MIPResult, p: int,
               product: ProductFormula) -> Practical:
    """Product p's Practical record."""
    return Practical(
        status=result.status, lp_cost=float(_lp_costs(lp, lp_result)[p]), cost=product.cost,
        gap=float(result.gap), nodes=result.nodes, binding=binding_rules(blend, lp, lp_result, mip, result, p),
        lp_penalty=float(penalties(lp, lp_result.x)[p]), penalty=float(penalties(lp, result.x)[p]),
    )


def binding_rules(blend: Blend, lp: BlendLP, lp_result: LPResult, mip: WeighMIP, result: MIPResult,
                  p: int) -> tuple[str, ...]:
    """Which rules bind in product p, in words: ingredients held out by their Min if used
    (0 where the LP had them above 0 but below it), at their Min if used, and the Max
    ingredients count reached."""
    J = lp.n_ingredients
    name = lp.products[p][0]
    lines = []
    for j, item in enumerate(blend.ingredients):
        k = p * J + j
        s, before, after = mip.thresholds[k], lp_result.x[k], result.x[k]
        if s <= 0:
            continue
        cell = _min_if_used_cell(blend, item, name)
        if after <= ZERO_INCLUSION and ZERO_INCLUSION < before < s:
            lines.append(f"{item.name} held out by its Min if used {s:g} ({cell}); the LP used {before:.4g}")
        elif abs(after - s) <= AT_BOUND * (1 + s):
            lines.append(f"{item.name} at its Min if used {s:g} ({cell})")
    for q, most in mip.limits:
        if q == p:
            count = int((result.x[p * J : (p + 1) * J] > ZERO_INCLUSION).sum())
            in_lp = int((lp_result.x[p * J : (p + 1) * J] > ZERO_INCLUSION).sum())
            if count >= most:
                lines.append(f"Max ingredients {most} reached ({_max_cell(blend, name)}); the LP used {in_lp}")
    return tuple(lines)


def _min_if_used_cell(blend: Blend, item, product: str | None) -> str:
    """The cell a product's Min if used of `item` was read from."""
    for limit in blend.limits:
        if limit.product == product and limit.ingredient == item.name and limit.min_if_used is not None:
            return limit.cells.get("min if used", "Limits")
    return item.cells.get("min if used", item.cells["name"])


def _max_cell(blend: Blend, product: str | None) -> str:
    """The cell a product's Max ingredients was read from."""
    for row in blend.products:
        if row.name == product and row.max_ingredients is not None:
            return row.cells.get("max ingredients", "Products")
    return blend.settings.cells.get("max ingredients", "Settings")


def _without_formula(blend: Blend, lp: BlendLP, lp_result: LPResult, result: MIPResult) -> Formula:
    """The formula when the search found none: infeasible under the rules (the families
    whose removal alone restores a formula named), or stopped (time limit, trouble)."""
    lp_cost = float(lp_result.objective)
    blocking = _blocking(blend, lp) if result.status == INFEASIBLE else ()
    message = _no_formula_message(blend, result, lp_cost, blocking)
    costs = _lp_costs(lp, lp_result)
    products = tuple(
        ProductFormula(name=name, amount=amount, cost=None, ingredients=(), nutrients=(), limits=(),
                       status=result.status, message=message,
                       practical=Practical(status=result.status, lp_cost=float(costs[p]), cost=None, gap=None,
                                           nodes=result.nodes, blocking=blocking,
                                           lp_penalty=float(penalties(lp, lp_result.x)[p])))
        for p, (name, amount) in enumerate(lp.products)
    )
    return Formula(blend=blend, status=result.status, message=message, cost=None, ingredients=(), nutrients=(),
                   limits=(), iterations=result.iterations, notes=blend.notes + lp.notes, products=products)


def _blocking(blend: Blend, lp: BlendLP) -> tuple[str, ...]:
    """The rule families whose removal alone gives a formula (each tried in turn)."""
    present = present_families(blend)
    found = []
    for family in present:
        _, result = solve_weighed(blend, lp, [f for f in present if f != family])
        if result.x is not None:
            found.append(family)
    return tuple(found)


def _no_formula_message(blend: Blend, result: MIPResult, lp_cost: float, blocking: tuple[str, ...]) -> str:
    """Why there is no formula under the rules, in words."""
    if result.status != INFEASIBLE:
        return (f"no formula under the weighing rules was found: {result.message} (the LP without them "
                f"costs {lp_cost:.6g}); raise the Time limit setting")
    head = (f"the specs and limits can be met (LP cost {lp_cost:.6g}), but not under the weighing rules "
            "(Min if used, Pack size, Scale step, Max ingredients)")
    if not blocking:
        return f"{head}; no rule dropped alone gives a formula: they conflict together"
    names = " or ".join(_family_words(blend, family) for family in blocking)
    return f"{head}; a formula exists without {names}"


def _family_words(blend: Blend, family: str) -> str:
    """A rule family's name, with the Settings cell when a setting sets it."""
    key = {MAX_INGREDIENTS: "max ingredients"}.get(family, family)
    cell = blend.settings.cells.get(key)
    return f'"{family.capitalize()}"' + (f" ({cell})" if cell else "")

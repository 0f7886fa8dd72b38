"""Read the engine's answer back into the blend's own terms.

Inclusions (or diet amounts), batch amounts and costs, nutrient levels against their
specs, and one `Limit` per bound the user wrote with its shadow price (d cost / d bound).
The engine's row marginals and reduced costs are d(objective)/d(row or column bound);
this module turns signs, units and the linearised ratio and dry-matter rows back into
the workbook's words:

- a ratio row  per * sum x (a_A - r a_B) >= 0  moves like a right-hand side of
  level_B * dr when r changes by dr, so d cost / d r = marginal * level_B;
- a dry-matter row  per * sum x (a_n - L dm / 100) >= 0  likewise gives
  d cost / d L = marginal * dm_level / 100.

With several products the objective is the run's total cost; a product's own limits are
then divided by that product's amount in `Cost per` units, so every product's shadow
prices read like a single blend's, and stocks stay in total cost per unit of stock.
"""

from __future__ import annotations

import numpy as np

from blendkit.lp.build import (
    GROUP,
    NUTRIENT,
    RATIO,
    STOCK,
    TOTAL,
    BlendLP,
    LPRow,
    ingredient_limits,
)
from blendkit.engine import LPResult
from blendkit.model.formula import (
    SOFT_LIMIT_NOTE,
    Formula,
    IngredientLine,
    Limit,
    NutrientLine,
    ProductFormula,
    StockLine,
)
from blendkit.model.blend import AS_FED, DRY_MATTER, Blend

# A level within this distance (relative to 1 + |bound|) of a bound sits at it.
AT_BOUND = 1e-7
# Inclusions below this (in % or diet units) are reported as 0: they are rounding noise.
ZERO_INCLUSION = 1e-9

MESSAGES = {
    "infeasible": "the specs and limits cannot all be met at once",
    "unbounded": "the cost can fall without limit; check for negative costs",
    "iteration_limit": "the engine stopped at its iteration limit before finding the optimum",
    "numerical_trouble": "the engine ran into numerical trouble",
}


def _at(level: float | None, bound: float | None) -> bool:
    """True when `level` sits at `bound` within AT_BOUND."""
    if level is None or bound is None:
        return False
    return abs(level - bound) <= AT_BOUND * (1 + abs(bound))


def _position(level: float | None, low: float | None, high: float | None) -> str:
    """Where a level sits against its bounds, in words."""
    if low is None and high is None:
        return "no spec"
    if level is None:
        return "undefined"
    if _at(level, low):
        return "at min"
    if _at(level, high):
        return "at max"
    if low is not None and level < low:
        return "below min"
    if high is not None and level > high:
        return "above max"
    return "within"


def _blank_notes(blend: Blend, used: np.ndarray | None) -> tuple[str, ...]:
    """One note per ingredient in the blend (or, unsolved, allowed in it) with blanks."""
    notes = []
    for j, item in enumerate(blend.ingredients):
        in_blend = used[j] if used is not None else item.use
        if in_blend and item.blanks:
            count = len(item.blanks)
            names = ", ".join(item.blanks)
            notes.append(
                f"{item.name}: {count} blank nutrient cell{'s' if count != 1 else ''} "
                f"counted as 0 ({names})"
            )
    return tuple(notes)


def _violation_notes(limits: list[Limit]) -> tuple[str, ...]:
    """One note per soft limit the formula breaks, first among the notes."""
    notes = []
    for limit in limits:
        if limit.violation > 0:
            where = f"{limit.product}: " if limit.product else ""
            notes.append(
                f"{SOFT_LIMIT_NOTE} {where}{limit.name} {limit.side} {limit.bound:g} is missed by "
                f"{limit.violation:.4g} (level {limit.level:.4g}) at a penalty of {limit.penalty:g} per unit ({limit.cell})"
            )
    return tuple(notes)


def _room(lp: BlendLP, result: LPResult, k: int, side, level, binding: bool, known: bool):
    """The bound values between which a limit's shadow price holds (None for an open end).

    `k` indexes the engine's variables (columns, then the rows' activities). A binding
    bound may move as far as the engine's bound ranging allows; a bound that does not
    bind keeps its zero shadow price until it reaches the level.
    """
    if not known or result.bound_ranges is None or level is None or not np.isfinite(level):
        return None, None
    if not binding:
        return (None, float(level)) if side.side == "min" else (float(level), None)
    down, up = result.bound_ranges[k]
    low, high = side.bound - down, side.bound + up
    return (float(low) if np.isfinite(low) else None), (float(high) if np.isfinite(high) else None)


def _price_range(lp: BlendLP, result: LPResult, p: int, j: int, scale: float) -> tuple[float | None, float | None]:
    """The price range of ingredient j in product p over which the formula holds, from
    the engine's cost ranging (None for an open end, or without ranging)."""
    if result.cost_ranges is None:
        return None, None
    per_price = lp.per * scale  # objective coefficient per unit of price
    low, high = result.cost_ranges[p * lp.n_ingredients + j] / per_price
    return (float(low) if np.isfinite(low) else None), (float(high) if np.isfinite(high) else None)


def _ratio(top: float, bottom: float) -> float | None:
    """top / bottom, or None when the bottom is zero."""
    return None if bottom == 0 else top / bottom


def _row_level(lp: BlendLP, row: LPRow, levels: np.ndarray) -> tuple[float | None, float]:
    """A row's level in the workbook's terms, and the factor turning its marginal into
    d cost / d bound (see the module docstring)."""
    if row.kind == RATIO:
        a, b = row.ratio
        return _ratio(levels[a], levels[b]), levels[b]
    if row.kind == NUTRIENT and row.basis == DRY_MATTER:
        dry = levels[lp.dry_matter] / TOTAL
        return _ratio(levels[row.nutrient], dry), dry
    if row.kind == NUTRIENT:
        return levels[row.nutrient], 1.0
    return None, 1.0


def analyse(blend: Blend, lp: BlendLP, result: LPResult) -> Formula:
    """The Formula for `blend` from the engine's `result` on `lp`."""
    if result.status != "optimal":
        message = MESSAGES.get(result.status, result.status)
        if result.status != "infeasible":
            message = f"{message} ({result.message})"  # the engine's detail helps a bug report
        return Formula(
            blend=blend,
            status=result.status,
            message=message,
            cost=None,
            ingredients=(),
            nutrients=(),
            limits=(),
            iterations=result.iterations,
            notes=_blank_notes(blend, None),
        )
    J = lp.n_ingredients
    P = len(lp.products)
    full = np.where(np.abs(result.x) < ZERO_INCLUSION, 0.0, result.x)
    x = full[: P * J].reshape(P, J)
    d = result.reduced_costs[: P * J].reshape(P, J)
    y = result.row_marginals
    activity = lp.form.A[:, : P * J] @ x.ravel()
    broken = {(i, side): float(full[column]) for i, side, column in lp.elastic if full[column] > 0}
    settings = blend.settings
    products = []
    stock_lines = []
    every_limit = []
    for p, (name, amount) in enumerate(lp.products):
        # Shadow prices of the whole run, per Cost per unit of this product.
        scale = lp.cost_units[p] if lp.multi else 1.0
        levels = lp.per * (lp.contents @ x[p])
        lines = []
        for j, item in enumerate(blend.ingredients):
            value = float(x[p, j])
            if blend.diet:
                mass, money = value, value * item.cost
            else:
                mass = amount * value / TOTAL
                money = mass / settings.cost_unit_in_mass_units * item.cost
            low = ingredient_limits(blend, name, j)
            held = any(side.side == "min" and side.bound > 0 for side in low)
            entry = None
            if value == 0.0 and not held:
                entry = float(item.cost - d[p, j] / (lp.per * scale))
            low, high = _price_range(lp, result, p, j, scale) if item.use else (None, None)
            lines.append(IngredientLine(item.name, value, float(mass), float(money), item.cost, item.use,
                                        float(d[p, j] / scale), entry, low, high))
        limits = []
        low_of, high_of = {}, {}
        special = []
        for i, row in enumerate(lp.rows):
            if row.product != p:
                continue
            for side in row.sides:
                level, factor = _row_level(lp, row, levels)
                if row.kind == GROUP:
                    level = float(activity[i])
                violation = broken.get((i, side.side), 0.0)
                binding = _at(level, side.bound) or violation > 0
                price = 0.0
                if binding:
                    marginal = float(y[i]) * factor / scale
                    if len(row.sides) == 1 or (marginal >= 0) == (side.side == "min"):
                        price = marginal
                room = _room(lp, result, lp.form.c.size + i, side, level, binding, row.kind != RATIO and row.basis == AS_FED)
                limits.append(Limit(row.kind, row.name, side.side, side.bound,
                                    float("nan") if level is None else float(level), binding, price,
                                    side.cell, name, row.basis, violation, row.penalty, *room))
            if row.kind == NUTRIENT and row.basis == AS_FED:
                for side in row.sides:
                    target = low_of if side.side == "min" else high_of
                    pick = max if side.side == "min" else min
                    target[row.nutrient] = side.bound if row.nutrient not in target else pick(target[row.nutrient], side.bound)
            elif row.kind in (NUTRIENT, RATIO):
                special.append(row)
        for j, item in enumerate(blend.ingredients):
            for side in ingredient_limits(blend, name, j):
                level = float(x[p, j])
                binding = _at(level, side.bound)
                # A variable at a bound has reduced cost d = d(cost)/d(bound) when the
                # sign says that bound holds it there (d > 0 at a min, d < 0 at a max).
                holds = d[p, j] > 0 if side.side == "min" else d[p, j] < 0
                price = float(d[p, j] / scale) if binding and holds else 0.0
                room = _room(lp, result, p * J + j, side, level, binding, True)
                limits.append(Limit("ingredient", item.name, side.side, side.bound, level, binding, price,
                                    side.cell, name, "as fed", 0.0, None, *room))
        nutrients = []
        for n, nutrient in enumerate(blend.nutrients):
            level = float(levels[n])
            low, high = low_of.get(n), high_of.get(n)
            nutrients.append(NutrientLine(nutrient, blend.nutrient_units.get(nutrient, ""), low, high, level,
                                          _position(level, low, high)))
        seen = set()
        for row in special:
            key = (row.kind, row.name, row.basis)
            if key in seen:
                continue
            seen.add(key)
            same = [r for r in special if (r.kind, r.name, r.basis) == key]
            low = max((s.bound for r in same for s in r.sides if s.side == "min"), default=None)
            high = min((s.bound for r in same for s in r.sides if s.side == "max"), default=None)
            level, _ = _row_level(lp, row, levels)
            unit = "" if row.kind == RATIO else blend.nutrient_units.get(row.name, "")
            nutrients.append(NutrientLine(row.name, unit, low, high, None if level is None else float(level),
                                          _position(level, low, high), row.kind, row.basis))
        cost = float(lp.costs @ x[p] * lp.per)
        products.append(ProductFormula(name, amount, cost, tuple(lines), tuple(nutrients), tuple(limits)))
        every_limit.extend(limits)
    for i, row in enumerate(lp.rows):
        if row.kind != STOCK:
            continue
        side = row.sides[0]
        used = float(activity[i])
        binding = _at(used, side.bound)
        # In the run's total cost: one blend's objective is per Cost per unit of it (a
        # diet's is already its total).
        per_run = 1.0 if lp.multi or blend.diet else lp.cost_units[0]
        price = float(y[i]) * per_run if binding else 0.0
        stock_lines.append(StockLine(row.name, used, side.bound, binding, price, side.cell))
        room = _room(lp, result, lp.form.c.size + i, side, used, binding, True)
        every_limit.append(Limit(STOCK, row.name, "max", side.bound, used, binding, price, side.cell, None,
                                 "as fed", 0.0, None, *room))
    used = (x > 0).any(axis=0)
    notes = _violation_notes(every_limit) + _blank_notes(blend, used)
    if lp.multi:
        total = float(sum(lp.cost_units[p] * products[p].cost for p in range(P)))
        return Formula(
            blend=blend, status="optimal", message="least-cost products found", cost=total,
            ingredients=(), nutrients=(), limits=tuple(every_limit), iterations=result.iterations,
            notes=notes, products=tuple(products), stocks=tuple(stock_lines),
        )
    only = products[0]
    stock_limits = tuple(limit for limit in every_limit if limit.kind == STOCK)
    return Formula(
        blend=blend,
        status="optimal",
        message="least-cost diet found" if blend.diet else "least-cost blend found",
        cost=only.cost,
        ingredients=only.ingredients,
        nutrients=only.nutrients,
        limits=only.limits + stock_limits,
        iterations=result.iterations,
        notes=notes,
        products=tuple(products),
        stocks=tuple(stock_lines),
    )

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

from dataclasses import dataclass

import numpy as np

from blendkit.engine import LPResult
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
from blendkit.lp.one_sided import basic_at_bound, column_rates, row_rates
from blendkit.lp.shared_prices import shared_prices
from blendkit.lp.tolerances import AT_BOUND, ZERO_INCLUSION
from blendkit.model.blend import AS_FED, DRY_MATTER, Blend
from blendkit.model.formula import (
    SOFT_LIMIT_NOTE,
    Formula,
    IngredientLine,
    Limit,
    NutrientLine,
    ProductFormula,
    StockLine,
)

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


def _room(lp: BlendLP, result: LPResult, k: int, side, level, binding: bool, known: bool,
          negative: bool = False):
    """The bound values between which a limit's shadow price holds (None for an open end).

    `k` indexes the engine's variables (columns, then the rows' activities). A binding
    bound may move as far as the engine's bound ranging allows; a bound that does not
    bind keeps its zero shadow price until it reaches the level, and so does one that
    binds only because its row (or column) is basic at it. A range reaching below 0
    starts at 0 unless the limit's level can be `negative` (a nutrient with negative
    contents): an inclusion, a group, a stock or such a level never is.
    """
    if not known or result.bound_ranges is None or level is None or not np.isfinite(level):
        return None, None
    if not binding:
        return (None, float(level)) if side.side == "min" else (float(level), None)
    down, up = result.bound_ranges[k]
    if basic_at_bound(result, k):  # degenerate: a min holds its price of 0 only below it
        down, up = (np.inf, 0.0) if side.side == "min" else (0.0, np.inf)
    low, high = side.bound - down, side.bound + up
    if low < 0 <= side.bound and not negative:  # no level of this limit can be below 0
        low = 0.0
    return (float(low) if np.isfinite(low) else None), (float(high) if np.isfinite(high) else None)


def _written(value: float | None, shift: float, negative: bool) -> float | None:
    """A target value as the spec value that gives it (the target less `shift`), never
    below 0 for a level that cannot be negative."""
    if value is None or not shift:
        return value
    written = value - shift
    return written if negative or written >= 0 else 0.0


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


@dataclass(frozen=True)
class _Solution:
    """The engine's optimum cut into the pieces every part of the analysis reads."""

    blend: Blend
    lp: BlendLP
    result: LPResult
    x: np.ndarray  # inclusions by product and ingredient, noise below ZERO_INCLUSION set to 0
    d: np.ndarray  # reduced costs by product and ingredient
    activity: np.ndarray  # each row's activity
    broken: dict  # (row, side) -> violation of a soft spec that gives way
    rows_of: tuple  # each product's rows (indices in lp.rows, in order): one pass, not one per product
    negative: np.ndarray  # per nutrient: some ingredient holds a negative amount of it

    @classmethod
    def of(cls, blend: Blend, lp: BlendLP, result: LPResult) -> _Solution:
        """Cut `result` into inclusions, reduced costs, row activities and violations."""
        columns = len(lp.products) * lp.n_ingredients
        full = np.where(np.abs(result.x) < ZERO_INCLUSION, 0.0, result.x)
        x = full[:columns].reshape(len(lp.products), lp.n_ingredients)
        broken = {(i, side): float(full[column]) for i, side, column in lp.elastic if full[column] > 0}
        rows_of: list[list[int]] = [[] for _ in lp.products]
        for i, row in enumerate(lp.rows):
            if row.product is not None:
                rows_of[row.product].append(i)
        return cls(
            blend=blend, lp=lp, result=result, x=x,
            d=result.reduced_costs[:columns].reshape(len(lp.products), lp.n_ingredients),
            activity=lp.form.A[:, :columns] @ x.ravel(), broken=broken,
            rows_of=tuple(tuple(rows) for rows in rows_of), negative=(np.asarray(lp.contents) < 0).any(axis=1),
        )

    def scale(self, p: int) -> float:
        """Shadow prices of the whole run are divided by this for product p's own terms."""
        return self.lp.cost_units[p] if self.lp.multi else 1.0


def analyse(blend: Blend, lp: BlendLP, result: LPResult) -> Formula:
    """The Formula for `blend` from the engine's `result` on `lp`."""
    if result.status != "optimal":
        return _unsolved(blend, lp, result)
    solution = _Solution.of(blend, lp, result)
    products = [_product(solution, p) for p in range(len(lp.products))]
    stocks, stock_limits = _stocks(solution)
    every_limit = [limit for product in products for limit in product.limits] + stock_limits
    used = (solution.x > 0).any(axis=0)
    notes = _violation_notes(every_limit) + blend.notes + lp.notes + _blank_notes(blend, used)
    if lp.multi:
        total = float(sum(lp.cost_units[p] * product.cost for p, product in enumerate(products)))
        return Formula(
            blend=blend, status="optimal", message="least-cost products found", cost=total,
            ingredients=(), nutrients=(), limits=tuple(every_limit), iterations=result.iterations,
            notes=notes, products=tuple(products), stocks=tuple(stocks),
            shared_prices=shared_prices(blend, lp, result),
        )
    only = products[0]
    return Formula(
        blend=blend,
        status="optimal",
        message="least-cost diet found" if blend.diet else "least-cost blend found",
        cost=only.cost,
        ingredients=only.ingredients,
        nutrients=only.nutrients,
        limits=only.limits + tuple(stock_limits),
        iterations=result.iterations,
        notes=notes,
        products=tuple(products),
        stocks=tuple(stocks),
    )


def _unsolved(blend: Blend, lp: BlendLP, result: LPResult) -> Formula:
    """A formula without numbers for a status other than optimal, with the reason."""
    message = MESSAGES.get(result.status, result.status)
    culprits = _unbounded_by(blend, lp, result) if result.status == "unbounded" else ""
    if culprits:
        message = f"the cost can fall without limit: {culprits}"
    elif result.status != "infeasible":
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
        notes=blend.notes + lp.notes + _blank_notes(blend, None),
    )


def _unbounded_by(blend: Blend, lp: BlendLP, result: LPResult) -> str:
    """The ingredients (foods) whose amount can grow without end while the cost falls,
    with their cost and Max cells, from the engine's unbounded ray ("" without one)."""
    if result.ray is None:
        return ""
    J = lp.n_ingredients
    ray = np.asarray(result.ray)[: len(lp.products) * J].reshape(len(lp.products), J)
    growing = [j for j in range(J) if (ray[:, j] > ZERO_INCLUSION * max(1.0, np.abs(ray).max())).any()]
    parts = []
    for j in growing:
        item = blend.ingredients[j]
        where = item.cells.get("cost", item.cells["name"])
        limit = f"no Max in {item.cells['max']}" if "max" in item.cells else "no Max column"
        parts.append(f"more of {item.name} always lowers the cost (cost {item.cost:g} in {where}, {limit})")
    if not parts:
        return ""
    return "; ".join(parts) + "; give it a Max or check its cost"


def _product(solution: _Solution, p: int) -> ProductFormula:
    """Product p's formula: its ingredient lines, nutrient lines, limits and cost."""
    lp = solution.lp
    name, amount = lp.products[p]
    levels = lp.per * (lp.contents @ solution.x[p])
    lines = tuple(_ingredient_line(solution, p, j) for j in range(lp.n_ingredients))
    limits = _row_limits(solution, p, levels) + _ingredient_limits(solution, p)
    nutrients = _nutrient_lines(solution, p, levels)
    cost = float(lp.costs @ solution.x[p] * lp.per)
    return ProductFormula(name, amount, cost, lines, nutrients, tuple(limits))


def _ingredient_line(solution: _Solution, p: int, j: int) -> IngredientLine:
    """Ingredient j in product p: inclusion, amount, cost per batch and price ranges."""
    blend, lp = solution.blend, solution.lp
    name, amount = lp.products[p]
    item = blend.ingredients[j]
    value = float(solution.x[p, j])
    reduced = solution.d[p, j]
    if blend.diet:
        mass, money = value, value * item.cost
    else:
        mass = amount * value / TOTAL
        money = mass / blend.settings.cost_unit_in_mass_units * item.cost
    held = any(side.side == "min" and side.bound > 0 for side in ingredient_limits(blend, name, j))
    entry = None
    if value == 0.0 and not held:
        entry = float(item.cost - reduced / (lp.per * solution.scale(p)))
    if item.use:
        low, high = _price_range(lp, solution.result, p, j, solution.scale(p))
    else:  # Use = no: the price below which it would come in, were it allowed
        low, high = entry, None
    note = ""
    if low is not None and low < 0 <= item.cost:  # a buyer pays no negative price
        low, note = None, "used no more at any price of 0 or more"
    if entry is not None and entry < 0 <= item.cost:
        entry, note = None, "comes in at no price of 0 or more"
    return IngredientLine(
        name=item.name, inclusion=value, amount=float(mass), batch_cost=float(money), cost=item.cost,
        used=item.use, reduced_cost=float(reduced / solution.scale(p)), entry_price=entry,
        more_below=low, less_above=high, price_note=note,
    )


def _row_limits(solution: _Solution, p: int, levels: np.ndarray) -> list[Limit]:
    """One Limit per side of each of product p's spec, ratio and group rows."""
    lp, result = solution.lp, solution.result
    limits = []
    for i in solution.rows_of[p]:
        row = lp.rows[i]
        if row.kind == STOCK:
            continue
        level, factor = _row_level(lp, row, levels)
        if row.kind == GROUP:
            level = float(solution.activity[i])
        for side in row.sides:
            violation = solution.broken.get((i, side.side), 0.0)
            binding = _at(level, side.bound) or violation > 0
            price = 0.0
            if binding:
                marginal = float(result.row_marginals[i]) * factor / solution.scale(p)
                if len(row.sides) == 1 or (marginal >= 0) == (side.side == "min"):
                    price = marginal
            known = row.kind != RATIO and row.basis == AS_FED
            negative = row.nutrient is not None and bool(solution.negative[row.nutrient])
            holds_from, holds_to = _room(lp, result, lp.form.c.size + i, side, level, binding, known, negative)
            up = down = 0.0 if not binding else None
            if binding and known:
                up, down = row_rates(lp.form, result, i, side.side, side.bound, factor / solution.scale(p),
                                     price, len(row.sides) == 1)
            shift = side.margin if side.side == "min" else -side.margin  # written = target - shift
            limits.append(Limit(
                kind=row.kind, name=row.name, side=side.side, bound=side.bound - shift,
                level=float("nan") if level is None else float(level), binding=binding,
                shadow_price=price, cell=side.cell, product=lp.products[p][0], basis=row.basis,
                violation=violation, penalty=row.penalty, holds_from=_written(holds_from, shift, negative),
                holds_to=_written(holds_to, shift, negative), shadow_price_up=up, shadow_price_down=down,
                margin=side.margin,
            ))
    return limits


def _ingredient_limits(solution: _Solution, p: int) -> list[Limit]:
    """One Limit per ingredient bound of product p (Min, Max, Use = no, product Limits)."""
    blend, lp = solution.blend, solution.lp
    name = lp.products[p][0]
    limits = []
    for j, item in enumerate(blend.ingredients):
        reduced = solution.d[p, j]
        level = float(solution.x[p, j])
        for side in ingredient_limits(blend, name, j):
            binding = _at(level, side.bound)
            # A variable at a bound has reduced cost d = d(cost)/d(bound) when the
            # sign says that bound holds it there (d > 0 at a min, d < 0 at a max).
            holds = reduced > 0 if side.side == "min" else reduced < 0
            price = float(reduced / solution.scale(p)) if binding and holds else 0.0
            k = p * lp.n_ingredients + j
            holds_from, holds_to = _room(lp, solution.result, k, side, level, binding, True)
            up = down = 0.0
            if binding:
                up, down = column_rates(lp.form, solution.result, k, side.side, side.bound,
                                        solution.scale(p), price)
            limits.append(Limit(
                kind="ingredient", name=item.name, side=side.side, bound=side.bound, level=level,
                binding=binding, shadow_price=price, cell=side.cell, product=name,
                holds_from=holds_from, holds_to=holds_to, shadow_price_up=up, shadow_price_down=down,
            ))
    return limits


def _nutrient_lines(solution: _Solution, p: int, levels: np.ndarray) -> tuple[NutrientLine, ...]:
    """Every nutrient's as-fed level against its spec, then one line per dry-matter or
    ratio spec (a spec row split over several rows shows once)."""
    blend, lp = solution.blend, solution.lp
    rows = [lp.rows[i] for i in solution.rows_of[p]]
    lines = []
    for n, nutrient in enumerate(blend.nutrients):
        sides = [s for row in rows if row.kind == NUTRIENT and row.basis == AS_FED and row.nutrient == n
                 for s in row.sides]
        lines.append(_line(nutrient, blend.nutrient_units.get(nutrient, ""), sides, float(levels[n])))
    special = [row for row in rows if row.kind == RATIO or (row.kind == NUTRIENT and row.basis != AS_FED)]
    seen = set()
    for row in special:
        key = (row.kind, row.name, row.basis)
        if key in seen:
            continue
        seen.add(key)
        level, _ = _row_level(lp, row, levels)
        unit = "" if row.kind == RATIO else blend.nutrient_units.get(row.name, "")
        sides = [s for r in special if (r.kind, r.name, r.basis) == key for s in r.sides]
        lines.append(_line(row.name, unit, sides, None if level is None else float(level), row.kind, row.basis))
    return tuple(lines)


def _line(name: str, unit: str, sides, level: float | None, kind: str = NUTRIENT, basis: str = AS_FED) -> NutrientLine:
    """One nutrient line: the tightest spec as written, the targets a margin makes (None
    without one) and the level's position against what the formula is made to."""
    low, high = _tightest(sides)
    target_low = None if low is None else low.bound
    target_high = None if high is None else high.bound
    return NutrientLine(
        name, unit, None if low is None else low.bound - low.margin, None if high is None else high.bound + high.margin,
        level, _position(level, target_low, target_high), kind, basis,
        target_minimum=target_low if low is not None and low.margin else None,
        target_maximum=target_high if high is not None and high.margin else None,
    )


def _tightest(sides):
    """The min side with the highest bound and the max side with the lowest (None where
    there is none), bounds being what the formula is made to."""
    low = max((s for s in sides if s.side == "min"), key=lambda s: s.bound, default=None)
    high = min((s for s in sides if s.side == "max"), key=lambda s: s.bound, default=None)
    return low, high


def _stocks(solution: _Solution) -> tuple[list[StockLine], list[Limit]]:
    """Each limited stock's use and shadow price, as a stock line and as a Limit."""
    blend, lp, result = solution.blend, solution.lp, solution.result
    lines, limits = [], []
    for i, row in enumerate(lp.rows):
        if row.kind != STOCK:
            continue
        side = row.sides[0]
        used = float(solution.activity[i])
        binding = _at(used, side.bound)
        # In the run's total cost: one blend's objective is per Cost per unit of it (a
        # diet's is already its total).
        per_run = 1.0 if lp.multi or blend.diet else lp.cost_units[0]
        price = float(result.row_marginals[i]) * per_run if binding else 0.0
        lines.append(StockLine(row.name, used, side.bound, binding, price, side.cell))
        holds_from, holds_to = _room(lp, result, lp.form.c.size + i, side, used, binding, True)
        up = down = 0.0
        if binding:
            up, down = row_rates(lp.form, result, i, "max", side.bound, per_run, price, True)
        limits.append(Limit(
            kind=STOCK, name=row.name, side="max", bound=side.bound, level=used, binding=binding,
            shadow_price=price, cell=side.cell, holds_from=holds_from, holds_to=holds_to,
            shadow_price_up=up, shadow_price_down=down,
        ))
    return lines, limits

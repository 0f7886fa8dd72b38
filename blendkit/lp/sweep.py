"""Sweeps: how the formula changes as one price, or one spec bound, moves over a range.

Exact parametric analysis, never a grid. The optimal cost is piecewise linear in a price
(and in a bound); each piece belongs to one optimal basis. Starting at the low end, the
LP is solved; the basis's own range along the sweep's direction gives where the piece
ends (for a price: the reduced costs of `blendkit.lp.shared_prices`; for a bound: the
engine's bound ranging); just past that breakpoint the LP is re-solved from the last
piece's basis and factors (`blendkit.engine.resolve.Resolver`: the primal simplex after a
price change, the dual simplex after a bound change), and the next piece begins — until
the high end.

- A price sweep moves the ingredient's price in every product at once (or in one product,
  with `product`); on each piece the formula is fixed, so the ingredient's inclusion
  (its demand) is constant and the cost changes linearly.
- A spec sweep moves one bound of one spec; on each piece the shadow price is constant
  and the cost changes linearly with it. With a Margin on that spec the values swept are
  the bound as written (as on the Specs sheet), and at each the formula is made to the
  bound + margin (a min) or bound - margin (a max), as a solve with that bound would be:
  the breakpoints are where the formula changes as the written bound moves.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from blendkit.engine import LPResult
from blendkit.engine.resolve import Resolver
from blendkit.lp.build import NUTRIENT, BlendLP, build_lp
from blendkit.lp.shared_prices import direction_range
from blendkit.lp.tolerances import SWEEP_NUDGE
from blendkit.model.blend import AS_FED, Blend

# A sweep stops after this many pieces (it says so).
MOST_SEGMENTS = 500


@dataclass(frozen=True)
class Segment:
    """One piece of a sweep: from `start` to `end` of the swept value, the cost at both
    ends, and what holds on it: the ingredient's inclusion (a price sweep; % of the blend,
    for the product swept or averaged over products by amount) or the shadow price (a
    spec sweep)."""

    start: float
    end: float
    cost_at_start: float | None
    cost_at_end: float | None
    inclusion: float | None = None
    shadow_price: float | None = None
    status: str = "optimal"


@dataclass(frozen=True)
class Sweep:
    """A whole sweep: what moved, the breakpoints inside the range, and the pieces."""

    kind: str  # "ingredient" or "spec"
    name: str
    product: str | None
    start: float
    end: float
    breakpoints: tuple[float, ...]
    segments: tuple[Segment, ...]
    complete: bool = True  # False when MOST_SEGMENTS stopped it
    # A spec sweep's Margin: the swept values are the bound as written, the formula is
    # made to the bound + margin (min) or - margin (max). 0 for a price, or no margin.
    margin: float = 0.0


def sweep_price(blend: Blend, ingredient: str, start: float, end: float, product: str | None = None) -> Sweep:
    """Every breakpoint of the formula as `ingredient`'s price runs from `start` to `end`."""
    j = [item.name for item in blend.ingredients].index(ingredient)
    lp = build_lp(blend)
    direction = _price_direction(lp, j, product)
    resolver = Resolver.from_form(lp.form)  # each piece re-solved from the last one's basis and factors
    segments, value = [], start
    while len(segments) < MOST_SEGMENTS:
        resolver.change_costs(lp.form.c + (value - blend.ingredients[j].cost) * direction)
        result = resolver.solve()
        if result.status != "optimal":
            segments.append(Segment(value, end, None, None, status=result.status))
            break
        _, t_high = direction_range(lp, result, direction, resolver.form.c)
        stop = min(end, value + max(t_high, 0.0))
        usage = float(direction @ result.x)
        if stop > value or not segments or stop >= end:
                segments.append(Segment(start=value, end=stop, cost_at_start=_cost(lp, result),
                                    cost_at_end=_cost(lp, result) + usage * (stop - value),
                                    inclusion=_inclusion(lp, result, j, product)))
        if stop >= end:
            break
        value = stop + SWEEP_NUDGE * (1 + abs(stop))
    return _sweep("ingredient", ingredient, product, start, end, segments)


def sweep_bound(blend: Blend, nutrient: str, side: str, start: float, end: float, product: str | None = None) -> Sweep:
    """Every breakpoint of the cost as the `side` bound of the as-fed spec on `nutrient`
    runs from `start` to `end` (the spec must exist with that side)."""
    lp = build_lp(blend)
    i = _spec_row(lp, nutrient, side, product)
    margin = next(s.margin for s in lp.rows[i].sides if s.side == side)
    inward = margin if side == "min" else -margin  # the row holds the target, not the bound
    resolver = Resolver.from_form(lp.form)  # each piece re-solved from the last one's basis and factors
    segments, value = [], start
    while len(segments) < MOST_SEGMENTS:
        lower, upper = resolver.form.row_lower[i], resolver.form.row_upper[i]
        if side == "min":
            lower = value + inward
        else:
            upper = value + inward
        resolver.change_row_bounds([lower], [upper], index=[i])
        result = resolver.solve(ranging=True)
        if result.status != "optimal":
            segments.append(Segment(value, end, None, None, status=result.status))
            break
        room = result.bound_ranges[lp.form.c.size + i][1]
        stop = min(end, value + max(float(room), 0.0))
        price = float(result.row_marginals[i])
        segments.append(Segment(start=value, end=stop, cost_at_start=_cost(lp, result),
                                cost_at_end=_cost(lp, result) + price * (stop - value), shadow_price=price))
        if stop >= end:
            break
        value = stop + SWEEP_NUDGE * (1 + abs(stop))
    return _sweep("spec", f"{nutrient} {side}", product, start, end, segments, margin)


def _sweep(kind, name, product, start, end, segments, margin: float = 0.0) -> Sweep:
    """The Sweep record: pieces joined end to end, breakpoints between them."""
    joined = [dataclasses.replace(s, end=segments[k + 1].start) if k + 1 < len(segments) else s
              for k, s in enumerate(segments)]
    return Sweep(kind=kind, name=name, product=product, start=start, end=end,
                 breakpoints=tuple(s.end for s in joined[:-1]), segments=tuple(joined),
                 complete=len(segments) < MOST_SEGMENTS, margin=margin)


def _price_direction(lp: BlendLP, j: int, product: str | None) -> np.ndarray:
    """How the objective's costs change per unit of the ingredient's price."""
    direction = np.zeros(lp.form.c.size)
    names = [name for name, _ in lp.products]
    for p in range(len(lp.products)):
        if product is None or names[p] == product:
            direction[p * lp.n_ingredients + j] = lp.per * (lp.cost_units[p] if lp.multi else 1.0)
    if not direction.any():
        raise ValueError(f"no product {product!r}")
    return direction


def _spec_row(lp: BlendLP, nutrient: str, side: str, product: str | None) -> int:
    """The row of the as-fed spec on `nutrient` that carries its `side` bound."""
    names = [name for name, _ in lp.products]
    for i, row in enumerate(lp.rows):
        if row.kind == NUTRIENT and row.basis == AS_FED and row.name == nutrient and \
                any(s.side == side for s in row.sides) and (product is None or names[row.product] == product):
            return i
    raise ValueError(f"no as-fed spec with a {side} on {nutrient!r}")


def _cost(lp: BlendLP, result: LPResult) -> float:
    """The reported cost: the objective (per Cost per unit, or the run's total)."""
    return float(result.objective)


def _inclusion(lp: BlendLP, result: LPResult, j: int, product: str | None) -> float:
    """The ingredient's inclusion: in the product swept, or the amount-weighted mean."""
    J = lp.n_ingredients
    values = [result.x[p * J + j] for p in range(len(lp.products))]
    names = [name for name, _ in lp.products]
    if product is not None:
        return float(values[names.index(product)])
    weights = np.array([amount for _, amount in lp.products], dtype=float)
    return float(np.dot(values, weights) / weights.sum())

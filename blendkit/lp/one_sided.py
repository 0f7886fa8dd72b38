"""One-sided values of a binding limit: what raising it costs, and what lowering it costs.

Blending LPs are often degenerate: at the optimum a bound binds but the basis would have
to change at once if it moved one way. The optimal cost is piecewise linear (and convex)
in each bound, so it can change at different rates up and down. With the optimal basis:

- if the bound may move up with the same basis (its bound range reaches above it), the
  rate up is that basis's shadow price, exactly; a variable basic at its bound (a
  degenerate basis) cannot move a min up or a max down with it, whatever its range says;
- otherwise the LP is solved again with the bound raised by a small step (warm-started
  from the optimal basis, so a few dual simplex iterations), and the rate up is the new
  basis's shadow price, which holds from the bound up to the next breakpoint (the dual
  simplex alone: a move the other limits do not allow is proven infeasible, rate None);

and the same downwards. Ratio and dry-matter bounds sit in the LP's coefficients, not in a
right-hand side: their one-sided values are not computed (None).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from blendkit.engine import LPResult, StandardForm, solve_form
from blendkit.lp.tolerances import AT_BOUND, ONE_SIDED_STEP


def row_rates(form: StandardForm, result: LPResult, i: int, side: str, bound: float, factor: float,
              price: float, single: bool) -> tuple[float | None, float | None]:
    """(rate up, rate down) of the `side` bound of row i, in the units of `price` (the
    marginal times `factor`): d cost / d bound just above and just below it. `single`: the
    row carries only this bound (its marginal is this bound's, whatever its sign)."""
    k = form.c.size + i

    def price_of(r: LPResult) -> float:
        return _row_price(r, i, side, factor, single)
    return (_rate(form, result, k, side, bound, +1, price, price_of),
            _rate(form, result, k, side, bound, -1, price, price_of))


def column_rates(form: StandardForm, result: LPResult, j: int, side: str, bound: float, scale: float,
                 price: float) -> tuple[float | None, float | None]:
    """(rate up, rate down) of a column bound (an ingredient's Min or Max in a product)."""
    def price_of(r: LPResult) -> float:
        reduced = float(r.reduced_costs[j])
        holds = reduced > 0 if side == "min" else reduced < 0
        return reduced / scale if holds else 0.0
    return (_rate(form, result, j, side, bound, +1, price, price_of),
            _rate(form, result, j, side, bound, -1, price, price_of))


def _rate(form, result, k, side, bound, direction, price, price_of) -> float | None:
    """The rate in one direction: the basis's own price while its bound range allows the
    move, else the price after a small warm-started re-solve (None if that fails, or when
    the move would cross the other bound of the same row or column, as for a Min equal to
    its Max)."""
    if _crosses(form, k, side, direction):
        return None
    tightens = (direction > 0) == (side == "min")
    if result.bound_ranges is not None and not (tightens and basic_at_bound(result, k)):
        room = result.bound_ranges[k][0 if direction < 0 else 1]
        if room > AT_BOUND * (1 + abs(bound)):
            return price
    step = ONE_SIDED_STEP * (1 + abs(bound))
    # The dual simplex alone: a move past what the other limits allow is infeasible, and
    # its proof must not cost a phase one from scratch (minutes on a large plant).
    moved_form = _moved(form, k, side, bound + direction * step)
    moved = solve_form(moved_form, basis=result.basis, algorithm="dual")
    if moved.status == "numerical_trouble":  # the dual simplex alone could not finish: the whole method
        moved = solve_form(moved_form, basis=result.basis)
    if moved.status != "optimal":
        return None
    return float(price_of(moved))


def basic_at_bound(result: LPResult, k: int) -> bool:
    """True when variable k (columns, then rows) is basic although it sits at a bound: a
    degenerate basis. Its bound range says (inf, inf), but moving that bound past it makes
    the basis infeasible: the rate that way needs a re-solve."""
    return result.basis is not None and bool(np.any(np.asarray(result.basis.head) == k))


def _crosses(form: StandardForm, k: int, side: str, direction: int) -> bool:
    """True when moving the `side` bound of variable k that way passes its other bound
    (the two are equal)."""
    n = form.c.size
    lower, upper = (form.col_lower[k], form.col_upper[k]) if k < n else (form.row_lower[k - n], form.row_upper[k - n])
    if lower != upper:
        return False
    return (side == "min" and direction > 0) or (side == "max" and direction < 0)


def _moved(form: StandardForm, k: int, side: str, value: float) -> StandardForm:
    """`form` with the `side` bound of variable k (columns, then rows) set to `value`."""
    n = form.c.size
    if k < n:
        key = "col_lower" if side == "min" else "col_upper"
        index = k
    else:
        key = "row_lower" if side == "min" else "row_upper"
        index = k - n
    values = np.array(getattr(form, key), dtype=float, copy=True)
    values[index] = value
    return dataclasses.replace(form, **{key: values})


def _row_price(result: LPResult, i: int, side: str, factor: float, single: bool) -> float:
    """The shadow price of the `side` bound of row i in a result: its marginal times
    `factor`, or 0 where the marginal's sign says the other side binds."""
    marginal = float(result.row_marginals[i]) * factor
    if single or marginal == 0 or (marginal > 0) == (side == "min"):
        return marginal
    return 0.0

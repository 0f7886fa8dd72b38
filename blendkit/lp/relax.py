"""Ways out of a conflict: the least move of each bound alone, and the least-cost
relaxation of all of them together (see `blendkit.lp.diagnose` for the method)."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from decimal import ROUND_CEILING, ROUND_FLOOR, Decimal

import numpy as np

from blendkit.engine import StandardForm, solve_form
from blendkit.engine.result import Basis
from blendkit.lp.build import (
    GROUP,
    NUTRIENT,
    RATIO,
    STOCK,
    TOTAL,
    BlendLP,
)
from blendkit.lp.members import Member, form_with, row_vector
from blendkit.lp.tolerances import (
    CHANGED,
    LEAST_BOUND_SIZE,
    LEAST_ROW_SIZE,
    PENALTY_SLACK_ABS,
    PENALTY_SLACK_REL,
    RATIO_ROUNDS,
    RATIO_STEADY,
    ROUND_NOISE,
)
from blendkit.model.blend import DRY_MATTER, Blend

# Reported moves keep this many significant digits, rounded outward (a lower min, a
# higher max), so a move is never short by rounding.
DIGITS = 7


@dataclass(frozen=True)
class Change:
    """One member moved by the least-cost relaxation: its bound becomes `relax_to`."""

    member: Member
    relax_to: float


# ----- ways out -------------------------------------------------------------------------------


def best_level(lp: BlendLP, members: list[Member], active: np.ndarray, member: Member) -> float | None:
    """The least move of `member` alone: the best level the `active` members allow."""
    if member.kind == "total":
        return None
    form = form_with(lp, members, active)
    n = form.c.size
    row = np.zeros(n)
    if member.place == "column":
        row[member.index] = 1.0
    else:
        row = row_vector(form, member.index)
    want_high = member.side == "min"
    lp_row = lp.rows[member.index] if member.place == "row" else None
    if lp_row is not None and (lp_row.kind == RATIO or lp_row.basis == DRY_MATTER):
        return _best_ratio(lp, form, lp_row, member, want_high)
    result = solve_form(dataclasses.replace(form, c=-row if want_high else row))
    if result.status != "optimal":
        return None
    return float(row @ result.x)


def _best_ratio(lp: BlendLP, form: StandardForm, lp_row, member: Member, want_high: bool) -> float | None:
    """The highest (or lowest) ratio the other limits allow, by Dinkelbach's method."""
    p = lp_row.product
    J = lp.n_ingredients
    top = np.zeros(form.c.size)
    bottom = np.zeros(form.c.size)
    if lp_row.kind == RATIO:
        a, b = lp_row.ratio
        top[p * J : (p + 1) * J] = lp.per * lp.contents[a]
        bottom[p * J : (p + 1) * J] = lp.per * lp.contents[b]
    else:
        top[p * J : (p + 1) * J] = lp.per * lp.contents[lp_row.nutrient]
        bottom[p * J : (p + 1) * J] = lp.per * lp.contents[lp.dry_matter] / TOTAL
    r = member.bound
    best = None
    for _ in range(RATIO_ROUNDS):
        direction = top - r * bottom
        result = solve_form(dataclasses.replace(form, c=-direction if want_high else direction))
        if result.status != "optimal":
            return best
        x = result.x
        if bottom @ x <= 0:
            return None
        value = float(top @ x / (bottom @ x))
        if best is not None and abs(value - r) <= RATIO_STEADY * (1 + abs(r)):
            return value
        best, r = value, value
    return best


def _penalties(members: list[Member], lp: BlendLP, form: StandardForm) -> np.ndarray:
    """Penalty per unit of violation of each member (see the module docstring)."""
    weights = np.zeros(len(members))
    for k, member in enumerate(members):
        if member.kind == "total":
            continue
        if member.place == "row" and (lp.rows[member.index].kind == RATIO or member.basis == DRY_MATTER):
            size = max(np.abs(row_vector(form, member.index)).max(initial=0.0) * TOTAL, LEAST_ROW_SIZE)
        else:
            size = max(abs(member.bound), LEAST_BOUND_SIZE)
        weights[k] = 10.0 ** member.priority / size
    return weights


def least_cost_relaxation(blend: Blend, lp: BlendLP, members: list[Member]) -> tuple[Change, ...]:
    """The relaxation of least penalty (and, among those, least cost); see the docstring."""
    on = np.ones(len(members), dtype=bool)
    base = form_with(lp, members, on, c=lp.form.c)
    form, elastic = _elastic_form(base, members, _penalties(members, lp, base))
    # The elastic LP is feasible at its start (the violations take up every gap) and
    # very degenerate for the dual simplex: the primal method solves it (a 20-product
    # plant short of stock: 4.6 s against 12.2 s by the dual simplex, which stalled).
    first = solve_form(form, algorithm="primal")
    if first.status != "optimal":
        return ()
    # Among the least-penalty relaxations, the cheapest blend.
    n = base.c.size
    budget = first.objective * (1 + PENALTY_SLACK_REL) + PENALTY_SLACK_ABS
    second_form = StandardForm(
        c=np.concatenate([lp.form.c, np.zeros(form.c.size - n)]),
        A=np.vstack([form.A, form.c]),
        row_lower=np.concatenate([form.row_lower, [-np.inf]]),
        row_upper=np.concatenate([form.row_upper, [budget]]),
        col_lower=form.col_lower,
        col_upper=form.col_upper,
    )
    second = solve_form(second_form, basis=_with_budget_row(first.basis), algorithm="primal")
    x = second.x if second.status == "optimal" else first.x
    changes = []
    for k, column in elastic:
        member = members[k]
        if x[column] <= CHANGED * (1 + abs(member.bound)):
            continue
        level = _level(lp, member, x[:n], base)
        if not np.isfinite(level):
            # The spec has no value in the blend the relaxation leads to (its ratio's
            # divisor or its dry matter is 0 there): no new bound can be stated.
            return ()
        changes.append(Change(member, outward(level, member.side)))
    return tuple(changes)


def _with_budget_row(basis: Basis) -> Basis:
    """The first solve's optimal basis for the second LP, whose one more row (the
    penalty budget) has its activity basic: a feasible start, so the second solve is
    phase two from where the first ended (a 20-product plant: one minute before)."""
    m, n = basis.shape
    return Basis(head=np.append(basis.head, n + m), at_upper=np.append(basis.at_upper, False), shape=(m + 1, n))


def _elastic_form(base: StandardForm, members: list[Member], penalty: np.ndarray):
    """The elastic LP: every member but the totals gets a violation column costing its
    penalty; a member that is a column bound first becomes a row, so it can give way.

    Returns the dense form and (member index, column of its violation) pairs.
    """
    A = base.A.toarray() if hasattr(base.A, "toarray") else np.asarray(base.A)
    n = A.shape[1]
    cl, cu = base.col_lower.copy(), base.col_upper.copy()
    extra_rows, extra_lower, extra_upper = [], [], []
    elastic = []  # (member index, column of the elastic variable in the new LP)
    row_sign = []  # (row, column, sign) entries of violation columns in existing rows
    for k, member in enumerate(members):
        if member.kind == "total":
            continue
        column = n + len(elastic)
        if member.place == "row":
            row_sign.append((member.index, column, 1.0 if member.lp_side == "lower" else -1.0))
        elif member.kind == "use" or member.lp_side == "upper":
            cu[member.index] = np.inf
            extra_rows.append((member.index, column, -1.0))
            extra_lower.append(-np.inf)
            extra_upper.append(0.0 if member.kind == "use" else base.col_upper[member.index])
        else:
            cl[member.index] = 0.0
            extra_rows.append((member.index, column, 1.0))
            extra_lower.append(base.col_lower[member.index])
            extra_upper.append(np.inf)
        elastic.append((k, column))
    columns = n + len(elastic)
    big = np.zeros((A.shape[0] + len(extra_rows), columns))
    big[: A.shape[0], :n] = A
    for i, column, sign in row_sign:
        big[i, column] = sign
    for r, (j, column, sign) in enumerate(extra_rows):
        big[A.shape[0] + r, j] = 1.0
        big[A.shape[0] + r, column] = sign
    weights = np.zeros(columns)
    for k, column in elastic:
        weights[column] = penalty[k]
    form = StandardForm(
        c=weights, A=big,
        row_lower=np.concatenate([base.row_lower, extra_lower]),
        row_upper=np.concatenate([base.row_upper, extra_upper]),
        col_lower=np.concatenate([cl, np.zeros(columns - n)]),
        col_upper=np.concatenate([cu, np.full(columns - n, np.inf)]),
    )
    return form, elastic


def outward(value: float | None, side: str) -> float | None:
    """`value` for a report: a round number when `value` only differs from it by solver
    noise, else DIGITS significant digits rounded outward (down for a min, up for a max)."""
    if value is None or not np.isfinite(value) or value == 0:
        return value
    near = float(f"{value:.{DIGITS - 1}g}")
    if abs(near - value) <= ROUND_NOISE * abs(value):
        return near
    exponent = Decimal(value).adjusted() - DIGITS + 1
    rounding = ROUND_FLOOR if side == "min" else ROUND_CEILING
    return float(Decimal(value).quantize(Decimal(1).scaleb(exponent), rounding=rounding))


def _level(lp: BlendLP, member: Member, x: np.ndarray, form: StandardForm) -> float:
    """The member's level at x, in the units of its bound."""
    if member.place == "column":
        return float(x[member.index])
    row = lp.rows[member.index]
    if row.kind == RATIO or row.basis == DRY_MATTER:
        J = lp.n_ingredients
        part = x[row.product * J : (row.product + 1) * J]
        levels = lp.per * (lp.contents @ part)
        if row.kind == RATIO:
            a, b = row.ratio
            return float(levels[a] / levels[b]) if levels[b] else float("nan")
        dry = levels[lp.dry_matter] / TOTAL
        return float(levels[row.nutrient] / dry) if dry else float("nan")
    return float(row_vector(form, member.index) @ x)


def relaxed_blend(blend: Blend, changes: tuple[Change, ...]) -> Blend:
    """The blend with each changed bound set to its `relax_to` value."""
    specs, groups, ingredients, limits = list(blend.specs), list(blend.groups), list(blend.ingredients), list(blend.limits)
    stocks = {}
    for change in changes:
        member, value = change.member, change.relax_to
        key = "minimum" if member.side == "min" else "maximum"
        if member.kind in (NUTRIENT, RATIO):
            for k, spec in enumerate(specs):
                if spec.nutrient == member.name and spec.product == member.product and spec.cells.get(member.side) == member.cell:
                    # `value` is the level the formula is made to: the spec is that less
                    # its margin (a min) or plus it (a max).
                    margin = (spec.margin or 0.0) * (1 if member.side == "min" else -1)
                    specs[k] = dataclasses.replace(spec, **{key: value - margin})
        elif member.kind == GROUP:
            for k, group in enumerate(groups):
                if group.name == member.name and group.cells.get(member.side) == member.cell:
                    groups[k] = dataclasses.replace(group, **{key: value})
        elif member.kind == STOCK:
            stocks[member.name] = value
        elif member.kind in ("ingredient", "use"):
            for k, limit in enumerate(limits):
                if limit.ingredient == member.name and limit.product == member.product and limit.cells.get(member.side) == member.cell:
                    limits[k] = dataclasses.replace(limit, **{key: value})
                    break
            else:
                for k, item in enumerate(ingredients):
                    if item.name == member.name:
                        if member.kind == "use":
                            ingredients[k] = dataclasses.replace(item, use=True, maximum=value)
                        else:
                            ingredients[k] = dataclasses.replace(item, **{key: value})
    for k, item in enumerate(ingredients):
        if item.name in stocks:
            ingredients[k] = dataclasses.replace(item, stock=stocks[item.name])
    return dataclasses.replace(blend, specs=tuple(specs), groups=tuple(groups), ingredients=tuple(ingredients),
                               limits=tuple(limits))

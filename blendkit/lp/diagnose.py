"""When the limits cannot all be met: which of them conflict, and the cheapest way out.

Every bound the user wrote is a *member* that can be switched on or off: a spec side
(nutrient, ratio, dry matter), a group side, a stock, an ingredient's Min or Max, a
`Use = no`, and each product's sum-to-100 row (`total`, tied to the product's amount).
Non-negativity of inclusions is physics, not a member, and stays on.

1. **A minimal conflicting set.** The engine's phase-one certificate (Farkas duals)
   names a set of members that is infeasible on its own. A deletion filter (Chinneck &
   Dravnieks, 1991) then drops each member in turn and keeps it only when the rest
   becomes feasible without it; what remains is irreducible: dropping any one member
   leaves the others feasible. With that conflict set aside the check repeats, so every
   independent conflict is reported, each as its own set.
2. **Ways out, one bound at a time.** For each member, the least move of that bound alone
   that makes the workbook feasible (other conflicts set aside): the best level the
   other limits allow, by one LP (for ratio and dry-matter bounds, by Dinkelbach's
   method for ratios, a few LPs).
3. **The least-cost relaxation.** An elastic LP lets every member except the totals give
   way at a penalty per unit of violation, relative to the size of its bound, weighted
   by kind (see DEFAULT_PRIORITY) and the user's `Priority`: each step of priority makes
   giving way ten times dearer. Among the least-penalty relaxations the cheapest blend is
   then found, and the changes are reported as new bounds.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from decimal import ROUND_CEILING, ROUND_FLOOR, Decimal

import numpy as np

from blendkit.lp.build import (
    GROUP,
    NUTRIENT,
    RATIO,
    STOCK,
    TOTAL,
    TOTAL_ROW,
    BlendLP,
    ingredient_limits,
)
from blendkit.engine import StandardForm, solve_form
from blendkit.model.formula import ConflictLine
from blendkit.model.blend import DRY_MATTER, Blend
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

# Default priority by kind: a limit with a lower priority gives way first; each step of
# priority makes giving way ten times dearer. A `Priority` cell overrides the default.
DEFAULT_PRIORITY = {"nutrient": 3, "ratio": 3, "group": 3, "ingredient": 2, "use": 4, "stock": 5}
# How many independent conflicts to look for before saying more may remain.
MOST_CONFLICTS = 8
# Reported moves keep this many significant digits, rounded outward (a lower min, a
# higher max), so a move is never short by rounding.
DIGITS = 7


@dataclass(frozen=True)
class Member:
    """One workbook bound that takes part in the LP, and where it sits in it.

    `kind` is "nutrient", "ratio", "ingredient", "use", "group", "stock" or "total";
    `side` is "min", "max" or "eq" (a total). `place` is "row" or "column" and `index`
    the row or column; `lp_side` says which LP bound the member sets: "lower", "upper"
    or "both".
    """

    kind: str
    name: str
    product: str | None
    side: str
    bound: float
    cell: str | None
    basis: str
    place: str
    index: int
    lp_side: str
    priority: float

    def describe(self) -> str:
        """The member in the workbook's words, e.g. "Specs!C5  Crude protein  min 24"."""
        where = self.cell or ""
        what = f"{self.product}: {self.name}" if self.product else self.name
        if self.kind == "use":
            rule = "Use = no"
        elif self.kind == "total":
            rule = "inclusions sum to 100 %"
        else:
            rule = f"{self.side} {self.bound:g}"
            if self.basis == DRY_MATTER:
                rule += " (dry matter)"
        return f"{where}  {what}  {rule}".strip()


@dataclass(frozen=True)
class Conflict:
    """One irreducible set of conflicting members, with each one's least move alone.

    `relax_to[k]` is the value member k's bound would have to move to (None where no
    move of that bound alone is enough, as for a total).
    """

    members: tuple[Member, ...]
    relax_to: tuple[float | None, ...]


@dataclass(frozen=True)
class Change:
    """One member moved by the least-cost relaxation: its bound becomes `relax_to`."""

    member: Member
    relax_to: float


@dataclass(frozen=True)
class Diagnosis:
    """Everything found about an infeasible workbook.

    `complete` is False when the search stopped at MOST_CONFLICTS with conflicts left.
    `relaxed_blend` is the blend with the least-cost relaxation's new bounds (None when
    no relaxation could be found), ready to formulate.
    """

    conflicts: tuple[Conflict, ...]
    changes: tuple[Change, ...]
    complete: bool
    relaxed_blend: Blend | None


# ----- members and the LP with a chosen set of them ----------------------------------


def members_of(blend: Blend, lp: BlendLP) -> list[Member]:
    """Every workbook bound of the LP as a Member, in a stable order."""
    members = []
    priorities = _priorities(blend)
    for i, row in enumerate(lp.rows):
        product = lp.products[row.product][0] if row.product is not None else None
        if row.kind == TOTAL_ROW:
            cell = None
            if product is not None:
                cell = next(p.cells.get("amount") for p in blend.products if p.name == product)
            members.append(Member("total", "total", product, "eq", TOTAL, cell, "as fed", "row", i, "both", np.inf))
            continue
        if row.penalty is not None:
            continue  # a soft spec gives way at its penalty; it cannot conflict
        for side in row.sides:
            lp_side = "lower" if side.side == "min" else "upper"
            priority = priorities.get((row.kind, row.name, product, side.cell), DEFAULT_PRIORITY[row.kind])
            members.append(Member(row.kind, row.name, product, side.side, side.bound, side.cell, row.basis,
                                   "row", i, lp_side, priority))
    J = lp.n_ingredients
    for p, (product, _) in enumerate(lp.products):
        for j, item in enumerate(blend.ingredients):
            for side in ingredient_limits(blend, product, j):
                if not item.use:
                    kind, lp_side = "use", "upper"
                else:
                    kind, lp_side = "ingredient", "lower" if side.side == "min" else "upper"
                priority = priorities.get((kind, item.name, product, side.cell), DEFAULT_PRIORITY[kind])
                members.append(Member(kind, item.name, product, side.side, side.bound, side.cell, "as fed",
                                      "column", p * J + j, lp_side, priority))
    return members


def _priorities(blend: Blend) -> dict[tuple, float]:
    """User priorities by (kind, name, product, cell), from the Priority columns."""
    found = {}
    for spec in blend.specs:
        if spec.priority is not None:
            kind = RATIO if spec.ratio else NUTRIENT
            for side in ("min", "max"):
                found[(kind, spec.nutrient, spec.product, spec.cells.get(side))] = spec.priority
    for group in blend.groups:
        if group.priority is not None:
            for side in ("min", "max"):
                found[(GROUP, group.name, group.product, group.cells.get(side))] = group.priority
    for limit in blend.limits:
        if limit.priority is not None:
            for side in ("min", "max"):
                found[("ingredient", limit.ingredient, limit.product, limit.cells.get(side))] = limit.priority
    return found


def _relaxed_form(lp: BlendLP, c: np.ndarray | None = None) -> StandardForm:
    """The LP with every member off: rows unbounded, inclusions only non-negative."""
    form = lp.form
    rows = form.A.shape[0]
    return StandardForm(
        c=np.zeros_like(form.c) if c is None else c,
        A=form.A,
        row_lower=np.full(rows, -np.inf),
        row_upper=np.full(rows, np.inf),
        col_lower=np.zeros_like(form.col_lower),
        col_upper=np.full_like(form.col_upper, np.inf),
    )


def form_with(lp: BlendLP, members: list[Member], active, c: np.ndarray | None = None) -> StandardForm:
    """The LP with only the `active` members' bounds (a boolean per member)."""
    form = _relaxed_form(lp, c)
    rl, ru, cl, cu = form.row_lower.copy(), form.row_upper.copy(), form.col_lower.copy(), form.col_upper.copy()
    original = lp.form
    for member, on in zip(members, active):
        if not on:
            continue
        lower, upper = (rl, ru) if member.place == "row" else (cl, cu)
        source_lower = original.row_lower if member.place == "row" else original.col_lower
        source_upper = original.row_upper if member.place == "row" else original.col_upper
        k = member.index
        if member.kind == "use":
            upper[k] = 0.0
            continue
        if member.lp_side in ("lower", "both"):
            lower[k] = source_lower[k]
        if member.lp_side in ("upper", "both"):
            upper[k] = source_upper[k]
    return dataclasses.replace(form, row_lower=rl, row_upper=ru, col_lower=cl, col_upper=cu)


def _feasible(form: StandardForm) -> bool:
    """True when the form has a feasible point (the objective is ignored)."""
    return solve_form(dataclasses.replace(form, c=np.zeros_like(form.c))).status == "optimal"


# ----- the conflicting sets ---------------------------------------------------------------


def _seed(lp: BlendLP, members: list[Member], active: np.ndarray) -> np.ndarray:
    """Members named by the phase-one certificate of the LP with `active` members on."""
    result = solve_form(form_with(lp, members, active), algorithm="primal")
    seed = np.zeros(len(members), dtype=bool)
    if result.certificate is None:
        return active.copy()
    for part in result.certificate.parts:
        for k, member in enumerate(members):
            if not active[k]:
                continue
            if part.kind == "row" and member.place == "row" and member.index == part.index:
                if part.side == "eq" or member.lp_side == "both" or member.lp_side == part.side:
                    seed[k] = True
            elif part.kind == "bound" and member.place == "column" and member.index == part.index:
                if part.side == "eq" or member.kind == "use" or member.lp_side == part.side:
                    seed[k] = True
    if not seed.any() or _feasible(form_with(lp, members, seed)):
        return active.copy()  # the certificate did not isolate it: start from everything on
    return seed


def _deletion_filter(lp: BlendLP, members: list[Member], candidates: np.ndarray) -> np.ndarray:
    """An irreducible infeasible subset of `candidates` (Chinneck & Dravnieks, 1991)."""
    keep = candidates.copy()
    # Try to drop the members most likely to be incidental first: the sum-to-100 rows
    # and stocks last, so conflicts are told in specs and limits where possible.
    order = sorted(np.flatnonzero(candidates), key=lambda k: members[k].kind in ("total", "stock"))
    for k in order:
        keep[k] = False
        if _feasible(form_with(lp, members, keep)):
            keep[k] = True
    return keep


# ----- ways out -------------------------------------------------------------------------------


def _best_level(lp: BlendLP, members: list[Member], active: np.ndarray, member: Member) -> float | None:
    """The least move of `member` alone: the best level the `active` members allow."""
    if member.kind == "total":
        return None
    form = form_with(lp, members, active)
    n = form.c.size
    row = np.zeros(n)
    if member.place == "column":
        row[member.index] = 1.0
    else:
        row = _row_vector(form, member.index)
    want_high = member.side == "min"
    lp_row = lp.rows[member.index] if member.place == "row" else None
    if lp_row is not None and (lp_row.kind == RATIO or lp_row.basis == DRY_MATTER):
        return _best_ratio(lp, form, lp_row, member, want_high)
    result = solve_form(dataclasses.replace(form, c=-row if want_high else row))
    if result.status != "optimal":
        return None
    return float(row @ result.x)


def _row_vector(form: StandardForm, i: int) -> np.ndarray:
    """Row i of the form's matrix, dense."""
    A = form.A
    return np.asarray(A[i].toarray()).ravel() if hasattr(A, "toarray") else np.array(A[i], dtype=float)


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
            size = max(np.abs(_row_vector(form, member.index)).max(initial=0.0) * TOTAL, LEAST_ROW_SIZE)
        else:
            size = max(abs(member.bound), LEAST_BOUND_SIZE)
        weights[k] = 10.0 ** member.priority / size
    return weights


def least_cost_relaxation(blend: Blend, lp: BlendLP, members: list[Member]) -> tuple[Change, ...]:
    """The relaxation of least penalty (and, among those, least cost); see the docstring."""
    on = np.ones(len(members), dtype=bool)
    base = form_with(lp, members, on, c=lp.form.c)
    form, elastic = _elastic_form(base, members, _penalties(members, lp, base))
    first = solve_form(form)
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
    second = solve_form(second_form)
    x = second.x if second.status == "optimal" else first.x
    changes = []
    for k, column in elastic:
        member = members[k]
        if x[column] <= CHANGED * (1 + abs(member.bound)):
            continue
        level = _level(lp, member, x[:n], base)
        changes.append(Change(member, _outward(level, member.side)))
    return tuple(changes)


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


def _outward(value: float | None, side: str) -> float | None:
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
    return float(_row_vector(form, member.index) @ x)


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
                    specs[k] = dataclasses.replace(spec, **{key: value})
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


# ----- the whole diagnosis -----------------------------------------------------------------


def diagnose(blend: Blend, lp: BlendLP) -> Diagnosis:
    """Conflicting sets, single-bound moves and the least-cost relaxation of an infeasible LP."""
    members = members_of(blend, lp)
    everything = np.ones(len(members), dtype=bool)
    totals = np.array([member.kind == "total" for member in members])
    set_aside = np.zeros(len(members), dtype=bool)
    found = []
    complete = True
    while True:
        active = everything & ~set_aside
        if _feasible(form_with(lp, members, active)):
            break
        if len(found) == MOST_CONFLICTS:
            complete = False
            break
        conflict = _deletion_filter(lp, members, _seed(lp, members, active))
        found.append(conflict)
        # Sum-to-100 rows can be part of several conflicts; they stay on.
        set_aside |= conflict & ~totals
    conflicts = []
    for conflict in found:
        # Each member's least move alone, with the other conflicts set aside.
        others = np.zeros(len(members), dtype=bool)
        for other in found:
            if other is not conflict:
                others |= other & ~totals
        moves = []
        for k in np.flatnonzero(conflict):
            active = everything & ~others
            active[k] = False
            moves.append(_outward(_best_level(lp, members, active, members[k]), members[k].side))
        conflicts.append(Conflict(tuple(members[k] for k in np.flatnonzero(conflict)), tuple(moves)))
    changes = least_cost_relaxation(blend, lp, members)
    return Diagnosis(
        conflicts=tuple(conflicts),
        changes=changes,
        complete=complete,
        relaxed_blend=relaxed_blend(blend, changes) if changes else None,
    )


def conflict_lines(diagnosis: Diagnosis) -> tuple[ConflictLine, ...]:
    """The conflicting sets as report lines, numbered from 1."""
    lines = []
    for number, conflict in enumerate(diagnosis.conflicts, start=1):
        for member, relax_to in zip(conflict.members, conflict.relax_to):
            lines.append(_line(number, member, relax_to))
    return tuple(lines)


def change_lines(diagnosis: Diagnosis) -> tuple[ConflictLine, ...]:
    """The least-cost relaxation's changes as report lines (conflict number 0)."""
    return tuple(_line(0, change.member, change.relax_to) for change in diagnosis.changes)


def _line(number: int, member: Member, relax_to: float | None) -> ConflictLine:
    """One report line for a member."""
    return ConflictLine(number, member.kind, member.name, member.product, member.side, member.bound,
                        member.cell, relax_to, member.describe())

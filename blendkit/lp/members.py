"""The members of a conflict: every bound the user wrote, as something that can be
switched on or off, and the LP with a chosen set of them switched on."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from blendkit.engine import StandardForm, solve_form
from blendkit.lp.build import (
    GROUP,
    NUTRIENT,
    RATIO,
    TOTAL,
    TOTAL_ROW,
    BlendLP,
    ingredient_limits,
)
from blendkit.model.blend import DRY_MATTER, Blend

# Default priority by kind: a limit with a lower priority gives way first; each step of
# priority makes giving way ten times dearer. A `Priority` cell overrides the default.
DEFAULT_PRIORITY = {"nutrient": 3, "ratio": 3, "group": 3, "ingredient": 2, "use": 4, "stock": 5}


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
    margin: float = 0.0  # a spec's Margin: `bound` is the target, min + margin or max - margin

    def written(self, value: float | None) -> float | None:
        """A value of this member's bound (the target) as the spec value that gives it."""
        if value is None or not self.margin:
            return value
        return value - self.margin if self.side == "min" else value + self.margin

    def describe(self) -> str:
        """The member in the workbook's words, e.g. "Specs!C5  Crude protein  min 24"."""
        where = self.cell or ""
        what = f"{self.product}: {self.name}" if self.product else self.name
        if self.kind == "use":
            rule = "Use = no"
        elif self.kind == "total":
            rule = "inclusions sum to 100 %"
        else:
            rule = f"{self.side} {self.written(self.bound):g}"
            if self.basis == DRY_MATTER:
                rule += " (dry matter)"
            if self.margin:
                rule += f" (margin {self.margin:g}: target {self.bound:g})"
        return f"{where}  {what}  {rule}".strip()


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
                                   "row", i, lp_side, priority, side.margin))
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


def relaxed_form(lp: BlendLP, c: np.ndarray | None = None) -> StandardForm:
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
    form = relaxed_form(lp, c)
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


def feasible(form: StandardForm) -> bool:
    """True when the form has a feasible point (the objective is ignored): phase one alone,
    as the primal method runs it (with every cost zero the dual simplex only stalls)."""
    return solve_form(dataclasses.replace(form, c=np.zeros_like(form.c)), algorithm="primal").status == "optimal"


def row_vector(form: StandardForm, i: int) -> np.ndarray:
    """Row i of the form's matrix, dense."""
    A = form.A
    return np.asarray(A[i].toarray()).ravel() if hasattr(A, "toarray") else np.array(A[i], dtype=float)

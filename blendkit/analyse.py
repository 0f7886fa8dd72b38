"""Read the engine's answer back into the blend's own terms.

Inclusions, batch amounts and costs, nutrient levels against their specs, and one
`Limit` per bound the user wrote with its shadow price (d blend cost / d bound). The
engine's marginals and reduced costs are d(objective)/d(right-hand side); this module
only turns signs and units into the workbook's words.
"""

from __future__ import annotations

import numpy as np

from blendkit.build_lp import TOTAL, BlendLP
from blendkit.engine import LPResult
from blendkit.formula import Formula, IngredientLine, Limit, NutrientLine
from blendkit.model import Blend

# A level within this distance (relative to 1 + |bound|) of a bound sits at it.
AT_BOUND = 1e-7
# Inclusions below this (in %) are reported as 0: they are rounding noise.
ZERO_INCLUSION = 1e-9

MESSAGES = {
    "infeasible": "the specs and inclusion limits cannot all be met at once",
    "unbounded": "the blend cost can fall without limit; check for negative costs",
    "iteration_limit": "the engine stopped at its iteration limit before finding the optimum",
    "numerical_trouble": "the engine ran into numerical trouble",
}


def _at(level: float, bound: float | None) -> bool:
    """True when `level` sits at `bound` within AT_BOUND."""
    return bound is not None and abs(level - bound) <= AT_BOUND * (1 + abs(bound))


def _blank_notes(blend: Blend, inclusions: np.ndarray | None) -> tuple[str, ...]:
    """One note per ingredient in the blend (or, unsolved, allowed in it) with blanks."""
    notes = []
    for j, item in enumerate(blend.ingredients):
        in_blend = inclusions[j] > 0 if inclusions is not None else item.use
        if in_blend and item.blanks:
            count = len(item.blanks)
            names = ", ".join(item.blanks)
            notes.append(
                f"{item.name}: {count} blank nutrient cell{'s' if count != 1 else ''} "
                f"counted as 0 ({names})"
            )
    return tuple(notes)


def analyse(blend: Blend, lp: BlendLP, result: LPResult) -> Formula:
    """The Formula for `blend` from the engine's `result` on `lp`."""
    if result.status != "optimal":
        message = MESSAGES.get(result.status, result.status)
        return Formula(
            blend=blend,
            status=result.status,
            message=f"{message} ({result.message})",
            cost=None,
            ingredients=(),
            nutrients=(),
            limits=(),
            iterations=result.iterations,
            notes=_blank_notes(blend, None),
        )
    settings = blend.settings
    x = np.where(np.abs(result.x) < ZERO_INCLUSION, 0.0, result.x)
    d = result.reduced_costs
    per_cost_unit = settings.cost_unit_in_mass_units
    lines = []
    for j, item in enumerate(blend.ingredients):
        amount = settings.batch_size * x[j] / TOTAL
        unused = x[j] == 0.0 and not (item.minimum and item.minimum > 0)
        lines.append(
            IngredientLine(
                name=item.name,
                inclusion=float(x[j]),
                amount=float(amount),
                batch_cost=float(amount / per_cost_unit * item.cost),
                cost=item.cost,
                used=item.use,
                reduced_cost=float(d[j]),
                entry_price=float(item.cost - TOTAL * d[j]) if unused else None,
            )
        )
    levels = lp.nutrient_matrix @ x / TOTAL
    specs = {spec.nutrient: spec for spec in blend.specs}
    nutrients = []
    for i, name in enumerate(blend.nutrients):
        spec = specs.get(name)
        low = spec.minimum if spec else None
        high = spec.maximum if spec else None
        level = float(levels[i])
        if spec is None:
            position = "no spec"
        elif _at(level, low):
            position = "at min"
        elif _at(level, high):
            position = "at max"
        elif low is not None and level < low:
            position = "below min"
        elif high is not None and level > high:
            position = "above max"
        else:
            position = "within"
        nutrients.append(NutrientLine(name, blend.nutrient_units.get(name, ""), low, high, level, position))
    limits = []
    level_of = dict(zip(blend.nutrients, levels))
    for row, source in enumerate(lp.ub_rows):
        level = float(level_of[source.name])
        binding = _at(level, source.bound)
        marginal = float(result.marginals_ub[row])
        price = -marginal if source.side == "min" else marginal
        limits.append(Limit("nutrient", source.name, source.side, source.bound, level, binding,
                            price if binding else 0.0, source.cell))
    for j, item in enumerate(blend.ingredients):
        level = float(x[j])
        sides = []
        if not item.use:
            sides.append(("max", 0.0, item.cells.get("use", item.cells["name"])))
        else:
            if item.minimum is not None:
                sides.append(("min", item.minimum, item.cells["min"]))
            if item.maximum is not None:
                sides.append(("max", item.maximum, item.cells["max"]))
        for side, bound, cell in sides:
            binding = _at(level, bound)
            # A variable at a bound has reduced cost d = d(cost)/d(bound) when the sign
            # says that bound holds it there (d > 0 at a min, d < 0 at a max).
            holds = d[j] > 0 if side == "min" else d[j] < 0
            price = float(d[j]) if binding and holds else 0.0
            limits.append(Limit("ingredient", item.name, side, bound, level, binding, price, cell))
    return Formula(
        blend=blend,
        status="optimal",
        message="least-cost blend found",
        cost=float(lp.costs @ x / TOTAL),
        ingredients=tuple(lines),
        nutrients=tuple(nutrients),
        limits=tuple(limits),
        iterations=result.iterations,
        notes=_blank_notes(blend, x),
    )

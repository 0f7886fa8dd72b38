"""One Formula for a run whose products were solved as several LPs.

Each part (see `blendkit.lp.split`) was formulated on its own; the run's Formula lists
every product in Products-sheet order with its part's status, adds up the cost, and
keeps each part's Formula in `parts`, so that the conflicts and the least-cost way out
of an infeasible part stay with the products they are about.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from blendkit.lp.cross_check import combined
from blendkit.lp.shared_prices import intersect
from blendkit.model.blend import Blend
from blendkit.model.formula import INFEASIBLE, OPTIMAL, Formula, ProductFormula


def combine(blend: Blend, parts: list[Formula], notes: tuple[str, ...] = ()) -> Formula:
    """The run's Formula from its parts' Formulas (`notes` are the run's own, first)."""
    products = _products(blend, parts)
    solved = all(part.solved for part in parts)
    return Formula(
        blend=blend,
        status=_status(parts),
        message=_message(products, len(parts)),
        cost=_total_cost(blend, products) if solved else None,
        ingredients=(),
        nutrients=(),
        limits=tuple(limit for part in parts for limit in part.limits),
        iterations=sum(part.iterations for part in parts),
        notes=tuple(dict.fromkeys([*notes, *(note for part in parts for note in part.notes)])),
        products=products,
        stocks=tuple(line for part in parts for line in part.stocks),
        conflicts=_renumbered(parts),
        conflicts_complete=all(part.conflicts_complete for part in parts),
        conflicts_cut_short=any(part.conflicts_cut_short for part in parts),
        parts=tuple(parts),
        cross_check=combined([part.cross_check for part in parts]),
        shared_prices=intersect([part.shared_prices for part in parts]) if solved else (),
    )


def _products(blend: Blend, parts: list[Formula]) -> tuple[ProductFormula, ...]:
    """Every product in sheet order, with the status and message of its part."""
    found: dict[str, ProductFormula] = {}
    for part in parts:
        for product in part.blend.products:
            line = next((p for p in part.products if p.name == product.name), None)
            if line is None:  # the part has no formula: a line with its status only
                line = ProductFormula(name=product.name, amount=product.amount, cost=None,
                                      ingredients=(), nutrients=(), limits=())
            found[product.name] = dataclasses.replace(line, status=part.status, message=part.message)
    return tuple(found[product.name] for product in blend.products)


def _status(parts: list[Formula]) -> str:
    """Optimal when every part is; else infeasible when any part is; else the first
    other status (unbounded, iteration limit, numerical trouble)."""
    statuses = [part.status for part in parts]
    if all(status == OPTIMAL for status in statuses):
        return OPTIMAL
    if INFEASIBLE in statuses:
        return INFEASIBLE
    return next(status for status in statuses if status != OPTIMAL)


def _message(products: tuple[ProductFormula, ...], lps: int) -> str:
    """One line for the run: how many formulas were found, and which were not."""
    missed = [product for product in products if not product.solved]
    if not missed:
        return f"least-cost formulas found for all {len(products)} products ({lps} separate LPs)"
    names = "; ".join(f"{product.name} ({product.status})" for product in missed)
    return f"{len(products) - len(missed)} of {len(products)} products formulated; not formulated: {names}"


def _total_cost(blend: Blend, products: tuple[ProductFormula, ...]) -> float:
    """The run's total cost: each product's cost per `Cost per` unit times its amount."""
    per = blend.settings.cost_unit_in_mass_units
    return float(np.sum([product.cost * product.amount / per for product in products]))


def _renumbered(parts: list[Formula]):
    """Every part's conflicting sets, numbered 1, 2, ... across the run."""
    lines, offset = [], 0
    for part in parts:
        for line in part.conflicts:
            lines.append(dataclasses.replace(line, conflict=line.conflict + offset))
        offset += max((line.conflict for line in part.conflicts), default=0)
    return tuple(lines)

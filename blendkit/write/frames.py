"""Render a `Formula` as pandas DataFrames, one per table of the result.

`formula_frames(formula)` returns a dict of DataFrames, in this order, each with a plain
row index and one row per line of the formula (no rows unless the status is "optimal"):

``inclusions``  per product and ingredient: ``product``, ``ingredient``, ``inclusion`` (% of
                the blend; diet: amount in the food's unit), ``amount`` (mass unit),
                ``batch_cost`` (currency per batch), ``cost`` (the price), ``used`` (the Use
                column), ``reduced_cost``, ``entry_price`` (the price at which an unused
                ingredient would come in)
``nutrients``   per product and nutrient line: ``product``, ``nutrient``, ``unit``, ``kind``
                ("nutrient" or "ratio"), ``basis`` ("as fed" or "dry matter"; None for a
                ratio), ``level``, ``min``, ``max``, ``position`` ("at min", "at max",
                "within", "below min", "above max", "no spec")
``limits``      one row per bound the user wrote: ``product``, ``kind``, ``name``, ``basis``
                (a nutrient limit's; None for other kinds), ``side``, ``bound`` (as
                written), ``margin`` (a spec's Margin, 0 without one) and ``target`` (the
                bound the formula is made to: bound + margin for a min, bound - margin for
                a max; the bound without a margin), as in the JSON, ``level``,
                ``binding``, ``shadow_price`` (d cost / d bound), ``holds_from`` /
                ``holds_to`` (the bound values between which that shadow price holds),
                ``violation`` and ``penalty`` (soft specs), ``cell`` (where the bound was
                read)
``prices``      per product and ingredient: ``product``, ``ingredient``, ``cost`` (the price),
                ``more_below`` / ``less_above`` (the price range over which the formula stays
                the cheapest: below it the ingredient is used more, above it less)
``stocks``      per limited stock: ``ingredient``, ``used``, ``available``, ``binding``,
                ``shadow_price`` (d total cost / d stock), ``cell``

``product`` is None for one blend (or diet) and the product's name with a Products sheet;
a stock limit's product is None too. Numbers are floats, with NaN where the formula has
None (no limit, no end of a range). The meaning of each number is that of the Formula's
lines (`blendkit.model.formula`).
"""

from __future__ import annotations

import pandas as pd

from blendkit.model.formula import Formula

# Each frame's columns, with the dtype of the numeric and yes/no ones (others: object).
_FLOAT, _BOOL = "float64", "bool"
_COLUMNS: dict[str, dict[str, str | None]] = {
    "inclusions": {
        "product": None, "ingredient": None, "inclusion": _FLOAT, "amount": _FLOAT,
        "batch_cost": _FLOAT, "cost": _FLOAT, "used": _BOOL, "reduced_cost": _FLOAT,
        "entry_price": _FLOAT,
    },
    "nutrients": {
        "product": None, "nutrient": None, "unit": None, "kind": None, "basis": None,
        "level": _FLOAT, "min": _FLOAT, "max": _FLOAT, "position": None,
    },
    "limits": {
        "product": None, "kind": None, "name": None, "basis": None, "side": None,
        "bound": _FLOAT, "margin": _FLOAT, "target": _FLOAT, "level": _FLOAT, "binding": _BOOL, "shadow_price": _FLOAT,
        "holds_from": _FLOAT, "holds_to": _FLOAT, "violation": _FLOAT, "penalty": _FLOAT,
        "cell": None,
    },
    "prices": {
        "product": None, "ingredient": None, "cost": _FLOAT, "more_below": _FLOAT,
        "less_above": _FLOAT,
    },
    "stocks": {
        "ingredient": None, "used": _FLOAT, "available": _FLOAT, "binding": _BOOL,
        "shadow_price": _FLOAT, "cell": None,
    },
}


def formula_frames(formula: Formula) -> dict[str, pd.DataFrame]:
    """The formula's tables as DataFrames: inclusions, nutrients, limits, prices, stocks
    (columns in the module docstring)."""
    rows = {
        "inclusions": _inclusion_rows(formula),
        "nutrients": _nutrient_rows(formula),
        "limits": _limit_rows(formula),
        "prices": _price_rows(formula),
        "stocks": _stock_rows(formula),
    }
    return {name: _frame(name, table) for name, table in rows.items()}


def _frame(name: str, rows: list[tuple]) -> pd.DataFrame:
    """One frame from its rows, with its columns and dtypes also when it has no rows."""
    columns = _COLUMNS[name]
    data = {
        column: pd.Series([row[i] for row in rows], dtype=dtype or object)
        for i, (column, dtype) in enumerate(columns.items())
    }
    return pd.DataFrame(data, columns=list(columns))


def _inclusion_rows(formula: Formula) -> list[tuple]:
    """A row per product and ingredient line, in the inclusions frame's column order."""
    return [
        (product.name, line.name, line.inclusion, line.amount, line.batch_cost, line.cost,
         line.used, line.reduced_cost, line.entry_price)
        for product in formula.products
        for line in product.ingredients
    ]


def _nutrient_rows(formula: Formula) -> list[tuple]:
    """A row per product and nutrient line, in the nutrients frame's column order."""
    return [
        (product.name, line.name, line.unit, line.kind, _basis(line.kind, line.basis), line.level,
         line.minimum, line.maximum, line.position)
        for product in formula.products
        for line in product.nutrients
    ]


def _limit_rows(formula: Formula) -> list[tuple]:
    """A row per limit of the run (every product's and the stocks), in column order."""
    return [
        (limit.product, limit.kind, limit.name, _basis(limit.kind, limit.basis), limit.side, limit.bound,
         limit.margin, limit.target, limit.level, limit.binding, limit.shadow_price, limit.holds_from, limit.holds_to,
         limit.violation, limit.penalty, limit.cell)
        for limit in formula.limits
    ]


def _basis(kind: str, basis: str) -> str | None:
    """A line's or limit's basis where it has one (a nutrient's), else None: a ratio is
    the same on both bases and other limits have none."""
    return basis if kind == "nutrient" else None


def _price_rows(formula: Formula) -> list[tuple]:
    """A row per product and ingredient: its price and the range it may move in."""
    return [
        (product.name, line.name, line.cost, line.more_below, line.less_above)
        for product in formula.products
        for line in product.ingredients
    ]


def _stock_rows(formula: Formula) -> list[tuple]:
    """A row per limited stock, in the stocks frame's column order."""
    return [
        (stock.ingredient, stock.used, stock.available, stock.binding, stock.shadow_price, stock.cell)
        for stock in formula.stocks
    ]

"""Turn a validated blend into a linear program for the engine.

The decision is the inclusion of each ingredient in % of the blend (x_j). Then

    cost   = sum_j x_j / 100 * cost_j                      (minimised)
    total  : sum_j x_j = 100                               (one equality row)
    level  : sum_j x_j / 100 * content_nj                  (one row per spec side)
             -level <= -min   and   level <= max
    bounds : min_j <= x_j <= max_j, x_j = 0 when Use = no

Every row and every column bound carries a `LimitSource` saying which workbook cell it
came from, so the analysis can report shadow prices in the workbook's own words.
The builder never sees a spreadsheet and never solves anything.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blendkit.model import Blend

TOTAL = 100.0  # inclusions are in % of the blend


@dataclass(frozen=True)
class LimitSource:
    """Where a row or bound came from: kind, name, side, bound value and cell."""

    kind: str  # "nutrient" | "ingredient"
    name: str
    side: str  # "min" | "max"
    bound: float
    cell: str


@dataclass(frozen=True)
class BlendLP:
    """The LP of one blend in the engine's (linprog-style) arguments, with row meanings.

    Row i of A_ub is `ub_rows[i]`; its sign is -1 for a min row (stored negated).
    `nutrient_matrix[n, j]` is the content of nutrient n in ingredient j, so levels are
    nutrient_matrix @ x / 100.
    """

    c: np.ndarray
    A_ub: np.ndarray
    b_ub: np.ndarray
    A_eq: np.ndarray
    b_eq: np.ndarray
    bounds: list[tuple[float, float | None]]
    ub_rows: tuple[LimitSource, ...]
    nutrient_matrix: np.ndarray
    costs: np.ndarray


def build_lp(blend: Blend) -> BlendLP:
    """The least-cost LP for `blend`; see the module docstring for the formulation."""
    ingredients = blend.ingredients
    costs = np.array([item.cost for item in ingredients], dtype=float)
    contents = np.array(
        [[item.contents.get(n, 0.0) for item in ingredients] for n in blend.nutrients], dtype=float
    ).reshape(len(blend.nutrients), len(ingredients))
    index = {name: i for i, name in enumerate(blend.nutrients)}
    rows, rhs, sources = [], [], []
    for spec in blend.specs:
        level_row = contents[index[spec.nutrient]] / TOTAL
        if spec.minimum is not None:
            rows.append(-level_row)
            rhs.append(-spec.minimum)
            sources.append(LimitSource("nutrient", spec.nutrient, "min", spec.minimum, spec.cells["min"]))
        if spec.maximum is not None:
            rows.append(level_row)
            rhs.append(spec.maximum)
            sources.append(LimitSource("nutrient", spec.nutrient, "max", spec.maximum, spec.cells["max"]))
    bounds = []
    for item in ingredients:
        if not item.use:
            bounds.append((0.0, 0.0))
        else:
            bounds.append((item.minimum or 0.0, item.maximum))
    n = len(ingredients)
    return BlendLP(
        c=costs / TOTAL,
        A_ub=np.array(rows, dtype=float).reshape(len(rows), n),
        b_ub=np.array(rhs, dtype=float),
        A_eq=np.ones((1, n)),
        b_eq=np.array([TOTAL]),
        bounds=bounds,
        ub_rows=tuple(sources),
        nutrient_matrix=contents,
        costs=costs,
    )

"""Turn a validated blend into one linear program in the engine's general form.

Variables: x[p, j] for each product p and ingredient j — the inclusion of j in p in % of
the product (blend mode), or the amount of food j in its own unit (diet mode, one
product). With `per` = 1/100 in blend mode and 1 in diet mode, a nutrient's level in
product p is level_n = per * sum_j x[p, j] * content[n, j], and the rows are:

    total      sum_j x[p, j] = 100                              (blend mode only)
    nutrient   min <= level_n <= max                            (as fed; a spec's Margin
               makes them min + margin and max - margin, here and below)
    dry matter per * sum_j x[p, j] * (content[n, j] - L * dm_j / 100) >= 0 (L = min)
               and <= 0 (L = max): level per unit of dry matter, made linear
    ratio      per * sum_j x[p, j] * (content[A, j] - r * content[B, j]) >= 0 (r = min)
               and <= 0 (r = max): level_A / level_B, made linear
    group      min <= sum_{j in group} x[p, j] <= max
    stock      sum_p amount_p * per * x[p, j] <= stock_j        (shared by all products)
    bounds     min_pj <= x[p, j] <= max_pj (Limits sheet, else Ingredients), 0 for Use = no
    soft       a spec with a Penalty gets two more columns, e_lo and e_hi >= 0, in its row
               (min <= level + e_lo - e_hi <= max), each costing the penalty per unit

The objective is the blend's cost per `Cost per` unit (one blend) or, with a Products
sheet, the whole run's cost: sum_p amount_p / (mass of one Cost per unit) * cost_p.
Every row keeps the workbook words and cells it came from (`LPRow`), so the analysis
can report levels and shadow prices in the workbook's terms. The builder never sees a
spreadsheet and never solves anything.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blendkit.engine import StandardForm
from blendkit.lp.tolerances import DROP_RELATIVE
from blendkit.model.blend import AS_FED, DRY_MATTER, Blend

TOTAL = 100.0  # inclusions are in % of the blend

TOTAL_ROW = "total"
NUTRIENT = "nutrient"
RATIO = "ratio"
GROUP = "group"
STOCK = "stock"


@dataclass(frozen=True)
class Side:
    """One bound the user wrote: "min" or "max", the value the formula is made to and the
    cell it came from; `margin` is how far inside the value as written that is (a spec's
    Margin: the bound is min + margin, or max - margin)."""

    side: str
    bound: float
    cell: str
    margin: float = 0.0


@dataclass(frozen=True)
class LPRow:
    """What one LP row means in the workbook's words.

    `kind` is "total", "nutrient", "ratio", "group" or "stock"; `name` the nutrient, the
    ratio as written, the group or the ingredient; `product` the product's index (None
    for a stock, which spans products); `sides` the workbook bounds the row carries (a
    ranged row carries both; a dry-matter or ratio row exactly one, with row bound 0).
    """

    kind: str
    name: str
    product: int | None
    sides: tuple[Side, ...]
    basis: str = "as fed"
    ratio: tuple[int, int] | None = None  # nutrient indices (A, B) of a ratio row
    nutrient: int | None = None  # nutrient index of a nutrient row
    ingredient: int | None = None  # ingredient index of a stock row
    penalty: float | None = None  # a soft spec's cost per unit of violation


@dataclass(frozen=True)
class BlendLP:
    """The LP of a whole blend run, with the meaning of every row and column.

    Column k is ingredient `k % J` in product `k // J` (J ingredients). `products` lists
    (name, amount) with name None for a single blend; `tonnes[p]` is product p's amount
    in `Cost per` units, by which shadow prices of the whole run are divided to give
    them per unit of that product. `per` is 1/100 in blend mode, 1 in diet mode.
    """

    form: StandardForm
    rows: tuple[LPRow, ...]
    products: tuple[tuple[str | None, float], ...]
    cost_units: np.ndarray  # product amounts in Cost per units (objective weights)
    contents: np.ndarray  # nutrient x ingredient
    costs: np.ndarray
    per: float
    dry_matter: int | None  # index of the dry-matter nutrient, if the blend has it
    multi: bool  # True with a Products sheet: the objective is the run's total cost
    elastic: tuple[tuple[int, str, int], ...] = ()  # (row, "min" | "max", column) of soft specs
    notes: tuple[str, ...] = ()  # content cells treated as 0 (see DROP_RELATIVE)

    @property
    def n_ingredients(self) -> int:
        """How many ingredients (columns per product)."""
        return self.costs.size


def _limits(blend: Blend, product: str | None, j: int) -> tuple[float, float, dict[str, str]]:
    """Bounds of ingredient j in a product, and the cells they came from."""
    item = blend.ingredients[j]
    limit = blend.product_limit(product, item.name)
    if limit is not None:
        return limit.minimum, limit.maximum, {"min": limit.cells.get("min"), "max": limit.cells.get("max")}
    return item.minimum, item.maximum, {"min": item.cells.get("min"), "max": item.cells.get("max")}


def column_bounds(blend: Blend, product: str | None, j: int) -> tuple[float, float]:
    """The LP bounds of ingredient j in a product (Use = no holds it at 0)."""
    if not blend.ingredients[j].use:
        return 0.0, 0.0
    low, high, _ = _limits(blend, product, j)
    return (low or 0.0), (np.inf if high is None else high)


def ingredient_limits(blend: Blend, product: str | None, j: int) -> list[Side]:
    """The workbook inclusion limits of ingredient j in a product, with their cells."""
    item = blend.ingredients[j]
    if not item.use:
        return [Side("max", 0.0, item.cells.get("use", item.cells["name"]))]
    low, high, cells = _limits(blend, product, j)
    sides = []
    if low is not None:
        sides.append(Side("min", low, cells["min"]))
    if high is not None:
        sides.append(Side("max", high, cells["max"]))
    return sides


class _Rows:
    """The LP's rows as they are added: coefficients, row bounds and meanings."""

    def __init__(self, blend: Blend, products: tuple[tuple[str | None, float], ...]):
        self.blend = blend
        self.products = products
        self.J = len(blend.ingredients)
        self.names = list(blend.nutrients)
        self.index = {name: i for i, name in enumerate(self.names)}
        self.contents = np.array(
            [[item.contents.get(n, 0.0) for item in blend.ingredients] for n in self.names], dtype=float
        ).reshape(len(self.names), self.J)
        self.per = 1.0 if blend.diet else 1.0 / TOTAL
        self.dm = self.index.get(blend.settings.dry_matter)
        self.coefficients: list[np.ndarray] = []
        self.lower: list[float] = []
        self.upper: list[float] = []
        self.meaning: list[LPRow] = []

    def add(self, coefficients: np.ndarray, low: float, high: float, row: LPRow) -> None:
        """Append one row."""
        self.coefficients.append(coefficients)
        self.lower.append(low)
        self.upper.append(high)
        self.meaning.append(row)

    def add_in_product(self, p: int, values: np.ndarray, low: float, high: float, row: LPRow) -> None:
        """Append a row with `values` in product p's columns and zeros elsewhere."""
        full = np.zeros(len(self.products) * self.J)
        full[p * self.J : (p + 1) * self.J] = values
        self.add(full, low, high, row)

    def add_spec(self, p: int, spec) -> None:
        """The rows of one spec in product p: as fed (one ranged row, maybe soft), or one
        linear row per side for a ratio or a dry-matter bound."""
        low, high = spec.target_minimum, spec.target_maximum
        margin = spec.margin or 0.0
        sides = [Side(s, b, spec.cells.get(s), margin) for s, b in (("min", low), ("max", high)) if b is not None]
        contents, per = self.contents, self.per
        if spec.ratio is None and spec.basis != DRY_MATTER:
            n = self.index[spec.nutrient]
            low = -np.inf if low is None else low
            high = np.inf if high is None else high
            row = LPRow(NUTRIENT, spec.nutrient, p, tuple(sides), nutrient=n, penalty=spec.penalty)
            self.add_in_product(p, per * contents[n], low, high, row)
            return
        for side in sides:
            low, high = (0.0, np.inf) if side.side == "min" else (-np.inf, 0.0)
            if spec.ratio is not None:
                a, b = self.index[spec.ratio[0]], self.index[spec.ratio[1]]
                values = per * (contents[a] - side.bound * contents[b])
                row = LPRow(RATIO, spec.nutrient, p, (side,), spec.basis, ratio=(a, b))
            else:
                n = self.index[spec.nutrient]
                values = per * (contents[n] - side.bound * contents[self.dm] / TOTAL)
                row = LPRow(NUTRIENT, spec.nutrient, p, (side,), DRY_MATTER, nutrient=n)
            self.add_in_product(p, values, low, high, row)

    def add_group(self, p: int, group) -> None:
        """One ranged row: the sum of the group's inclusions in product p."""
        members = {item.name: j for j, item in enumerate(self.blend.ingredients)}
        values = np.zeros(self.J)
        values[[members[name] for name in group.ingredients]] = 1.0
        sides = [Side(s, b, group.cells.get(s)) for s, b in (("min", group.minimum), ("max", group.maximum)) if b is not None]
        low = -np.inf if group.minimum is None else group.minimum
        high = np.inf if group.maximum is None else group.maximum
        self.add_in_product(p, values, low, high, LPRow(GROUP, group.name, p, tuple(sides)))

    def add_product(self, p: int) -> None:
        """Product p's rows: the total (blend mode), its specs and its groups."""
        blend, product = self.blend, self.products[p][0]
        if not blend.diet:
            self.add_in_product(p, np.ones(self.J), TOTAL, TOTAL, LPRow(TOTAL_ROW, "total", p, ()))
        for spec in blend.specs:
            if spec.product is None or spec.product == product:
                self.add_spec(p, spec)
        for group in blend.groups:
            if group.product is None or group.product == product:
                self.add_group(p, group)

    def add_stocks(self) -> None:
        """One row per limited stock, summing that ingredient's mass over all products."""
        blend, J = self.blend, self.J
        for j, item in enumerate(blend.ingredients):
            if item.stock is None:
                continue
            values = np.zeros(len(self.products) * J)
            for p, (_, amount) in enumerate(self.products):
                values[p * J + j] = amount * self.per if not blend.diet else 1.0
            side = Side("max", item.stock, item.cells.get("stock"))
            self.add(values, -np.inf, item.stock, LPRow(STOCK, item.name, None, (side,), ingredient=j))

    def matrix(self) -> np.ndarray:
        """The coefficient matrix of the rows added so far."""
        return np.array(self.coefficients, dtype=float).reshape(len(self.coefficients), len(self.products) * self.J)


def build_lp(blend: Blend) -> BlendLP:
    """The least-cost LP for `blend`; see the module docstring for the formulation."""
    J = len(blend.ingredients)
    costs = np.array([item.cost for item in blend.ingredients], dtype=float)
    multi = bool(blend.products)
    products = tuple((p.name, p.amount) for p in blend.products) or ((None, blend.settings.batch_size),)
    P = len(products)
    cost_units = np.array([amount / blend.settings.cost_unit_in_mass_units for _, amount in products])
    rows = _Rows(blend, products)
    for p in range(P):
        rows.add_product(p)
    rows.add_stocks()
    bounds = [column_bounds(blend, product, j) for product, _ in products for j in range(J)]
    weights = np.repeat(cost_units, J) if multi else np.ones(P * J)
    A, dropped = _drop_tiny(rows.matrix())
    c = np.tile(costs, P) * rows.per * weights
    A, c, bounds, elastic = _with_elastic_columns(rows.meaning, A, c, bounds, cost_units if multi else None)
    form = StandardForm(
        c=c,
        A=A,
        row_lower=np.array(rows.lower, dtype=float),
        row_upper=np.array(rows.upper, dtype=float),
        col_lower=np.array([low for low, _ in bounds], dtype=float),
        col_upper=np.array([high for _, high in bounds], dtype=float),
    )
    return BlendLP(
        form=form,
        rows=tuple(rows.meaning),
        products=products,
        cost_units=cost_units,
        contents=rows.contents,
        costs=costs,
        per=rows.per,
        dry_matter=rows.dm,
        multi=multi,
        elastic=tuple(elastic),
        notes=_dropped_notes(blend, rows.meaning, dropped, J),
    )


def _drop_tiny(A: np.ndarray) -> tuple[np.ndarray, list[tuple[int, int]]]:
    """A with entries below DROP_RELATIVE of their row's or column's largest set to 0,
    and the (row, column) of each entry so dropped. Only the non-zeros are read after one
    pass to find them (a plant's matrix is nine tenths zeros), and A is copied only when an
    entry is dropped."""
    if A.size == 0:
        return A, []
    rows, cols = np.nonzero(A)
    size = np.abs(A[rows, cols])
    row_largest, col_largest = np.zeros(A.shape[0]), np.zeros(A.shape[1])
    np.maximum.at(row_largest, rows, size)
    np.maximum.at(col_largest, cols, size)
    tiny = size < DROP_RELATIVE * np.maximum(row_largest[rows], col_largest[cols])
    if not tiny.any():
        return A, []
    rows, cols = rows[tiny], cols[tiny]
    A = A.copy()
    A[rows, cols] = 0.0
    return A, [(int(i), int(k)) for i, k in zip(rows, cols)]


def _dropped_notes(blend: Blend, meaning: list[LPRow], dropped, J: int) -> tuple[str, ...]:
    """One note per content cell whose entry in an as-fed nutrient row was dropped."""
    notes = {}
    for i, k in dropped:
        row = meaning[i]
        if row.kind != NUTRIENT or row.basis != AS_FED:
            continue  # a ratio or dry-matter row: cancellation noise, not a cell
        item = blend.ingredients[k % J]
        value = item.contents.get(row.name, 0.0)
        cell = item.content_cells.get(row.name, f"{item.name} / {row.name}")
        notes[cell] = (
            f"{cell}: {row.name} of {item.name} ({value:g}) is tiny beside the other numbers "
            f"of its row and column (below {DROP_RELATIVE:g} of the largest) and is treated as 0"
        )
    return tuple(notes.values())


def _with_elastic_columns(meaning: list[LPRow], A: np.ndarray, c: np.ndarray, bounds: list, cost_units):
    """Soft specs: an elastic column per side, costing the penalty per unit of violation
    (per Cost per unit of the product, so times its amount with several products).

    Returns the widened matrix, costs and bounds, and (row, side, column) per column.
    """
    elastic, extra_columns, extra_costs = [], [], []
    for i, row in enumerate(meaning):
        if row.penalty is None:
            continue
        for side in row.sides:
            column = np.zeros(len(meaning))
            column[i] = 1.0 if side.side == "min" else -1.0
            extra_columns.append(column)
            extra_costs.append(row.penalty * (cost_units[row.product] if cost_units is not None else 1.0))
            elastic.append((i, side.side, c.size + len(extra_columns) - 1))
    if not extra_columns:
        return A, c, bounds, elastic
    A = np.hstack([A, np.array(extra_columns).T])
    c = np.concatenate([c, extra_costs])
    return A, c, bounds + [(0.0, np.inf)] * len(extra_columns), elastic

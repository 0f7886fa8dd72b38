"""The integer program of a blend under the rules a mill can weigh (`blendkit.model.weighing`).

The blend's LP (`blendkit.lp.build`) keeps its columns and rows, in place; this module
adds, per product p and ingredient j (column k = x[p, j], bounds lo..hi):

    Min if used   x_k semi-continuous with threshold s: 0 or s <= x_k <= hi
    Pack size     a whole number n >= 0 with x_k - u n = 0, u = pack / batch * 100 (the %
                  of a batch of the `Batch size` setting that one pack weighs), n from
                  ceil(lo / u) to floor(hi / u)
    Scale step    the same with u = step / batch * 100 (a pack size replaces the step)
    Max ingredients  a 0/1 z_k per ingredient that may be used, x_k - M_k z_k <= 0 with
                  M_k the ingredient's own largest inclusion (hi, or 100 % when it has
                  none), and sum_j z[p, j] <= the product's Max ingredients

The rules apply per product (a product's Limits row gives its own Min if used and Pack
size), so the products of a plant are solved jointly. `families` leaves out whole rule
families (the infeasibility report drops one at a time). Nothing is solved here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from blendkit.engine import StandardForm
from blendkit.lp.build import TOTAL, BlendLP
from blendkit.lp.tolerances import WHOLE_STEPS
from blendkit.model.blend import Blend
from blendkit.model.weighing import max_ingredients, weigh_rule

MIN_IF_USED = "min if used"
PACK_SIZE = "pack size"
SCALE_STEP = "scale step"
MAX_INGREDIENTS = "max ingredients"
FAMILIES = (MIN_IF_USED, PACK_SIZE, SCALE_STEP, MAX_INGREDIENTS)


@dataclass(frozen=True)
class Whole:
    """A column weighed in whole units: LP column `column`, its count column `count`, the
    inclusion one unit makes (`unit`, % of the blend), its `mass` and which `family`."""

    column: int
    count: int
    unit: float
    mass: float
    family: str


@dataclass(frozen=True)
class WeighMIP:
    """The blend's LP with the rules added: the first `lp_columns` columns and `lp_rows`
    rows are the LP's own. `wholes` lists the columns weighed in whole units, `indicators`
    (LP column, z column) the 0/1 columns of Max ingredients, `limits` (product index,
    Max ingredients) the count rows, `thresholds` the Min if used per LP column (0: none)."""

    form: StandardForm
    integrality: np.ndarray
    semicontinuous: np.ndarray
    lp_columns: int
    lp_rows: int
    wholes: tuple[Whole, ...]
    indicators: tuple[tuple[int, int], ...]
    limits: tuple[tuple[int, int], ...]
    thresholds: np.ndarray
    families: frozenset[str]


class _Extra:
    """Columns and rows added to the LP, as they are added."""

    def __init__(self, lp: BlendLP, batch: float):
        self.n0 = lp.form.c.size
        self.batch = batch  # the Batch size setting: the mass the units are weighed in
        self.columns: list[tuple[float, float]] = []  # bounds of each added (whole) column
        self.rows: list[tuple[dict[int, float], float, float]] = []  # coefficients, low, high

    def column(self, low: float, high: float) -> int:
        """Add a whole-number column; its index in the MIP."""
        self.columns.append((low, high))
        return self.n0 + len(self.columns) - 1

    def row(self, coefficients: dict[int, float], low: float, high: float) -> None:
        """Add a row."""
        self.rows.append((coefficients, low, high))


def present_families(blend: Blend) -> tuple[str, ...]:
    """The rule families the workbook uses anywhere, in FAMILIES order."""
    found = set()
    for product in _product_names(blend):
        if max_ingredients(blend, product) is not None:
            found.add(MAX_INGREDIENTS)
        for item in blend.ingredients:
            rule = weigh_rule(blend, item, product)
            found.update(name for name, value in ((MIN_IF_USED, rule.min_if_used), (PACK_SIZE, rule.pack_size),
                                                  (SCALE_STEP, _step(blend, item))) if value is not None)
    return tuple(name for name in FAMILIES if name in found)


def _product_names(blend: Blend) -> list[str | None]:
    """The product names the rules are looked up by (None for one blend)."""
    return [product.name for product in blend.products] or [None]


def _step(blend: Blend, item) -> float | None:
    """The ingredient's scale step (its own, else the setting's), pack size aside."""
    return item.scale_step if item.scale_step is not None else blend.settings.scale_step


def build_mip(blend: Blend, lp: BlendLP, families: frozenset[str] = frozenset(FAMILIES)) -> WeighMIP:
    """The integer program of `blend` (whose LP is `lp`) under the rule `families` given;
    see the module docstring."""
    J, form = lp.n_ingredients, lp.form
    extra = _Extra(lp, blend.settings.batch_size)
    semi = np.zeros(form.c.size)
    wholes, indicators, limits = [], [], []
    for p, (name, _amount) in enumerate(lp.products):
        for j, item in enumerate(blend.ingredients):
            k = p * J + j
            if form.col_upper[k] <= 0:
                continue
            rule = weigh_rule(blend, item, name)
            if MIN_IF_USED in families and rule.min_if_used is not None:
                semi[k] = rule.min_if_used
            whole = _whole(blend, item, rule, families)
            if whole is not None:
                wholes.append(_add_whole(extra, form, k, *whole))
        most = max_ingredients(blend, name) if MAX_INGREDIENTS in families else None
        if most is not None:
            indicators += _add_count(extra, form, range(p * J, (p + 1) * J), most, blend.diet)
            limits.append((p, most))
    return _assemble(lp, extra, semi, wholes, indicators, limits, families, blend.diet)


def _whole(blend: Blend, item, rule, families: frozenset[str]) -> tuple[float, str] | None:
    """The mass an ingredient is weighed in whole units of, and the rule's family (None:
    weighed freely)."""
    if PACK_SIZE in families and rule.pack_size is not None:
        return rule.pack_size, PACK_SIZE
    step = _step(blend, item)
    if SCALE_STEP in families and step is not None:
        return step, SCALE_STEP
    return None


def _add_whole(extra: _Extra, form: StandardForm, k: int, mass: float, family: str) -> Whole:
    """A count column n with x_k = u n (see the module docstring)."""
    unit = mass / extra.batch * TOTAL
    low, high = form.col_lower[k], min(form.col_upper[k], TOTAL)
    n = extra.column(math.ceil(low / unit - WHOLE_STEPS), math.floor(high / unit + WHOLE_STEPS))
    extra.row({k: 1.0, n: -unit}, 0.0, 0.0)
    return Whole(column=k, count=n, unit=unit, mass=mass, family=family)


def _add_count(extra: _Extra, form: StandardForm, columns: range, most: int, diet: bool) -> list[tuple[int, int]]:
    """A 0/1 z per column that may be used, x_k <= M_k z_k, and sum z <= most."""
    pairs = []
    for k in columns:
        high = form.col_upper[k]
        if high <= 0:
            continue
        big = high if np.isfinite(high) else TOTAL  # diet foods under this rule have a Max (the reader)
        z = extra.column(0.0, 1.0)
        extra.row({k: 1.0, z: -big}, -np.inf, 0.0)
        pairs.append((k, z))
    extra.row({z: 1.0 for _, z in pairs}, -np.inf, float(most))
    return pairs


def _assemble(lp: BlendLP, extra: _Extra, semi, wholes, indicators, limits, families, diet: bool) -> WeighMIP:
    """The MIP's general form: the LP's block, then the added columns and rows. In blend
    mode no inclusion exceeds 100 %: that bound is written, so that every semi-continuous
    column has a finite upper bound."""
    form = lp.form
    upper = form.col_upper.copy()
    if not diet:
        inclusions = len(lp.products) * lp.n_ingredients
        upper[:inclusions] = np.minimum(upper[:inclusions], TOTAL)
    m0, n0 = form.A.shape
    added = len(extra.columns)
    A = np.zeros((m0 + len(extra.rows), n0 + added))
    A[:m0, :n0] = form.A
    for i, (coefficients, _, _) in enumerate(extra.rows):
        for k, value in coefficients.items():
            A[m0 + i, k] = value
    bounds = np.array(extra.columns, dtype=float).reshape(added, 2)
    mip = StandardForm(
        c=np.concatenate([form.c, np.zeros(added)]),
        A=A,
        row_lower=np.concatenate([form.row_lower, [low for _, low, _ in extra.rows]]),
        row_upper=np.concatenate([form.row_upper, [high for _, _, high in extra.rows]]),
        col_lower=np.concatenate([form.col_lower, bounds[:, 0]]),
        col_upper=np.concatenate([upper, bounds[:, 1]]),
    )
    return WeighMIP(
        form=mip, integrality=np.concatenate([np.zeros(n0), np.ones(added)]),
        semicontinuous=np.concatenate([semi, np.zeros(added)]), lp_columns=n0, lp_rows=m0,
        wholes=tuple(wholes), indicators=tuple(indicators), limits=tuple(limits), thresholds=semi,
        families=frozenset(families),
    )


def with_binaries(mip: WeighMIP) -> tuple[StandardForm, np.ndarray, list[int]]:
    """The MIP with each Min if used written as a 0/1 y: s y <= x_k <= M y (M the
    column's finite upper bound), for files that know no semi-continuous columns (MPS).
    Returns the form, its integrality and the LP column of each y added, in order."""
    form = mip.form
    m, n = form.A.shape
    columns = [k for k in np.flatnonzero(mip.thresholds > 0)
               if form.col_lower[k] <= 0 and np.isfinite(form.col_upper[k])]
    size = len(columns)
    A = np.zeros((m + 2 * size, n + size))
    A[:m, :n] = form.A
    for i, k in enumerate(columns):
        A[m + 2 * i, [k, n + i]] = 1.0, -mip.thresholds[k]  # x - s y >= 0
        A[m + 2 * i + 1, [k, n + i]] = 1.0, -form.col_upper[k]  # x - M y <= 0
    widened = StandardForm(
        c=np.concatenate([form.c, np.zeros(size)]),
        A=A,
        row_lower=np.concatenate([form.row_lower, np.tile([0.0, -np.inf], size)]),
        row_upper=np.concatenate([form.row_upper, np.tile([np.inf, 0.0], size)]),
        col_lower=np.concatenate([form.col_lower, np.zeros(size)]),
        col_upper=np.concatenate([form.col_upper, np.ones(size)]),
    )
    return widened, np.concatenate([mip.integrality, np.ones(size)]), [int(k) for k in columns]

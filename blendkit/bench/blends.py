"""The blend family: random least-cost blend LPs, and their table in the benchmark.

The blend LPs are made up, deterministically from a seed, to look like real least-cost
formulation (see `make_blend`): inclusions in %, one row fixing the total at 100, nutrient
specs as level rows, contents on mixed scales (%, MJ/kg, mg/kg, ppm) with many zeros, and
specs set around the levels of a known feasible mixture, some of them tight, so that the
LPs are feasible by construction and many limits bind at the optimum. A price sweep (the
same LP with prices nudged step by step) is measured three ways: every step solved cold,
every step started from the previous step's basis (a warm start; linprog stays cold, highspy
re-solves warm from its own previous basis), and every step re-solved by our `Resolver`
beside highspy keeping its model (`blendkit.bench.resolves`); a series of changes of limits
(`bound_sweep`) is re-solved the same way.
`infeasible_blend` turns a generated blend into a domain-model blend whose specs conflict,
for the diagnosis family.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass, replace

import numpy as np

from blendkit.bench.options import Options
from blendkit.bench.resolves import measure_resolves
from blendkit.bench.timing import measure, measurement_lines
from blendkit.engine import solve
from blendkit.model.blend import Blend, Ingredient, Settings, Spec

TOTAL = 100.0  # inclusions are in % of the blend, as in build_lp

# Per size (ingredients): LPs generated and timed repeats of each solve. Chosen so the
# default run stays within about two minutes on a 2-core machine; `--repeat` overrides.
INSTANCES = {20: 10, 60: 10, 150: 8, 300: 6}
REPEATS = {20: 15, 60: 11, 150: 7, 300: 5}
SWEEP_STEPS = 8

# Ingredient kinds and their share of an ingredient list.
KIND_SHARES = (("feedstuff", 0.55), ("fat", 0.05), ("mineral", 0.2), ("additive", 0.2))
# The most of the blend (in %) that minimum and fixed inclusions may take together.
MINIMUM_SHARE = 40.0
# Nutrient classes, their unit and their share of a nutrient list; "energy" comes first.
NUTRIENT_CLASSES = (
    ("energy", "MJ/kg", 0.05),
    ("proximate", "%", 0.15),
    ("amino acid", "%", 0.25),
    ("macro mineral", "%", 0.15),
    ("trace mineral", "mg/kg", 0.2),
    ("vitamin", "ppm", 0.2),
)


@dataclass(frozen=True)
class BlendInstance:
    """One least-cost blend LP in linprog's arguments, as `build_lp` would make it.

    `contents[n, j]` is nutrient n in ingredient j (units per `nutrient_units`);
    `prices` are per tonne, `c = prices / 100` (cost of one tonne of blend per % of
    inclusion). Rows of A_ub are spec sides, a min stored negated; `x0` is the mixture
    the specs were set around, feasible by construction.
    """

    name: str
    c: np.ndarray
    A_ub: np.ndarray
    b_ub: np.ndarray
    A_eq: np.ndarray
    b_eq: np.ndarray
    bounds: list[tuple[float, float | None]]
    contents: np.ndarray
    nutrient_units: tuple[str, ...]
    prices: np.ndarray
    x0: np.ndarray

    @property
    def shape(self) -> tuple[int, int]:
        """(ingredients, nutrients)."""
        return self.contents.shape[1], self.contents.shape[0]


# ----- the generator -------------------------------------------------------------------


def _split(count: int, shares: Sequence[float]) -> np.ndarray:
    """A class index for each of `count` items in about the given shares, at least one
    of each class; the largest class takes what rounding leaves over."""
    sizes = np.maximum(1, np.floor(np.array(shares) * count).astype(int))
    sizes[int(np.argmax(shares))] += count - sizes.sum()
    return np.repeat(np.arange(len(shares)), sizes)


def _kinds(n_ingredients: int, rng: np.random.Generator) -> list[str]:
    """The kind of each ingredient, in KIND_SHARES, in a random order."""
    kind_names = [k for k, _ in KIND_SHARES]
    kinds = [kind_names[i] for i in _split(n_ingredients, [s for _, s in KIND_SHARES])]
    return [kinds[i] for i in rng.permutation(n_ingredients)]


def _nutrient_classes(n_nutrients: int) -> tuple[list[str], tuple[str, ...]]:
    """The class and the unit of each nutrient, in NUTRIENT_CLASSES."""
    class_names = [c for c, _, _ in NUTRIENT_CLASSES]
    labels = _split(n_nutrients, [s for _, _, s in NUTRIENT_CLASSES])
    return [class_names[i] for i in labels], tuple(NUTRIENT_CLASSES[i][1] for i in labels)


def _feedstuff_column(column: np.ndarray, cls: np.ndarray, rng: np.random.Generator) -> None:
    """A grain or protein meal: some of nearly every nutrient, scaled by its richness."""
    richness = rng.uniform(0.5, 2.0)  # grains at the low end, protein meals at the top
    for i, c in enumerate(cls):
        if c == "energy":
            column[i] = rng.uniform(8, 16)
        elif c == "proximate" and rng.random() < 0.95:
            column[i] = rng.uniform(1, 25) * richness
        elif c == "amino acid" and rng.random() < 0.9:
            column[i] = rng.uniform(0.05, 1.5) * richness
        elif c == "macro mineral" and rng.random() < 0.8:
            column[i] = rng.uniform(0.01, 1.0)
        elif c == "trace mineral" and rng.random() < 0.5:
            column[i] = rng.uniform(5, 200)
        elif c == "vitamin" and rng.random() < 0.3:
            column[i] = rng.uniform(0.1, 50)


def _fat_column(column: np.ndarray, cls: np.ndarray, rng: np.random.Generator) -> None:
    """An oil or fat: much energy, one proximate (the fat) near 100 %, perhaps a vitamin."""
    column[cls == "energy"] = rng.uniform(30, 37)
    fat_rows = np.flatnonzero(cls == "proximate")
    if fat_rows.size:
        column[rng.choice(fat_rows)] = rng.uniform(90, 99.5)
    vit = np.flatnonzero(cls == "vitamin")
    if vit.size:
        column[rng.choice(vit)] = rng.uniform(5, 100)


def _mineral_column(column: np.ndarray, cls: np.ndarray, rng: np.random.Generator) -> None:
    """A mineral source: one or two macro minerals at 10-38 %, sometimes a trace mineral."""
    macro = np.flatnonzero(cls == "macro mineral")
    for i in rng.choice(macro, size=min(macro.size, rng.integers(1, 3)), replace=False):
        column[i] = rng.uniform(10, 38)
    trace = np.flatnonzero(cls == "trace mineral")
    if trace.size and rng.random() < 0.3:
        column[rng.choice(trace)] = rng.uniform(10, 5000)


def _additive_column(column: np.ndarray, cls: np.ndarray, rng: np.random.Generator) -> None:
    """A premix, a pure amino acid or a vitamin source: a few nutrients, concentrated."""
    what = rng.choice(["trace mineral", "amino acid", "vitamin"])
    rows = np.flatnonzero(cls == what)
    if rows.size == 0:
        rows = np.flatnonzero(cls == "amino acid")
    take = min(rows.size, 1 if what == "amino acid" else int(rng.integers(1, 4)))
    for i in rng.choice(rows, size=take, replace=False):
        if what == "amino acid":
            column[i] = rng.uniform(50, 99)  # % of the additive
        elif what == "trace mineral":
            column[i] = rng.uniform(1000, 5000)
        else:
            column[i] = rng.uniform(100, 5000)


# Which helper fills an ingredient's column of contents, by kind.
_COLUMN_BY_KIND = {"feedstuff": _feedstuff_column, "fat": _fat_column, "mineral": _mineral_column,
                   "additive": _additive_column}


def _contents(kinds: list[str], classes: list[str], rng: np.random.Generator) -> np.ndarray:
    """A nutrient x ingredient table on realistic scales, with the zeros real tables have."""
    table = np.zeros((len(classes), len(kinds)))
    cls = np.array(classes)
    for j, kind in enumerate(kinds):
        _COLUMN_BY_KIND[kind](table[:, j], cls, rng)
    return table


def _bounds_and_prices(kinds: list[str], rng: np.random.Generator):
    """Inclusion limits (lower, upper; inf for none) and prices per tonne by kind."""
    n = len(kinds)
    lower, upper, prices = np.zeros(n), np.zeros(n), np.zeros(n)
    for j, kind in enumerate(kinds):
        if kind == "feedstuff":
            upper[j] = rng.uniform(5, 60)
            prices[j] = rng.uniform(150, 900)
            if rng.random() < 0.15:
                lower[j] = rng.uniform(0.5, 4)
        elif kind == "fat":
            upper[j] = rng.uniform(2, 6)
            prices[j] = rng.uniform(700, 1500)
        elif kind == "mineral":
            upper[j] = rng.uniform(0.5, 3)
            prices[j] = rng.uniform(50, 400)
            if rng.random() < 0.2:
                lower[j] = rng.uniform(0.05, 0.3)
        else:
            upper[j] = rng.uniform(0.05, 1)
            prices[j] = rng.uniform(1000, 3000)
    feed = [j for j, k in enumerate(kinds) if k == "feedstuff"]
    additives = [j for j, k in enumerate(kinds) if k == "additive"]
    # A few feedstuffs with no maximum at all.
    for j in rng.choice(feed, size=max(1, len(feed) // 15), replace=False):
        upper[j] = np.inf
    # A few additives fixed, as a premix at a set rate is.
    for j in rng.choice(additives, size=max(1, len(additives) // 8), replace=False):
        lower[j] = upper[j] = round(float(rng.uniform(0.1, 0.5)), 2)
    # Minimums and fixed rates take at most MINIMUM_SHARE % of the blend at any size.
    if lower.sum() > MINIMUM_SHARE:
        fixed = lower == upper
        lower *= MINIMUM_SHARE / lower.sum()
        upper[fixed] = lower[fixed]
    return lower, upper, prices


def _feasible_mixture(lower, upper, kinds, rng) -> np.ndarray:
    """A mixture within the inclusion limits that sums to 100: the lower limits, then
    the rest spread over a random few ingredients by weight, filling each to its limit."""
    x = lower.copy()
    weight = np.array([rng.uniform(1, 10) if k in ("feedstuff", "fat") else rng.uniform(0.01, 0.1)
                       for k in kinds])
    candidates = np.flatnonzero(upper > lower)
    chosen = candidates[rng.random(candidates.size) < 0.5]
    for pool in (chosen, candidates):
        free = pool.copy()
        while free.size and TOTAL - x.sum() > 1e-12:
            remaining = TOTAL - x.sum()
            share = remaining * weight[free] / weight[free].sum()
            room = upper[free] - x[free]
            x[free] += np.minimum(share, room)
            free = free[room > share]
    if abs(x.sum() - TOTAL) > 1e-9:
        raise RuntimeError("the generated inclusion limits cannot make 100%")
    return x


def _spec_rows(contents: np.ndarray, levels: np.ndarray, rng: np.random.Generator):
    """Spec sides around the mixture's levels as A_ub rows and right-hand sides: a min,
    a max or both per nutrient, a quarter of the sides exactly at the level."""
    rows, rhs = [], []
    for i, level in enumerate(levels):
        if level <= 0 or rng.random() < 0.1:
            continue  # nothing in the mixture carries it, or no spec on it
        sides = rng.choice(["min", "max", "both"], p=[0.45, 0.15, 0.4])
        if sides in ("min", "both"):
            tight = rng.random() < 0.25
            rows.append(-contents[i] / TOTAL)
            rhs.append(-(level if tight else level * (1 - rng.uniform(0.01, 0.15))))
        if sides in ("max", "both"):
            tight = rng.random() < 0.25
            rows.append(contents[i] / TOTAL)
            rhs.append(level if tight else level * (1 + rng.uniform(0.01, 0.3)))
    return rows, rhs


def make_blend(n_ingredients: int, n_nutrients: int, seed: int, index: int = 0) -> BlendInstance:
    """A feasible least-cost blend LP of the given size, the same for the same arguments.

    Ingredients are feedstuffs, fats, minerals and additives with kind-typical contents,
    inclusion limits (some minimums, a few fixed rates, a few without a maximum) and
    prices per tonne (50 to 3000). Specs are set around the levels of a random feasible
    mixture: a min, a max or both, a quarter of the sides exactly at that level, so the
    LP is feasible and degenerate the way real formulations are.
    """
    rng = np.random.default_rng([seed, n_ingredients, n_nutrients, index])
    kinds = _kinds(n_ingredients, rng)
    classes, units = _nutrient_classes(n_nutrients)
    contents = _contents(kinds, classes, rng)
    lower, upper, prices = _bounds_and_prices(kinds, rng)
    x0 = _feasible_mixture(lower, upper, kinds, rng)
    rows, rhs = _spec_rows(contents, contents @ x0 / TOTAL, rng)
    bounds = [(float(lo), None if np.isinf(hi) else float(hi)) for lo, hi in zip(lower, upper)]
    return BlendInstance(
        name=f"blend {n_ingredients}x{n_nutrients} #{index}",
        c=prices / TOTAL,
        A_ub=np.array(rows).reshape(len(rows), n_ingredients),
        b_ub=np.array(rhs),
        A_eq=np.ones((1, n_ingredients)),
        b_eq=np.array([TOTAL]),
        bounds=bounds,
        contents=contents,
        nutrient_units=units,
        prices=prices,
        x0=x0,
    )


def price_sweep(instance: BlendInstance, steps: int, seed: int) -> list[BlendInstance]:
    """The same LP `steps` times with prices changed step by step, as a weekly price
    update does: each step moves a third of the prices by a few percent."""
    rng = np.random.default_rng([seed, *instance.shape, 7919])  # a stream apart from make_blend's
    prices = instance.prices.copy()
    out = []
    for step in range(steps):
        moved = rng.random(prices.size) < 1 / 3
        prices = np.where(moved, prices * np.exp(rng.normal(0, 0.05, prices.size)), prices)
        out.append(replace(instance, name=f"{instance.name} price step {step + 1}",
                           c=prices / TOTAL, prices=prices.copy()))
    return out


def bound_sweep(instance: BlendInstance, steps: int, seed: int) -> list[BlendInstance]:
    """The same LP `steps` times with limits changed step by step, as a formulator trying
    tighter and looser limits does: each step moves a fifth of the inclusion maxima and a
    fifth of the spec sides, each to between 30 % and 150 % of its distance from the
    mixture `x0`, so every step stays feasible (x0 meets it) and sides at x0's level stay."""
    rng = np.random.default_rng([seed, *instance.shape, 104729])  # a stream apart from the others
    lower = np.array([lo for lo, _ in instance.bounds])
    upper = np.array([np.inf if hi is None else hi for _, hi in instance.bounds])
    b_ub, x0 = instance.b_ub.copy(), instance.x0
    level = instance.A_ub @ x0
    out = []
    for step in range(steps):
        moved = (rng.random(upper.size) < 1 / 5) & np.isfinite(upper) & (upper > lower)
        upper = np.where(moved, x0 + (upper - x0) * rng.uniform(0.3, 1.5, upper.size), upper)
        upper = np.maximum(upper, lower)
        sides = rng.random(b_ub.size) < 1 / 5
        b_ub = np.where(sides, level + (b_ub - level) * rng.uniform(0.3, 1.5, b_ub.size), b_ub)
        bounds = [(float(lo), None if np.isinf(hi) else float(hi)) for lo, hi in zip(lower, upper)]
        out.append(replace(instance, name=f"{instance.name} limit step {step + 1}", bounds=bounds,
                           b_ub=b_ub.copy()))
    return out


def _ingredients(instance: BlendInstance, names: list[str]) -> tuple[Ingredient, ...]:
    """The generated ingredients as the workbook reader would give them, with their cells."""
    ingredients = []
    for j, (low, high) in enumerate(instance.bounds):
        ingredients.append(Ingredient(
            name=f"Feed {j + 1}",
            cost=float(instance.prices[j]),
            minimum=low or None,
            maximum=high,
            use=True,
            contents={name: float(instance.contents[i, j]) for i, name in enumerate(names)},
            blanks=(),
            cells={"name": f"Ingredients!A{j + 2}", "cost": f"Ingredients!B{j + 2}",
                   "min": f"Ingredients!C{j + 2}", "max": f"Ingredients!D{j + 2}"},
        ))
    return tuple(ingredients)


def infeasible_blend(n_ingredients: int, n_nutrients: int, seed: int) -> Blend:
    """A workbook-level blend (domain model) of the given size whose specs conflict.

    Ingredients and contents come from `make_blend`; specs sit around a feasible
    mixture's levels, then the first spec's minimum is set above every ingredient's
    content of that nutrient, which no blend can reach.
    """
    instance = make_blend(n_ingredients, n_nutrients, seed)
    names = [f"N{i + 1}" for i in range(n_nutrients)]
    levels = instance.contents @ instance.x0 / TOTAL
    specs = []
    for i, name in enumerate(names):
        if levels[i] <= 0:
            continue
        low = float(levels[i] * 0.95)
        high = float(levels[i] * 1.25) if i % 3 == 0 else None
        if not specs:
            low, high = float(instance.contents[i].max() * 1.01), None  # out of reach
        cells = {"nutrient": f"Specs!A{len(specs) + 2}", "min": f"Specs!B{len(specs) + 2}",
                 "max": f"Specs!C{len(specs) + 2}"}
        specs.append(Spec(nutrient=name, minimum=low, maximum=high, cells=cells))
    return Blend(ingredients=_ingredients(instance, names), nutrients=tuple(names), specs=tuple(specs),
                 settings=Settings())


# ----- the family's table --------------------------------------------------------------


def _plan(n_ingredients: int, repeat: int | None, quick: bool) -> tuple[int, int]:
    """(LPs, repeats) for one size: the table above for the nearest size, or the options."""
    nearest = min(INSTANCES, key=lambda k: abs(k - n_ingredients))
    count, reps = INSTANCES[nearest], REPEATS[nearest]
    if quick:
        count, reps = 3, 1
    return count, repeat if repeat is not None else reps


def _size_lines(n_ingredients: int, n_nutrients: int, options: Options) -> Iterator[str]:
    """The rows of one size: cold solves; the price sweep cold, warm-started and re-solved
    (`blendkit.bench.resolves`); and the series of limit changes re-solved."""
    count, reps = _plan(n_ingredients, options.repeat, options.quick)
    instances = [make_blend(n_ingredients, n_nutrients, options.seed, k) for k in range(count)]
    sweep = price_sweep(instances[0], 3 if options.quick else SWEEP_STEPS, options.seed)
    size = f"{n_ingredients}x{n_nutrients}"
    first = instances[0]
    start = solve(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds).basis
    yield from measurement_lines([measure(size, instances, reps)], head=False)
    yield from measurement_lines([measure(f"{size} sweep, cold", sweep, reps)], head=False)
    yield from measurement_lines([measure(f"{size} sweep, warm", sweep, reps, warm_from=start)], head=False)
    yield from measurement_lines([measure_resolves(f"{size} sweep, re-solve", first, sweep, "costs", reps)],
                                 head=False)
    limits = bound_sweep(first, 3 if options.quick else SWEEP_STEPS, options.seed)
    yield from measurement_lines([measure_resolves(f"{size} limits, re-solve", first, limits, "limits", reps)],
                                 head=False)


def section(options: Options) -> Iterator[str]:
    """The blend family's part of the report, a line at a time as each row is measured."""
    yield ("Blend LPs (ingredients x nutrients): ours = blendkit.engine.solve, linprog = linprog(method='highs'), "
           "highspy = highspy.Highs passModel + run")
    yield from measurement_lines([])
    for n_ingredients, n_nutrients in options.sizes:
        yield from _size_lines(n_ingredients, n_nutrients, options)
    yield "(sweep: the first LP of the size after each of a series of price changes; cold solves"
    yield " each from scratch, warm starts each from the previous solve's basis; linprog is cold, highspy warm too;"
    yield " re-solve: ours through blendkit.engine.resolve.Resolver, highspy keeping its model and factors, both"
    yield " told only the new costs; limits: a series of changes of inclusion maxima and spec sides, re-solved"
    yield " the same way, by the dual simplex; linprog cold in both)"

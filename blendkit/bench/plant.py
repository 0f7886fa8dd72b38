"""The plant family: one joint LP of several products made from one shared ingredient list.

A plant makes P products from the same n ingredients; each product has its own specs (a
minimum and a maximum on every one of m nutrients, around the levels of its own feasible
mixture) and its total fixed at 100 %, and every ingredient has a stock that all products
draw on, as `blendkit.lp.build` makes a Products sheet with stocks. The LP has P x n
columns and P x (2m + 1) + n rows, and is very sparse: each product is a dense block, the
blocks are linked only by the stock rows. Specs lie 2-20 % below and 5-40 % above the
mixture's levels, stocks 5-50 % above the feasible mixtures' use, so the LP is feasible
and the cheap ingredients' stocks bind. Measured: ours, linprog(method="highs") and highspy called
directly (presolve on), each cold, with the ratios (`blendkit.bench.timing.measure`).
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass, replace

import numpy as np
import scipy.sparse as sp

from blendkit.bench.options import Options
from blendkit.bench.resolves import measure_resolves
from blendkit.bench.timing import measure, measurement_lines

# (products, ingredients, nutrients) of the plants measured, and the repeats of each solve.
PLANTS = ((5, 60, 30), (20, 60, 30), (40, 80, 40), (60, 60, 30))
QUICK_PLANTS = PLANTS[:2]
REPEATS = {5: 5, 20: 3, 40: 2, 60: 1}
# Price changes after each plant's cold solve, re-solved from the basis held.
PRICE_STEPS = 3
TOTAL = 100.0  # inclusions are in % of each product
# Contents: this share non-zero, uniform in CONTENT_RANGE; caps (%) and prices per tonne.
DENSITY = 0.7
CONTENT_RANGE = (0.1, 10.0)
CAP_RANGE = (5.0, 60.0)
PRICE_RANGE = (100.0, 1000.0)
# Product amounts in tonnes, and how far above the feasible mixtures' use a stock lies.
AMOUNT_RANGE = (10.0, 100.0)
STOCK_ABOVE_USE = (0.5, 3.0)
# How far below and above the feasible mixture's level a spec's minimum and maximum lie.
MIN_BELOW_LEVEL = (0.1, 0.4)
MAX_ABOVE_LEVEL = (0.2, 1.0)


@dataclass(frozen=True)
class PlantInstance:
    """One plant LP in linprog's arguments (sparse A_ub and A_eq); columns are x[p, j]
    product by product, rows the specs of each product in turn, then the stocks."""

    name: str
    c: np.ndarray
    A_ub: sp.csr_matrix
    b_ub: np.ndarray
    A_eq: sp.csr_matrix
    b_eq: np.ndarray
    bounds: list[tuple[float, float | None]]


def _product_specs(contents: np.ndarray, level: np.ndarray, rng: np.random.Generator):
    """A product's spec rows (the min rows negated, then the max rows) and right-hand sides."""
    below = rng.uniform(*MIN_BELOW_LEVEL, level.size)
    above = rng.uniform(*MAX_ABOVE_LEVEL, level.size)
    # A nutrient the mixture lacks gets a maximum no blend can pass (the richest content).
    high = np.where(level > 0, level * (1 + above), contents.max(axis=1))
    rows = np.vstack([-contents / TOTAL, contents / TOTAL])
    return rows, np.concatenate([-level * (1 - below), high])


def _ingredients(n_ingredients: int, n_nutrients: int, rng: np.random.Generator):
    """Contents (DENSITY of them non-zero, on one scale), inclusion caps and prices."""
    contents = rng.uniform(*CONTENT_RANGE, (n_nutrients, n_ingredients))
    contents *= rng.random(contents.shape) < DENSITY
    upper = rng.uniform(*CAP_RANGE, n_ingredients)
    upper[rng.choice(n_ingredients, size=max(1, n_ingredients // 10), replace=False)] = np.inf
    return contents, upper, rng.uniform(*PRICE_RANGE, n_ingredients)


def _mixture(upper: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """A mixture within the caps that sums to 100: random weights, filled cap by cap."""
    x, free = np.zeros(upper.size), np.arange(upper.size)
    weight = rng.random(upper.size) ** 2
    while free.size and TOTAL - x.sum() > 1e-12:
        share = (TOTAL - x.sum()) * weight[free] / weight[free].sum()
        room = upper[free] - x[free]
        x[free] += np.minimum(share, room)
        free = free[room > share]
    return x


@dataclass(frozen=True)
class PlantData:
    """What a plant is made of: contents (nutrients x ingredients), inclusion caps, prices,
    each product's amount and spec sides (minimum, maximum per nutrient), and the stocks."""

    contents: np.ndarray
    upper: np.ndarray
    prices: np.ndarray
    amounts: np.ndarray
    minimums: list[np.ndarray]
    maximums: list[np.ndarray]
    stock: np.ndarray


def plant_data(products: int, n_ingredients: int, n_nutrients: int, seed: int) -> PlantData:
    """The numbers of a feasible plant of the given size, the same for the same arguments."""
    rng = np.random.default_rng([seed, products, n_ingredients, n_nutrients, 31])
    contents, upper, prices = _ingredients(n_ingredients, n_nutrients, rng)
    amounts = rng.uniform(*AMOUNT_RANGE, products)
    minimums, maximums, use = [], [], np.zeros(n_ingredients)
    for p in range(products):
        x0 = _mixture(upper, rng)
        _, sides = _product_specs(contents, contents @ x0 / TOTAL, rng)
        minimums.append(-sides[:n_nutrients])
        maximums.append(sides[n_nutrients:])
        use += amounts[p] * x0 / TOTAL
    stock = use * (1 + rng.uniform(*STOCK_ABOVE_USE, n_ingredients))
    return PlantData(contents, upper, prices, amounts, minimums, maximums, stock)


def make_plant(products: int, n_ingredients: int, n_nutrients: int, seed: int) -> PlantInstance:
    """A feasible plant LP of the given size, the same for the same arguments."""
    data = plant_data(products, n_ingredients, n_nutrients, seed)
    block = sp.csr_matrix(np.vstack([-data.contents / TOTAL, data.contents / TOTAL]))
    stock_rows = sp.hstack([sp.identity(n_ingredients) * (a / TOTAL) for a in data.amounts], format="csr")
    bounds = [(0.0, None if np.isinf(hi) else float(hi)) for hi in data.upper] * products
    return PlantInstance(
        name=f"plant {products}x{n_ingredients}x{n_nutrients}",
        c=np.concatenate([data.prices * a / TOTAL for a in data.amounts]),
        A_ub=sp.vstack([sp.block_diag([block] * products), stock_rows], format="csr"),
        b_ub=np.concatenate([*(np.concatenate([-lo, hi]) for lo, hi in zip(data.minimums, data.maximums)),
                             data.stock]),
        A_eq=sp.kron(sp.identity(products), np.ones((1, n_ingredients)), format="csr"),
        b_eq=np.full(products, TOTAL),
        bounds=bounds,
    )


def plant_workbook(path, products: int, n_ingredients: int, n_nutrients: int, seed: int):
    """The same plant as a workbook at `path` (Ingredients with a Stock column, Specs per
    product, Products with amounts in t), for the workbook family (`books`)."""
    import openpyxl

    data = plant_data(products, n_ingredients, n_nutrients, seed)
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Ingredients"
    sheet.append(["Ingredient", "Cost", "Min (%)", "Max (%)", "Stock (t)", *(f"N{i + 1} (%)" for i in range(n_nutrients))])
    for j in range(n_ingredients):
        cap = None if np.isinf(data.upper[j]) else float(data.upper[j])
        sheet.append([f"Ingredient {j + 1}", float(data.prices[j]), None, cap, float(data.stock[j]),
                      *(float(v) for v in data.contents[:, j])])
    specs = book.create_sheet("Specs")
    specs.append(["Nutrient", "Min", "Max", "Product"])
    for p, (low, high) in enumerate(zip(data.minimums, data.maximums)):
        for i in range(n_nutrients):
            specs.append([f"N{i + 1}", float(low[i]), float(high[i]), f"Product {p + 1}"])
    listed = book.create_sheet("Products")
    listed.append(["Product", "Amount (t)"])
    for p in range(products):
        listed.append([f"Product {p + 1}", float(data.amounts[p])])
    settings = book.create_sheet("Settings")
    settings.append(["Setting", "Value"])
    settings.append(["Mass unit", "t"])
    book.save(path)
    return path


def plant_price_steps(products: int, n_ingredients: int, n_nutrients: int, seed: int,
                      steps: int = PRICE_STEPS) -> list[PlantInstance]:
    """The plant of `make_plant` with its prices changed step by step, as a weekly price
    list does: each step moves a third of the ingredient prices by a few percent, one
    price per ingredient, paid by every product."""
    data = plant_data(products, n_ingredients, n_nutrients, seed)
    plant = make_plant(products, n_ingredients, n_nutrients, seed)
    rng = np.random.default_rng([seed, products, n_ingredients, n_nutrients, 7919])
    prices, out = data.prices.copy(), []
    for step in range(steps):
        moved = rng.random(prices.size) < 1 / 3
        prices = np.where(moved, prices * np.exp(rng.normal(0, 0.05, prices.size)), prices)
        out.append(replace(plant, name=f"{plant.name} price step {step + 1}",
                           c=np.concatenate([prices * a / TOTAL for a in data.amounts])))
    return out


def section(options: Options) -> Iterator[str]:
    """The plant family's part of the report, a line at a time as each plant is measured."""
    yield ("Plant LPs (products x ingredients x nutrients; one joint LP, stocks shared): ours = "
           "blendkit.engine.solve, linprog = linprog(method='highs'), highspy = highspy.Highs passModel + run")
    yield from measurement_lines([])
    for products, n_ingredients, n_nutrients in QUICK_PLANTS if options.quick else PLANTS:
        plant = make_plant(products, n_ingredients, n_nutrients, options.seed)
        repeat = 1 if options.quick else (options.repeat or REPEATS[products])
        m, n = plant.A_ub.shape[0] + plant.A_eq.shape[0], plant.c.size
        yield from measurement_lines([measure(f"{products}x{n_ingredients}x{n_nutrients} ({n}x{m})", [plant], repeat)],
                                     head=False)
        steps = plant_price_steps(products, n_ingredients, n_nutrients, options.seed)
        yield from measurement_lines([measure_resolves(f"{products}x{n_ingredients}x{n_nutrients} prices, re-solve",
                                                       plant, steps, "costs", 1)], head=False)
    yield "(columns x rows in brackets; ours and linprog are given the same sparse matrices; prices, re-solve:"
    yield (f" {PRICE_STEPS} steps each moving a third of the ingredient prices by a few percent, ours through "
           "Resolver, highspy keeping its model, both told only the new costs; linprog cold)")

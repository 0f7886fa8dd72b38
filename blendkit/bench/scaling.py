"""The scaling family: how solve time grows with ingredients, nutrients and products, the
largest plant solved within a time budget, and how many small LPs a minute the batch pool
gets through.

Three parts, each ours beside ``scipy.optimize.linprog(method="highs")`` with the ratio:
(a) one blend (`blends.make_blend`) as its ingredients grow at a fixed nutrient count and as
its nutrients grow at a fixed ingredient count; (b) plant LPs (`plant.make_plant`) as the
products grow, then a short bisection for the largest product count our engine solves
within `PLANT_BUDGET` seconds, stopped when the plant part has used `PLANT_SEARCH_CAP`
seconds; (c) many independent 60 x 30 blends through `blendkit.batch.solve_lps` with 1 and
2 worker processes (the pipeline's whole per-formula work: build, solve, analysis and
ranging), beside our bare engine in a loop and a loop of linprog calls, in LPs per minute.
Growth is summed up as the exponent k of time ~ size^k, from a least-squares fit of log
time on log size. The run takes a few minutes (the plants dominate), so the family is
not in `report.FAMILIES`: run it alone with ``python -m blendkit.bench.scaling``.
"""

from __future__ import annotations

import argparse
import time
from collections.abc import Iterator, Sequence
from dataclasses import dataclass

import numpy as np
from scipy.optimize import linprog

from blendkit.batch import solve_lps
from blendkit.bench.blends import TOTAL, BlendInstance, _ingredients, make_blend
from blendkit.bench.machine import load_average, machine_lines
from blendkit.bench.plant import make_plant
from blendkit.bench.timing import Measurement, measure, measurement_lines, timed
from blendkit.engine import solve
from blendkit.model.blend import Blend, Settings, Spec

SEED = 20240611
# (a) one blend: ingredients at a fixed nutrient count, nutrients at a fixed ingredient count.
INGREDIENT_STEPS, AT_NUTRIENTS = (25, 50, 100, 200, 400), 30
NUTRIENT_STEPS, AT_INGREDIENTS = (10, 30, 60, 120), 100
BLEND_LPS, BLEND_REPEATS = 4, 3
# (b) plants of PLANT_SHAPE (ingredients, nutrients) with these product counts.
PLANT_PRODUCTS, PLANT_SHAPE = (5, 10, 20, 30, 40), (60, 30)
PLANT_BUDGET = 10.0  # seconds: "solved within" this
PLANT_SEARCH_CAP = 240.0  # seconds the plant part may take before the search stops
PLANT_STEP = 5  # the bisection stops when the bracket is this many products wide
# (c) throughput: this many independent blends of THROUGHPUT_SHAPE.
THROUGHPUT_LPS, THROUGHPUT_SHAPE = 400, (60, 30)
# Two objectives agree when they differ by at most this, relative to max(1, |linprog's|).
AGREE_RTOL = 1e-6
QUICK = {"ingredients": (25, 50, 100), "nutrients": (10, 30), "products": (5, 10), "lps": 60}


def growth_exponent(sizes: Sequence[float], seconds: Sequence[float]) -> float:
    """k in time ~ size^k: the slope of the least-squares line of log time on log size."""
    return float(np.polyfit(np.log(sizes), np.log(seconds), 1)[0])


# ----- (a) one blend -------------------------------------------------------------------------


def _blend_row(n_ingredients: int, n_nutrients: int, lps: int, repeat: int) -> Measurement:
    """Our time and linprog's on `lps` blends of one size (medians)."""
    instances = [make_blend(n_ingredients, n_nutrients, SEED, k) for k in range(lps)]
    return measure(f"{n_ingredients}x{n_nutrients}", instances, repeat)


def _growth_lines(label: str, sizes: Sequence[int], rows: Sequence[Measurement]) -> Iterator[str]:
    """The rows of one growth series and its exponents, ours and linprog's."""
    yield from measurement_lines(rows, head=False)
    ours = growth_exponent(sizes, [r.ours_seconds for r in rows])
    theirs = growth_exponent(sizes, [r.highs_seconds for r in rows])
    yield f"  growth with {label}: time ~ size^k, k = {ours:.2f} ours, {theirs:.2f} linprog"


def blend_lines(quick: bool) -> Iterator[str]:
    """Part (a): one blend as its ingredients grow, then as its nutrients grow."""
    lps, repeat = (2, 1) if quick else (BLEND_LPS, BLEND_REPEATS)
    ingredients = QUICK["ingredients"] if quick else INGREDIENT_STEPS
    nutrients = QUICK["nutrients"] if quick else NUTRIENT_STEPS
    for n in ingredients[:2]:  # a warm-up, untimed: first-call costs (imports, caches)
        _blend_row(n, AT_NUTRIENTS, 1, 1)
    yield f"(a) One blend (ingredients x nutrients), {lps} LPs per size, median of {repeat}"
    yield from measurement_lines([])
    rows = [_blend_row(n, AT_NUTRIENTS, lps, repeat) for n in ingredients]
    yield from _growth_lines(f"ingredients at {AT_NUTRIENTS} nutrients", ingredients, rows)
    rows = [_blend_row(AT_INGREDIENTS, m, lps, repeat) for m in nutrients]
    yield from _growth_lines(f"nutrients at {AT_INGREDIENTS} ingredients", nutrients, rows)


# ----- (b) plants ----------------------------------------------------------------------------


@dataclass(frozen=True)
class PlantTime:
    """One plant solved once by each solver."""

    products: int
    columns: int
    rows: int
    ours: float  # seconds
    linprog: float  # seconds
    status: str  # ours
    agrees: bool  # same objective as linprog's, within AGREE_RTOL


def time_plant(products: int, seed: int = SEED) -> PlantTime:
    """One cold solve of a plant of `products` x PLANT_SHAPE by our engine and by linprog."""
    lp = make_plant(products, *PLANT_SHAPE, seed)
    args = (lp.c, lp.A_ub, lp.b_ub, lp.A_eq, lp.b_eq, lp.bounds)
    ours, t_ours = timed(lambda: solve(*args), 1)
    ref, t_ref = timed(lambda: linprog(*args, method="highs"), 1)
    agrees = (ours.status == "optimal" and ref.status == 0
              and abs(ours.objective - ref.fun) <= AGREE_RTOL * max(1.0, abs(ref.fun)))
    return PlantTime(products=products, columns=lp.c.size, rows=lp.A_ub.shape[0] + lp.A_eq.shape[0],
                     ours=t_ours, linprog=t_ref, status=ours.status, agrees=agrees)


def _plant_line(p: PlantTime) -> str:
    """One plant's row."""
    return (f"  {p.products:>4} products ({p.columns} x {p.rows}): ours {p.ours:7.2f} s, linprog {p.linprog:6.2f} s, "
            f"ratio {p.ours / p.linprog:5.1f}, {p.status}{'' if p.agrees else ', DISAGREES with linprog'}")


def _largest_within(timed_plants: list[PlantTime], started: float) -> Iterator[str | PlantTime]:
    """Bisection on the product count for the largest plant solved within PLANT_BUDGET:
    yields each plant it solves, then a line with the answer."""
    def bracket():
        inside = [p.products for p in timed_plants if p.ours <= PLANT_BUDGET and p.status == "optimal"]
        over = [p.products for p in timed_plants if p.ours > PLANT_BUDGET]
        return max(inside, default=0), min(over, default=None)

    low, high = bracket()
    while time.perf_counter() - started < PLANT_SEARCH_CAP:
        if high is not None and high - low <= PLANT_STEP:
            break
        probe = 2 * low if high is None else (low + high) // 2
        plant = time_plant(max(probe, 1))
        timed_plants.append(plant)
        yield plant
        low, high = bracket()
    capped = "" if high is not None and high - low <= PLANT_STEP else " (search stopped at the time cap)"
    above = f"; {high} products took longer" if high is not None else ""
    yield (f"  largest plant solved within {PLANT_BUDGET:g} s: {low} products of "
           f"{PLANT_SHAPE[0]} x {PLANT_SHAPE[1]}{above}{capped}")


def plant_lines(quick: bool) -> Iterator[str]:
    """Part (b): plants as the products grow, the exponent, and the largest within budget."""
    products = QUICK["products"] if quick else PLANT_PRODUCTS
    yield (f"(b) Plants: products x {PLANT_SHAPE[0]} ingredients x {PLANT_SHAPE[1]} nutrients, "
           "one joint LP (stocks shared), one cold solve each")
    started = time.perf_counter()
    plants = []
    for count in products:
        plants.append(time_plant(count))
        yield _plant_line(plants[-1])
    columns = [p.columns for p in plants]
    yield (f"  growth with products: time ~ columns^k, k = {growth_exponent(columns, [p.ours for p in plants]):.2f} "
           f"ours, {growth_exponent(columns, [p.linprog for p in plants]):.2f} linprog")
    if quick:
        return
    for item in _largest_within(plants, started):
        yield item if isinstance(item, str) else _plant_line(item)


# ----- (c) throughput ------------------------------------------------------------------------


def feasible_blend(instance: BlendInstance) -> Blend:
    """A generated blend as the workbook reader would give it (domain model): its
    ingredients, and one Spec per nutrient with the min and max of its A_ub rows."""
    names = [f"N{i + 1}" for i in range(instance.contents.shape[0])]
    scaled = instance.contents / TOTAL
    sides: dict[int, dict[str, float]] = {}
    for row, rhs in zip(instance.A_ub, instance.b_ub):
        is_min = bool(np.any(row < 0))
        i = int(np.argmin(np.abs(scaled - (-row if is_min else row)).sum(axis=1)))
        sides.setdefault(i, {})["min" if is_min else "max"] = float(-rhs if is_min else rhs)
    specs = []
    for k, i in enumerate(sorted(sides)):
        cells = {"nutrient": f"Specs!A{k + 2}", "min": f"Specs!B{k + 2}", "max": f"Specs!C{k + 2}"}
        specs.append(Spec(nutrient=names[i], minimum=sides[i].get("min"), maximum=sides[i].get("max"),
                          cells=cells))
    return Blend(ingredients=_ingredients(instance, names), nutrients=tuple(names), specs=tuple(specs),
                 settings=Settings())


def _per_minute(label: str, lps: int, seconds: float) -> str:
    """One throughput row."""
    return f"  {label:<72}{seconds:8.2f} s {lps / seconds * 60:>10,.0f} LPs/min"


def throughput_lines(quick: bool) -> Iterator[str]:
    """Part (c): many independent small LPs, ours through the batch pool and bare, and linprog."""
    count = QUICK["lps"] if quick else THROUGHPUT_LPS
    instances = [make_blend(*THROUGHPUT_SHAPE, SEED, k) for k in range(count)]
    blends = [feasible_blend(lp) for lp in instances]
    yield f"(c) Throughput: {count} independent {THROUGHPUT_SHAPE[0]} x {THROUGHPUT_SHAPE[1]} blends"
    args = [(lp.c, lp.A_ub, lp.b_ub, lp.A_eq, lp.b_eq, lp.bounds) for lp in instances]
    theirs, t_ref = timed(lambda: [linprog(*a, method="highs") for a in args], 1)
    ours, t_bare = timed(lambda: [solve(*a) for a in args], 1)
    yield _per_minute("linprog(method='highs') in a loop, 1 process", count, t_ref)
    yield _per_minute("ours, blendkit.engine.solve in a loop, 1 process", count, t_bare)
    for jobs, check in ((1, False), (2, False), (2, True)):
        formulas, seconds = timed(lambda: solve_lps(blends, jobs=jobs, check=check), 1)
        what = "HiGHS cross-check" if check else "no cross-check"
        yield _per_minute(f"ours, batch.solve_lps jobs={jobs} (analysis, ranging; {what})", count, seconds)
    agree = sum(f.status == "optimal" and r.status == 0 and abs(f.cost - r.fun) <= AGREE_RTOL * max(1.0, abs(r.fun))
                for f, r in zip(formulas, theirs))
    yield f"  formula costs agreeing with linprog: {agree} of {count}; bare engine ratio to linprog " \
          f"{t_bare / t_ref:.2f}"


# ----- the command ---------------------------------------------------------------------------


def section(quick: bool = False) -> Iterator[str]:
    """The whole family, a line at a time as it is measured."""
    for part in (blend_lines, plant_lines, throughput_lines):
        yield from part(quick)
        yield ""


def main(argv: list[str] | None = None) -> None:
    """`python -m blendkit.bench.scaling`: the machine, then the three parts."""
    parser = argparse.ArgumentParser(prog="python -m blendkit.bench.scaling",
                                     description="How blendkit's solve time grows, and its batch throughput.")
    parser.add_argument("--quick", action="store_true", help="small sizes only, no plant search: a fast look")
    args = parser.parse_args(argv)
    started = time.perf_counter()
    for line in machine_lines():
        print(line)
    print(f"seed {SEED}; times are wall times on a machine that may be shared (see the load average)")
    print()
    for line in section(args.quick):
        print(line, flush=True)
    print(f"total {time.perf_counter() - started:.0f} s; load average at end {load_average()}")


if __name__ == "__main__":
    main()

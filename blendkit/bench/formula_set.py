"""The formula-set family: a company's weekly job, one workbook of many unlinked formulas.

One workbook holds one ingredient list (from `blends.make_blend`: 60 ingredients, 30
nutrients) and 200 products without amounts, each with its own specs set around the
levels of its own feasible mixture, so each is its own LP. Measured: the whole
`blendkit solve` (read, solve in the process pool, write) from scratch; then again after
a 3 % price change given as a price list, with the comparison against the first output;
the peak memory of the run; and the 200 LPs alone, ours (one after another and in the
pool) beside 200 separate calls of `scipy.optimize.linprog(method="highs")`.
"""

from __future__ import annotations

import os
import resource
import tempfile
import time
from collections.abc import Iterator
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np
import openpyxl
from scipy.optimize import linprog

from blendkit.batch import solve_lps
from blendkit.bench.blends import TOTAL, _bounds_and_prices, _contents, _feasible_mixture, _kinds, _nutrient_classes
from blendkit.bench.options import Options
from blendkit.bench.timing import OBJECTIVE_RTOL
from blendkit.engine import solve_form
from blendkit.lp.build import build_lp
from blendkit.pipeline import lp_blends
from blendkit.read import read_workbook
from blendkit.run import solve_run

FORMULAS, INGREDIENTS, NUTRIENTS = 200, 60, 30
QUICK_FORMULAS = 40


def formula_set_workbook(path: Path, formulas: int, seed: int) -> Path:
    """Write the workbook: Ingredients (shared), Products (no amounts), Specs per product."""
    rng = np.random.default_rng([seed, formulas])
    kinds = _kinds(INGREDIENTS, rng)
    classes, units = _nutrient_classes(NUTRIENTS)
    contents = _contents(kinds, classes, rng)
    lower, upper, prices = _bounds_and_prices(kinds, rng)
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Ingredients"
    sheet.append(["Ingredient", "Cost", "Min", "Max", *(f"N{i + 1} ({unit})" for i, unit in enumerate(units))])
    for j in range(INGREDIENTS):
        sheet.append([f"Ingredient {j + 1}", round(float(prices[j]), 2), float(lower[j]) or None,
                      None if np.isinf(upper[j]) else float(upper[j]), *(float(v) for v in contents[:, j])])
    specs = book.create_sheet("Specs")
    specs.append(["Nutrient", "Min", "Max", "Product"])
    products = book.create_sheet("Products")
    products.append(["Product"])
    for k in range(formulas):
        products.append([f"Formula {k + 1}"])
        levels = contents @ _feasible_mixture(lower, upper, kinds, rng) / TOTAL
        for i, level in enumerate(levels):
            if level > 0 and rng.random() < 0.9:
                low = level * (1 - rng.uniform(0.0, 0.1)) if rng.random() < 0.8 else None
                high = level * (1 + rng.uniform(0.0, 0.2)) if low is None or rng.random() < 0.4 else None
                specs.append([f"N{i + 1}", low, high, f"Formula {k + 1}"])
    book.save(path)
    return path


def price_list(path: Path, book: Path, seed: int) -> Path:
    """A price list moving every price by up to 3 % either way."""
    rng = np.random.default_rng(seed)
    source = openpyxl.load_workbook(book)["Ingredients"]
    out = openpyxl.Workbook()
    sheet = out.active
    sheet.title = "Ingredients"
    sheet.append(["Ingredient", "Cost"])
    for name, cost in source.iter_rows(min_row=2, max_col=2, values_only=True):
        sheet.append([name, round(cost * (1 + rng.uniform(-0.03, 0.03)), 2)])
    out.save(path)
    return path


def _peak_mb() -> float:
    """The largest resident memory of this process or any finished worker, in MB."""
    own = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    workers = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    return max(own, workers) / 1024


def _solve_lines(folder: Path, book: Path, seed: int) -> Iterator[str]:
    """The whole command twice: from scratch, then after a price change with comparison."""
    started = time.perf_counter()
    first = solve_run([book])
    yield f"  first solve (read, solve, write):             {time.perf_counter() - started:6.2f} s"
    prices = price_list(folder / "prices.xlsx", book, seed)
    started = time.perf_counter()
    again = solve_run([book], prices=prices)
    seconds = time.perf_counter() - started
    formula = again[0].outcome.formula
    changed = len(formula.changes.formulas) if formula.changes else 0
    yield f"  after a price change (+ price list, compare): {seconds:6.2f} s ({changed} formulas compared)"
    statuses = [product.status for product in first[0].outcome.formula.products]
    yield f"  formulas optimal: {statuses.count('optimal')} of {len(statuses)}; peak memory {_peak_mb():.0f} MB"


def _lp_lines(book: Path) -> Iterator[str]:
    """The LPs alone: ours one by one and in the pool, beside one linprog call each."""
    blends = lp_blends(read_workbook(book))
    forms = [build_lp(blend).form for blend in blends]
    started = time.perf_counter()
    ours = [solve_form(form) for form in forms]
    one_by_one = time.perf_counter() - started
    started = time.perf_counter()
    solve_lps(blends, check=False)
    pooled = time.perf_counter() - started
    started = time.perf_counter()
    with ProcessPoolExecutor(max_workers=os.cpu_count() or 1) as pool:
        list(pool.map(solve_form, forms, chunksize=max(1, len(forms) // (4 * (os.cpu_count() or 1)))))
    pooled_plain = time.perf_counter() - started
    started = time.perf_counter()
    theirs = [_linprog(form) for form in forms]
    highs = time.perf_counter() - started
    agree = sum(abs(a.objective - b.fun) <= OBJECTIVE_RTOL * max(1, abs(b.fun)) for a, b in zip(ours, theirs)
                if a.status == "optimal" and b.status == 0)
    yield f"  {len(forms)} LPs: ours one by one {one_by_one:.2f} s, HiGHS one by one {highs:.2f} s, " \
          f"ratio {one_by_one / highs:.2f}"
    yield f"  ours in the process pool: LP solves alone {pooled_plain:.2f} s (ratio to HiGHS one by one " \
          f"{pooled_plain / highs:.2f}); with the analysis and ranging of every formula {pooled:.2f} s"
    yield f"  objectives agreeing with HiGHS: {agree} of {len(forms)}"


def _linprog(form):
    """scipy's HiGHS on a general-form LP (ranged rows as two inequality rows)."""
    A, lo, hi = np.asarray(form.A.toarray() if hasattr(form.A, "toarray") else form.A), form.row_lower, form.row_upper
    upper_rows, lower_rows = np.isfinite(hi), np.isfinite(lo)
    A_ub = np.vstack([A[upper_rows], -A[lower_rows]])
    b_ub = np.concatenate([hi[upper_rows], -lo[lower_rows]])
    bounds = list(zip(form.col_lower, [None if np.isinf(u) else u for u in form.col_upper]))
    return linprog(form.c, A_ub=A_ub, b_ub=b_ub, bounds=bounds, method="highs")


def section(options: Options) -> Iterator[str]:
    """The formula-set family's part of the report."""
    formulas = QUICK_FORMULAS if options.quick else FORMULAS
    yield (f"Formula set: one workbook of {formulas} unlinked formulas, {INGREDIENTS} ingredients x "
           f"{NUTRIENTS} nutrients (whole command, default --jobs)")
    with tempfile.TemporaryDirectory() as folder:
        book = formula_set_workbook(Path(folder) / "formulas.xlsx", formulas, options.seed)
        yield from _solve_lines(Path(folder), book, options.seed)
        yield from _lp_lines(book)

"""Solutions of a MIP: the LP with the integer choices fixed, and the domains heuristics try.

`fixed_domain` holds every integer column at a whole value and every semi-continuous
column off (at 0) or on (at least its threshold); the branch and bound solves the LP
left over the continuous columns and checks the residuals in the original problem
before it keeps a solution, which so has exactly whole integer columns. `solve_fixed`
solves the final solution's fixed LP with the full LP solve (`solve_form`), for its
marginals, reduced costs and ranges.

The heuristics (`heuristics`) try domains made here: the rounding heuristic's
(`rounded_domains`: each integer column to the nearest whole number and each
semi-continuous column on or off by which is nearer; when that LP has no solution, every
fractional column rounded up and every semi-continuous column above 0 on, which suits
covering rows and indicator rows x_j <= u_j z_j), one column fixed at a time
(`fix_one`, for diving), the neighbourhood of an LP optimum (`neighbourhood`) and the
columns where an LP optimum and the incumbent agree (`agreement`).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from blendkit.engine.mip_problem import MIPProblem, settle
from blendkit.engine.result import Basis, LPResult
from blendkit.engine.solve import solve_form
from blendkit.engine.tolerances import Tolerances


def fixed_domain(problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, values: np.ndarray,
                 semi_on: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The domain with integer columns at `values` (whole) and semi-continuous ones on where
    `semi_on`, off elsewhere; clipped to lower..upper."""
    lower, upper = lower.copy(), upper.copy()
    whole = problem.integer
    fixed = np.clip(values[whole], lower[whole], upper[whole])
    lower[whole] = upper[whole] = fixed
    semi = problem.semi
    s = problem.threshold
    on, off = semi & semi_on, semi & ~semi_on
    lower[on] = np.maximum(lower[on], np.where(problem.integer[on], np.ceil(s[on]), s[on]))
    upper[off] = np.minimum(upper[off], 0.0)
    return lower, upper


def solve_fixed(problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, basis, tol: Tolerances, *,
                max_iterations: int | None, scale: bool, algorithm: str, ranging: bool = False) -> LPResult:
    """The LP over the continuous columns within a fixed domain (see the module docstring)."""
    form = replace(problem.form, col_lower=lower, col_upper=upper)
    start = None
    if basis is not None:
        m, n = form.shape
        start = Basis(head=basis[0], at_upper=basis[1], shape=(m, n))
    return solve_form(form, basis=start, tolerances=tol, max_iterations=max_iterations, scale=scale,
                      algorithm=algorithm, ranging=ranging)


def solution_domain(problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, x: np.ndarray,
                    tol: float) -> tuple[np.ndarray, np.ndarray]:
    """The fixed domain of an LP optimum that already meets integrality (within `tol`)."""
    return fixed_domain(problem, lower, upper, np.round(x), x > tol)


def rounded_domains(problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, x: np.ndarray, tol: float):
    """The rounding heuristic's fixed domains for a fractional LP optimum x, in the order tried."""
    s = problem.threshold
    nearest = fixed_domain(problem, lower, upper, np.round(x), x >= s / 2)
    yield nearest
    up = fixed_domain(problem, lower, upper, np.ceil(x - tol), x > tol)
    if not (np.array_equal(up[0], nearest[0]) and np.array_equal(up[1], nearest[1])):
        yield up


def fix_one(problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, j: int, value: float, semi: bool,
            up: bool) -> tuple[np.ndarray, np.ndarray]:
    """The domain with column j fixed: at the whole number next to `value` (below, or above
    when `up`), or for a semi-continuous column off, or on when `up`."""
    lower, upper = lower.copy(), upper.copy()
    if semi:
        if up:
            lower[j] = max(lower[j], problem.threshold[j])
        else:
            upper[j] = min(upper[j], 0.0)
    else:
        lower[j] = upper[j] = np.ceil(value) if up else np.floor(value)
    return lower, upper


def neighbourhood(problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, x: np.ndarray,
                  tol: float) -> tuple[np.ndarray, np.ndarray]:
    """The domain of the neighbourhood search around an LP optimum x: each integer column
    held between the whole numbers next to x_j (fixed where x_j is whole), each
    semi-continuous column off where x_j is 0 and on where it is at least its threshold
    (open in between); continuous columns as they are."""
    lower, upper = lower.copy(), upper.copy()
    whole = problem.integer
    lower[whole] = np.maximum(lower[whole], np.floor(x[whole] + tol))
    upper[whole] = np.minimum(upper[whole], np.ceil(x[whole] - tol))
    s = problem.threshold
    off = (s > 0) & (x <= tol)
    on = (s > 0) & (x >= s - tol * (1 + s))
    upper[off] = np.minimum(upper[off], 0.0)
    lower[on] = np.maximum(lower[on], s[on])
    return settle(problem, lower, upper, tol)


def agreement(problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, x: np.ndarray, best: np.ndarray,
              tol: float) -> tuple[np.ndarray, np.ndarray]:
    """The domain of the agreement search: each integer column fixed where the LP optimum
    x and the incumbent `best` agree, each semi-continuous column held off (or on) where
    both have it off (or on); everything else as it is."""
    lower, upper = lower.copy(), upper.copy()
    same = problem.integer & (np.abs(x - best) <= tol)
    lower[same] = upper[same] = np.clip(np.round(best[same]), lower[same], upper[same])
    s = problem.threshold
    off = (s > 0) & (x <= tol) & (best <= tol)
    on = (s > 0) & (x >= s - tol * (1 + s)) & (best >= s - tol * (1 + s))
    upper[off] = np.minimum(upper[off], 0.0)
    lower[on] = np.maximum(lower[on], s[on])
    return settle(problem, lower, upper, tol)

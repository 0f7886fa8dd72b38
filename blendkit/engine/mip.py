"""The MIP entry points, blendkit.engine.solve_mip / solve_mip_form: check, search, report.

`solve_mip` takes `solve`'s arguments plus `integrality` (scipy.optimize.milp's 0 / 1
per column) and `semicontinuous` (a threshold per column); `mip_problem` checks them,
`branch_and_bound` searches, and this module turns the search's end into a MIPResult.
"""

from __future__ import annotations

import time

import numpy as np

from blendkit.engine.branch_and_bound import Search, SearchSettings
from blendkit.engine.incumbent import solve_fixed
from blendkit.engine.mip_problem import mip_problem
from blendkit.engine.result import Basis, LPResult, MIPResult
from blendkit.engine.solve import one_blas_thread
from blendkit.engine.standard_form import StandardForm, to_standard_form
from blendkit.engine.tolerances import ITERATION_LIMIT_MIN, ITERATION_LIMIT_PER_LINE, Tolerances


def solve_mip(
    c,
    A_ub=None,
    b_ub=None,
    A_eq=None,
    b_eq=None,
    bounds=None,
    integrality=None,
    semicontinuous=None,
    *,
    basis: Basis | None = None,
    tolerances: Tolerances | None = None,
    max_iterations: int | None = None,
    scale: bool = True,
    algorithm: str = "auto",
    ranging: bool = False,
    node_limit: int | None = None,
    time_limit: float | None = None,
) -> MIPResult:
    """Minimise c·x subject to `solve`'s constraints, with some columns whole or semi-continuous.

    The first six arguments mean what they mean to `solve` (and `scipy.optimize.linprog`).
    `integrality` gives per column 0 (continuous) or 1 (integer), as to
    `scipy.optimize.milp`; one value applies to every column; None means all continuous.
    `semicontinuous` gives per column a threshold s: s > 0 means the column is either 0
    or between s and its upper bound (a "minimum if used"); None, NaN or 0 means an
    ordinary column. A semi-continuous column needs a lower bound of 0 or more (a positive
    lower bound means it is always used, so the threshold only raises that bound).
    `basis` starts the root LP relaxation; `tolerances` adds the integrality tolerance and
    the relative and absolute gaps that end the search to the LP tolerances;
    `max_iterations`, `scale` and `algorithm` apply to every LP solved; `ranging=True`
    ranges the LP of the solution found (`fixed_lp`). The search stops after `node_limit`
    LP relaxations or `time_limit` seconds with status "time_limit" and the best solution
    found, if any, with its proven gap. Returns a MIPResult; only malformed arguments
    raise ValueError. Inputs are never modified.
    """
    form = to_standard_form(c, A_ub, b_ub, A_eq, b_eq, bounds)
    return solve_mip_form(
        form, integrality, semicontinuous, basis=basis, tolerances=tolerances, max_iterations=max_iterations,
        scale=scale, algorithm=algorithm, ranging=ranging, node_limit=node_limit, time_limit=time_limit,
    )


def solve_mip_form(
    form: StandardForm,
    integrality=None,
    semicontinuous=None,
    *,
    basis: Basis | None = None,
    tolerances: Tolerances | None = None,
    max_iterations: int | None = None,
    scale: bool = True,
    algorithm: str = "auto",
    ranging: bool = False,
    node_limit: int | None = None,
    time_limit: float | None = None,
) -> MIPResult:
    """`solve_mip` on the general form of `solve_form` (ranged rows), as MPS models give it."""
    if algorithm not in ("auto", "primal"):
        raise ValueError(f'algorithm must be "auto" or "primal", not {algorithm!r}')
    for name, limit in (("node_limit", node_limit), ("time_limit", time_limit)):
        if limit is not None and not limit >= 0:
            raise ValueError(f"{name} must be None or a number >= 0, got {limit!r}")
    tol = tolerances or Tolerances()
    problem = mip_problem(form, integrality, semicontinuous, tol.integrality)
    m, n = form.shape
    if max_iterations is None:
        max_iterations = max(ITERATION_LIMIT_MIN, ITERATION_LIMIT_PER_LINE * (m + n))
    settings = SearchSettings(tol=tol, max_iterations=max_iterations, scale=scale, algorithm=algorithm,
                              ranging=ranging, node_limit=node_limit, time_limit=time_limit)
    start = None
    if basis is not None and tuple(basis.shape) == (m, n):
        start = (basis.head, basis.at_upper)
    with one_blas_thread():
        search = Search(problem, settings, start)
        stopped_at = search.run()
        return _result(search, stopped_at)


def _result(search: Search, stopped_at) -> MIPResult:
    """The MIPResult of a finished (or stopped) search."""
    root = search.root
    lp_objective = root.objective if root is not None and root.status == "optimal" else None
    if root is not None and root.status not in ("optimal", "infeasible"):
        status = "unbounded" if root.status == "unbounded" else "numerical_trouble"
        return _without_solution(search, status, _ROOT_MESSAGES.get(root.status, "the root LP failed"),
                                 lp_objective)
    incumbent = search.incumbent
    bound = search.best_bound(stopped_at)
    if incumbent is None:
        if search.stopped:
            return _without_solution(search, "time_limit", f"{search.stopped} before any solution was found",
                                     lp_objective, bound)
        if np.isfinite(search.lost_bound):
            return _without_solution(search, "numerical_trouble",
                                     "no solution found, and some nodes were lost to numerical trouble", lp_objective)
        return _without_solution(search, "infeasible", "no point meets every constraint, integrality and "
                                 "semi-continuous threshold", lp_objective)
    gap = _gap(incumbent.objective, bound)
    status, message = _status(search, incumbent.objective, bound, gap)
    fixed_lp = _fixed_lp(search, incumbent)
    return MIPResult(status=status, message=message, x=incumbent.x, objective=incumbent.objective, bound=bound,
                     gap=gap, lp_objective=lp_objective, nodes=search.nodes, iterations=search.iterations,
                     seconds=_seconds(search), fixed_lp=fixed_lp)


_ROOT_MESSAGES = {
    "unbounded": "the LP relaxation is unbounded: the problem is unbounded or has no solution",
    "iteration_limit": "the iteration limit was reached in the root LP relaxation",
    "numerical_trouble": "numerical trouble in the root LP relaxation",
}


def _status(search: Search, objective: float, bound: float, gap: float) -> tuple[str, str]:
    """The status and message of a search that found a solution."""
    tol = search.tol
    closed = objective - bound <= max(tol.absolute_gap, tol.relative_gap * abs(objective))
    if closed:
        return "optimal", f"optimal solution found (gap {gap:.3g}, {search.nodes} nodes)"
    if search.stopped:
        return "time_limit", f"{search.stopped}; best solution found has gap {gap:.3g}"
    return "numerical_trouble", f"some nodes were lost to numerical trouble; the solution found has gap {gap:.3g}"


def _gap(objective: float, bound: float) -> float:
    """(objective - bound) / |objective|: 0 when they meet, inf when the objective is 0."""
    if objective - bound <= 0:
        return 0.0
    return (objective - bound) / abs(objective) if objective != 0 else np.inf


def _fixed_lp(search: Search, incumbent) -> LPResult:
    """The incumbent's LP (integer choices fixed) solved again by `solve_form`, warm from
    its basis: its marginals, reduced costs and (with ranging) ranges go to the result."""
    s = search.settings
    return solve_fixed(search.problem, *incumbent.domain, incumbent.basis, s.tol, max_iterations=s.max_iterations,
                       scale=s.scale, algorithm=s.algorithm, ranging=s.ranging)


def _seconds(search: Search) -> float:
    """Wall time since the search started."""
    return time.perf_counter() - search.started


def _without_solution(search: Search, status: str, message: str, lp_objective, bound=None) -> MIPResult:
    """A MIPResult with no solution."""
    return MIPResult(status=status, message=message, x=None, objective=None,
                     bound=None if bound is None or not np.isfinite(bound) else bound, gap=np.inf,
                     lp_objective=lp_objective, nodes=search.nodes, iterations=search.iterations,
                     seconds=_seconds(search))

"""Primal heuristics of the branch and bound: good solutions early, so that it prunes early.

Three, each offering what it finds to the search (`Search.offer`, which re-solves the
continuous part with the integer choices fixed and keeps the best):

- rounding (at the root, then now and then until a first solution is known): every
  integer column to the nearest whole number, each semi-continuous column on or off by
  which is nearer, then up (`incumbent.rounded_domains`);
- dive and fix (at the root and every DIVE_EVERY nodes): fix the out-of-place column
  nearest to its place, re-solve from the last basis, repeat; at a dead end (neither way
  has a solution below the cutoff) step back and take the other way of the last choice,
  at most DIVE_BACKTRACKS times;
- the neighbourhood search (at the root; "RENS" in the literature, Berthold 2014): a
  branch and bound of its own, limited to NEIGHBOURHOOD_NODES nodes, over the columns
  the root LP left out of place, with every integer column held to the whole numbers
  next to its LP value and every column in place fixed there (`incumbent.neighbourhood`).
  For a blend with at most K ingredients this leaves only the choice among the
  ingredients the LP used;
- the agreement search (at the first node after each new incumbent; "RINS", Danna,
  Rothberg and Le Pape 2005): the same kind of limited search with every integer and
  semi-continuous column fixed where the node's LP optimum and the incumbent agree
  (`incumbent.agreement`): a better blend near the best one known.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from blendkit.engine.incumbent import agreement, fix_one, neighbourhood, rounded_domains, solution_domain
from blendkit.engine.mip_problem import MIPProblem, settle, violations
from blendkit.engine.relaxation import NodeSolution
from blendkit.engine.tolerances import DIVE_BACKTRACKS, DIVE_EVERY, DIVE_STEPS, NEIGHBOURHOOD_NODES, ROUNDING_EVERY


def run_heuristics(search, depth: int, lower, upper, solution: NodeSolution) -> None:
    """The heuristics due at this node (see the module docstring)."""
    if depth == 0 or (search.incumbent is None and search.nodes % ROUNDING_EVERY == 0):
        try_rounding(search, lower, upper, solution)
    if depth == 0 or search.nodes % DIVE_EVERY == 0:
        dive_and_fix(search, lower, upper, solution)
    if depth == 0:
        search_neighbourhood(search, lower, upper, solution)
    if search.incumbent is not None and search.agreement_for is not search.incumbent:
        search_agreement(search, lower, upper, solution)


def try_rounding(search, lower, upper, solution: NodeSolution) -> None:
    """The rounding heuristic on a fractional optimum: the first rounding with a solution."""
    for fixed_lower, fixed_upper in rounded_domains(search.problem, lower, upper, solution.x,
                                                    search.tol.integrality):
        if search.offer(fixed_lower, fixed_upper, solution.basis):
            return


def dive_and_fix(search, lower, upper, solution: NodeSolution) -> None:
    """Dive and fix: one column fixed per step, with a few steps back at dead ends."""
    problem, tol = search.problem, search.tol.integrality
    trail = []  # per step: (domain, solution, the other way's domain or None)
    backtracks = 0
    for _ in range(DIVE_STEPS):
        columns, fraction, semi = violations(problem, solution.x, tol)
        if columns.size == 0:
            search.offer(*solution_domain(problem, lower, upper, solution.x, tol), solution.basis)
            return
        k = int(np.argmin(np.minimum(fraction, 1 - fraction)))
        j, up = int(columns[k]), bool(fraction[k] >= 0.5)
        ways = [fix_one(problem, lower, upper, j, float(solution.x[j]), bool(semi[k]), way) for way in (up, not up)]
        step = _first_way(search, ways, solution.basis)
        while step is None and trail and backtracks < DIVE_BACKTRACKS:
            backtracks += 1
            (lower, upper), solution, other = trail.pop()
            step = _first_way(search, [other], solution.basis) if other is not None else None
        if step is None:
            return
        (lower, upper), solution, tried_first = step
        trail.append(((lower, upper), solution, ways[1] if tried_first else None))


def _first_way(search, ways, basis):
    """(domain, LP solution, whether it was the first way) of the first of `ways` whose LP
    has a solution below the cutoff, or None."""
    problem, tol = search.problem, search.tol.integrality
    for position, way in enumerate(ways):
        domain = search.propagator.tighten(*settle(problem, *way, tol))
        if domain is None:
            continue
        tried = search.relaxation.solve(*domain, basis)
        if tried.status == "optimal" and search.node_bound(tried.objective) < search.cutoff:
            return domain, tried, position == 0
    return None


def search_neighbourhood(search, lower, upper, solution: NodeSolution) -> None:
    """The neighbourhood search around the root's LP optimum (see the module docstring)."""
    sub_lower, sub_upper = neighbourhood(search.problem, lower, upper, solution.x, search.tol.integrality)
    _sub_search(search, sub_lower, sub_upper, lower, upper, solution.basis)


def search_agreement(search, lower, upper, solution: NodeSolution) -> None:
    """The search where a node's LP optimum and the incumbent agree (see the module
    docstring), once for each new incumbent."""
    search.agreement_for = search.incumbent
    sub_lower, sub_upper = agreement(search.problem, lower, upper, solution.x, search.incumbent.x,
                                     search.tol.integrality)
    _sub_search(search, sub_lower, sub_upper, lower, upper, solution.basis)


def _sub_search(search, sub_lower, sub_upper, lower, upper, basis) -> None:
    """A branch and bound of NEIGHBOURHOOD_NODES nodes over the domain sub_lower..sub_upper
    (narrower than lower..upper), without heuristics; its best solution goes to `search`."""
    if np.array_equal(sub_lower, lower) and np.array_equal(sub_upper, upper):
        return  # not narrower: the whole problem again
    problem = search.problem
    sub_problem = MIPProblem(form=replace(problem.form, col_lower=sub_lower, col_upper=sub_upper),
                             integer=problem.integer, threshold=problem.threshold)
    left = search.time_left()
    settings = replace(search.settings, node_limit=NEIGHBOURHOOD_NODES, ranging=False,
                       time_limit=None if left is None else max(left, 0.0))
    best = search.incumbent.objective if search.incumbent is not None else np.inf
    # The search's own class, without heuristics: a branch and bound inside a heuristic.
    sub = type(search)(sub_problem, settings, basis, heuristics=False, cutoff_objective=best)
    sub.run()
    search.other_iterations += sub.iterations
    if sub.incumbent is not None:
        search.adopt(sub.incumbent)

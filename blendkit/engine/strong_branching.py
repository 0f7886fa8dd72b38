"""Reliability branching: measure the children of columns whose pseudocosts are not known yet.

Pseudocosts (`branching`) guess a child's objective from the children seen before; early
in the search there are none, and a poor first choice high in the tree costs many nodes.
So at a node, the candidates without RELIABLE_COUNT children seen in both directions
(at most STRONG_CANDIDATES of them, the best by their current estimate) have both
children solved, from the node's basis and for at most STRONG_ITERATIONS dual simplex
iterations each. A child stopped at that limit still gives a lower bound (the dual
simplex's objective only rises). The rises found replace the estimates, feed the
pseudocosts, and a child found infeasible is never made: its sibling is the only child.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.branching import DOWN, UP, Branch, Choice, Pseudocosts, choose
from blendkit.engine.mip_problem import MIPProblem
from blendkit.engine.relaxation import NodeSolution, Relaxation
from blendkit.engine.tolerances import PSEUDOCOST_FLOOR, STRONG_CANDIDATES, STRONG_ITERATIONS


def reliable_choice(problem: MIPProblem, relaxation: Relaxation, pseudocosts: Pseudocosts, lower: np.ndarray,
                    upper: np.ndarray, solution: NodeSolution, candidates, integrality_tol: float) -> Choice | None:
    """The branching choice at a node, measuring unreliable candidates first.

    `candidates` is (columns, fraction, semi) from `mip_problem.violations`. Returns None
    when both children of some measured column are infeasible: the node has no solution.
    """
    columns, fraction, semi = candidates
    x = solution.x
    rises = pseudocosts.rises(x, columns, fraction, semi, problem.threshold)
    unreliable = np.flatnonzero(pseudocosts.unreliable(columns))
    measured = np.zeros(columns.size, dtype=bool)
    if unreliable.size:
        score = np.prod(np.maximum(rises[:, unreliable], PSEUDOCOST_FLOOR), axis=0)
        for k in unreliable[np.argsort(-score, kind="stable")][:STRONG_CANDIDATES]:
            j = int(columns[k])
            branch = Branch(column=j, value=float(x[j]), semi=bool(semi[k]), threshold=float(problem.threshold[j]),
                            parent_objective=solution.objective)
            for direction in (DOWN, UP):
                rises[direction, k] = _measured_rise(problem, relaxation, pseudocosts, branch, direction, lower,
                                                     upper, solution, integrality_tol)
            measured[k] = True
            if np.isinf(rises[:, k]).all():
                return None
    return choose(rises, fraction, semi, measured)


def _measured_rise(problem: MIPProblem, relaxation: Relaxation, pseudocosts: Pseudocosts, branch: Branch,
                   direction: int, lower, upper, solution: NodeSolution, integrality_tol: float) -> float:
    """The child's objective rise over its parent (inf when the child is infeasible)."""
    child_lower, child_upper = branch.domain(problem, lower, upper, direction, integrality_tol)
    child = relaxation.solve(child_lower, child_upper, solution.basis, limit=STRONG_ITERATIONS)
    if child.status == "infeasible":
        return np.inf
    if child.status not in ("optimal", "iteration_limit"):
        return 0.0
    pseudocosts.record(branch, direction, child.objective)
    return max(0.0, child.objective - solution.objective)


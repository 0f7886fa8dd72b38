"""The LP relaxation of one branch-and-bound node, solved from its parent's basis.

Every node of the search is the same LP with other column bounds, so the problem is
scaled once (`scaling`) and each node only divides its bounds by the column scales.
Tightening bounds keeps the parent's optimal basis dual feasible, so a node starts the
dual simplex (`dual`) from it and usually needs a few iterations. When the dual simplex
ends with no entering variable, the pivot row of a basic variable outside its bounds
proves the node infeasible (`_proof_of_infeasibility`: however the nonbasic variables
move within their bounds, that basic variable cannot reach its own) without the two-phase
method's phase one. When the dual simplex cannot finish (no dual feasible start, a stall,
an unproven infeasibility, trouble), the node is solved afresh by `run_simplex`.

Notation as in `blendkit.engine.simplex`; a node's x and reduced costs d are returned in
the original units.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from blendkit.engine.basis_factor import SingularBasis
from blendkit.engine.dual import run_dual, start_dual
from blendkit.engine.primal import run_primal
from blendkit.engine.pricing import prices_out
from blendkit.engine.scaling import Scaling, find_scaling, scale_form
from blendkit.engine.simplex import run_simplex
from blendkit.engine.simplex_state import SimplexState
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import INFEASIBILITY_PROOF_ROWS, PROOF_ROW_ZERO, Tolerances


@dataclass(frozen=True)
class NodeSolution:
    """The LP relaxation of one node: its status and, when optimal, the solution.

    `status` is "optimal", "infeasible", "unbounded", "iteration_limit" or
    "numerical_trouble"; `basis` is (head, at_upper), to start the children from.
    """

    status: str
    x: np.ndarray | None = None
    objective: float = np.inf
    reduced_costs: np.ndarray | None = None
    basis: tuple[np.ndarray, np.ndarray] | None = None
    iterations: int = 0


class Relaxation:
    """The LP relaxation of a MIP, scaled once and solved at node after node.

    One SimplexState serves every node solved by the dual simplex. When a node starts
    from the basis the state ended with (a child taken straight after its parent, in a
    dive), its factors are still good: only the bounds change and the nonbasic variables
    move to them, so the dual simplex starts without refactorising.
    """

    def __init__(self, form: StandardForm, tol: Tolerances, max_iterations: int, scale: bool = True,
                 allow_dual: bool = True):
        m, n = form.shape
        self.form = form
        self.allow_dual = allow_dual  # False: every node by the two-phase primal method
        self.tol = tol
        self.max_iterations = max_iterations
        self.scaling = find_scaling(form.A) if scale else Scaling(np.ones(m), np.ones(n))
        self.scaled = scale_form(form, self.scaling)
        self.cost = np.concatenate([self.scaled.c, np.zeros(m)])
        self.state = SimplexState(self.scaled, tol, max_iterations)
        self.held = None  # the basis (as returned in a NodeSolution) the state holds, factors and all
        self.iterations = 0  # simplex iterations of every solve so far

    def solve(self, lower: np.ndarray, upper: np.ndarray, basis=None, limit: int | None = None) -> NodeSolution:
        """The relaxation with column bounds lower..upper, from `basis` (head, at_upper) if given.

        With `limit`, the dual simplex from `basis` stops after that many iterations with
        status "iteration_limit" and its objective so far, a lower bound on the optimum.
        """
        if np.any(lower > upper):
            return NodeSolution(status="infeasible")
        found = self._solve(lower, upper, basis, self.allow_dual, limit)
        self.iterations += found.iterations
        return found

    def _solve(self, lower, upper, basis, allow_dual: bool, limit: int | None) -> NodeSolution:
        """`solve`, without the count of iterations."""
        cols = self.scaling.cols
        with np.errstate(invalid="ignore"):
            scaled_lower, scaled_upper = lower / cols, upper / cols
        if basis is not None and allow_dual:
            found = self._dual_from(scaled_lower, scaled_upper, basis, limit)
            if found is not None:
                return found
        self.held = None
        sf = replace(self.scaled, col_lower=scaled_lower, col_upper=scaled_upper)
        outcome = run_simplex(sf, self.tol, self.max_iterations, allow_dual=allow_dual)
        if outcome.status != "optimal":
            return NodeSolution(status=outcome.status, iterations=outcome.iterations)
        return self._solution(outcome.x, outcome.d, outcome.head, outcome.at_upper, outcome.iterations)

    def _dual_from(self, lower: np.ndarray, upper: np.ndarray, basis, limit: int | None) -> NodeSolution | None:
        """The node (scaled bounds) solved by the dual simplex from `basis`, or None to
        solve it afresh."""
        state, n, m = self.state, self.state.n, self.state.m
        state.lower[:n], state.upper[:n] = lower, upper
        state.iterations = 0
        state.max_iterations = self.max_iterations if limit is None else limit
        held, self.held = basis is self.held, None  # whatever happens now changes the state
        try:
            if held:
                state.place_nonbasics(state.at_upper)
                state.basic_values()
            elif not start_dual(state, basis):
                return None
            status = run_dual(state, self.cost)
            if status == "optimal" and not _dual_feasible(state):
                status = run_primal(state, self.cost)  # rounding left a reduced cost astray
        except SingularBasis:
            return None
        if status == "infeasible" and _proof_of_infeasibility(state):
            return NodeSolution(status="infeasible", iterations=state.iterations)
        if status == "iteration_limit" and limit is not None:
            bound = float(self.form.c @ (state.z[:n] * self.scaling.cols))  # the dual objective
            return NodeSolution(status="iteration_limit", objective=bound, iterations=state.iterations)
        if status != "optimal":
            return None
        solution = self._solution(state.z[:n], state.d[:n], state.head, state.at_upper[: n + m], state.iterations)
        self.held = solution.basis
        return solution

    def _solution(self, x_scaled, d_scaled, head, at_upper, iterations: int) -> NodeSolution:
        """An optimal node in original units."""
        x = x_scaled * self.scaling.cols
        return NodeSolution(
            status="optimal",
            x=x,
            objective=float(self.form.c @ x),
            reduced_costs=d_scaled / self.scaling.cols,
            basis=(head.copy(), at_upper.copy()),
            iterations=iterations,
        )


def _dual_feasible(state: SimplexState) -> bool:
    """True when no nonbasic variable's reduced cost asks it to move."""
    rise, fall = state.mobility()
    return prices_out(state.d, rise, fall, state.tol.dual_feasibility)


def _proof_of_infeasibility(state: SimplexState) -> bool:
    """True when some basic variable outside its bounds cannot reach them at all.

    Row r of B^-1 M gives the basic variable in position r as -sum_j row_j z_j over the
    nonbasic variables z_j; letting each z_j range over its bounds gives the interval
    the basic variable can reach. When that interval misses the variable's own bounds by
    more than the infeasibility tolerance (relative to the size of the terms), no point
    satisfies the constraints: the dual simplex's conclusion, checked exactly. Only the
    INFEASIBILITY_PROOF_ROWS most infeasible positions are tried. Entries of the pivot row
    below PROOF_ROW_ZERO of its largest are rounding left by the factors (they would be
    zero in exact arithmetic) and count as zero.
    """
    n, m = state.n, state.m
    lower, upper = state.lower[: n + m], state.upper[: n + m]
    head = state.head
    xb, lb, ub = state.z[head], lower[head], upper[head]
    miss = np.maximum(lb - xb, xb - ub)
    for r in np.argsort(-miss)[:INFEASIBILITY_PROOF_ROWS]:
        if miss[r] <= 0:
            break
        coef = -state.pivot_row(int(r))[: n + m]
        coef[state.basic[: n + m]] = 0.0
        coef[np.abs(coef) <= PROOF_ROW_ZERO * np.abs(coef).max(initial=0.0)] = 0.0  # rounding, not entries
        with np.errstate(invalid="ignore"):
            at_low, at_up = np.where(coef != 0, coef * lower, 0.0), np.where(coef != 0, coef * upper, 0.0)
        reach_low = np.minimum(at_low, at_up).sum()
        reach_high = np.maximum(at_low, at_up).sum()
        terms = np.abs(coef * state.z[: n + m]).sum()
        margin = state.tol.infeasibility * (1 + terms + min(abs(lb[r]), abs(ub[r])))
        if reach_high < lb[r] - margin or reach_low > ub[r] + margin:
            return True
    return False

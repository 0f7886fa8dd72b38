"""Primal simplex iterations, the work of both phases of the two-phase method.

Each iteration prices the entering variable by Devex (`pricing`), moves it as far as the
bounded-variable ratio test allows (`ratio_test`), and either flips it to its other bound
or swaps it into the basis. Reduced costs are updated from the pivot row each iteration
and recomputed on every refactorisation, which also bounds their drift. The notation is
the one of `blendkit.engine.simplex`.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.pricing import StallWatch, entering_variable, prices_out, update_primal_weights
from blendkit.engine.ratio_test import negligible, primal_ratio_test
from blendkit.engine.simplex_state import SimplexState, pivots_disagree
from blendkit.engine.tolerances import PIVOT_REFRESH_LIMIT


def run_primal(state: SimplexState, cost: np.ndarray, d: np.ndarray | None = None,
               refactor_at_end: bool = True) -> str:
    """Iterate with objective `cost` until optimal, unbounded or out of iterations.

    Returns "optimal" (`state.d` then holds the reduced costs), "unbounded" (`state.ray`
    holds the direction), "iteration_limit" or "numerical_trouble" (the pivot row and
    column still disagree after PIVOT_REFRESH_LIMIT refactorisations in a row). `d`: the reduced costs of `cost` at this
    basis when the caller has just computed them afresh, else they are computed here.
    Without `refactor_at_end` (a re-solve, as in `dual.run_dual`) the run ends on the
    factors it holds, the values and reduced costs recomputed from them.
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):  # infinite bounds
        return _PrimalRun(state, cost, d, refactor_at_end).run()


class _PrimalRun:
    """One run of primal iterations: the reduced costs, Devex weights and each
    variable's freedom to rise or fall (1.0 / 0.0), kept up to date between iterations."""

    __slots__ = ("state", "cost", "d", "stall", "weights", "rise", "fall", "bland", "refactor_at_end",
                 "first_iteration")

    def __init__(self, state: SimplexState, cost: np.ndarray, d: np.ndarray | None = None,
                 refactor_at_end: bool = True):
        self.state = state
        self.refactor_at_end = refactor_at_end
        self.first_iteration = state.iterations  # none made since: d is as given
        self.cost = cost
        state.ray = None
        self.d = state.fresh_duals(cost) if d is None else d.copy()
        self.stall = StallWatch(float(cost @ state.z))
        self.weights = np.ones_like(self.d)
        self.rise, self.fall = state.mobility()
        self.bland = False

    def run(self) -> str:
        """The iterations; see `run_primal`."""
        state = self.state
        dual_tol = state.tol.dual_feasibility
        rise, fall, weights, stalled = self.rise, self.fall, self.weights, self.stall.record
        disagreements = 0  # refactorisations in a row for pivots that disagree
        while True:
            if state.iterations >= state.max_iterations:
                return "iteration_limit"
            q = entering_variable(self.d, rise, fall, weights, self.bland, dual_tol)
            if q < 0:
                if self.confirm_optimal():
                    state.d = self.d
                    return "optimal"
                continue
            direction = 1.0 if self.d[q] < 0 else -1.0
            alpha = state.factor.ftran(state.column(q))
            delta = -direction * alpha
            step = primal_ratio_test(state, q, delta, self.bland)
            if step is None:
                if state.factor.updates:
                    # Judge unboundedness on fresh factors and reduced costs only: an
                    # updated column may hide a blocker or a stale d[q] ask for a move.
                    self.d = state.refresh(self.cost)
                    continue
                state.ray = self.ray(q, direction, delta)
                return "unbounded"
            theta, r, hits_upper = step
            if r >= 0:
                # The pivot row: row r of B^-1 M, for the reduced-cost and weight updates.
                row = state.pivot_row(r)
                if pivots_disagree(row[q], alpha[r]):
                    disagreements += 1
                    if disagreements > PIVOT_REFRESH_LIMIT:
                        return "numerical_trouble"
                    self.d = state.refresh(self.cost)
                    continue
            disagreements = 0
            state.iterations += 1
            if theta > 0:
                state.z[state.head] += theta * delta
            progress = theta * abs(self.d[q])
            if r < 0:  # the entering variable runs to its other bound: no basis change
                self.flip(q, direction)
            else:
                self.swap(q, r, direction * theta, hits_upper, alpha, row)
            self.bland = stalled(-progress)

    def confirm_optimal(self) -> bool:
        """True when no reduced cost asks a variable to move on a fresh factorisation
        (refactorising first when updates are pending), or without `refactor_at_end` on
        the values and reduced costs recomputed from the factors held."""
        state = self.state
        if not state.factor.updates:
            return True
        if self.refactor_at_end:
            self.d = state.refresh(self.cost)
        elif state.iterations == self.first_iteration:
            return True
        else:
            state.basic_values()
            self.d = state.fresh_duals(self.cost)
        return prices_out(self.d, self.rise, self.fall, state.tol.dual_feasibility)

    def ray(self, q: int, direction: float, delta: np.ndarray) -> np.ndarray:
        """The direction in z along which the objective falls without limit. Entries of
        delta the ratio test took for zero are zero here too: they are rounding (a basic
        variable at a bound, moved by 1e-12 of the largest entry, would cross it)."""
        state = self.state
        ray = np.zeros_like(state.z)
        ray[state.head] = np.where(negligible(delta, state.tol.pivot), 0.0, delta)
        ray[q] = direction
        return ray

    def flip(self, q: int, direction: float) -> None:
        """Move nonbasic q to its other bound."""
        state = self.state
        state.at_upper[q] = direction > 0
        state.z[q] = state.upper[q] if direction > 0 else state.lower[q]
        self.rise[q], self.fall[q] = float(direction < 0), float(direction > 0)

    def swap(self, q: int, r: int, move: float, hits_upper: bool, alpha: np.ndarray, row: np.ndarray) -> None:
        """Bring q into basis position r after it moved by `move`; p = head[r] leaves at
        the bound it hit. Updates d, the weights and the factors."""
        state, rise, fall = self.state, self.rise, self.fall
        pivot = alpha[r]
        state.z[q] += move
        p = int(state.head[r])
        state.z[p] = state.upper[p] if hits_upper else state.lower[p]
        state.at_upper[p] = hits_upper
        state.basic[p] = False
        state.basic[q] = True
        state.head[r] = q
        d = self.d
        d -= (d[q] / pivot) * row
        d[q] = 0.0
        update_primal_weights(self.weights, row, pivot, p, q)
        if p >= state.n + state.m:  # an artificial that leaves never returns
            state.lower[p] = state.upper[p] = 0.0
            state.z[p] = 0.0
            state.at_upper[p] = False
            rise[p] = fall[p] = 0.0
        else:
            movable = state.lower[p] != state.upper[p]
            free = not (np.isfinite(state.lower[p]) or np.isfinite(state.upper[p]))
            rise[p] = float(movable and not hits_upper)
            fall[p] = float(movable and (hits_upper or free))
        rise[q] = fall[q] = 0.0
        state.factor.update(r, alpha)
        if state.factor.due:
            self.d = state.refresh(self.cost)

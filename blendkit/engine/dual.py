"""The dual simplex method, used when a dual feasible basis is at hand.

From a basis whose reduced costs all have the right sign (after a change of bounds or
right-hand sides, or from the basis of logicals when no cost asks a variable to move),
each iteration picks a basic variable outside its bounds to leave (`pricing`), and the
entering variable by the dual ratio test with bound flipping (`ratio_test`), so the basis
stays dual feasible throughout and the run ends at a primal feasible, hence optimal, one.
The notation is the one of `blendkit.engine.simplex`.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.basis_factor import SingularBasis
from blendkit.engine.perturbation import perturbed_costs
from blendkit.engine.pricing import StallWatch, leaving_position, update_dual_weights, update_steepest_weights
from blendkit.engine.ratio_test import dual_ratio_test
from blendkit.engine.simplex_state import SimplexState, pivots_disagree
from blendkit.engine.tolerances import PERTURB_AFTER, PIVOT_REFRESH_LIMIT, STEEPEST_EDGE_ROWS


def start_shifted(state: SimplexState, basis) -> np.ndarray | None:
    """Set up the given `basis` for the dual simplex even where it is not dual feasible:
    the costs of the nonbasic variables whose reduced cost asks them to move where they
    cannot (past their only bound, or a free one anywhere) are shifted so that their
    reduced cost is zero. Returns those shifted costs (the run's own, until the caller
    puts the true ones back), or None when the basis does not fit or is singular."""
    return _start(state, basis, shift=True)


def start_dual(state: SimplexState, basis=None) -> bool:
    """Set up a dual feasible basis without artificials; False when there is none at hand.

    From `basis` (head, at_upper) when given, else from the basis of logicals (all
    duals zero, so d = c). A nonbasic variable with both bounds finite is put at the
    bound its reduced cost favours; one with a single finite bound must already be
    on the right side, and a free one must have a zero reduced cost.
    """
    return _start(state, basis, shift=False) is not None


def _start(state: SimplexState, basis, shift: bool) -> np.ndarray | None:
    """`start_dual`, or with `shift` `start_shifted`: the costs the dual simplex goes on
    with, or None when there is no start."""
    n, m, td = state.n, state.m, state.tol.dual_feasibility
    state.add_artificials(np.zeros(0, dtype=int), np.zeros(0))
    if basis is not None:
        head, at_upper = (np.asarray(b) for b in basis)
        if head.shape != (m,) or np.any(head >= n + m) or len(set(head.tolist())) != m:
            return None
    else:
        head, at_upper = n + np.arange(m), np.zeros(n + m, dtype=bool)
    state.set_head(head)
    cost = np.concatenate([state.c_struct, np.zeros(m)])
    try:
        state.factor.factor(state.M[:, state.head])
    except SingularBasis:
        return None
    d = cost - state.times_transpose(state.factor.btran(cost[state.head]))
    lo, up = state.lower[: n + m], state.upper[: n + m]
    nonbasic = ~state.basic & (lo != up)
    wants_upper, wants_lower = d < -td, d > td
    stuck = nonbasic & ((wants_upper & ~np.isfinite(up)) | (wants_lower & ~np.isfinite(lo)))
    if stuck.any():
        if not shift:
            return None
        cost[stuck] -= d[stuck]
        wants_upper &= ~stuck
        wants_lower &= ~stuck
    state.place_nonbasics(np.where(wants_upper, True, np.where(wants_lower, False, np.asarray(at_upper, bool))))
    state.basic_values()
    return cost


def run_dual(state: SimplexState, cost: np.ndarray, perturb: bool = False, d: np.ndarray | None = None,
             refactor_at_end: bool = True, bounds=None) -> str:
    """Dual simplex iterations until primal feasible ("optimal"), or a reason to stop.

    Returns "optimal", "infeasible" (no entering variable: the dual is unbounded),
    "stalled", "iteration_limit" or "numerical_trouble" (the pivot row and column still
    disagree after PIVOT_REFRESH_LIMIT refactorisations in a row). With `perturb`, a run that takes PERTURB_AFTER
    degenerate iterations in a row goes on with perturbed costs (`perturbation`); an
    optimal run then ends with the true costs put back (`state.y` and `state.d` computed
    afresh from the final basis), so `state.d` and `state.y` are always those of `cost`
    and the final factors (a run ends on fresh factors: `confirm_feasible`). `d`: the
    reduced costs of `cost` at this basis when the caller holds them fresh (a re-solve),
    else they are computed here. Without `refactor_at_end` (a re-solve, which checks its
    answer in original units and solves afresh when it fails) the run ends on the factors
    it holds, updates and all, the values and duals recomputed from them. `bounds`: what
    the caller already holds of the state's bounds (a re-solve's `resolve._Bounds`: `span`
    = upper - lower, `movable` = lower != upper, `free` the free variables' indices), else
    found here.
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):  # infinite bounds
        run = _DualRun(state, cost, perturb, d, refactor_at_end, bounds)
        status = run.run()
        if status == "optimal" and run.cost is not cost:
            state.d = state.fresh_duals(cost)  # the true costs back (see `perturbation`)
        return status


class _DualRun:
    """One run of dual iterations, with the arrays each iteration reads kept at hand.

    The basic values, their bounds and tolerances are kept by basis position (xb, lb, ub,
    slack) between refactorisations, and each nonbasic variable's way to move as +1 / -1
    (`way`, `back` = -way), so each iteration touches few arrays.
    """

    __slots__ = ("state", "cost", "d", "rise", "fall", "way", "back", "two_way", "span", "weights",
                 "primal_tol", "dual_tol", "pivot_tol", "stall", "xb", "lb", "ub", "slack", "perturb", "steepest",
                 "refactor_at_end", "first_iteration")

    def __init__(self, state: SimplexState, cost: np.ndarray, perturb: bool = False, d: np.ndarray | None = None,
                 refactor_at_end: bool = True, bounds=None):
        tol = state.tol
        self.refactor_at_end = refactor_at_end
        self.first_iteration = state.iterations  # none made since: the values are as given
        self.state = state
        self.cost = cost
        self.perturb = perturb  # still allowed to perturb the costs (once)
        self.d = state.fresh_duals(cost) if d is None else d.copy()
        self.moving_ways(state, bounds)
        self.span = state.upper - state.lower if bounds is None else bounds.span
        self.weights = np.empty(state.m)  # all 1 (np.ones is a Python function: slower)
        self.weights.fill(1.0)
        # Steepest-edge weights (exact, 1, for the basis of logicals) on large problems,
        # Devex reference weights on small ones (see `pricing`).
        self.steepest = state.m >= STEEPEST_EDGE_ROWS
        self.primal_tol, self.dual_tol, self.pivot_tol = tol.primal_feasibility, tol.dual_feasibility, tol.pivot
        self.stall = StallWatch(float(cost @ state.z), rows=state.m)
        self.load_positions()

    def moving_ways(self, state: SimplexState, bounds=None) -> None:
        """The one way each nonbasic variable may move (`way`: +1 up, -1 down, 0 not at all;
        `back` = -way). Free nonbasic variables (both ways) take the slower two-sided
        search of `entering`, which reads `rise` and `fall` (True where a variable may
        move that way, `SimplexState.mobility`); only then are they kept (else None).
        `bounds` as in `run_dual` (without free variables, the basic ones are simply set to 0)."""
        lower, upper = state.lower, state.upper
        basic_left_in = bounds is not None and not bounds.free.size
        if basic_left_in:  # no free variable; the basic ones are set to 0 below
            self.two_way, movable = False, bounds.movable
        else:
            movable = ~state.basic
            movable &= lower != upper if bounds is None else bounds.movable
            free = (lower == -np.inf) & (upper == np.inf)
            self.two_way = bool(np.count_nonzero(free) and np.count_nonzero(free & movable & ~state.at_upper))
        if self.two_way:
            rise_f, fall_f = state.mobility()
            self.rise, self.fall = rise_f > 0, fall_f > 0
            self.way = rise_f - fall_f
        else:  # no variable may move both ways: +1 at a lower bound, -1 at an upper one
            self.rise = self.fall = None
            self.way = state.at_upper * -2.0  # np.where(at_upper, -1.0, 1.0), in cheaper steps
            self.way += 1.0
            self.way *= movable
            if basic_left_in:
                self.way[state.head] = 0.0
        self.back = -self.way

    def run(self) -> str:
        """The iterations; see `run_dual`."""
        state = self.state
        factor, weights, stalled = state.factor, self.weights, self.stall.record
        disagreements = 0  # refactorisations in a row for pivots that disagree
        while True:
            if state.iterations >= state.max_iterations:
                self.store_positions()
                return "iteration_limit"
            xb, lb, ub = self.xb, self.lb, self.ub
            r = leaving_position(xb, lb, ub, self.slack, weights)
            if r < 0:
                if self.confirm_feasible():
                    state.d = self.d
                    return "optimal"
                continue
            value, low = xb.item(r), lb.item(r)
            rises = value < low  # the leaving variable moves up to its lower bound
            target = low if rises else ub.item(r)
            row = state.pivot_row(r)
            choice = self.entering(r, rises, target, row)
            if choice is None:
                self.store_positions()
                return "infeasible"
            q, flipped = choice
            alpha, change, moved, tau = self.solve_columns(q, flipped)
            pivot = alpha.item(r)
            if pivots_disagree(row.item(q), pivot):
                disagreements += 1
                if disagreements > PIVOT_REFRESH_LIMIT:
                    self.store_positions()
                    return "numerical_trouble"
                self.refresh()
                continue
            disagreements = 0
            state.iterations += 1
            if flipped.size:
                self.flip(flipped, change, moved)
            progress = self.pivot(r, q, rises, target, alpha, row)
            if tau is None:
                update_dual_weights(weights, alpha, pivot, r)
            else:
                update_steepest_weights(weights, alpha, tau, state.rho, pivot, r)
            factor.update(r, alpha)
            if factor.due:
                self.refresh()
            if stalled(progress):
                self.store_positions()
                return "stalled"
            if self.perturb and self.stall.count >= PERTURB_AFTER:
                self.perturb_costs()

    # ----- the position arrays and the refactorisation ------------------------------

    def load_positions(self) -> None:
        """Basic values, bounds and feasibility slack by basis position, from the state."""
        state = self.state
        head = state.head
        self.lb, self.ub = state.lower[head], state.upper[head]
        slack = np.abs(self.lb)  # primal_tol * (1 + min(|lb|, |ub|)), in place
        np.minimum(slack, np.abs(self.ub), out=slack)
        slack += 1
        slack *= self.primal_tol
        self.slack = slack
        self.xb = state.z[head]  # a copy: indexed by an array

    def reload_values(self) -> None:
        """The basic values alone, after a refresh: the basis, hence the bounds and slack by
        position, stayed as they were."""
        self.xb = self.state.z[self.state.head]

    def store_positions(self) -> None:
        """Write the basic values back into the state's z."""
        self.state.z[self.state.head] = self.xb

    def refresh(self) -> None:
        """`SimplexState.refresh`, with the position arrays written back and reloaded."""
        self.store_positions()
        self.d = self.state.refresh(self.cost)
        self.reload_values()

    def perturb_costs(self) -> None:
        """Go on with perturbed costs (once): the reduced costs move away from zero, in
        the direction that keeps each one's sign, so the degenerate run ends."""
        self.perturb = False
        self.cost = perturbed_costs(self.state, self.cost)
        self.d = self.state.fresh_duals(self.cost)
        self.stall.count = 0

    def confirm_feasible(self) -> bool:
        """True when every basic value is within its bounds on a fresh factorisation
        (refactorising first when updates are pending), or without `refactor_at_end` on
        the values and duals recomputed from the factors held; the values end in the state."""
        state = self.state
        if not state.factor.updates or (not self.refactor_at_end and state.iterations == self.first_iteration):
            self.store_positions()
            return True
        if self.refactor_at_end:
            self.refresh()
        else:  # the refresh without the factorisation: its LU costs a short re-solve most
            state.basic_values()  # from the nonbasic values alone: the basic ones need no storing
            self.d = state.fresh_duals(self.cost)
            self.xb = state.z[state.head]  # `reload_values`
        return not np.count_nonzero(np.maximum(self.lb - self.xb, self.xb - self.ub) > self.slack)

    # ----- one iteration ------------------------------------------------------------

    def entering(self, r: int, rises: bool, target: float, row: np.ndarray):
        """(q, flipped) from the dual ratio test over pivot row `row`, or None when no
        variable can enter (the problem is infeasible)."""
        size = np.abs(row)  # the row is never empty; argmax costs less than a reduction
        smallest = self.pivot_tol * max(1.0, size.item(size.argmax()))
        d = self.d
        if self.two_way:
            # Change of the leaving variable per unit rise of each nonbasic variable.
            gain = -row if rises else row
            up = (self.rise & (gain > smallest)).nonzero()[0]
            down = (self.fall & (gain < -smallest)).nonzero()[0]
            order = np.concatenate([up, down])
            # Distance of each reduced cost from changing sign, and its rate of change.
            room = np.maximum(np.concatenate([d[up], -d[down]]), 0.0)
            size = np.abs(gain[order])
        else:
            way = self.way
            signed = row * (self.back if rises else way)  # gain (as above) * way
            order = (signed > smallest).nonzero()[0]
            room = (d * way)[order]
            np.maximum(room, 0.0, out=room)
            size = signed[order]
        if not order.size:
            return None
        infeasible_by = abs(self.xb.item(r) - target)
        return dual_ratio_test(order, room, size, self.span, infeasible_by, self.dual_tol)

    def solve_columns(self, q: int, flipped: np.ndarray):
        """(alpha, change, moved, tau): the entering column B^-1 M_q; how far each variable
        in `flipped` moves to its other bound and the basic values' move B^-1 M_flipped
        change (None, None without flips); with steepest-edge pricing tau = B^-1 rho_r
        (else None). A sparse basis solves them in one call."""
        state, factor = self.state, self.state.factor
        if not flipped.size and not self.steepest:  # the usual case, without the lists below
            return factor.ftran(state.M[:, q] if not state.sparse else state.column(q)), None, None, None
        columns = [state.column(q)]
        change = None
        if flipped.size:
            span = self.span[flipped]
            change = np.where(state.at_upper[flipped], -span, span)
            columns.append(state.times_columns(flipped, change))
        if self.steepest:
            columns.append(state.rho)
        if len(columns) == 1:
            return factor.ftran(columns[0]), None, None, None
        if state.sparse:  # stacked in Fortran order: each column of the answer a contiguous view
            stacked = np.empty((state.m, len(columns)), order="F")
            for j, column in enumerate(columns):
                stacked[:, j] = column
            solved = factor.ftran(stacked)
            parts = [solved[:, j] for j in range(len(columns))]
        else:  # LAPACK's solves cost little; apart, they keep the etas' loop simple
            parts = [factor.ftran(column) for column in columns]
        alpha = parts[0]
        moved = parts[1] if flipped.size else None
        return alpha, change, moved, parts[-1] if self.steepest else None

    def flip(self, flipped: np.ndarray, change: np.ndarray, moved: np.ndarray) -> None:
        """Move the variables `flipped` by `change` to their other bound, and the basic
        values by `moved` = B^-1 M[:, flipped] change with them."""
        state = self.state
        at_upper = state.at_upper
        state.z[flipped] += change
        at_upper[flipped] = ~at_upper[flipped]
        if self.two_way:
            self.rise[flipped], self.fall[flipped] = self.fall[flipped], self.rise[flipped]
        self.way[flipped] = -self.way[flipped]
        self.back[flipped] = -self.back[flipped]
        self.xb -= moved

    def pivot(self, r: int, q: int, rises: bool, target: float, alpha: np.ndarray, row: np.ndarray) -> float:
        """Bring q into basis position r and move the leaving variable p = head[r] to
        `target`, the bound it rises or falls to; update the values, d and the
        mobility of p and q. Returns the rise of the objective."""
        state, xb, d, rise, fall, way, back = self.state, self.xb, self.d, self.rise, self.fall, self.way, self.back
        head, lb, ub = state.head, self.lb, self.ub
        p = head.item(r)
        pivot = alpha.item(r)  # Python floats: the same arithmetic, without numpy's scalars
        step = (xb.item(r) - target) / pivot  # how far q moves
        xb -= step * alpha
        xb[r] = state.z.item(q) + step  # q takes p's position
        state.z[p] = target
        theta_d = d.item(q) / row.item(q)
        d -= theta_d * row
        d[q] = 0.0
        state.at_upper[p] = not rises
        state.basic[p] = False
        state.basic[q] = True
        head[r] = q
        low, high = state.lower.item(q), state.upper.item(q)
        lb[r], ub[r] = low, high
        self.slack[r] = self.primal_tol * (1 + min(abs(low), abs(high)))
        movable = self.span.item(p) != 0
        if self.two_way:
            rise[p] = movable and rises
            fall[p] = movable and not rises
            rise[q] = fall[q] = False
        way_p = (1.0 if rises else -1.0) if movable else 0.0
        way[p], back[p] = way_p, -way_p
        way[q] = back[q] = 0.0
        return abs(theta_d * step * pivot)

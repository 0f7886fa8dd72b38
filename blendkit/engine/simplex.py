"""Two-phase, bounded-variable revised simplex method.

The algorithm alone lives here; `standard_form` prepares its input and `solve` turns
its outcome into a result. Notation, used only inside this module:

    A x - s + sum_k sign_k e_{row_k} a_k = 0

with n structural variables x (bounds col_lower..col_upper), m logical variables
s = A x (bounds row_lower..row_upper) and, in phase one, artificial variables a >= 0,
one for each row whose logical could not start inside its bounds. The combined
matrix is M = [A, -I, artificial columns]; z is the vector of all variables.

    head[r]  the variable basic in position r of the basis B
    y        simplex multipliers (duals): B^T y = c_B
    d        reduced costs: d = c - M^T y
    alpha    the entering column in the current basis: B alpha = M_q
    delta    the change of the basic variables per unit step of the entering one
    theta    the step length

Phase one minimises the sum of the artificial variables from a basis of logicals and
artificials; if that minimum stays positive the problem is infeasible, and the phase-one
duals are returned as a certificate. Phase two starts from the phase-one basis, with the
artificials fixed at zero, and minimises c·x. Nonbasic variables sit at a bound (or at
zero when free), so upper bounds, fixed and free variables and ranged rows need no extra
rows. The ratio test is Harris's two-pass test; when the objective stops moving for a
while the rule switches to Bland's smallest-index rule, which cannot cycle, until it
moves again.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import scipy.sparse as sp

from blendkit.engine.basis_factor import BasisFactor, SingularBasis, SparseBasisFactor
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import Tolerances

# Degenerate (objective-neutral) iterations in a row before Bland's rule takes over.
# Bland's rule cannot cycle but is slow, so it waits for a long stall: on the NETLIB
# set a limit of 30 cost four times the iterations of a limit of 200.
STALL_LIMIT = 250
# Problems with at least this many rows, and a matrix at most SPARSE_DENSITY full, are
# held and factorised as sparse matrices; smaller or denser ones as dense arrays.
SPARSE_ROWS = 400
SPARSE_DENSITY = 0.1


@dataclass(frozen=True)
class SimplexOutcome:
    """What the algorithm found, in the internal form's terms."""

    status: str  # optimal | infeasible | unbounded | iteration_limit | numerical_trouble
    message: str
    x: np.ndarray | None  # structural values
    y: np.ndarray | None  # phase-two duals, one per row
    d: np.ndarray | None  # phase-two reduced costs of the structurals
    iterations: int
    phase_one_iterations: int
    farkas: np.ndarray | None = None  # phase-one duals (one per row) when infeasible
    farkas_d: np.ndarray | None = None  # phase-one reduced costs of the structurals
    farkas_at_upper: np.ndarray | None = None  # which bound each nonbasic x and s sat at
    infeasibility: float | None = None  # the phase-one minimum (sum of artificials)
    ray: np.ndarray | None = None  # direction of unboundedness of x
    head: np.ndarray | None = None  # final basis: variable in each position
    at_upper: np.ndarray | None = None  # final nonbasic position of x and s
    warm: bool = False  # phase two started straight from a given basis
    algorithm: str = "primal"  # "primal" (two-phase) or "dual" (dual simplex from a dual feasible basis)
    cost_ranges: np.ndarray | None = None  # (n, 2): cost of each x over which the basis stays optimal
    bound_ranges: np.ndarray | None = None  # (n + m, 2): how far each active bound may move down, up


class _Simplex:
    """The state of one run; see the module docstring for the notation."""

    def __init__(self, sf: StandardForm, tol: Tolerances, max_iterations: int):
        self.tol = tol
        self.max_iterations = max_iterations
        self.A = sf.A
        self.m, self.n = sf.A.shape
        self.c_struct = sf.c
        self.lower = np.concatenate([sf.col_lower, sf.row_lower])
        self.upper = np.concatenate([sf.col_upper, sf.row_upper])
        self.allow_dual = True
        self.want_ranges = False
        self.algorithm = "primal"
        self.art_row = np.zeros(0, dtype=int)
        self.art_sign = np.zeros(0)
        self.iterations = 0
        self.warm = False
        nonzeros = self.A.nnz if sp.issparse(self.A) else np.count_nonzero(self.A)
        density = nonzeros / max(1, self.m * self.n)
        self.sparse = self.m >= SPARSE_ROWS and density <= SPARSE_DENSITY
        if self.sparse:
            self.factor = SparseBasisFactor(refactor_every=50)
            self.M = sp.hstack([sp.csc_matrix(self.A), -sp.identity(self.m, format="csc")], format="csc")
        else:
            # Refactorising costs about m^3 and each stored update about m per solve;
            # this interval balances the two for dense bases of the sizes blends have.
            self.factor = BasisFactor(refactor_every=int(np.clip(np.sqrt(self.m) * 0.75, 4, 64)))
            dense = self.A.toarray() if sp.issparse(self.A) else self.A
            self.M = np.hstack([dense, -np.eye(self.m)])

    # ----- the matrix M = [A, -I, artificial columns] -------------------------------

    def column(self, j: int) -> np.ndarray:
        """Column j of M, as a dense vector."""
        if self.sparse:
            M = self.M
            col = np.zeros(self.m)
            start, stop = M.indptr[j], M.indptr[j + 1]
            col[M.indices[start:stop]] = M.data[start:stop]
            return col
        return self.M[:, j]

    def times(self, z: np.ndarray) -> np.ndarray:
        """M z."""
        return self.M @ z

    def times_transpose(self, y: np.ndarray) -> np.ndarray:
        """M^T y."""
        return self.M.T @ y

    def add_artificials(self, rows: np.ndarray, signs: np.ndarray) -> None:
        """Append one artificial column sign * e_row per given row to M."""
        self.art_row, self.art_sign = rows, signs
        if rows.size == 0 and self.M.shape[1] == self.n + self.m:
            return  # nothing to add or remove
        if self.sparse:
            columns = sp.csc_matrix((signs, (rows, np.arange(rows.size))), shape=(self.m, rows.size))
            self.M = sp.hstack([self.M[:, : self.n + self.m], columns], format="csc")
        else:
            columns = np.zeros((self.m, rows.size))
            columns[rows, np.arange(rows.size)] = signs
            self.M = np.hstack([self.M[:, : self.n + self.m], columns])

    # ----- start ------------------------------------------------------------------

    def start_from(self, head: np.ndarray, at_upper: np.ndarray) -> bool:
        """Take a given basis; True when it is primal feasible, so phase one can be skipped.

        The basis is dropped (False) when it does not fit this problem, is singular, or
        leaves a basic variable outside its bounds.
        """
        n, m, tp = self.n, self.m, self.tol.primal_feasibility
        head = np.asarray(head, dtype=int)
        at_upper = np.asarray(at_upper, dtype=bool)
        if head.shape != (m,) or at_upper.shape != (n + m,) or np.any(head < 0) or np.any(head >= n + m):
            return False
        if np.unique(head).size != m:
            return False
        lo, up = self.lower, self.upper
        at_upper = (at_upper & np.isfinite(up)) | (~np.isfinite(lo) & np.isfinite(up))
        z = np.where(at_upper, up, np.where(np.isfinite(lo), lo, 0.0))
        self.add_artificials(np.zeros(0, dtype=int), np.zeros(0))
        self.z = z
        self.at_upper = at_upper.copy()
        self.head = head.copy()
        self.basic = np.zeros(n + m, dtype=bool)
        self.basic[self.head] = True
        self.at_upper[self.head] = False
        try:
            self.refactor()
        except SingularBasis:
            return False
        xb = self.z[self.head]
        lb, ub = lo[self.head], up[self.head]
        return bool(np.all(xb >= lb - tp * (1 + np.abs(lb))) and np.all(xb <= ub + tp * (1 + np.abs(ub))))

    def start(self) -> None:
        """Nonbasics at a bound, logicals basic where they fit, artificials elsewhere."""
        n, m, tp = self.n, self.m, self.tol.primal_feasibility
        lo, up = self.lower[: n + m], self.upper[: n + m]
        x = np.where(np.isfinite(lo[:n]), lo[:n], np.where(np.isfinite(up[:n]), up[:n], 0.0))
        at_upper = np.zeros(n + m, dtype=bool)
        at_upper[:n] = ~np.isfinite(lo[:n]) & np.isfinite(up[:n])
        activity = self.A @ x
        rl, ru = lo[n:], up[n:]
        below = activity < rl - tp * (1 + np.abs(rl))
        above = activity > ru + tp * (1 + np.abs(ru))
        fits = ~(below | above)
        s = np.where(fits, activity, np.where(below, rl, ru))
        at_upper[n:] = above
        rows = np.flatnonzero(~fits)
        self.add_artificials(rows, np.where(below[rows], 1.0, -1.0))
        k = rows.size
        self.lower = np.concatenate([lo, np.zeros(k)])
        self.upper = np.concatenate([up, np.full(k, np.inf)])
        self.z = np.concatenate([x, s, np.abs(activity[rows] - s[rows])])
        self.at_upper = np.concatenate([at_upper, np.zeros(k, dtype=bool)])
        self.head = np.where(fits, n + np.arange(m), 0)
        self.head[rows] = n + m + np.arange(k)
        self.basic = np.zeros(n + m + k, dtype=bool)
        self.basic[self.head] = True
        self.refactor()

    def refactor(self) -> None:
        """Factorise the basis afresh and recompute the basic values from the nonbasics."""
        self.factor.factor(self.M[:, self.head])
        self.basic_values()

    def basic_values(self) -> None:
        """Set the basic variables from the nonbasic ones: B z_B = -N z_N."""
        nonbasic_z = np.where(self.basic, 0.0, self.z)
        self.z[self.head] = self.factor.ftran(-self.times(nonbasic_z))

    # ----- one phase ----------------------------------------------------------------

    def fresh_duals(self, cost: np.ndarray) -> np.ndarray:
        """Recompute y and return d = cost - M^T y from the current factorisation."""
        self.y = self.factor.btran(cost[self.head])
        return cost - self.times_transpose(self.y)

    def mobility(self) -> tuple[np.ndarray, np.ndarray]:
        """1.0 where a variable may rise (fall) from where it sits, 0.0 where it may not.

        Basic and fixed variables may do neither; a free nonbasic variable may do both.
        """
        movable = ~self.basic & (self.lower != self.upper)
        free = ~np.isfinite(self.lower) & ~np.isfinite(self.upper)
        rise = (movable & ~self.at_upper).astype(float)
        fall = (movable & (self.at_upper | free)).astype(float)
        return rise, fall

    def run(self, cost: np.ndarray) -> str:
        """Iterate with objective `cost` until optimal, unbounded or out of iterations.

        Pricing is Devex (approximate steepest edge, Forrest & Goldfarb 1992): the
        entering variable maximises d_j^2 / w_j over reference weights w. Reduced costs
        are updated from the pivot row each iteration and recomputed on every
        refactorisation, which also bounds their drift.
        """
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            return self._run(cost)

    def _run(self, cost: np.ndarray) -> str:
        """The body of `run`, with floating-point warnings silenced (infinite bounds)."""
        tol = self.tol
        stall = 0
        bland = False
        self.ray = None
        d = self.fresh_duals(cost)
        objective = float(cost @ self.z)
        weights = np.ones_like(d)
        rise, fall = self.mobility()
        e_r = np.zeros(self.m)
        while True:
            if self.iterations >= self.max_iterations:
                return "iteration_limit"
            gain = np.maximum(-d * rise, d * fall)
            gain[gain <= tol.dual_feasibility] = 0.0
            if bland:
                eligible = np.flatnonzero(gain)
                q = int(eligible[0]) if eligible.size else 0
            else:
                q = int(np.argmax(gain * gain / weights))
            if gain[q] == 0.0:
                if self.factor.updates:
                    # Confirm optimality on a fresh factorisation before stopping.
                    self.refactor()
                    d = self.fresh_duals(cost)
                    if np.any(np.maximum(-d * rise, d * fall) > tol.dual_feasibility):
                        continue
                self.d = d
                return "optimal"
            direction = 1.0 if d[q] < 0 else -1.0
            alpha = self.factor.ftran(self.column(q))
            delta = -direction * alpha
            step = self.ratio_test(q, delta, bland)
            if step is None:
                ray = np.zeros_like(self.z)
                ray[self.head] = delta
                ray[q] = direction
                self.ray = ray
                return "unbounded"
            theta, r, hits_upper = step
            if r >= 0:
                # The pivot row: row r of B^-1 M, for the reduced-cost and weight updates.
                e_r[r] = 1.0
                row = self.times_transpose(self.factor.btran(e_r))
                e_r[r] = 0.0
                pivot = alpha[r]
                if abs(row[q] - pivot) > 1e-7 * (1 + abs(pivot)):
                    # Row and column disagree about the pivot: rounding has built up.
                    self.refactor()
                    d = self.fresh_duals(cost)
                    continue
            self.iterations += 1
            if theta > 0:
                self.z[self.head] += theta * delta
            progress = theta * abs(d[q])
            if r < 0:  # the entering variable runs to its other bound: no basis change
                self.at_upper[q] = direction > 0
                self.z[q] = self.upper[q] if direction > 0 else self.lower[q]
                rise[q], fall[q] = float(direction < 0), float(direction > 0)
            else:
                self.z[q] += direction * theta
                p = int(self.head[r])
                self.z[p] = self.upper[p] if hits_upper else self.lower[p]
                self.at_upper[p] = hits_upper
                self.basic[p] = False
                self.basic[q] = True
                self.head[r] = q
                d -= (d[q] / pivot) * row
                d[q] = 0.0
                ratio = row / pivot
                weight_q = max(weights[q], 1.0)
                np.maximum(weights, ratio * ratio * weight_q, out=weights)
                weights[p] = max(weight_q / (pivot * pivot), 1.0)
                if weights[p] > 1e8 or weights[q] > 1e8:
                    weights[:] = 1.0  # a new reference framework
                if p >= self.n + self.m:  # an artificial that leaves never returns
                    self.lower[p] = self.upper[p] = 0.0
                    self.z[p] = 0.0
                    self.at_upper[p] = False
                    rise[p] = fall[p] = 0.0
                else:
                    movable = self.lower[p] != self.upper[p]
                    free = not (np.isfinite(self.lower[p]) or np.isfinite(self.upper[p]))
                    rise[p] = float(movable and not hits_upper)
                    fall[p] = float(movable and (hits_upper or free))
                rise[q] = fall[q] = 0.0
                self.factor.update(r, alpha)
                if self.factor.due:
                    self.refactor()
                    d = self.fresh_duals(cost)
            objective -= progress
            if progress > 1e-12 * (1 + abs(objective)):
                stall = 0
                bland = False
            else:
                stall += 1
                bland = bland or stall >= STALL_LIMIT

    def ratio_test(self, q: int, delta: np.ndarray, bland: bool):
        """Step length and leaving position for entering variable q.

        Returns (theta, r, hits_upper) with r = -1 for a bound flip of q, or None when
        nothing limits the step (unbounded direction).
        """
        tol = self.tol
        head = self.head
        m = self.m
        xb = self.z[head]
        rate = np.abs(delta)
        # Entries below the pivot tolerance, relative to the column's largest, never
        # block: pivoting on them would make the basis nearly singular.
        blocking = rate > tol.pivot * max(1.0, rate.max(initial=0.0))
        rising = delta > 0
        bound = np.where(rising, self.upper[head], self.lower[head])
        room = np.where(rising, bound - xb, xb - bound)
        exact = np.divide(room, rate, out=np.full(m, np.inf), where=blocking)
        np.maximum(exact, 0.0, out=exact)
        if bland:
            theta_max = exact.min(initial=np.inf)
        else:
            # Harris pass one: the largest step that keeps every basic variable within
            # its bound relaxed by the primal tolerance; never negative, even when a
            # basic variable already sits beyond its relaxed bound through rounding.
            relaxed = np.divide(room + tol.primal_feasibility * (1 + np.abs(bound)), rate,
                                out=np.full(m, np.inf), where=blocking)
            theta_max = max(relaxed.min(initial=np.inf), 0.0)
        span = self.upper[q] - self.lower[q]
        if theta_max == np.inf:
            if span < np.inf:
                return span, -1, False
            return None
        if span <= theta_max:
            return span, -1, False
        if bland:
            ties = np.flatnonzero(exact <= theta_max * (1 + 1e-12) + 1e-15)
            r = int(ties[np.argmin(head[ties])])
        else:
            # Harris pass two: among rows blocking within theta_max, the largest pivot.
            r = int(np.argmax(np.where(exact <= theta_max, rate, -1.0)))
        return float(exact[r]), r, bool(rising[r])

    # ----- dual simplex, from a dual feasible basis ----------------------------------

    def dual_start(self, basis=None) -> bool:
        """Set up a dual feasible basis without artificials; False when there is none at hand.

        From `basis` (head, at_upper) when given, else from the basis of logicals (all
        duals zero, so d = c). A nonbasic variable with both bounds finite is put at the
        bound its reduced cost favours; one with a single finite bound must already be
        on the right side, and a free one must have a zero reduced cost.
        """
        n, m, td = self.n, self.m, self.tol.dual_feasibility
        lo, up = self.lower[: n + m], self.upper[: n + m]
        self.add_artificials(np.zeros(0, dtype=int), np.zeros(0))
        if basis is not None:
            head, at_upper = (np.asarray(b) for b in basis)
            if head.shape != (m,) or np.any(head >= n + m) or np.unique(head).size != m:
                return False
        else:
            head, at_upper = n + np.arange(m), np.zeros(n + m, dtype=bool)
        self.head = np.array(head, dtype=int)
        self.basic = np.zeros(n + m, dtype=bool)
        self.basic[self.head] = True
        self.z = np.zeros(n + m)
        cost = np.concatenate([self.c_struct, np.zeros(m)])
        try:
            self.factor.factor(self.M[:, self.head])
        except SingularBasis:
            return False
        d = cost - self.times_transpose(self.factor.btran(cost[self.head]))
        low_ok, up_ok = np.isfinite(lo), np.isfinite(up)
        nonbasic = ~self.basic & (lo != up)
        wants_upper = d < -td
        wants_lower = d > td
        if np.any(nonbasic & wants_upper & ~up_ok) or np.any(nonbasic & wants_lower & ~low_ok):
            return False
        if np.any(nonbasic & ~low_ok & ~up_ok & (np.abs(d) > td)):
            return False
        self.at_upper = np.where(wants_upper, True, np.where(wants_lower, False, np.asarray(at_upper, bool)))
        self.at_upper &= up_ok
        self.at_upper |= ~low_ok & up_ok
        self.at_upper[self.head] = False
        self.z = np.where(self.at_upper, up, np.where(low_ok, lo, 0.0))
        self.basic_values()
        return True

    def _dual_feasible(self, d: np.ndarray) -> bool:
        """True when no nonbasic variable's reduced cost asks it to move."""
        rise, fall = self.mobility()
        return not np.any(np.maximum(-d * rise, d * fall) > self.tol.dual_feasibility)

    def try_dual(self, basis=None) -> SimplexOutcome | None:
        """Solve with the dual simplex when a dual feasible basis is at hand.

        Returns the outcome, or None to hand over to the two-phase primal method: when
        no dual feasible basis is at hand, when the dual simplex finds the problem
        infeasible (phase one then proves it and gives the certificate), or when it
        stalls or runs into trouble.
        """
        n, m = self.n, self.m
        if not self.dual_start(basis):
            return None
        cost = np.concatenate([self.c_struct, np.zeros(m)])
        status = self.run_dual(cost)
        if status == "optimal" and not self._dual_feasible(self.d):
            # A primal pass from this primal feasible basis removes the dual
            # infeasibility left by rounding.
            status = self.run(cost)
        if status != "optimal":
            if status == "unbounded":
                return self._stop(status, "the objective can fall without limit", ray=self.ray[:n].copy(), phase_one=0)
            return None
        self.algorithm = "dual"
        return self._optimal(phase_one=0, warm=basis is not None)

    def run_dual(self, cost: np.ndarray) -> str:
        """Dual simplex iterations until primal feasible ("optimal"), or a reason to stop.

        Each iteration picks the basic variable furthest outside its bounds (weighted by
        dual Devex weights) to leave, and the entering variable by a two-pass (Harris)
        ratio test on the reduced costs, so the basis stays dual feasible throughout.
        Returns "optimal", "infeasible" (no entering variable: the dual is unbounded),
        "stalled" or "iteration_limit".
        """
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            return self._run_dual(cost)

    def _run_dual(self, cost: np.ndarray) -> str:
        """The body of `run_dual`, with floating-point warnings silenced.

        The basic values, their bounds and tolerances are kept as position arrays (xb,
        lb, ub, slack) between refactorisations, so each iteration touches few arrays.
        """
        tol = self.tol
        d = self.fresh_duals(cost)
        rise_f, fall_f = self.mobility()
        rise, fall = rise_f > 0, fall_f > 0
        # The one way each nonbasic variable may move: +1 up, -1 down, 0 not at all.
        # Free nonbasic variables (both ways) take the slower two-sided search below.
        way = rise_f - fall_f
        back = -way
        two_way = bool(np.any(rise & fall))
        span = self.upper - self.lower
        weights = np.ones(self.m)
        e_r = np.zeros(self.m)
        stall = 0
        objective = float(cost @ self.z)
        head = self.head

        def positions():
            """Basic values, bounds and feasibility slack by basis position."""
            low, high = self.lower[head], self.upper[head]
            slack = tol.primal_feasibility * (1 + np.minimum(np.abs(low), np.abs(high)))
            return self.z[head].copy(), low, high, slack

        xb, lb, ub, slack = positions()
        while True:
            if self.iterations >= self.max_iterations:
                self.z[head] = xb
                return "iteration_limit"
            worst = np.maximum(lb - xb, xb - ub)
            worst -= slack  # > 0: outside its bound by more than the tolerance
            score = np.maximum(worst, 0.0)
            score *= score
            score /= weights
            r = int(score.argmax()) if self.m else 0
            if not self.m or worst[r] <= 0.0:
                self.z[head] = xb
                if self.factor.updates:
                    self.refactor()
                    d = self.fresh_duals(cost)
                    xb, lb, ub, slack = positions()
                    if np.any(np.maximum(lb - xb, xb - ub) > slack):
                        continue
                self.d = d
                return "optimal"
            p = int(head[r])
            rises = xb[r] < lb[r]  # the leaving variable moves up to its lower bound
            target = lb[r] if rises else ub[r]
            e_r[r] = 1.0
            row = self.times_transpose(self.factor.btran(e_r))
            e_r[r] = 0.0
            # Change of the leaving variable per unit rise of each nonbasic variable.
            gain = -row if rises and two_way else row
            smallest = tol.pivot * max(1.0, row.max(initial=0.0), -row.min(initial=0.0))
            if two_way:
                up = (rise & (gain > smallest)).nonzero()[0]
                down = (fall & (gain < -smallest)).nonzero()[0]
                order = np.concatenate([up, down])
                # Distance of each reduced cost from changing sign, and its rate of change.
                room = np.maximum(np.concatenate([d[up], -d[down]]), 0.0)
                size = np.abs(gain[order])
            else:
                signed = row * (back if rises else way)  # = gain * way
                order = (signed > smallest).nonzero()[0]
                room = np.maximum(d[order] * way[order], 0.0)
                size = signed[order]
            if not order.size:
                self.z[head] = xb
                return "infeasible"
            exact = room / size
            infeasible_by = abs(xb[r] - target)
            first = int(exact.argmin())
            if size[first] * span[order[first]] >= infeasible_by:
                # The first breakpoint already blocks (the usual case): Harris's two-pass
                # choice among the candidates, no bound flips.
                flipped = order[:0]
                relaxed = ((room + tol.dual_feasibility) / size).min()
                pick = (exact <= relaxed).nonzero()[0]
                q = int(order[pick[size[pick].argmax()]])
            else:
                # Bound flipping (the "long step"): walking the breakpoints in order, a
                # boxed variable whose reduced cost would change sign is moved to its
                # other bound instead of entering, while the leaving variable stays
                # infeasible.
                sort = np.argsort(exact, kind="stable")
                order, room, size, exact = order[sort], room[sort], size[sort], exact[sort]
                left = infeasible_by - np.cumsum(size * span[order])
                passed = int((left <= 0).argmax())
                if left[passed] > 0:
                    self.z[head] = xb
                    return "infeasible"  # every breakpoint passed: the dual is unbounded
                relaxed = ((room[passed:] + tol.dual_feasibility) / size[passed:]).min()
                pick = passed + (exact[passed:] <= relaxed).nonzero()[0]
                q = int(order[pick[size[pick].argmax()]])
                flipped = order[:passed]
            alpha = self.factor.ftran(self.column(q))
            pivot = alpha[r]
            if abs(row[q] - pivot) > 1e-7 * (1 + abs(pivot)):
                self.z[head] = xb
                self.refactor()
                d = self.fresh_duals(cost)
                xb, lb, ub, slack = positions()
                continue
            self.iterations += 1
            if flipped.size:
                change = np.where(self.at_upper[flipped], -span[flipped], span[flipped])
                self.z[flipped] += change
                self.at_upper[flipped] = ~self.at_upper[flipped]
                rise[flipped], fall[flipped] = fall[flipped], rise[flipped]
                way[flipped] = -way[flipped]
                back[flipped] = -back[flipped]
                xb -= self.factor.ftran(self.M[:, flipped] @ change)
            step = (xb[r] - target) / pivot  # how far q moves
            xb -= step * alpha
            xb[r] = self.z[q] + step  # q takes p's position
            self.z[p] = target
            theta_d = d[q] / row[q]
            d -= theta_d * row
            d[q] = 0.0
            progress = abs(theta_d * step * pivot)
            self.at_upper[p] = not rises
            self.basic[p] = False
            self.basic[q] = True
            head[r] = q
            lb[r], ub[r] = self.lower[q], self.upper[q]
            slack[r] = tol.primal_feasibility * (1 + min(abs(lb[r]), abs(ub[r])))
            movable = span[p] != 0
            rise[p] = movable and rises
            fall[p] = movable and not rises
            rise[q] = fall[q] = False
            way[p] = (1.0 if rises else -1.0) if movable else 0.0
            back[p] = -way[p]
            way[q] = back[q] = 0.0
            # Dual Devex weights of the basic positions: w_i >= (alpha_i / pivot)^2 w_r.
            weight_r = max(weights[r], 1.0)
            np.maximum(weights, (alpha * alpha) * (weight_r / (pivot * pivot)), out=weights)
            weights[r] = max(weight_r / (pivot * pivot), 1.0)
            if weights[r] > 1e8:
                weights[:] = 1.0
            self.factor.update(r, alpha)
            if self.factor.due:
                self.z[head] = xb
                self.refactor()
                d = self.fresh_duals(cost)
                xb, lb, ub, slack = positions()
            objective += progress
            if progress > 1e-12 * (1 + abs(objective)):
                stall = 0
            else:
                stall += 1
                if stall >= STALL_LIMIT:
                    self.z[head] = xb
                    return "stalled"

    # ----- both phases --------------------------------------------------------------

    def solve(self, basis=None) -> SimplexOutcome:
        """Run phase one (if needed) and phase two; see the module docstring.

        `basis` is an optional (head, at_upper) pair from an earlier solve of a problem of
        the same shape; when it is primal feasible here, phase one is skipped.
        """
        n, m = self.n, self.m
        if np.any(self.lower > self.upper):
            j = int(np.flatnonzero(self.lower > self.upper)[0])
            what = f"variable {j}" if j < n else f"row {j - n}"
            return self._stop("infeasible", f"{what} has a lower bound above its upper bound")
        try:
            self.warm = basis is not None and self.start_from(*basis)
            if not self.warm and self.allow_dual:
                outcome = self.try_dual(basis)
                if outcome is not None:
                    return outcome
            if not self.warm:
                self.start()
            k = self.art_row.size
            if k:
                phase_one_cost = np.concatenate([np.zeros(n + m), np.ones(k)])
                status = self.run(phase_one_cost)
                if status == "iteration_limit":
                    return self._stop(status, "iteration limit reached in phase one")
                if status != "optimal":
                    return self._stop("numerical_trouble", f"phase one ended {status}")
                infeasibility = float(self.z[n + m :].sum())
                finite = np.concatenate([self.lower[: n + m], self.upper[: n + m]])
                finite = finite[np.isfinite(finite)]
                scale = 1.0 + (np.abs(finite).max() if finite.size else 0.0)
                if infeasibility > self.tol.infeasibility * scale:
                    outcome = self._stop(
                        "infeasible",
                        f"no point meets every constraint: phase one left a total "
                        f"infeasibility of {infeasibility:.3g}",
                    )
                    return replace(
                        outcome,
                        farkas=self.y.copy(),
                        farkas_d=self.d[:n].copy(),
                        farkas_at_upper=self.at_upper[: n + m].copy(),
                        infeasibility=infeasibility,
                    )
            phase_one_iterations = self.iterations
            if self.basic[n + m :].any():
                self._drive_out_artificials()
            self.lower[n + m :] = 0.0
            self.upper[n + m :] = 0.0
            self.z[n + m :] = 0.0
            self.refactor()
            cost = np.concatenate([self.c_struct, np.zeros(m + k)])
            status = self.run(cost)
        except SingularBasis as error:
            return self._stop("numerical_trouble", str(error))
        if status == "unbounded":
            return self._stop(
                status, "the objective can fall without limit", ray=self.ray[:n].copy(),
                phase_one=phase_one_iterations,
            )
        if status == "iteration_limit":
            return self._stop(status, f"iteration limit ({self.max_iterations}) reached in phase two",
                              phase_one=phase_one_iterations)
        return self._optimal(phase_one=phase_one_iterations, warm=self.warm)

    def cost_ranges(self) -> np.ndarray:
        """For each structural x_j, the interval of its cost over which this basis stays
        optimal (the other costs fixed): "cost ranging".

        Raising c_j by t changes the duals by t B^-T e_r when x_j is basic in position r,
        so every nonbasic reduced cost d_k moves by -t alpha_rk (alpha_r: row r of B^-1 M);
        the interval ends where the first d_k would change to the wrong sign. A nonbasic
        x_j only moves its own d_j: at its lower bound it stays optimal up from c_j - d_j,
        at its upper bound down to it.
        """
        n, m = self.n, self.m
        c = self.c_struct
        d = self.d
        ranges = np.empty((n, 2))
        lower_ok = ~self.basic & (self.lower != self.upper)
        rise = lower_ok & ~self.at_upper
        free = ~np.isfinite(self.lower) & ~np.isfinite(self.upper)
        fall = lower_ok & (self.at_upper | free)
        e_r = np.zeros(m)
        position = {int(j): r for r, j in enumerate(self.head)}
        for j in range(n):
            if j not in position:
                if self.lower[j] == self.upper[j]:
                    ranges[j] = (-np.inf, np.inf)
                elif free[j]:
                    ranges[j] = (c[j], c[j])
                elif self.at_upper[j]:
                    ranges[j] = (-np.inf, c[j] - d[j])
                else:
                    ranges[j] = (c[j] - d[j], np.inf)
                continue
            e_r[position[j]] = 1.0
            row = self.times_transpose(self.factor.btran(e_r))
            e_r[position[j]] = 0.0
            with np.errstate(divide="ignore", invalid="ignore"):
                step = d / row
            # At a lower bound d_k must stay >= 0; at an upper bound <= 0.
            up_limits = np.concatenate([step[rise & (row > 1e-12)], step[fall & (row < -1e-12)]])
            down_limits = np.concatenate([step[rise & (row < -1e-12)], step[fall & (row > 1e-12)]])
            up = np.maximum(up_limits, 0.0).min(initial=np.inf)
            down = np.minimum(down_limits, 0.0).max(initial=-np.inf)
            ranges[j] = (c[j] + down, c[j] + up)
        return ranges

    def bound_ranges(self) -> np.ndarray:
        """For each of the n + m variables held at a bound, how far that bound can move
        down and up (t_down, t_up >= 0) with the basis staying feasible, and so optimal:
        "right-hand-side ranging". A basic variable gets (inf, inf).

        Moving a nonbasic z_j by t moves the basic variables by -t B^-1 M_j; the range
        ends where the first of them reaches one of its bounds, or where z_j reaches its
        own other bound.
        """
        n, m = self.n, self.m
        ranges = np.full((n + m, 2), np.inf)
        xb, lb, ub = self.z[self.head], self.lower[self.head], self.upper[self.head]
        with np.errstate(divide="ignore", invalid="ignore"):
            for j in np.flatnonzero(~self.basic[: n + m]):
                delta = -self.factor.ftran(self.column(j))  # change of x_B per unit rise
                rising, falling = delta > 1e-12, delta < -1e-12
                up = np.concatenate([(ub - xb)[rising] / delta[rising], (lb - xb)[falling] / delta[falling]])
                down = np.concatenate([(xb - lb)[rising] / delta[rising], (xb - ub)[falling] / delta[falling]])
                # A bound may not pass the variable's other bound; a fixed variable's two
                # bounds move together (its value moves), so nothing caps that.
                own = self.upper[j] - self.lower[j] if self.upper[j] > self.lower[j] else np.inf
                ranges[j, 1] = max(min(up.min(initial=np.inf), own), 0.0)
                ranges[j, 0] = max(min(down.min(initial=np.inf), own), 0.0)
        return ranges

    def _optimal(self, phase_one: int, warm: bool) -> SimplexOutcome:
        """The outcome at an optimal basis (duals and reduced costs already computed)."""
        n, m = self.n, self.m
        return SimplexOutcome(
            status="optimal",
            message="optimal solution found",
            x=self.z[:n].copy(),
            y=self.y.copy(),
            d=self.d[:n].copy(),
            iterations=self.iterations,
            phase_one_iterations=phase_one,
            head=self.head.copy(),
            at_upper=self.at_upper[: n + m].copy(),
            warm=warm,
            algorithm=self.algorithm,
            cost_ranges=self.cost_ranges() if self.want_ranges else None,
            bound_ranges=self.bound_ranges() if self.want_ranges else None,
        )

    def _drive_out_artificials(self) -> None:
        """Swap artificials still basic (at zero) for structurals or logicals where possible.

        A degenerate pivot: nothing moves, but the basis then describes the real problem,
        so a later warm start can reuse it. A row whose artificial cannot leave is
        redundant; the artificial stays basic, fixed at zero.
        """
        n, m = self.n, self.m
        for r in np.flatnonzero(self.head >= n + m):
            e = np.zeros(m)
            e[r] = 1.0
            row = self.times_transpose(self.factor.btran(e))[: n + m]  # row r of B^-1 M
            row[self.basic[: n + m]] = 0.0
            q = int(np.argmax(np.abs(row)))
            if abs(row[q]) <= 1e-7:
                continue
            alpha = self.factor.ftran(self.column(q))
            p = int(self.head[r])
            self.z[p] = 0.0
            self.basic[p] = False
            self.basic[q] = True
            self.head[r] = q
            self.factor.update(r, alpha)
        self.refactor()

    def _stop(self, status: str, message: str, *, farkas=None, ray=None, phase_one=None) -> SimplexOutcome:
        """An outcome without a solution."""
        return SimplexOutcome(
            status=status,
            message=message,
            x=None,
            y=None,
            d=None,
            iterations=self.iterations,
            phase_one_iterations=self.iterations if phase_one is None else phase_one,
            farkas=farkas,
            ray=ray,
        )


def run_simplex(
    sf: StandardForm, tol: Tolerances, max_iterations: int, basis=None, allow_dual: bool = True,
    ranging: bool = False,
) -> SimplexOutcome:
    """Solve the internal-form LP `sf`; see the module docstring.

    `basis` is an optional (head, at_upper) pair from an earlier outcome to start from;
    `allow_dual=False` keeps to the two-phase primal method; `ranging=True` adds the cost
    ranges of the structurals to an optimal outcome.
    """
    simplex = _Simplex(sf, tol, max_iterations)
    simplex.allow_dual = allow_dual
    simplex.want_ranges = ranging
    return simplex.solve(basis)

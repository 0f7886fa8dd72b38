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

from blendkit.engine.basis_factor import BasisFactor, SingularBasis
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import Tolerances

# Degenerate (objective-neutral) iterations in a row before Bland's rule takes over.
STALL_LIMIT = 30


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
        self.art_row = np.zeros(0, dtype=int)
        self.art_sign = np.zeros(0)
        self.iterations = 0
        self.warm = False
        self.factor = BasisFactor(refactor_every=max(8, min(64, int(np.sqrt(self.m) * 3))))

    # ----- the matrix M = [A, -I, artificial columns] -------------------------------

    def column(self, j: int) -> np.ndarray:
        """Column j of M."""
        if j < self.n:
            return self.A[:, j]
        col = np.zeros(self.m)
        if j < self.n + self.m:
            col[j - self.n] = -1.0
        else:
            k = j - self.n - self.m
            col[self.art_row[k]] = self.art_sign[k]
        return col

    def times(self, z: np.ndarray) -> np.ndarray:
        """M z."""
        n, m = self.n, self.m
        out = self.A @ z[:n] - z[n : n + m]
        np.add.at(out, self.art_row, self.art_sign * z[n + m :])
        return out

    def times_transpose(self, y: np.ndarray) -> np.ndarray:
        """M^T y."""
        return np.concatenate([self.A.T @ y, -y, self.art_sign * y[self.art_row]])

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
        self.art_row = np.zeros(0, dtype=int)
        self.art_sign = np.zeros(0)
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
        lo, up = self.lower, self.upper
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
        self.art_row = rows
        self.art_sign = np.where(below[rows], 1.0, -1.0)
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
        B = np.column_stack([self.column(j) for j in self.head]) if self.m else np.zeros((0, 0))
        self.factor.factor(B)
        nonbasic_z = np.where(self.basic, 0.0, self.z)
        self.z[self.head] = self.factor.ftran(-self.times(nonbasic_z))

    # ----- one phase ----------------------------------------------------------------

    def run(self, cost: np.ndarray) -> str:
        """Iterate with objective `cost` until optimal, unbounded or out of iterations."""
        tol = self.tol
        stall = 0
        bland = False
        objective = float(cost @ self.z)
        self.ray = None
        while True:
            if self.iterations >= self.max_iterations:
                return "iteration_limit"
            y = self.factor.btran(cost[self.head])
            d = cost - self.times_transpose(y)
            fixed = self.lower == self.upper
            free = ~np.isfinite(self.lower) & ~np.isfinite(self.upper)
            movable = ~self.basic & ~fixed
            up_gain = np.where(movable & ~self.at_upper, -d, 0.0)
            down_gain = np.where(movable & (self.at_upper | free), d, 0.0)
            gain = np.maximum(up_gain, down_gain)
            if bland:
                eligible = np.flatnonzero(gain > tol.dual_feasibility)
                q = int(eligible[0]) if eligible.size else -1
            else:
                q = int(np.argmax(gain)) if gain.size else -1
                if q >= 0 and gain[q] <= tol.dual_feasibility:
                    q = -1
            if q < 0:
                if self.factor.updates:
                    # Confirm optimality on a fresh factorisation before stopping.
                    self.refactor()
                    y = self.factor.btran(cost[self.head])
                    d = cost - self.times_transpose(y)
                    gain = np.maximum(
                        np.where(movable & ~self.at_upper, -d, 0.0),
                        np.where(movable & (self.at_upper | free), d, 0.0),
                    )
                    if gain.size and gain.max() > tol.dual_feasibility:
                        continue
                self.y, self.d = y, d
                return "optimal"
            direction = 1.0 if up_gain[q] >= down_gain[q] else -1.0
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
            self.iterations += 1
            self.z[self.head] += theta * delta
            if r < 0:  # the entering variable runs to its other bound: no basis change
                self.at_upper[q] = direction > 0
                self.z[q] = self.upper[q] if direction > 0 else self.lower[q]
            else:
                self.z[q] += direction * theta
                p = int(self.head[r])
                self.z[p] = self.upper[p] if hits_upper else self.lower[p]
                self.at_upper[p] = hits_upper
                self.basic[p] = False
                self.basic[q] = True
                self.head[r] = q
                if p >= self.n + self.m:  # an artificial that leaves never returns
                    self.lower[p] = self.upper[p] = 0.0
                    self.z[p] = 0.0
                    self.at_upper[p] = False
                self.factor.update(r, alpha)
                if self.factor.due:
                    self.refactor()
            new_objective = float(cost @ self.z)
            if objective - new_objective > 1e-12 * (1 + abs(objective)):
                stall = 0
                bland = False
            else:
                stall += 1
                bland = bland or stall >= STALL_LIMIT
            objective = new_objective

    def ratio_test(self, q: int, delta: np.ndarray, bland: bool):
        """Step length and leaving position for entering variable q.

        Returns (theta, r, hits_upper) with r = -1 for a bound flip of q, or None when
        nothing limits the step (unbounded direction).
        """
        tol = self.tol
        head = self.head
        xb, lb, ub = self.z[head], self.lower[head], self.upper[head]
        falling = delta < -tol.pivot
        rising = delta > tol.pivot
        with np.errstate(divide="ignore", invalid="ignore"):
            exact = np.full(self.m, np.inf)
            exact[falling] = (xb[falling] - lb[falling]) / -delta[falling]
            exact[rising] = (ub[rising] - xb[rising]) / delta[rising]
        exact = np.maximum(exact, 0.0)
        span = self.upper[q] - self.lower[q]
        if bland:
            theta_max = exact.min() if self.m else np.inf
        else:
            # Harris pass one: the largest step that keeps every basic variable within
            # its bound relaxed by the primal tolerance.
            slack = tol.primal_feasibility * (1 + np.abs(np.where(falling, lb, ub)))
            with np.errstate(divide="ignore", invalid="ignore"):
                relaxed = np.full(self.m, np.inf)
                relaxed[falling] = (xb[falling] - lb[falling] + slack[falling]) / -delta[falling]
                relaxed[rising] = (ub[rising] - xb[rising] + slack[rising]) / delta[rising]
            theta_max = relaxed.min() if self.m else np.inf
        if not np.isfinite(theta_max):
            if np.isfinite(span):
                return span, -1, False
            return None
        if span <= theta_max:
            return span, -1, False
        if bland:
            ties = np.flatnonzero(exact <= theta_max * (1 + 1e-12) + 1e-15)
            r = int(ties[np.argmin(head[ties])])
        else:
            # Harris pass two: among rows blocking within theta_max, the largest pivot.
            candidates = np.flatnonzero(exact <= theta_max)
            r = int(candidates[np.argmax(np.abs(delta[candidates]))])
        return float(exact[r]), r, bool(delta[r] > 0)

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
        return SimplexOutcome(
            status="optimal",
            message="optimal solution found",
            x=self.z[:n].copy(),
            y=self.y.copy(),
            d=self.d[:n].copy(),
            iterations=self.iterations,
            phase_one_iterations=phase_one_iterations,
            head=self.head.copy(),
            at_upper=self.at_upper[: n + m].copy(),
            warm=self.warm,
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


def run_simplex(sf: StandardForm, tol: Tolerances, max_iterations: int, basis=None) -> SimplexOutcome:
    """Solve the internal-form LP `sf` with the two-phase simplex method.

    `basis` is an optional (head, at_upper) pair from an earlier outcome to start from.
    """
    return _Simplex(sf, tol, max_iterations).solve(basis)

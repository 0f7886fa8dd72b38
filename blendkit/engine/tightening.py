"""Tighter column bounds for a branch-and-bound node, from the incumbent and from the rows.

Reduced-cost fixing: at a node whose LP optimum is z with reduced cost d_j > 0 for a
column at its lower bound l_j, every point of the node's region costs at least
z + d_j (x_j - l_j); a solution better than the incumbent's cutoff therefore has
x_j <= l_j + (cutoff - z) / d_j (and likewise from the upper bound when d_j < 0). On
integer columns the new bound is rounded down to a whole number; a semi-continuous
column whose new upper bound falls below its threshold is off.

Propagation: each row's least and greatest activity over the node's bounds limits every
column in it (with the column's own share taken out): a_ij x_j <= row_upper_i - (least
activity of the others), and the same from row_lower_i. Rounds repeat while an integer
or semi-continuous column moves. Only those columns' bounds are kept (whole numbers, or
a semi-continuous column off or on), because the LP enforces the rows on continuous
columns anyway; continuous bounds found on the way only help the later rounds. An
indicator row x_j <= u_j z_j with a binary z_j thus fixes z_j = 1 once x_j must be
positive, and x_j = 0 once z_j = 0; a cardinality row sum z <= K fixes the other
indicators to 0 once K of them are 1.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.mip_problem import MIPProblem, settle
from blendkit.engine.sparse import sparse
from blendkit.engine.tolerances import PROPAGATION_ROUNDS, PROPAGATION_SLACK, Tolerances


def fix_by_reduced_costs(problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, x: np.ndarray,
                         d: np.ndarray, room: float, tol: Tolerances) -> tuple[np.ndarray, np.ndarray]:
    """The domain tightened by reduced-cost fixing; `room` = cutoff - the node's LP optimum."""
    tight = problem.integer | problem.semi
    step = tol.integrality
    with np.errstate(divide="ignore", invalid="ignore"):
        at_lower = tight & (d > tol.dual_feasibility) & (x <= lower + step)
        at_upper = tight & (d < -tol.dual_feasibility) & (x >= upper - step)
        if not (at_lower.any() or at_upper.any()):
            return lower, upper
        lower, upper = lower.copy(), upper.copy()
        upper[at_lower] = np.minimum(upper[at_lower], lower[at_lower] + room / d[at_lower])
        lower[at_upper] = np.maximum(lower[at_upper], upper[at_upper] - room / -d[at_upper])
    return settle(problem, lower, upper, step)


class Propagator:
    """Bound propagation over the rows of one MIP (see the module docstring).

    The matrix is kept as its nonzeros sorted by column (`row`, `col`, `value`), so a
    round costs a few passes over the nonzeros.
    """

    def __init__(self, problem: MIPProblem, tol: Tolerances):
        form = problem.form
        A = sparse().csc_matrix(form.A)
        A.eliminate_zeros()
        A.sort_indices()
        m, n = A.shape
        self.problem = problem
        self.tol = tol
        self.m = m
        self.row = np.repeat(np.arange(m), 0) if A.nnz == 0 else A.indices.astype(np.intp)
        self.col = np.repeat(np.arange(n), np.diff(A.indptr))
        self.value = A.data.astype(float)
        self.positive = self.value > 0
        self.starts = A.indptr[:-1][np.diff(A.indptr) > 0]  # first entry of each nonempty column
        self.columns = np.flatnonzero(np.diff(A.indptr) > 0)
        self.row_lower, self.row_upper = form.row_lower, form.row_upper
        self.kept = problem.integer | problem.semi
        finite = np.where(np.isfinite(self.row_upper), self.row_upper, 0.0)
        self.upper_slack = tol.primal_feasibility * (1 + np.abs(finite))
        finite = np.where(np.isfinite(self.row_lower), self.row_lower, 0.0)
        self.lower_slack = tol.primal_feasibility * (1 + np.abs(finite))

    def tighten(self, lower: np.ndarray, upper: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
        """The tightened domain, or None when the rows cannot hold within it."""
        if not self.kept.any() or self.value.size == 0:
            return lower, upper
        kept_lower, kept_upper = lower, upper
        work_lower, work_upper = lower.copy(), upper.copy()
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            for _ in range(PROPAGATION_ROUNDS):
                implied = self._implied(work_lower, work_upper)
                if implied is None:
                    return None
                new_lower, new_upper = implied
                work_lower = np.maximum(work_lower, new_lower - PROPAGATION_SLACK * (1 + np.abs(new_lower)))
                work_upper = np.minimum(work_upper, new_upper + PROPAGATION_SLACK * (1 + np.abs(new_upper)))
                cand_lower, cand_upper = kept_lower.copy(), kept_upper.copy()
                cand_lower[self.kept] = work_lower[self.kept]
                cand_upper[self.kept] = work_upper[self.kept]
                cand_lower, cand_upper = settle(self.problem, cand_lower, cand_upper, self.tol.integrality)
                if np.any(cand_lower > cand_upper):
                    return None
                moved = not (np.array_equal(cand_lower, kept_lower) and np.array_equal(cand_upper, kept_upper))
                kept_lower, kept_upper = cand_lower, cand_upper
                work_lower[self.kept] = kept_lower[self.kept]
                work_upper[self.kept] = kept_upper[self.kept]
                if not moved:
                    break
        return kept_lower, kept_upper

    def _implied(self, lower: np.ndarray, upper: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
        """Column bounds implied by the rows over lower..upper; None when a row cannot hold.

        Every column's bound is tightened only, never loosened: the result is the given
        bound where the rows imply nothing better.
        """
        a, row = self.value, self.row
        at_lower, at_upper = a * lower[self.col], a * upper[self.col]
        least = np.minimum(at_lower, at_upper)  # each entry's least share of its row (or -inf)
        most = np.maximum(at_lower, at_upper)  # and its greatest (or +inf)
        least_others, least_total = _others(least, row, self.m, -np.inf)
        most_others, most_total = _others(most, row, self.m, np.inf)
        if np.any(least_total > self.row_upper + self.upper_slack):
            return None
        if np.any(most_total < self.row_lower - self.lower_slack):
            return None
        cap_high = (self.row_upper[row] - least_others) / a  # x_j <= (a > 0) or >= (a < 0) this
        cap_low = (self.row_lower[row] - most_others) / a  # x_j >= (a > 0) or <= (a < 0) this
        pos = self.positive
        upper_from = np.where(pos, cap_high, cap_low)
        lower_from = np.where(pos, cap_low, cap_high)
        new_lower, new_upper = lower.copy(), upper.copy()
        new_lower[self.columns] = np.maximum(lower[self.columns], np.maximum.reduceat(lower_from, self.starts))
        new_upper[self.columns] = np.minimum(upper[self.columns], np.minimum.reduceat(upper_from, self.starts))
        return new_lower, new_upper


def _others(share: np.ndarray, row: np.ndarray, m: int, infinity: float) -> tuple[np.ndarray, np.ndarray]:
    """Per entry, the sum of its row's other shares; and each row's total.

    Shares may be infinite (a column without that bound), all `infinity` (-inf for least
    shares, +inf for greatest): a row with two infinite shares leaves every entry's others
    infinite; with one, only that entry's others are finite.
    """
    infinite = share == infinity
    finite_share = np.where(infinite, 0.0, share)
    count = np.bincount(row, weights=infinite, minlength=m)
    finite_total = np.bincount(row, weights=finite_share, minlength=m)
    total = np.where(count > 0, infinity, finite_total)
    entry_count = count[row]
    finite_others = (entry_count == 0) | ((entry_count == 1) & infinite)
    return np.where(finite_others, finite_total[row] - finite_share, infinity), total

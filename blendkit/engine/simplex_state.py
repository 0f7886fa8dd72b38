"""The state of one simplex run: the matrix M, the bounds, the values and the basis.

`SimplexState` holds what the primal and the dual iterations (`primal`, `dual`) work on,
the LU factors of the basis (`basis_factor`), the starting bases of the primal method,
and the steps both iteration loops share: the pivot row, the pivot agreement check and the
refactorisation that refreshes the values and the duals. The notation is the one of
`blendkit.engine.simplex`.

A problem of at least SPARSE_ROWS rows and at most SPARSE_DENSITY full (a plant of many
products, whose blocks only the stock rows link) is held sparse: M by columns (CSC) and
by rows (`row_product`), its basis factorised by SuperLU. Then no step does dense m x n
work: a pivot row B^-T e_r is multiplied into M through the rows it picks or the binding
rows it lives on (`row_product`); the bound flips of the dual ratio test move the basic
values through the flipped columns alone. Smaller or denser problems (blends,
the NETLIB set) are held as dense arrays and factorised by LAPACK.
"""

from __future__ import annotations

import weakref

import numpy as np

from blendkit.engine.basis_factor import BasisFactor, InverseBasisFactor, SingularBasis
from blendkit.engine.kernel_factor import KernelBasisFactor
from blendkit.engine.row_product import RowProduct, gather
from blendkit.engine.sparse import held_sparse, is_sparse, sparse
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import (
    DENSE_REFACTOR_MAX,
    DENSE_REFACTOR_MIN,
    DENSE_REFACTOR_DIVISOR,
    HELD_INVERSE_AFTER,
    INVERSE_AFTER,
    INVERSE_REFACTOR_EVERY,
    INVERSE_ROWS,
    PIVOT_AGREEMENT,
    SPARSE_REFACTOR_EVERY,
    Tolerances,
)


def pivots_disagree(row_entry: float, pivot: float) -> bool:
    """True when the pivot row and the entering column give different pivot elements:
    rounding has built up, and the basis should be refactorised before pivoting."""
    return abs(row_entry - pivot) > PIVOT_AGREEMENT * (1 + abs(pivot))


class SimplexState:
    """One run's matrix, bounds, values and basis; see `blendkit.engine.simplex`.

    `z` holds every variable's value, `head` the variable basic in each position,
    `basic` and `at_upper` (for nonbasics) one flag per variable; `y` and `d` are the last
    duals and reduced costs computed, `ray` the direction found when unbounded.
    """

    def __init__(self, sf: StandardForm, tol: Tolerances, max_iterations: int, short_run: bool = False,
                 held: bool = False):
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
        self.y = self.d = self.ray = self.rho = None
        nonzeros = self.A.nnz if is_sparse(self.A) else np.count_nonzero(self.A)
        self.sparse = held_sparse(self.m, self.n, nonzeros)
        if self.sparse:
            self.factor = KernelBasisFactor(refactor_every=SPARSE_REFACTOR_EVERY)
            sp = sparse()
            self.M = sp.hstack([sp.csc_matrix(self.A), -sp.identity(self.m, format="csc")], format="csc")
            self.products = RowProduct(self.M)  # y^T M, for the pivot row and the duals
        else:
            self.factor = self._dense_factor(short_run, held)
            dense = self.A.toarray() if is_sparse(self.A) else self.A
            self.M = np.hstack([dense, -np.eye(self.m)])
            # [A, -I]^T by rows: M^T y in one product (the -I part costs m^2, less than two calls)
            self.MT = np.ascontiguousarray(self.M.T)

    def _dense_factor(self, short_run: bool, held: bool) -> BasisFactor:
        """The factors of a dense basis: LU with etas, or from INVERSE_ROWS rows also the
        explicit inverse, which a `short_run` (a warm start: few iterations expected) builds
        only once it has made rows / INVERSE_AFTER_DIVISOR updates (`InverseBasisFactor`),
        and a state `held` for a series of re-solves after HELD_INVERSE_AFTER updates."""
        if self.m < INVERSE_ROWS:
            every = np.clip(self.m**1.5 / DENSE_REFACTOR_DIVISOR, DENSE_REFACTOR_MIN, DENSE_REFACTOR_MAX)
            return BasisFactor(refactor_every=int(every))
        # Through a weak proxy: no reference cycle, so a finished solve's arrays are freed
        # at once rather than by the garbage collector.
        state = weakref.proxy(self)
        return InverseBasisFactor(INVERSE_REFACTOR_EVERY, lambda j: state.M[:, state.head[j]], lambda: state.head,
                                  patient=short_run, invert_after=HELD_INVERSE_AFTER if held else INVERSE_AFTER)

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

    def columns(self, js: np.ndarray) -> np.ndarray:
        """Columns js of M, as a dense m x len(js) array."""
        if self.sparse:
            return self.M[:, js].toarray()
        return self.M[:, js]

    def times_transpose(self, y: np.ndarray) -> np.ndarray:
        """M^T y."""
        return self.row_combination(y)

    def times_columns(self, columns: np.ndarray, values: np.ndarray) -> np.ndarray:
        """M[:, columns] @ values, from those columns' non-zeros alone when M is sparse."""
        if not self.sparse:
            return self.M[:, columns] @ values
        M = self.M
        return gather(M.indptr, M.indices, M.data, columns, values, self.m)

    def row_combination(self, y: np.ndarray) -> np.ndarray:
        """M^T y; when M is sparse, from the rows of M that y picks or lives on
        (`row_product`), which touches a small part of M."""
        if not self.sparse:
            # [A, -I, artificials]^T y: [A, -I]^T y from its transposed copy, then the
            # artificials' sign * y[row].
            if not self.art_row.size:
                return self.MT @ y
            k = self.n + self.m
            out = np.empty(self.M.shape[1])
            np.dot(self.MT, y, out=out[:k])
            out[k:] = self.art_sign * y[self.art_row]
            return out
        return self.products.combine(y, self._focus_rows)

    def _focus_rows(self) -> np.ndarray:
        """The rows whose logical is nonbasic: those a pivot row lives on (`row_product`)."""
        return np.flatnonzero(~self.basic[self.n : self.n + self.m])

    def add_artificials(self, rows: np.ndarray, signs: np.ndarray) -> None:
        """Append one artificial column sign * e_row per given row to M."""
        self.art_row, self.art_sign = rows, signs
        if rows.size == 0 and self.M.shape[1] == self.n + self.m:
            return  # nothing to add or remove
        if self.sparse:
            sp = sparse()
            columns = sp.csc_matrix((signs, (rows, np.arange(rows.size))), shape=(self.m, rows.size))
            self.M = sp.hstack([self.M[:, : self.n + self.m], columns], format="csc")
            self.products = RowProduct(self.M)
        else:
            columns = np.zeros((self.m, rows.size))
            columns[rows, np.arange(rows.size)] = signs
            self.M = np.hstack([self.M[:, : self.n + self.m], columns])

    # ----- starting bases -----------------------------------------------------------

    def set_head(self, head: np.ndarray) -> None:
        """Make the variables in `head` basic, in that order, and every other nonbasic."""
        self.head = np.array(head, dtype=int)
        self.basic = np.zeros(self.lower.size, dtype=bool)
        self.basic[self.head] = True

    def place_nonbasics(self, at_upper: np.ndarray) -> None:
        """Put each nonbasic variable at the bound `at_upper` asks for.

        An infinite bound cannot be asked for: a variable without a finite upper bound
        goes to its lower bound, one with only an upper bound to that, a free one to zero.
        """
        low_ok, up_ok = np.isfinite(self.lower), np.isfinite(self.upper)
        at_upper = at_upper | ~low_ok  # a new array: (at_upper & up_ok) | (~low_ok & up_ok)
        at_upper &= up_ok
        at_upper[self.head] = False
        self.at_upper = at_upper
        z = self.lower.copy()  # np.where(at_upper, upper, np.where(low_ok, lower, 0)) in fewer, cheaper
        z[~low_ok] = 0.0  # steps (np.where with a scalar costs twice this): re-solves place them each time
        np.copyto(z, self.upper, where=at_upper)
        self.z = z

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
        if len(set(head.tolist())) != m:  # not np.unique: it imports numpy.ma (15 ms)
            return False
        self.add_artificials(np.zeros(0, dtype=int), np.zeros(0))
        self.set_head(head)
        self.place_nonbasics(at_upper)
        try:
            self.refactor()
        except SingularBasis:
            return False
        xb = self.z[self.head]
        lb, ub = self.lower[self.head], self.upper[self.head]
        return bool(np.all(xb >= lb - tp * (1 + np.abs(lb))) and np.all(xb <= ub + tp * (1 + np.abs(ub))))

    def start(self) -> None:
        """Phase one's start: nonbasics at a bound, logicals basic where they fit,
        artificials elsewhere."""
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
        head = np.where(fits, n + np.arange(m), 0)
        head[rows] = n + m + np.arange(k)
        self.set_head(head)
        self.refactor()

    # ----- values, duals and the pivot row --------------------------------------------

    def refactor(self) -> None:
        """Factorise the basis afresh and recompute the basic values from the nonbasics."""
        self.factor.factor(self.M[:, self.head])
        self.basic_values()

    def basic_values(self) -> None:
        """Set the basic variables from the nonbasic ones: B z_B = -N z_N."""
        minus_nonbasic = -self.z  # -np.where(basic, 0, z) in fewer steps; M (-z) = -(M z) exactly
        minus_nonbasic[self.basic] = 0.0
        self.z[self.head] = self.factor.ftran(self.M @ minus_nonbasic)

    def fresh_duals(self, cost: np.ndarray) -> np.ndarray:
        """Recompute y and return d = cost - M^T y from the current factorisation."""
        self.y = self.factor.btran(cost[self.head])
        return cost - self.row_combination(self.y)  # M^T y, as `times_transpose`

    def refresh(self, cost: np.ndarray) -> np.ndarray:
        """Refactorise, then recompute the basic values, y and d = cost - M^T y.

        Both iteration loops call this when the update file is full, when rounding has
        built up, and before they stop, so that they stop on fresh numbers.
        """
        self.refactor()
        return self.fresh_duals(cost)

    def pivot_row(self, r: int) -> np.ndarray:
        """Row r of B^-1 M (alpha_r): how basic position r changes with each variable."""
        rho = self.factor.unit_btran(r)
        if self.sparse and self.products.focused:
            self._clear_logical_rows(rho, r)
        self.rho = rho  # B^-T e_r, kept for the dual simplex's edge weights
        return self.row_combination(rho)

    def _clear_logical_rows(self, rho: np.ndarray, r: int) -> None:
        """Set rho = B^-T e_r to its exact zero on the rows whose logical is basic in a
        position other than r (its equation there reads -rho_i = 0), so that rho lives on
        the binding rows alone (`row_product`), rounding left out."""
        n, m = self.n, self.m
        leaving = self.head[r] - n
        kept = rho[leaving] if 0 <= leaving < m else 0.0
        np.putmask(rho, self.basic[n : n + m], 0.0)  # as rho[mask] = 0, in less than half the time
        if 0 <= leaving < m:
            rho[leaving] = kept

    def mobility(self) -> tuple[np.ndarray, np.ndarray]:
        """1.0 where a variable may rise (fall) from where it sits, 0.0 where it may not.

        Basic and fixed variables may do neither; a free nonbasic variable may do both.
        """
        movable = ~self.basic & (self.lower != self.upper)
        free = ~np.isfinite(self.lower) & ~np.isfinite(self.upper)
        rise = (movable & ~self.at_upper).astype(float)
        fall = (movable & (self.at_upper | free)).astype(float)
        return rise, fall

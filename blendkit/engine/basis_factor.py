"""The basis matrix as an LU factorisation plus a file of updates.

The simplex method needs to solve B z = a (forward, "ftran") and B^T y = c
(backward, "btran") for a basis B that changes by one column per iteration. We never
form an inverse: B0 = P L U is factorised (LAPACK for a dense basis, SuperLU for a
sparse one), and each column replacement adds one eta vector: B_k = B0 E_1 ... E_k,
where E_i is the identity with column r_i replaced by alpha_i = B_(i-1)^-1 a_entering
(the product form). After `refactor_every` updates the caller refactorises from
scratch, which also bounds the growth of rounding error.

The etas are applied all at once, not one by one: they are kept as the columns of one
matrix H = [alpha_1 ... alpha_k], and the k scalars the one-by-one application would
compute are the solution of a small triangular system T t = z0[r] (T[i, l] =
alpha_l[r_i] - [r_l = r_i] below the diagonal, alpha_i[r_i] on it), so that

    ftran:  z0 = B0^-1 a,  T t = z0[r],  z = z0 - H t + sum_i t_i e_(r_i)
    btran:  T^T u = c[r] - H^T c,  w = c + sum_i u_i e_(r_i),  y = B0^-T w

which costs two matrix-vector products and one k x k triangular solve instead of k
passes over the vector from Python. T grows by one row per update (its row k reads the
earlier etas at r_k), so it is never rebuilt. Up to ETA_LOOP_MAX etas are still applied
one by one, which on small bases (the NETLIB set) costs less than the triangular solve;
a basis refactorised that often keeps no T at all. `ftran` also takes two right-hand
sides at once (the dual simplex's entering column and its bound flips' move), which costs
a sparse basis less than two solves.

A dense basis of INVERSE_ROWS rows or more (`InverseBasisFactor`) is also held, once a run
has made a few updates, as its explicit inverse, updated by one rank-one product per
column replacement and checked for drift against the basis's own columns; its solves then
cost one matrix-vector product each, however many updates came before.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from blendkit.engine.lapack import blas, lapack
from blendkit.engine.sparse import sparse, splu
from blendkit.engine.tolerances import (
    ETA_LOOP_MAX, INVERSE_AFTER, INVERSE_AFTER_DIVISOR, INVERSE_CHECK_EVERY, INVERSE_DRIFT, REORDER_EVERY, REORDER_FILL,
    SINGULAR_PIVOT,
)


class SingularBasis(Exception):
    """The basis matrix handed to `factor` is singular to working precision."""


class BasisFactor:
    """LU factors of a square basis matrix with product-form column updates."""

    def __init__(self, refactor_every: int):
        self.refactor_every = refactor_every
        self._lu = None
        self._piv = None
        self._m = 0
        self._k = 0  # updates since the last factorisation
        self.factorisations = 0  # how many factorisations so far, which tells them apart
        self._rows = np.zeros(refactor_every, dtype=np.intp)  # r_i
        self._etas = np.zeros((0, refactor_every), order="F")  # H, m x refactor_every
        self._tri = np.zeros((refactor_every, refactor_every), order="F")  # T, a row per eta
        self._batched = refactor_every > ETA_LOOP_MAX  # T is ever used (else the etas loop)
        self._repeats = False  # a basis position replaced more than once since the factorisation

    @property
    def updates(self) -> int:
        """How many column replacements since the last factorisation."""
        return self._k

    @property
    def due(self) -> bool:
        """True when the update file is long enough that refactorising pays."""
        return self._k >= self.refactor_every

    def _clear(self, B) -> bool:
        """Start a factorisation of B: empty the update file; False when B has no rows."""
        self._m = B.shape[0]
        self._k = 0
        self.factorisations += 1
        self._repeats = False
        if self._etas.shape[0] != self._m:
            self._etas = np.zeros((self._m, self.refactor_every), order="F")
        return self._m > 0

    @staticmethod
    def _check_pivots(diagonal: np.ndarray) -> None:
        """Raise SingularBasis when the smallest pivot of U is negligible (SINGULAR_PIVOT)."""
        diag = np.abs(diagonal)  # argmin, argmax: cheaper than reductions
        if diag.item(diag.argmin()) <= SINGULAR_PIVOT * max(1.0, diag.item(diag.argmax())):
            raise SingularBasis("basis matrix is singular to working precision")

    def factor(self, B: np.ndarray) -> None:
        """Factorise B afresh and clear the update file."""
        if not self._clear(B):
            return
        lu, piv, info = lapack.dgetrf(np.asfortranarray(B, dtype=float))
        if info > 0:
            raise SingularBasis(f"basis matrix is singular (zero pivot at position {info})")
        self._check_pivots(lu.diagonal())  # a view: np.diag is a Python function
        self._lu, self._piv = lu, piv

    def _solve(self, a: np.ndarray, transpose: bool) -> np.ndarray:
        """Solve B0 z = a (or B0^T z = a) with the stored LU factors."""
        z, _ = lapack.dgetrs(self._lu, self._piv, a, trans=1 if transpose else 0)
        return z

    def ftran(self, a: np.ndarray) -> np.ndarray:
        """Solve B z = a for the current basis; `a` one vector, or an m x 2 array of two
        (one solve for both costs less than two)."""
        if self._m == 0:
            return np.zeros(a.shape)
        z = self._solve(a, False)
        k, rows, etas = self._k, self._rows, self._etas
        wide = z.ndim > 1
        # Few etas: one by one costs less than the triangular solve, except for two
        # right-hand sides when T is kept anyway.
        if k <= ETA_LOOP_MAX and not (wide and self._batched):
            for i in range(k):
                r = rows.item(i)
                alpha = etas[:, i]
                if wide:
                    zr = z[r] / alpha[r]
                    z -= np.multiply.outer(alpha, zr)
                else:  # Python floats: the same arithmetic, without numpy's scalars
                    zr = z.item(r) / alpha.item(r)
                    z -= zr * alpha
                z[r] = zr
        elif k:
            t, _ = lapack.dtrtrs(self._tri[:k, :k], z[rows[:k]], lower=1)
            if wide and z.flags.f_contiguous:  # the product laid out as z is: 2.5 x less time
                z -= (t.T @ etas[:, :k].T).T
            else:
                z -= etas[:, :k] @ t
            _scatter_add(z, rows[:k], t, self._repeats)
        return z

    def btran(self, c: np.ndarray) -> np.ndarray:
        """Solve B^T y = c for the current basis."""
        if self._m == 0:
            return np.zeros(0)
        return self._btran_own(np.array(c, dtype=float, copy=True))

    def _btran_own(self, w: np.ndarray) -> np.ndarray:
        """`btran` of a vector of our own, overwritten (unit_btran's needs no copy)."""
        k, rows, etas = self._k, self._rows, self._etas
        if k <= ETA_LOOP_MAX:
            for i in range(k - 1, -1, -1):
                r = rows.item(i)
                alpha = etas[:, i]
                # E^T w_new = w: only entry r changes (in Python floats, the same arithmetic).
                ar, wr = alpha.item(r), w.item(r)
                w[r] = (wr - (alpha.dot(w) - ar * wr)) / ar
        elif k:
            u, _ = lapack.dtrtrs(self._tri[:k, :k], w[rows[:k]] - w @ etas[:, :k], lower=1, trans=1)
            _scatter_add(w, rows[:k], u, self._repeats)
        return self._solve(w, True)

    def unit_btran(self, r: int) -> np.ndarray:
        """B^-T e_r (the pivot row's multipliers)."""
        e_r = np.zeros(self._m)
        if not self._m:
            return e_r
        e_r[r] = 1.0
        return self._btran_own(e_r)

    def update(self, r: int, alpha: np.ndarray) -> None:
        """Record that column r of the basis was replaced; alpha = B_old^{-1} a_new."""
        k = self._k
        if k == self.refactor_every:
            raise RuntimeError("the update file is full: refactorise first")
        self._etas[:, k] = alpha
        rows = self._rows
        if self._batched:
            # Row k of T (module docstring): the earlier etas at position r, less 1 where
            # one of them replaced position r too; alpha[r] on the diagonal.
            earlier = rows[:k] == r
            self._tri[k, :k] = self._etas[r, :k] - earlier
            self._tri[k, k] = alpha[r]
            self._repeats = self._repeats or bool(np.count_nonzero(earlier))
        rows[k] = r
        self._k = k + 1


class InverseBasisFactor(BasisFactor):
    """A dense basis held as LU factors and as its explicit inverse, for mid-sized bases.

    Right after a factorisation (no updates yet) every solve uses the LU factors, exactly
    as `BasisFactor` does, so the values and duals a refactorisation recomputes (and every
    answer ends on) are the same. Between factorisations the inverse is kept up to date
    by one rank-one update per column replacement (BLAS dger, in place):

        B_new^-1 = B^-1 - (alpha - e_r) (e_r^T B^-1) / alpha_r

    so that an ftran is one matrix-vector product and the pivot row's btran of e_r is a
    row of the inverse, each a fixed cost whatever the number of updates; the etas'
    Python loop of `BasisFactor` grows with them. The inverse costs one more LAPACK call
    (dgetri, twice a factorisation's work), so updates are kept as etas, as in
    `BasisFactor`, until the factors hold INVERSE_AFTER of them (`invert_after`; the state a
    `Resolver` holds: HELD_INVERSE_AFTER), and with `patient` (a warm
    start, expected to be short) until the run has made rows / INVERSE_AFTER_DIVISOR too:
    a cold solve or a series of re-solves pays for the inverse early and gains, a warm
    start of a few iterations never pays. It is built from the LU factors and the etas so
    far. A refactorisation of the basis the inverse already stands for (each solve ends on
    one) keeps it, so a re-solve goes on with it; it is built afresh once
    INVERSE_REFACTOR_EVERY updates old, or drifted.

    The pivot row and the entering column now come from the same inverse, so their
    agreement (`simplex_state.pivots_disagree`) no longer shows rounding built up. Instead
    every INVERSE_CHECK_EVERY-th update checks the inverse against one column of the
    basis, position by position in turn (`basis_column`, given by the simplex state):
    B^-1 b_j must be e_j within INVERSE_DRIFT, else the factors are `due` for
    refactorisation at once.
    """

    def __init__(self, refactor_every: int, basis_column: Callable[[int], np.ndarray],
                 basis_head: Callable[[], np.ndarray], patient: bool = False, invert_after: int = INVERSE_AFTER):
        super().__init__(refactor_every)
        self._invert_after = invert_after  # updates kept as etas before the inverse is built
        self._updates_run = 0  # updates since this factor was made (a whole run, or re-solves)
        self._patient = patient  # wait for rows / INVERSE_AFTER_DIVISOR updates before inverting
        self._inverse = None  # B^-1 (Fortran order, updated in place); None: etas meanwhile
        self._basis_column = basis_column  # column j of the current basis B
        self._basis_head = basis_head  # the variables of the current basis, by position
        self._head = None  # the basis the inverse stands for (after its last update)
        self._age = 0  # updates the inverse took since it was computed
        self._checked = 0  # the next basis position the drift check reads
        self._drifted = False

    @property
    def due(self) -> bool:
        """True when the update file is full, the inverse is as old, or it has drifted."""
        return self._drifted or max(self._k, self._age) >= self.refactor_every

    def factor(self, B: np.ndarray) -> None:
        """Factorise B afresh (LU, checked as in `BasisFactor`). The inverse is kept when it
        stands for this same basis (a refactorisation before stopping, or a re-solve's next
        start), young and undrifted; else it is computed at the next update."""
        keep = (self._inverse is not None and not self._drifted and self._age < self.refactor_every
                and np.array_equal(self._head, self._basis_head()))
        super().factor(B)
        if not keep:
            self._inverse, self._drifted, self._age = None, False, 0

    def _invert(self) -> np.ndarray:
        """B0^-1 from the LU factors (LAPACK dgetri), in Fortran order for BLAS's dger."""
        inverse, info = lapack.dgetri(self._lu, self._piv)
        if info > 0:
            raise SingularBasis(f"basis matrix is singular (zero pivot at position {info})")
        return np.asfortranarray(inverse)

    def ftran(self, a: np.ndarray) -> np.ndarray:
        """Solve B z = a: by the LU factors (and etas, as `BasisFactor`) until the inverse
        is built, right after a factorisation too; else B^-1 a."""
        if self._inverse is None or not self._k:
            return super().ftran(a)
        return self._inverse @ a

    def btran(self, c: np.ndarray) -> np.ndarray:
        """Solve B^T y = c: as `ftran`, by the LU factors or c^T B^-1."""
        if self._inverse is None or not self._k:
            return super().btran(c)
        return c @ self._inverse

    def unit_btran(self, r: int) -> np.ndarray:
        """B^-T e_r: row r of B^-1 once the inverse is in use."""
        if self._inverse is None or not self._k:
            return super().unit_btran(r)
        return self._inverse[r].copy()

    def update(self, r: int, alpha: np.ndarray) -> None:
        """Record that column r of the basis was replaced (alpha = B_old^-1 a_new): as an
        eta of `BasisFactor` for the first INVERSE_AFTER updates, after which the inverse
        is built from the LU factors and those etas; then as the rank-one update of the
        class docstring, the inverse checked for drift every INVERSE_CHECK_EVERY updates."""
        if self._inverse is None:
            super().update(r, alpha)
            self._updates_run += 1
            if self._k >= self._invert_after and (not self._patient or self._updates_run >= self._m / INVERSE_AFTER_DIVISOR):
                self._inverse = self._invert()
                for i in range(self._k):
                    self._rank_one(int(self._rows[i]), self._etas[:, i])
                self._age = self._k
                self._head = self._basis_head().copy()
            return
        k = self._k
        if k == self.refactor_every:
            raise RuntimeError("the update file is full: refactorise first")
        self._rank_one(r, alpha)
        self._k, self._age = k + 1, self._age + 1
        # Each pivot changes the basis in position r alone, just before its update: the
        # copy taken with the inverse stays the basis's own, entry by entry.
        self._head[r] = self._basis_head()[r]
        if self._age % INVERSE_CHECK_EVERY == 0:
            j = self._checked % self._m
            self._checked = j + 1
            check = self._inverse @ self._basis_column(j)
            check[j] -= 1.0
            np.abs(check, out=check)
            self._drifted = check.item(check.argmax()) > INVERSE_DRIFT  # argmax: cheaper than a reduction

    def _rank_one(self, r: int, alpha: np.ndarray) -> None:
        """B^-1 -= (alpha - e_r) (e_r^T B^-1) / alpha_r, in place (BLAS dger, Fortran order)."""
        row = self._inverse[r] / alpha.item(r)
        self._inverse = blas.dger(-1.0, alpha, row, a=self._inverse, overwrite_a=1)
        self._inverse[r] = row


def _scatter_add(v: np.ndarray, rows: np.ndarray, values: np.ndarray, repeats: bool) -> None:
    """v[rows] += values, each repeated row counted (np.add.at, slower, only then)."""
    if repeats:
        np.add.at(v, rows, values)
    else:
        v[rows] += values


class SparseBasisFactor(BasisFactor):
    """The same interface over a sparse LU (SuperLU via scipy.sparse), for large bases.

    Ordering the columns (COLAMD) takes more than half of SuperLU's factorisation time on
    the plant LPs, and one refactorisation's basis differs from the last one's in a few
    columns only, each new column in the position of the one it replaced. So the column
    order found at one factorisation is reused by the next ones (SuperLU then keeps the
    columns as given and only pivots on rows), until REORDER_EVERY factorisations have
    passed or the factors have grown REORDER_FILL times fuller than with a fresh order.

    (Setting the basis's column singletons aside and factorising only the kernel left was
    tried on the plant LPs: the kernel's LU was two thirds of the whole one's and SuperLU
    solved with it no faster, so the whole basis is factorised.)
    """

    def __init__(self, refactor_every: int):
        super().__init__(refactor_every)
        self._order = None  # column order of the last fresh ordering, by basis position
        self._ordered_fill = 0  # non-zeros of the factors with that order fresh
        self._reused = 0  # factorisations since, with the order reused
        self._columns = None  # the order B0's columns were factorised in; None: as given

    def factor(self, B) -> None:
        """Factorise the sparse basis B afresh and clear the update file."""
        if not self._clear(B):
            return
        B = sparse().csc_matrix(B)
        order = self._order
        try:
            if order is not None and order.size == self._m and self._reused < REORDER_EVERY:
                self._lu, self._columns = splu(B[:, order], permc_spec="NATURAL"), order
                self._reused += 1
                if self._lu.nnz > REORDER_FILL * self._ordered_fill:
                    self._reused = REORDER_EVERY  # order afresh next time
            else:
                self._lu, self._columns = splu(B, permc_spec="COLAMD"), None
                self._order = np.argsort(self._lu.perm_c)
                self._ordered_fill, self._reused = self._lu.nnz, 0
        except RuntimeError as error:
            raise SingularBasis(f"basis matrix is singular ({error})") from None
        self._check_pivots(self._lu.U.diagonal())

    def _solve(self, a: np.ndarray, transpose: bool) -> np.ndarray:
        """Solve B0 z = a (or B0^T z = a) with SuperLU's factors of B0's columns in `_columns`."""
        a = np.asarray(a, dtype=float)
        order = self._columns
        if order is None:
            return self._lu.solve(a, trans="T" if transpose else "N")
        if transpose:
            return self._lu.solve(a[order], trans="T")
        z = np.empty_like(a)
        z[order] = self._lu.solve(a)
        return z

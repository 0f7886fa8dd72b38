"""y^T M for a sparse M: the pivot rows and the reduced costs of a large sparse problem.

The dual simplex needs the pivot row rho^T M every iteration, rho = B^-T e_r, and every
refactorisation the reduced costs from y^T M. Both vectors are non-zero only on few rows
of M: a basic logical's row enters B^T y = c as one equation y_i = -c_i, so rho (zero
there) and y (zero or one entry there) live on the rows whose logical is nonbasic, the
binding constraints. On a plant LP those are a sixth of the rows. So the product is taken
three ways, the cheapest that fits:

* a y with few non-zeros (HYPERSPARSE_SHARE of the rows): its rows of M gathered one by one;
* else, when the binding rows hold at most FOCUS_SHARE of M's non-zeros: those rows' part
  of M^T (built at each factorisation, as a CSR matrix) times y on them, plus the few rows
  outside them that y picks (a logical that left the basis since) gathered one by one;
* else all of M^T times y.

Each way gives the exact product; only the work differs.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING

import numpy as np

from blendkit.engine.tolerances import FOCUS_MIN_NONZEROS, FOCUS_SHARE, HYPERSPARSE_SHARE, REFOCUS_AFTER

if TYPE_CHECKING:  # annotations only: this module works on a matrix scipy.sparse already made
    import scipy.sparse as sp


def gather(indptr: np.ndarray, indices: np.ndarray, data: np.ndarray, which: np.ndarray, weights: np.ndarray,
           size: int) -> np.ndarray:
    """sum_k weights[k] * (line which[k] of a compressed matrix), as a dense vector of `size`.

    A compressed (CSC or CSR) matrix's lines `which` are gathered straight from its arrays,
    so the work is their non-zeros alone, not the whole matrix's.
    """
    starts = indptr[which]
    lengths = indptr[which + 1] - starts
    ends = np.cumsum(lengths)
    positions = np.arange(ends[-1] if ends.size else 0) + np.repeat(starts - ends + lengths, lengths)
    return np.bincount(indices[positions], weights=data[positions] * np.repeat(weights, lengths), minlength=size)


class RowProduct:
    """y^T M for one sparse M (see the module docstring), focused on a set of rows."""

    __slots__ = ("rows", "MT", "size", "m", "inside", "focus", "part", "focused")

    def __init__(self, M: sp.csc_matrix):
        self.rows = M.tocsr()  # M by rows, for y with few non-zeros
        self.MT = M.T.tocsr()  # all of M^T
        self.m, self.size = M.shape
        self.inside = np.zeros(self.m, dtype=bool)
        self.focus = self.part = None
        self.focused = M.nnz >= FOCUS_MIN_NONZEROS  # else M^T y costs less than choosing rows

    def refocus(self, focus: np.ndarray) -> None:
        """Take the rows `focus` as those y lives on: their part of M, or none when they
        hold most of M (the whole product then costs little more)."""
        rows = self.rows
        nonzeros = int((rows.indptr[focus + 1] - rows.indptr[focus]).sum())
        self.inside[:] = False
        if nonzeros > FOCUS_SHARE * rows.nnz:
            self.focus = self.part = None
            return
        self.inside[focus] = True
        self.focus = focus
        self.part = rows[focus].T  # CSC: a product over its columns touches y's rows alone

    def combine(self, y: np.ndarray, focus_rows: Callable[[], np.ndarray]) -> np.ndarray:
        """y^T M, as a dense vector; `focus_rows` gives the rows y should live on, asked
        again when y has more than REFOCUS_AFTER non-zeros outside the last ones."""
        picked = np.flatnonzero(y)
        rows = self.rows
        if picked.size <= HYPERSPARSE_SHARE * self.m:
            return gather(rows.indptr, rows.indices, rows.data, picked, y[picked], self.size)
        if not self.focused:
            return self.MT @ y
        extra = picked[~self.inside[picked]]
        if self.part is None or extra.size > REFOCUS_AFTER:
            self.refocus(focus_rows())
            if self.part is None:
                return self.MT @ y
            extra = picked[~self.inside[picked]]
        out = self.part @ y[self.focus]
        if extra.size:
            out += gather(rows.indptr, rows.indices, rows.data, extra, y[extra], self.size)
        return out

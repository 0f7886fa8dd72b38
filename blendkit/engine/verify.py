"""Check a solution against the original problem after solving.

The engine works on a transformed problem; this module recomputes the residuals in the
original units so that rounding trouble shows up as a status, not as a wrong answer.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.sparse import is_sparse
from blendkit.engine.standard_form import StandardForm


# Up to this many rows or columns breaking a bound are sized one by one in Python floats
# (rounding leaves one or two after most solves), more in whole-array steps.
FEW_VIOLATED = 4


def worst_violation(sf: StandardForm, x: np.ndarray) -> tuple[float, str]:
    """The largest relative violation of any row or column bound by x, and where.

    A row's violation is divided by 1 + the largest of |bound| and |a_ij x_j| in that
    row; a column's by 1 + |bound|. Returns (0.0, "") when x is feasible. Those sizes are
    at least 1, so only the rows and columns that break a bound at all are sized (a
    re-solve calls this every time: the feasible case costs a few whole-array steps, and a
    few rows broken by rounding are sized one by one).
    """
    worst, where = 0.0, ""
    activity = sf.A @ x
    row_over = np.maximum(sf.row_lower - activity, activity - sf.row_upper)
    rows = (row_over > 0).nonzero()[0]
    if rows.size:
        worst, i = _worst_rows(sf, x, rows, row_over[rows])
        where = _row_name(sf, i)
    col_over = np.maximum(sf.col_lower - x, x - sf.col_upper)
    cols = (col_over > 0).nonzero()[0]
    if cols.size:
        size = _with_bounds(np.zeros(cols.size), sf.col_lower[cols], sf.col_upper[cols])
        col_violation = col_over[cols] / size
        k = int(col_violation.argmax())
        if col_violation[k] > worst:
            worst, where = float(col_violation[k]), f"bound of variable {int(cols[k])}"
    return worst, where


def _worst_rows(sf: StandardForm, x: np.ndarray, rows: np.ndarray, over: np.ndarray) -> tuple[float, int]:
    """(relative violation, row) of the worst of the rows `rows`, which break a bound by
    `over`; apart so that a few rows take scalar steps and many whole-array ones."""
    dense = not is_sparse(sf.A)
    if rows.size <= FEW_VIOLATED and dense:
        worst, where = -1.0, -1
        for i, amount, low, up in zip(rows.tolist(), over.tolist(), sf.row_lower[rows].tolist(),
                                      sf.row_upper[rows].tolist()):
            terms = sf.A[i] * x
            np.abs(terms, out=terms)
            size = terms.item(terms.argmax()) if x.size else 0.0  # argmax: cheaper than a reduction
            for bound in (low, up):
                if abs(bound) < np.inf:
                    size = max(size, abs(bound))
            if amount / (size + 1.0) > worst:
                worst, where = amount / (size + 1.0), i
        return worst, where
    A = sf.A[rows]
    if not dense:
        terms = np.asarray(abs(A.multiply(x[None, :])).max(axis=1).todense()).ravel()
    else:  # in place, and the ufunc's own reduction: called on every re-solve
        terms = A * x
        terms = np.maximum.reduce(np.abs(terms, out=terms), axis=1, initial=0.0)
    violation = over / _with_bounds(terms, sf.row_lower[rows], sf.row_upper[rows])
    k = int(violation.argmax())
    return float(violation[k]), int(rows[k])


def _with_bounds(size: np.ndarray, lower: np.ndarray, upper: np.ndarray) -> np.ndarray:
    """1 + max(size, |lower|, |upper|), an infinite bound left out (it never scales a
    violation); `size` is overwritten. In place, step by step: called on every re-solve."""
    for bound in (lower, upper):
        np.maximum(size, np.abs(bound), out=size, where=np.isfinite(bound))
    size += 1.0
    return size


def _row_name(sf: StandardForm, i: int) -> str:
    """How a message names row `i`: by the linprog argument it came from (A_ub or A_eq
    row), or, for a problem given in general form (an MPS file: `n_ub` is 0), as a row of
    that form, an equality only where its two sides are equal."""
    if i < sf.n_ub:
        return f"inequality row {i}"
    if sf.row_lower[i] == sf.row_upper[i]:
        return f"equality row {i - sf.n_ub}"
    return f"row {i}"

"""Check a solution against the original problem after solving.

The engine works on a transformed problem; this module recomputes the residuals in the
original units so that rounding trouble shows up as a status, not as a wrong answer.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from blendkit.engine.standard_form import StandardForm


def worst_violation(sf: StandardForm, x: np.ndarray) -> tuple[float, str]:
    """The largest relative violation of any row or column bound by x, and where.

    A row's violation is divided by 1 + the largest of |bound| and |a_ij x_j| in that
    row; a column's by 1 + |bound|. Returns (0.0, "") when x is feasible.
    """
    worst, where = 0.0, ""
    activity = sf.A @ x
    if sp.issparse(sf.A):
        terms = np.asarray(abs(sf.A.multiply(x[None, :])).max(axis=1).todense()).ravel()
    else:
        terms = np.abs(sf.A * x).max(axis=1, initial=0.0)
    size = 1.0 + np.maximum(
        terms,
        np.maximum(np.abs(np.where(np.isfinite(sf.row_lower), sf.row_lower, 0.0)),
                   np.abs(np.where(np.isfinite(sf.row_upper), sf.row_upper, 0.0))),
    )
    row_violation = np.maximum(sf.row_lower - activity, activity - sf.row_upper) / size
    col_size = 1.0 + np.maximum(
        np.abs(np.where(np.isfinite(sf.col_lower), sf.col_lower, 0.0)),
        np.abs(np.where(np.isfinite(sf.col_upper), sf.col_upper, 0.0)),
    )
    col_violation = np.maximum(sf.col_lower - x, x - sf.col_upper) / col_size
    if row_violation.size and row_violation.max() > worst:
        i = int(np.argmax(row_violation))
        worst = float(row_violation[i])
        where = _row_name(sf, i)
    if col_violation.size and col_violation.max() > worst:
        j = int(np.argmax(col_violation))
        worst = float(col_violation[j])
        where = f"bound of variable {j}"
    return worst, where


def _row_name(sf: StandardForm, i: int) -> str:
    """How a message names row `i`: by the linprog argument it came from (A_ub or A_eq
    row), or, for a problem given in general form (an MPS file: `n_ub` is 0), as a row of
    that form, an equality only where its two sides are equal."""
    if i < sf.n_ub:
        return f"inequality row {i}"
    if sf.row_lower[i] == sf.row_upper[i]:
        return f"equality row {i - sf.n_ub}"
    return f"row {i}"

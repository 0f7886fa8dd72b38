"""Row and column scaling of the general form, and the way back.

Blending LPs mix columns measured in %, MJ/kg, mg/kg and ppm, so their coefficients span
many orders of magnitude. Before solving we scale rows and columns by powers of two so that
the nonzeros of A sit near 1 (geometric-mean passes, then equilibration); powers of two make
the scaling itself exact in floating point. With scale factors R (rows) and C (columns):

    A_s = R A C,   c_s = C c,   x = C x_s,   row bounds_s = R row bounds,
    column bounds_s = column bounds / C,   y = R y_s,   d = d_s / C.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blendkit.engine.sparse import held_sparse, is_sparse, sparse
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import GEOMETRIC_PASSES


@dataclass(frozen=True)
class Scaling:
    """The factors of a scaling: multiply rows by `rows`, columns by `cols`."""

    rows: np.ndarray
    cols: np.ndarray


def _entries(A) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Row indices, column indices and log2 magnitudes of the nonzeros of A."""
    if is_sparse(A):
        coo = A.tocoo()
        rows, cols, values = coo.row, coo.col, coo.data
    else:
        rows, cols = np.nonzero(A)
        values = A[rows, cols]
    keep = values != 0
    return rows[keep], cols[keep], np.log2(np.abs(values[keep]))


def _middle(index: np.ndarray, logs: np.ndarray, size: int) -> np.ndarray:
    """Per row (or column) the midpoint of the largest and smallest log magnitude; 0 if empty."""
    high = np.full(size, -np.inf)
    low = np.full(size, np.inf)
    np.maximum.at(high, index, logs)
    np.minimum.at(low, index, logs)
    middle = np.zeros(size)
    seen = np.isfinite(high)
    middle[seen] = (high[seen] + low[seen]) / 2
    return middle


def _dense_scaling(A: np.ndarray) -> Scaling:
    """`find_scaling` for a dense matrix: the same passes as whole-array operations.

    The log magnitudes are held twice, with -inf (for maxima) and +inf (for minima) at the
    zeros, so that each pass is sums and reductions only.
    """
    m, n = A.shape
    nonzero = A != 0
    logs = np.log2(np.abs(np.where(nonzero, A, 1.0)))
    highs, lows = np.where(nonzero, logs, -np.inf), np.where(nonzero, logs, np.inf)
    log_r, log_c = np.zeros(m), np.zeros(n)
    for _ in range(GEOMETRIC_PASSES):
        log_r = -_midpoints((highs + log_c).max(axis=1, initial=-np.inf), (lows + log_c).min(axis=1, initial=np.inf))
        log_c = -_midpoints((highs + log_r[:, None]).max(axis=0, initial=-np.inf),
                            (lows + log_r[:, None]).min(axis=0, initial=np.inf))
    high = (highs + log_r[:, None] + log_c).max(axis=0, initial=-np.inf)
    log_c = log_c - np.where(np.isfinite(high), high, 0.0)
    return Scaling(rows=np.exp2(np.round(log_r)), cols=np.exp2(np.round(log_c)))


def _midpoints(high: np.ndarray, low: np.ndarray) -> np.ndarray:
    """(high + low) / 2 per line, 0 for a line without non-zeros (high = -inf)."""
    return np.where(np.isfinite(high), (high + np.where(np.isfinite(low), low, 0)) / 2, 0.0)


def find_scaling(A) -> Scaling:
    """Scale factors that bring the nonzeros of A near 1."""
    if not is_sparse(A):
        A = np.asarray(A, dtype=float)
        if not _mostly_zeros(A):
            return _dense_scaling(A)
    m, n = A.shape
    rows, cols, logs = _entries(A)  # the non-zeros of a sparse A, or of a dense one mostly zeros
    log_r, log_c = np.zeros(m), np.zeros(n)
    if logs.size == 0:
        return Scaling(np.ones(m), np.ones(n))
    for _ in range(GEOMETRIC_PASSES):
        log_r -= _middle(rows, logs + log_r[rows] + log_c[cols], m)
        log_c -= _middle(cols, logs + log_r[rows] + log_c[cols], n)
    # Equilibrate: the largest entry of each column becomes about 1.
    high = np.full(n, -np.inf)
    np.maximum.at(high, cols, logs + log_r[rows] + log_c[cols])
    log_c -= np.where(np.isfinite(high), high, 0.0)
    return Scaling(rows=np.exp2(np.round(log_r)), cols=np.exp2(np.round(log_c)))


def _mostly_zeros(A: np.ndarray) -> bool:
    """True for a dense A the engine will hold sparse (`sparse.held_sparse`): its non-zeros
    alone are scaled, as a sparse A's are (a 40-product plant built dense has ten million
    entries, nine in ten of them zero)."""
    return held_sparse(*A.shape, int(np.count_nonzero(A)))


def scale_form(form: StandardForm, scaling: Scaling) -> StandardForm:
    """The scaled problem; see the module docstring."""
    R, C = scaling.rows, scaling.cols
    return StandardForm(
        c=form.c * C,
        A=(sparse().diags(R) @ form.A @ sparse().diags(C)).tocsr() if is_sparse(form.A) else form.A * R[:, None] * C[None, :],
        row_lower=form.row_lower * R,
        row_upper=form.row_upper * R,
        col_lower=form.col_lower / C,
        col_upper=form.col_upper / C,
        n_ub=form.n_ub,
        from_linprog=form.from_linprog,
    )

"""The certificate of infeasibility, in the original problem's units, and the checks that
an infeasible or unbounded verdict proves itself.

Phase one ends infeasible with duals that prove it (Farkas): `certificate` scales them
back from the engine's scaled rows and columns and lists the constraints they involve,
which is where conflict diagnosis starts. `proves_infeasible` checks such duals, and
`proves_unbounded` a ray, by plain arithmetic on the problem they are given.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from blendkit.engine.result import Certificate, ConflictPart
from blendkit.engine.scaling import Scaling
from blendkit.engine.sparse import is_sparse
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import CERTIFICATE_PROOF, RAY_ROUNDING_ULPS, Tolerances

if TYPE_CHECKING:  # simplex imports this module (phase one's proof)
    from blendkit.engine.simplex import SimplexOutcome


def certificate(form: StandardForm, scaling: Scaling, outcome: SimplexOutcome, tol: Tolerances) -> Certificate:
    """The phase-one duals of an infeasible `outcome` in original units, and the
    constraints they involve (multipliers above the dual feasibility tolerance)."""
    y = outcome.farkas * scaling.rows
    d = outcome.farkas_d / scaling.cols
    small = tol.dual_feasibility
    parts = [_row_part(form, int(i), outcome.farkas_at_upper, float(y[i]))
             for i in np.flatnonzero(np.abs(outcome.farkas) > small)]
    parts += [_bound_part(form, int(j), outcome.farkas_at_upper, float(d[j]))
              for j in np.flatnonzero(np.abs(outcome.farkas_d) > small)]
    return Certificate(
        infeasibility=float(outcome.infeasibility),
        row_multipliers=y,
        bound_multipliers=d,
        parts=tuple(parts),
    )


def _row_part(form: StandardForm, i: int, at_upper: np.ndarray, multiplier: float) -> ConflictPart:
    """Row i's part: named as A_ub's or A_eq's row when the form came from linprog."""
    n = form.shape[1]
    if not form.from_linprog:
        kind, index = "row", i
    elif i < form.n_ub:
        kind, index = "ub", i
    else:
        kind, index = "eq", i - form.n_ub
    if form.row_lower[i] == form.row_upper[i]:
        side = "eq"
    else:
        side = "upper" if at_upper[n + i] else "lower"
    return ConflictPart(kind=kind, index=index, side=side, multiplier=multiplier)


def _bound_part(form: StandardForm, j: int, at_upper: np.ndarray, multiplier: float) -> ConflictPart:
    """Variable j's bound's part."""
    if form.col_lower[j] == form.col_upper[j]:
        side = "eq"
    else:
        side = "upper" if at_upper[j] else "lower"
    return ConflictPart(kind="bound", index=j, side=side, multiplier=multiplier)


def proves_infeasible(form: StandardForm, y: np.ndarray, proof: float = CERTIFICATE_PROOF) -> bool:
    """True when row multipliers y show, in the original units, that no x meets every
    row and bound (Farkas), by more than `proof` relative to the terms.

    Any x within its bounds gives rows s = A x with y·s = (A^T y)·x. A multiplier y_i > 0
    presses on row i's lower bound, y_i < 0 on its upper bound, so y·s is at least the
    sum of y_i x that bound over the rows' allowed values, while (A^T y)·x is at most its
    largest value over the box of x; if that is smaller, no x exists. Multipliers and
    entries of A^T y within rounding (`proof` x the largest multiplier) count as zero.
    """
    size = float(np.abs(y).max(initial=0.0))
    y = np.where(np.abs(y) > proof * size, y, 0.0)
    used = y != 0
    row_bound = np.where(y > 0, form.row_lower, form.row_upper)[used]
    if not used.any() or not np.all(np.isfinite(row_bound)):
        return False
    A = form.A
    g = np.asarray(A.T @ y).ravel()
    column_size = np.asarray(abs(A).sum(axis=0)).ravel() if is_sparse(A) else np.abs(A).sum(axis=0)
    noise = proof * size * column_size
    g = np.where(np.abs(g) > noise, g, 0.0)
    pressed = g != 0
    col_bound = np.where(g > 0, form.col_upper, form.col_lower)[pressed]
    if not np.all(np.isfinite(col_bound)):
        return False
    least = float(y[used] @ row_bound)
    most = float(g[pressed] @ col_bound)
    boxed = np.isfinite(form.col_lower) & np.isfinite(form.col_upper)
    slack = float(noise[boxed] @ np.maximum(np.abs(form.col_lower[boxed]), np.abs(form.col_upper[boxed])))
    terms = float(np.abs(y[used]) @ np.abs(row_bound) + np.abs(g[pressed]) @ np.abs(col_bound)) + slack
    return least - most - slack > proof * max(terms, np.finfo(float).tiny)


def _abs_sums(A) -> tuple[np.ndarray, np.ndarray]:
    """Sums of |A| along the rows and along the columns, dense or sparse alike."""
    size = abs(A) if is_sparse(A) else np.abs(A)
    return np.asarray(size.sum(axis=1)).ravel(), np.asarray(size.sum(axis=0)).ravel()


def proves_unbounded(form: StandardForm, ray: np.ndarray, proof: float = CERTIFICATE_PROOF) -> bool:
    """True when `ray` is, in the units of `form`, a direction along which no row or
    bound is crossed and the cost falls, by more than `proof` relative to the terms.

    A row with an upper bound may rise, and one with a lower bound fall, by at most
    `proof` x its terms sum |a_ij ray_j| plus a few ulps of its entries (rounding); a
    variable counts as moving when its share of the ray's weight (|ray_j| x the size of
    its column and cost) is above `proof`, and then must not move towards a finite bound
    in its way; c·ray must be below -`proof` x sum |c_j ray_j|. With a feasible point,
    such a ray shows the cost has no lower limit.
    """
    if ray is None or not np.all(np.isfinite(ray)) or not np.any(ray):
        return False
    d = ray / np.abs(ray).max()
    A = form.A
    row_sums, col_sums = _abs_sums(A)
    change = np.asarray(A @ d).ravel()
    terms = np.asarray(abs(A) @ np.abs(d) if is_sparse(A) else np.abs(A) @ np.abs(d)).ravel()
    room = proof * terms + RAY_ROUNDING_ULPS * np.finfo(float).eps * row_sums
    if np.any(change[np.isfinite(form.row_upper)] > room[np.isfinite(form.row_upper)]):
        return False
    if np.any(change[np.isfinite(form.row_lower)] < -room[np.isfinite(form.row_lower)]):
        return False
    weight = np.abs(d) * (col_sums + np.abs(form.c))
    moves = weight > proof * weight.sum()
    if np.any(d[moves & np.isfinite(form.col_upper)] > 0) or np.any(d[moves & np.isfinite(form.col_lower)] < 0):
        return False
    return bool(form.c @ d < -proof * (np.abs(form.c) @ np.abs(d)))

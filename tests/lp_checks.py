"""Checks of an engine answer that need no other solver: the point keeps every bound, an
unbounded ray is a direction of the feasible set along which the cost falls, and an
infeasibility certificate proves, in plain arithmetic, that no point exists.

The outside reference for these is the linear algebra itself (the definitions of a
recession direction and of a Farkas certificate, as in any LP textbook: common practice);
the engine's own conversion of the arguments is not used. Every LP is first written in
the general form  row_lower <= A x <= row_upper,  col_lower <= x <= col_upper.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pytest

# Bounds are kept to this, relative to 1 + |bound| (the engine's primal feasibility
# tolerance is 1e-9 on its scaled problem).
BOUND_TOL = 1e-9
# A direction or a certificate is accepted with rounding of this size, relative to the
# magnitudes of the terms involved.
# Entries of a ray (scaled to largest 1) below this are the rounding of its computation
# (seen: 2.8e-16 on a column the ray does not use, moving a 0.0025 row by 7e-19), when
# their weight (|d_j| x the size of the column and cost) is also below this share of the
# largest: with columns scaled over 1e-6...1e6 a real entry may sit 1e-13 below the
# largest and still carry a row (seen: 5.3e-5 beside 5.6e7, on a column of entries 3.7e6,
# without which a ranged row fell by 3.5e-6 over terms of 4e-3).
RAY_NOISE = 1e-12
PROOF_TOL = 1e-9


@dataclass(frozen=True)
class GeneralLP:
    """An LP in the general form above, dense."""

    c: np.ndarray
    A: np.ndarray
    row_lower: np.ndarray
    row_upper: np.ndarray
    col_lower: np.ndarray
    col_upper: np.ndarray


def _bound_arrays(bounds, n: int) -> tuple[np.ndarray, np.ndarray]:
    """linprog's bounds argument (None, one pair, or a pair per variable) as two arrays."""
    if bounds is None:
        return np.zeros(n), np.full(n, np.inf)
    pairs = [bounds] * n if isinstance(bounds, tuple) else list(bounds)
    lower = np.array([-np.inf if lo is None else float(lo) for lo, _ in pairs])
    upper = np.array([np.inf if hi is None else float(hi) for _, hi in pairs])
    return lower, upper


def general_form(c, A_ub=None, b_ub=None, A_eq=None, b_eq=None, bounds=None) -> GeneralLP:
    """linprog-style arguments in the general form: A_ub's rows, then A_eq's."""
    c = np.asarray(c, dtype=float)
    n = c.size
    A_ub = np.zeros((0, n)) if A_ub is None else np.asarray(A_ub.toarray() if hasattr(A_ub, "toarray") else A_ub, float)
    A_eq = np.zeros((0, n)) if A_eq is None else np.asarray(A_eq, dtype=float)
    b_ub = np.zeros(0) if b_ub is None else np.asarray(b_ub, dtype=float)
    b_eq = np.zeros(0) if b_eq is None else np.asarray(b_eq, dtype=float)
    lower, upper = _bound_arrays(bounds, n)
    return GeneralLP(
        c=c,
        A=np.vstack([A_ub, A_eq]),
        row_lower=np.concatenate([np.full(b_ub.size, -np.inf), b_eq]),
        row_upper=np.concatenate([b_ub, b_eq]),
        col_lower=lower,
        col_upper=upper,
    )


def from_form(form) -> GeneralLP:
    """A StandardForm (general form already) as a dense GeneralLP."""
    A = form.A.toarray() if hasattr(form.A, "toarray") else form.A
    return GeneralLP(*(np.asarray(v, dtype=float) for v in (form.c, A, form.row_lower, form.row_upper,
                                                            form.col_lower, form.col_upper)))


def assert_within_bounds(lp: GeneralLP, x: np.ndarray, tol: float = BOUND_TOL) -> None:
    """Every x_j within its bounds, to `tol` relative to 1 + |bound|."""
    lower = np.nan_to_num(lp.col_lower, neginf=-np.finfo(float).max)
    upper = np.nan_to_num(lp.col_upper, posinf=np.finfo(float).max)
    worst = np.maximum((lower - x) / (1 + np.abs(lower)), (x - upper) / (1 + np.abs(upper)))
    assert worst.size == 0 or worst.max() <= tol, (
        f"variable {int(np.argmax(worst))} is {worst.max():.3g} (relative) outside its bounds")


def assert_rows_hold(lp: GeneralLP, x: np.ndarray, tol: float) -> None:
    """Every row within its bounds, to `tol` relative to 1 + the largest term |a_ij x_j|
    or bound of that row."""
    activity = lp.A @ x
    size = 1 + np.maximum(np.abs(lp.A * x).max(axis=1, initial=0.0),
                          np.maximum(np.abs(np.nan_to_num(lp.row_lower, neginf=0.0)),
                                     np.abs(np.nan_to_num(lp.row_upper, posinf=0.0))))
    worst = np.maximum(lp.row_lower - activity, activity - lp.row_upper) / size
    assert worst.size == 0 or worst.max() <= tol, f"row {int(np.argmax(worst))} broken by {worst.max():.3g}"


def assert_improving_ray(lp: GeneralLP, ray: np.ndarray) -> None:
    """`ray` is a direction of the feasible set along which the cost falls: along it no
    bound of a row or variable is ever crossed (rows with an upper bound do not rise, with
    a lower bound do not fall, so equality rows stay put; likewise the variables), and
    c·d < 0. With the problem feasible, that proves the cost has no lower limit.

    Rounding is allowed relative to the terms: PROOF_TOL x sum |a_ij d_j| for a row (plus
    a few ulps of the row's entries, for entries of d that are rounding noise themselves),
    PROOF_TOL x sum |c_j d_j| for the cost, and a variable whose share of the ray's weight
    is below PROOF_TOL does not count as moving.
    """
    assert ray is not None and ray.shape == lp.c.shape
    d = ray / np.abs(ray).max()
    weight = np.abs(d) * (np.abs(lp.A).sum(axis=0) + np.abs(lp.c))
    noise = (np.abs(d) < RAY_NOISE) & (weight < RAY_NOISE * weight.max())
    d[noise] = 0.0  # rounding noise of the ray's own entries, not moves
    change = lp.A @ d
    ulps = 4 * np.finfo(float).eps * np.abs(lp.A).sum(axis=1)
    room = PROOF_TOL * (np.abs(lp.A) @ np.abs(d)) + ulps
    rows_up, rows_down = np.isfinite(lp.row_upper), np.isfinite(lp.row_lower)
    assert np.all(change[rows_up] <= room[rows_up]), "a row with an upper bound rises along the ray"
    assert np.all(change[rows_down] >= -room[rows_down]), "a row with a lower bound falls along the ray"
    # A variable moves along the ray when its share of the ray's weight (|d_j| times the
    # size of its column and cost) is above rounding: scaled columns have tiny entries.
    weight = np.abs(d) * (np.abs(lp.A).sum(axis=0) + np.abs(lp.c))
    moves = weight > PROOF_TOL * weight.sum()
    assert np.all(d[moves & np.isfinite(lp.col_upper)] <= 0), "a variable with an upper bound rises along the ray"
    assert np.all(d[moves & np.isfinite(lp.col_lower)] >= 0), "a variable with a lower bound falls along the ray"
    assert lp.c @ d < -PROOF_TOL * (np.abs(lp.c) @ np.abs(d)), f"the cost does not fall along the ray (c·d = {lp.c @ d:.3g})"


def farkas_gap(lp: GeneralLP, y: np.ndarray) -> float:
    """How far row multipliers y prove infeasibility (> 0: proved), relative to the size
    of the terms.

    For any x within its bounds, s = A x gives y·s = (A^T y)·x. With y_i > 0 read as
    pressing on row i's lower bound and y_i < 0 on its upper bound, y·s >= the sum of
    y_i x (that bound) for every s the rows allow, while (A^T y)·x is at most its largest
    value over the box of x. If that largest value is below the sum, no x exists.
    Multipliers and entries of A^T y within rounding of zero (PROOF_TOL relative to the
    largest multiplier) count as zero: they may face an infinite bound.
    """
    y_size = np.abs(y).max(initial=0.0)
    y = np.where(np.abs(y) > PROOF_TOL * y_size, y, 0.0)
    rows_bound = np.where(y > 0, lp.row_lower, np.where(y < 0, lp.row_upper, 0.0))
    if not np.all(np.isfinite(rows_bound[y != 0])):
        return -np.inf  # a multiplier presses on a missing bound: no proof
    least_ys = float(y[y != 0] @ rows_bound[y != 0])
    g = lp.A.T @ y
    noise = PROOF_TOL * y_size * np.abs(lp.A).sum(axis=0)
    g = np.where(np.abs(g) > noise, g, 0.0)
    x_bound = np.where(g > 0, lp.col_upper, np.where(g < 0, lp.col_lower, 0.0))
    if not np.all(np.isfinite(x_bound[g != 0])):
        return -np.inf  # the combined row is unbounded above over the box: no proof
    most_gx = float(g[g != 0] @ x_bound[g != 0])
    # Rounding allowance: the zeroed entries of A^T y times their finite bounds.
    finite = np.where(np.isfinite(lp.col_lower) & np.isfinite(lp.col_upper),
                      np.maximum(np.abs(lp.col_lower), np.abs(lp.col_upper)), 0.0)
    size = (np.abs(y[y != 0]) @ np.abs(rows_bound[y != 0]) + np.abs(g) @ np.abs(np.nan_to_num(x_bound))
            + noise @ finite)
    return (least_ys - most_gx - noise @ finite) / max(size, 1e-300)


def assert_proves_infeasible(lp: GeneralLP, y: np.ndarray) -> None:
    """Row multipliers y (the certificate's, in original units) prove that no point meets
    every row and bound, to rounding (`farkas_gap` above PROOF_TOL)."""
    assert y is not None and y.shape == (lp.A.shape[0],)
    gap = farkas_gap(lp, np.asarray(y, dtype=float))
    assert gap > PROOF_TOL, f"the certificate proves nothing: relative gap {gap:.3g}"


def assert_optimal_by_duality(lp: GeneralLP, x: np.ndarray, y: np.ndarray, rtol: float = 1e-7) -> None:
    """x is optimal, proved by weak duality with row marginals y: with d = c - A^T y
    (computed here), any feasible x' has c·x' = y·(A x') + d·x', at least the sum of y_i x
    the row bound it presses on plus d_j x the bound of x_j it presses on; c·x equal to that
    sum (to `rtol` relative to the terms) leaves no cheaper point. Entries of y and d
    within rounding of zero count as zero (they may face an infinite bound)."""
    assert_rows_hold(lp, x, rtol)
    assert_within_bounds(lp, x)
    y = np.asarray(y, dtype=float)
    y = np.where(np.abs(y) > PROOF_TOL * np.abs(y).max(initial=0.0), y, 0.0)
    d = lp.c - lp.A.T @ y
    noise = PROOF_TOL * (np.abs(lp.c) + np.abs(lp.A.T) @ np.abs(y))
    d = np.where(np.abs(d) > noise, d, 0.0)
    row_bound = np.where(y > 0, lp.row_lower, np.where(y < 0, lp.row_upper, 0.0))
    col_bound = np.where(d > 0, lp.col_lower, np.where(d < 0, lp.col_upper, 0.0))
    assert np.all(np.isfinite(row_bound)), "a row marginal presses on a missing row bound"
    assert np.all(np.isfinite(col_bound)), "a reduced cost presses on a missing variable bound"
    bound = float(y @ row_bound + d @ col_bound)
    terms = float(np.abs(y) @ np.abs(row_bound) + np.abs(d) @ np.abs(col_bound) + np.abs(lp.c) @ np.abs(x))
    assert lp.c @ x == pytest.approx(bound, rel=rtol, abs=rtol * terms), "the duals leave a gap"


def assert_matches_linprog(instance, rows_tol: float = 1e-7):
    """Solve a linprog-shaped instance (c, A_ub, b_ub, A_eq, b_eq, bounds) with our engine and
    with linprog(method="highs"), the outside reference: ours optimal at HiGHS's objective to
    1e-7 relative, its inequality rows kept to `rows_tol` and its equality rows to 1e-7."""
    from scipy.optimize import linprog

    from blendkit.engine import solve

    args = (instance.c, instance.A_ub, instance.b_ub, instance.A_eq, instance.b_eq, instance.bounds)
    ours = solve(*args)
    ref = linprog(*args, method="highs")
    assert ours.status == "optimal", ours.message
    assert ours.objective == pytest.approx(ref.fun, rel=1e-7)
    assert np.all(instance.A_ub @ ours.x <= instance.b_ub + rows_tol * (1 + np.abs(instance.b_ub)))
    np.testing.assert_allclose(instance.A_eq @ ours.x, instance.b_eq, rtol=1e-7)

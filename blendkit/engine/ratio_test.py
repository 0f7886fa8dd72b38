"""Ratio tests: how far the entering variable may move (primal), and which variable may
enter so that every reduced cost keeps its sign (dual).

Both are Harris's two-pass tests: pass one finds the largest step that keeps everything
within its tolerance-relaxed bound, pass two picks, among the candidates that block within
that step, the one with the largest pivot, which keeps the basis well conditioned. The
dual test also flips boxed variables to their other bound instead of letting them enter
while that still leaves the leaving variable outside its bound (the "long step").
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.tolerances import BLAND_TIE_ABSOLUTE, BLAND_TIE_RELATIVE, FLIP_SORT_ALL, FLIP_WINDOW


def negligible(delta: np.ndarray, pivot: float) -> np.ndarray:
    """Where entries of the column `delta` are below the pivot tolerance, relative to its
    largest entry (or absolute, when that is below 1): such an entry never blocks a
    primal step, and an unbounded ray takes it for the zero it stands for."""
    return _negligible_rate(np.abs(delta), pivot)


def _negligible_rate(rate: np.ndarray, pivot: float) -> np.ndarray:
    """`negligible` of |delta| already at hand (the primal ratio test has it)."""
    return rate <= pivot * max(1.0, np.maximum.reduce(rate) if rate.size else 0.0)  # ufunc: no Python wrapper


def primal_ratio_test(state, q: int, delta: np.ndarray, bland: bool):
    """Step length and leaving position for entering variable q of a `SimplexState`.

    `delta` is the change of the basic variables per unit step of q. Returns
    (theta, r, hits_upper) with r = -1 for a bound flip of q, or None when nothing limits
    the step (unbounded direction). Under Bland's rule the test is exact and ties go to
    the smallest variable index.
    """
    tol = state.tol
    head = state.head
    m = state.m
    xb = state.z[head]
    rate = np.abs(delta)
    # Entries below the pivot tolerance, relative to the column's largest, never
    # block: pivoting on them would make the basis nearly singular.
    blocking = ~_negligible_rate(rate, tol.pivot)
    rising = delta > 0
    bound = np.where(rising, state.upper[head], state.lower[head])
    room = np.where(rising, bound - xb, xb - bound)
    exact = np.divide(room, rate, out=np.full(m, np.inf), where=blocking)
    np.maximum(exact, 0.0, out=exact)
    if bland:
        theta_max = exact.min(initial=np.inf)
    else:
        # Harris pass one: the largest step that keeps every basic variable within
        # its bound relaxed by the primal tolerance; never negative, even when a
        # basic variable already sits beyond its relaxed bound through rounding.
        relaxed = np.divide(room + tol.primal_feasibility * (1 + np.abs(bound)), rate,
                            out=np.full(m, np.inf), where=blocking)
        theta_max = max(np.minimum.reduce(relaxed) if relaxed.size else np.inf, 0.0)
    span = state.upper[q] - state.lower[q]
    if theta_max == np.inf:
        if span < np.inf:
            return span, -1, False
        return None
    if span <= theta_max:
        return span, -1, False
    if bland:
        ties = np.flatnonzero(exact <= theta_max * (1 + BLAND_TIE_RELATIVE) + BLAND_TIE_ABSOLUTE)
        r = int(ties[np.argmin(head[ties])])
    else:
        # Harris pass two: among rows blocking within theta_max, the largest pivot.
        r = int(np.where(exact <= theta_max, rate, -1.0).argmax())
    return float(exact[r]), r, bool(rising[r])


def dual_ratio_test(order: np.ndarray, room: np.ndarray, size: np.ndarray, span: np.ndarray,
                    infeasible_by: float, dual_feasibility: float):
    """The dual simplex's entering variable q and the variables to flip, or None.

    The candidates are the variables `order`, whose reduced costs are `room` away from
    changing sign and change at rate `size` per unit of the leaving variable's move;
    `span` is each variable's distance between its bounds, and `infeasible_by` how far the
    leaving variable is outside its bound. Returns (q, flipped); None when every candidate
    can flip and the leaving variable still cannot reach its bound (the dual is unbounded:
    the problem is infeasible).
    """
    exact = room / size
    first = int(exact.argmin())
    if size.item(first) * span.item(order.item(first)) >= infeasible_by:
        # The first breakpoint already blocks (the usual case): Harris's two-pass
        # choice among the candidates, no bound flips.
        relaxed = room + dual_feasibility
        relaxed /= size
        pick = (exact <= relaxed.item(relaxed.argmin())).nonzero()[0]  # argmin costs less than a reduction
        return order.item(pick.item(size[pick].argmax())), order[:0]
    return _bound_flipping(order, room, size, exact, span, infeasible_by, dual_feasibility)


def _bound_flipping(order, room, size, exact, span, infeasible_by: float, dual_feasibility: float):
    """`dual_ratio_test` past the first breakpoint, kept apart from the usual case.

    Walking the breakpoints in order, a boxed variable whose reduced cost would change
    sign is moved to its other bound instead of entering, while the leaving variable stays
    infeasible; Harris's choice is then made among the breakpoints from there on. Only the
    FLIP_WINDOW nearest breakpoints are sorted (partial selection); the walk rarely gets
    past them, and when it does all of them are sorted.
    """
    if exact.size <= FLIP_SORT_ALL:
        return _flip_sorted(order, room, size, exact, span, infeasible_by, dual_feasibility)
    window = FLIP_WINDOW
    near = np.sort(np.argpartition(exact, window - 1)[:window])
    near = near[np.argsort(exact[near], kind="stable")]
    left = infeasible_by - np.cumsum(size[near] * span[order[near]])
    passed = int((left <= 0).argmax())
    if left[passed] > 0:
        return _flip_sorted(order, room, size, exact, span, infeasible_by, dual_feasibility)
    flipped = near[:passed]
    rest = np.ones(exact.size, dtype=bool)
    rest[flipped] = False
    relaxed = ((room[rest] + dual_feasibility) / size[rest]).min()
    pick = np.flatnonzero(rest & (exact <= relaxed))
    return int(order[pick[size[pick].argmax()]]), order[flipped]


def _flip_sorted(order, room, size, exact, span, infeasible_by: float, dual_feasibility: float):
    """`_bound_flipping` with every breakpoint sorted: for few candidates, or a walk past
    the window."""
    sort = np.argsort(exact, kind="stable")
    order, room, size, exact = order[sort], room[sort], size[sort], exact[sort]
    left = infeasible_by - np.cumsum(size * span[order])
    passed = int((left <= 0).argmax())
    if left[passed] > 0:
        return None  # every breakpoint passed: the dual is unbounded
    relaxed = (room[passed:] + dual_feasibility) / size[passed:]
    pick = passed + (exact[passed:] <= relaxed.item(relaxed.argmin())).nonzero()[0]
    return order.item(pick.item(size[pick].argmax())), order[:passed]

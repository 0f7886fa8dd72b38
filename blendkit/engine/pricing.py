"""Pricing: which variable enters (primal) or leaves (dual) the basis, and when to give up.

Both iteration loops price with Devex weights (approximate steepest edge, Forrest &
Goldfarb 1992): reference weights w that grow as the basis moves away from the reference
framework, so that a candidate's merit is its (reduced cost or infeasibility)^2 / w. When
a weight grows past DEVEX_WEIGHT_LIMIT the framework starts afresh. On problems of at
least STEEPEST_EDGE_ROWS rows the dual simplex keeps exact steepest-edge weights instead,
the squared norms of the rows of B^-1 (`update_steepest_weights`), at the cost of one more
solve per iteration, which there saves more iterations than it costs. `StallWatch` counts
objective-neutral iterations; after STALL_LIMIT of them in a row the primal method prices
by Bland's smallest-index rule, which cannot cycle, and the dual simplex gives up.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine import tolerances
from blendkit.engine.tolerances import DEVEX_WEIGHT_LIMIT, PROGRESS, STEEPEST_FLOOR


def entering_variable(d: np.ndarray, rise: np.ndarray, fall: np.ndarray, weights: np.ndarray,
                      bland: bool, dual_feasibility: float) -> int:
    """The primal entering variable q, or -1 when no reduced cost asks a variable to move.

    `rise` and `fall` are 1.0 where a variable may move that way (`SimplexState.mobility`).
    Devex picks the largest d_q^2 / w_q; Bland's rule the smallest eligible index.
    """
    gain = np.maximum(-d * rise, d * fall)
    gain[gain <= dual_feasibility] = 0.0
    if bland:
        eligible = np.flatnonzero(gain)
        q = int(eligible[0]) if eligible.size else 0
    else:
        q = int((gain * gain / weights).argmax())
    return -1 if gain[q] == 0.0 else q


def prices_out(d: np.ndarray, rise: np.ndarray, fall: np.ndarray, dual_feasibility: float) -> bool:
    """True when no nonbasic variable's reduced cost asks it to move (dual feasible)."""
    return not np.any(np.maximum(-d * rise, d * fall) > dual_feasibility)


def leaving_position(xb: np.ndarray, lb: np.ndarray, ub: np.ndarray, slack: np.ndarray,
                     weights: np.ndarray) -> int:
    """The dual simplex's leaving basis position, or -1 when every basic value is within
    its bounds (up to `slack`): the largest squared infeasibility over its weight."""
    if not xb.size:
        return -1
    worst = lb - xb  # in place from here: called every iteration
    np.maximum(worst, xb - ub, out=worst)
    worst -= slack  # > 0: outside its bound by more than the tolerance
    score = np.maximum(worst, 0.0)
    score *= score
    score /= weights
    r = int(score.argmax())
    return -1 if worst.item(r) <= 0.0 else r


def update_primal_weights(weights: np.ndarray, row: np.ndarray, pivot: float, p: int, q: int) -> None:
    """Devex weights of the variables after q entered and p left: w_j >= (row_j / pivot)^2 w_q."""
    ratio = row / pivot
    weight_q = max(weights[q], 1.0)
    np.maximum(weights, ratio * ratio * weight_q, out=weights)
    weights[p] = max(weight_q / (pivot * pivot), 1.0)
    _reset_when_large(weights, p, q)


def update_dual_weights(weights: np.ndarray, alpha: np.ndarray, pivot: float, r: int) -> None:
    """Dual Devex weights of the basis positions after position r changed variable:
    w_i >= (alpha_i / pivot)^2 w_r."""
    grown = max(weights.item(r), 1.0) / (pivot * pivot)
    bound = alpha * alpha
    bound *= grown
    np.maximum(weights, bound, out=weights)
    weights[r] = max(grown, 1.0)
    if grown > DEVEX_WEIGHT_LIMIT:  # `_reset_when_large`, read from the Python float at hand
        weights[:] = 1.0


def update_steepest_weights(weights: np.ndarray, alpha: np.ndarray, tau: np.ndarray, rho: np.ndarray,
                            pivot: float, r: int) -> None:
    """Dual steepest-edge weights w_i = ||row i of B^-1||^2 after position r changed
    variable (Forrest & Goldfarb 1992): w_i += (alpha_i / pivot) ((alpha_i / pivot) w_r
    - 2 tau_i), with w_r = ||rho_r||^2 taken exact, tau = B^-1 rho_r, and each weight kept
    at least STEEPEST_FLOOR against rounding."""
    weight_r = float(rho @ rho)
    ratio = alpha / pivot
    weights += ratio * (ratio * weight_r - 2.0 * tau)
    np.maximum(weights, STEEPEST_FLOOR, out=weights)
    weights[r] = max(weight_r / (pivot * pivot), STEEPEST_FLOOR)


def _reset_when_large(weights: np.ndarray, *changed: int) -> None:
    """Start a new reference framework (every weight 1) once a changed weight is too large;
    one home for the reset both weight updates share."""
    for k in changed:
        if weights[k] > DEVEX_WEIGHT_LIMIT:
            weights[:] = 1.0
            return


class StallWatch:
    """The objective along one run, and how many iterations in a row left it where it was."""

    __slots__ = ("objective", "count", "limit")

    def __init__(self, objective: float, rows: int = 0):
        self.objective = objective
        self.count = 0
        # Read per run, not at import: a test lowers it. `rows` (the dual simplex's) widens it.
        self.limit = tolerances.STALL_LIMIT * max(1.0, rows / tolerances.DUAL_STALL_ROWS)

    def record(self, change: float) -> bool:
        """Add one iteration's change of the objective; True while the run is stalled
        (STALL_LIMIT or more degenerate iterations in a row)."""
        self.objective += change
        if abs(change) > PROGRESS * (1 + abs(self.objective)):
            self.count = 0
            return False
        self.count += 1
        return self.count >= self.limit

"""Ranging at an optimal basis: how far each cost and each active bound may move while the
basis stays optimal, so that the duals and reduced costs found still hold.

Both work on the final `SimplexState` in the engine's scaled units; `solve` scales them
back. The notation is the one of `blendkit.engine.simplex`.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.simplex_state import SimplexState
from blendkit.engine.tolerances import RANGING_ZERO


def cost_ranges(state: SimplexState) -> np.ndarray:
    """For each structural x_j, the interval of its cost over which this basis stays
    optimal (the other costs fixed): "cost ranging".

    Raising c_j by t changes the duals by t B^-T e_r when x_j is basic in position r,
    so every nonbasic reduced cost d_k moves by -t alpha_rk (alpha_r: row r of B^-1 M);
    the interval ends where the first d_k would change to the wrong sign. A nonbasic
    x_j only moves its own d_j: at its lower bound it stays optimal up from c_j - d_j,
    at its upper bound down to it.
    """
    n = state.n
    c, d = state.c_struct, state.d
    ranges = np.empty((n, 2))
    rise, fall = (way > 0 for way in state.mobility())
    free = ~np.isfinite(state.lower) & ~np.isfinite(state.upper)
    position = {int(j): r for r, j in enumerate(state.head)}
    for j in range(n):
        if j not in position:
            ranges[j] = _nonbasic_cost_range(state, j, c[j], d[j], free[j])
            continue
        row = state.pivot_row(position[j])
        with np.errstate(divide="ignore", invalid="ignore"):
            step = d / row
        # At a lower bound d_k must stay >= 0; at an upper bound <= 0.
        up_limits = np.concatenate([step[rise & (row > RANGING_ZERO)], step[fall & (row < -RANGING_ZERO)]])
        down_limits = np.concatenate([step[rise & (row < -RANGING_ZERO)], step[fall & (row > RANGING_ZERO)]])
        up = np.maximum(up_limits, 0.0).min(initial=np.inf)
        down = np.minimum(down_limits, 0.0).max(initial=-np.inf)
        ranges[j] = (c[j] + down, c[j] + up)
    return ranges


def _nonbasic_cost_range(state: SimplexState, j: int, c_j: float, d_j: float, free: bool) -> tuple[float, float]:
    """`cost_ranges` of a nonbasic x_j, which moves only its own reduced cost."""
    if state.lower[j] == state.upper[j]:
        return (-np.inf, np.inf)
    if free:
        return (c_j, c_j)
    if state.at_upper[j]:
        return (-np.inf, c_j - d_j)
    return (c_j - d_j, np.inf)


def bound_ranges(state: SimplexState) -> np.ndarray:
    """For each of the n + m variables held at a bound, how far that bound can move
    down and up (t_down, t_up >= 0) with the basis staying feasible, and so optimal:
    "right-hand-side ranging". A basic variable gets (inf, inf).

    Moving a nonbasic z_j by t moves the basic variables by -t B^-1 M_j; the range
    ends where the first of them reaches one of its bounds, or where z_j reaches its
    own other bound.
    """
    n, m = state.n, state.m
    ranges = np.full((n + m, 2), np.inf)
    xb, lb, ub = state.z[state.head], state.lower[state.head], state.upper[state.head]
    with np.errstate(divide="ignore", invalid="ignore"):
        for j in np.flatnonzero(~state.basic[: n + m]):
            delta = -state.factor.ftran(state.column(j))  # change of x_B per unit rise
            rising, falling = delta > RANGING_ZERO, delta < -RANGING_ZERO
            up = np.concatenate([(ub - xb)[rising] / delta[rising], (lb - xb)[falling] / delta[falling]])
            down = np.concatenate([(xb - lb)[rising] / delta[rising], (xb - ub)[falling] / delta[falling]])
            # A bound may not pass the variable's other bound; a fixed variable's two
            # bounds move together (its value moves), so nothing caps that.
            own = state.upper[j] - state.lower[j] if state.upper[j] > state.lower[j] else np.inf
            ranges[j, 1] = max(min(up.min(initial=np.inf), own), 0.0)
            ranges[j, 0] = max(min(down.min(initial=np.inf), own), 0.0)
    return ranges

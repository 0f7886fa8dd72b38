"""Ranging at an optimal basis: how far each cost and each active bound may move while the
basis stays optimal, so that the duals and reduced costs found still hold.

Both work on the final `SimplexState` in the engine's scaled units; `solve` scales them
back. The notation is the one of `blendkit.engine.simplex`.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.simplex_state import SimplexState
from blendkit.engine.tolerances import RANGING_ZERO

# Nonbasic columns solved at once by `bound_ranges` (bounds its memory: rows x block).
RANGING_BLOCK = 256


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
    own other bound. The columns B^-1 M_j are solved RANGING_BLOCK at a time (a plant's
    thousands of nonbasic columns, one solve each, took a third of a second).
    """
    n, m = state.n, state.m
    ranges = np.full((n + m, 2), np.inf)
    xb, lb, ub = state.z[state.head], state.lower[state.head], state.upper[state.head]
    nonbasic = np.flatnonzero(~state.basic[: n + m])
    span = state.upper[: n + m] - state.lower[: n + m]
    # A bound may not pass the variable's other bound; a fixed variable's two bounds
    # move together (its value moves), so nothing caps that.
    own = np.where(span > 0, span, np.inf)
    with np.errstate(divide="ignore", invalid="ignore"):
        for start in range(0, nonbasic.size, RANGING_BLOCK):
            block = nonbasic[start : start + RANGING_BLOCK]
            delta = -state.factor.ftran(state.columns(block))  # change of x_B per unit rise
            down, up = _first_bounds(delta, xb - lb, ub - xb)
            ranges[block, 1] = np.maximum(np.minimum(up, own[block]), 0.0)
            ranges[block, 0] = np.maximum(np.minimum(down, own[block]), 0.0)
    return ranges


def _first_bounds(delta: np.ndarray, above_lower: np.ndarray, below_upper: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For each column of `delta` (the basic values' moves), the largest fall and rise of
    the nonbasic variable before a basic value reaches one of its bounds."""
    rising, falling = delta > RANGING_ZERO, delta < -RANGING_ZERO
    above, below = above_lower[:, None], below_upper[:, None]
    up = np.where(rising, below / delta, np.where(falling, -above / delta, np.inf)).min(axis=0, initial=np.inf)
    down = np.where(rising, above / delta, np.where(falling, -below / delta, np.inf)).min(axis=0, initial=np.inf)
    return down, up

"""Cost perturbation for the dual simplex: small random cost changes against stalling.

Blend and plant LPs are highly dual degenerate: many reduced costs sit at zero once the
specs and the stocks bind, and the dual ratio test then takes step after step of length
zero. Once the dual simplex has taken PERTURB_AFTER degenerate steps in a row, each
nonbasic structural's cost is moved away from zero reduced cost in the direction that
keeps the basis dual feasible (up at a lower bound, down at an upper bound) by an
irregular amount of about PERTURBATION_BASE relative to 1 + |cost|, which makes ties
between breakpoints rare. (A run without such a stall, as most small LPs are, keeps its
costs and its path as they were.) The run ends optimal for the
perturbed costs; the true costs are then put back, the duals and reduced costs recomputed
from the final basis, and a few primal iterations remove any dual infeasibility left
(the caller's cleanup), so the answer, its duals and its reduced costs are those of the
LP as given. The amounts come from the golden-ratio sequence (the fractional parts of
j x 0.618...), not a random generator: a solve is repeatable and costs nothing to set up.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.simplex_state import SimplexState
from blendkit.engine.tolerances import PERTURBATION_BASE

GOLDEN_FRACTION = (5**0.5 - 1) / 2  # spreads j x it (mod 1) evenly over [0, 1)


def perturbed_costs(state: SimplexState, cost: np.ndarray) -> np.ndarray:
    """`cost` with each nonbasic movable structural's cost moved the way that keeps its
    reduced cost's sign (see the module docstring); basic and fixed ones unchanged."""
    n = state.n
    c = cost[:n]
    irregular = (np.arange(1, n + 1) * GOLDEN_FRACTION) % 1.0
    size = PERTURBATION_BASE * (1 + np.abs(c)) * (1 + irregular)
    rise, fall = state.mobility()
    way = rise[:n] - fall[:n]  # +1 at a lower bound, -1 at an upper bound, 0 basic, fixed or free
    out = cost.copy()
    out[:n] += way * size
    return out

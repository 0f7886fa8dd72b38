"""Cost perturbation for the dual simplex: small random cost changes against stalling.

Blend and plant LPs are highly dual degenerate: many reduced costs sit at zero once the
specs and the stocks bind, and the dual ratio test then takes step after step of length
zero. Before the dual simplex starts, each nonbasic structural's cost is moved away from
zero reduced cost in the direction that keeps the basis dual feasible (up at a lower
bound, down at an upper bound) by a random amount of about PERTURBATION_BASE relative to
1 + |cost|, which makes ties between breakpoints rare. The run ends optimal for the
perturbed costs; the true costs are then put back, the duals and reduced costs recomputed
from the final basis, and a few primal iterations remove any dual infeasibility left
(the caller's cleanup), so the answer, its duals and its reduced costs are those of the
LP as given. The random numbers come from a fixed seed: a solve is repeatable.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.simplex_state import SimplexState
from blendkit.engine.tolerances import PERTURBATION_BASE, PERTURBATION_SEED


def perturbed_costs(state: SimplexState, cost: np.ndarray) -> np.ndarray:
    """`cost` with each nonbasic movable structural's cost moved the way that keeps its
    reduced cost's sign (see the module docstring); basic and fixed ones unchanged."""
    n = state.n
    rng = np.random.default_rng(PERTURBATION_SEED)
    c = cost[:n]
    size = PERTURBATION_BASE * (1 + np.abs(c)) * (1 + rng.random(n))
    rise, fall = state.mobility()
    way = rise[:n] - fall[:n]  # +1 at a lower bound, -1 at an upper bound, 0 basic, fixed or free
    out = cost.copy()
    out[:n] += way * size
    return out

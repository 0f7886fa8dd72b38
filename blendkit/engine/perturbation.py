"""Cost perturbation for the dual simplex: small random cost changes against stalling.

Blend and plant LPs are highly dual degenerate: many reduced costs sit at zero once the
specs and the stocks bind, and the dual ratio test then takes step after step of length
zero. Once the dual simplex has taken PERTURB_AFTER degenerate steps in a row, each
nonbasic variable's cost, a structural's or a logical's (a row's, cost 0), is moved away
from zero reduced cost in the direction that keeps the basis dual feasible (up at a lower
bound, down at an upper bound) by an irregular amount of about PERTURBATION_BASE relative
to 1 + |cost|, which makes ties between breakpoints rare. (The logicals count: a plant
whose specs are ranged rows has a boxed logical per spec. With them perturbed too, a
40-product plant workbook took 6,584 dual iterations instead of 7,472; 16 bench plants of
5-60 products, split and ranged, 50,773 instead of 55,356; 16 more of 40 and 80 products
96,183 instead of 100,293. Single plants swing either way: a 160-product plant took 30,451
instead of 16,097, a 140-product one 16,315 instead of 22,481. A base of 5e-6 or 5e-5
did no better.) A run without such a stall, as most small LPs are, keeps its
costs and its path as they were. The run ends optimal for the
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
    """`cost` with each nonbasic movable variable's cost, structural or logical, moved the
    way that keeps its reduced cost's sign (see the module docstring); basic, fixed and
    free ones unchanged."""
    k = state.n + state.m
    irregular = (np.arange(1, k + 1) * GOLDEN_FRACTION) % 1.0
    size = PERTURBATION_BASE * (1 + np.abs(cost[:k])) * (1 + irregular)
    rise, fall = state.mobility()
    way = rise[:k] - fall[:k]  # +1 at a lower bound, -1 at an upper bound, 0 basic, fixed or free
    out = cost.copy()
    out[:k] += way * size
    return out

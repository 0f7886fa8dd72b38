"""Right-hand-side ranging (`bound_ranges`) on a plant, whose thousands of nonbasic
columns are solved in blocks: inside each reported range the shadow price holds, checked
by re-solving the moved LP with scipy's HiGHS (outside reference)."""

from __future__ import annotations

import numpy as np
from scipy.optimize import linprog

from blendkit.bench.plant import make_plant
from blendkit.engine import ranging, solve


def _highs_objective(plant, b_ub) -> float:
    res = linprog(plant.c, plant.A_ub, b_ub, plant.A_eq, plant.b_eq, plant.bounds, method="highs")
    assert res.status == 0
    return res.fun


def test_a_plants_row_ranges_hold_their_shadow_prices_in_highs(monkeypatch):
    # Blocks of 7 columns: the plant's few hundred nonbasic variables take many blocks,
    # the last one short.
    monkeypatch.setattr(ranging, "RANGING_BLOCK", 7)
    plant = make_plant(5, 60, 30, 3)
    result = solve(plant.c, plant.A_ub, plant.b_ub, plant.A_eq, plant.b_eq, plant.bounds, ranging=True)
    assert result.status == "optimal"
    n, m_ub = plant.c.size, plant.b_ub.size
    marginals = result.row_marginals[:m_ub]
    binding = np.flatnonzero(np.abs(marginals) > 1e-6)
    assert binding.size >= 10
    base = _highs_objective(plant, plant.b_ub)
    for i in binding[:: max(1, binding.size // 10)]:
        down, up = result.bound_ranges[n + i]
        assert down >= 0 and up >= 0
        for move in (-0.9 * min(down, 1e3), 0.9 * min(up, 1e3)):
            if move == 0:
                continue
            b = plant.b_ub.copy()
            b[i] += move
            # Inside the range the cost moves by exactly shadow price x move (HiGHS).
            assert abs(_highs_objective(plant, b) - base - marginals[i] * move) <= 1e-7 * (1 + abs(base))

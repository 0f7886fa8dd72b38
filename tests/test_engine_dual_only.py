"""The dual simplex alone from a given basis (`solve_form(..., algorithm="dual")`), as a
one-sided rate's re-solve uses it: after a bound moves, the optimum HiGHS finds, or an
infeasible verdict proven by the last pivot row (Farkas), never a phase one.

Reference: HiGHS through linprog(method="highs") on the same moved LP; the proof is
checked by `certificate.proves_infeasible` in the original units, plain arithmetic on
the problem (Farkas's lemma: common practice)."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy.optimize import linprog

from blendkit.bench.blends import make_blend
from blendkit.bench.plant import make_plant
from blendkit.engine import solve_form
from blendkit.engine.certificate import proves_infeasible
from blendkit.engine.standard_form import to_standard_form


def _moved(form, i: int, value: float):
    """The form with row i's upper bound set to `value`."""
    upper = form.row_upper.copy()
    upper[i] = value
    return dataclasses.replace(form, row_upper=upper)


def _linprog(form):
    """HiGHS on a form whose rows are all A x <= upper or equalities (as these are)."""
    ub = ~np.isfinite(form.row_lower)
    bounds = list(zip(form.col_lower, [None if np.isinf(u) else u for u in form.col_upper]))
    return linprog(form.c, A_ub=form.A[ub], b_ub=form.row_upper[ub], A_eq=form.A[~ub], b_eq=form.row_upper[~ub],
                   bounds=bounds, method="highs")


@pytest.mark.parametrize("instance", [make_blend(60, 30, 20240611, 2), make_plant(4, 15, 8, 20240611)],
                         ids=["blend 60x30", "plant 4x15x8"])
def test_each_binding_max_moved_down_agrees_with_highs(instance):
    form = to_standard_form(instance.c, instance.A_ub, instance.b_ub, instance.A_eq, instance.b_eq, instance.bounds)
    if hasattr(form.A, "toarray"):
        form = dataclasses.replace(form, A=form.A.toarray())
    first = solve_form(form)
    assert first.status == "optimal"
    activity = form.A @ first.x
    binding = [i for i in range(form.n_ub) if activity[i] > form.row_upper[i] - 1e-9 * (1 + abs(form.row_upper[i]))]
    assert binding
    seen, counts = set(), {}
    for i in binding[:12]:
        for cut in (0.01, 0.5, 5.0):  # a small move, a large one and one past what the rest allows
            moved = _moved(form, i, form.row_upper[i] - cut * (1 + abs(form.row_upper[i])))
            ours = solve_form(moved, basis=first.basis, algorithm="dual")
            ref = _linprog(moved)
            seen.add(ours.status)
            counts[ours.status] = counts.get(ours.status, 0) + 1
            assert ours.phase_one_iterations == 0
            if ref.status == 2:
                assert ours.status in ("infeasible", "numerical_trouble"), (i, cut)
                if ours.status == "infeasible":  # proven, in the original units
                    assert proves_infeasible(moved, ours.certificate.row_multipliers)
            else:
                assert ref.status == 0
                assert ours.status in ("optimal", "numerical_trouble"), (i, cut, ours.message)
                if ours.status == "optimal":
                    assert ours.objective == pytest.approx(ref.fun, rel=1e-7)
    assert {"optimal", "infeasible"} <= seen
    assert counts.get("numerical_trouble", 0) <= 3  # rare: the dual simplex alone nearly always finishes

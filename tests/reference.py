"""The outside reference for engine checks: scipy's linprog with the HiGHS solver.

HiGHS's presolve sometimes reports a problem that is unbounded as "infeasible" (its
status 8 stands for "infeasible or unbounded" after presolve); we tell the two apart by
solving the same constraints with a zero objective, which HiGHS then answers exactly.

On badly scaled LPs with near-parallel rows (tests/test_engine_families.py) HiGHS's
presolve may call a feasible LP "infeasible", and its simplex may end without an answer:
an "infeasible" is then confirmed by HiGHS without presolve, and "numerical trouble" is
asked again of HiGHS's dual simplex without presolve, then of its interior point method,
then of its dual simplex with tolerances of 1e-9; the first of them to give an answer (optimal, infeasible or unbounded) is HiGHS's answer.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import linprog

STATUS_NAMES = {0: "optimal", 1: "iteration_limit", 2: "infeasible", 3: "unbounded", 4: "numerical_trouble"}


@dataclass(frozen=True)
class Reference:
    """HiGHS's answer to one LP, in the engine's vocabulary."""

    status: str
    objective: float | None
    x: np.ndarray | None
    marginals_ub: np.ndarray | None
    marginals_eq: np.ndarray | None
    reduced_costs: np.ndarray | None


def _unknown_status(c, kw) -> str:
    """HiGHS sometimes ends with model status Unknown on small unbounded LPs; decide with
    HiGHS again: infeasible when the zero-cost LP is, unbounded when the optimum keeps
    falling as a box around the variables grows, else numerical trouble."""
    if linprog(np.zeros(len(c)), method="highs", **kw).status == 2:
        return "infeasible"
    bounds = [kw["bounds"]] * len(c) if isinstance(kw["bounds"], tuple) else kw["bounds"]
    values = []
    for box in (1e3, 1e6):
        boxed = [(-box if lo is None else lo, box if hi is None else hi) for lo, hi in bounds]
        res = linprog(c, method="highs", **dict(kw, bounds=boxed))
        if res.status != 0:
            return "numerical_trouble"
        values.append(res.fun)
    return "unbounded" if values[1] < values[0] - 1.0 else "numerical_trouble"


def _without_presolve(c, kw, status: str, res):
    """HiGHS again without presolve (dual simplex, then interior point) after an answer
    its presolve may have got wrong; the first definite answer, else the one given."""
    tight = {"presolve": False, "primal_feasibility_tolerance": 1e-9, "dual_feasibility_tolerance": 1e-9}
    tries = [("highs-ds", {"presolve": False})]
    if status != "infeasible":
        tries += [("highs-ipm", {"presolve": False}), ("highs-ds", tight)]
    for method, options in tries:
        again = linprog(c, method=method, options=options, **kw)
        if again.status in (0, 2, 3):
            return STATUS_NAMES[again.status], again
    return status, res


def highs(c, A_ub=None, b_ub=None, A_eq=None, b_eq=None, bounds=None) -> Reference:
    """Solve with scipy.optimize.linprog(method="highs")."""
    kw = dict(A_ub=A_ub, b_ub=b_ub, A_eq=A_eq, b_eq=b_eq, bounds=bounds if bounds is not None else (0, None))
    res = linprog(c, method="highs", **kw)
    status = STATUS_NAMES.get(res.status, str(res.status))
    if status == "numerical_trouble" and "model_status is Unknown" in res.message:
        status = _unknown_status(c, kw)
    if status in ("infeasible", "numerical_trouble"):
        status, res = _without_presolve(c, kw, status, res)
    if status in ("infeasible", "unbounded"):
        # Unbounded needs a feasible point, infeasible none: HiGHS's zero-cost LP decides
        # (seen: an LP made infeasible by a margin of 1e-5 of its size called unbounded).
        feasible = linprog(np.zeros(len(c)), method="highs", **kw)
        if feasible.status in (0, 2):
            status = "unbounded" if feasible.status == 0 else "infeasible"
    if status != "optimal":
        return Reference(status, None, None, None, None, None)
    return Reference(
        status=status,
        objective=float(res.fun),
        x=np.asarray(res.x),
        marginals_ub=np.asarray(res.ineqlin.marginals) if A_ub is not None else np.zeros(0),
        marginals_eq=np.asarray(res.eqlin.marginals) if A_eq is not None else np.zeros(0),
        reduced_costs=np.asarray(res.lower.marginals) + np.asarray(res.upper.marginals),
    )


def highs_form(form) -> Reference:
    """Solve a general-form LP (row bounds, column bounds) with linprog's HiGHS.

    The ranged rows become one or two linprog rows; `marginals_eq` of the answer then
    holds, per original row, d(objective)/d(its active bound) (our `row_marginals`).
    """
    A = np.asarray(form.A.toarray() if hasattr(form.A, "toarray") else form.A)
    lower, upper = np.asarray(form.row_lower), np.asarray(form.row_upper)
    equal = lower == upper
    low_rows = np.flatnonzero(~equal & np.isfinite(lower))
    high_rows = np.flatnonzero(~equal & np.isfinite(upper))
    eq_rows = np.flatnonzero(equal)
    A_ub = np.vstack([-A[low_rows], A[high_rows]])
    b_ub = np.concatenate([-lower[low_rows], upper[high_rows]])
    bounds = [
        (None if not np.isfinite(lo) else lo, None if not np.isfinite(hi) else hi)
        for lo, hi in zip(form.col_lower, form.col_upper)
    ]
    ref = highs(
        form.c,
        A_ub=A_ub if A_ub.size else None,
        b_ub=b_ub if A_ub.size else None,
        A_eq=A[eq_rows] if eq_rows.size else None,
        b_eq=upper[eq_rows] if eq_rows.size else None,
        bounds=bounds,
    )
    if ref.status != "optimal":
        return ref
    row = np.zeros(A.shape[0])
    row[low_rows] -= ref.marginals_ub[: low_rows.size]
    row[high_rows] += ref.marginals_ub[low_rows.size :]
    row[eq_rows] += ref.marginals_eq
    return Reference(ref.status, ref.objective, ref.x, None, row, ref.reduced_costs)

"""An independent cross-check: the same LP re-solved with scipy's HiGHS.

Our engine finds every formula; then `scipy.optimize.linprog(method="highs")` (scipy is a
dependency already) solves the very LP that was built, and the run records HiGHS's status
and cost beside ours. A cost that differs beyond CROSS_CHECK_RTOL, or another status, is a
warning in the run's notes: a reviewer sees that two solvers agree, or that they do not.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine import LPResult, StandardForm
from blendkit.lp.tolerances import CROSS_CHECK_RTOL
from blendkit.model.formula import CrossCheck

SOLVER = "HiGHS via scipy"
# scipy's status codes, in the engine's words.
_STATUS = {0: "optimal", 1: "iteration_limit", 2: "infeasible", 3: "unbounded", 4: "numerical_trouble"}


def cross_check(form: StandardForm, ours: LPResult) -> CrossCheck:
    """Re-solve `form` with HiGHS and compare with our result."""
    from scipy.optimize import linprog

    try:
        theirs = linprog(form.c, method="highs", **linprog_arguments(form))
    except ValueError as error:  # an LP scipy refuses (say, a coefficient that is not finite)
        return CrossCheck(SOLVER, f"refused: {error}", None, None, agrees=False)
    status = _STATUS.get(theirs.status, "numerical_trouble")
    if status != "optimal":
        return CrossCheck(SOLVER, status, None, None, agrees=status == ours.status)
    cost = float(theirs.fun)
    difference = float(ours.objective) - cost if ours.status == "optimal" else None
    return CrossCheck(SOLVER, status, cost, difference, agrees=_close(difference, cost))


def _close(difference: float | None, cost: float) -> bool:
    """True when our cost is HiGHS's within CROSS_CHECK_RTOL (relative to max(1, |cost|))."""
    return difference is not None and abs(difference) <= CROSS_CHECK_RTOL * max(1.0, abs(cost))


def warning(check: CrossCheck, ours: float | None) -> str | None:
    """The note for a cross-check that disagrees (None when it agrees)."""
    if check.agrees:
        return None
    if check.difference is None:
        return (f"Cross-check: {check.solver} ends with status {check.status} on the same LP; "
                "the engines disagree, please report it with the workbook")
    return (f"Cross-check: {check.solver} finds cost {check.cost:.10g}, ours {ours:.10g} (difference "
            f"{check.difference:.3g}, beyond {CROSS_CHECK_RTOL:g} relative); please report it with the workbook")


def linprog_arguments(form: StandardForm) -> dict:
    """`form` (row_lower <= A x <= row_upper, column bounds) as linprog's keyword
    arguments: equal bounds as A_eq rows, other finite sides as A_ub rows."""
    A = form.A.toarray() if hasattr(form.A, "toarray") else np.asarray(form.A)
    lower, upper = form.row_lower, form.row_upper
    equal = np.isfinite(lower) & (lower == upper)
    has_upper = np.isfinite(upper) & ~equal
    has_lower = np.isfinite(lower) & ~equal
    arguments = {
        "A_ub": np.vstack([A[has_upper], -A[has_lower]]) if (has_upper | has_lower).any() else None,
        "b_ub": np.concatenate([upper[has_upper], -lower[has_lower]]) if (has_upper | has_lower).any() else None,
        "A_eq": A[equal] if equal.any() else None,
        "b_eq": upper[equal] if equal.any() else None,
        "bounds": [(lo if np.isfinite(lo) else None, hi if np.isfinite(hi) else None)
                   for lo, hi in zip(form.col_lower, form.col_upper)],
    }
    return arguments


def combined(checks: list[CrossCheck | None]) -> CrossCheck | None:
    """The cross-check of a run solved as several LPs: statuses agree when each does;
    costs and differences add up (the run's cost is the sum of its parts')."""
    if not checks or any(check is None for check in checks):
        return None
    agrees = all(check.agrees for check in checks)
    if any(check.status != "optimal" for check in checks):
        worst = next(check for check in checks if check.status != "optimal")
        return CrossCheck(SOLVER, worst.status, None, None, agrees=agrees)
    differences = [check.difference for check in checks]
    difference = None if any(d is None for d in differences) else float(sum(differences))
    return CrossCheck(SOLVER, "optimal", float(sum(check.cost for check in checks)), difference, agrees=agrees)


MIP_SOLVER = "HiGHS MIP via scipy"
_MIP_STATUS = {0: "optimal", 1: "time_limit", 2: "infeasible", 3: "unbounded"}


def cross_check_mip(form: StandardForm, integrality: np.ndarray, semicontinuous: np.ndarray, ours,
                    time_limit: float) -> CrossCheck:
    """Re-solve a MIP (semi-continuous columns as HiGHS's kind 2) with `scipy.optimize.milp`
    within `time_limit` seconds and compare with our MIPResult `ours`: the same status and
    optimum within CROSS_CHECK_RTOL; after our time limit, HiGHS's optimum must not lie
    below our proven bound."""
    from scipy.optimize import Bounds, LinearConstraint, milp

    never = (semicontinuous > 0) & (semicontinuous > form.col_upper)  # a threshold above the Max: only 0
    semi = (semicontinuous > 0) & (form.col_lower <= 0) & ~never  # a column with a Min > 0 is always used
    lower = np.where((semicontinuous > 0) & ~never, np.maximum(form.col_lower, semicontinuous), form.col_lower)
    upper = np.where(never, 0.0, form.col_upper)
    try:
        theirs = milp(form.c, constraints=LinearConstraint(form.A, form.row_lower, form.row_upper),
                      bounds=Bounds(lower, upper), integrality=np.where(semi, 2, integrality),
                      options={"time_limit": time_limit})
    except ValueError as error:
        return CrossCheck(MIP_SOLVER, f"refused: {error}", None, None, agrees=False)
    status = _MIP_STATUS.get(theirs.status, "numerical_trouble")
    if status != "optimal" or ours.objective is None:
        return CrossCheck(MIP_SOLVER, status, None, None, agrees=status == ours.status)
    cost = float(theirs.fun)
    difference = float(ours.objective) - cost
    if ours.status == "time_limit":
        agrees = cost >= ours.bound - CROSS_CHECK_RTOL * max(1.0, abs(cost))
    else:
        agrees = _close(difference, cost)
    return CrossCheck(MIP_SOLVER, status, cost, difference, agrees=agrees)

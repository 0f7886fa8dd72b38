"""An independent cross-check: the same LP re-solved with HiGHS, through highspy.

Our engine finds every formula; then HiGHS (highspy, a dependency of blendkit, through
`blendkit.lp.highs`) solves the very LP that was built, and the run records HiGHS's
status and cost beside ours. A cost that differs beyond CROSS_CHECK_RTOL, or another
status, is a warning in the run's notes: a reviewer sees that two solvers agree, or that
they do not.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine import LPResult, StandardForm
from blendkit.lp.highs import solve_with_highs
from blendkit.lp.tolerances import CROSS_CHECK_RTOL
from blendkit.model.formula import CrossCheck

SOLVER = "HiGHS (highspy)"


def cross_check(form: StandardForm, ours: LPResult) -> CrossCheck:
    """Re-solve `form` with HiGHS and compare with our result; an optimum's basis is where
    HiGHS starts (it confirms the optimum in its own arithmetic, or moves on from it)."""
    start = ours.basis if ours.status == "optimal" else None
    theirs = solve_with_highs(form.c, form.A, form.row_lower, form.row_upper, form.col_lower, form.col_upper,
                              basis=start)
    if theirs.status.startswith("refused"):  # an LP HiGHS cannot take (say, a coefficient that is not finite)
        return CrossCheck(SOLVER, theirs.status, None, None, agrees=False)
    if theirs.status != "optimal":
        return CrossCheck(SOLVER, theirs.status, None, None, agrees=theirs.status == ours.status)
    cost = theirs.cost
    difference = float(ours.objective) - cost if ours.status == "optimal" else None
    return CrossCheck(SOLVER, theirs.status, cost, difference, agrees=_close(difference, cost))


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


def combined(checks: list[CrossCheck | None]) -> CrossCheck | None:
    """The cross-check of a run solved as several LPs: statuses agree when each does;
    costs and differences add up (the run's cost is the sum of its parts')."""
    if not checks or any(check is None for check in checks):
        return None
    agrees = all(check.agrees for check in checks)
    solver = " and ".join(dict.fromkeys(check.solver for check in checks))  # the parts' own, once each
    if any(check.status != "optimal" for check in checks):
        worst = next(check for check in checks if check.status != "optimal")
        return CrossCheck(solver, worst.status, None, None, agrees=agrees)
    differences = [check.difference for check in checks]
    difference = None if any(d is None for d in differences) else float(sum(differences))
    return CrossCheck(solver, "optimal", float(sum(check.cost for check in checks)), difference, agrees=agrees)


MIP_SOLVER = "HiGHS MIP (highspy)"


def cross_check_mip(form: StandardForm, integrality: np.ndarray, semicontinuous: np.ndarray, ours,
                    time_limit: float) -> CrossCheck:
    """Re-solve a MIP (semi-continuous columns as HiGHS's semi-continuous kind) with HiGHS
    within `time_limit` seconds and compare with our MIPResult `ours`: the same status and
    optimum within CROSS_CHECK_RTOL; after our time limit, HiGHS's optimum must not lie
    below our proven bound. When ours found no formula, HiGHS's optimum is kept with no
    difference (like the LP cross-check's, so that parts' costs still add up)."""
    never = (semicontinuous > 0) & (semicontinuous > form.col_upper)  # a threshold above the Max: only 0
    semi = (semicontinuous > 0) & (form.col_lower <= 0) & ~never  # a column with a Min > 0 is always used
    lower = np.where((semicontinuous > 0) & ~never, np.maximum(form.col_lower, semicontinuous), form.col_lower)
    upper = np.where(never, 0.0, form.col_upper)
    theirs = solve_with_highs(form.c, form.A, form.row_lower, form.row_upper, lower, upper,
                              integrality=np.where(semi, 2, integrality), time_limit=time_limit)
    if theirs.status.startswith("refused"):
        return CrossCheck(MIP_SOLVER, theirs.status, None, None, agrees=False)
    if theirs.status != "optimal":
        return CrossCheck(MIP_SOLVER, theirs.status, None, None, agrees=theirs.status == ours.status)
    cost = theirs.cost
    if ours.objective is None:  # our search stopped (or failed) with no formula: HiGHS's cost, no difference
        # Out of time before a formula is no disagreement, unless HiGHS's optimum lies below our bound.
        return CrossCheck(MIP_SOLVER, theirs.status, cost, None,
                          agrees=ours.status == "time_limit" and _not_below(cost, ours.bound))
    difference = float(ours.objective) - cost
    agrees = _not_below(cost, ours.bound) if ours.status == "time_limit" else _close(difference, cost)
    return CrossCheck(MIP_SOLVER, theirs.status, cost, difference, agrees=agrees)


def _not_below(cost: float, bound: float | None) -> bool:
    """True when HiGHS's optimum `cost` does not lie below our proven `bound` (None: none
    proven) by more than CROSS_CHECK_RTOL: one test for a search out of time, with or
    without a formula."""
    return bound is None or cost >= bound - CROSS_CHECK_RTOL * max(1.0, abs(cost))

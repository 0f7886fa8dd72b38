"""The outside reference for engine checks: scipy's linprog with the HiGHS solver.

HiGHS's presolve sometimes reports a problem that is unbounded as "infeasible" (its
status 8 stands for "infeasible or unbounded" after presolve); we tell the two apart by
solving the same constraints with a zero objective, which HiGHS then answers exactly.
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


def highs(c, A_ub=None, b_ub=None, A_eq=None, b_eq=None, bounds=None) -> Reference:
    """Solve with scipy.optimize.linprog(method="highs")."""
    kw = dict(A_ub=A_ub, b_ub=b_ub, A_eq=A_eq, b_eq=b_eq, bounds=bounds if bounds is not None else (0, None))
    res = linprog(c, method="highs", **kw)
    status = STATUS_NAMES.get(res.status, str(res.status))
    if status == "infeasible":
        feasible = linprog(np.zeros(len(c)), method="highs", **kw)
        if feasible.status == 0:
            status = "unbounded"
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

"""The engine's public entry point: check arguments, solve, check the answer."""

from __future__ import annotations

import numpy as np

from blendkit.engine.result import LPResult
from blendkit.engine.simplex import run_simplex
from blendkit.engine.standard_form import to_standard_form
from blendkit.engine.tolerances import Tolerances
from blendkit.engine.verify import worst_violation


def solve(
    c,
    A_ub=None,
    b_ub=None,
    A_eq=None,
    b_eq=None,
    bounds=None,
    *,
    tolerances: Tolerances | None = None,
    max_iterations: int | None = None,
) -> LPResult:
    """Minimise c·x subject to A_ub x <= b_ub, A_eq x == b_eq and bounds on x.

    The arguments mean what they mean to `scipy.optimize.linprog`: `bounds` is None
    (every x >= 0), one (lower, upper) pair for all variables, or a pair per variable,
    with None for "no bound". Inputs are never modified. Infeasible, unbounded and
    other outcomes come back as the result's `status`; only malformed arguments raise
    ValueError.
    """
    tol = tolerances or Tolerances()
    sf = to_standard_form(c, A_ub, b_ub, A_eq, b_eq, bounds)
    m, n = sf.shape
    limit = max_iterations if max_iterations is not None else max(10_000, 50 * (m + n))
    outcome = run_simplex(sf, tol, limit)
    if outcome.status != "optimal":
        return LPResult(
            status=outcome.status,
            message=outcome.message,
            x=None,
            objective=None,
            iterations=outcome.iterations,
            phase_one_iterations=outcome.phase_one_iterations,
            marginals_ub=None,
            marginals_eq=None,
            reduced_costs=None,
            farkas=outcome.farkas,
            ray=outcome.ray,
        )
    x = outcome.x
    residual, where = worst_violation(sf, x)
    status, message = outcome.status, outcome.message
    if residual > tol.residual:
        status = "numerical_trouble"
        message = (
            f"the solution breaks {where} by a relative {residual:.3g}, "
            f"above the residual tolerance {tol.residual:.3g}"
        )
    return LPResult(
        status=status,
        message=message,
        x=x,
        objective=float(sf.c @ x),
        iterations=outcome.iterations,
        phase_one_iterations=outcome.phase_one_iterations,
        marginals_ub=outcome.y[: sf.n_ub].copy(),
        marginals_eq=outcome.y[sf.n_ub :].copy(),
        reduced_costs=outcome.d.copy(),
        residual=residual,
    )

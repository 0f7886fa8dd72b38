"""The engine's answer: a frozen record, whatever the outcome."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

STATUSES = ("optimal", "infeasible", "unbounded", "iteration_limit", "numerical_trouble")


@dataclass(frozen=True)
class LPResult:
    """The outcome of `blendkit.engine.solve`.

    `status` is one of STATUSES. When optimal, `x` is the solution, `objective` is c·x,
    `marginals_ub` / `marginals_eq` are d(objective)/d(b_ub) and d(objective)/d(b_eq)
    (the sign convention of scipy's linprog), and `reduced_costs` is c - A^T y per
    variable (d(objective)/d(bound) for a variable held at a bound). Otherwise those
    are None, except `farkas`, the phase-one duals that prove infeasibility, and `ray`,
    a direction along which an unbounded objective falls.
    `residual` is the largest relative violation of the original constraints found by
    the check after solving.
    """

    status: str
    message: str
    x: np.ndarray | None
    objective: float | None
    iterations: int
    phase_one_iterations: int
    marginals_ub: np.ndarray | None
    marginals_eq: np.ndarray | None
    reduced_costs: np.ndarray | None
    residual: float | None = None
    farkas: np.ndarray | None = None
    ray: np.ndarray | None = None

    @property
    def success(self) -> bool:
        """True when an optimal solution was found."""
        return self.status == "optimal"

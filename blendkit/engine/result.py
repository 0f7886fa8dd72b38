"""The engine's answer: a frozen record, whatever the outcome."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

STATUSES = ("optimal", "infeasible", "unbounded", "iteration_limit", "numerical_trouble")


@dataclass(frozen=True)
class Basis:
    """A simplex basis, to start a later solve of a problem of the same shape from.

    `head[r]` is the variable basic in position r: j < n for structural x_j, n + i for
    the logical of row i (its activity). `at_upper` says, for each of the n + m
    variables, whether it sat at its upper bound when nonbasic.
    """

    head: np.ndarray
    at_upper: np.ndarray
    shape: tuple[int, int]  # (rows, columns) of the problem it came from


@dataclass(frozen=True)
class ConflictPart:
    """One constraint that takes part in an infeasibility certificate.

    `kind` is "ub" (row of A_ub), "eq" (row of A_eq), "row" (row of a general form)
    or "bound" (a variable's bound); `side` is "lower", "upper" or "eq" (an equality
    row, or a fixed variable); `multiplier` is
    d(infeasibility)/d(that bound), never zero.
    """

    kind: str
    index: int
    side: str
    multiplier: float


@dataclass(frozen=True)
class Certificate:
    """Why a problem is infeasible, from the phase-one optimum.

    `infeasibility` is the least total violation phase one could reach (measured in the
    engine's scaled rows);
    `row_multipliers` (y) and `bound_multipliers` (reduced costs of the variables) are the
    phase-one duals, d(infeasibility)/d(bound). The constraints listed in `parts` alone are
    already infeasible together (Farkas): sum(multiplier x bound) over them equals
    `infeasibility` > 0. Conflict diagnosis starts from them.
    """

    infeasibility: float
    row_multipliers: np.ndarray
    bound_multipliers: np.ndarray
    parts: tuple[ConflictPart, ...]


@dataclass(frozen=True)
class LPResult:
    """The outcome of `blendkit.engine.solve`.

    `status` is one of STATUSES. When optimal, `x` is the solution, `objective` is c·x,
    `marginals_ub` / `marginals_eq` are d(objective)/d(b_ub) and d(objective)/d(b_eq)
    (the sign convention of scipy's linprog), and `reduced_costs` is c - A^T y per
    variable (d(objective)/d(bound) for a variable held at a bound); `basis` can start a
    later solve (`solve(..., basis=result.basis)`). Otherwise those are None, except
    `certificate` (and `farkas`, its row multipliers) when infeasible, and `ray`, a
    direction along which an unbounded objective falls.
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
    row_marginals: np.ndarray | None = None
    residual: float | None = None
    certificate: Certificate | None = None
    ray: np.ndarray | None = None
    basis: Basis | None = None
    warm_start: bool = False  # True when the solve started from the given basis
    algorithm: str = "primal"  # "primal" (two-phase) or "dual" (dual simplex); see the engine docs
    cost_ranges: np.ndarray | None = None  # with ranging=True: (n, 2) cost interval per variable
    bound_ranges: np.ndarray | None = None  # with ranging=True: (n + m, 2) room down/up of active bounds

    @property
    def farkas(self) -> np.ndarray | None:
        """The phase-one dual vector (one entry per row) that proves infeasibility."""
        return None if self.certificate is None else self.certificate.row_multipliers

    @property
    def success(self) -> bool:
        """True when an optimal solution was found."""
        return self.status == "optimal"


# Outcomes of `blendkit.engine.solve_mip`. "time_limit" also ends a search stopped by
# its node limit; "unbounded" means the LP relaxation is unbounded.
MIP_STATUSES = ("optimal", "infeasible", "unbounded", "time_limit", "numerical_trouble")


@dataclass(frozen=True)
class MIPResult:
    """The outcome of `blendkit.engine.solve_mip`, the branch and bound.

    `status` is one of MIP_STATUSES. `x` is the best solution found (None when none was):
    its integer columns are whole numbers exactly, each semi-continuous column is 0 or at
    least its threshold, and `objective` is c·x. `bound` is the best proven lower bound
    on the optimum and `gap` = (objective - bound) / |objective| (0 when they are equal,
    inf when there is no solution or the objective is 0 and the bound below it); an
    "optimal" result has a gap within the tolerances' relative or absolute gap.
    "time_limit" (time or node limit reached) keeps the best solution, if any, with its
    proven gap. `lp_objective` is the optimum of the root LP relaxation (every integer
    column free to take fractions, every semi-continuous column anywhere from 0 to its
    upper bound; after bound propagation, so it may lie above the plain LP's optimum).
    `nodes` counts the nodes of the search tree whose LP relaxation was solved (the LPs
    of strong branching and of the heuristics are not nodes), `iterations` the simplex
    iterations of every LP, `seconds` the wall time. `fixed_lp` is the LP with every
    integer column fixed at its value in x and each semi-continuous column held off (at
    0) or on (at least its threshold), solved at x: its marginals, reduced costs, basis
    and (with ranging=True) ranges are those of the solution found.
    """

    status: str
    message: str
    x: np.ndarray | None
    objective: float | None
    bound: float | None
    gap: float
    lp_objective: float | None
    nodes: int
    iterations: int
    seconds: float
    fixed_lp: LPResult | None = None

    @property
    def success(self) -> bool:
        """True when a proven optimal solution was found."""
        return self.status == "optimal"

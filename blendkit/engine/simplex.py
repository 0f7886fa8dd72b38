"""Two-phase, bounded-variable revised simplex method, with the dual simplex first when a
dual feasible basis is at hand.

The algorithm alone lives here; `standard_form` prepares its input and `solve` turns its
outcome into a result. The iterations are in `primal` and `dual`, their shared parts in
`pricing` (Devex, the stall watch), `ratio_test` and `simplex_state` (the matrix, values,
basis and its refactorisation); `ranging` ranges an optimal basis. Notation, used only
inside the engine:

    A x - s + sum_k sign_k e_{row_k} a_k = 0

with n structural variables x (bounds col_lower..col_upper), m logical variables
s = A x (bounds row_lower..row_upper) and, in phase one, artificial variables a >= 0,
one for each row whose logical could not start inside its bounds. The combined
matrix is M = [A, -I, artificial columns]; z is the vector of all variables.

    head[r]  the variable basic in position r of the basis B
    y        simplex multipliers (duals): B^T y = c_B
    d        reduced costs: d = c - M^T y
    alpha    the entering column in the current basis: B alpha = M_q
    delta    the change of the basic variables per unit step of the entering one
    theta    the step length

When the basis of logicals (or a given basis) is dual feasible, the dual simplex solves
from it, going on with costs perturbed against a degenerate stall once one begins
(`perturbation`; the true costs are put back at the end and a primal pass removes any
dual infeasibility that leaves); if it
finds the problem infeasible, stalls or runs into trouble, the two-phase primal method
starts over. Phase one minimises the sum of the artificial variables from
a basis of logicals and artificials; if that minimum stays positive the problem is
infeasible, and the phase-one duals are returned as a certificate. Phase two starts from
the phase-one basis, with the artificials fixed at zero, and minimises c·x. Nonbasic
variables sit at a bound (or at zero when free), so upper bounds, fixed and free
variables and ranged rows need no extra rows. The ratio test is Harris's two-pass test;
when the objective stops moving for a while the rule switches to Bland's smallest-index
rule, which cannot cycle, until it moves again.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blendkit.engine.basis_factor import SingularBasis
from blendkit.engine.certificate import proves_infeasible
from blendkit.engine.dual import run_dual, start_dual, start_shifted
from blendkit.engine.pricing import prices_out
from blendkit.engine.primal import run_primal
from blendkit.engine.ranging import bound_ranges, cost_ranges
from blendkit.engine.simplex_state import SimplexState
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import DRIVE_OUT_PIVOT, Tolerances


@dataclass(frozen=True)
class SimplexOutcome:
    """What the algorithm found, in the internal form's terms."""

    status: str  # optimal | infeasible | unbounded | iteration_limit | numerical_trouble
    message: str
    x: np.ndarray | None  # structural values
    y: np.ndarray | None  # phase-two duals, one per row
    d: np.ndarray | None  # phase-two reduced costs of the structurals
    iterations: int
    phase_one_iterations: int
    farkas: np.ndarray | None = None  # phase-one duals (one per row) when infeasible
    farkas_d: np.ndarray | None = None  # phase-one reduced costs of the structurals
    farkas_at_upper: np.ndarray | None = None  # which bound each nonbasic x and s sat at
    infeasibility: float | None = None  # the phase-one minimum (sum of artificials)
    ray: np.ndarray | None = None  # direction of unboundedness of x
    head: np.ndarray | None = None  # final basis: variable in each position
    at_upper: np.ndarray | None = None  # final nonbasic position of x and s
    warm: bool = False  # phase two started straight from a given basis
    algorithm: str = "primal"  # "primal" (two-phase) or "dual" (dual simplex from a dual feasible basis)
    cost_ranges: np.ndarray | None = None  # (n, 2): cost of each x over which the basis stays optimal
    bound_ranges: np.ndarray | None = None  # (n + m, 2): how far each active bound may move down, up


def run_simplex(
    sf: StandardForm, tol: Tolerances, max_iterations: int, basis=None, allow_dual: bool = True,
    ranging: bool = False, dual_only: bool = False,
) -> SimplexOutcome:
    """Solve the internal-form LP `sf`; see the module docstring.

    `basis` is an optional (head, at_upper) pair from an earlier outcome to start from;
    when it is primal feasible here, phase one is skipped. `allow_dual=False` keeps to the
    two-phase primal method; `dual_only=True` runs the dual simplex from `basis` and
    nothing else (`_dual_only`); `ranging=True` adds the cost and bound ranges to an
    optimal outcome.
    """
    state = SimplexState(sf, tol, max_iterations, short_run=basis is not None)
    crossed = _crossed_bounds(state)
    if crossed:
        return _stopped(state, "infeasible", f"{crossed} has a lower bound above its upper bound")
    try:
        if dual_only:
            return _dual_only(state, basis, ranging)
        warm = basis is not None and state.start_from(*basis)
        if not warm and allow_dual:
            outcome = _try_dual(state, basis, ranging)
            if outcome is None and basis is not None:  # the given basis led nowhere: as from scratch
                outcome = _try_dual(state, None, ranging)
            if outcome is not None:
                return outcome
        return _two_phase(state, warm, ranging)
    except SingularBasis as error:
        return _stopped(state, "numerical_trouble", str(error))


def _crossed_bounds(state: SimplexState) -> str:
    """The first variable or row whose lower bound is above its upper bound, or ""."""
    crossed = np.flatnonzero(state.lower > state.upper)
    if not crossed.size:
        return ""
    j = int(crossed[0])
    return f"variable {j}" if j < state.n else f"row {j - state.n}"


def _try_dual(state: SimplexState, basis, ranging: bool) -> SimplexOutcome | None:
    """Solve with the dual simplex when a dual feasible basis is at hand.

    Returns the outcome, or None to hand over to the two-phase primal method: when
    no dual feasible basis is at hand, when the dual simplex finds the problem
    infeasible (phase one then proves it and gives the certificate), or when it
    stalls or runs into trouble.
    """
    if not start_dual(state, basis):
        return None if basis is None else _try_shifted(state, basis, ranging)
    status = _dual_run(state)
    if status == "unbounded":
        return _unbounded(state, phase_one=0)
    if status != "optimal":
        return None
    return optimal_outcome(state, phase_one=0, warm=basis is not None, algorithm="dual", ranging=ranging)


def _try_shifted(state: SimplexState, basis, ranging: bool) -> SimplexOutcome | None:
    """From a given basis that is neither primal nor dual feasible (a workbook whose prices
    and limits both changed since): the dual simplex with the costs shifted where the
    basis is not dual feasible (`dual.start_shifted`) to a primal feasible basis, then the
    true costs back and the primal simplex to the optimum. None hands over to the
    two-phase method from scratch (so infeasibility is still proved by phase one)."""
    shifted = start_shifted(state, basis)
    if shifted is None:
        return None
    status = run_dual(state, shifted, perturb=True)
    if status != "optimal":
        return None
    cost = np.concatenate([state.c_struct, np.zeros(state.m)])
    state.d = state.fresh_duals(cost)
    if not _dual_feasible(state):
        status = run_primal(state, cost)
    if status == "unbounded":
        return _unbounded(state, phase_one=0)
    if status != "optimal":
        return None
    return optimal_outcome(state, phase_one=0, warm=True, algorithm="dual", ranging=ranging)


def _dual_run(state: SimplexState) -> str:
    """The dual simplex's iterations from the dual feasible start set up, with the true
    costs; the status of `run_dual`, or of the primal pass after it."""
    cost = np.concatenate([state.c_struct, np.zeros(state.m)])
    status = run_dual(state, cost, perturb=True)  # ends with the true costs' duals
    if status == "optimal" and not _dual_feasible(state):
        # A primal pass from this primal feasible basis removes the dual
        # infeasibility left by the perturbation and by rounding.
        status = run_primal(state, cost)
    return status


def _dual_only(state: SimplexState, basis, ranging: bool) -> SimplexOutcome:
    """The dual simplex from `basis`, with no two-phase method after it: for a re-solve
    after one bound moved (`lp.one_sided`), where a move past what the other limits allow
    must not cost a phase one from scratch. It ends optimal, unbounded, infeasible only
    when the pivot row it stopped on proves it (`_ray_farkas`), or in numerical trouble
    (no dual feasible start at this basis, a stall, an unproven verdict)."""
    if not start_dual(state, basis):
        return _stopped(state, "numerical_trouble", "no dual feasible start at the given basis")
    status = _dual_run(state)
    if status == "optimal":
        return optimal_outcome(state, phase_one=0, warm=basis is not None, algorithm="dual", ranging=ranging)
    if status == "unbounded":
        return _unbounded(state, phase_one=0)
    y = _ray_farkas(state) if status == "infeasible" else None
    if y is None:
        return _stopped(state, "numerical_trouble", f"the dual simplex alone ended {status}, unproven")
    n, m = state.n, state.m
    head = state.head
    outside = np.maximum(state.lower[head] - state.z[head], state.z[head] - state.upper[head])
    return SimplexOutcome(
        status="infeasible", message="no point meets every constraint: the dual simplex's last pivot row proves it",
        x=None, y=None, d=None, iterations=state.iterations, phase_one_iterations=0, farkas=y,
        farkas_d=-np.asarray(state.A.T @ y).ravel(), farkas_at_upper=state.at_upper[: n + m].copy(),
        infeasibility=float(outside.max(initial=0.0)), algorithm="dual",
    )


def _ray_farkas(state: SimplexState) -> np.ndarray | None:
    """Row multipliers from the dual simplex's last pivot row rho = B^-T e_r, with the
    sign that proves (Farkas, `certificate.proves_infeasible`) that no point meets every
    row and bound of the scaled problem; None when neither sign does."""
    n, m = state.n, state.m
    form = StandardForm(c=state.c_struct, A=state.A, row_lower=state.lower[n : n + m], row_upper=state.upper[n : n + m],
                        col_lower=state.lower[:n], col_upper=state.upper[:n])
    for y in (state.rho, -state.rho):
        if y is not None and proves_infeasible(form, y):
            return y.copy()
    return None


def _dual_feasible(state: SimplexState) -> bool:
    """True when no nonbasic variable's reduced cost (`state.d`) asks it to move."""
    rise, fall = state.mobility()
    return prices_out(state.d, rise, fall, state.tol.dual_feasibility)


def _two_phase(state: SimplexState, warm: bool, ranging: bool) -> SimplexOutcome:
    """Phase one from the basis of logicals and artificials (unless `warm`: the state
    already holds a primal feasible basis), then phase two."""
    m = state.m
    if not warm:
        state.start()
    k = state.art_row.size
    if k:
        stop = _phase_one(state)
        if stop is not None:
            return stop
    phase_one = state.iterations
    _end_phase_one(state)
    status = run_primal(state, np.concatenate([state.c_struct, np.zeros(m + k)]))
    if status == "unbounded":
        return _unbounded(state, phase_one=phase_one)
    if status == "iteration_limit":
        return _stopped(state, status, f"iteration limit ({state.max_iterations}) reached in phase two",
                        phase_one=phase_one)
    if status != "optimal":
        return _stopped(state, "numerical_trouble", f"phase two ended {status}", phase_one=phase_one)
    return optimal_outcome(state, phase_one=phase_one, warm=warm, algorithm="primal", ranging=ranging)


def _phase_one(state: SimplexState) -> SimplexOutcome | None:
    """Minimise the sum of the artificials; the outcome when that ends the solve
    (infeasible, out of iterations, trouble), None to go on to phase two."""
    n, m, k = state.n, state.m, state.art_row.size
    status = run_primal(state, np.concatenate([np.zeros(n + m), np.ones(k)]))
    if status == "iteration_limit":
        return _stopped(state, status, "iteration limit reached in phase one")
    if status != "optimal":
        return _stopped(state, "numerical_trouble", f"phase one ended {status}")
    infeasibility = float(state.z[n + m :].sum())
    finite = np.concatenate([state.lower[: n + m], state.upper[: n + m]])
    finite = finite[np.isfinite(finite)]
    scale = 1.0 + (np.abs(finite).max() if finite.size else 0.0)
    if infeasibility > state.tol.infeasibility * scale:
        return _infeasible(state, infeasibility)
    if infeasibility > state.tol.primal_feasibility and _duals_prove_infeasible(state):
        # Below that threshold (scaled by the largest bound of the whole LP, which may
        # sit on an unrelated column) a real gap may still hide: the duals decide.
        return _infeasible(state, infeasibility)
    return None


def _duals_prove_infeasible(state: SimplexState) -> bool:
    """True when phase one's duals prove, on the (scaled) problem itself, that no point exists."""
    n, m = state.n, state.m
    form = StandardForm(c=state.c_struct, A=state.A, row_lower=state.lower[n : n + m],
                        row_upper=state.upper[n : n + m], col_lower=state.lower[:n], col_upper=state.upper[:n])
    return proves_infeasible(form, state.y)


def _end_phase_one(state: SimplexState) -> None:
    """Fix the artificials at zero for phase two, after swapping out those still basic."""
    n, m = state.n, state.m
    if state.basic[n + m :].any():
        _drive_out_artificials(state)
    state.lower[n + m :] = 0.0
    state.upper[n + m :] = 0.0
    state.z[n + m :] = 0.0
    state.refactor()


def _drive_out_artificials(state: SimplexState) -> None:
    """Swap artificials still basic (at zero) for structurals or logicals where possible.

    A degenerate pivot: nothing moves, but the basis then describes the real problem,
    so a later warm start can reuse it. A row whose artificial cannot leave is
    redundant; the artificial stays basic, fixed at zero.
    """
    n, m = state.n, state.m
    for r in np.flatnonzero(state.head >= n + m):
        row = state.pivot_row(r)[: n + m]  # row r of B^-1 M
        row[state.basic[: n + m]] = 0.0
        q = int(np.argmax(np.abs(row)))
        if abs(row[q]) <= DRIVE_OUT_PIVOT:
            continue
        alpha = state.factor.ftran(state.column(q))
        p = int(state.head[r])
        state.z[p] = 0.0
        state.basic[p] = False
        state.basic[q] = True
        state.head[r] = q
        state.factor.update(r, alpha)
        if state.factor.due:
            state.refactor()
    state.refactor()


# ----- outcomes -----------------------------------------------------------------------


def optimal_outcome(state: SimplexState, *, phase_one: int, warm: bool, algorithm: str, ranging: bool) -> SimplexOutcome:
    """The outcome at an optimal basis (duals and reduced costs already computed)."""
    n, m = state.n, state.m
    return SimplexOutcome(
        status="optimal",
        message="optimal solution found",
        x=state.z[:n].copy(),
        y=state.y.copy(),
        d=state.d[:n].copy(),
        iterations=state.iterations,
        phase_one_iterations=phase_one,
        head=state.head.copy(),
        at_upper=state.at_upper[: n + m].copy(),
        warm=warm,
        algorithm=algorithm,
        cost_ranges=cost_ranges(state) if ranging else None,
        bound_ranges=bound_ranges(state) if ranging else None,
    )


def _infeasible(state: SimplexState, infeasibility: float) -> SimplexOutcome:
    """The outcome when phase one cannot reach zero, with its duals as the certificate."""
    n, m = state.n, state.m
    return SimplexOutcome(
        status="infeasible",
        message=f"no point meets every constraint: phase one left a total infeasibility of {infeasibility:.3g}",
        x=None,
        y=None,
        d=None,
        iterations=state.iterations,
        phase_one_iterations=state.iterations,
        farkas=state.y.copy(),
        farkas_d=state.d[:n].copy(),
        farkas_at_upper=state.at_upper[: n + m].copy(),
        infeasibility=infeasibility,
    )


def _unbounded(state: SimplexState, *, phase_one: int) -> SimplexOutcome:
    """The outcome when the objective falls without limit along `state.ray`."""
    return _stopped(state, "unbounded", "the objective can fall without limit", ray=state.ray[: state.n].copy(),
                    phase_one=phase_one)


def _stopped(state: SimplexState, status: str, message: str, *, ray=None, phase_one=None) -> SimplexOutcome:
    """An outcome without a solution."""
    return SimplexOutcome(
        status=status,
        message=message,
        x=None,
        y=None,
        d=None,
        iterations=state.iterations,
        phase_one_iterations=state.iterations if phase_one is None else phase_one,
        ray=ray,
    )

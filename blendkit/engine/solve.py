"""The engine's public entry point: check arguments, scale, solve, unscale, check the answer."""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from blendkit.engine.certificate import certificate, proves_infeasible, proves_unbounded
from blendkit.engine.result import Basis, LPResult
from blendkit.engine.scaling import Scaling, find_scaling, scale_form
from blendkit.engine.simplex import SimplexOutcome, run_simplex
from blendkit.engine.sparse import is_sparse
from blendkit.engine.standard_form import StandardForm, held_form, to_standard_form
from blendkit.engine.tolerances import (
    CERTIFICATE_PROOF, ITERATION_LIMIT_MIN, ITERATION_LIMIT_PER_LINE, RESIDUAL_RETRY, Tolerances,
)
from blendkit.engine.verify import worst_violation

# The engine's matrices are small: threaded BLAS only adds overhead, and on a busy
# machine far more (a 480 x 480 LU took 50 times longer with two threads than with one
# on our 2-core development machine). Each solve runs with one BLAS thread.
_blas = None


class one_blas_thread:  # noqa: N801 - used as a function: `with one_blas_thread():`
    """Hold every loaded BLAS library to one thread for the duration (threadpoolctl).

    The libraries are found once; each solve then only sets and restores their thread
    counts, which costs microseconds rather than a fresh survey of the process. A plain
    class rather than a generator: a re-solve enters it every call.
    """

    __slots__ = ("before",)

    def __enter__(self) -> None:
        """Set each library to one thread, remembering its count."""
        global _blas
        if _blas is None:
            from threadpoolctl import ThreadpoolController

            _blas = [lib for lib in ThreadpoolController().lib_controllers if lib.user_api == "blas"]
        self.before = [lib.get_num_threads() for lib in _blas]
        for lib, threads in zip(_blas, self.before):
            if threads != 1:
                lib.set_num_threads(1)

    def __exit__(self, *exc) -> None:
        """Give each library its thread count back."""
        for lib, threads in zip(_blas, self.before):
            if threads != 1:
                lib.set_num_threads(threads)


# OpenBLAS runs an operation on a matrix this small in the calling thread whatever its
# thread count: each BLAS and LAPACK call a dense re-solve makes (LU and its solves, the
# matrix-vector products with B^-1, M and A^T, the inverse's rank-one update) took the
# same time with one thread and with two up to a 90 x 250 M (22,500 entries) on the
# 2-core development machine (load 0.4-1.6); from 96 rows the rank-one update took 7
# times longer with two, from about 30,000 entries the product with A^T 1.5 times.
# A re-solve of a problem within both limits (a little inside them) skips `one_blas_thread`.
ONE_THREAD_ROWS = 88
ONE_THREAD_ENTRIES = 20_000


def blas_threads_idle(m: int, n: int) -> bool:
    """True when BLAS stays in one thread on a problem of m rows and n columns anyway (held
    dense: m rows of M = [A, -I]), so that a re-solve need not hold it to one."""
    return m <= ONE_THREAD_ROWS and m * (n + m) <= ONE_THREAD_ENTRIES


def solve(
    c,
    A_ub=None,
    b_ub=None,
    A_eq=None,
    b_eq=None,
    bounds=None,
    *,
    basis: Basis | None = None,
    tolerances: Tolerances | None = None,
    max_iterations: int | None = None,
    scale: bool = True,
    algorithm: str = "auto",
    ranging: bool = False,
) -> LPResult:
    """Minimise c·x subject to A_ub x <= b_ub, A_eq x == b_eq and bounds on x.

    The arguments mean what they mean to `scipy.optimize.linprog`: `bounds` is None
    (every x >= 0), one (lower, upper) pair for all variables, or a pair per variable,
    with None for "no bound". `basis` (from an earlier result of a problem of the same
    shape) starts from that basis: after a change of costs only, the solve goes straight
    to phase two. Inputs are never modified. Infeasible, unbounded and other outcomes come
    back as the result's `status`; only malformed arguments raise ValueError.
    """
    form = to_standard_form(c, A_ub, b_ub, A_eq, b_eq, bounds)
    return solve_form(
        form, basis=basis, tolerances=tolerances, max_iterations=max_iterations, scale=scale, algorithm=algorithm,
        ranging=ranging,
    )


def solve_form(
    form: StandardForm,
    *,
    basis: Basis | None = None,
    tolerances: Tolerances | None = None,
    max_iterations: int | None = None,
    scale: bool = True,
    algorithm: str = "auto",
    ranging: bool = False,
) -> LPResult:
    """Minimise c·x subject to row_lower <= A x <= row_upper and col_lower <= x <= col_upper.

    The general form behind `solve`, with ranged rows; MPS models come in this form.
    `row_marginals` of the result holds d(objective)/d(active row bound) for every row.
    `algorithm` is "auto" (the dual simplex when a dual feasible basis is at hand, else
    the two-phase primal method), "primal" (always the two-phase primal method) or "dual"
    (the dual simplex from `basis` alone, for a re-solve after a bound moved: never a
    phase one; infeasible only with the Farkas proof of its last pivot row, numerical
    trouble when it cannot finish).
    `ranging=True` adds `cost_ranges` to an optimal result: for each variable, the
    interval of its cost over which the optimal basis stays optimal; and `bound_ranges`:
    for each variable and then each row, how far its active bound may move down and up
    with the same basis, so that the marginals and reduced costs still hold.
    """
    if algorithm not in ("auto", "primal", "dual"):
        raise ValueError(f'algorithm must be "auto", "primal" or "dual", not {algorithm!r}')
    refuse_not_finite(form)
    form = held_form(form)
    tol = tolerances or Tolerances()
    m, n = form.shape
    if max_iterations is None:
        max_iterations = max(ITERATION_LIMIT_MIN, ITERATION_LIMIT_PER_LINE * (m + n))
    scaling = find_scaling(form.A) if scale else Scaling(np.ones(m), np.ones(n))
    scaled = scale_form(form, scaling)
    start = None
    if basis is not None and tuple(basis.shape) == (m, n):
        start = (basis.head, basis.at_upper)
    with one_blas_thread():
        outcome = run_simplex(scaled, tol, max_iterations, basis=start, allow_dual=algorithm != "primal",
                              ranging=ranging, dual_only=algorithm == "dual")
    result, trusted = checked_result(form, scaling, outcome, tol)
    if trusted and scale and result.status == "optimal" and result.residual > RESIDUAL_RETRY:
        # Near-dependent rows, loosened by the scaling: keep the more exact of the two.
        plain = solve_form(form, basis=basis, tolerances=tolerances, max_iterations=max_iterations, scale=False,
                           algorithm=algorithm, ranging=ranging)
        return plain if plain.status == "optimal" and plain.residual < result.residual else result
    if trusted:
        return result
    if scale:  # a phase one or a ray misled by the scaling: once more, unscaled
        return solve_form(form, basis=basis, tolerances=tolerances, max_iterations=max_iterations, scale=False,
                          algorithm=algorithm, ranging=ranging)
    if result.status == "infeasible":
        return replace(result, status="numerical_trouble", message=(
            f"{result.message}, but its certificate does not prove it (tolerance {CERTIFICATE_PROOF:g})"))
    if result.status == "unbounded":
        return replace(result, status="numerical_trouble", ray=None, message=(
            f"{result.message}, but its ray does not prove it (tolerance {CERTIFICATE_PROOF:g})"))
    return result


def refuse_not_finite(form: StandardForm) -> None:
    """Raise ValueError for a cost or matrix entry that is not a finite number, or a bound
    that is NaN (as `solve` refuses them): NaN compares false, so no check after the solve
    would notice it."""
    data = form.A.data if is_sparse(form.A) else form.A
    if not np.isfinite(form.c).all():
        raise ValueError("c must contain only finite numbers")
    if not np.isfinite(data).all():
        raise ValueError("A must contain only finite numbers")
    for name in ("row_lower", "row_upper", "col_lower", "col_upper"):
        if np.isnan(getattr(form, name)).any():
            raise ValueError(f"{name} must not contain NaN")


def checked_result(form: StandardForm, scaling: Scaling, outcome: SimplexOutcome, tol: Tolerances) -> tuple[LPResult, bool]:
    """The result in original units, and whether it stands: False for an optimum whose
    residuals broke the tolerance, an infeasible verdict its certificate does not prove
    (scaling can hide near-dependent rows), or an unbounded one whose ray crosses a bound
    or does not lower the cost in the original units; the caller then solves once more
    unscaled."""
    if outcome.status == "optimal":
        result = _with_solution(form, scaling, outcome, tol)
        return result, result.status == "optimal"
    result = _without_solution(form, scaling, outcome, tol)
    if result.certificate is not None:
        return result, proves_infeasible(form, result.certificate.row_multipliers)
    if result.status == "unbounded":
        return result, proves_unbounded(form, result.ray)
    return result, True


def _without_solution(form: StandardForm, scaling: Scaling, outcome: SimplexOutcome, tol: Tolerances) -> LPResult:
    """The result of a solve that found no optimum: the certificate or ray, in original units."""
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
        certificate=certificate(form, scaling, outcome, tol) if outcome.farkas is not None else None,
        ray=None if outcome.ray is None else outcome.ray * scaling.cols,
    )


def _with_solution(form: StandardForm, scaling: Scaling, outcome: SimplexOutcome, tol: Tolerances) -> LPResult:
    """The result of an optimal outcome, in original units, after the residual check."""
    m, n = form.shape
    basis = Basis(head=outcome.head, at_upper=outcome.at_upper, shape=(m, n))
    return checked_optimum(form, scaling, outcome.x, outcome.y, outcome.d, basis, tol, iterations=outcome.iterations,
                           phase_one_iterations=outcome.phase_one_iterations, warm=outcome.warm,
                           algorithm=outcome.algorithm, message=outcome.message, cost_ranges=outcome.cost_ranges,
                           bound_ranges=outcome.bound_ranges)


def checked_optimum(form: StandardForm, scaling: Scaling, x, y, d, basis: Basis, tol: Tolerances, *, iterations: int,
                    phase_one_iterations: int, warm: bool, algorithm: str, message: str = "optimal solution found",
                    cost_ranges=None, bound_ranges=None) -> LPResult:
    """The result at an optimum with values x, duals y and reduced costs d of the scaled
    problem (read, never kept), in original units after the residual check: status
    "optimal", or "numerical_trouble" when the residuals break the tolerance. A re-solve
    calls it on the simplex state's arrays, without a `SimplexOutcome` in between."""
    x = x * scaling.cols
    y = y * scaling.rows
    d = d / scaling.cols
    residual, where = worst_violation(form, x)
    status = "optimal"
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
        objective=float(form.c @ x),
        iterations=iterations,
        phase_one_iterations=phase_one_iterations,
        marginals_ub=y[: form.n_ub].copy(),
        marginals_eq=y[form.n_ub :].copy(),
        reduced_costs=d,
        row_marginals=y,
        residual=residual,
        basis=basis,
        warm_start=warm,
        algorithm=algorithm,
        cost_ranges=None if cost_ranges is None else cost_ranges / scaling.cols[:, None],
        bound_ranges=None if bound_ranges is None else bound_ranges
        * np.concatenate([scaling.cols, 1 / scaling.rows])[:, None],
    )

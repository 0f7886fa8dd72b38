"""HiGHS through highspy, its own Python package: the independent solver of the cross-check.

highspy is a dependency of blendkit. It is imported here when a cross-check runs (never
with --no-cross-check), so a run without one does not pay for loading it. The LP is handed
over as it is (row_lower <= A x <= row_upper, column bounds), HiGHS solves it with its
default options and prints nothing; `solve_with_highs` returns HiGHS's status in the
engine's words and its cost. Before any fork (the worker processes of --jobs) HiGHS's
threads are stopped, so that a worker's MIP cannot wait for threads it never had.
`blendkit.bench` builds its highspy models with `highs_lp` and `silent_highs` too.
"""

from __future__ import annotations

import ctypes
import os
import sys
from dataclasses import dataclass

import numpy as np

from blendkit.engine.sparse import is_sparse, sparse

# HiGHS's model statuses (by name) in the engine's words, as scipy's linprog and milp read
# them; any other status (an error, an interrupt) is numerical trouble. An empty model
# (no column) is solved: its cost is 0.
LP_STATUS = {
    "kOptimal": "optimal",
    "kModelEmpty": "optimal",
    "kInfeasible": "infeasible",
    "kModelError": "infeasible",
    "kUnbounded": "unbounded",
    "kIterationLimit": "iteration_limit",
    "kTimeLimit": "iteration_limit",
}
MIP_STATUS = {**LP_STATUS, "kIterationLimit": "time_limit", "kTimeLimit": "time_limit"}
OTHER_STATUS = "numerical_trouble"
# scipy.optimize.milp's integrality codes, which `solve_with_highs` takes: 0 continuous,
# 1 integer, 2 semi-continuous (0, or between the column's bounds).
_KINDS = ("kContinuous", "kInteger", "kSemiContinuous")
# True once this process has made a HiGHS instance here (HiGHS prints its banner only once).
_banner_out = False


@dataclass(frozen=True)
class HighsAnswer:
    """HiGHS's answer: its status in the engine's words (or ``refused: why``) and its cost
    (None unless optimal)."""

    status: str
    cost: float | None


def refusal(c, A, row_lower, row_upper, col_lower, col_upper) -> str | None:
    """Why the LP cannot be handed to HiGHS as it is, or None: HiGHS would read a NaN cost or
    coefficient as a number and solve something else, so these are refused here."""
    values = A.data if is_sparse(A) else np.asarray(A)
    if not np.all(np.isfinite(c)):
        return "a cost that is not a finite number"
    if not np.all(np.isfinite(values)):
        return "a coefficient that is not a finite number"
    if any(np.isnan(side).any() for side in (row_lower, row_upper, col_lower, col_upper)):
        return "a bound that is not a number"
    if np.any(np.asarray(col_lower) == np.inf) or np.any(np.asarray(col_upper) == -np.inf):
        return "a column bound of +inf below or -inf above"
    return None


def highs_lp(c, A, row_lower, row_upper, col_lower, col_upper, integrality=None):
    """The LP ``row_lower <= A x <= row_upper, col_lower <= x <= col_upper``, minimising
    ``c x``, as a highspy.HighsLp (A dense or sparse; `integrality` in milp's codes)."""
    import highspy

    start, index, value, (rows, columns) = _by_columns(A)
    lp = highspy.HighsLp()
    lp.num_col_, lp.num_row_ = columns, rows
    lp.col_cost_ = np.asarray(c, dtype=float)
    lp.col_lower_, lp.col_upper_ = np.asarray(col_lower, dtype=float), np.asarray(col_upper, dtype=float)
    lp.row_lower_, lp.row_upper_ = np.asarray(row_lower, dtype=float), np.asarray(row_upper, dtype=float)
    lp.a_matrix_.format_ = highspy.MatrixFormat.kColwise
    lp.a_matrix_.start_ = start
    lp.a_matrix_.index_ = index
    lp.a_matrix_.value_ = value
    if integrality is not None and np.any(integrality):
        lp.integrality_ = [getattr(highspy.HighsVarType, _KINDS[int(kind)]) for kind in integrality]
    return lp


def _by_columns(A) -> tuple[np.ndarray, np.ndarray, np.ndarray, tuple[int, int]]:
    """A's non-zeros by columns (CSC: starts, row indices, values) and its shape; a dense A
    by numpy alone, the same arrays scipy.sparse.csc_matrix gives, so that a plain solve's
    cross-check does not import scipy (blendkit.engine.sparse)."""
    if is_sparse(A):
        A = sparse().csc_matrix(A, dtype=float)
        return A.indptr, A.indices, A.data, A.shape
    A = np.asarray(A, dtype=float)
    if A.ndim != 2:
        A = np.atleast_2d(A)
    columns, rows = np.nonzero(A.T)  # by column, then row, as CSC holds them
    counts = np.bincount(columns, minlength=A.shape[1])
    start = np.concatenate([[0], np.cumsum(counts)]).astype(np.int32)
    return start, rows.astype(np.int32), A.T[columns, rows], A.shape


def silent_highs():
    """A HiGHS instance that prints nothing; the first one made in a process prints a
    banner from C, so that one is made with the process's stdout sent to /dev/null."""
    global _banner_out
    import highspy

    if _banner_out:
        h = highspy.Highs()
        h.setOptionValue("output_flag", False)
        return h
    sys.stdout.flush()
    saved = os.dup(1)
    try:
        with open(os.devnull, "w") as devnull:
            os.dup2(devnull.fileno(), 1)
            h = highspy.Highs()
            try:
                ctypes.CDLL(None).fflush(None)  # push the banner out while stdout is /dev/null
            except (OSError, AttributeError):
                pass
    finally:
        os.dup2(saved, 1)
        os.close(saved)
    _banner_out = True
    h.setOptionValue("output_flag", False)
    return h


def _stop_highs_threads() -> None:
    """Before a fork: a child inherits HiGHS's scheduler but not its worker threads, and its
    next MIP waits for them forever; stopped now, HiGHS starts them afresh when next run."""
    highspy = sys.modules.get("highspy")
    if highspy is not None:
        highspy.Highs.resetGlobalScheduler(True)


os.register_at_fork(before=_stop_highs_threads)


def solve_with_highs(c, A, row_lower, row_upper, col_lower, col_upper, *, integrality=None,
                     time_limit: float | None = None, basis=None) -> HighsAnswer:
    """Solve the LP (a MIP when `integrality` is given, within `time_limit` seconds when given)
    with HiGHS, presolve and all on their defaults; ``refused: why`` for an LP it cannot take.
    `basis` (an engine Basis of this LP) is where HiGHS's simplex starts: HiGHS checks it
    in its own arithmetic and iterates on from it unless it is optimal there (a basis it
    cannot use, it drops, and solves from scratch)."""
    why = refusal(c, A, row_lower, row_upper, col_lower, col_upper)
    if why is not None:
        return HighsAnswer(f"refused: {why}", None)
    import highspy

    h = silent_highs()
    if time_limit is not None:
        h.setOptionValue("time_limit", float(time_limit))
    if h.passModel(highs_lp(c, A, row_lower, row_upper, col_lower, col_upper, integrality)) == highspy.HighsStatus.kError:
        return HighsAnswer("refused: HiGHS would not load the LP", None)
    if basis is not None and integrality is None:
        h.setBasis(highs_basis(basis, np.concatenate([col_lower, row_lower]), np.concatenate([col_upper, row_upper])))
    h.run()
    words = LP_STATUS if integrality is None else MIP_STATUS
    status = words.get(h.getModelStatus().name, OTHER_STATUS)
    return HighsAnswer(status, float(h.getInfo().objective_function_value) if status == "optimal" else None)


def highs_basis(basis, lower: np.ndarray, upper: np.ndarray):
    """An engine Basis (structurals, then the rows' activities) as a highspy.HighsBasis: a
    basic variable is basic; a nonbasic one sits at the bound the engine had it at (its
    upper bound only where that is finite), or at zero when it has no finite bound."""
    import highspy

    status = highspy.HighsBasisStatus
    n = len(lower) - basis.shape[0]
    basic = np.zeros(len(lower), dtype=bool)
    basic[np.asarray(basis.head)] = True
    at_upper = np.asarray(basis.at_upper, dtype=bool) & np.isfinite(upper)
    codes = np.where(basic, 0, np.where(at_upper, 1, np.where(np.isfinite(lower), 2, np.where(np.isfinite(upper), 1, 3))))
    words = (status.kBasic, status.kUpper, status.kLower, status.kZero)
    states = [words[k] for k in codes.tolist()]
    answer = highspy.HighsBasis()
    answer.col_status, answer.row_status = states[:n], states[n:]
    answer.valid = True
    return answer

"""HiGHS through highspy, its own Python interface: the one home of every highspy import.

highspy is installed by the test extra only (``pip install '.[test]'``), not by blendkit
itself, so it is imported here when a part of the benchmark that needs it runs, never
when `blendkit.bench` is imported. scipy's ``linprog(method="highs")``, used for the
blend LPs, comes with scipy and needs no extra.
"""

from __future__ import annotations

import ctypes
import os
import sys

# What to print, on one line, when highspy is missing.
MISSING_HIGHSPY = ("blendkit.bench needs highspy, which only the test extra installs: "
                   "pip install '.[test]'")


class MissingTestExtra(ImportError):
    """A package that only the test extra installs is missing; the message says what to do."""


def highspy_module():
    """The highspy module, imported now; MissingTestExtra when it is not installed."""
    try:
        import highspy
    except ImportError as error:
        raise MissingTestExtra(MISSING_HIGHSPY) from error
    return highspy


def model_status(h) -> str:
    """HiGHS's model status in the engine's vocabulary."""
    highspy = highspy_module()
    status = h.getModelStatus()
    names = {
        highspy.HighsModelStatus.kOptimal: "optimal",
        highspy.HighsModelStatus.kInfeasible: "infeasible",
        highspy.HighsModelStatus.kUnbounded: "unbounded",
        highspy.HighsModelStatus.kIterationLimit: "iteration_limit",
    }
    return names.get(status, h.modelStatusToString(status))


def silent_highs():
    """A HiGHS instance that prints nothing; the first one made in a process prints a
    banner from C, so that one is made with the process's stdout sent to /dev/null."""
    highspy = highspy_module()
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
    h.setOptionValue("output_flag", False)
    return h



def highs_lp(c, A_ub, b_ub, A_eq, b_eq, bounds):
    """linprog's arguments as a highspy.HighsLp (rows: A_ub's, then A_eq's; columns by
    `bounds`, None read as no bound), built once so that timing leaves it out."""
    import numpy as np
    import scipy.sparse as sp

    highspy = highspy_module()
    n = len(c)
    parts = [sp.csr_matrix(a) for a in (A_ub, A_eq) if a is not None]
    A = sp.vstack(parts, format="csc") if parts else sp.csc_matrix((0, n))
    b_ub = np.zeros(0) if b_ub is None else np.asarray(b_ub, dtype=float)
    b_eq = np.zeros(0) if b_eq is None else np.asarray(b_eq, dtype=float)
    pairs = np.array([(-np.inf if lo is None else lo, np.inf if hi is None else hi) for lo, hi in bounds], dtype=float)
    lp = highspy.HighsLp()
    lp.num_col_, lp.num_row_ = n, A.shape[0]
    lp.col_cost_ = np.asarray(c, dtype=float)
    lp.col_lower_, lp.col_upper_ = pairs[:, 0], pairs[:, 1]
    lp.row_lower_ = np.concatenate([np.full(b_ub.size, -np.inf), b_eq])
    lp.row_upper_ = np.concatenate([b_ub, b_eq])
    lp.a_matrix_.format_ = highspy.MatrixFormat.kColwise
    lp.a_matrix_.start_ = A.indptr
    lp.a_matrix_.index_ = A.indices
    lp.a_matrix_.value_ = A.data
    return lp


def run_highs(lp):
    """A fresh silent Highs with `lp` passed in and run (presolve on, its default)."""
    highspy = highspy_module()
    h = highspy.Highs()
    h.setOptionValue("output_flag", False)
    h.passModel(lp)
    h.run()
    return h


def highs_answer(h) -> tuple[str, float | None]:
    """(status, objective) of a run Highs, in the engine's vocabulary."""
    status = model_status(h)
    return status, h.getInfo().objective_function_value if status == "optimal" else None

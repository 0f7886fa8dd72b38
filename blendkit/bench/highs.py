"""HiGHS through highspy, its own Python interface, for the benchmark.

highspy is a dependency of blendkit (its cross-check, `blendkit.lp.highs`, which builds the
models and silences HiGHS for both). The benchmark imports it when a part that needs it
runs, never when `blendkit.bench` is imported, and ends with a one-line message when an
installation lacks it. scipy's ``linprog(method="highs")``, used for the blend LPs, comes
with scipy.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from blendkit.lp import highs as lp_highs

# What to print, on one line, when highspy is missing.
MISSING_HIGHSPY = ("blendkit.bench needs highspy, a dependency of blendkit missing from this installation: "
                   "pip install highspy")


class MissingHighspy(ImportError):
    """highspy is missing from the installation; the message says what to do."""


def highspy_module():
    """The highspy module, imported now; MissingHighspy when it is not installed."""
    try:
        import highspy
    except ImportError as error:
        raise MissingHighspy(MISSING_HIGHSPY) from error
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
    """A silent HiGHS instance (`blendkit.lp.highs.silent_highs`); MissingHighspy when
    highspy is missing."""
    highspy_module()
    return lp_highs.silent_highs()


def highs_lp(c, A_ub, b_ub, A_eq, b_eq, bounds):
    """linprog's arguments as a highspy.HighsLp (rows: A_ub's, then A_eq's; columns by
    `bounds`, None read as no bound), built once so that timing leaves it out."""
    highspy_module()
    n = len(c)
    parts = [sp.csr_matrix(a) for a in (A_ub, A_eq) if a is not None]
    A = sp.vstack(parts, format="csc") if parts else sp.csc_matrix((0, n))
    b_ub = np.zeros(0) if b_ub is None else np.asarray(b_ub, dtype=float)
    b_eq = np.zeros(0) if b_eq is None else np.asarray(b_eq, dtype=float)
    pairs = np.array([(-np.inf if lo is None else lo, np.inf if hi is None else hi) for lo, hi in bounds], dtype=float)
    return lp_highs.highs_lp(c, A, np.concatenate([np.full(b_ub.size, -np.inf), b_eq]), np.concatenate([b_ub, b_eq]),
                             pairs[:, 0], pairs[:, 1])


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

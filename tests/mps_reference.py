"""The outside reference for MPS checks: HiGHS (highspy) reading the same file.

`highs_read` returns the arrays HiGHS parsed, in our form's terms; `highs_optimum` solves
the file with HiGHS. HiGHS drops N rows other than the objective, as our reader does.
"""

from __future__ import annotations

from dataclasses import dataclass

import highspy
import numpy as np

_STATUS = {
    highspy.HighsModelStatus.kOptimal: "optimal",
    highspy.HighsModelStatus.kInfeasible: "infeasible",
    highspy.HighsModelStatus.kUnbounded: "unbounded",
    highspy.HighsModelStatus.kUnboundedOrInfeasible: "infeasible_or_unbounded",
    highspy.HighsModelStatus.kModelEmpty: "optimal",
}


@dataclass(frozen=True)
class HighsModel:
    """An LP as HiGHS read it: the file's own objective sense, c and offset."""

    c: np.ndarray
    A: np.ndarray
    row_lower: np.ndarray
    row_upper: np.ndarray
    col_lower: np.ndarray
    col_upper: np.ndarray
    offset: float
    maximise: bool
    row_names: tuple[str, ...]
    column_names: tuple[str, ...]


def _highs(path) -> highspy.Highs:
    """A quiet HiGHS instance that has read `path` (asserting that it could)."""
    h = highspy.Highs()
    h.setOptionValue("output_flag", False)
    status = h.readModel(str(path))
    assert status != highspy.HighsStatus.kError, f"HiGHS could not read {path}"
    return h


def highs_read(path) -> HighsModel:
    """What HiGHS reads from an MPS file."""
    lp = _highs(path).getLp()
    m, n = lp.num_row_, lp.num_col_
    A = np.zeros((m, n))
    start = np.asarray(lp.a_matrix_.start_, dtype=int)
    index = np.asarray(lp.a_matrix_.index_, dtype=int)
    value = np.asarray(lp.a_matrix_.value_, dtype=float)
    assert lp.a_matrix_.format_ == highspy.MatrixFormat.kColwise
    for j in range(n):
        A[index[start[j] : start[j + 1]], j] = value[start[j] : start[j + 1]]
    return HighsModel(
        c=np.asarray(lp.col_cost_, dtype=float),
        A=A,
        row_lower=np.asarray(lp.row_lower_, dtype=float),
        row_upper=np.asarray(lp.row_upper_, dtype=float),
        col_lower=np.asarray(lp.col_lower_, dtype=float),
        col_upper=np.asarray(lp.col_upper_, dtype=float),
        offset=float(lp.offset_),
        maximise=lp.sense_ == highspy.ObjSense.kMaximize,
        row_names=tuple(lp.row_names_),
        column_names=tuple(lp.col_names_),
    )


def highs_optimum(path) -> tuple[str, float | None]:
    """HiGHS's status and objective (with the file's constant and sense) for the file.

    Presolve is off first, so that infeasible and unbounded come back told apart; when
    HiGHS still answers "unknown" or "infeasible or unbounded" (it does on some tiny
    degenerate LPs), the file is solved again with presolve, and then with a zero
    objective: feasible means unbounded.
    """
    for presolve in ("off", "on"):
        h = _highs(path)
        h.setOptionValue("presolve", presolve)
        h.run()
        status = _STATUS.get(h.getModelStatus(), str(h.getModelStatus()))
        if status == "optimal":
            return status, float(h.getInfo().objective_function_value)
        if status in ("infeasible", "unbounded"):
            return status, None
    if status == "infeasible_or_unbounded":
        n = h.getLp().num_col_
        h.changeColsCost(n, np.arange(n, dtype=np.int32), np.zeros(n))
        h.run()
        if h.getModelStatus() == highspy.HighsModelStatus.kOptimal:
            return "unbounded", None
        if h.getModelStatus() == highspy.HighsModelStatus.kInfeasible:
            return "infeasible", None
    return status, None

"""The arrays of an MPS model from the records the reader collected.

The coefficients go into A and c, each row's type, right-hand side and range become its
two bounds, the BOUNDS lines are applied in file order over the default 0 <= x < inf, and
the integer columns are marked in `integrality` (the rules are listed in `reader`'s
docstring).
"""

from __future__ import annotations

import math

import numpy as np

from blendkit.engine.mps.model import MPSError, MPSModel
from blendkit.engine.standard_form import StandardForm


def assemble(reader) -> MPSModel:
    """The MPSModel of everything `reader` (the reader at ENDATA) collected."""
    m, n = len(reader.row_types), len(reader.column_index)
    A = np.zeros((m, n))
    for (i, j), value in reader.entries.items():
        A[i, j] = value
    c = np.zeros(n)
    for j, value in reader.cost.items():
        c[j] = value
    row_lower, row_upper = _row_bounds(reader)
    col_lower, col_upper = _column_bounds(reader.bounds, n)
    integrality = np.zeros(n, dtype=int)
    integrality[sorted(reader.integer)] = 1
    unbounded = sorted(reader.integer - {j for _, j, _ in reader.bounds})
    col_upper[unbounded] = 1.0  # an integer column no BOUNDS line names is binary
    maximise = bool(reader.maximise)
    form = StandardForm(
        c=-c if maximise else c,
        A=A,
        row_lower=row_lower,
        row_upper=row_upper,
        col_lower=col_lower,
        col_upper=col_upper,
        n_ub=0,
    )
    constant = -reader.constant[0] if reader.constant is not None and reader.constant[0] != 0 else 0.0
    return MPSModel(
        name=reader.name,
        form=form,
        row_names=tuple(reader.row_index),
        column_names=tuple(reader.column_index),
        objective_name=reader.objective_name,
        objective_constant=constant,
        maximise=maximise,
        integrality=integrality,
    )


def _row_bounds(reader) -> tuple[np.ndarray, np.ndarray]:
    """Each row's bounds from its type, right-hand side (0 when none) and range."""
    m = len(reader.row_types)
    row_lower = np.empty(m)
    row_upper = np.empty(m)
    for i, kind in enumerate(reader.row_types):
        b, line = reader.rhs.get(i, (0.0, None))
        lo, up = {"L": (-math.inf, b), "G": (b, math.inf), "E": (b, b)}[kind]
        if i in reader.ranges:
            r = reader.ranges[i]
            if kind == "L":
                lo = b - abs(r)
            elif kind == "G":
                up = b + abs(r)
            elif r > 0:
                up = b + r
            elif r < 0:
                lo = b + r
        if lo == math.inf or up == -math.inf or math.isnan(lo) or math.isnan(up):
            name = list(reader.row_index)[i]
            raise MPSError(f"the right-hand side {b} leaves {kind} row {name!r} with no possible value",
                           path=reader.source, line=line)
        row_lower[i], row_upper[i] = lo, up
    return row_lower, row_upper


def _column_bounds(bounds: list[tuple[str, int, float]], n: int) -> tuple[np.ndarray, np.ndarray]:
    """Column bounds from the BOUNDS records (type, column, value), applied in order."""
    col_lower = np.zeros(n)
    col_upper = np.full(n, math.inf)
    lower_set = np.zeros(n, dtype=bool)
    for kind, j, value in bounds:
        if kind in ("UP", "UI"):
            if value < 0 and not lower_set[j]:
                col_lower[j] = -math.inf
            col_upper[j] = value
        elif kind in ("LO", "LI"):
            col_lower[j], lower_set[j] = value, True
        elif kind == "FX":
            col_lower[j] = col_upper[j] = value
            lower_set[j] = True
        elif kind == "FR":
            col_lower[j], col_upper[j] = -math.inf, math.inf
            lower_set[j] = True
        elif kind == "MI":
            col_lower[j], lower_set[j] = -math.inf, True
        elif kind == "PL":
            col_upper[j] = math.inf
        elif kind == "BV":
            col_lower[j], col_upper[j] = 0.0, 1.0
            lower_set[j] = True
    return col_lower, col_upper

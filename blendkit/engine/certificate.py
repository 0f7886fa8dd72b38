"""The certificate of infeasibility, in the original problem's units.

Phase one ends infeasible with duals that prove it (Farkas): `certificate` scales them
back from the engine's scaled rows and columns and lists the constraints they involve,
which is where conflict diagnosis starts.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.result import Certificate, ConflictPart
from blendkit.engine.scaling import Scaling
from blendkit.engine.simplex import SimplexOutcome
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import Tolerances


def certificate(form: StandardForm, scaling: Scaling, outcome: SimplexOutcome, tol: Tolerances) -> Certificate:
    """The phase-one duals of an infeasible `outcome` in original units, and the
    constraints they involve (multipliers above the dual feasibility tolerance)."""
    y = outcome.farkas * scaling.rows
    d = outcome.farkas_d / scaling.cols
    small = tol.dual_feasibility
    parts = [_row_part(form, int(i), outcome.farkas_at_upper, float(y[i]))
             for i in np.flatnonzero(np.abs(outcome.farkas) > small)]
    parts += [_bound_part(form, int(j), outcome.farkas_at_upper, float(d[j]))
              for j in np.flatnonzero(np.abs(outcome.farkas_d) > small)]
    return Certificate(
        infeasibility=float(outcome.infeasibility),
        row_multipliers=y,
        bound_multipliers=d,
        parts=tuple(parts),
    )


def _row_part(form: StandardForm, i: int, at_upper: np.ndarray, multiplier: float) -> ConflictPart:
    """Row i's part: named as A_ub's or A_eq's row when the form came from linprog."""
    n = form.shape[1]
    if not form.from_linprog:
        kind, index = "row", i
    elif i < form.n_ub:
        kind, index = "ub", i
    else:
        kind, index = "eq", i - form.n_ub
    if form.row_lower[i] == form.row_upper[i]:
        side = "eq"
    else:
        side = "upper" if at_upper[n + i] else "lower"
    return ConflictPart(kind=kind, index=index, side=side, multiplier=multiplier)


def _bound_part(form: StandardForm, j: int, at_upper: np.ndarray, multiplier: float) -> ConflictPart:
    """Variable j's bound's part."""
    if form.col_lower[j] == form.col_upper[j]:
        side = "eq"
    else:
        side = "upper" if at_upper[j] else "lower"
    return ConflictPart(kind="bound", index=j, side=side, multiplier=multiplier)

"""The objective's grid: the step that every value of c·x at a solution is a multiple of.

When every column with a cost takes values on a grid of its own, c·x lies on a grid too,
and a node's LP bound can be rounded up to the next grid point: a bound of 283.0410 with
a grid of 0.001 proves that nothing below 283.042 exists. Without this the search cannot
close a gap smaller than one grid step but larger than the relative gap it asks for, and
enumerates every tie. A column is on a grid when it is an integer column (step 1), or
when an equality row with no other entries ties it to one, x_j = k n_j with n_j integer
(step |k|): the amount of an ingredient bought in packs or weighed on a scale step, as
the LP builder models them.

The grid is the greatest common divisor of the steps |c_j| times each column's own step,
found on the decimal scale: the least power of ten (up to 10^GRID_DECIMALS) that makes
every step a whole number (within GRID_WHOLE relative), then the integer gcd.
"""

from __future__ import annotations

import math

import numpy as np

from blendkit.engine.mip_problem import MIPProblem
from blendkit.engine.sparse import sparse
from blendkit.engine.tolerances import GRID_DECIMALS, GRID_WHOLE


def column_steps(problem: MIPProblem) -> np.ndarray:
    """Each column's grid step: 1 for an integer column, |k| for a column tied to an
    integer column by a row x_j - k n_j = 0, 0 for a column on no grid."""
    form = problem.form
    steps = np.where(problem.integer, 1.0, 0.0)
    A = sparse().csr_matrix(form.A)
    equal = (form.row_lower == form.row_upper) & (form.row_upper == 0)
    for i in np.flatnonzero(equal & (np.diff(A.indptr) == 2)):
        (j, k), (a, b) = A.indices[A.indptr[i] : A.indptr[i + 1]], A.data[A.indptr[i] : A.indptr[i + 1]]
        if problem.integer[k] and not problem.integer[j] and problem.threshold[j] == 0:
            steps[j] = abs(b / a)
        elif problem.integer[j] and not problem.integer[k] and problem.threshold[k] == 0:
            steps[k] = abs(a / b)
    return steps


def objective_grid(problem: MIPProblem) -> float:
    """The objective's grid step (see the module docstring), or 0 when there is none."""
    c = problem.form.c
    used = c != 0
    if not used.any():
        return 0.0
    steps = np.abs(c[used]) * column_steps(problem)[used]
    if np.any(steps == 0):
        return 0.0
    for decimals in range(GRID_DECIMALS + 1):
        scaled = steps * 10.0**decimals
        whole = np.round(scaled)
        if np.all(np.abs(scaled - whole) <= GRID_WHOLE * scaled) and np.all(whole < 2**53):
            return math.gcd(*(int(v) for v in whole)) / 10.0**decimals
    return 0.0

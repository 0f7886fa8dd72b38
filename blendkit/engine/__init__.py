"""blendkit's own linear-programming engine: a two-phase bounded-variable simplex.

Stages, one module each: `standard_form` (check and convert the arguments), `scaling`,
`simplex` (the algorithm: phases, and the dual simplex first when it can), `verify`
(residuals in the original problem), `solve` (the public entry point). The simplex's
parts: `simplex_state` (matrix, values, basis), `primal` and `dual` (the iterations),
`pricing`, `ratio_test`, `basis_factor` (LU factors of the basis), `ranging`, and
`certificate` (why a problem is infeasible). `tolerances` names every tolerance and
threshold; `mps` reads and writes MPS files.
"""

from blendkit.engine.result import STATUSES, LPResult
from blendkit.engine.solve import solve, solve_form
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import Tolerances

__all__ = ["STATUSES", "LPResult", "StandardForm", "Tolerances", "solve", "solve_form"]

"""blendkit's own linear-programming engine: a two-phase bounded-variable simplex.

Stages, one module each: `standard_form` (check and convert the arguments),
`simplex` (the algorithm), `basis_factor` (LU factors of the basis), `verify`
(residuals in the original problem), `solve` (the public entry point).
"""

from blendkit.engine.result import STATUSES, LPResult
from blendkit.engine.solve import solve, solve_form
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import Tolerances

__all__ = ["STATUSES", "LPResult", "StandardForm", "Tolerances", "solve", "solve_form"]

"""blendkit's own linear-programming engine: a two-phase bounded-variable simplex.

Stages, one module each: `standard_form` (check and convert the arguments), `scaling`,
`simplex` (the algorithm: phases, and the dual simplex first when it can), `verify`
(residuals in the original problem), `solve` (the public entry point), and `resolve`
(`Resolver`: one LP re-solved after changes of costs or bounds, from the basis and
factors it holds). The simplex's parts: `simplex_state` (matrix, values, basis; a dense
or a sparse matrix by size and fill), `primal` and `dual` (the iterations), `perturbation` (the dual simplex's cost
perturbation), `pricing`, `ratio_test`, `basis_factor` (LU factors of the basis, dense
or sparse, with product-form updates applied at once), `ranging`, and
`certificate` (why a problem is infeasible). `tolerances` names every tolerance and
threshold; `mps` reads and writes MPS files.

Whole numbers and minimums if used: `mip` (the entry points `solve_mip` and
`solve_mip_form`) checks the arguments (`mip_problem`) and runs our branch and bound
(`branch_and_bound`), whose parts are `relaxation` (a node's LP from its parent's basis),
`branching` and `strong_branching` (which column to branch on), `tightening` (bound
propagation, reduced-cost fixing), `heuristics` and `incumbent` (solutions found early
and verified), and `objective_grid` (bounds rounded up to the objective's step).
`solve_mip` and `solve_mip_form` are imported only when first used: a workbook without
weighing rules never needs the branch and bound, and a plain solve starts faster without it.
"""

from importlib import import_module

from blendkit.engine.resolve import Resolver
from blendkit.engine.result import MIP_STATUSES, STATUSES, LPResult, MIPResult
from blendkit.engine.solve import solve, solve_form
from blendkit.engine.standard_form import StandardForm
from blendkit.engine.tolerances import Tolerances

__all__ = [
    "MIP_STATUSES", "STATUSES", "LPResult", "MIPResult", "Resolver", "StandardForm", "Tolerances", "solve",
    "solve_form",
    "solve_mip", "solve_mip_form",
]

# Public name -> the module that defines it, imported on first use.
_LAZY = {"solve_mip": "blendkit.engine.mip", "solve_mip_form": "blendkit.engine.mip"}


def __getattr__(name: str):
    """Import a lazily re-exported name (the branch and bound) on first use."""
    if name not in _LAZY:
        raise AttributeError(f"module 'blendkit.engine' has no attribute {name!r}")
    return getattr(import_module(_LAZY[name]), name)

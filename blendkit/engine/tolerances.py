"""Named tolerances of the engine, with their defaults.

Every tolerance the engine uses lives here and is passed explicitly to the code that
needs it, so a report of numerical trouble can print the value that was broken.
"""

from __future__ import annotations

from dataclasses import dataclass

# A basic variable may sit this far outside its bound and still count as feasible.
PRIMAL_FEASIBILITY = 1e-9
# A reduced cost this close to zero (with the wrong sign) still counts as optimal.
DUAL_FEASIBILITY = 1e-9
# Pivot elements smaller than this, relative to the largest entry of the entering
# column (or absolute, when that is below 1), are never chosen.
PIVOT = 1e-9
# Phase one reports "infeasible" when the sum of artificial variables stays above
# this, relative to 1 + the largest finite bound or right-hand side.
INFEASIBILITY = 1e-8
# After solving, residuals in the original problem above this (relative to
# 1 + the size of the row's terms) turn "optimal" into "numerical_trouble".
RESIDUAL = 1e-6


@dataclass(frozen=True)
class Tolerances:
    """The set of tolerances one solve uses; defaults are the module constants."""

    primal_feasibility: float = PRIMAL_FEASIBILITY
    dual_feasibility: float = DUAL_FEASIBILITY
    pivot: float = PIVOT
    infeasibility: float = INFEASIBILITY
    residual: float = RESIDUAL

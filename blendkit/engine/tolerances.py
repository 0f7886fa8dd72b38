"""Named tolerances and numeric limits of the engine, with their defaults.

Every tolerance and threshold the engine uses lives here. The five in `Tolerances` are
passed explicitly to the code that needs them, so a report of numerical trouble can print
the value that was broken; the module constants below them are fixed choices of the
algorithm, imported by name where they are used.
"""

from __future__ import annotations

from dataclasses import dataclass

# ----- tolerances of one solve (the fields of `Tolerances`) ------------------------------

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


# ----- inside the simplex iterations ------------------------------------------------------

# The pivot element computed from the pivot row and from the entering column may differ by
# this much (relative to 1 + |pivot|) before rounding counts as built up: then refactorise.
PIVOT_AGREEMENT = 1e-7
# A Devex reference weight above this starts a new reference framework (all weights 1).
DEVEX_WEIGHT_LIMIT = 1e8
# An iteration that moves the objective by at most this, relative to 1 + |objective|, is
# degenerate: it counts towards a stall.
PROGRESS = 1e-12
# Degenerate (objective-neutral) iterations in a row that make a stall: the primal method
# then switches to Bland's smallest-index rule, which cannot cycle, until the objective
# moves again; the dual simplex hands over to the primal method. Bland's rule is slow, so
# it waits for a long stall: on the NETLIB set a limit of 30 cost four times the iterations
# of a limit of 200. (The simplex reads it at the start of each run, so a test may lower it.)
STALL_LIMIT = 250
# Under Bland's rule, ratios within this of the smallest (relative, then absolute) tie,
# and the tie goes to the smallest variable index.
BLAND_TIE_RELATIVE = 1e-12
BLAND_TIE_ABSOLUTE = 1e-15
# An artificial variable still basic after phase one is swapped out of the basis only on a
# pivot element larger than this; otherwise its row is redundant and it stays.
DRIVE_OUT_PIVOT = 1e-7
# In cost and bound ranging, tableau entries this small or smaller count as zero (they
# limit no range).
RANGING_ZERO = 1e-12

# ----- the basis factorisation -------------------------------------------------------------

# A basis whose smallest LU pivot is at most this, relative to max(1, the largest), is
# singular to working precision.
SINGULAR_PIVOT = 1e-13
# Problems with at least this many rows, and a matrix at most SPARSE_DENSITY full, are held
# and factorised as sparse matrices; smaller or denser ones as dense arrays.
SPARSE_ROWS = 400
SPARSE_DENSITY = 0.1
# Column replacements between two factorisations of a sparse basis.
SPARSE_REFACTOR_EVERY = 50
# The same for a dense basis: DENSE_REFACTOR_PER_ROOT x sqrt(rows), clipped to
# DENSE_REFACTOR_MIN..DENSE_REFACTOR_MAX. Refactorising costs about m^3 and each stored
# update about m per solve; this interval balances the two for the sizes blends have.
DENSE_REFACTOR_PER_ROOT = 0.75
DENSE_REFACTOR_MIN = 4
DENSE_REFACTOR_MAX = 64

# ----- limits of one solve -------------------------------------------------------------------

# The iteration limit when the caller sets none: this many per row and column of the
# problem, and never fewer than ITERATION_LIMIT_MIN.
ITERATION_LIMIT_PER_LINE = 50
ITERATION_LIMIT_MIN = 10_000
# Geometric-mean scaling passes over rows and columns. Two are enough: on our blend
# benchmark six passes cost 10 % more time for no fewer iterations.
GEOMETRIC_PASSES = 2

"""Named tolerances and numeric limits of the engine, with their defaults.

Every tolerance and threshold the engine uses lives here. The eight in `Tolerances` are
passed explicitly to the code that needs them, so a report of numerical trouble can print
the value that was broken (the last three only matter to `solve_mip`, the branch and
bound); the module constants below them are fixed choices of the algorithm, imported by
name where they are used.
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
# this, relative to 1 + the largest finite bound or right-hand side; or, below that, above
# PRIMAL_FEASIBILITY when its duals prove it (`certificate.proves_infeasible`), since a
# large bound on one column would otherwise hide a small row's gap.
INFEASIBILITY = 1e-8
# After solving, residuals in the original problem above this (relative to
# 1 + the size of the row's terms) turn "optimal" into "numerical_trouble".
RESIDUAL = 1e-6
# A scaled solve whose optimum breaks a row by more than this (same measure) is solved
# once more unscaled, and the answer with the smaller residual kept: on near-dependent
# rows the scaling can turn a 1e-9 tolerance in scaled units into 1e-6 in the original
# (seen: 7.8e-7, and 7.8e-9 that let the cost fall by a quarter). Exact solves of the
# NETLIB problems stay below 1e-11, so the second solve is rare.
RESIDUAL_RETRY = 1e-9
# A MIP: an integer column this close to a whole number counts as whole (absolute, as in
# HiGHS's mip_feasibility_tolerance), and a semi-continuous column this close to 0 as off
# or to its threshold as on. The solution returned has its integer columns rounded exactly.
INTEGRALITY = 1e-6
# A MIP search stops, optimal, when the best solution found is within this of the best
# bound, relative to |objective| (RELATIVE_GAP), or absolutely (ABSOLUTE_GAP). HiGHS's
# defaults are 1e-4 and 1e-6; ours ask for more, because a blend's cost is compared to
# the cent per tonne.
RELATIVE_GAP = 1e-6
ABSOLUTE_GAP = 1e-6


@dataclass(frozen=True)
class Tolerances:
    """The set of tolerances one solve uses; defaults are the module constants."""

    primal_feasibility: float = PRIMAL_FEASIBILITY
    dual_feasibility: float = DUAL_FEASIBILITY
    pivot: float = PIVOT
    infeasibility: float = INFEASIBILITY
    residual: float = RESIDUAL
    integrality: float = INTEGRALITY
    relative_gap: float = RELATIVE_GAP
    absolute_gap: float = ABSOLUTE_GAP


# ----- checks after solving ---------------------------------------------------------------

# An infeasibility certificate must prove, in the original units, that no point exists by
# at least this much relative to the size of its terms (see `certificate.proves_infeasible`);
# a phase one that ends "infeasible" without such a proof is solved again unscaled, and
# reported as numerical trouble if the proof is still missing.
CERTIFICATE_PROOF = 1e-9
# An unbounded verdict must likewise prove itself: its ray, in the original units, may move
# a row the wrong way by CERTIFICATE_PROOF x the row's terms along it plus this many ulps of
# the row's entries (the rounding of A·ray itself); see `certificate.proves_unbounded`.
# A ray that does not prove itself is solved again unscaled, then reported as trouble.
RAY_ROUNDING_ULPS = 4

# ----- inside the simplex iterations ------------------------------------------------------

# The pivot element computed from the pivot row and from the entering column may differ by
# this much (relative to 1 + |pivot|) before rounding counts as built up: then refactorise.
PIVOT_AGREEMENT = 1e-7
# Refactorisations in a row that such a disagreement may cause, with no iteration made in
# between; one more and the run ends as "numerical_trouble" (the caller then solves
# another way, as for any trouble). Fresh factors that still disagree would otherwise be
# refactorised for ever: the same basis gives the same pivot.
PIVOT_REFRESH_LIMIT = 3
# A Devex reference weight above this starts a new reference framework (all weights 1).
DEVEX_WEIGHT_LIMIT = 1e8
# The dual simplex prices by exact steepest-edge weights (one more solve per iteration)
# on problems of at least this many rows, by Devex below. Measured CPU time against Devex:
# plants of 10 x 80 x 40, 30 x 60 x 30 and 40 x 80 x 40 (two or three seeds each) 15 %,
# 18 % and 35 % less, 600 x 200 blends 30 % less; 20 x 60 x 30 plants 30 % more (2 of 3
# seeds took more iterations); blends of 60 x 30 (33 rows) a fifth more, hence the floor.
STEEPEST_EDGE_ROWS = 200
# A steepest-edge weight is kept at least this large against rounding.
STEEPEST_FLOOR = 1e-8
# An iteration that moves the objective by at most this, relative to 1 + |objective|, is
# degenerate: it counts towards a stall.
PROGRESS = 1e-12
# Degenerate (objective-neutral) iterations in a row that make a stall: the primal method
# then switches to Bland's smallest-index rule, which cannot cycle, until the objective
# moves again; the dual simplex hands over to the primal method. Bland's rule is slow, so
# it waits for a long stall: on the NETLIB set a limit of 30 cost four times the iterations
# of a limit of 200. (The simplex reads it at the start of each run, so a test may lower it.)
STALL_LIMIT = 250
# The dual simplex's stall limit grows with the rows beyond this many: STALL_LIMIT x
# rows / DUAL_STALL_ROWS. Its perturbed steps on a plant move a large objective by less
# than PROGRESS, so they count as degenerate: 40- and 60-product plants (3,320 and 3,720
# rows) took up to 498 such steps in a row and still finished, and at a limit of 250 a
# 40 x 80 x 40 plant handed over to the primal method from scratch after 2,672
# iterations (11,881 in all, 7.6 s; 7,043 and 4.9 s with the limit grown).
DUAL_STALL_ROWS = 500
# After this many degenerate iterations in a row the dual simplex perturbs the nonbasic
# costs by about PERTURBATION_BASE, relative to 1 + |cost| (1-2 times it; see
# `perturbation`), so that degenerate ties are rare. Perturbing from the start cost the
# small NETLIB problems up to 11 % more iterations (BLEND); waiting for a stall keeps
# their path, and the 5-product plant still needs 534 iterations instead of 1,790.
PERTURB_AFTER = 50
PERTURBATION_BASE = 5e-7
# Under Bland's rule, ratios within this of the smallest (relative, then absolute) tie,
# and the tie goes to the smallest variable index.
BLAND_TIE_RELATIVE = 1e-12
BLAND_TIE_ABSOLUTE = 1e-15
# An artificial variable still basic after phase one is swapped out of the basis only on a
# pivot element larger than this; otherwise its row is redundant and it stays.
DRIVE_OUT_PIVOT = 1e-7
# The dual ratio test sorts only this many of the nearest breakpoints when it flips bounds
# (the walk passes more than 12 in one iteration in 1 % of a plant LP's iterations).
FLIP_WINDOW = 32
# Up to this many candidates, sorting them all costs less than selecting the nearest.
FLIP_SORT_ALL = 512
# In cost and bound ranging, tableau entries this small or smaller count as zero (they
# limit no range).
RANGING_ZERO = 1e-12

# ----- the basis factorisation -------------------------------------------------------------

# A basis whose smallest LU pivot is at most this, relative to max(1, the largest), is
# singular to working precision.
SINGULAR_PIVOT = 1e-13
# Problems with at least this many rows, and a matrix at most SPARSE_DENSITY full, are held
# and factorised as sparse matrices; smaller or denser ones as dense arrays. (A 5-product
# plant of 60 ingredients, 365 rows and 12 % full, solves in 40 % of the time sparse; the
# NETLIB problems, all below 300 rows, stay dense.)
SPARSE_ROWS = 300
SPARSE_DENSITY = 0.15
# A pivot row B^-T e_r whose non-zeros are at most this share of the rows is multiplied
# into M row by row (only the rows it picks); a fuller one through all of M.
HYPERSPARSE_SHARE = 0.1
# A fuller one is multiplied into the rows of M it lives on, the binding rows, when those
# hold at most this share of M's non-zeros (`row_product`); else into all of M.
FOCUS_SHARE = 0.5
# Only a matrix with at least this many non-zeros is worth the choice of rows (a 40-product
# plant has 188,000 and its pivot rows take 30 % less time; a 20-product one, 55,000, no less).
FOCUS_MIN_NONZEROS = 100_000
# ... and those rows are taken afresh once a pivot row has more than this many non-zeros
# outside them (rows whose logical left the basis since).
REFOCUS_AFTER = 20
# Up to this many product-form updates are applied one by one, more all at once (see
# `basis_factor`): below it one Python pass per eta beats the triangular system. Dense
# bases below 160 rows are refactorised within 16 updates, so they always loop.
ETA_LOOP_MAX = 16
# Column replacements between two factorisations of a sparse basis.
SPARSE_REFACTOR_EVERY = 50
# A sparse basis's column order is found afresh every REORDER_EVERY factorisations, and
# sooner once the factors are REORDER_FILL times fuller than with a fresh order; in between
# the last order is reused (`basis_factor.SparseBasisFactor`).
REORDER_EVERY = 10
REORDER_FILL = 1.3
# The same for a dense basis: rows^1.5 / DENSE_REFACTOR_DIVISOR, clipped to
# DENSE_REFACTOR_MIN..DENSE_REFACTOR_MAX. Refactorising costs about m^3 and each stored
# update a nearly fixed time per solve (numpy's call overhead), so the best interval
# grows as m^1.5: 6 updates at 84 rows, 15 at 153, 30 at 247 (measured on blends).
DENSE_REFACTOR_DIVISOR = 128.0
DENSE_REFACTOR_MIN = 4
DENSE_REFACTOR_MAX = 64
# A dense basis of at least this many rows is also held as its explicit inverse between
# factorisations (`basis_factor.InverseBasisFactor`), refactorised after
# INVERSE_REFACTOR_EVERY updates (an update costs the same however many came before it),
# or at once when the inverse maps a column of the basis to e_j with an entry off by more
# than INVERSE_DRIFT (one column checked every INVERSE_CHECK_EVERY updates, in turn: a
# check costs a matrix-vector product; checking at every update cost 7 % of a cold solve
# of a 300 x 120 blend). On the blends of the benchmark (40 to 247 rows) the inverse took
# a tenth to a quarter off a cold solve, and no NETLIB problem got slower (most a fifth to
# a quarter faster); on a basis of a dozen rows LAPACK's solves and a few etas cost less.
INVERSE_ROWS = 25
INVERSE_REFACTOR_EVERY = 64
INVERSE_DRIFT = 1e-9
INVERSE_CHECK_EVERY = 4
# Updates are kept as etas until the factors hold INVERSE_AFTER of them; in a warm start
# (a basis given: few iterations expected) also until the run has made rows /
# INVERSE_AFTER_DIVISOR in all. The inverse costs twice a factorisation (at 153 rows 0.5 ms,
# as much as about 25 iterations save): a cold solve or a series of re-solves pays it early
# and gains, a warm start of a few iterations never pays it.
INVERSE_AFTER = 8
INVERSE_AFTER_DIVISOR = 6.0
# The simplex state a `Resolver` holds for a series of re-solves builds the inverse once its
# factors hold this many updates: the series pays for it soon. A price re-solve of a
# 60 x 30 blend makes about one iteration, so with INVERSE_AFTER the median step of the
# benchmark's series still applied its etas one by one: 231 -> 180 us (highspy 172 us),
# 300 x 120 limit re-solves 1,250 -> 1,190 us (load 1.5-2.4, 2 cores).
HELD_INVERSE_AFTER = 1

# ----- limits of one solve -------------------------------------------------------------------

# The iteration limit when the caller sets none: this many per row and column of the
# problem, and never fewer than ITERATION_LIMIT_MIN.
ITERATION_LIMIT_PER_LINE = 50
ITERATION_LIMIT_MIN = 10_000
# Geometric-mean scaling passes over rows and columns. Two are enough: on our blend
# benchmark six passes cost 10 % more time for no fewer iterations.
GEOMETRIC_PASSES = 2

# ----- the branch and bound (solve_mip) -----------------------------------------------------

# When the dual simplex finds a node infeasible, the pivot rows of at most this many of the
# most infeasible basic variables are checked for a proof (see `relaxation`); without one
# the node is solved afresh by the two-phase method. A pivot row costs about as much as a
# dual iteration, a fresh two-phase solve of a 40-ingredient blend MIP some hundred; the
# most infeasible rows are often the ones without a proof (a logical free on one side).
INFEASIBILITY_PROOF_ROWS = 50
# In such a proof, entries of the pivot row below this, relative to its largest, are taken
# as the rounding they are (in the cases we met: 1e-16 beside 1 to 100) and count as zero;
# the dual simplex's own ratio test ignores entries up to 1e-9 (PIVOT) already.
PROOF_ROW_ZERO = 1e-11
# Branching scores multiply the two children's estimated objective rises, each at least
# this, so that a column whose one child costs nothing still ranks by the other.
PSEUDOCOST_FLOOR = 1e-6
# Rounds of bound propagation through the rows at each node; a round that moves no
# integer or semi-continuous column's bound ends it early.
PROPAGATION_ROUNDS = 2
# Bounds of continuous columns implied by the rows are loosened by this (relative to
# 1 + |bound|) before later rounds use them, so rounding cannot cut a feasible point.
PROPAGATION_SLACK = 1e-9
# When every objective value lies on a grid, an LP bound within this many steps below a
# grid point counts as that point.
OBJECTIVE_GRID_TOLERANCE = 1e-6
# The objective's grid is looked for on decimal scales up to 10^GRID_DECIMALS (prices with
# cents, steps of a tenth of a kilogram in a batch of tonnes); a step counts as whole on a
# scale when it is within GRID_WHOLE of a whole number, relative.
GRID_DECIMALS = 9
GRID_WHOLE = 1e-9
# Until a first solution is found, the rounding heuristic runs at the root and at every
# ROUNDING_EVERY-th node.
ROUNDING_EVERY = 10
# Once a solution is known, the search dives from the open node with the least estimate
# (bound plus the pseudocost estimate of reaching integrality), which finds good
# solutions sooner, except every BEST_BOUND_EVERY-th time from the least bound.
BEST_BOUND_EVERY = 4
# The diving heuristic (fix one column per step) runs at the root and at every
# DIVE_EVERY-th node, for at most DIVE_STEPS steps and DIVE_BACKTRACKS steps back.
DIVE_EVERY = 50
DIVE_STEPS = 200
DIVE_BACKTRACKS = 3
# The neighbourhood search (at the root) and the agreement search (after each new
# incumbent) each stop after this many nodes of their own.
NEIGHBOURHOOD_NODES = 200
# Reliability branching: a column's pseudocosts count once RELIABLE_COUNT children have
# been seen in each direction; until then, up to STRONG_CANDIDATES such columns at a node
# have their children solved, each for at most STRONG_ITERATIONS dual iterations.
RELIABLE_COUNT = 1
STRONG_CANDIDATES = 8
STRONG_ITERATIONS = 25
# The kernel factor of a sparse basis (`kernel_factor`): SuperLU keeps a diagonal pivot of
# the matched kernel while it is at least this share of its column's largest entry (plant
# bases: 0.001 gave 15,700 non-zeros in L+U, 0.01 60,000, partial pivoting 106,000). A
# column singleton is solved for directly when its entry is at least SINGLETON_PIVOT (slack
# columns are -1 in the scaled problem); a smaller one stays in the kernel.
KERNEL_PIVOT = 0.001
# ... and only when at least this share of the basis's columns are singletons (a plant's
# optimal basis: about 80 %); else the basis is factorised whole (`SparseBasisFactor`).
KERNEL_SINGLETONS = 0.5
SINGLETON_PIVOT = 1e-3

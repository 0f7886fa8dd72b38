"""Re-solves of one LP after each change of a series: our `Resolver` beside highspy's own.

Both solvers keep their model, basis and factors from one step to the next and are told
only what changed, the way a price update or a trial of new limits re-solves: ours through
`blendkit.engine.resolve.Resolver` (``change_costs`` or ``change_col_bounds`` and
``change_rhs``, then ``solve``), highspy through ``changeColsCost`` or ``changeColsBounds``
and ``changeRowsBounds``, then ``run``. Each repeat starts both afresh at the series' first
LP, solved outside the timing, then times every step; a step's time is the median over the
repeats, a row's the median over its steps. linprog solves each step cold, timed the same
way, and is the reference the answers are compared with.
"""

from __future__ import annotations

import statistics
from collections.abc import Sequence

import numpy as np
from scipy.optimize import linprog

from blendkit.bench.highs import highs_lp, silent_highs
from blendkit.bench.timing import LINPROG_STATUS, LinprogLP, Measurement, agreement, timed
from blendkit.engine.resolve import Resolver

# What a step of a series changes: "costs", or "limits" (column bounds and b_ub).
CHANGES = ("costs", "limits")


def _pairs(lp: LinprogLP) -> tuple[np.ndarray, np.ndarray]:
    """The column bounds of `lp` as two arrays, None read as an infinite bound."""
    lower = np.array([-np.inf if lo is None else lo for lo, _ in lp.bounds], dtype=float)
    upper = np.array([np.inf if hi is None else hi for _, hi in lp.bounds], dtype=float)
    return lower, upper


class _Ours:
    """Our Resolver at the series' first LP, told each step's change."""

    def __init__(self, first: LinprogLP):
        self.resolver = Resolver(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds)
        self.resolver.solve()

    def step(self, lp: LinprogLP, change: str, lower: np.ndarray, upper: np.ndarray):
        """Tell the change, re-solve; the LPResult."""
        if change == "costs":
            self.resolver.change_costs(lp.c)
        else:
            self.resolver.change_col_bounds(lower, upper)
            self.resolver.change_rhs(b_ub=lp.b_ub)
        return self.resolver.solve()


class _Highspy:
    """highspy at the series' first LP, told each step's change."""

    def __init__(self, first: LinprogLP):
        self.h = silent_highs()
        self.h.passModel(highs_lp(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds))
        self.h.run()
        self.n, self.k = len(first.c), len(first.b_ub)
        self.cols, self.rows = np.arange(self.n, dtype=np.int32), np.arange(self.k, dtype=np.int32)
        self.row_lower = np.full(self.k, -np.inf)

    def step(self, lp: LinprogLP, change: str, lower: np.ndarray, upper: np.ndarray) -> None:
        """Tell the change, run."""
        if change == "costs":
            self.h.changeColsCost(self.n, self.cols, np.asarray(lp.c, dtype=float))
        else:
            self.h.changeColsBounds(self.n, self.cols, lower, upper)
            self.h.changeRowsBounds(self.k, self.rows, self.row_lower, np.asarray(lp.b_ub, dtype=float))
        self.h.run()


def measure_resolves(label: str, first: LinprogLP, steps: Sequence[LinprogLP], change: str,
                     repeat: int) -> Measurement:
    """Time the series `steps` after `first` by re-solves (ours, highspy) and cold linprog
    solves, and compare our answers with linprog's; see the module docstring."""
    if change not in CHANGES:
        raise ValueError(f"change must be one of {CHANGES}, not {change!r}")
    bounds = [_pairs(lp) for lp in steps]
    ours_times = [[] for _ in steps]
    highspy_times = [[] for _ in steps]
    answers = []
    for _ in range(repeat):
        ours, highs = _Ours(first), _Highspy(first)
        answers = []
        for k, lp in enumerate(steps):
            answer, seconds = timed(lambda: ours.step(lp, change, *bounds[k]), 1)
            answers.append(answer)
            ours_times[k].append(seconds)
            _, seconds = timed(lambda: highs.step(lp, change, *bounds[k]), 1)
            highspy_times[k].append(seconds)
    linprog_times, mismatches, first_mismatch = [], 0, ""
    for lp, ours in zip(steps, answers):
        ref, seconds = timed(lambda: linprog(lp.c, lp.A_ub, lp.b_ub, lp.A_eq, lp.b_eq, lp.bounds, method="highs"),
                             repeat)
        linprog_times.append(seconds)
        differs = agreement(ours.status, ours.objective, LINPROG_STATUS.get(ref.status, str(ref.status)), ref.fun)
        if differs:
            mismatches += 1
            first_mismatch = first_mismatch or f"{lp.name}: {differs} (ours said: {ours.message})"
    statuses: dict[str, int] = {}
    for ours in answers:
        statuses[ours.status] = statuses.get(ours.status, 0) + 1
    warm = sum(bool(ours.warm_start) for ours in answers)
    return Measurement(
        label=label,
        lps=len(steps),
        solves=len(steps) * repeat,
        ours_seconds=statistics.median(statistics.median(t) for t in ours_times),
        highs_seconds=statistics.median(linprog_times),
        highspy_seconds=statistics.median(statistics.median(t) for t in highspy_times),
        mean_iterations=float(np.mean([ours.iterations for ours in answers])),
        mismatches=mismatches,
        statuses=", ".join(f"{s} {k}" for s, k in sorted(statuses.items()))
        + f"; re-solved from the basis held {warm} of {len(steps)}",
        first_mismatch=first_mismatch,
    )

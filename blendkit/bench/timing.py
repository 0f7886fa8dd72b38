"""Timing and agreement, shared by every benchmark family.

`measure` solves a group of LPs (anything with linprog's arguments as fields) with our
`blendkit.engine.solve` and with ``scipy.optimize.linprog(method="highs")``, and reports
and with HiGHS called directly through highspy (the same LP, built once outside the timing;
a fresh solver, ``passModel`` and ``run`` with presolve on, or for a warm re-solve the
previous basis, the new costs and ``run``), and reports the median time per solve of each,
the ratios ours/linprog and ours/highspy, our mean simplex iterations and how many answers
disagree (status, or objective beyond `OBJECTIVE_RTOL`). Disagreements are counted, never
raised. Ours and linprog are timed as a whole call, as a user would call them (argument
checks included).
"""

from __future__ import annotations

import statistics
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Protocol

import numpy as np
from scipy.optimize import linprog

from blendkit.bench.highs import highs_lp, run_highs
from blendkit.engine import solve
from blendkit.engine.result import Basis

# Two answers agree when their statuses match and their objectives differ by at most
# this, relative to max(1, |HiGHS objective|).
OBJECTIVE_RTOL = 1e-7

# scipy's linprog status codes, in the engine's vocabulary.
LINPROG_STATUS = {0: "optimal", 1: "iteration_limit", 2: "infeasible", 3: "unbounded", 4: "numerical_trouble"}

MEASUREMENT_HEAD = (f"{'LPs':<26}{'count':>6}{'solves':>8}{'ours ms':>11}{'linprog ms':>11}{'highspy ms':>11}"
                    f"{'ours/linprog':>13}{'ours/highspy':>13}{'iters':>9}{'mismatch':>10}  statuses")


class LinprogLP(Protocol):
    """An LP that `measure` can time: a name and linprog's arguments (a BlendInstance is one)."""

    name: str
    c: np.ndarray
    A_ub: np.ndarray
    b_ub: np.ndarray
    A_eq: np.ndarray
    b_eq: np.ndarray
    bounds: list[tuple[float, float | None]]


@dataclass(frozen=True)
class Measurement:
    """One row of the report: a group of LPs solved by both solvers."""

    label: str
    lps: int
    solves: int  # timed solves per solver (LPs x repeats)
    ours_seconds: float  # median over LPs of each LP's median time
    highs_seconds: float  # linprog(method="highs")
    highspy_seconds: float  # highspy called directly (warm for a warm row)
    mean_iterations: float
    mismatches: int
    statuses: str  # e.g. "optimal 10"
    first_mismatch: str = ""

    @property
    def ratio(self) -> float:
        """Our median time over linprog's."""
        return self.ours_seconds / self.highs_seconds if self.highs_seconds > 0 else float("inf")

    @property
    def highspy_ratio(self) -> float:
        """Our median time over highspy's, called directly."""
        return self.ours_seconds / self.highspy_seconds if self.highspy_seconds > 0 else float("inf")


def timed(call: Callable[[], object], repeat: int) -> tuple[object, float]:
    """The call's last answer and the median wall time of `repeat` calls."""
    times, answer = [], None
    for _ in range(repeat):
        start = time.perf_counter()
        answer = call()
        times.append(time.perf_counter() - start)
    return answer, statistics.median(times)


def agreement(status: str, objective, ref_status: str, ref_objective) -> str:
    """Empty when our answer agrees with HiGHS's (same status; for optimal, objectives
    within OBJECTIVE_RTOL), else what differs."""
    if status != ref_status:
        return f"status {status} vs HiGHS {ref_status}"
    if status == "optimal" and abs(objective - ref_objective) > OBJECTIVE_RTOL * max(1.0, abs(ref_objective)):
        return f"objective {objective:.10g} vs HiGHS {ref_objective:.10g}"
    return ""


def measure(label: str, instances: Sequence[LinprogLP], repeat: int, warm_from: Basis | None = None) -> Measurement:
    """Solve every instance `repeat` times with each solver and compare the answers.

    With `warm_from`, our engine starts each LP from the basis of the one before it (the
    first from `warm_from`), as re-solving a price sweep would, and so does highspy (its
    previous basis set again before each timed run, then the new costs); linprog is cold.
    """
    ours_times, highs_times, highspy_times, iterations, statuses = [], [], [], [], {}
    mismatches, first, warm = 0, "", 0
    basis = warm_from
    warm_highs = _WarmHighs(instances[0]) if warm_from is not None and instances else None
    for lp in instances:
        args = (lp.c, lp.A_ub, lp.b_ub, lp.A_eq, lp.b_eq, lp.bounds)
        ours, t_ours = timed(lambda: solve(*args, basis=basis), repeat)
        ref, t_highs = timed(lambda: linprog(*args, method="highs"), repeat)
        if warm_highs is not None:
            t_highspy = warm_highs.time(lp.c, repeat)
        else:
            model = highs_lp(*args)
            _, t_highspy = timed(lambda: run_highs(model), repeat)
        if warm_from is not None:
            basis = ours.basis or basis
            warm += bool(ours.warm_start)
        ours_times.append(t_ours)
        highs_times.append(t_highs)
        highspy_times.append(t_highspy)
        iterations.append(ours.iterations)
        statuses[ours.status] = statuses.get(ours.status, 0) + 1
        differs = agreement(ours.status, ours.objective, LINPROG_STATUS.get(ref.status, str(ref.status)), ref.fun)
        if differs:
            mismatches += 1
            first = first or f"{lp.name}: {differs} (ours said: {ours.message})"
    return Measurement(
        label=label,
        lps=len(instances),
        solves=len(instances) * repeat,
        ours_seconds=statistics.median(ours_times),
        highs_seconds=statistics.median(highs_times),
        highspy_seconds=statistics.median(highspy_times),
        mean_iterations=float(np.mean(iterations)),
        mismatches=mismatches,
        statuses=", ".join(f"{s} {k}" for s, k in sorted(statuses.items()))
        + (f"; started warm {warm} of {len(instances)}" if warm_from is not None else ""),
        first_mismatch=first,
    )


class _WarmHighs:
    """highspy re-solving a series of LPs that differ in costs only, each from the
    previous one's optimal basis, as our warm starts do."""

    def __init__(self, first: LinprogLP):
        self.h = run_highs(highs_lp(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds))
        self.basis = self.h.getBasis()

    def time(self, c: np.ndarray, repeat: int) -> float:
        """Median time of setting the previous basis and the costs `c`, then running."""
        n = len(c)
        index = np.arange(n, dtype=np.int32)

        def rerun():
            self.h.setBasis(self.basis)
            self.h.changeColsCost(n, index, np.asarray(c, dtype=float))
            self.h.run()

        _, seconds = timed(rerun, repeat)
        self.basis = self.h.getBasis()
        return seconds


def measurement_lines(rows: Sequence[Measurement], head: bool = True) -> list[str]:
    """The LP table (with or without its heading): a line per measurement, in milliseconds."""
    lines = [MEASUREMENT_HEAD, "-" * len(MEASUREMENT_HEAD)] if head else []
    for r in rows:
        lines.append(
            f"{r.label:<26}{r.lps:>6}{r.solves:>8}{r.ours_seconds * 1e3:>11.2f}{r.highs_seconds * 1e3:>11.2f}"
            f"{r.highspy_seconds * 1e3:>11.2f}{r.ratio:>12.2f}x{r.highspy_ratio:>12.2f}x"
            f"{r.mean_iterations:>9.1f}{r.mismatches:>10}  {r.statuses}"
        )
        if r.first_mismatch:
            lines.append(f"    first mismatch: {r.first_mismatch}")
    return lines

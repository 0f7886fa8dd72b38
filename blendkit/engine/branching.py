"""Which column to branch on, and which child to dive into first: pseudocosts.

Branching on column j at a node whose LP optimum has x_j out of place makes two
children: for an integer column "down" (x_j <= floor) and "up" (x_j >= ceil); for a
semi-continuous one "down" = off (x_j = 0) and "up" = on (x_j >= its threshold s_j).
The distance a child moves x_j is its fractional part f (down) or 1 - f (up); for a
semi-continuous column x_j (off) or s_j - x_j (on).

A pseudocost is the rise of the LP objective per unit of that distance, averaged over
the children solved so far, per column and direction. A column's score is the product of
its two estimated rises (each at least PSEUDOCOST_FLOOR), the usual rule that prefers
columns whose both children cost something; columns without history take the average
pseudocost of those with one (1 before any), so the first choices go to the most
fractional columns. The dive continues into the child with the smaller estimated rise.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blendkit.engine.mip_problem import MIPProblem, settle
from blendkit.engine.tolerances import PSEUDOCOST_FLOOR, RELIABLE_COUNT

DOWN, UP = 0, 1


@dataclass(frozen=True)
class Branch:
    """A branching decision taken at a node: the column, its value there and what kind."""

    column: int
    value: float
    semi: bool  # True: off / on of a semi-continuous column; False: floor / ceil
    threshold: float  # s_j of a semi-continuous column (0 otherwise)
    parent_objective: float

    def distance(self, direction: int) -> float:
        """How far the child in `direction` moves the column's value."""
        if self.semi:
            return self.value if direction == DOWN else self.threshold - self.value
        f = self.value - np.floor(self.value)
        return f if direction == DOWN else 1.0 - f

    def domain(self, problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, direction: int,
               tol: float) -> tuple[np.ndarray, np.ndarray]:
        """The child's domain: the parent's lower..upper with this column's bound moved."""
        lower, upper = lower.copy(), upper.copy()
        j = self.column
        if self.semi:
            if direction == DOWN:
                upper[j] = 0.0
            else:
                lower[j] = max(lower[j], self.threshold)
        elif direction == DOWN:
            upper[j] = np.floor(self.value)
        else:
            lower[j] = np.ceil(self.value)
        return settle(problem, lower, upper, tol)


class Pseudocosts:
    """Per column and direction: the sum and count of the objective rises per unit seen."""

    def __init__(self, n: int):
        self.sums = np.zeros((2, n))
        self.counts = np.zeros((2, n))

    def record(self, branch: Branch, direction: int, objective: float) -> None:
        """Learn from a child's LP optimum `objective` (not called for infeasible children)."""
        distance = branch.distance(direction)
        if distance <= 0:
            return
        rise = max(0.0, objective - branch.parent_objective) / distance
        self.sums[direction, branch.column] += rise
        self.counts[direction, branch.column] += 1

    def estimates(self, columns: np.ndarray) -> np.ndarray:
        """(2, len(columns)) pseudocosts, with the average standing in where none is known."""
        known = self.counts[:, columns] > 0
        per = np.divide(self.sums[:, columns], self.counts[:, columns], out=np.zeros((2, columns.size)), where=known)
        seen = self.counts.sum(axis=1)
        average = np.divide(self.sums.sum(axis=1), seen, out=np.ones(2), where=seen > 0)
        return np.where(known, per, average[:, None])

    def rises(self, x: np.ndarray, columns: np.ndarray, fraction: np.ndarray, semi: np.ndarray,
              threshold: np.ndarray) -> np.ndarray:
        """(2, len(columns)): each candidate's estimated objective rise down and up.

        `fraction` and `semi` are what `mip_problem.violations` gives for `columns`.
        """
        values = x[columns]
        down = np.where(semi, values, fraction)
        up = np.where(semi, threshold[columns] - values, 1.0 - fraction)
        return self.estimates(columns) * np.vstack([down, up])

    def unreliable(self, columns: np.ndarray) -> np.ndarray:
        """True for each column without RELIABLE_COUNT children seen in both directions."""
        return self.counts[:, columns].min(axis=0) < RELIABLE_COUNT


def choose(rises: np.ndarray, fraction: np.ndarray, semi: np.ndarray, measured: np.ndarray) -> Choice:
    """The candidate with the best score from the (2, k) rises (down, up; inf for a child
    known to be infeasible), and the direction to dive first. `measured` is True for the
    candidates whose rises were measured (valid bounds), not estimated."""
    floor = np.maximum(rises, PSEUDOCOST_FLOOR)
    score = floor[DOWN] * floor[UP]
    k = int(np.argmax(score))
    rise_down, rise_up = float(rises[DOWN, k]), float(rises[UP, k])
    if rise_down == rise_up:
        direction = UP if fraction[k] >= 0.5 else DOWN
    else:
        direction = DOWN if rise_down < rise_up else UP
    finite = np.where(np.isfinite(rises), rises, 0.0)
    return Choice(position=k, semi=bool(semi[k]), direction=direction, rises=(rise_down, rise_up),
                  to_integral=float(np.minimum(finite[DOWN], finite[UP]).sum()), measured=bool(measured[k]))


@dataclass(frozen=True)
class Choice:
    """A branching choice: which of the candidates, its kind, the direction to dive first,
    the estimated rise of each child, and the estimated rise to make every candidate
    integral (the sum over candidates of the cheaper direction). When `measured`, the
    rises were measured by solving the children (strong branching): each child's
    objective is at least its parent's plus its rise."""

    position: int
    semi: bool
    direction: int
    rises: tuple[float, float]
    to_integral: float
    measured: bool = False

    def child_estimate(self, objective: float, direction: int) -> float:
        """The estimated objective of the best solution below the child in `direction`."""
        finite = [r if np.isfinite(r) else 0.0 for r in self.rises]
        return objective + self.to_integral - min(finite) + self.rises[direction]

    def child_bound(self, objective: float, direction: int) -> float:
        """A lower bound on the child's objective: measured, or the parent's."""
        return objective + self.rises[direction] if self.measured else objective

    def feasible(self, direction: int) -> bool:
        """False when strong branching found the child in `direction` infeasible."""
        return bool(np.isfinite(self.rises[direction]))

"""Branch and bound: the search of the MIP solver, over LP relaxations.

Each node is the LP relaxation over a domain (column bounds). The search:

- solves the root relaxation, tries the rounding heuristic (`incumbent`) on it and
  branches (`branching`: pseudocosts) on a column out of place;
- dives depth first: after branching it goes straight on into one child (the one whose
  objective is expected to rise less), starting that child's dual simplex from the
  parent's optimal basis (`relaxation`), and keeps the other child open; a dive ends
  when its node is infeasible, cannot beat the incumbent, or meets every integrality
  and threshold (a new incumbent, after the continuous part is re-solved and verified);
- then picks the open node with the best (least) bound and dives again from there.

Before a node's LP, its bounds are propagated through the rows (`tightening`), and after
it, reduced-cost fixing against the incumbent tightens the domain its children inherit;
the root's reduced costs tighten the domain of every node once an incumbent is known. A
node is pruned when its bound reaches the cutoff: the incumbent's objective less the
allowed gap (the relative gap times |incumbent|, or the absolute gap if larger). When
every objective value at a solution lies on a grid (`objective_grid`), bounds are rounded
up to it and the allowed gap is at least one step.

The search ends when no node is open (optimal, or infeasible with no solution), or at
the node or time limit ("time_limit", with the best solution found and its gap).
"""

from __future__ import annotations

import heapq
import itertools
import time
from dataclasses import dataclass

import numpy as np

from blendkit.engine.branching import DOWN, UP, Branch, Pseudocosts
from blendkit.engine.heuristics import run_heuristics
from blendkit.engine.incumbent import solution_domain
from blendkit.engine.mip_problem import MIPProblem, violations
from blendkit.engine.objective_grid import objective_grid
from blendkit.engine.relaxation import NodeSolution, Relaxation
from blendkit.engine.strong_branching import reliable_choice
from blendkit.engine.tightening import Propagator, fix_by_reduced_costs
from blendkit.engine.tolerances import BEST_BOUND_EVERY, OBJECTIVE_GRID_TOLERANCE, Tolerances
from blendkit.engine.verify import worst_violation


@dataclass(frozen=True)
class SearchSettings:
    """How one search runs: the LP settings of every node, and when to stop early."""

    tol: Tolerances
    max_iterations: int
    scale: bool = True
    algorithm: str = "auto"
    ranging: bool = False
    node_limit: int | None = None
    time_limit: float | None = None


@dataclass(frozen=True)
class Node:
    """An open node: its domain, a lower bound on its objective, where it came from."""

    lower: np.ndarray
    upper: np.ndarray
    bound: float  # the parent's LP optimum (-inf at the root)
    depth: int
    basis: tuple[np.ndarray, np.ndarray] | None  # the parent's optimal basis
    branch: Branch | None = None  # the decision that made it, with its direction
    direction: int = DOWN
    estimate: float = -np.inf  # the estimated objective of the best solution below it


@dataclass(frozen=True)
class Incumbent:
    """The best solution found so far: x, its objective, the fixed domain it solves and
    the optimal basis of that domain's LP."""

    x: np.ndarray
    objective: float
    domain: tuple[np.ndarray, np.ndarray]
    basis: tuple[np.ndarray, np.ndarray] | None


class Search:
    """One branch-and-bound search; `run` returns what it found (see the module docstring)."""

    def __init__(self, problem: MIPProblem, settings: SearchSettings, basis=None, heuristics: bool = True,
                 cutoff_objective: float = np.inf):
        self.problem = problem
        self.heuristics = heuristics  # False inside a heuristic's own search
        self.agreement_for: Incumbent | None = None  # the incumbent the agreement search last ran for
        self.cutoff_objective = cutoff_objective  # a known solution's objective, to beat
        self.settings = settings
        self.tol = settings.tol
        self.relaxation = Relaxation(problem.form, settings.tol, settings.max_iterations, settings.scale,
                                     allow_dual=settings.algorithm == "auto")
        self.propagator = Propagator(problem, settings.tol)
        self.pseudocosts = Pseudocosts(problem.form.shape[1])
        self.start_basis = basis
        self.open: list[tuple[float, int, Node]] = []  # a heap by bound
        self.by_estimate: list[tuple[float, int, Node]] = []  # the same nodes, a heap by estimate
        self.taken: set[int] = set()  # counters of nodes already taken from one of the heaps
        self.counter = itertools.count()
        self.open_count = 0  # nodes still open
        self.picks = 0
        self.incumbent: Incumbent | None = None
        self.global_lower, self.global_upper = problem.form.col_lower, problem.form.col_upper
        self.root: NodeSolution | None = None
        self.nodes = 0
        self.other_iterations = 0  # of LPs outside the tree: fixed LPs, a heuristic's own search
        self.pruned_bound = np.inf  # least bound among nodes pruned within the allowed gap
        self.lost_bound = np.inf  # least bound among nodes dropped on numerical trouble
        self.stopped = ""  # why the search stopped early, if it did
        self.started = time.perf_counter()
        self.grid = objective_grid(problem)  # every objective value is a multiple of this (0: none)

    @property
    def iterations(self) -> int:
        """Simplex iterations of every LP solved so far."""
        return self.relaxation.iterations + self.other_iterations

    # ----- the cutoff and the bound --------------------------------------------------

    @property
    def cutoff(self) -> float:
        """Nodes whose bound reaches this cannot improve the incumbent by the allowed gap."""
        best = self.cutoff_objective if self.incumbent is None else min(self.incumbent.objective,
                                                                         self.cutoff_objective)
        if not np.isfinite(best):
            return np.inf
        allowed = max(self.tol.absolute_gap, self.tol.relative_gap * abs(best))
        if self.grid:
            allowed = max(allowed, self.grid * (1.0 - OBJECTIVE_GRID_TOLERANCE))
        return best - allowed

    def node_bound(self, objective: float) -> float:
        """A node's bound from its LP optimum: rounded up to the objective's grid, if any."""
        if self.grid and np.isfinite(objective):
            return float(np.ceil(objective / self.grid - OBJECTIVE_GRID_TOLERANCE) * self.grid)
        return objective

    def prune(self, bound: float) -> None:
        """Note a node pruned by its bound (for the honest final bound)."""
        self.pruned_bound = min(self.pruned_bound, bound)

    def best_bound(self, current: Node | None) -> float:
        """The least bound over open nodes, pruned nodes and the incumbent."""
        bounds = [self.pruned_bound, self.lost_bound]
        bounds += self.open_bounds()
        if current is not None:
            bounds.append(current.bound)
        if self.incumbent is not None:
            bounds.append(self.incumbent.objective)
        return min(bounds)

    # ----- the search ------------------------------------------------------------------

    def run(self) -> Node | None:
        """Search until no node is open or a limit is reached; returns the node in hand
        when a limit stopped the search (None otherwise). The root's outcome is in `root`."""
        form = self.problem.form
        node: Node | None = Node(lower=form.col_lower, upper=form.col_upper, bound=-np.inf, depth=0,
                                 basis=self.start_basis)
        while node is not None or self.open_count:
            if self.limit_reached():
                return node
            if node is None:
                node = self.next_open()
                if node is None:
                    break
            node = self.evaluate(node)
            if self.root is not None and self.root.status != "optimal":
                return None
        return None

    def time_left(self) -> float | None:
        """Seconds left before the time limit (None without one)."""
        limit = self.settings.time_limit
        return None if limit is None else limit - (time.perf_counter() - self.started)

    def limit_reached(self) -> bool:
        """True (and `stopped` says which) when the node or time limit is reached."""
        s = self.settings
        if s.node_limit is not None and self.nodes >= s.node_limit:
            self.stopped = f"node limit ({s.node_limit}) reached"
        elif s.time_limit is not None and time.perf_counter() - self.started >= s.time_limit:
            self.stopped = f"time limit ({s.time_limit:g} s) reached"
        return bool(self.stopped)

    def next_open(self) -> Node | None:
        """The open node to dive from: the one with the least estimate, except every
        BEST_BOUND_EVERY-th pick (and before any solution is known) the least bound;
        nodes the incumbent has overtaken are dropped on the way."""
        self.picks += 1
        by_bound = self.incumbent is None or self.picks % BEST_BOUND_EVERY == 0
        heap = self.open if by_bound else self.by_estimate
        while heap:
            _, key, node = heapq.heappop(heap)
            if key in self.taken:
                self.taken.discard(key)
                continue
            self.taken.add(key)
            self.open_count -= 1
            if node.bound < self.cutoff:
                return node
            self.prune(node.bound)
        return None

    def push(self, node: Node) -> None:
        """Keep a node open."""
        key = next(self.counter)
        self.open_count += 1
        heapq.heappush(self.open, (node.bound, key, node))
        heapq.heappush(self.by_estimate, (node.estimate, key, node))

    def open_bounds(self) -> list[float]:
        """The bounds of the nodes still open."""
        return [bound for bound, key, _ in self.open if key not in self.taken]

    def evaluate(self, node: Node) -> Node | None:
        """Solve a node's relaxation and act on it; returns the child to dive into, if any."""
        lower = np.maximum(node.lower, self.global_lower)
        upper = np.minimum(node.upper, self.global_upper)
        domain = self.propagator.tighten(lower, upper)
        if domain is None:
            return None
        lower, upper = domain
        solution = self.relaxation.solve(lower, upper, node.basis)
        self.nodes += 1
        if node.depth == 0:
            self.root = solution
        if solution.status == "optimal" and node.branch is not None:
            self.pseudocosts.record(node.branch, node.direction, solution.objective)
        if solution.status != "optimal":
            if solution.status != "infeasible" and node.depth > 0:
                self.lost_bound = min(self.lost_bound, node.bound)
            return None
        bound = self.node_bound(solution.objective)
        if bound >= self.cutoff:
            self.prune(bound)
            return None
        return self.after_solve(node, lower, upper, solution, bound)

    def after_solve(self, node: Node, lower, upper, solution: NodeSolution, bound: float) -> Node | None:
        """A node whose LP optimum is below the cutoff: a new incumbent, or branch on it."""
        x = solution.x
        columns, fraction, semi = violations(self.problem, x, self.tol.integrality)
        if columns.size == 0:
            self.offer(*solution_domain(self.problem, lower, upper, x, self.tol.integrality), solution.basis)
            return None
        if self.heuristics:
            run_heuristics(self, node.depth, lower, upper, solution)
        if bound >= self.cutoff:
            self.prune(bound)
            return None
        if self.incumbent is not None:
            room = self.cutoff - solution.objective
            lower, upper = fix_by_reduced_costs(self.problem, lower, upper, x, solution.reduced_costs, room, self.tol)
        choice = reliable_choice(self.problem, self.relaxation, self.pseudocosts, lower, upper, solution,
                                 (columns, fraction, semi), self.tol.integrality)
        if choice is None:
            return None
        j = int(columns[choice.position])
        branch = Branch(column=j, value=float(x[j]), semi=choice.semi, threshold=float(self.problem.threshold[j]),
                        parent_objective=solution.objective)
        children = {}
        for direction in (DOWN, UP):
            if choice.feasible(direction):
                child_lower, child_upper = branch.domain(self.problem, lower, upper, direction, self.tol.integrality)
                child_bound = max(bound, self.node_bound(choice.child_bound(solution.objective, direction)))
                children[direction] = Node(
                    lower=child_lower, upper=child_upper, bound=child_bound, depth=node.depth + 1,
                    basis=solution.basis, branch=branch, direction=direction,
                    estimate=choice.child_estimate(solution.objective, direction))
        other = UP if choice.direction == DOWN else DOWN
        if other in children:
            self.push(children[other])
        return children.get(choice.direction)

    # ----- solutions ---------------------------------------------------------------------

    def offer(self, lower, upper, basis) -> bool:
        """Solve the LP of a fixed domain; keep it as the incumbent if it is better.

        The solution is checked in the original problem as `solve_form` checks one (rows
        within the residual tolerance). Returns True when the fixed LP had a solution.
        """
        solution = self.relaxation.solve(lower, upper, basis)
        if solution.status != "optimal":
            return False
        x = np.clip(solution.x, lower, upper)  # within the bounds exactly: no -1e-15 inclusions
        if worst_violation(self.problem.form, x)[0] > self.tol.residual:
            return False
        self.adopt(Incumbent(x=x, objective=float(self.problem.form.c @ x), domain=(lower, upper),
                             basis=solution.basis))
        return True

    def adopt(self, found: Incumbent) -> None:
        """Keep a verified solution if it is better than the incumbent."""
        if self.incumbent is None or found.objective < self.incumbent.objective:
            self.incumbent = found
            self.fix_globally()

    def fix_globally(self) -> None:
        """Reduced-cost fixing with the root's LP optimum: bounds valid at every node."""
        root = self.root
        if root is None or root.status != "optimal" or not np.isfinite(self.cutoff):
            return
        form = self.problem.form
        room = self.cutoff - root.objective
        self.global_lower, self.global_upper = fix_by_reduced_costs(
            self.problem, form.col_lower, form.col_upper, root.x, root.reduced_costs, room, self.tol)

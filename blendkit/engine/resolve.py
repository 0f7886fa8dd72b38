"""Re-solving one LP after a change of costs or bounds, from the basis and factors it holds.

`Resolver` keeps what a solve builds and a re-solve of the same matrix can reuse: the
general form in original units, its scaling, the simplex state of the scaled problem and
the LU factors of its last optimal basis. A change of costs (`change_costs`) or of column
or row bounds (`change_col_bounds`, `change_row_bounds`, `change_rhs`) only rewrites the
numbers; `solve` then goes on from the basis held:

- after a move of bounds the nonbasic variables go to their new bounds and the basic
  values are recomputed, after new costs the duals and reduced costs, both with the
  factors already held (no refactorisation, no new scaling);
- when that basis is primal feasible (costs changed only), the primal simplex (`primal`)
  goes on from it; when it is not, boxed nonbasic variables move to the bound their
  reduced cost favours and, if the basis is then dual feasible (bounds changed only), the
  dual simplex (`dual`) goes on from it, with the same perturbation and final primal pass
  as in `simplex`. (After a price change of the benchmark's blends the primal simplex
  took as many iterations as the dual one after such moves, in up to half the time.)
- anything else (no dual or primal feasible start, infeasible, unbounded, a stall,
  trouble, a residual check that fails) is solved by `solve_form` from scratch with the
  last basis, exactly as a cold call would, and the basis it finds is held again.

A run from the basis held ends without the refactorisation a cold solve ends on: the
values and duals are recomputed from the factors it holds, updates and all, and the next
re-solve goes on with them (the factors' own limits still refactorise in a run). Only a
dense basis of fewer than INVERSE_ROWS rows is refactorised at the end: its LU costs less
than the etas would in each later solve. The residual check in original units, and the
solve from scratch when it fails, guard the answer as before. A problem too small for
BLAS to use threads (`solve.blas_threads_idle`) is re-solved without `one_blas_thread`.

The result is the LPResult `solve_form` returns, with the residual check in original units.
Notation as in `blendkit.engine.simplex`.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine.basis_factor import SingularBasis
from blendkit.engine.dual import run_dual
from blendkit.engine.primal import run_primal
from blendkit.engine.result import Basis, LPResult
from blendkit.engine.scaling import Scaling, find_scaling, scale_form
from blendkit.engine.simplex import optimal_outcome
from blendkit.engine.simplex_state import SimplexState
from blendkit.engine.solve import blas_threads_idle, checked_optimum, checked_result, one_blas_thread, solve_form
from blendkit.engine.standard_form import StandardForm, held_form, to_standard_form
from blendkit.engine.tolerances import INVERSE_ROWS, ITERATION_LIMIT_MIN, ITERATION_LIMIT_PER_LINE, Tolerances


class Resolver:
    """One LP, solved and re-solved after changes of its costs and bounds; see the module
    docstring. The matrix never changes.

    Build it with linprog's arguments (`Resolver(c, A_ub, b_ub, A_eq, b_eq, bounds)`, rows
    of A_ub first, then those of A_eq) or from a general form (`Resolver.from_form`). The
    first `solve` is a cold one; later ones start from the basis held. Inputs are copied,
    never changed; malformed changes raise ValueError and leave the problem as it was.
    """

    def __init__(self, c, A_ub=None, b_ub=None, A_eq=None, b_eq=None, bounds=None, *,
                 tolerances: Tolerances | None = None, max_iterations: int | None = None, scale: bool = True):
        self._setup(to_standard_form(c, A_ub, b_ub, A_eq, b_eq, bounds), tolerances, max_iterations, scale)

    @classmethod
    def from_form(cls, form: StandardForm, *, tolerances: Tolerances | None = None,
                  max_iterations: int | None = None, scale: bool = True) -> Resolver:
        """A Resolver of the general form `form` (row_lower <= A x <= row_upper)."""
        resolver = cls.__new__(cls)
        resolver._setup(form, tolerances, max_iterations, scale)
        return resolver

    def _setup(self, form: StandardForm, tolerances, max_iterations, scale: bool) -> None:
        """Shared by both constructors: keep the form, find the scaling once."""
        m, n = form.shape
        self._form = form = held_form(form)
        self._pending: dict[str, np.ndarray] = {}  # fields changed since `_form` was last rebuilt
        self._tol = tolerances or Tolerances()
        self._max_iterations = max_iterations or max(ITERATION_LIMIT_MIN, ITERATION_LIMIT_PER_LINE * (m + n))
        self._scale = scale
        self._scaling = find_scaling(form.A) if scale else Scaling(np.ones(m), np.ones(n))
        self._threads_idle = blas_threads_idle(m, n)  # the shape never changes
        self._state: SimplexState | None = None  # held after an optimal solve, factors and all
        self._basis: Basis | None = None  # the last optimal basis
        self._repriced = self._moved = False  # costs, bounds changed since the state last matched them

    # ----- the problem and its changes ---------------------------------------------------

    @property
    def form(self) -> StandardForm:
        """The problem as it stands now, in original units."""
        pending = self._pending
        if pending:  # one rebuild for all the changes since the last (a frozen record)
            form, now = self._form, pending.get
            self._form = StandardForm(c=now("c", form.c), A=form.A, row_lower=now("row_lower", form.row_lower),
                                      row_upper=now("row_upper", form.row_upper),
                                      col_lower=now("col_lower", form.col_lower),
                                      col_upper=now("col_upper", form.col_upper), n_ub=form.n_ub,
                                      from_linprog=form.from_linprog)
            self._pending = {}
        return self._form

    def _now(self, name: str) -> np.ndarray:
        """The field `name` of the form as it stands, changes included."""
        return self._pending.get(name, getattr(self._form, name))

    @property
    def basis(self) -> Basis | None:
        """The basis of the last optimal solve (None before one)."""
        return self._basis

    def change_costs(self, costs, index=None) -> None:
        """New costs: for every column, or for the columns `index` only."""
        c = _changed(self._now("c"), costs, index, "costs")
        if not np.isfinite(c).all():
            raise ValueError("costs must be finite numbers")
        self._pending["c"] = c
        self._repriced = True

    def change_col_bounds(self, lower, upper, index=None) -> None:
        """New column bounds (-inf / inf for none): for every column, or the columns `index`."""
        lo = _changed(self._now("col_lower"), lower, index, "lower")
        up = _changed(self._now("col_upper"), upper, index, "upper")
        _check_bounds(lo, up, "column")
        self._pending.update(col_lower=lo, col_upper=up)
        self._moved = True

    def change_row_bounds(self, lower, upper, index=None) -> None:
        """New row bounds (row_lower <= A x <= row_upper; -inf / inf for none): for every
        row, or the rows `index`. A linprog-built problem has A_ub's rows first."""
        lo = _changed(self._now("row_lower"), lower, index, "lower")
        up = _changed(self._now("row_upper"), upper, index, "upper")
        _check_bounds(lo, up, "row")
        self._pending.update(row_lower=lo, row_upper=up)
        self._moved = True

    def change_rhs(self, b_ub=None, b_eq=None) -> None:
        """New right-hand sides of a problem built from linprog's arguments (None: as it was)."""
        k = self._form.n_ub
        lo, up = self._now("row_lower"), self._now("row_upper").copy()
        if b_ub is not None:
            up[:k] = _changed(up[:k], b_ub, None, "b_ub")  # checked, then copied in
        if b_eq is not None:
            lo = lo.copy()
            lo[k:] = up[k:] = _changed(up[k:], b_eq, None, "b_eq")
            if not np.isfinite(up[k:]).all():
                raise ValueError("b_eq must contain only finite numbers")
        _check_bounds(lo, up, "row")
        self._pending.update(row_lower=lo, row_upper=up)
        self._moved = True

    # ----- solving -----------------------------------------------------------------------

    def solve(self, ranging: bool = False) -> LPResult:
        """The LP as it stands, from the basis held when there is one; see the module
        docstring. `ranging` adds the cost and bound ranges, as in `solve_form`."""
        result = None
        if self._state is not None and not ranging and not self._state.sparse and self._threads_idle:
            result = self._warm(ranging)  # no BLAS call this small uses threads: no need to hold them
        elif self._state is not None:
            with one_blas_thread():
                result = self._warm(ranging)
        if result is None:
            result = self._cold(ranging)
        self._repriced = self._moved = False
        return result

    def _cold(self, ranging: bool) -> LPResult:
        """A solve from scratch (from the last basis, as `solve_form` takes it); its
        optimal basis is then factorised and held for the next re-solve."""
        result = solve_form(self.form, basis=self._basis, tolerances=self._tol, max_iterations=self._max_iterations,
                            scale=self._scale, ranging=ranging)
        self._state = None
        if result.status == "optimal":
            self._basis = result.basis
            self._hold(result.basis)
        return result

    def _hold(self, basis: Basis) -> None:
        """Build the state of the scaled problem at `basis`, factors and all (None when the
        basis does not fit it, as when an artificial stayed basic on a redundant row)."""
        state = SimplexState(scale_form(self.form, self._scaling), self._tol, self._max_iterations, held=True)
        with one_blas_thread():
            if state.start_from(basis.head, basis.at_upper):
                self._state = state
                self._cost = np.concatenate([state.c_struct, np.zeros(state.m)])
                self._bounds = _Bounds(state)
                state.d = state.fresh_duals(self._cost)  # a re-solve then starts with them
                # Whether a run ends on a refactorisation (`run_dual`): only on a small dense
                # basis, whose LU costs less than the etas left pending would in every later
                # solve (from INVERSE_ROWS rows a basis is soon held as its inverse, a sparse
                # one applies its etas in one triangular system; see `basis_factor`).
                self._refactor_at_end = state.m < INVERSE_ROWS and not state.sparse

    def _warm(self, ranging: bool) -> LPResult | None:
        """The re-solve from the basis held, or None to solve from scratch."""
        state, moved = self._state, self._moved
        self._load()
        if moved:
            if np.count_nonzero(state.lower > state.upper):
                return None
            self._bounds = _Bounds(state)
        state.iterations = 0
        state.max_iterations = self._max_iterations
        try:
            status, algorithm = _iterate(state, self._bounds, self._cost, moved, self._repriced or state.d is None,
                                         self._refactor_at_end)
        except SingularBasis:
            status, algorithm = "numerical_trouble", ""
        if status != "optimal":
            return None
        if ranging:
            outcome = optimal_outcome(state, phase_one=0, warm=True, algorithm=algorithm, ranging=True)
            result = checked_result(self.form, self._scaling, outcome, self._tol)[0]
        else:  # the same result, from the state's arrays without an outcome record between
            n, m = state.n, state.m
            basis = Basis(head=state.head.copy(), at_upper=state.at_upper[: n + m].copy(), shape=(m, n))
            result = checked_optimum(self.form, self._scaling, state.z[:n], state.y, state.d[:n], basis, self._tol,
                                     iterations=state.iterations, phase_one_iterations=0, warm=True,
                                     algorithm=algorithm)
        if result.status != "optimal":  # the residual check failed
            return None
        self._basis = result.basis
        return result

    def _load(self) -> None:
        """Write the costs (into `_cost` too, over the structurals and logicals) and bounds
        changed since the last solve, scaled, into the state."""
        state, form, rows, cols = self._state, self.form, self._scaling.rows, self._scaling.cols
        n = state.n
        if self._repriced:
            state.c_struct = form.c * cols
            self._cost[:n] = state.c_struct
        if self._moved:  # the factors are powers of two: an infinite bound stays infinite
            np.divide(form.col_lower, cols, out=state.lower[:n])
            np.divide(form.col_upper, cols, out=state.upper[:n])
            np.multiply(form.row_lower, rows, out=state.lower[n:])
            np.multiply(form.row_upper, rows, out=state.upper[n:])


class _Bounds:
    """What the checks of a re-solve read of the state's bounds, found once per change of
    them rather than at every check: which variables are not fixed (`movable`), which are
    free (`free`, indices), and each bound relaxed by the primal feasibility tolerance
    (`low`, `high`: outside them a value breaks its bound, as in `SimplexState.start_from`);
    the dual simplex reads `span` (upper - lower), `movable` and `free` too (`run_dual`)."""

    __slots__ = ("movable", "free", "low", "high", "span")

    def __init__(self, state: SimplexState):
        lower, upper, tp = state.lower, state.upper, state.tol.primal_feasibility
        self.span = upper - lower
        self.movable = lower != upper
        self.free = ((lower == -np.inf) & (upper == np.inf)).nonzero()[0]
        relax = np.abs(lower)  # tp * (1 + |bound|), in place (every re-solve after a move)
        relax += 1
        relax *= tp
        self.low = lower - relax
        relax = np.abs(upper)
        relax += 1
        relax *= tp
        self.high = upper + relax


def _iterate(state: SimplexState, bounds: _Bounds, cost: np.ndarray, moved: bool, repriced: bool,
             refactor_at_end: bool) -> tuple[str, str]:
    """(status, algorithm) of the iterations from the basis held: none when it is still
    optimal, the primal simplex when it is primal feasible, else the dual simplex when the
    boxed nonbasics can be placed so that it is dual feasible ("no_start" when not).

    The state ended its last solve optimal, with fresh values and reduced costs: only a
    move of bounds (`moved`) needs the values again, only new costs (`repriced`) the duals.
    Without `refactor_at_end` both runs end on the factors they hold (`run_dual`): the
    residual check in original units, and a solve from scratch when it fails, guard the answer.
    """
    if moved:
        state.place_nonbasics(state.at_upper)
        state.basic_values()
    if repriced:
        state.d = state.fresh_duals(cost)
    if not moved or _primal_feasible(state, bounds):
        if not np.count_nonzero(_asks(state, bounds)):
            return "optimal", "primal"
        return run_primal(state, cost, d=state.d, refactor_at_end=refactor_at_end), "primal"
    if not _place_for_dual(state, bounds):
        return "no_start", ""
    # run_dual ends with the true costs' duals
    status = run_dual(state, cost, perturb=True, d=state.d, refactor_at_end=refactor_at_end, bounds=bounds)
    if status == "optimal" and np.count_nonzero(_asks(state, bounds)):
        # rounding or the perturbation left a reduced cost astray
        status = run_primal(state, cost, d=state.d, refactor_at_end=refactor_at_end)
    return status, "dual"


def _primal_feasible(state: SimplexState, bounds: _Bounds) -> bool:
    """True when every basic value lies within its bounds (primal feasibility tolerance, as
    in `SimplexState.start_from`)."""
    head = state.head
    xb = state.z[head]
    # the upper side only when the lower one holds (a move of limits usually breaks one)
    return not (np.count_nonzero(xb < bounds.low[head]) or np.count_nonzero(xb > bounds.high[head]))


def _asks(state: SimplexState, bounds: _Bounds) -> np.ndarray:
    """Where a nonbasic variable's reduced cost (`state.d`) asks it to move: at its lower
    bound with d < 0, at its upper bound with d > 0, free with d != 0 (beyond the dual
    feasibility tolerance); basic and fixed variables never ask (`pricing.prices_out`).
    None ask when the basis is dual feasible."""
    d, td = state.d, state.tol.dual_feasibility
    asks = d < -td
    np.copyto(asks, d > td, where=state.at_upper)  # np.where(at_upper, d > td, d < -td), in fewer steps
    free = bounds.free
    if free.size:
        asks[free] = np.abs(d[free]) > td
    asks &= bounds.movable
    asks[state.head] = False
    return asks


def _place_for_dual(state: SimplexState, bounds: _Bounds) -> bool:
    """Put each boxed nonbasic at the bound its reduced cost favours and recompute the basic
    values; True when the basis is then dual feasible (as in `dual.start_dual`). The
    nonbasics were just placed by `at_upper`: when none asks to move, nothing is redone."""
    asks = _asks(state, bounds)
    if not np.count_nonzero(asks):
        return True
    if bounds.free.size and np.count_nonzero(asks[bounds.free]):
        return False  # a free variable sits at zero whatever its reduced cost
    state.place_nonbasics(state.at_upper ^ asks)  # a bound it asks for may be infinite: checked next
    if np.count_nonzero(_asks(state, bounds)):
        return False
    state.basic_values()
    return True


def _changed(values: np.ndarray, new, index, name: str) -> np.ndarray:
    """A copy of `values` with `new` in every place, or in the places `index`."""
    new = np.array(new, dtype=float).reshape(-1)  # a copy of our own
    if index is None:
        if new.size != values.size:
            raise ValueError(f"{name} must have {values.size} entries, got {new.size}")
        return new
    out = np.array(values, dtype=float, copy=True)
    index = np.asarray(index, dtype=int).reshape(-1)
    if new.size not in (1, index.size) or np.any(index < -out.size) or np.any(index >= out.size):
        raise ValueError(f"{name}: {new.size} values for {index.size} places among {out.size}")
    out[index] = new
    return out


def _check_bounds(lower: np.ndarray, upper: np.ndarray, what: str) -> None:
    """Raise ValueError for a NaN bound, a lower bound of +inf or an upper bound of -inf.
    The first test reads the largest lower and the smallest upper bound (argmax and argmin
    find a NaN first, and a NaN fails the comparison), so it alone passes good bounds."""
    if not lower.size or (lower.item(lower.argmax()) < np.inf and upper.item(upper.argmin()) > -np.inf):
        return
    if np.isnan(lower).any() or np.isnan(upper).any():
        raise ValueError(f"{what} bounds must not be NaN")
    raise ValueError(f"a {what} lower bound of +inf or upper bound of -inf admits no value")

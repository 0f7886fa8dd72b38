"""One price per ingredient: the price range over which a whole run's plan stays optimal.

A buyer pays one price for an ingredient, whatever product it goes into. With several
products solved jointly, that price is the cost of the ingredient's column in every
product at once, so its range is a parametric cost analysis along that direction: with
the optimal basis B (variables x and the rows' activities s, A x - s = 0), a change t of
the price changes the costs by t·d (d = per × amount weight on each of the ingredient's
columns), the duals by t·B⁻ᵀ d_B, and every nonbasic reduced cost by t·(d_N − M_Nᵀ B⁻ᵀ d_B).
The plan stays optimal while no reduced cost changes sign: t in [t_low, t_high]. Below
the price + t_low the plan uses more of it (or brings it in); above the price + t_high,
less (or drops it). For products solved as separate LPs the run's plan stays while each
part's does: the range is the intersection of the parts' ranges.
"""

from __future__ import annotations

import numpy as np

from blendkit.engine import LPResult
from blendkit.engine.basis_factor import SingularBasis
from blendkit.engine.kernel_factor import KernelBasisFactor
from blendkit.engine.lapack import lapack
from blendkit.engine.sparse import held_sparse
from blendkit.lp.build import BlendLP
from blendkit.model.blend import Blend
from blendkit.lp.tolerances import DUAL_SIGN
from blendkit.model.formula import SharedPrice

# How many price directions one block of the batched solve takes (bounds its memory).
RANGES_AT_ONCE = 256


def shared_prices(blend: Blend, lp: BlendLP, result: LPResult) -> tuple[SharedPrice, ...]:
    """The one-price range of every ingredient of a jointly solved run."""
    if result.basis is None or result.status != "optimal":
        return ()
    size = lp.form.c.size + lp.form.A.shape[0]
    directions = np.array([_direction(lp, j, size) for j in range(len(blend.ingredients))]).reshape(-1, size)
    ranges = direction_ranges(lp, result, directions)
    return tuple(_line((item.name, item.cost), low, high) for item, (low, high) in zip(blend.ingredients, ranges))


def direction_range(lp: BlendLP, result: LPResult, direction: np.ndarray,
                    costs: np.ndarray | None = None) -> tuple[float, float]:
    """The steps t (t_low <= 0 <= t_high) over which costs c + t·direction keep the
    optimal basis of `result` optimal; `direction` covers the columns (and may cover the
    row activities, which cost nothing); `costs` are the column costs `result` was solved
    with (default: the LP's own)."""
    return direction_ranges(lp, result, np.asarray(direction, dtype=float)[None, :], costs)[0]


def direction_ranges(lp: BlendLP, result: LPResult, directions: np.ndarray,
                     costs: np.ndarray | None = None) -> list[tuple[float, float]]:
    """`direction_range` for each row of `directions`, from one factorisation of the basis
    and one solve for all of them (a plant's basis has thousands of rows: a dense solve
    per ingredient took seconds each)."""
    A = lp.form.A.toarray() if hasattr(lp.form.A, "toarray") else np.asarray(lp.form.A, dtype=float)
    m, n = A.shape
    c = np.concatenate([lp.form.c if costs is None else costs, np.zeros(m)])  # the row activities cost nothing
    head = np.asarray(result.basis.head)
    outside = np.ones(n + m, dtype=bool)
    outside[head] = False
    nonbasic = np.flatnonzero(outside)  # not np.setdiff1d: its np.unique imports numpy.ma (15 ms)
    at_upper, fixed = np.asarray(result.basis.at_upper)[nonbasic], _fixed(lp, nonbasic)
    solve_transposed = _transposed_solver(_basis_matrix(A, head))
    ranges = []
    for start in range(0, directions.shape[0], RANGES_AT_ONCE):  # a bounded block of directions at a time
        block = directions[start : start + RANGES_AT_ONCE]
        part = np.zeros((n + m, block.shape[0] + 1))  # the costs, then the block's directions
        part[:, 0] = c
        part[: directions.shape[1], 1:] = block.T
        y = solve_transposed(part[head])
        changes = part - np.vstack([A.T @ y, -y])  # M^T y for M = [A, -I], without forming M
        reduced = changes[nonbasic, 0]
        ranges += [_interval(reduced, changes[nonbasic, k], at_upper, fixed) for k in range(1, part.shape[1])]
    return ranges


def _transposed_solver(B: np.ndarray):
    """rhs -> B^-T rhs for the basis matrix B, from one factorisation reused for every
    right-hand side: the engine's sparse factors for a large, mostly empty basis such as
    a plant's (a dense LU of its 1,720 rows took 0.28 s), else LAPACK's LU."""
    if held_sparse(*B.shape, int(np.count_nonzero(B))):
        factor = KernelBasisFactor(refactor_every=1)
        try:
            factor.factor(B)
        except SingularBasis:
            raise np.linalg.LinAlgError("the optimal basis is singular") from None
        return factor.btran
    lu, piv, info = lapack.dgetrf(np.asfortranarray(B, dtype=float))
    if info > 0:
        raise np.linalg.LinAlgError("the optimal basis is singular")
    return lambda rhs: lapack.dgetrs(lu, piv, rhs, trans=1)[0]


def _basis_matrix(A: np.ndarray, head: np.ndarray) -> np.ndarray:
    """The basis columns of M = [A, -I]: column k of A for a structural in the head, -e_i
    for the activity of row i (M itself, twice the size of A, is never formed)."""
    m, n = A.shape
    B = np.zeros((m, head.size))
    structural = head < n
    B[:, structural] = A[:, head[structural]]
    logical = np.flatnonzero(~structural)
    B[head[logical] - n, logical] = -1.0
    return B


def _direction(lp: BlendLP, j: int, size: int) -> np.ndarray:
    """The change of every cost when ingredient j's price rises by 1 in every product."""
    direction = np.zeros(size)
    J = lp.n_ingredients
    for p in range(len(lp.products)):
        weight = lp.cost_units[p] if lp.multi else 1.0
        direction[p * J + j] = lp.per * weight
    return direction


def _fixed(lp: BlendLP, nonbasic: np.ndarray) -> np.ndarray:
    """True for nonbasic variables whose bounds are equal: they never enter."""
    form = lp.form
    lower = np.concatenate([form.col_lower, form.row_lower])[nonbasic]
    upper = np.concatenate([form.col_upper, form.row_upper])[nonbasic]
    return lower == upper


def _interval(reduced, change, at_upper, fixed) -> tuple[float, float]:
    """The t for which each nonbasic reduced cost keeps its sign: r + t·Δr >= 0 at a lower
    bound, <= 0 at an upper bound (fixed variables and zero changes set no limit)."""
    sign = np.where(at_upper, -1.0, 1.0)
    r, dr = sign * reduced, sign * change
    moves = ~fixed & (np.abs(dr) > DUAL_SIGN)
    t = -np.maximum(r[moves], 0.0) / dr[moves]
    rising = dr[moves] > 0
    return float(t[rising].max(initial=-np.inf)), float(t[~rising].min(initial=np.inf))


def _line(item: tuple[str, float], low: float, high: float) -> SharedPrice:
    """One ingredient's range as prices, an end only a negative price reaches noted."""
    name, price = item
    more_below = price + low if np.isfinite(low) else None
    less_above = price + high if np.isfinite(high) else None
    note = ""
    if more_below is not None and more_below < 0 <= price:
        more_below, note = None, "used no more at any price of 0 or more"
    return SharedPrice(name=name, price=price, more_below=more_below, less_above=less_above, note=note)


def intersect(parts: list[tuple[SharedPrice, ...]]) -> tuple[SharedPrice, ...]:
    """The one-price ranges of a run solved in separate parts: each ingredient's range is
    where every part's plan stays (the narrowest ends)."""
    if not parts or any(not part for part in parts):
        return ()
    lines = []
    for same in zip(*parts):
        low = max((line.more_below for line in same if line.more_below is not None), default=None)
        high = min((line.less_above for line in same if line.less_above is not None), default=None)
        note = next((line.note for line in same if line.note), "") if low is None else ""
        lines.append(SharedPrice(name=same[0].name, price=same[0].price, more_below=low, less_above=high, note=note))
    return tuple(lines)

"""Turn linprog-style arguments into the engine's one internal form.

The internal form is

    minimise c·x  subject to  row_lower <= A x <= row_upper,  col_lower <= x <= col_upper

with the inequality rows first (row_lower = -inf) and the equality rows after them
(row_lower = row_upper). Malformed arguments raise ValueError; everything else,
including contradictory bounds, is left for the solver to report as a status.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from blendkit.engine.sparse import held_sparse, is_sparse, sparse
from blendkit.engine.tolerances import SPARSE_ROWS


@dataclass(frozen=True)
class StandardForm:
    """An LP with row bounds and column bounds; see the module docstring."""

    c: np.ndarray
    A: np.ndarray  # or a scipy.sparse matrix, for large sparse problems
    row_lower: np.ndarray
    row_upper: np.ndarray
    col_lower: np.ndarray
    col_upper: np.ndarray
    n_ub: int = 0  # the first n_ub rows came from A_ub, the rest from A_eq
    from_linprog: bool = False  # rows are A_ub's then A_eq's (else a general form)

    @property
    def shape(self) -> tuple[int, int]:
        """(rows, columns) of A."""
        return self.A.shape


def _matrix(name: str, A, n: int):
    """A float copy of A (m x n; a sparse matrix stays sparse), or a (0 x n) matrix for None."""
    if A is None:
        return np.zeros((0, n))
    if is_sparse(A):
        A = sparse().csr_matrix(A, dtype=float, copy=True)
        if A.ndim != 2 or A.shape[1] != n:
            raise ValueError(f"{name} must be a 2-D array with {n} columns, got shape {A.shape}")
        if not np.all(np.isfinite(A.data)):
            raise ValueError(f"{name} must contain only finite numbers")
        return A
    A = np.array(A, dtype=float, copy=True)
    if A.ndim == 1 and A.size == 0:
        A = A.reshape(0, n)
    if A.ndim != 2 or A.shape[1] != n:
        raise ValueError(f"{name} must be a 2-D array with {n} columns, got shape {A.shape}")
    if not np.all(np.isfinite(A)):
        raise ValueError(f"{name} must contain only finite numbers")
    return A


def _vector(name: str, b, m: int) -> np.ndarray:
    """A float copy of b with m entries, or an empty vector for None."""
    if b is None:
        if m:
            raise ValueError(f"{name} is required when its matrix has {m} rows")
        return np.zeros(0)
    b = np.array(b, dtype=float, copy=True).reshape(-1)
    if b.shape[0] != m:
        raise ValueError(f"{name} must have {m} entries, got {b.shape[0]}")
    if np.any(np.isnan(b)):
        raise ValueError(f"{name} must not contain NaN")
    return b


def _bounds(bounds, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Column bounds as two arrays, with None read as an infinite bound."""
    lower = np.zeros(n)
    upper = np.full(n, np.inf)
    if bounds is None:
        return lower, upper
    if isinstance(bounds, tuple) and len(bounds) == 2 and all(
        b is None or np.isscalar(b) for b in bounds
    ):
        pairs = [bounds] * n
    else:
        pairs = list(bounds)
        if len(pairs) == 1 and n != 1:
            pairs = pairs * n
    if len(pairs) != n:
        raise ValueError(f"bounds must give one (lower, upper) pair per variable ({n}), got {len(pairs)}")
    fast = _pairs_at_once(pairs, n)
    if fast is not None:
        return fast
    for j, pair in enumerate(pairs):
        try:
            lo, hi = pair
        except (TypeError, ValueError):
            raise ValueError(f"bounds[{j}] must be a (lower, upper) pair, got {pair!r}") from None
        lower[j] = -np.inf if lo is None else float(lo)
        upper[j] = np.inf if hi is None else float(hi)
        if np.isnan(lower[j]) or np.isnan(upper[j]):
            raise ValueError(f"bounds[{j}] must not be NaN")
        if lower[j] == np.inf or upper[j] == -np.inf:
            raise ValueError(f"bounds[{j}] = {pair!r}: a lower bound of +inf or upper bound of -inf admits no value")
    return lower, upper


def _pairs_at_once(pairs, n: int) -> tuple[np.ndarray, np.ndarray] | None:
    """The bounds of a well-formed list of pairs in a few array operations, or None to
    fall back to the pair-by-pair reading that names the bad pair."""
    try:
        table = np.array(pairs, dtype=object)
    except (TypeError, ValueError):
        return None
    if table.shape != (n, 2):
        return None
    missing = table == None
    try:
        values = np.where(missing, 0.0, table).astype(float)
    except (TypeError, ValueError):
        return None
    if np.isnan(values).any():
        return None
    lower = np.where(missing[:, 0], -np.inf, values[:, 0])
    upper = np.where(missing[:, 1], np.inf, values[:, 1])
    if np.any(lower == np.inf) or np.any(upper == -np.inf):
        return None
    return lower, upper


def to_standard_form(c, A_ub=None, b_ub=None, A_eq=None, b_eq=None, bounds=None) -> StandardForm:
    """Check and convert linprog-style arguments; inputs are copied, never changed."""
    c = np.array(c, dtype=float, copy=True).reshape(-1)
    if not np.all(np.isfinite(c)):
        raise ValueError("c must contain only finite numbers")
    n = c.shape[0]
    A_ub = _matrix("A_ub", A_ub, n)
    A_eq = _matrix("A_eq", A_eq, n)
    b_ub = _vector("b_ub", b_ub, A_ub.shape[0])
    b_eq = _vector("b_eq", b_eq, A_eq.shape[0])
    if np.any(np.isinf(b_eq)):
        raise ValueError("b_eq must contain only finite numbers")
    col_lower, col_upper = _bounds(bounds, n)
    return StandardForm(
        c=c,
        A=sparse().vstack([A_ub, A_eq], format="csr") if is_sparse(A_ub) or is_sparse(A_eq) else np.vstack([A_ub, A_eq]),
        row_lower=np.concatenate([np.full(A_ub.shape[0], -np.inf), b_eq]),
        row_upper=np.concatenate([b_ub, b_eq]),
        col_lower=col_lower,
        col_upper=col_upper,
        n_ub=A_ub.shape[0],
        from_linprog=True,
    )


def held_form(form: StandardForm) -> StandardForm:
    """`form`, its A made a CSR matrix when it is dense but the engine will hold it sparse
    (`sparse.held_sparse`): the scaling, the scaled copy and the residual checks then touch
    its non-zeros alone. The workbook path builds a plant's matrix dense: at 40 products ten
    million entries, nine in ten of them zero."""
    A = form.A
    if is_sparse(A) or A.shape[0] < SPARSE_ROWS or not held_sparse(*A.shape, int(np.count_nonzero(A))):
        return form
    return replace(form, A=sparse().csr_matrix(A))

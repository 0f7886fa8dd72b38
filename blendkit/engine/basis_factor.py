"""The basis matrix as an LU factorisation plus a file of updates.

The simplex method needs to solve B z = a (forward, "ftran") and B^T y = c
(backward, "btran") for a basis B that changes by one column per iteration. We never
form an inverse: B0 = P L U is factorised with LAPACK, and each column replacement adds
one eta vector (product-form update). After `refactor_every` updates the caller
refactorises from scratch, which also bounds the growth of rounding error.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.linalg import lapack
from scipy.sparse.linalg import splu

from blendkit.engine.tolerances import SINGULAR_PIVOT


class SingularBasis(Exception):
    """The basis matrix handed to `factor` is singular to working precision."""


class BasisFactor:
    """LU factors of a square basis matrix with product-form column updates."""

    def __init__(self, refactor_every: int):
        self.refactor_every = refactor_every
        self._lu = None
        self._piv = None
        self._m = 0
        # Each update: position r and the eta column alpha = B_old^{-1} a_entering.
        self._eta_rows: list[int] = []
        self._eta_cols: list[np.ndarray] = []

    @property
    def updates(self) -> int:
        """How many column replacements since the last factorisation."""
        return len(self._eta_rows)

    @property
    def due(self) -> bool:
        """True when the update file is long enough that refactorising pays."""
        return len(self._eta_rows) >= self.refactor_every

    def _clear(self, B) -> bool:
        """Start a factorisation of B: empty the update file; False when B has no rows."""
        self._m = B.shape[0]
        self._eta_rows.clear()
        self._eta_cols.clear()
        return self._m > 0

    @staticmethod
    def _check_pivots(diagonal: np.ndarray) -> None:
        """Raise SingularBasis when the smallest pivot of U is negligible (SINGULAR_PIVOT)."""
        diag = np.abs(diagonal)
        if diag.min() <= SINGULAR_PIVOT * max(1.0, diag.max()):
            raise SingularBasis("basis matrix is singular to working precision")

    def factor(self, B: np.ndarray) -> None:
        """Factorise B afresh and clear the update file."""
        if not self._clear(B):
            return
        lu, piv, info = lapack.dgetrf(np.asfortranarray(B, dtype=float))
        if info > 0:
            raise SingularBasis(f"basis matrix is singular (zero pivot at position {info})")
        self._check_pivots(np.diag(lu))
        self._lu, self._piv = lu, piv

    def _solve(self, a: np.ndarray, transpose: bool) -> np.ndarray:
        """Solve B0 z = a (or B0^T z = a) with the stored LU factors."""
        z, _ = lapack.dgetrs(self._lu, self._piv, a, trans=1 if transpose else 0)
        return z

    def ftran(self, a: np.ndarray) -> np.ndarray:
        """Solve B z = a for the current basis."""
        if self._m == 0:
            return np.zeros(0)
        z = self._solve(a, False)
        for r, alpha in zip(self._eta_rows, self._eta_cols):
            zr = z[r] / alpha[r]
            z -= zr * alpha
            z[r] = zr
        return z

    def btran(self, c: np.ndarray) -> np.ndarray:
        """Solve B^T y = c for the current basis."""
        if self._m == 0:
            return np.zeros(0)
        w = np.array(c, dtype=float, copy=True)
        for r, alpha in zip(reversed(self._eta_rows), reversed(self._eta_cols)):
            # E^T w_new = w: only entry r changes.
            w[r] = (w[r] - (alpha @ w - alpha[r] * w[r])) / alpha[r]
        return self._solve(w, True)

    def update(self, r: int, alpha: np.ndarray) -> None:
        """Record that column r of the basis was replaced; alpha = B_old^{-1} a_new.

        `alpha` is kept as it is, not copied: the caller must not change it afterwards
        (the simplex code only reads the columns that ftran hands it).
        """
        self._eta_rows.append(r)
        self._eta_cols.append(alpha)


class SparseBasisFactor(BasisFactor):
    """The same interface over a sparse LU (SuperLU via scipy.sparse), for large bases."""

    def factor(self, B) -> None:
        """Factorise the sparse basis B afresh and clear the update file."""
        if not self._clear(B):
            return
        try:
            self._lu = splu(sp.csc_matrix(B), permc_spec="COLAMD")
        except RuntimeError as error:
            raise SingularBasis(f"basis matrix is singular ({error})") from None
        self._check_pivots(self._lu.U.diagonal())

    def _solve(self, a: np.ndarray, transpose: bool) -> np.ndarray:
        """Solve B0 z = a (or B0^T z = a) with SuperLU's factors."""
        return self._lu.solve(np.asarray(a, dtype=float), trans="T" if transpose else "N")

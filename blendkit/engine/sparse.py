"""scipy.sparse on demand: the engine imports it only once a sparse matrix is met or built.

A small dense blend never holds a sparse matrix, and importing scipy.sparse (with
scipy.sparse.linalg, for SuperLU) costs about 0.05 s of CPU on top of scipy itself, so the
engine's modules ask here instead of importing it at their top. A sparse matrix cannot
exist unless scipy.sparse was imported, so `is_sparse` looks at `sys.modules` and never
imports anything; it answers exactly as `scipy.sparse.issparse` does.
"""

from __future__ import annotations

import sys
from types import ModuleType

import numpy as np

from blendkit.engine.tolerances import SPARSE_DENSITY, SPARSE_ROWS


def is_sparse(A) -> bool:
    """True when A is a scipy.sparse matrix or array (scipy.sparse.issparse), without
    importing scipy. A numpy array answers at once (the check of a re-solve asks each time)."""
    if type(A) is np.ndarray:
        return False
    module = sys.modules.get("scipy.sparse")
    return module is not None and module.issparse(A)


def held_sparse(rows: int, columns: int, nonzeros: int) -> bool:
    """True for a problem the engine holds sparse: at least SPARSE_ROWS rows and at most
    SPARSE_DENSITY of its matrix non-zero (a plant; blends and the NETLIB set stay dense)."""
    return rows >= SPARSE_ROWS and nonzeros <= SPARSE_DENSITY * max(1, rows * columns)


def sparse() -> ModuleType:
    """The scipy.sparse module, imported on first use."""
    import scipy.sparse

    return scipy.sparse


def splu(*args, **kwargs):
    """scipy.sparse.linalg.splu (SuperLU), imported on first use."""
    from scipy.sparse.linalg import splu as superlu

    return superlu(*args, **kwargs)

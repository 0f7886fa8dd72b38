"""The engine's LAPACK and BLAS routines loaded without scipy.linalg (blendkit.engine.lapack),
and scipy.sparse imported on demand (blendkit.engine.sparse).

Each order of loading runs in a fresh child process, since this test process has imported
scipy.linalg long before. The results are checked against numpy.linalg (its own LAPACK
build, outside blendkit) and against scipy.linalg's routines on the same matrix.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import scipy.sparse

from blendkit.engine.lapack import BLAS_ROUTINES, LAPACK_ROUTINES, _load_compiled
from blendkit.engine.sparse import is_sparse

ROOT = Path(__file__).resolve().parents[1]

# A child: the five routines on one matrix, as basis_factor calls them, compared with
# numpy.linalg; printed as JSON with what was loaded how.
_ROUTINES = """
import json, sys
import numpy as np
A = np.random.default_rng(7).random((6, 6)) + 6 * np.eye(6)
b = np.arange(1.0, 7.0)
def run(lapack, blas):
    lu, piv, info = lapack.dgetrf(np.asfortranarray(A))
    z, _ = lapack.dgetrs(lu, piv, b)
    zt, _ = lapack.dgetrs(lu, piv, b, trans=1)
    t, _ = lapack.dtrtrs(np.tril(A), b, lower=1)
    inverse, _ = lapack.dgetri(lu, piv)
    outer = blas.dger(-1.0, b, b, a=np.asfortranarray(inverse.copy()), overwrite_a=1)
    return [x.tolist() for x in (lu, piv, z, zt, t, inverse, outer)] + [int(info)]
def numpy_answers():
    inverse = np.linalg.inv(A)
    return [np.linalg.solve(A, b).tolist(), np.linalg.solve(A.T, b).tolist(),
            np.linalg.solve(np.tril(A), b).tolist(), inverse.tolist(), (inverse - np.outer(b, b)).tolist()]
"""
_OURS_FIRST = _ROUTINES + """
from blendkit.engine import lapack as ours
before = sorted(name for name in sys.modules if name.split(".")[0] == "scipy")
first = run(ours.lapack, ours.blas)
import scipy.linalg
second = run(scipy.linalg.lapack, scipy.linalg.blas)
same = scipy.linalg.lapack.dgetrf is ours.lapack.dgetrf and scipy.linalg.blas.dger is ours.blas.dger
print(json.dumps({"direct": ours.direct, "before": before, "first": first, "second": second, "same": same,
                  "numpy": numpy_answers(), "solve": scipy.linalg.solve(A, b).tolist(),
                  "lu_solve": scipy.linalg.lu_solve(scipy.linalg.lu_factor(A), b).tolist()}))
"""
_SCIPY_FIRST = _ROUTINES + """
import scipy.linalg
first = run(scipy.linalg.lapack, scipy.linalg.blas)
from blendkit.engine import lapack as ours
second = run(ours.lapack, ours.blas)
same = ours.lapack is scipy.linalg.lapack and ours.blas is scipy.linalg.blas
print(json.dumps({"direct": ours.direct, "before": [], "first": first, "second": second, "same": same,
                  "numpy": numpy_answers(), "solve": scipy.linalg.solve(A, b).tolist(),
                  "lu_solve": scipy.linalg.lu_solve(scipy.linalg.lu_factor(A), b).tolist()}))
"""
# The direct load made to fail (no file under any suffix): the fallback to scipy.linalg.
_BROKEN = "import importlib.machinery\nimportlib.machinery.EXTENSION_SUFFIXES[:] = ['.missing']\n" + _OURS_FIRST


def _child(code: str) -> dict:
    """Run `code` in a fresh interpreter at the repository root; its last line as JSON."""
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def _check_answers(answer: dict) -> None:
    """Both runs equal to each other and to numpy.linalg's solves and inverse."""
    assert answer["first"] == answer["second"]  # the very same routines: bit-for-bit equal
    lu, piv, z, zt, t, inverse, outer, info = answer["first"]
    assert info == 0
    expected = answer["numpy"]  # numpy.linalg, outside blendkit
    for ours, theirs in zip((z, zt, t, inverse, outer), expected):
        np.testing.assert_allclose(ours, theirs, rtol=1e-12, atol=1e-12)
    # scipy.linalg's own high-level functions still work after either order.
    np.testing.assert_allclose(answer["solve"], expected[0], rtol=1e-12)
    np.testing.assert_allclose(answer["lu_solve"], expected[0], rtol=1e-12)


def test_direct_load_then_scipy_linalg_share_one_module():
    answer = _child(_OURS_FIRST)
    assert answer["direct"] is True
    assert answer["before"] == ["scipy.linalg._fblas", "scipy.linalg._flapack"]  # no scipy package run
    assert answer["same"] is True  # scipy.linalg found our registered modules: one initialisation each
    _check_answers(answer)


def test_scipy_linalg_first_is_used_as_it_is():
    answer = _child(_SCIPY_FIRST)
    assert answer["direct"] is False
    assert answer["same"] is True
    _check_answers(answer)


def test_a_failed_direct_load_falls_back_to_scipy_linalg():
    answer = _child(_BROKEN)
    assert answer["direct"] is False
    assert "scipy.linalg" in answer["before"]  # the fallback imported scipy.linalg itself
    _check_answers(answer)


def test_a_missing_routine_is_refused():
    with pytest.raises(ImportError, match="no_such_routine"):
        _load_compiled("_flapack", (*LAPACK_ROUTINES, "no_such_routine"))
    # The routines the engine names are all there (scipy.linalg.lapack / blas re-export them).
    import scipy.linalg

    assert all(callable(getattr(scipy.linalg.lapack, name)) for name in LAPACK_ROUTINES)
    assert all(callable(getattr(scipy.linalg.blas, name)) for name in BLAS_ROUTINES)


@pytest.mark.parametrize("make", [
    lambda: np.eye(3), lambda: [[1.0, 2.0]], lambda: 3.0, lambda: None,
    lambda: scipy.sparse.csr_matrix(np.eye(3)), lambda: scipy.sparse.csc_matrix(np.eye(3)),
    lambda: scipy.sparse.coo_matrix(np.eye(3)), lambda: scipy.sparse.csr_array(np.eye(3)),
    lambda: scipy.sparse.identity(3, format="dia"),
])
def test_is_sparse_answers_as_scipy_issparse(make):
    A = make()
    assert is_sparse(A) == scipy.sparse.issparse(A)  # reference: scipy.sparse.issparse

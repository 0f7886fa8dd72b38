"""The explicit inverse of a dense basis (`basis_factor.InverseBasisFactor`), against numpy
and HiGHS as the outside references.

Solves with the updated inverse are checked against numpy.linalg.solve on the updated
basis matrix; a corrupted inverse must ask for refactorisation; and blends taken through
the inverse path at every size (its row threshold lowered) must reach HiGHS's optimum.
"""

from __future__ import annotations

import numpy as np
import pytest

from blendkit.bench.blends import make_blend
from blendkit.engine import basis_factor, simplex_state
from blendkit.engine.basis_factor import InverseBasisFactor
from tests.lp_checks import assert_matches_linprog


def _matrix(m: int, n: int, seed: int) -> np.ndarray:
    """[A, -I] for a random dense A, as the engine holds M."""
    rng = np.random.default_rng(seed)
    return np.hstack([rng.standard_normal((m, n)), -np.eye(m)])


def test_inverse_factor_solves_like_numpy_across_updates():
    # Reference: numpy.linalg.solve on the basis matrix as it stands after each update,
    # for B z = a (one and two right-hand sides), B^T y = c and the pivot row's B^-T e_r.
    m, n = 80, 120
    M = _matrix(m, n, seed=3)
    rng = np.random.default_rng(3)
    head = np.arange(n, n + m)  # the logicals
    factor = InverseBasisFactor(40, lambda j: M[:, head[j]], lambda: head)
    factor.factor(M[:, head])
    for _ in range(30):
        q = int(rng.integers(n))
        if q in head:
            continue
        alpha = factor.ftran(M[:, q])
        r = int(np.argmax(np.abs(alpha)))
        head[r] = q
        factor.update(r, alpha)
        assert not factor.due  # neither full nor drifted
        B = M[:, head]
        a, c = rng.standard_normal(m), rng.standard_normal(m)
        np.testing.assert_allclose(factor.ftran(a), np.linalg.solve(B, a), rtol=1e-8, atol=1e-10)
        both = factor.ftran(np.column_stack([a, c]))
        np.testing.assert_allclose(both, np.linalg.solve(B, np.column_stack([a, c])), rtol=1e-8, atol=1e-10)
        np.testing.assert_allclose(factor.btran(c), np.linalg.solve(B.T, c), rtol=1e-8, atol=1e-10)
        np.testing.assert_allclose(factor.unit_btran(r), np.linalg.solve(B.T, np.eye(m)[r]), rtol=1e-8, atol=1e-10)


def test_a_drifted_inverse_is_due_for_refactorisation():
    # The drift check reads one basis column against e_j every INVERSE_CHECK_EVERY
    # updates. An inverse spoilt by 1e-6 in every entry (numpy.linalg.solve shows the
    # solves are then wrong) must be due within a few checks, long before the update file
    # is full.
    m, n = 70, 90
    M = _matrix(m, n, seed=5)
    head = np.arange(n, n + m)
    factor = InverseBasisFactor(64, lambda j: M[:, head[j]], lambda: head)
    factor.factor(M[:, head])

    def enter(q: int) -> None:
        alpha = factor.ftran(M[:, q])
        r = int(np.argmax(np.abs(alpha)))
        head[r] = q
        factor.update(r, alpha)

    q = 0
    while factor._inverse is None:  # etas first, then the inverse is built
        enter(q)
        q += 1
    assert not factor.due and q == basis_factor.INVERSE_AFTER
    factor._inverse += 1e-6  # rounding built up, far beyond INVERSE_DRIFT
    a = np.ones(m)
    assert np.abs(factor.ftran(a) - np.linalg.solve(M[:, head], a)).max() > 1e-6
    # A check reads a column the updates since the spoiling did not replace (those map to
    # e_j exactly) within a few checks; the seed is fixed, so this one is deterministic.
    most = q + 4 * basis_factor.INVERSE_CHECK_EVERY
    while not factor.due and q < most:
        enter(q)
        q += 1
    assert factor.due and factor.updates < 64
    factor.factor(M[:, head])  # a fresh factorisation clears it
    assert not factor.due


@pytest.mark.parametrize("size", [(20, 10), (60, 30), (150, 60)])
def test_blends_on_the_inverse_path_reach_highs_optimum(monkeypatch, size):
    # Reference: linprog(method="highs") on the same blend LPs, with the inverse used at
    # every size (INVERSE_ROWS 0): objective to 1e-7 relative, rows kept to 1e-7.
    monkeypatch.setattr(simplex_state, "INVERSE_ROWS", 0)
    for index in range(3):
        assert_matches_linprog(make_blend(*size, seed=20240611, index=index))

"""The engine's paths for large LPs, against numpy and scipy as the outside reference.

The pivot row by binding rows (`row_product`), the reused column order of the sparse
basis factors (`basis_factor.SparseBasisFactor`), the partial sort of the bound-flipping
ratio test and the dual steepest-edge weights only switch on for large problems; here their
thresholds are lowered so that a small plant LP takes them, and each answer is checked
against numpy or scipy (inverse, sparse products, spsolve, linprog with HiGHS).
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.linalg import spsolve

from blendkit.bench.plant import make_plant
from blendkit.engine import basis_factor, dual, ratio_test, row_product
from blendkit.engine.pricing import update_steepest_weights
from blendkit.engine.basis_factor import SparseBasisFactor
from blendkit.engine.row_product import RowProduct
from tests.lp_checks import assert_matches_linprog


def _sparse_matrix(m: int, n: int, seed: int) -> sp.csc_matrix:
    """[A, -I] for a random sparse A, as the engine holds M."""
    A = sp.random(m, n, density=0.05, random_state=seed, format="csc")
    return sp.hstack([A, -sp.identity(m, format="csc")], format="csc")


@pytest.mark.parametrize("share", [0.02, 0.3, 0.9])
def test_row_product_equals_scipys_transposed_product(monkeypatch, share):
    # Reference: scipy.sparse's own M.T @ y. A share of 0.02 takes the row-by-row path,
    # 0.3 the binding-rows path with rows outside them, 0.9 the whole of M^T.
    monkeypatch.setattr(row_product, "FOCUS_MIN_NONZEROS", 0)
    rng = np.random.default_rng(7)
    M = _sparse_matrix(400, 300, seed=7)
    product = RowProduct(M)
    focus = np.flatnonzero(rng.random(400) < 0.25)
    for _ in range(5):
        y = np.where(rng.random(400) < share, rng.standard_normal(400), 0.0)
        y[rng.choice(400, 3)] = 1.5  # a few rows outside the focus, as when logicals leave
        np.testing.assert_allclose(product.combine(y, lambda: focus), M.T @ y, rtol=1e-12, atol=1e-12)


def test_sparse_factors_with_a_reused_order_solve_like_spsolve(monkeypatch):
    # Reference: scipy.sparse.linalg.spsolve on the same basis matrix, for B z = a,
    # B^T y = c and two right-hand sides at once, across refactorisations that reuse
    # the column order and across product-form updates.
    monkeypatch.setattr(basis_factor, "REORDER_EVERY", 3)
    rng = np.random.default_rng(11)
    m = 350
    M = _sparse_matrix(m, 500, seed=11).tocsc()
    head = np.arange(500, 500 + m)  # the logicals
    factor = SparseBasisFactor(refactor_every=20)
    for round_ in range(6):
        chosen = rng.choice(500, 40, replace=False)  # structurals into random positions
        positions = rng.choice(m, 40, replace=False)
        trial = head.copy()
        trial[positions] = chosen
        if np.linalg.matrix_rank(M[:, trial].toarray()) == m:
            head = trial
        B = M[:, head].tocsc()
        factor.factor(B)
        a, c = rng.standard_normal(m), rng.standard_normal(m)
        np.testing.assert_allclose(factor.ftran(a), spsolve(B, a), rtol=1e-8, atol=1e-10)
        np.testing.assert_allclose(factor.btran(c), spsolve(B.T.tocsc(), c), rtol=1e-8, atol=1e-10)
        # Two product-form updates, then the updated basis.
        for _ in range(2):
            q = int(rng.integers(500))
            if q in head:
                continue
            alpha = factor.ftran(M[:, [q]].toarray().ravel())
            r = int(np.argmax(np.abs(alpha)))
            factor.update(r, alpha)
            head[r] = q
        B = M[:, head].tocsc()
        both = factor.ftran(np.column_stack([a, c]))
        np.testing.assert_allclose(both[:, 0], spsolve(B, a), rtol=1e-7, atol=1e-9)
        np.testing.assert_allclose(both[:, 1], spsolve(B, c), rtol=1e-7, atol=1e-9)
        np.testing.assert_allclose(factor.btran(c), spsolve(B.T.tocsc(), c), rtol=1e-7, atol=1e-9)


def test_a_plant_on_the_large_problem_paths_agrees_with_highs(monkeypatch):
    # Reference: linprog(method="highs") on the same plant LP. The thresholds are lowered
    # so that this 10-product plant takes every large-problem path.
    monkeypatch.setattr(row_product, "FOCUS_MIN_NONZEROS", 0)
    monkeypatch.setattr(ratio_test, "FLIP_SORT_ALL", 8)
    monkeypatch.setattr(ratio_test, "FLIP_WINDOW", 4)
    monkeypatch.setattr(basis_factor, "REORDER_EVERY", 4)
    monkeypatch.setattr(dual, "STEEPEST_EDGE_ROWS", 0)
    assert_matches_linprog(make_plant(10, 40, 20, 20240611), rows_tol=1e-6)


def test_steepest_edge_weights_are_the_row_norms_of_the_new_inverse():
    # Reference: numpy.linalg.inv of the basis after the column replacement; the updated
    # weights must be the squared norms of its rows.
    rng = np.random.default_rng(5)
    m = 30
    B = rng.standard_normal((m, m)) + 4 * np.eye(m)
    inverse = np.linalg.inv(B)
    weights = np.einsum("ij,ij->i", inverse, inverse)
    for _ in range(5):
        a = rng.standard_normal(m)  # the entering column
        alpha = inverse @ a
        r = int(np.argmax(np.abs(alpha)))
        rho = inverse[r]
        update_steepest_weights(weights, alpha, inverse @ rho, rho.copy(), alpha[r], r)
        B[:, r] = a
        inverse = np.linalg.inv(B)
        np.testing.assert_allclose(weights, np.einsum("ij,ij->i", inverse, inverse), rtol=1e-8)


def test_a_plant_given_dense_is_scaled_as_given_sparse_and_solved_as_highs_solves_it():
    # A workbook's plant LP is built as a dense array that is mostly zeros; it is scaled
    # by its non-zeros alone, as the sparse form is. Reference: linprog(method="highs") on
    # the dense arrays; and the scaling must equal the one of the sparse matrix.
    from dataclasses import replace

    from blendkit.engine.scaling import find_scaling

    plant = make_plant(5, 60, 30, 20240611)
    dense = replace(plant, A_ub=plant.A_ub.toarray(), A_eq=plant.A_eq.toarray())
    both = sp.vstack([plant.A_ub, plant.A_eq], format="csr")
    from_dense, from_sparse = find_scaling(both.toarray()), find_scaling(both)
    np.testing.assert_array_equal(from_dense.rows, from_sparse.rows)
    np.testing.assert_array_equal(from_dense.cols, from_sparse.cols)
    # The engine takes the dense matrix as CSR once (`held_form`), entry for entry; a
    # small dense blend stays as given.
    from blendkit.engine.standard_form import held_form, to_standard_form

    form = to_standard_form(dense.c, dense.A_ub, dense.b_ub, dense.A_eq, dense.b_eq, dense.bounds)
    held = held_form(form)
    assert sp.issparse(held.A) and (held.A != sp.csr_matrix(form.A)).nnz == 0
    small = to_standard_form([1.0, 2.0], [[1.0, 1.0]], [3.0])
    assert held_form(small) is small
    assert_matches_linprog(dense, rows_tol=1e-6)


@pytest.mark.long
def test_a_plant_with_long_degenerate_stretches_is_finished_by_the_dual_simplex_alone():
    # Reference: linprog(method="highs") on the same plant LP. This 40 x 80 x 40 plant
    # (3,320 rows) takes up to 498 perturbed dual steps in a row that move its objective
    # by less than the progress tolerance; with a stall limit that did not grow with the
    # rows, the dual simplex handed over to the two-phase primal method from scratch after
    # 2,672 iterations (11,881 in all). Now the dual simplex finishes it, without phase one.
    from blendkit.engine import solve

    plant = make_plant(40, 80, 40, 0)
    ours = solve(plant.c, plant.A_ub, plant.b_ub, plant.A_eq, plant.b_eq, plant.bounds)
    assert ours.algorithm == "dual" and ours.phase_one_iterations == 0
    assert ours.iterations < 9000
    assert_matches_linprog(plant, rows_tol=1e-6)

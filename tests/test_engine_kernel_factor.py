"""The kernel factor of a sparse basis (`engine.kernel_factor`), against scipy as the
outside reference: its solves against spsolve on plant bases, and plant LPs solved with it
against linprog(method="highs")."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.linalg import spsolve

from blendkit.bench.plant import make_plant
from blendkit.engine import kernel_factor, solve
from blendkit.engine.basis_factor import SingularBasis
from blendkit.engine.kernel_factor import KernelBasisFactor
from blendkit.engine.standard_form import to_standard_form
from tests.lp_checks import assert_matches_linprog


def _plant_basis(products: int, seed: int):
    """[A, -I] of a plant LP and the columns of its optimal basis (HiGHS-checked below)."""
    plant = make_plant(products, 40, 20, seed)
    form = to_standard_form(plant.c, plant.A_ub, plant.b_ub, plant.A_eq, plant.b_eq, plant.bounds)
    m = form.shape[0]
    M = sp.hstack([sp.csc_matrix(form.A), -sp.identity(m, format="csc")], format="csc")
    head = solve(plant.c, plant.A_ub, plant.b_ub, plant.A_eq, plant.b_eq, plant.bounds).basis.head
    return M, head


@pytest.mark.parametrize("seed", [1, 2])
def test_kernel_solves_with_updates_equal_spsolve(seed):
    # Reference: scipy.sparse.linalg.spsolve on the same basis, before and after column
    # replacements recorded as updates (the etas on top of the kernel's factors).
    M, head = _plant_basis(8, seed)
    rng = np.random.default_rng(seed)
    factor = KernelBasisFactor(refactor_every=50)
    B = M[:, head].tocsc()
    factor.factor(B)
    assert factor._parts is not None, "a plant's optimal basis is mostly slack columns: the kernel path"
    head = head.copy()
    for _ in range(6):
        a, c = rng.normal(size=(B.shape[0], 2)), rng.normal(size=B.shape[0])
        np.testing.assert_allclose(factor.ftran(a), spsolve(B, a), rtol=1e-8, atol=1e-9)
        np.testing.assert_allclose(factor.btran(c), spsolve(B.T.tocsc(), c), rtol=1e-8, atol=1e-9)
        outside = np.setdiff1d(np.arange(M.shape[1]), head)
        q = int(rng.choice(outside[outside < M.shape[1] - B.shape[0]]))
        alpha = factor.ftran(M[:, q].toarray().ravel())
        r = int(np.argmax(np.abs(alpha)))
        factor.update(r, alpha)
        head[r] = q
        B = M[:, head].tocsc()


def test_a_basis_of_few_singletons_is_factorised_whole_and_solves_as_spsolve():
    # Reference: spsolve. A random sparse basis with no slack columns takes the whole-basis path.
    rng = np.random.default_rng(5)
    B = (sp.random(120, 120, density=0.05, random_state=5) + sp.identity(120) * 3).tocsc()
    factor = KernelBasisFactor(refactor_every=50)
    factor.factor(B)
    assert factor._parts is None
    a = rng.normal(size=120)
    np.testing.assert_allclose(factor.ftran(a), spsolve(B, a), rtol=1e-8, atol=1e-10)
    np.testing.assert_allclose(factor.btran(a), spsolve(B.T.tocsc(), a), rtol=1e-8, atol=1e-10)
    # columns stacked in Fortran order, as the dual simplex stacks them, after some updates
    stacked = np.asfortranarray(rng.normal(size=(120, 3)))
    for r in range(20):  # more updates than the eta loop takes one by one
        alpha = factor.ftran(B[:, (r + 7) % 120].toarray().ravel() + 0.5 * np.eye(120)[r])
        factor.update(r, alpha)
        B = B.tolil()
        B[:, r] = B[:, (r + 7) % 120].toarray() + 0.5 * np.eye(120)[:, [r]]
        B = B.tocsc()
    np.testing.assert_allclose(factor.ftran(stacked), spsolve(B, stacked).reshape(120, 3), rtol=1e-7, atol=1e-9)


def test_two_slack_columns_on_one_row_are_a_singular_basis():
    # Reference: numpy's rank of the same matrix (two equal columns: rank deficient).
    B = sp.identity(10, format="lil") * -1.0
    B[:, 3] = B[:, 4].toarray()
    B = B.tocsc()
    assert np.linalg.matrix_rank(B.toarray()) < 10
    with pytest.raises(SingularBasis):
        KernelBasisFactor(refactor_every=50).factor(B)


@pytest.mark.parametrize("products, seed", [(5, 20240611), (12, 3), (20, 0)])
def test_plants_solved_through_the_kernel_agree_with_highs(monkeypatch, products, seed):
    # Reference: linprog(method="highs") on the same plant LP; the kernel path must be taken.
    kernels = []
    original = kernel_factor._kernel_lu

    def counted(*args):
        kernels.append(1)
        return original(*args)

    monkeypatch.setattr(kernel_factor, "_kernel_lu", counted)
    assert_matches_linprog(make_plant(products, 60, 30, seed), rows_tol=1e-6)
    assert kernels


@pytest.mark.parametrize("seed", [3, 4])
def test_unit_and_few_nonzero_solves_equal_spsolve(seed):
    # Reference: spsolve. The pivot row's multipliers B^-T e_r (and right-hand sides with a
    # few non-zeros) take the hypersparse product with the singleton rows; several columns
    # at once (the entering column, the flips and the steepest-edge vector) take the
    # stacked path.
    M, head = _plant_basis(10, seed)
    B = M[:, head].tocsc()
    factor = KernelBasisFactor(refactor_every=50)
    factor.factor(B)
    assert factor._parts is not None
    m = B.shape[0]
    rng = np.random.default_rng(seed)
    Bt = B.T.tocsc()
    for r in rng.choice(m, size=8, replace=False):
        e = np.zeros(m)
        e[r] = 1.0
        np.testing.assert_allclose(factor.unit_btran(int(r)), spsolve(Bt, e), rtol=1e-8, atol=1e-10)
    few = np.zeros(m)
    few[rng.choice(m, size=3, replace=False)] = rng.normal(size=3)
    np.testing.assert_allclose(factor.btran(few), spsolve(Bt, few), rtol=1e-8, atol=1e-10)
    several = np.column_stack([M[:, j].toarray().ravel() for j in rng.choice(M.shape[1], size=3, replace=False)])
    expected = spsolve(B, several).reshape(m, 3)
    np.testing.assert_allclose(factor.ftran(several), expected, rtol=1e-8, atol=1e-10)
    # the dual simplex stacks its columns in Fortran order: the column-by-column path
    np.testing.assert_allclose(factor.ftran(np.asfortranarray(several)), expected, rtol=1e-8, atol=1e-10)

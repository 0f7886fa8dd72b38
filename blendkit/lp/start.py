"""Start a solve from the optimal basis of the earlier result, named in the workbook's words.

A plant's joint LP takes thousands of simplex iterations from scratch; the weekly run,
after a price list or a few specs changed, takes a few hundred from last week's optimal
basis. The output's record (`blendkit.model.record`) keeps that basis by name, each
variable as a label:

    ("ingredient", product, ingredient)         an ingredient's column in a product
    ("row", kind, product, name, basis, side)   the activity of one LP row (side only for
                                                a ratio or dry-matter row, which carries
                                                one bound; else blank)
    ("over", <the row's label>, side)           a soft spec's allowance past its bound

(product blank for a single blend and for a stock, which spans products), each with its
state: BASIC, or AT_UPPER for a nonbasic variable at its upper bound (nonbasic at the
lower bound is left out). So it maps onto this run's LP even when ingredients, specs or
products were added or dropped. A start can cost time but never change what is proved:
the engine checks the basis it is given, drops one that is singular or does not fit and
solves from scratch, and every answer passes the same checks.
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np

from blendkit.engine import LPResult
from blendkit.engine.result import Basis
from blendkit.lp.build import BlendLP, LPRow
from blendkit.model.blend import AS_FED, Blend

BASIC, AT_UPPER = 1, 2
# A start is only tried when at least this share of this LP's rows get a recorded basic
# variable (fewer: little of the earlier basis is left to save iterations).
LEAST_MAPPED = 0.5

Label = tuple[str, ...]


def variable_labels(blend: Blend, lp: BlendLP) -> list[Label]:
    """The label of each of the LP's n columns and then its m rows (module docstring)."""
    products = [name or "" for name, _ in lp.products]
    J = lp.n_ingredients
    columns: list[Label] = [("ingredient", products[k // J], blend.ingredients[k % J].name)
                            for k in range(len(products) * J)]
    rows = [_row_label(row, products) for row in lp.rows]
    over = {column: ("over", *rows[i], side) for i, side, column in lp.elastic}
    columns += [over.get(k, ("column", str(k))) for k in range(len(columns), lp.form.c.size)]
    return columns + rows


def _row_label(row: LPRow, products: list[str]) -> Label:
    """One row's label: a ratio or dry-matter row carries one side, so the side tells it
    from its twin; an as-fed row carries both sides of its spec."""
    product = products[row.product] if row.product is not None else ""
    one_sided = row.ratio is not None or row.basis != AS_FED
    side = "/".join(side.side for side in row.sides) if one_sided else ""
    return ("row", row.kind, product, row.name, row.basis, side)


def basis_labels(blend: Blend, lp: BlendLP, result: LPResult) -> tuple[tuple[Label, int], ...]:
    """The optimal basis of `result` as (label, state) pairs; () without an optimum."""
    if result.status != "optimal" or result.basis is None:
        return ()
    labels = variable_labels(blend, lp)
    states = {int(j): BASIC for j in result.basis.head}
    for j in np.flatnonzero(result.basis.at_upper):
        states.setdefault(int(j), AT_UPPER)
    return tuple((labels[j], state) for j, state in sorted(states.items()))


def start_basis(blend: Blend, lp: BlendLP, recorded: Iterable[tuple[Label, int]]) -> Basis | None:
    """A basis of this LP from the recorded one, or None when too little of it maps.

    Recorded basic variables that this LP has stay basic; rows new since (not in the
    record) get their activity basic, then other rows' activities until every row has a
    basic variable. With more basic variables than rows (a binding row was dropped) the
    columns the others can stand in for leave (`_dependent_column`). None when the record
    covers fewer than LEAST_MAPPED of the rows."""
    m, n = lp.form.A.shape
    labels = variable_labels(blend, lp)
    index: dict[Label, int] = {}
    for j, label in enumerate(labels):
        index.setdefault(label, j)
    states = {tuple(label): state for label, state in recorded}
    head = list(dict.fromkeys(index[label] for label, state in states.items() if state == BASIC and label in index))
    if len(head) < LEAST_MAPPED * m:
        return None
    while len(head) > m:  # a binding row was dropped: as many ingredient columns leave too
        head.remove(_dependent_column(lp, head))
    taken = set(head)
    new_rows = [n + i for i in range(m) if labels[n + i] not in states]
    other_rows = [n + i for i in range(m) if labels[n + i] in states]
    for j in new_rows + other_rows:
        if len(head) == m:
            break
        if j not in taken:
            head.append(j)
            taken.add(j)
    at_upper = np.zeros(n + m, dtype=bool)
    for label, state in states.items():
        if state == AT_UPPER and label in index:
            at_upper[index[label]] = True
    return Basis(head=np.array(head, dtype=int), at_upper=at_upper, shape=(m, n))


def _dependent_column(lp: BlendLP, head: list[int]) -> int:
    """An ingredient column of `head` (k more columns than rows) whose leaving keeps the rest
    independent: the one with the largest weight in a null vector v of those columns, found
    in one sparse factorisation at any size. With k random rows R below the m x (m + k)
    columns B, the square [B; R] is regular whenever B has full row rank, and its solution
    of [B; R] v = e_(m+1) has B v = 0 and v != 0. When that fails, the last ingredient
    column (the engine then drops a singular basis and solves from scratch)."""
    from scipy.sparse import csr_matrix, vstack

    from blendkit.engine.sparse import splu

    m, n = lp.form.A.shape
    structural = [j for j in head if j < n]
    below = np.random.default_rng(len(head)).standard_normal((len(head) - m, len(head)))
    square = vstack([_columns(lp, head), csr_matrix(below)], format="csc")
    unit = np.zeros(len(head))
    unit[m] = 1.0
    try:
        weights = np.abs(splu(square).solve(unit))
    except RuntimeError:  # SuperLU: exactly singular (B lacks full row rank)
        return structural[-1]
    position = {j: k for k, j in enumerate(head)}
    return max(structural, key=lambda j: weights[position[j]])


def _columns(lp: BlendLP, head: list[int]):
    """The columns `head` of [A, -I], in that order, as a scipy.sparse matrix."""
    import scipy.sparse as sp

    m = lp.form.A.shape[0]
    return sp.hstack([sp.csc_matrix(lp.form.A), -sp.identity(m, format="csc")], format="csc")[:, head]

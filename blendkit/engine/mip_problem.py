"""Check the MIP arguments and turn them into the branch and bound's one internal form.

A MIP here is the general form of `standard_form` plus, per column, whether it must be
a whole number (`integer`) and its semi-continuous threshold s (`threshold`, 0 for none):
a semi-continuous column is either 0 or between s and its upper bound. The relaxation
that the branch and bound starts from lets it take anything from 0 to its upper bound;
branching then holds it off (upper bound 0) or on (lower bound s).

`domain` is the pair of column bound arrays (lower, upper) of one node of the search;
`settle` brings a domain into its canonical shape after a bound changed: whole bounds on
integer columns, and semi-continuous columns off, on or still open.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from blendkit.engine.standard_form import StandardForm


@dataclass(frozen=True)
class MIPProblem:
    """A MIP: its LP relaxation `form` and what the relaxation relaxes (see the module)."""

    form: StandardForm
    integer: np.ndarray  # bool per column
    threshold: np.ndarray  # per column: s > 0 when semi-continuous, else 0

    @property
    def semi(self) -> np.ndarray:
        """True for each semi-continuous column."""
        return self.threshold > 0


def _integrality(integrality, n: int) -> np.ndarray:
    """A bool per column from scipy milp's 0 (continuous) / 1 (integer) codes."""
    if integrality is None:
        return np.zeros(n, dtype=bool)
    codes = np.array(integrality, dtype=float, copy=True).reshape(-1)
    if codes.size == 1 and n != 1:
        codes = np.full(n, codes[0])
    if codes.size != n:
        raise ValueError(f"integrality must have {n} entries (one per column), got {codes.size}")
    if np.any((codes != 0) & (codes != 1)):
        raise ValueError(
            "integrality takes 0 (continuous) or 1 (integer) per column; give semi-continuous "
            "columns by their threshold in `semicontinuous`"
        )
    return codes == 1


def _thresholds(semicontinuous, n: int) -> np.ndarray:
    """Each column's semi-continuous threshold (0 for none; None and NaN also mean none)."""
    if semicontinuous is None:
        return np.zeros(n)
    values = [0.0 if v is None else float(v) for v in np.asarray(semicontinuous, dtype=object).reshape(-1)]
    s = np.nan_to_num(np.array(values, dtype=float), nan=0.0, posinf=np.inf)
    if s.size != n:
        raise ValueError(f"semicontinuous must have {n} entries (one per column), got {s.size}")
    bad = np.flatnonzero((s < 0) | ~np.isfinite(s))
    if bad.size:
        raise ValueError(f"semicontinuous[{bad[0]}] = {s[bad[0]]}: a threshold must be a finite number >= 0")
    return s


def mip_problem(form: StandardForm, integrality, semicontinuous, integrality_tol: float) -> MIPProblem:
    """Check `integrality` and `semicontinuous` against `form` and build the MIPProblem.

    A semi-continuous column must have lower bound >= 0. One with a positive lower bound
    can never be 0, so it becomes a plain column from max(lower, s); one whose threshold
    is above its upper bound can only be 0. Integer columns get whole bounds (rounded
    inwards). Malformed arguments raise ValueError; the form is not changed.
    """
    n = form.shape[1]
    integer = _integrality(integrality, n)
    s = _thresholds(semicontinuous, n)
    lower, upper = form.col_lower.copy(), form.col_upper.copy()
    semi = s > 0
    negative = np.flatnonzero(semi & (lower < 0))
    if negative.size:
        j = negative[0]
        raise ValueError(f"semi-continuous column {j} has lower bound {lower[j]}; it must be 0 or more")
    always_on = semi & (lower > 0)
    lower[always_on] = np.maximum(lower[always_on], s[always_on])
    never_on = semi & (s > upper)
    upper[never_on] = 0.0
    s[always_on | never_on] = 0.0
    relaxed = replace(form, col_lower=lower, col_upper=upper)
    problem = MIPProblem(form=relaxed, integer=integer, threshold=s)
    lower, upper = settle(problem, lower, upper, integrality_tol)
    return MIPProblem(form=replace(relaxed, col_lower=lower, col_upper=upper), integer=integer, threshold=s)


def settle(problem: MIPProblem, lower: np.ndarray, upper: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray]:
    """The domain (lower, upper) in canonical shape, as new arrays.

    Integer columns get whole bounds (a bound within `tol` of a whole number is that
    number); a semi-continuous column whose upper bound fell below its threshold is off
    (upper 0), and one whose lower bound rose above 0 is on (lower at least s).
    """
    lower, upper = lower.copy(), upper.copy()
    s = problem.threshold
    off = (s > 0) & (upper < s - tol * (1 + s))
    upper[off] = np.minimum(upper[off], 0.0)
    on = (s > 0) & (lower > tol)
    lower[on] = np.maximum(lower[on], s[on])
    whole = problem.integer
    with np.errstate(invalid="ignore"):
        lower[whole] = np.ceil(lower[whole] - tol)
        upper[whole] = np.floor(upper[whole] + tol)
    return lower, upper


def violations(problem: MIPProblem, x: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The columns where x breaks integrality or a semi-continuous threshold, and how.

    Returns (columns, fraction, semi): `semi` is True where the column lies strictly
    between 0 and its threshold (branch off or on), and `fraction` is then x_j / s_j,
    how far it is from off towards on; otherwise the column is an integer column with a
    fractional value and `fraction` is its fractional part.
    """
    s = problem.threshold
    whole = problem.integer
    frac = np.zeros(x.size)
    frac[whole] = x[whole] - np.floor(x[whole])
    semi_broken = (s > 0) & (x > tol) & (x < s - tol * (1 + s))
    broken = semi_broken | (whole & (np.minimum(frac, 1 - frac) > tol))
    frac[semi_broken] = x[semi_broken] / s[semi_broken]
    columns = np.flatnonzero(broken)
    return columns, frac[columns], semi_broken[columns]

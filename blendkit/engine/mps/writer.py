"""Write MPS files, so that reading one back gives the same form, bit for bit.

What the writer produces
========================

Fixed MPS by default, when every name is printable ASCII of 1 to 8 characters without
leading or trailing blanks and every number's shortest exact text fits 12 characters;
otherwise free MPS, which loses nothing (`write` returns which it wrote). Free MPS cannot
hold names with blanks: those names have each run of blanks replaced by ``_``, and if
that makes two names of a kind equal, that kind gets generated names (R0001..., C0001...).
Numbers are written in their shortest text that reads back to the same float. Rows are
written as E, L or G rows, ranged rows as a G row (or an L row) with a RANGES entry whose
value reproduces both bounds exactly; when no float range can (bounds far apart in
magnitude, such as -1 and 1e-13), the far bound reads back a unit in the last place or so
of the larger bound away. Rows with no finite bound are written as extra N rows, which
readers ignore, so reading drops them. Bounds go to BOUNDS only where they
differ from 0 <= x < inf (UP before LO, so a lower bound of 0 under a negative upper bound
survives the convention that UP with a negative value also frees the lower bound; see
`reader`). A bound or row side of magnitude 1e30 or more is written as infinite. A
maximising model gets ``OBJSENSE`` / ``MAX`` and its own objective. Integer columns are
written between ``'MARKER'`` lines (``'INTORG'`` ... ``'INTEND'``), and one whose bounds
are 0 <= x < inf gets a ``PL`` bound, since readers take an integer column without bounds
as binary.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from blendkit.engine.mps.model import FIXED_NAME_WIDTH, FIXED_NUMBER_WIDTH, INFINITY, MPSModel
from blendkit.engine.sparse import is_sparse, sparse
from blendkit.engine.standard_form import StandardForm

if TYPE_CHECKING:  # annotations only: scipy.sparse is imported when the writer runs
    import scipy.sparse as sp


def write(
    path,
    form_or_model: StandardForm | MPSModel,
    *,
    name: str | None = None,
    row_names=None,
    column_names=None,
    objective_constant: float | None = None,
    free: bool = False,
    integrality=None,
) -> str:
    """Write an LP as MPS and return the layout written, "fixed" or "free".

    `form_or_model` is a StandardForm (minimised) or an MPSModel (its sense, names,
    objective name and constant are kept). `name`, `row_names`, `column_names` and
    `objective_constant` override those; left as None they come from the model, or are
    "BLEND", R0001..., C0001... and 0 for a StandardForm. `integrality` (1 for an integer
    column, 0 for a continuous one, as `solve_mip` takes it; default the model's, or all
    continuous) puts the integer columns between integer markers. Fixed MPS is written
    unless `free` is True or something does not fit it (see the module docstring). The
    file is built in memory and written at once. Malformed forms and names raise
    ValueError.
    """
    if isinstance(form_or_model, MPSModel):
        model = form_or_model
        content = _content(
            model.form,
            model.maximise,
            model.objective_name,
            name=model.name if name is None else name,
            row_names=model.row_names if row_names is None else row_names,
            column_names=model.column_names if column_names is None else column_names,
            objective_constant=model.objective_constant if objective_constant is None else objective_constant,
            integrality=model.integrality if integrality is None else integrality,
        )
    elif isinstance(form_or_model, StandardForm):
        content = _content(form_or_model, False, "", name=name, row_names=row_names, column_names=column_names,
                           objective_constant=objective_constant, integrality=integrality)
    else:
        raise TypeError(f"write takes a StandardForm or an MPSModel, got {type(form_or_model).__name__}")
    fits = not free and _fits_fixed(content)
    if not fits:
        content = _free_names(content)
    Path(path).write_text("\n".join(_lines(content, fits)) + "\n", encoding="utf-8")
    return "fixed" if fits else "free"


@dataclass(frozen=True)
class _Content:
    """What one file holds: checked names and numbers, rows and bounds as MPS records."""

    name: str
    objective_name: str
    rows: list[str]
    columns: list[str]
    c: np.ndarray  # the file's own objective (negated back for a maximising model)
    A: sp.csc_matrix  # without explicit zeros, row indices sorted
    constant: float
    maximise: bool
    row_kinds: list[str]  # E, L, G or N (a row with no finite bound)
    rhs: list[float]
    ranges: np.ndarray  # 0 for none
    bounds: list[tuple[str, int, float | None]]  # BOUNDS lines: (type, column, value)
    integer: np.ndarray  # True for each integer column


def _content(form: StandardForm, maximise: bool, objective_name: str, *, name, row_names, column_names,
             objective_constant, integrality=None) -> _Content:
    """The checked content of one file; malformed forms and names raise ValueError."""
    c, A, row_lower, row_upper, col_lower, col_upper = _checked(form)
    m, n = A.shape
    integer = _integer_columns(integrality, n)
    constant = float(objective_constant or 0.0)
    if not math.isfinite(constant):
        raise ValueError(f"objective_constant must be finite, got {objective_constant}")
    rows = _names(row_names, m, "R", "row_names")
    columns = _names(column_names, n, "C", "column_names")
    row_kinds, rhs, ranges = _row_records(row_lower, row_upper)
    A = sparse().csc_matrix(A, copy=True)  # a copy: eliminate_zeros works in place
    A.eliminate_zeros()
    A.sort_indices()
    return _Content(
        name="BLEND" if not name else str(name),
        objective_name=_objective_name(objective_name, rows),
        rows=rows,
        columns=columns,
        c=-c if maximise else c,
        A=A,
        constant=constant,
        maximise=maximise,
        row_kinds=row_kinds,
        rhs=rhs,
        ranges=ranges,
        bounds=_bound_records(col_lower, col_upper, integer),
        integer=integer,
    )


def _integer_columns(integrality, n: int) -> np.ndarray:
    """A bool per column from 0 / 1 integrality codes (None: all continuous)."""
    if integrality is None:
        return np.zeros(n, dtype=bool)
    codes = np.asarray(integrality, dtype=float).reshape(-1)
    if codes.shape[0] != n or np.any((codes != 0) & (codes != 1)):
        raise ValueError(f"integrality must give 0 or 1 for each of the {n} columns")
    return codes == 1


def _free_names(content: _Content) -> _Content:
    """The content with names free MPS can hold (see `_free_words`)."""
    rows = _free_words(content.rows, "R")
    return replace(
        content,
        name=_free_words([content.name], "BLEND")[0],
        rows=rows,
        columns=_free_words(content.columns, "C"),
        objective_name=_objective_name(_free_words([content.objective_name], "COST")[0], rows),
    )


# ----- the sections -------------------------------------------------------------------


def _lines(content: _Content, fixed: bool) -> list[str]:
    """Every line of the file, NAME to ENDATA."""
    lines = [f"NAME          {content.name}" if fixed else f"NAME {content.name}"]
    if content.maximise:
        lines += ["OBJSENSE", "    MAX"]
    lines.append("ROWS")
    lines.append(_line(fixed, "N", content.objective_name))
    for i, kind in enumerate(content.row_kinds):
        lines.append(_line(fixed, kind, content.rows[i]))
    lines += _columns_section(content, fixed)
    lines += _rhs_and_ranges_sections(content, fixed)
    lines += _bounds_section(content, fixed)
    lines.append("ENDATA")
    return lines


def _columns_section(content: _Content, fixed: bool) -> list[str]:
    """COLUMNS: each column's objective entry (also a zero one for an empty column) and
    its nonzeros."""
    A, c, rows = content.A, content.c, content.rows
    lines = ["COLUMNS"]
    integer, markers = content.integer, 0
    for j in range(A.shape[1]):
        if integer[j] and (j == 0 or not integer[j - 1]):
            markers += 1
            lines.append(_marker_line(fixed, markers, "INTORG"))
        start, stop = A.indptr[j], A.indptr[j + 1]
        pairs = [(rows[i], v) for i, v in zip(A.indices[start:stop], A.data[start:stop])]
        if c[j] != 0 or not pairs:
            pairs.insert(0, (content.objective_name, c[j]))
        lines += _pair_lines(fixed, content.columns[j], pairs)
        if integer[j] and (j == A.shape[1] - 1 or not integer[j + 1]):
            markers += 1
            lines.append(_marker_line(fixed, markers, "INTEND"))
    return lines


def _marker_line(fixed: bool, k: int, kind: str) -> str:
    """The k-th integer marker line, of kind INTORG or INTEND."""
    name = f"MARK{k:04d}" if k < 10_000 else f"M{k:07d}"
    if fixed:
        return f"    {name:<8}  'MARKER'                 '{kind}'"
    return f"    {name} 'MARKER' '{kind}'"


def _rhs_and_ranges_sections(content: _Content, fixed: bool) -> list[str]:
    """RHS (with the objective constant, negated) and RANGES, each when it has entries."""
    rows = content.rows
    lines = []
    rhs_pairs = [(rows[i], v) for i, v in enumerate(content.rhs) if v != 0 and content.row_kinds[i] != "N"]
    if content.constant != 0:
        rhs_pairs.insert(0, (content.objective_name, -content.constant))
    if rhs_pairs:
        lines.append("RHS")
        lines += _pair_lines(fixed, "RHS", rhs_pairs)
    range_pairs = [(rows[i], v) for i, v in enumerate(content.ranges) if v > 0]
    if range_pairs:
        lines.append("RANGES")
        lines += _pair_lines(fixed, "RNG", range_pairs)
    return lines


def _bounds_section(content: _Content, fixed: bool) -> list[str]:
    """BOUNDS, when a column's bounds differ from 0 <= x < inf."""
    if not content.bounds:
        return []
    lines = ["BOUNDS"]
    for kind, j, value in content.bounds:
        number = "" if value is None else _number_text(value)
        if fixed:
            lines.append(f" {kind:<2} {'BND':<8}  {content.columns[j]:<8}  {number:>12}".rstrip())
        else:
            lines.append(f" {kind} BND {content.columns[j]} {number}".rstrip())
    return lines


# ----- checks, names and numbers --------------------------------------------------------


def _checked(form: StandardForm):
    """The form's arrays as floats (A dense or sparse), checked for what MPS can hold.

    Bounds of magnitude 1e30 or more become infinite.
    """
    c = np.asarray(form.c, dtype=float).reshape(-1)
    n = c.shape[0]
    if is_sparse(form.A):
        A = sparse().csc_matrix(form.A, dtype=float, copy=True)
        entries = A.data
    else:
        A = np.asarray(form.A, dtype=float)
        entries = A
        if A.ndim != 2:
            raise ValueError(f"A must be a 2-D array with {n} columns, got shape {A.shape}")
    if A.shape[1] != n:
        raise ValueError(f"A must be a 2-D array with {n} columns, got shape {A.shape}")
    m = A.shape[0]
    if not (np.all(np.isfinite(c)) and np.all(np.abs(c) < INFINITY)):
        raise ValueError("c must hold finite numbers below 1e30 in magnitude")
    if not (np.all(np.isfinite(entries)) and np.all(np.abs(entries) < INFINITY)):
        raise ValueError("A must hold finite numbers below 1e30 in magnitude")
    arrays = []
    for label, values, size in (("row_lower", form.row_lower, m), ("row_upper", form.row_upper, m),
                                ("col_lower", form.col_lower, n), ("col_upper", form.col_upper, n)):
        values = np.asarray(values, dtype=float).reshape(-1)
        if values.shape[0] != size:
            raise ValueError(f"{label} must have {size} entries, got {values.shape[0]}")
        if np.any(np.isnan(values)):
            raise ValueError(f"{label} must not contain NaN")
        arrays.append(np.where(np.abs(values) >= INFINITY, np.copysign(np.inf, values), values))
    row_lower, row_upper, col_lower, col_upper = arrays
    for label, lower, upper in (("row", row_lower, row_upper), ("column", col_lower, col_upper)):
        bad = np.flatnonzero((lower == np.inf) | (upper == -np.inf))
        if bad.size:
            raise ValueError(f"{label} {bad[0]} has a lower bound of +inf or an upper bound of -inf")
    crossed = np.flatnonzero(row_lower > row_upper)
    if crossed.size:
        i = crossed[0]
        raise ValueError(
            f"row {i} has lower bound {row_lower[i]} above upper bound {row_upper[i]}; MPS cannot express it"
        )
    return c, A, row_lower, row_upper, col_lower, col_upper


def _names(names, size: int, prefix: str, label: str) -> list[str]:
    """Given names as strings (checked), or generated ones like R0001."""
    if names is None:
        return [f"{prefix}{k + 1:04d}" for k in range(size)]
    names = [str(v) for v in names]
    if len(names) != size:
        raise ValueError(f"{label} must have {size} names, got {len(names)}")
    if len(set(names)) != size:
        raise ValueError(f"{label} must be unique")
    return names


def _objective_name(wanted: str, rows: list[str]) -> str:
    """The objective row's name: `wanted` (or COST), made unlike every row name."""
    base = wanted or "COST"
    taken = set(rows)
    candidate, k = base, 0
    while candidate in taken:
        k += 1
        candidate = f"{base[:8 - len(str(k))]}{k}" if len(base) >= 8 else f"{base}{k}"
    return candidate


def _free_words(names: list[str], prefix: str) -> list[str]:
    """Names for free MPS: blanks become _, and if that clashes, generated names."""
    words = ["_".join(v.split()) for v in names]
    if len(words) == 1:
        return words if words[0] else [prefix]
    if all(words) and len(set(words)) == len(words):
        return words
    return [f"{prefix}{k + 1:04d}" for k in range(len(words))]


def _fits_fixed(content: _Content) -> bool:
    """True when every name and number fits the fixed MPS fields."""
    names = [content.name, content.objective_name, *content.rows, *content.columns]
    for v in names:
        if not (0 < len(v) <= FIXED_NAME_WIDTH and v == v.strip() and v.isascii() and v.isprintable()):
            return False
    c, ranges = content.c, content.ranges
    numbers = [c[c != 0], content.A.data, [v for v in content.rhs if v != 0],
               ranges[ranges > 0] if ranges.size else [],
               [v for _, _, v in content.bounds if v is not None], [-content.constant]]
    return all(len(_number_text(v)) <= FIXED_NUMBER_WIDTH for group in numbers for v in group)


def _number_text(value: float) -> str:
    """The shortest text that reads back as exactly `value` (repr, trimmed)."""
    text = repr(float(value))
    mantissa, e, exponent = text.partition("e")
    mantissa = mantissa.removesuffix(".0")
    if mantissa.startswith("0."):
        mantissa = mantissa[1:]
    elif mantissa.startswith("-0."):
        mantissa = "-" + mantissa[2:]
    if e:
        exponent = str(int(exponent))
    text = mantissa + (f"e{exponent}" if e else "")
    assert float(text) == value, (text, value)
    return text


def _row_records(lower: np.ndarray, upper: np.ndarray):
    """Each row's type (N for a free row), right-hand side and range (0 for none)."""
    kinds, rhs, ranges = [], [], np.zeros(lower.shape[0])
    for i, (lo, up) in enumerate(zip(lower, upper)):
        if lo == up:
            kinds.append("E"), rhs.append(lo)
        elif math.isinf(lo) and math.isinf(up):
            kinds.append("N"), rhs.append(0.0)
        elif math.isinf(lo):
            kinds.append("L"), rhs.append(up)
        elif math.isinf(up):
            kinds.append("G"), rhs.append(lo)
        else:
            kind, b, r = _range(lo, up)
            kinds.append(kind), rhs.append(b)
            ranges[i] = r
    return kinds, rhs, ranges


def _range(lo: float, up: float) -> tuple[str, float, float]:
    """A G or L row whose range gives lo <= a·x <= up, exactly when any float range can.

    The range is tried at up - lo and a few floats either side, as a G row (lo + r == up)
    and as an L row (up - r == lo); of the exact ones the shortest text wins. When none is
    exact (bounds far apart in magnitude, such as -1 and 1e-13), the closest is taken.
    """
    width = up - lo
    candidates = [width]
    below = above = width
    for _ in range(4):
        below, above = float(np.nextafter(below, 0.0)), float(np.nextafter(above, np.inf))
        candidates += [below, above]
    options = [("G", lo, r, abs(lo + r - up)) for r in candidates if r > 0]
    options += [("L", up, r, abs(up - r - lo)) for r in candidates if r > 0]
    kind, b, r, _ = min(options, key=lambda t: (t[3], len(_number_text(t[1])) + len(_number_text(t[2]))))
    return kind, b, r


def _bound_records(lower: np.ndarray, upper: np.ndarray, integer: np.ndarray) -> list[tuple[str, int, float | None]]:
    """BOUNDS lines (type, column, value) for the bounds that differ from 0 <= x < inf, and
    PL for an integer column with those bounds (which readers would otherwise take as binary)."""
    records = []
    for j, (lo, up) in enumerate(zip(lower, upper)):
        if integer[j] and lo == 0 and up == math.inf:
            records.append(("PL", j, None))
        elif lo == up:
            records.append(("FX", j, float(lo)))
        elif lo == -math.inf and up == math.inf:
            records.append(("FR", j, None))
        elif lo == -math.inf:
            records += [("MI", j, None), ("UP", j, float(up))]
        elif up == math.inf:
            if lo != 0:
                records.append(("LO", j, float(lo)))
        else:
            records.append(("UP", j, float(up)))
            if lo != 0 or up < 0:
                records.append(("LO", j, float(lo)))
    return records


def _line(fixed: bool, kind: str, name: str) -> str:
    """A ROWS line."""
    return f" {kind:<2} {name}" if fixed else f" {kind} {name}"


def _pair_lines(fixed: bool, head: str, pairs: list[tuple[str, float]]) -> list[str]:
    """COLUMNS, RHS or RANGES lines: a name, then (row, value) pairs, two per line."""
    lines = []
    for k in range(0, len(pairs), 2):
        chunk = pairs[k : k + 2]
        if fixed:
            text = f"    {head:<8}"
            for slot, (row, value) in enumerate(chunk):
                text += ("  " if slot == 0 else "   ") + f"{row:<8}  {_number_text(value):>12}"
            lines.append(text.rstrip())
        else:
            lines.append("    " + " ".join([head, *(f"{row} {_number_text(value)}" for row, value in chunk)]))
    return lines

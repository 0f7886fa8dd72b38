"""Read and write MPS files, the open standard text format for LP models.

`read(path)` returns an `MPSModel` whose `form` the engine solves with `solve_form`;
`write(path, form_or_model)` writes a `StandardForm` (or a model read earlier) so that
reading it back gives the same form, bit for bit, within the limits of the format listed
under "What the writer produces". Malformed files raise `MPSError` (a ValueError) naming
the file and line.

What the reader accepts
=======================

Layout
    Fixed MPS keeps fields in columns 2-3, 5-12, 15-22, 25-36, 40-47 and 50-61, and its
    names may contain spaces (leading and trailing blanks of a field are not part of the
    name). Free MPS separates fields by blanks and tabs. ``format="auto"`` reads a file as
    fixed MPS when every data line keeps to the fixed columns (no text between or after
    the fields, no tabs) and the fixed reading succeeds; otherwise as free MPS. A file
    that fails both ways reports the error of the reading that got further.
Lines
    Blank lines and lines starting with ``*`` are skipped. A line starting in column 1
    names a section; data lines start with a blank.
NAME
    The model name: columns 15-22 in fixed MPS, the first word after NAME in free MPS.
OBJSENSE
    ``MAX`` or ``MIN`` (also MAXIMIZE, MAXIMISE, MINIMIZE, MINIMISE), either on the line
    after ``OBJSENSE`` or on the same line. A maximisation is stored negated, so
    `MPSModel.form` always minimises, and `MPSModel.maximise` says so.
ROWS
    Types N, L, G, E. The first N row is the objective; other N rows are ignored, together
    with every entry on them.
COLUMNS
    Entries on rows named in ROWS; each (column, row) pair at most once. A column named
    again later gets more entries. ``'MARKER'`` lines (integer markers) are skipped and
    the columns between them kept as continuous columns: this is an LP reader.
RHS
    The first vector only (named by the first RHS line; a blank name is a name too).
    Rows without an entry have right-hand side 0. An entry on the objective row gives the
    objective constant, ``objective_constant = -value`` (the usual convention, so that
    objective = c·x + objective_constant).
RANGES
    The first vector only. With right-hand side b and range R, an L row becomes
    b - |R| <= a·x <= b, a G row b <= a·x <= b + |R|, and an E row b <= a·x <= b + R when
    R > 0, else b + R <= a·x <= b (R = 0 keeps the equality). Ranges on the objective
    row are an error.
BOUNDS
    The first vector only, lines applied in order over the default 0 <= x < inf:
    UP (upper), LO (lower), FX (both), FR (free), MI (lower -inf), PL (upper +inf),
    BV (0..1), LI (lower), UI (upper); integrality is ignored. UP or UI with a negative
    value on a column whose lower bound is still the default 0 also sets the lower bound
    to -inf (the common convention; write LO after UP to keep a lower bound of 0). Readers
    differ on this point (some keep the 0), so `write` never relies on it.
Numbers
    Decimal numbers with an optional exponent (E or D); ``inf`` and ``infinity`` with a
    sign. In RHS, RANGES and BOUNDS a magnitude of 1e30 or more means infinity (the common
    convention). Coefficients in COLUMNS must be finite and below 1e30 in magnitude. A
    right-hand side that leaves a row with no possible value (an E row at infinity) and
    an infinite objective constant are errors.
ENDATA
    Required; anything after it is ignored. Section order: NAME and OBJSENSE anywhere
    before ENDATA, ROWS before COLUMNS, then RHS, RANGES and BOUNDS in any order, each
    section at most once. Other sections (quadratic, SOS, ...) are errors.

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
survives the convention above). A bound or row side of magnitude 1e30 or more is written
as infinite. A maximising model gets ``OBJSENSE`` / ``MAX`` and its own objective.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import scipy.sparse as sp

from blendkit.engine.standard_form import StandardForm

# Values of this magnitude or more in RHS, RANGES and BOUNDS mean infinity.
INFINITY = 1e30
# The six fields of fixed MPS as 0-based slices: columns 2-3, 5-12, 15-22, 25-36, 40-47, 50-61.
FIXED_FIELDS = ((1, 3), (4, 12), (14, 22), (24, 36), (39, 47), (49, 61))
FIXED_WIDTH = 61
FIXED_NAME_WIDTH = 8
FIXED_NUMBER_WIDTH = 12
SECTIONS = ("NAME", "OBJSENSE", "ROWS", "COLUMNS", "RHS", "RANGES", "BOUNDS", "ENDATA")
UNSUPPORTED = ("QUADOBJ", "QMATRIX", "QSECTION", "QCMATRIX", "CSECTION", "SOS", "SETS",
               "INDICATORS", "LAZYCONS", "USERCUTS", "CONE", "OBJNAME", "PWLOBJ", "GENCONS")
ROW_TYPES = ("N", "L", "G", "E")
BOUND_TYPES = ("UP", "LO", "FX", "FR", "MI", "PL", "BV", "LI", "UI")
VALUELESS_BOUNDS = ("FR", "MI", "PL", "BV")
SENSES = {"MAX": True, "MAXIMIZE": True, "MAXIMISE": True,
          "MIN": False, "MINIMIZE": False, "MINIMISE": False}
MARKER = "'MARKER'"
_FIXED_COLUMNS = frozenset(k for start, stop in FIXED_FIELDS for k in range(start, stop))
_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eEdD][+-]?\d+)?|[+-]?inf(?:inity)?", re.IGNORECASE)


class MPSError(ValueError):
    """A file that is not valid MPS (as this module reads it), with the line at fault."""

    def __init__(self, message: str, *, path: str | None = None, line: int | None = None):
        self.message = message
        self.path = path
        self.line = line
        where = ", ".join(part for part in (path, f"line {line}" if line else None) if part)
        super().__init__(f"{where}: {message}" if where else message)


@dataclass(frozen=True)
class MPSModel:
    """An LP read from an MPS file.

    `form` is the model as the engine solves it, always a minimisation (n_ub = 0):
    a maximising file (`maximise` True) has its objective negated in `form.c`.
    `row_names` and `column_names` name the rows and columns of `form.A`; the objective
    row's name is `objective_name` ("" when the file has no N row). The file's objective
    is `objective(x)` = ±(form.c·x) + `objective_constant`.
    """

    name: str
    form: StandardForm
    row_names: tuple[str, ...]
    column_names: tuple[str, ...]
    objective_name: str
    objective_constant: float
    maximise: bool = False

    def objective(self, x) -> float:
        """The file's objective at x, in its own sense, with the constant."""
        value = float(self.form.c @ np.asarray(x, dtype=float))
        return (-value if self.maximise else value) + self.objective_constant


# ----- reading -------------------------------------------------------------------------


def read(path, format: str = "auto") -> MPSModel:
    """Read an MPS file ("fixed", "free" or "auto"; see the module docstring)."""
    if format not in ("auto", "fixed", "free"):
        raise ValueError(f'format must be "auto", "fixed" or "free", got {format!r}')
    source = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise MPSError(f"not a UTF-8 text file ({exc.reason} at byte {exc.start})", path=source) from None
    lines = [line.rstrip("\r") for line in text.split("\n")]  # only newlines end lines
    if lines and not lines[-1]:
        lines.pop()
    if format == "fixed":
        return _Reader(lines, fixed=True, source=source).parse()
    if format == "free" or not _keeps_fixed_columns(lines):
        return _Reader(lines, fixed=False, source=source).parse()
    try:
        return _Reader(lines, fixed=True, source=source).parse()
    except MPSError as fixed_error:
        try:
            return _Reader(lines, fixed=False, source=source).parse()
        except MPSError as free_error:
            if (free_error.line or 0) > (fixed_error.line or 0):
                raise free_error from None
            raise fixed_error from None


def _keeps_fixed_columns(lines: list[str]) -> bool:
    """True when every data line has text only inside the fixed fields (auto-detection)."""
    for line in lines:
        line = line.rstrip()
        if not line or not line[0].isspace():
            continue
        if "\t" in line or len(line) > FIXED_WIDTH:
            return False
        if any(ch != " " and k not in _FIXED_COLUMNS for k, ch in enumerate(line)):
            return False
    return True


class _Reader:
    """One pass over the lines of one file; keeps what the sections have said so far."""

    def __init__(self, lines: list[str], *, fixed: bool, source: str):
        self.lines = lines
        self.fixed = fixed
        self.source = source
        self.lineno = 0
        self.section: str | None = None
        self.seen: set[str] = set()
        self.name = ""
        self.maximise: bool | None = None
        self.objective_name = ""
        self.row_index: dict[str, int] = {}  # constraint rows, in file order
        self.row_types: list[str] = []
        self.ignored_rows: set[str] = set()  # N rows after the first
        self.column_index: dict[str, int] = {}
        self.entries: dict[tuple[int, int], float] = {}  # (row, column) -> coefficient
        self.cost: dict[int, float] = {}
        self.rhs_vector: str | None = None
        self.rhs: dict[int, tuple[float, int]] = {}  # row -> (value, line)
        self.constant: tuple[float, int] | None = None
        self.range_vector: str | None = None
        self.ranges: dict[int, float] = {}
        self.bound_vector: str | None = None
        self.bounds: list[tuple[str, int, float]] = []  # (type, column, value), in file order

    def error(self, message: str) -> MPSError:
        """An MPSError at the current line."""
        return MPSError(message, path=self.source, line=self.lineno)

    def parse(self) -> MPSModel:
        """Read every line up to ENDATA and build the model."""
        for lineno, raw in enumerate(self.lines, start=1):
            self.lineno = lineno
            line = raw.rstrip()
            if not line or line.startswith("*"):
                continue
            if not line[0].isspace():
                self.header(line)
                if self.section == "ENDATA":
                    return self.model()
            else:
                self.data(line)
        self.lineno = len(self.lines) + 1
        raise self.error("the file ends without ENDATA")

    # ----- sections --------------------------------------------------------------------

    def header(self, line: str) -> None:
        """Start the section named at column 1."""
        parts = line.split(None, 1)
        word, rest = parts[0], parts[1] if len(parts) > 1 else ""
        if self.section == "OBJSENSE" and self.maximise is None:
            raise self.error("OBJSENSE gives no sense; put MAX or MIN on the line after it")
        if word not in SECTIONS:
            if word.upper() in UNSUPPORTED:
                raise self.error(f"section {word} is not supported: this reader takes linear models only")
            raise self.error(
                f"{word!r} starts in column 1, so it should name a section, but it is not one of "
                f"{', '.join(SECTIONS)}; data lines must start with a blank"
            )
        if word in self.seen:
            raise self.error(f"section {word} appears twice")
        if word == "COLUMNS" and "ROWS" not in self.seen:
            raise self.error("COLUMNS comes before ROWS; the rows must be named first")
        if word in ("RHS", "RANGES", "BOUNDS") and "COLUMNS" not in self.seen:
            raise self.error(f"{word} comes before COLUMNS; it must follow the columns")
        if word == "ROWS" and "COLUMNS" in self.seen:
            raise self.error("ROWS comes after COLUMNS")
        self.seen.add(word)
        self.section = word
        if word == "NAME":
            self.name = self.model_name(line)
        elif word == "OBJSENSE":
            if rest.strip():
                self.sense(rest)
        elif rest.strip() and word != "ENDATA":
            raise self.error(f"unexpected text {rest.strip()!r} after {word}")

    def model_name(self, line: str) -> str:
        """The name on the NAME line."""
        if self.fixed and len(line) > 14 and not line[4:14].strip():
            return line[14:22].strip()
        words = line.split()
        return words[1] if len(words) > 1 else ""

    def sense(self, text: str) -> None:
        """Record MAX or MIN from OBJSENSE."""
        words = text.split()
        if self.maximise is not None:
            raise self.error("OBJSENSE gives the sense twice")
        if len(words) != 1 or words[0].upper() not in SENSES:
            raise self.error(f"OBJSENSE must be MAX or MIN, got {text.strip()!r}")
        self.maximise = SENSES[words[0].upper()]

    def data(self, line: str) -> None:
        """Hand a data line to its section."""
        if self.section is None:
            raise self.error("data line before any section (ROWS, COLUMNS, ...)")
        if self.section == "NAME":
            raise self.error("data line in the NAME section; the name goes on the NAME line")
        if self.section == "OBJSENSE":
            self.sense(line)
        elif self.section == "ROWS":
            self.row(*self.row_fields(line))
        elif self.section == "COLUMNS":
            column, pairs = self.pair_fields(line, "column")
            if pairs is not None:
                self.column(column, pairs)
        elif self.section in ("RHS", "RANGES"):
            vector, pairs = self.pair_fields(line, "vector")
            self.vector_entries(vector, pairs)
        elif self.section == "BOUNDS":
            self.bound(*self.bound_fields(line))

    # ----- fields of a data line ---------------------------------------------------------

    def fixed_fields(self, line: str) -> list[str]:
        """The six fixed fields, stripped; text outside them is an error."""
        if "\t" in line:
            raise self.error("a tab in a fixed MPS line; fixed MPS needs blanks (read it as free MPS)")
        fields = [line[a:b].strip() for a, b in FIXED_FIELDS]
        for k, ch in enumerate(line):
            if ch != " " and k not in _FIXED_COLUMNS:
                raise self.error(
                    f"text in column {k + 1}, outside the fixed MPS fields (columns 2-3, 5-12, "
                    "15-22, 25-36, 40-47, 50-61); read the file as free MPS if it is one"
                )
        return fields

    def row_fields(self, line: str) -> tuple[str, str]:
        """(type, name) of a ROWS line."""
        if self.fixed:
            f = self.fixed_fields(line)
            if any(f[2:]):
                raise self.error("a ROWS line holds only a type (columns 2-3) and a name (columns 5-12)")
            return f[0], f[1]
        words = line.split()
        if len(words) != 2:
            raise self.error(f"a ROWS line holds a type and a name, got {len(words)} fields")
        return words[0], words[1]

    def pair_fields(self, line: str, what: str) -> tuple[str, list[tuple[str, str]] | None]:
        """(column or vector name, [(row, number text), ...]) of a COLUMNS, RHS or RANGES line.

        Pairs is None for a MARKER line. In free MPS, RHS and RANGES lines may leave out
        the vector name (an even number of fields).
        """
        if self.fixed:
            f = self.fixed_fields(line)
            if f[0]:
                raise self.error(f"columns 2-3 must be blank in the {self.section} section, got {f[0]!r}")
            if self.section == "COLUMNS" and f[2] == MARKER:
                return f[1], None
            if not f[1] and self.section == "COLUMNS":
                raise self.error("the column name (columns 5-12) is missing")
            pairs = [(f[2], f[3])]
            if f[4] or f[5]:
                pairs.append((f[4], f[5]))
            for row, number in pairs:
                if not row:
                    raise self.error("a row name is missing before a value")
                if not number:
                    raise self.error(f"the value for row {row!r} is missing")
            return f[1], pairs
        words = line.split()
        if self.section == "COLUMNS" and len(words) >= 2 and words[1] == MARKER:
            return words[0], None
        if self.section != "COLUMNS" and len(words) in (2, 4):
            words = ["", *words]
        if len(words) not in (3, 5):
            expected = "a column name and one or two (row, value) pairs" if what == "column" else (
                "an optional vector name and one or two (row, value) pairs"
            )
            raise self.error(f"a {self.section} line holds {expected}, got {len(line.split())} fields")
        return words[0], [(words[1], words[2])] + ([(words[3], words[4])] if len(words) == 5 else [])

    def bound_fields(self, line: str) -> tuple[str, str, str, str | None]:
        """(type, vector, column, number text or None) of a BOUNDS line."""
        if self.fixed:
            f = self.fixed_fields(line)
            if f[4] or f[5]:
                raise self.error("a BOUNDS line ends at column 36 (type, vector, column, value)")
            if not f[2]:
                raise self.error("the column name (columns 15-22) is missing")
            return f[0], f[1], f[2], f[3] or None
        words = line.split()
        kind = words[0].upper()
        if len(words) == 4:
            return words[0], words[1], words[2], words[3]
        if len(words) == 3:  # vector and column, or column and value: the names decide
            first, second = (w in self.column_index for w in words[1:])
            if first != second:
                with_vector = second
            else:
                with_vector = kind in VALUELESS_BOUNDS
            if with_vector:
                return words[0], words[1], words[2], None
            return words[0], "", words[1], words[2]
        if len(words) == 2 and kind in VALUELESS_BOUNDS:
            return words[0], "", words[1], None
        raise self.error(
            f"a BOUNDS line holds a type, an optional vector name, a column and a value, got {len(words)} fields"
        )

    # ----- meaning of the fields ---------------------------------------------------------

    def number(self, text: str, what: str) -> float:
        """A number field; `what` says what it is for the message."""
        if not _NUMBER.fullmatch(text):
            raise self.error(f"{what} {text!r} is not a number")
        return float(text.replace("D", "E").replace("d", "e"))

    def row(self, kind: str, name: str) -> None:
        """Declare one row."""
        kind = kind.upper()
        if kind not in ROW_TYPES:
            raise self.error(f"row type {kind!r} is not one of N, L, G, E")
        if not name:
            raise self.error("the row name is missing")
        if name in self.row_index or name == self.objective_name or name in self.ignored_rows:
            raise self.error(f"row {name!r} is declared twice")
        if kind == "N":
            if self.objective_name:
                self.ignored_rows.add(name)
            else:
                self.objective_name = name
            return
        self.row_index[name] = len(self.row_types)
        self.row_types.append(kind)

    def column(self, name: str, pairs: list[tuple[str, str]]) -> None:
        """Entries of one column."""
        j = self.column_index.setdefault(name, len(self.column_index))
        for row, text in pairs:
            value = self.number(text, f"the coefficient of column {name!r} in row {row!r}")
            if not abs(value) < INFINITY:
                raise self.error(
                    f"the coefficient of column {name!r} in row {row!r} must be finite (below 1e30), got {text}"
                )
            if row in self.ignored_rows:
                continue
            if row == self.objective_name:
                if j in self.cost:
                    raise self.error(f"column {name!r} has two entries in the objective row {row!r}")
                self.cost[j] = value
                continue
            if row not in self.row_index:
                raise self.error(f"column {name!r} names row {row!r}, which ROWS does not declare")
            key = (self.row_index[row], j)
            if key in self.entries:
                raise self.error(f"column {name!r} has two entries in row {row!r}")
            self.entries[key] = value

    def vector_entries(self, vector: str, pairs: list[tuple[str, str]]) -> None:
        """RHS or RANGES entries; only the first vector of each counts."""
        attr = "rhs_vector" if self.section == "RHS" else "range_vector"
        if getattr(self, attr) is None:
            setattr(self, attr, vector)
        if getattr(self, attr) != vector:
            return
        for row, text in pairs:
            value = self.number(text, f"the {self.section} value of row {row!r}")
            if abs(value) >= INFINITY:
                value = math.copysign(math.inf, value)
            if row in self.ignored_rows:
                continue
            if row == self.objective_name and row:
                if self.section == "RANGES":
                    raise self.error(f"RANGES names the objective row {row!r}; ranges apply to constraints")
                if self.constant is not None:
                    raise self.error(f"RHS gives the objective row {row!r} twice")
                if math.isinf(value):
                    raise self.error(f"the RHS of the objective row {row!r} (the objective constant) must be finite")
                self.constant = (value, self.lineno)
                continue
            if row not in self.row_index:
                raise self.error(f"{self.section} names row {row!r}, which ROWS does not declare")
            i = self.row_index[row]
            table = self.rhs if self.section == "RHS" else self.ranges
            if i in table:
                raise self.error(f"{self.section} gives row {row!r} twice")
            table[i] = (value, self.lineno) if self.section == "RHS" else value

    def bound(self, kind: str, vector: str, column: str, text: str | None) -> None:
        """One BOUNDS line, kept for `model` to apply in order."""
        kind = kind.upper()
        if kind not in BOUND_TYPES:
            raise self.error(f"bound type {kind!r} is not one of {', '.join(BOUND_TYPES)}")
        if self.bound_vector is None:
            self.bound_vector = vector
        if vector != self.bound_vector:
            return
        if column not in self.column_index:
            raise self.error(f"BOUNDS names column {column!r}, which COLUMNS does not define")
        if text is None:
            if kind not in VALUELESS_BOUNDS:
                raise self.error(f"a {kind} bound needs a value")
            value = 0.0
        else:
            value = self.number(text, f"the {kind} bound of column {column!r}")
            if abs(value) >= INFINITY:
                value = math.copysign(math.inf, value)
        if kind in ("LO", "LI") and value == math.inf:
            raise self.error(f"a lower bound of +infinity on column {column!r} admits no value")
        if kind in ("UP", "UI") and value == -math.inf:
            raise self.error(f"an upper bound of -infinity on column {column!r} admits no value")
        if kind == "FX" and math.isinf(value):
            raise self.error(f"column {column!r} is fixed at an infinite value")
        self.bounds.append((kind, self.column_index[column], value))

    def model(self) -> MPSModel:
        """The MPSModel of everything read (called at ENDATA)."""
        m, n = len(self.row_types), len(self.column_index)
        A = np.zeros((m, n))
        for (i, j), value in self.entries.items():
            A[i, j] = value
        c = np.zeros(n)
        for j, value in self.cost.items():
            c[j] = value
        row_lower = np.empty(m)
        row_upper = np.empty(m)
        for i, kind in enumerate(self.row_types):
            b, line = self.rhs.get(i, (0.0, None))
            lo, up = {"L": (-math.inf, b), "G": (b, math.inf), "E": (b, b)}[kind]
            if i in self.ranges:
                r = self.ranges[i]
                if kind == "L":
                    lo = b - abs(r)
                elif kind == "G":
                    up = b + abs(r)
                elif r > 0:
                    up = b + r
                elif r < 0:
                    lo = b + r
            if lo == math.inf or up == -math.inf or math.isnan(lo) or math.isnan(up):
                self.lineno = line
                name = list(self.row_index)[i]
                raise self.error(f"the right-hand side {b} leaves {kind} row {name!r} with no possible value")
            row_lower[i], row_upper[i] = lo, up
        col_lower = np.zeros(n)
        col_upper = np.full(n, math.inf)
        lower_set = np.zeros(n, dtype=bool)
        for kind, j, value in self.bounds:
            if kind in ("UP", "UI"):
                if value < 0 and not lower_set[j]:
                    col_lower[j] = -math.inf
                col_upper[j] = value
            elif kind in ("LO", "LI"):
                col_lower[j], lower_set[j] = value, True
            elif kind == "FX":
                col_lower[j] = col_upper[j] = value
                lower_set[j] = True
            elif kind == "FR":
                col_lower[j], col_upper[j] = -math.inf, math.inf
                lower_set[j] = True
            elif kind == "MI":
                col_lower[j], lower_set[j] = -math.inf, True
            elif kind == "PL":
                col_upper[j] = math.inf
            elif kind == "BV":
                col_lower[j], col_upper[j] = 0.0, 1.0
                lower_set[j] = True
        maximise = bool(self.maximise)
        form = StandardForm(
            c=-c if maximise else c,
            A=A,
            row_lower=row_lower,
            row_upper=row_upper,
            col_lower=col_lower,
            col_upper=col_upper,
            n_ub=0,
        )
        constant = -self.constant[0] if self.constant is not None and self.constant[0] != 0 else 0.0
        return MPSModel(
            name=self.name,
            form=form,
            row_names=tuple(self.row_index),
            column_names=tuple(self.column_index),
            objective_name=self.objective_name,
            objective_constant=constant,
            maximise=maximise,
        )


# ----- writing -------------------------------------------------------------------------


def write(
    path,
    form_or_model: StandardForm | MPSModel,
    *,
    name: str | None = None,
    row_names=None,
    column_names=None,
    objective_constant: float | None = None,
    free: bool = False,
) -> str:
    """Write an LP as MPS and return the layout written, "fixed" or "free".

    `form_or_model` is a StandardForm (minimised) or an MPSModel (its sense, names,
    objective name and constant are kept). `name`, `row_names`, `column_names` and
    `objective_constant` override those; left as None they come from the model, or are
    "BLEND", R0001..., C0001... and 0 for a StandardForm. Fixed MPS is written unless
    `free` is True or something does not fit it (see the module docstring). The file is
    built in memory and written at once. Malformed forms and names raise ValueError.
    """
    if isinstance(form_or_model, MPSModel):
        model = form_or_model
        form, maximise = model.form, model.maximise
        name = model.name if name is None else name
        row_names = model.row_names if row_names is None else row_names
        column_names = model.column_names if column_names is None else column_names
        objective_name = model.objective_name
        objective_constant = model.objective_constant if objective_constant is None else objective_constant
    elif isinstance(form_or_model, StandardForm):
        form, maximise, objective_name = form_or_model, False, ""
    else:
        raise TypeError(f"write takes a StandardForm or an MPSModel, got {type(form_or_model).__name__}")
    c, A, row_lower, row_upper, col_lower, col_upper = _checked(form)
    m, n = A.shape
    constant = float(objective_constant or 0.0)
    if not math.isfinite(constant):
        raise ValueError(f"objective_constant must be finite, got {objective_constant}")
    rows = _names(row_names, m, "R", "row_names")
    columns = _names(column_names, n, "C", "column_names")
    name = "BLEND" if not name else str(name)
    objective_name = _objective_name(objective_name, rows)
    if maximise:
        c = -c

    row_kinds, rhs, ranges = _row_records(row_lower, row_upper)
    bound_lines = _bound_records(col_lower, col_upper)
    A = sp.csc_matrix(A, copy=True)  # a copy: eliminate_zeros works in place
    A.eliminate_zeros()
    A.sort_indices()
    numbers = [c[c != 0], A.data, [v for v in rhs if v != 0], ranges[ranges > 0] if ranges.size else [],
               [v for _, _, v in bound_lines if v is not None], [-constant]]
    fits = not free and _fits_fixed([name, objective_name, *rows, *columns], numbers)
    if not fits:
        name = _free_words([name], "BLEND")[0]
        rows = _free_words(rows, "R")
        columns = _free_words(columns, "C")
        objective_name = _objective_name(_free_words([objective_name], "COST")[0], rows)

    lines = [f"NAME          {name}" if fits else f"NAME {name}"]
    if maximise:
        lines += ["OBJSENSE", "    MAX"]
    lines.append("ROWS")
    lines.append(_line(fits, "N", objective_name))
    for i, kind in enumerate(row_kinds):
        lines.append(_line(fits, kind, rows[i]))
    lines.append("COLUMNS")
    for j in range(n):
        start, stop = A.indptr[j], A.indptr[j + 1]
        pairs = [(rows[i], v) for i, v in zip(A.indices[start:stop], A.data[start:stop])]
        if c[j] != 0 or not pairs:
            pairs.insert(0, (objective_name, c[j]))
        lines += _pair_lines(fits, columns[j], pairs)
    rhs_pairs = [(rows[i], v) for i, v in enumerate(rhs) if v != 0 and row_kinds[i] != "N"]
    if constant != 0:
        rhs_pairs.insert(0, (objective_name, -constant))
    if rhs_pairs:
        lines.append("RHS")
        lines += _pair_lines(fits, "RHS", rhs_pairs)
    range_pairs = [(rows[i], v) for i, v in enumerate(ranges) if v > 0]
    if range_pairs:
        lines.append("RANGES")
        lines += _pair_lines(fits, "RNG", range_pairs)
    if bound_lines:
        lines.append("BOUNDS")
        for kind, j, value in bound_lines:
            number = "" if value is None else _number_text(value)
            if fits:
                lines.append(f" {kind:<2} {'BND':<8}  {columns[j]:<8}  {number:>12}".rstrip())
            else:
                lines.append(f" {kind} BND {columns[j]} {number}".rstrip())
    lines.append("ENDATA")
    Path(path).write_text("\n".join(lines) + "\n", encoding="utf-8")
    return "fixed" if fits else "free"


def _checked(form: StandardForm):
    """The form's arrays as floats (A dense or sparse), checked for what MPS can hold.

    Bounds of magnitude 1e30 or more become infinite.
    """
    c = np.asarray(form.c, dtype=float).reshape(-1)
    n = c.shape[0]
    if sp.issparse(form.A):
        A = sp.csc_matrix(form.A, dtype=float, copy=True)
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


def _fits_fixed(names: list[str], numbers) -> bool:
    """True when every name and number fits the fixed MPS fields."""
    for v in names:
        if not (0 < len(v) <= FIXED_NAME_WIDTH and v == v.strip() and v.isascii() and v.isprintable()):
            return False
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


def _bound_records(lower: np.ndarray, upper: np.ndarray) -> list[tuple[str, int, float | None]]:
    """BOUNDS lines (type, column, value) for the bounds that differ from 0 <= x < inf."""
    records = []
    for j, (lo, up) in enumerate(zip(lower, upper)):
        if lo == up:
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

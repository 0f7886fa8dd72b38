"""Read MPS files: lines and sections to records; `assemble` turns them into arrays.

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
    again later gets more entries. Columns between a ``'MARKER'`` line saying
    ``'INTORG'`` and one saying ``'INTEND'`` are integer columns (`MPSModel.integrality`);
    an integer column that no BOUNDS line names gets bounds 0..1 (the convention of the
    MIPLIB files, which HiGHS keeps too). Other marker kinds are errors.
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
    BV (0..1), LI (lower), UI (upper); BV, LI and UI also make the column an integer
    column. UP or UI with a negative value on a column whose lower bound is still the
    default 0 also sets the lower bound to -inf (the common convention; write LO after UP
    to keep a lower bound of 0). Readers differ on this point (some keep the 0), so
    `write` never relies on it.
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
"""

from __future__ import annotations

import math
import re
from pathlib import Path

from blendkit.engine.mps.assemble import assemble
from blendkit.engine.mps.model import FIXED_FIELDS, FIXED_WIDTH, INFINITY, MPSError, MPSModel

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
    """One pass over the lines of one file; keeps what the sections have said so far.

    At ENDATA its records (rows and their types, entries, costs, RHS, ranges and bounds
    by row and column index) go to `assemble`.
    """

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
        self.integer: set[int] = set()  # integer columns (markers; BV, LI, UI bounds)
        self.integer_run = False  # between INTORG and INTEND markers

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
                    return assemble(self)
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
            if pairs is None:
                self.marker(line)
            else:
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

    def marker(self, line: str) -> None:
        """An integer marker: 'INTORG' starts a run of integer columns, 'INTEND' ends it."""
        fields = self.fixed_fields(line) if self.fixed else line.split()
        kind = fields[4] if self.fixed else (fields[2] if len(fields) > 2 else "")
        kind = kind.strip("'").upper()
        if kind not in ("INTORG", "INTEND"):
            raise self.error(f"a MARKER line must say 'INTORG' or 'INTEND', got {kind or 'nothing'!r}")
        self.integer_run = kind == "INTORG"

    def column(self, name: str, pairs: list[tuple[str, str]]) -> None:
        """Entries of one column."""
        j = self.column_index.setdefault(name, len(self.column_index))
        if self.integer_run:
            self.integer.add(j)
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
        """One BOUNDS line, kept for `assemble` to apply in order."""
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
        if kind in ("BV", "LI", "UI"):
            self.integer.add(self.column_index[column])

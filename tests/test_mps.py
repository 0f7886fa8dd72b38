"""MPS files: each section and bound type, errors with line numbers, and round trips.

The outside references are the MPS format as the NETLIB LP collection and its readers
use it (fixed fields in columns 2-3, 5-12, 15-22, 25-36, 40-47, 50-61; range and bound
semantics as listed in `blendkit.engine.mps`), and HiGHS (highspy) reading our files.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from blendkit.engine import StandardForm, solve_form
from blendkit.engine.mps import MPSError, MPSModel, read, write
from tests.mps_reference import highs_optimum, highs_read

INF = math.inf
FORM_ARRAYS = ("c", "A", "row_lower", "row_upper", "col_lower", "col_upper")


def mps_file(tmp_path, text: str, name: str = "model.mps"):
    """The text written to a file in tmp_path."""
    path = tmp_path / name
    path.write_text(text)
    return path


def form(c, A, row_lower, row_upper, col_lower=None, col_upper=None) -> StandardForm:
    """A StandardForm from lists (columns default to 0 <= x < inf)."""
    c = np.array(c, dtype=float)
    n = c.shape[0]
    return StandardForm(
        c=c,
        A=np.array(A, dtype=float).reshape(-1, n),
        row_lower=np.array(row_lower, dtype=float),
        row_upper=np.array(row_upper, dtype=float),
        col_lower=np.zeros(n) if col_lower is None else np.array(col_lower, dtype=float),
        col_upper=np.full(n, INF) if col_upper is None else np.array(col_upper, dtype=float),
        n_ub=0,
    )


def assert_same_form(got: StandardForm, want: StandardForm):
    """Every array of the two forms is equal, exactly."""
    for key in FORM_ARRAYS:
        np.testing.assert_array_equal(getattr(got, key), getattr(want, key), err_msg=key)
    assert got.n_ub == 0


# ----- reading: every section ----------------------------------------------------------

# Fixed MPS with names holding spaces, a second N row, integer markers, a second RHS,
# RANGES and BOUNDS vector (ignored), ranges on every row type and an objective constant.
FIXED = """\
* a comment line, then a blank line

NAME          TOY MIX
ROWS
 N  COST
 L  LIM 1
 G  LIM2
 E  BAL
 E  BALNEG
 E  BALZERO
 N  NOTES
COLUMNS
    X ONE     COST               1.5   LIM 1               1.
    X ONE     BAL                 2.   NOTES              99.
    MARKER    'MARKER'                 'INTORG'
    Y         COST                -2   LIM2                3.
    Y         BALNEG              1.   BALZERO              1
    MARKER    'MARKER'                 'INTEND'
    Z         LIM 1               1.
RHS
    RHS       COST              -10.   LIM 1               4.
    RHS       LIM2                1.   BAL                 5.
    RHS       BALNEG              6.   BALZERO             7.
    RHS       NOTES              50.
    OTHER     LIM 1              99.
RANGES
    RNG       LIM 1               2.   LIM2                3.
    RNG       BAL                 1.   BALNEG             -2.
    RNG       BALZERO             0.
    RNG2      LIM2              100.
BOUNDS
 UP BND       X ONE               4.
 LO BND       Y                  -1.
 UP BND       Y                   3.
 FR BND       Z
 UP BND2      Z                   1.
ENDATA
"""

# What FIXED means under the rules of the MPS format for RANGES (an L row's range R gives
# [rhs - |R|, rhs], a G row's [rhs, rhs + |R|], an E row's [rhs, rhs + R] or [rhs + R, rhs]
# by the sign of R: from memory of the format's description). HiGHS reads FREE, the same
# model without blanks in its names, as TOY (test_free_mps_every_section); it does not
# return from reading FIXED itself (names with blanks), so it is not asked to.
TOY = form(
    c=[1.5, -2, 0],
    A=[[1, 0, 1], [0, 3, 0], [2, 0, 0], [0, 1, 0], [0, 1, 0]],
    # L row rhs 4 range 2: [2, 4]; G rhs 1 range 3: [1, 4]; E rhs 5 range +1: [5, 6];
    # E rhs 6 range -2: [4, 6]; E rhs 7 range 0: [7, 7].
    row_lower=[2, 1, 5, 4, 7],
    row_upper=[4, 4, 6, 6, 7],
    col_lower=[0, -1, -INF],
    col_upper=[4, 3, INF],
)

# The same model in free MPS (no blanks in names; RHS lines without a vector name, so the
# nameless vector is the first one).
FREE = """\
NAME toy_mix
ROWS
 N COST
 L LIM1
 G LIM2
 E BAL
 E BALNEG
 E BALZERO
 N NOTES
COLUMNS
 XONE COST 1.5 LIM1 1
 XONE BAL 2 NOTES 99
 MARKER 'MARKER' 'INTORG'
 Y\tCOST -2 LIM2 3
 Y BALNEG 1 BALZERO 1
 MARKER 'MARKER' 'INTEND'
 Z LIM1 1
RHS
 COST -10 LIM1 4
 LIM2 1 BAL 5
 BALNEG 6 BALZERO 7
 OTHER LIM1 99
RANGES
 RNG LIM1 2 LIM2 3
 RNG BAL 1 BALNEG -2
 RNG BALZERO 0
BOUNDS
 UP BND XONE 4
 LO BND Y -1
 UP BND Y 3
 FR BND Z
ENDATA
"""


def test_fixed_mps_every_section(tmp_path):
    model = read(mps_file(tmp_path, FIXED))
    assert isinstance(model, MPSModel)
    assert model.name == "TOY MIX"
    assert model.row_names == ("LIM 1", "LIM2", "BAL", "BALNEG", "BALZERO")
    assert model.column_names == ("X ONE", "Y", "Z")
    assert model.objective_name == "COST"
    # RHS -10 on the objective row: constant +10 (objective = c·x - rhs).
    assert model.objective_constant == 10.0
    assert model.maximise is False
    assert_same_form(model.form, TOY)
    assert model.objective([1, 2, 3]) == 1.5 - 4 + 10


def test_fixed_mps_read_explicitly_and_by_auto_agree(tmp_path):
    path = mps_file(tmp_path, FIXED)
    assert_same_form(read(path, format="fixed").form, read(path).form)


def test_free_mps_every_section(tmp_path):
    model = read(mps_file(tmp_path, FREE))
    assert model.name == "toy_mix"
    assert model.row_names == ("LIM1", "LIM2", "BAL", "BALNEG", "BALZERO")
    assert model.column_names == ("XONE", "Y", "Z")
    assert model.objective_constant == 10.0
    assert_same_form(model.form, TOY)
    # HiGHS (highspy) reads the same rows, columns, bounds and constant from the file.
    ref = highs_read(mps_file(tmp_path, FREE))
    for key in FORM_ARRAYS:
        np.testing.assert_array_equal(getattr(ref, key), getattr(TOY, key), err_msg=key)
    assert (ref.offset, ref.row_names, ref.column_names) == (10.0, model.row_names, model.column_names)


def test_fixed_file_with_a_blank_rhs_vector_name(tmp_path):
    # Fixed MPS may leave the vector name (columns 5-12) blank.
    text = FIXED.replace("    RHS       LIM2 ", "              LIM2 ").replace(
        "    RHS       COST              -10.   LIM 1               4.\n", ""
    )
    model = read(mps_file(tmp_path, text))
    assert model.objective_constant == 0.0
    # The first RHS line (blank name) picks the vector: LIM2 1, BAL 5 only.
    np.testing.assert_array_equal(model.form.row_lower, [-2, 1, 5, -2, 0])
    np.testing.assert_array_equal(model.form.row_upper, [0, 4, 6, 0, 0])


def test_auto_falls_back_to_free_when_fixed_reading_fails(tmp_path):
    # Every data line keeps to the fixed columns, but "x cost 1" sits inside columns
    # 5-12, so the fixed reading finds no row name; the free reading succeeds.
    text = "NAME\nROWS\n N  cost\n L  cap\nCOLUMNS\n    x cost 1\n    x cap 2\nRHS\n    R cap 4\nENDATA\n"
    path = mps_file(tmp_path, text)
    with pytest.raises(MPSError, match="line 6: a row name is missing before a value"):
        read(path, format="fixed")
    model = read(path)
    assert (model.row_names, model.column_names, model.objective_name) == (("cap",), ("x",), "cost")
    assert_same_form(model.form, form(c=[1], A=[[2]], row_lower=[-INF], row_upper=[4]))
    # When both readings fail, the error is the one from the reading that got further.
    with pytest.raises(MPSError, match="line 9: RHS names row 'cop'"):
        read(mps_file(tmp_path, text.replace("R cap 4", "R cop 4")))


def test_fixed_mps_keeps_blanks_inside_names_free_mps_cannot(tmp_path):
    path = mps_file(tmp_path, FIXED)
    with pytest.raises(MPSError, match="line 6: a ROWS line holds a type and a name, got 3 fields"):
        read(path, format="free")


@pytest.mark.parametrize(
    "sense_lines, maximise",
    [(["OBJSENSE", "    MAX"], True), (["OBJSENSE", "    MIN"], False),
     (["OBJSENSE MAXIMIZE"], True), (["OBJSENSE", "  MAXIMISE"], True), ([], False)],
)
def test_objective_sense(tmp_path, sense_lines, maximise):
    text = "\n".join(["NAME demo", *sense_lines, "ROWS", " N cost", " L cap", "COLUMNS",
                      " x cost 3 cap 1", " y cost -1 cap 1", "RHS", " RHS cost 2 cap 4", "ENDATA"])
    path = mps_file(tmp_path, text)
    model = read(path)
    assert model.maximise is maximise
    # A maximisation is stored negated so that the form minimises.
    np.testing.assert_array_equal(model.form.c, [-3, 1] if maximise else [3, -1])
    assert model.objective_constant == -2.0
    result = solve_form(model.form)
    assert result.status == "optimal"
    # HiGHS solving the same model, in the same sense (written on two lines, the form
    # HiGHS reads; it takes "OBJSENSE MAXIMIZE" on one line for a minimisation) and with
    # its constant: max 3x - y with x + y <= 4 is 12 at x = 4, min is -4 at y = 4, less 2.
    canonical = ["OBJSENSE", "    MAX"] if maximise else []
    same = mps_file(tmp_path, text.replace("\n".join(["NAME demo", *sense_lines]), "\n".join(["NAME demo", *canonical])),
                    name="canonical.mps")
    assert highs_optimum(same) == ("optimal", pytest.approx(10 if maximise else -6))
    assert model.objective(result.x) == pytest.approx(highs_optimum(same)[1], rel=1e-12)


def test_objective_sense_in_a_fixed_file(tmp_path):
    text = FIXED.replace("ROWS\n", "OBJSENSE\n    MAX\nROWS\n")
    model = read(mps_file(tmp_path, text))
    assert model.maximise
    np.testing.assert_array_equal(model.form.c, -TOY.c)


def test_no_objective_row(tmp_path):
    text = "NAME\nROWS\n L cap\nCOLUMNS\n x cap 1\nRHS\n RHS cap 4\nENDATA\n"
    model = read(mps_file(tmp_path, text))
    assert model.objective_name == "" and model.name == ""
    np.testing.assert_array_equal(model.form.c, [0])


def test_fortran_exponents_and_infinity(tmp_path):
    text = ("NAME\nROWS\n N obj\n G cap\nCOLUMNS\n x obj 1.5D+01 cap 2d-1\n y obj -2 cap 1\n"
            "RHS\n RHS cap -1E30\nBOUNDS\n UP BND x Infinity\n LO BND y -1e30\nENDATA\n")
    model = read(mps_file(tmp_path, text))
    np.testing.assert_array_equal(model.form.c, [15, -2])
    np.testing.assert_array_equal(model.form.A, [[0.2, 1]])
    # Magnitudes of 1e30 and more mean infinity in RHS and BOUNDS.
    np.testing.assert_array_equal(model.form.row_lower, [-INF])
    np.testing.assert_array_equal(model.form.col_lower, [0, -INF])
    np.testing.assert_array_equal(model.form.col_upper, [INF, INF])
    # ...so a G row at +1e30 has no possible value.
    with pytest.raises(MPSError, match="line 9: .*leaves G row 'cap' with no possible value"):
        read(mps_file(tmp_path, text.replace("-1E30", "1E30")))


# ----- reading: every bound type -------------------------------------------------------


@pytest.mark.parametrize(
    "bounds, lower, upper",
    [
        (["UP BND x 4"], 0, 4),
        # UP below zero over the default lower bound 0: lower becomes -inf (the convention).
        (["UP BND x -4"], -INF, -4),
        (["UI BND x -3"], -INF, -3),
        (["LO BND x 0", "UP BND x -4"], 0, -4),  # an explicit lower bound is kept
        (["LO BND x -5", "UP BND x -4"], -5, -4),
        (["UP BND x -4", "LO BND x -5"], -5, -4),
        (["LO BND x 2.5"], 2.5, INF),
        (["FX BND x 3"], 3, 3),
        (["FR BND x"], -INF, INF),
        (["MI BND x"], -INF, INF),
        (["MI BND x", "UP BND x 2"], -INF, 2),
        (["UP BND x 2", "MI BND x"], -INF, 2),
        (["UP BND x 2", "PL BND x"], 0, INF),
        (["BV BND x"], 0, 1),
        (["BV BND x 1"], 0, 1),
        (["LI BND x 2", "UI BND x 9"], 2, 9),
        (["UP BND x 1e30"], 0, INF),
        (["LO BND x -1e30"], -INF, INF),
        (["LO BND x -Inf", "UP BND x 1"], -INF, 1),
        (["UP x 4"], 0, 4),  # free MPS may leave out the vector name
        (["FR x"], -INF, INF),
        (["MI x", "UP x 7"], -INF, 7),
        (["UP BND x 4", "UP OTHER x 9", "LO OTHER x 1"], 0, 4),  # first vector only
        (["up bnd x 4"], 0, 4),  # type codes in any case; names as written
    ],
)
def test_bound_types(tmp_path, bounds, lower, upper):
    text = "\n".join(["NAME", "ROWS", " N obj", " L cap", "COLUMNS", " x obj 1 cap 1", " y obj 1 cap 1",
                      "RHS", " RHS cap 4", "BOUNDS", *(" " + b for b in bounds), "ENDATA"])
    model = read(mps_file(tmp_path, text))
    assert (model.form.col_lower[0], model.form.col_upper[0]) == (lower, upper)
    assert (model.form.col_lower[1], model.form.col_upper[1]) == (0, INF)


def test_bound_types_in_fixed_mps(tmp_path):
    lines = [
        " UP BND       X ONE              -4.",
        " MI BND       Y",
        " PL BND       Y",
        " BV BND       Z",
    ]
    start, stop = FIXED.index("BOUNDS\n") + len("BOUNDS\n"), FIXED.index("ENDATA")
    model = read(mps_file(tmp_path, FIXED[:start] + "\n".join(lines) + "\n" + FIXED[stop:]))
    np.testing.assert_array_equal(model.form.col_lower, [-INF, -INF, 0])
    np.testing.assert_array_equal(model.form.col_upper, [-4, INF, 1])


# ----- reading: errors name the line ---------------------------------------------------

BASE = ["NAME demo", "ROWS", " N cost", " L cap", "COLUMNS", " x cost 1 cap 1", "RHS", " RHS cap 4", "ENDATA"]


def edited(replace: dict[int, str] | None = None, insert: dict[int, str] | None = None) -> str:
    """BASE with lines (1-based) replaced, then lines inserted before the given numbers."""
    lines = list(BASE)
    for number, text in (replace or {}).items():
        lines[number - 1] = text
    for number, text in sorted((insert or {}).items(), reverse=True):
        lines.insert(number - 1, text)
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize(
    "text, line, message",
    [
        (edited({2: "ROW"}), 2, "'ROW' starts in column 1, so it should name a section"),
        (edited({6: "x cost 1 cap 1"}), 6, "should name a section, but it is not one of NAME"),
        (edited(insert={1: " x y"}), 1, "data line before any section"),
        (edited(insert={2: "   demo"}), 2, "data line in the NAME section"),
        (edited({4: " X cap"}), 4, "row type 'X' is not one of N, L, G, E"),
        (edited({4: " L cost"}), 4, "row 'cost' is declared twice"),
        (edited({4: " L cap extra"}), 4, "a ROWS line holds a type and a name, got 3 fields"),
        (edited({6: " x cost 1 cup 1"}), 6, "column 'x' names row 'cup', which ROWS does not declare"),
        (edited({6: " x cost 1 cap one"}), 6, "the coefficient of column 'x' in row 'cap' 'one' is not a number"),
        (edited({6: " x cost 1 cap nan"}), 6, "'nan' is not a number"),
        (edited({6: " x cost 1 cap 1e30"}), 6, "must be finite \\(below 1e30\\)"),
        (edited({6: " x cost 1 cap"}), 6, "a COLUMNS line holds a column name and one or two"),
        (edited(insert={7: " x cap 2"}), 7, "column 'x' has two entries in row 'cap'"),
        (edited(insert={7: " x cost 2"}), 7, "column 'x' has two entries in the objective row"),
        (edited({8: " RHS cop 4"}), 8, "RHS names row 'cop', which ROWS does not declare"),
        (edited(insert={9: " RHS cap 5"}), 9, "RHS gives row 'cap' twice"),
        (edited({8: " RHS cap 4 cost 1 x"}), 8, "an optional vector name and one or two"),
        (edited(insert={9: "RANGES\n RNG cost 1"}), 10, "RANGES names the objective row 'cost'"),
        (edited(insert={9: "BOUNDS\n UP BND z 1"}), 10, "BOUNDS names column 'z', which COLUMNS does not define"),
        (edited(insert={9: "BOUNDS\n XX BND x 1"}), 10, "bound type 'XX' is not one of UP, LO"),
        (edited(insert={9: "BOUNDS\n UP BND x"}), 10, "a UP bound needs a value"),
        (edited(insert={9: "BOUNDS\n LO BND x 1e30"}), 10, "a lower bound of \\+infinity on column 'x'"),
        (edited(insert={9: "BOUNDS\n UP BND x -inf"}), 10, "an upper bound of -infinity on column 'x'"),
        (edited(insert={9: "BOUNDS\n FX BND x inf"}), 10, "column 'x' is fixed at an infinite value"),
        (edited(insert={9: "BOUNDS\n UP BND x 1 2 3"}), 10, "a BOUNDS line holds a type"),
        (edited({8: " RHS cost 1e30"}), 8, "the objective constant\\) must be finite"),
        (edited({4: " E cap", 8: " RHS cap -1e30"}), 8, "leaves E row 'cap' with no possible value"),
        (edited(insert={7: "ROWS"}), 7, "section ROWS appears twice"),
        (edited(insert={5: "RHS"}), 5, "RHS comes before COLUMNS"),
        (edited({2: "COLUMNS", 5: "ROWS"}), 2, "COLUMNS comes before ROWS"),
        (edited(insert={9: "QUADOBJ"}), 9, "section QUADOBJ is not supported: this reader takes linear models only"),
        (edited({5: "COLUMNS now"}), 5, "unexpected text 'now' after COLUMNS"),
        (edited(insert={2: "OBJSENSE\n    UP"}), 3, "OBJSENSE must be MAX or MIN, got 'UP'"),
        (edited(insert={2: "OBJSENSE MAX\n    MIN"}), 3, "OBJSENSE gives the sense twice"),
        (edited(insert={2: "OBJSENSE"}), 3, "OBJSENSE gives no sense; put MAX or MIN on the line after it"),
        ("\n".join(BASE[:-1]) + "\n", 9, "the file ends without ENDATA"),
    ],
)
def test_errors_name_the_line(tmp_path, text, line, message):
    path = mps_file(tmp_path, text)
    with pytest.raises(MPSError, match=message) as caught:
        read(path)
    assert caught.value.line == line
    assert str(caught.value).startswith(f"{path}, line {line}: ")


def test_fixed_errors_name_the_line(tmp_path):
    # A value overflowing its field into columns 37-39 is not fixed MPS.
    text = FIXED.replace("    Z         LIM 1               1.", "    Z         LIM 1               1.000")
    path = mps_file(tmp_path, text)
    with pytest.raises(MPSError, match="line 19: text in column 37, outside the fixed MPS fields") as caught:
        read(path, format="fixed")
    assert caught.value.line == 19
    # auto reads it as free MPS, where "LIM 1" is two fields.
    with pytest.raises(MPSError, match="line 6: a ROWS line holds a type and a name, got 3 fields"):
        read(path)
    bad_column = FIXED.replace(" UP BND       X ONE ", " UP BND       X TWO ")
    with pytest.raises(MPSError, match="line 32: BOUNDS names column 'X TWO'"):
        read(mps_file(tmp_path, bad_column))


def test_mps_error_is_a_value_error_and_bad_files(tmp_path):
    assert issubclass(MPSError, ValueError)
    binary = tmp_path / "model.mps"
    binary.write_bytes(b"NAME \xff\xfe\n")
    with pytest.raises(MPSError, match="not a UTF-8 text file"):
        read(binary)
    with pytest.raises(ValueError, match='format must be "auto", "fixed" or "free"'):
        read(binary, format="loose")


def test_reading_leaves_the_file_alone(tmp_path):
    path = mps_file(tmp_path, FIXED)
    before = path.read_bytes()
    read(path)
    assert path.read_bytes() == before


# ----- writing -------------------------------------------------------------------------

SMALL = form(
    c=[2.5, -1, 0],
    A=[[1, 1, 0], [0.5, 0, -3], [1, 0, 0], [0, 1, 1]],
    row_lower=[-INF, 2, 3, -INF],
    row_upper=[10, INF, 3, INF],
    col_lower=[0, -INF, -2],
    col_upper=[4, 8, 6],
)

# The fixed layout (from memory of the MPS format's fields): type in columns 2-3, names
# at 5, 15 and 40, numbers right-aligned to columns 36 and 61; HiGHS reads it back as
# written (test_written_fixed_layout).
SMALL_FIXED = """\
NAME          BLEND
ROWS
 N  COST
 L  R0001
 G  R0002
 E  R0003
 N  R0004
COLUMNS
    C0001     COST               2.5   R0001                1
    C0001     R0002               .5   R0003                1
    C0002     COST                -1   R0001                1
    C0002     R0004                1
    C0003     R0002               -3   R0004                1
RHS
    RHS       COST              -1.5   R0001               10
    RHS       R0002                2   R0003                3
BOUNDS
 UP BND       C0001                4
 MI BND       C0002
 UP BND       C0002                8
 UP BND       C0003                6
 LO BND       C0003               -2
ENDATA
"""


def test_written_fixed_layout(tmp_path):
    path = tmp_path / "small.mps"
    assert write(path, SMALL, objective_constant=1.5) == "fixed"
    assert path.read_text() == SMALL_FIXED
    ref = highs_read(path)  # HiGHS drops the extra N row too
    np.testing.assert_array_equal(ref.A, SMALL.A[:3])
    np.testing.assert_array_equal(ref.col_lower, SMALL.col_lower)
    np.testing.assert_array_equal(ref.col_upper, SMALL.col_upper)
    assert ref.offset == 1.5
    model = read(path)
    # The free row R0004 is written as an extra N row, which readers drop.
    assert model.row_names == ("R0001", "R0002", "R0003")
    assert model.objective_constant == 1.5
    assert_same_form(model.form, form(SMALL.c, SMALL.A[:3], SMALL.row_lower[:3], SMALL.row_upper[:3],
                                      SMALL.col_lower, SMALL.col_upper))


def test_ranged_rows_written_with_ranges(tmp_path):
    sf = form(c=[1, 1], A=[[1, 0], [0, 1], [1, 1]], row_lower=[1, -2.5, 0.1], row_upper=[3, -0.5, 0.3])
    path = tmp_path / "ranged.mps"
    write(path, sf, free=True)
    text = path.read_text()
    assert "RANGES" in text
    assert_same_form(read(path).form, sf)
    # 0.3 - 0.1 is not 0.2 in floating point; the written range still gives both bounds.
    assert highs_read(path).row_upper[2] == 0.3 and highs_read(path).row_lower[2] == 0.1


def test_names_kept_and_fallback_to_free(tmp_path):
    sf = form(c=[1, 2], A=[[1, 1]], row_lower=[1], row_upper=[INF])
    path = tmp_path / "named.mps"
    # Names of up to 8 characters with inner blanks fit fixed MPS.
    assert write(path, sf, row_names=["min mass"], column_names=["corn", "soy meal"], name="my mix") == "fixed"
    model = read(path)
    assert (model.name, model.row_names, model.column_names) == ("my mix", ("min mass",), ("corn", "soy meal"))
    # Longer names need free MPS; blanks become underscores there.
    assert write(path, sf, row_names=["minimum mass"], column_names=["maize", "soybean meal 44"]) == "free"
    model = read(path)
    assert (model.row_names, model.column_names) == (("minimum_mass",), ("maize", "soybean_meal_44"))
    # When underscores would make two names equal, that kind gets generated names.
    write(path, sf, column_names=["soy meal 44", "soy_meal  44"], row_names=["a_rather_long_name"])
    model = read(path)
    assert model.column_names == ("C0001", "C0002") and model.row_names == ("a_rather_long_name",)
    # A number whose exact text is longer than 12 characters also needs free MPS.
    assert write(path, form(c=[0.1 + 0.2], A=[[1]], row_lower=[1], row_upper=[1])) == "free"
    assert read(path).form.c[0] == 0.1 + 0.2
    assert write(path, sf, free=True) == "free"
    assert_same_form(read(path).form, sf)


def test_objective_name_never_clashes_with_a_row(tmp_path):
    sf = form(c=[1], A=[[1]], row_lower=[1], row_upper=[INF])
    path = tmp_path / "clash.mps"
    write(path, sf, row_names=["COST"])
    model = read(path)
    assert model.row_names == ("COST",) and model.objective_name == "COST1"


def test_model_round_trip_keeps_sense_names_and_constant(tmp_path):
    text = "\n".join(["NAME demo", "OBJSENSE", "    MAX", "ROWS", " N profit", " L cap", "COLUMNS",
                      " x profit 3 cap 1", " y profit -1 cap 1", "RHS", " RHS profit -2 cap 4", "ENDATA"])
    model = read(mps_file(tmp_path, text))
    out = tmp_path / "out.mps"
    assert write(out, model) == "fixed"
    again = read(out)
    assert (again.name, again.row_names, again.column_names, again.objective_name) == (
        "demo", ("cap",), ("x", "y"), "profit")
    assert again.maximise and again.objective_constant == 2.0
    assert_same_form(again.form, model.form)
    # HiGHS reads the same maximisation from our copy as from the original
    # (max 3x - y + 2 with x + y <= 4: 14).
    original = highs_optimum(tmp_path / "model.mps")
    assert original == ("optimal", pytest.approx(14))
    assert highs_optimum(out) == original


def test_writing_bad_forms_raises_and_writes_nothing(tmp_path):
    path = tmp_path / "bad.mps"
    crossed = form(c=[1], A=[[1]], row_lower=[2], row_upper=[1])
    with pytest.raises(ValueError, match="row 0 has lower bound 2.0 above upper bound 1.0"):
        write(path, crossed)
    with pytest.raises(ValueError, match="row_names must have 1 names, got 2"):
        write(path, form(c=[1], A=[[1]], row_lower=[1], row_upper=[1]), row_names=["a", "b"])
    with pytest.raises(ValueError, match="column_names must be unique"):
        write(path, form(c=[1, 1], A=[[1, 1]], row_lower=[1], row_upper=[1]), column_names=["a", "a"])
    with pytest.raises(ValueError, match="c must hold finite numbers"):
        write(path, form(c=[np.nan], A=[[1]], row_lower=[1], row_upper=[1]))
    with pytest.raises(ValueError, match="column 0 has a lower bound of \\+inf"):
        write(path, form(c=[1], A=[[1]], row_lower=[1], row_upper=[1], col_lower=[INF], col_upper=[INF]))
    with pytest.raises(TypeError):
        write(path, "not a form")
    assert not path.exists()


def test_sparse_matrix_written_like_dense(tmp_path):
    sparse = replace(SMALL, A=sp.csr_matrix(SMALL.A))
    data = sparse.A.data.copy()
    write(tmp_path / "sparse.mps", sparse, objective_constant=1.5)
    assert (tmp_path / "sparse.mps").read_text() == SMALL_FIXED
    np.testing.assert_array_equal(sparse.A.data, data)


def test_writing_leaves_the_form_alone(tmp_path):
    sf = form(c=[1, -2], A=[[1, 1], [1, -1]], row_lower=[1, -INF], row_upper=[5, 2],
              col_lower=[-INF, 0], col_upper=[3, -1])
    copies = {key: getattr(sf, key).copy() for key in FORM_ARRAYS}
    write(tmp_path / "x.mps", sf)
    for key in FORM_ARRAYS:
        np.testing.assert_array_equal(getattr(sf, key), copies[key])


# ----- round trips, against HiGHS ------------------------------------------------------


@st.composite
def forms(draw, nice: bool):
    """Small random forms; `nice` keeps numbers simple and bounds consistent (for solving)."""
    m = draw(st.integers(0, 4))
    n = draw(st.integers(1, 4))
    if nice:
        number = st.integers(-6, 6).map(lambda k: k / 2)
    else:
        number = st.one_of(
            st.floats(-1e6, 1e6, allow_nan=False, allow_subnormal=False),
            st.floats(-1e25, 1e25, allow_nan=False),
            st.integers(-9, 9).map(float),
            st.sampled_from([0.1, 1 / 3, -0.0, 2.0**-30, 123456.789]),
        )
    entry = st.one_of(st.just(0.0), number)
    c = draw(st.lists(entry, min_size=n, max_size=n))
    A = [draw(st.lists(entry, min_size=n, max_size=n)) for _ in range(m)]

    def pair(free_ok: bool):
        a, b = sorted([draw(number), draw(number)]) if nice else (draw(number), draw(number))
        if not nice and draw(st.booleans()):
            a, b = min(a, b), max(a, b)
        kinds = ["le", "ge", "eq", "range", "default", "free"] + (["mi_up", "upper_below_zero"] if free_ok else [])
        kind = draw(st.sampled_from(kinds))
        if kind == "range" and a == b:
            kind = "eq"
        return {"le": (-INF, b), "ge": (a, INF), "eq": (a, a), "range": (min(a, b), max(a, b)),
                "free": (-INF, INF), "default": (0.0, INF), "mi_up": (-INF, b),
                "upper_below_zero": (0.0, -abs(b) - 1)}[kind]

    rows = [pair(False) for _ in range(m)]
    columns = [pair(not nice) for _ in range(n)]
    sf = form(c, A, [r[0] for r in rows], [r[1] for r in rows], [b[0] for b in columns], [b[1] for b in columns])
    maximise = draw(st.booleans())
    constant = draw(st.one_of(st.just(0.0), number))
    return MPSModel(name="RANDOM", form=sf, row_names=tuple(f"R{i}" for i in range(m)),
                    column_names=tuple(f"C{j}" for j in range(n)), objective_name="OBJ",
                    objective_constant=constant, maximise=maximise)


def without_free_rows(sf: StandardForm) -> StandardForm:
    """The form with rows that have no finite bound dropped (MPS cannot keep them)."""
    keep = np.isfinite(sf.row_lower) | np.isfinite(sf.row_upper)
    return form(sf.c, sf.A[keep], sf.row_lower[keep], sf.row_upper[keep], sf.col_lower, sf.col_upper)


def assert_same_row_bounds(got: StandardForm, want: StandardForm):
    """Row bounds are equal, but for a ranged row's far bound when no float range gives it.

    MPS keeps a ranged row as one bound and a width; for bounds far apart in magnitude no
    float width may reproduce both, and the far one is then off by about an ulp.
    """
    for i, (lo, up, got_lo, got_up) in enumerate(zip(want.row_lower, want.row_upper, got.row_lower, got.row_upper)):
        if (got_lo, got_up) == (lo, up):
            continue
        assert np.isfinite(lo) and np.isfinite(up) and (got_lo == lo or got_up == up), (i, lo, up, got_lo, got_up)
        slack = 2 * np.spacing(max(abs(lo), abs(up)))
        assert abs(got_lo - lo) <= slack and abs(got_up - up) <= slack, (i, lo, up, got_lo, got_up)


def within_highs_defaults(model: MPSModel) -> bool:
    """True when HiGHS reads the numbers as written: it drops matrix entries of 1e-9 or
    less, refuses entries of 1e15 or more and reads bounds of 1e20 or more as infinite
    (its default options)."""
    sf = model.form
    values = np.concatenate([sf.c, sf.A.ravel(), sf.row_lower, sf.row_upper, sf.col_lower, sf.col_upper,
                             [model.objective_constant]])
    values = np.abs(values[np.isfinite(values) & (values != 0)])
    return bool(np.all((values > 1e-9) & (values < 1e20))) and bool(np.all(np.abs(sf.A) < 1e15))


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(model=forms(nice=False), free=st.booleans(), as_form=st.booleans())
def test_round_trip_is_exact(tmp_path, model, free, as_form):
    path = tmp_path / "round.mps"
    if as_form:
        write(path, model.form, objective_constant=model.objective_constant, free=free)
        model = MPSModel("BLEND", model.form, (), (), "", model.objective_constant, False)
    else:
        write(path, model, free=free)
    again = read(path)
    want = without_free_rows(model.form)
    assert_same_form(replace(again.form, row_lower=want.row_lower, row_upper=want.row_upper), want)
    assert_same_row_bounds(again.form, want)
    assert again.objective_constant == model.objective_constant
    assert again.maximise == model.maximise
    if not within_highs_defaults(model):
        return
    # HiGHS (an independent reader) reads the same arrays, in the file's own sense.
    ref = highs_read(path)
    sign = -1 if model.maximise else 1
    np.testing.assert_array_equal(sign * ref.c, again.form.c)
    for key in FORM_ARRAYS[1:]:
        np.testing.assert_array_equal(getattr(ref, key), getattr(again.form, key), err_msg=key)
    assert ref.offset == model.objective_constant and ref.maximise == model.maximise


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(model=forms(nice=True))
def test_highs_solves_our_files_to_our_optimum(tmp_path, model):
    path = tmp_path / "solve.mps"
    write(path, model)
    ours = solve_form(read(path).form)
    # HiGHS solving the file we wrote is the outside reference.
    status, objective = highs_optimum(path)
    if status == "infeasible_or_unbounded":
        assert ours.status in ("infeasible", "unbounded")
        return
    assert ours.status == status, ours.message
    if status == "optimal":
        assert model.objective(ours.x) == pytest.approx(objective, rel=1e-9, abs=1e-9)


def test_export_mps_of_a_workbook_with_a_soft_spec(tmp_path):
    # A soft spec adds an elastic column per side; the file names it and HiGHS, reading
    # the file, finds our optimum, penalty included (reference: HiGHS via highspy).
    from blendkit.lp.build import build_lp
    from blendkit.read import read_workbook
    from blendkit.write.mps import export_mps
    from tests.workbooks import INGREDIENTS, make_workbook

    path = make_workbook(tmp_path, INGREDIENTS, [["Nutrient", "Min", "Max", "Penalty"], ["Crude protein", 16.5, None, 5]])
    blend = read_workbook(path)
    export_mps(blend, tmp_path / "soft.mps")
    status, optimum = highs_optimum(tmp_path / "soft.mps")
    assert status == "optimal"
    assert optimum == pytest.approx(solve_form(build_lp(blend).form).objective, rel=1e-9)  # cost + penalty
    assert any(name.startswith("min_short") for name in highs_read(tmp_path / "soft.mps").column_names)

"""A catalogue of hostile and careless inputs, kept as regression tests.

Each case ends in a documented exit code and a message (with the sheet and cell where a
cell is at fault), never a traceback; the input stays byte-for-byte unchanged; a failed
run leaves no output and no temporary file behind. The cases come from trying blendkit
as a careful tester would: paths that name the input under another spelling or link,
interrupts, huge or far-away cells, numbers a person can type, corrupted files.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from typer.testing import CliRunner

from blendkit.cli import app
from tests.workbooks import INGREDIENTS, SPECS, make_workbook

ROOT = Path(__file__).resolve().parents[1]
runner = CliRunner()


def run(*args):
    """Invoke the CLI in-process; returns the click Result (stdout and stderr separate)."""
    return runner.invoke(app, [str(a) for a in args])


@pytest.fixture
def book(tmp_path):
    """A small valid workbook in its own folder."""
    return make_workbook(tmp_path, INGREDIENTS, SPECS, name="f.xlsx")


def leftovers(folder: Path, keep: set[str]) -> set[str]:
    """Files in `folder` other than `keep` (temporary files start with a dot)."""
    return {p.name for p in folder.iterdir()} - keep


# --- 1. the input is never overwritten, whatever the paths -------------------------------


@pytest.mark.parametrize("spelling", ["hard link", "symlink", "dot slash"])
def test_export_mps_onto_the_input_is_refused(book, spelling, monkeypatch):
    monkeypatch.chdir(book.parent)
    before = book.read_bytes()
    if spelling == "hard link":
        os.link(book, book.parent / "h.mps")
        target = "h.mps"
    elif spelling == "symlink":
        os.symlink(book, book.parent / "s.mps")
        target = "s.mps"
    else:
        target = "./f.xlsx"
    result = run("solve", "f.xlsx", "-o", "out.xlsx", "--export-mps", target)
    assert result.exit_code == 2, result.output
    assert "would overwrite the input workbook" in result.stderr
    assert book.read_bytes() == before
    assert not (book.parent / "out.xlsx").exists()  # refused before anything was written


@pytest.mark.parametrize("spelling", ["hard link", "symlink"])
def test_output_onto_a_link_of_the_input_is_refused_with_json(book, spelling):
    before = book.read_bytes()
    link = book.parent / "link.xlsx"
    (os.link if spelling == "hard link" else os.symlink)(book, link)
    result = run("solve", book, "-o", link, "--json")
    assert result.exit_code == 2, result.output
    doc = json.loads(result.stdout)
    assert doc["status"] == "output_error"
    assert "would overwrite the input workbook" in doc["message"]
    assert book.read_bytes() == before


def test_export_mps_and_output_naming_one_file_is_refused(book):
    out = book.parent / "out.xlsx"
    result = run("solve", book, "-o", out, "--export-mps", out)
    assert result.exit_code == 2
    assert "the MPS file and the output workbook are the same file" in result.stderr
    assert not out.exists()


def test_export_mps_into_a_missing_folder_is_refused_before_writing(book):
    out = book.parent / "out.xlsx"
    result = run("solve", book, "-o", out, "--export-mps", book.parent / "nowhere" / "x.mps")
    assert result.exit_code == 2
    assert "does not exist" in result.stderr
    assert not out.exists()
    assert leftovers(book.parent, {"f.xlsx"}) == set()


# --- 6. interrupts -----------------------------------------------------------------------

# Runs blendkit's real entry point in a child process, with one step patched to send the
# process a real signal at the worst moment.
_CHILD = """
import os, signal, sys
sys.argv = ["blendkit", *sys.argv[2:]]
when = sys.argv and os.environ["BLENDKIT_TEST_SIGNAL_AT"]
number = getattr(signal, os.environ["BLENDKIT_TEST_SIGNAL"])
if when == "import":
    import importlib.abc
    class Hook(importlib.abc.MetaPathFinder):
        def find_spec(self, name, path=None, target=None):
            if name == "blendkit.pipeline":
                os.kill(os.getpid(), number)
            return None
    sys.meta_path.insert(0, Hook())
else:
    import blendkit.write.workbook.save as book
    original = os.replace
    def replace_after_signal(src, dst):
        os.kill(os.getpid(), number)  # the temporary file is complete, not yet moved
        return original(src, dst)
    book.os = type(os)("os_with_signal")
    book.os.__dict__.update(os.__dict__)
    book.os.replace = replace_after_signal
from blendkit.start import main
main()
"""


def _signalled(book: Path, when: str, name: str) -> subprocess.CompletedProcess:
    """Solve `book` in a child process that gets signal `name` at `when`."""
    env = dict(os.environ, BLENDKIT_TEST_SIGNAL_AT=when, BLENDKIT_TEST_SIGNAL=name)
    return subprocess.run(
        [sys.executable, "-c", _CHILD, "--", "solve", str(book), "-o", str(book.parent / "out.xlsx")],
        capture_output=True, text=True, env=env, cwd=ROOT, timeout=120,
    )


@pytest.mark.parametrize("name, code, word", [("SIGTERM", 143, "terminated"), ("SIGINT", 130, "interrupted")])
def test_signal_during_the_final_write_leaves_nothing_behind(book, name, code, word):
    before = book.read_bytes()
    done = _signalled(book, "write", name)
    assert done.returncode == code, done.stderr
    assert done.stderr.strip().endswith(word)
    assert "Traceback" not in done.stderr
    assert leftovers(book.parent, {"f.xlsx"}) == set()  # no output, no hidden .tmp file
    assert book.read_bytes() == before


@pytest.mark.parametrize("name, code, word", [("SIGINT", 130, "interrupted"), ("SIGTERM", 143, "terminated")])
def test_signal_during_start_up_prints_a_word_not_a_traceback(book, name, code, word):
    done = _signalled(book, "import", name)
    assert done.returncode == code, done.stderr
    assert done.stderr.strip() == word
    assert leftovers(book.parent, {"f.xlsx"}) == set()


# --- 4. numbers a user can type do not break the engine ------------------------------------

BROILER = ROOT / "sample_workbooks" / "broiler_starter.xlsx"


def _broiler_with(tmp_path: Path, cell: str, value) -> Path:
    """A copy of the broiler sample with one Ingredients cell changed."""
    import openpyxl

    book = openpyxl.load_workbook(BROILER)
    book["Ingredients"][cell] = value
    path = tmp_path / "broiler.xlsx"
    book.save(path)
    return path


@pytest.mark.parametrize("tiny", [1e-20, 1e-100, 1e-300])
def test_a_tiny_content_is_treated_as_zero_and_named(tmp_path, tiny):
    # Outside check: HiGHS (scipy) on the same workbook with that cell blank, i.e. 0.
    from tests.test_examples import solve_with_highs

    path = _broiler_with(tmp_path, "G3", tiny)  # Wheat's crude protein
    result = run("solve", path, "-o", tmp_path / "out.xlsx", "--json")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert any(note.startswith("Ingredients!G3: ") and "treated as 0" in note for note in doc["notes"])
    reference, *_ = solve_with_highs(_broiler_with(tmp_path, "G3", None))
    assert doc["cost"] == pytest.approx(reference.fun, rel=1e-9)


# --- 5. meaningless specs, and an unbounded diet -------------------------------------------


def test_an_unbounded_diet_names_the_food_and_its_cells(tmp_path):
    # A food with a negative price and no Max: HiGHS (scipy) agrees the LP is unbounded.
    from scipy.optimize import linprog

    path = make_workbook(
        tmp_path,
        [["Ingredient", "Cost", "Max", "Protein (g)"], ["Bread", 0.3, None, 8], ["Coupon", -0.5, None, 0],
         ["Milk", 0.2, 5, 3]],
        [["Nutrient", "Min", "Max"], ["Protein", 50, None]],
        [["Setting", "Value"], ["Mode", "diet"]],
    )
    reference = linprog([0.3, -0.5, 0.2], A_ub=[[-8, 0, -3]], b_ub=[-50], bounds=[(0, None), (0, None), (0, 5)])
    assert reference.status == 3  # unbounded
    result = run("solve", path, "-o", tmp_path / "out.xlsx")
    assert result.exit_code == 3
    assert ("the cost can fall without limit: more of Coupon always lowers the cost "
            "(cost -0.5 in Ingredients!B3, no Max in Ingredients!C3)") in result.stdout
    assert "Bread" not in result.stdout.split("Message:")[1].splitlines()[0]


# --- 2. what was solved is what was read ---------------------------------------------------


def test_input_replaced_during_the_solve_does_not_reach_the_output(book, tmp_path, monkeypatch):
    import hashlib

    import openpyxl

    import blendkit.pipeline as pipeline

    original = book.read_bytes()
    (tmp_path / "other").mkdir()
    other = make_workbook(tmp_path / "other", INGREDIENTS, SPECS, name="other.xlsx")
    edited = openpyxl.load_workbook(other)
    edited["Ingredients"]["A2"] = "Replaced maize"
    edited.save(other)
    formulate = pipeline.formulate

    def formulate_while_the_file_changes(blend, **options):
        book.write_bytes(other.read_bytes())  # another program saves over the input
        return formulate(blend, **options)

    monkeypatch.setattr(pipeline, "formulate", formulate_while_the_file_changes)
    out = tmp_path / "out.xlsx"
    result = run("solve", book, "-o", out)
    assert result.exit_code == 0, result.output
    written = openpyxl.load_workbook(out)
    assert written["Ingredients"]["A2"].value == "Maize"  # the copy is of what was solved
    info = {row[0]: row[1] for row in written["Run info"].iter_rows(values_only=True) if row and row[0]}
    assert info["Input SHA-256"] == hashlib.sha256(original).hexdigest()


# --- 8. solving an output again -------------------------------------------------------------


def test_solving_an_output_again_needs_in_place_and_keeps_a_backup(book, tmp_path):
    import openpyxl

    output = book.with_name("f.result.xlsx")
    assert run("solve", book).exit_code == 0
    before = output.read_bytes()
    refused = run("solve", output)
    assert refused.exit_code == 2
    assert "add --in-place to replace it (the previous file is kept as f.result.backup.xlsx)" in refused.stderr
    assert output.read_bytes() == before
    again = run("solve", output, "--in-place")
    assert again.exit_code == 0, again.output
    assert output.with_name("f.result.backup.xlsx").read_bytes() == before
    names = openpyxl.load_workbook(output).sheetnames
    assert names.count("Result") == 1 and names.count("Run info") == 1
    assert run("solve", output, "--in-place", "-o", tmp_path / "x.xlsx").exit_code == 2


# --- 1. resources are bounded --------------------------------------------------------------


def _with_far_cell(tmp_path: Path, name: str) -> Path:
    """A copy of the broiler sample with one formatted, empty cell at A1048576 (the last row
    a sheet can have) in Ingredients: the used range then spans a million rows."""
    import openpyxl
    from openpyxl.styles import Font

    book = openpyxl.load_workbook(BROILER)
    book["Ingredients"]["A1048576"].font = Font(bold=True)
    path = tmp_path / name
    book.save(path)
    return path


def _check_in_child(path: Path, *options) -> subprocess.CompletedProcess:
    """`blendkit check` in a child process, so a hang ends the test instead of the suite."""
    return subprocess.run(
        [sys.executable, "-m", "blendkit", "check", str(path), *options],
        capture_output=True, text=True, cwd=ROOT, timeout=30,
    )


def test_a_formatted_cell_in_the_last_row_costs_nothing(tmp_path):
    # Before the reader read only stored cells, this took over 70 s and 4 GB (the reader
    # walked every position of the used range). The timeout is generous on purpose: the
    # time is printed, never asserted.
    import time

    far = _with_far_cell(tmp_path, "far.xlsx")
    plain = tmp_path / "plain.xlsx"
    plain.write_bytes(BROILER.read_bytes())
    started = time.perf_counter()
    done = _check_in_child(far)
    print(f"check with a cell at A1048576: {time.perf_counter() - started:.2f} s")
    assert done.returncode == 0, done.stderr
    same = _check_in_child(plain)
    assert done.stdout.replace("far.xlsx", "plain.xlsx") == same.stdout


def test_a_formatted_cell_far_away_on_another_sheet_does_not_slow_the_solve(tmp_path):
    # The writer copies every sheet; it too must read only the cells a sheet stores (before,
    # one cell at XFD1048576 on another sheet ran out of memory). Printed, never asserted.
    import time

    import openpyxl
    from openpyxl.styles import Font

    book = openpyxl.load_workbook(BROILER)
    book.create_sheet("Price history")["XFD1048576"].font = Font(italic=True)
    path = tmp_path / "far.xlsx"
    book.save(path)
    started = time.perf_counter()
    done = subprocess.run(
        [sys.executable, "-m", "blendkit", "solve", str(path), "--json"],
        capture_output=True, text=True, cwd=ROOT, timeout=60,
    )
    print(f"solve with a cell at XFD1048576 on another sheet: {time.perf_counter() - started:.2f} s")
    assert done.returncode == 0, done.stderr
    assert openpyxl.load_workbook(tmp_path / "far.result.xlsx")["Price history"]["XFD1048576"].font.i


def _big_ingredients(tmp_path: Path, rows: int) -> Path:
    """A valid workbook whose Ingredients sheet has `rows` ingredients."""
    ingredients = [INGREDIENTS[0]] + [
        [f"Feed {k}", 200 + k % 50, None, None, "yes", 10 + k % 7, 12.0, 1.0] for k in range(rows)
    ]
    return make_workbook(tmp_path, ingredients, SPECS, name="big.xlsx")


def test_too_many_cells_are_refused_with_the_sheet_named(tmp_path):
    path = _big_ingredients(tmp_path, 300)
    before = path.read_bytes()
    checked = run("check", path, "--max-cells", 1000)
    assert checked.exit_code == 1, checked.output
    # 8 headers, 300 rows x 6 filled cells, and 301 row elements
    assert "Ingredients: the sheet holds 2,109 cells" in checked.stderr
    assert "more than the limit of 1,000; " in checked.stderr and "--max-cells" in checked.stderr
    solved = run("solve", path, "--json", "--max-cells", 1000)
    assert solved.exit_code == 1
    problem = json.loads(solved.stdout)["problems"][0]
    assert problem["where"] == "Ingredients" and "--max-cells" in problem["message"]
    assert run("check", path, "--max-cells", 3000).exit_code == 0  # the limit can be raised
    assert path.read_bytes() == before
    assert leftovers(tmp_path, {"big.xlsx"}) == set()


def test_a_workbook_that_unpacks_too_large_is_refused_with_the_sheet_named(tmp_path):
    path = _big_ingredients(tmp_path, 2000)  # its Ingredients part unpacks to about 0.2 MB
    checked = run("check", path, "--max-unpacked-mb", 0.1)
    assert checked.exit_code == 1, checked.output
    assert checked.stderr.splitlines()[1].startswith("  Ingredients: the workbook unpacks to 0.")
    assert "more than the limit of 0.1 MB" in checked.stderr and "--max-unpacked-mb" in checked.stderr
    solved = run("solve", path, "--json", "--max-unpacked-mb", 0.1)
    assert solved.exit_code == 1
    assert json.loads(solved.stdout)["problems"][0]["where"] == "Ingredients"
    assert leftovers(tmp_path, {"big.xlsx"}) == set()


def _rewrite_part(path: Path, part: str, change) -> None:
    """Rewrite one part of the zip package at `path` with `change(text) -> text`."""
    import zipfile

    with zipfile.ZipFile(path) as archive:
        members = {info.filename: archive.read(info) for info in archive.infolist()}
    members[part] = change(members[part].decode("utf-8")).encode("utf-8")
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        for member, data in members.items():
            archive.writestr(member, data)


def test_a_merged_range_over_the_whole_sheet_is_refused_before_it_is_loaded(tmp_path):
    # openpyxl makes one object per merged cell: a merge over 17 billion cells would never end.
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, name="merged.xlsx")
    _rewrite_part(path, "xl/worksheets/sheet1.xml", lambda xml: xml.replace(
        "</sheetData>", '</sheetData><mergeCells count="1"><mergeCell ref="A20:XFD1048576"/></mergeCells>'
    ))
    done = _check_in_child(path)
    assert done.returncode == 1, done.stderr
    assert "Ingredients: the sheet holds 17,179,5" in done.stderr


# --- 2. numbers beyond a named size ----------------------------------------------------------


@pytest.mark.parametrize("huge", [1e50, 1e300, -1e13])
def test_a_huge_content_is_refused_with_its_cell(tmp_path, huge):
    path = _broiler_with(tmp_path, "G3", huge)  # Wheat's crude protein
    checked = run("check", path)
    assert checked.exit_code == 1, checked.output
    assert f"Ingredients!G3: Crude protein {huge:g} is too large: numbers must lie between -1e+12 and 1e+12" in checked.stderr
    solved = run("solve", path, "--json")  # solve refuses what check reports
    assert solved.exit_code == 1
    assert json.loads(solved.stdout)["problems"][0]["where"] == "Ingredients!G3"
    assert leftovers(tmp_path, {"broiler.xlsx"}) == set()


def test_large_but_real_numbers_are_read(tmp_path):
    # Vitamin premixes list vitamin A at about 1e9 IU/kg (common practice).
    from blendkit.read.values import LARGEST_NUMBER

    assert LARGEST_NUMBER == 1e12
    path = _broiler_with(tmp_path, "G3", 1e9)
    assert run("check", path).exit_code == 0


_WITH_PHOSPHORUS = [
    [*INGREDIENTS[0], "Phosphorus (%)", "Dry matter (%)"],
    *[[*row, None, 88] for row in INGREDIENTS[1:]],
]


def _specs_with(row: list) -> list[list]:
    """The SPECS sheet with Basis and one more row."""
    return [[*SPECS[0], "Basis"], *SPECS[1:], row]


@pytest.mark.parametrize("phosphorus", [None, 0])
def test_a_ratio_dividing_by_a_nutrient_no_ingredient_has_is_refused(tmp_path, phosphorus):
    ingredients = [row[:] for row in _WITH_PHOSPHORUS]
    for row in ingredients[1:]:
        row[-2] = phosphorus
    path = make_workbook(tmp_path, ingredients, _specs_with(["Calcium / Phosphorus", 1.5, None, None]))
    for args in (("check", path), ("solve", path, "--json")):
        result = run(*args)
        assert result.exit_code == 1, result.output
    assert ('Specs!A5: the ratio "Calcium / Phosphorus" divides by "Phosphorus", which is 0 or blank '
            "in every ingredient that may be used (Use is not no)") in run("check", path).stderr


def test_a_ratio_whose_divisor_only_an_unused_ingredient_has_is_refused(tmp_path):
    ingredients = [row[:] for row in _WITH_PHOSPHORUS]
    ingredients[3][-2], ingredients[3][4] = 1.1, "no"  # only Wheat bran has phosphorus, and Use = no
    path = make_workbook(tmp_path, ingredients, _specs_with(["Calcium / Phosphorus", 1.5, None, None]))
    assert "Specs!A5: the ratio" in run("check", path).stderr
    ingredients[3][4] = "yes"
    path = make_workbook(tmp_path, ingredients, _specs_with(["Calcium / Phosphorus", 1.5, None, None]))
    assert run("check", path).exit_code == 0


def test_a_dry_matter_spec_without_dry_matter_is_refused(tmp_path):
    ingredients = [[*row[:-1], 0] if k else row for k, row in enumerate(_WITH_PHOSPHORUS)]
    path = make_workbook(tmp_path, ingredients, _specs_with(["Crude protein", 18, None, "dry matter"]))
    checked = run("check", path)
    assert checked.exit_code == 1
    assert ('Specs!D5: a dry-matter spec divides by the blend\'s dry matter, and "Dry matter" is 0 '
            "or blank in every ingredient that may be used") in checked.stderr
    solved = run("solve", path, "--json")
    assert solved.exit_code == 1
    assert json.loads(solved.stdout)["problems"][0]["where"] == "Specs!D5"


def _refuse_constant(name: str):
    """json.loads hook: NaN or Infinity in the output is not JSON."""
    raise ValueError(f"{name} in the JSON output")


@pytest.mark.parametrize("rules", [False, True])
def test_a_way_out_that_leaves_a_dry_matter_spec_without_dry_matter_is_not_offered(tmp_path, rules):
    # Found by the random workbooks of test_no_traceback: the only ingredient has Use = no
    # and dry matter 0, the spec is on dry matter. The way out (use it) leads to a blend
    # with no dry matter, where the spec has no value (a dry-matter level divides by the
    # blend's dry matter: common practice), so no new bound can be stated. Before, the
    # relaxed blend carried a NaN bound and, with weighing rules, ended in a traceback.
    # Reference: with Use = no nothing may go in, so no blend sums to 100 % (HiGHS, as the
    # cross-check in the JSON, agrees: infeasible).
    extra = ["Min if used", "Scale step"] if rules else []
    ingredients = [["Ingredient", "Cost", "Use", "Protein (%)", "Dry matter (%)", *extra],
                   ["Feed 0", 0.0, "no", 1.0, 0.0, *([0.5, 0.5] if rules else [])]]
    specs = [["Nutrient", "Min", "Max", "Basis"], ["Protein", None, 0.0, "dry matter"]]
    path = make_workbook(tmp_path, ingredients, specs, [["Setting", "Value"], ["Time limit", 0.5]])
    solved = run("solve", path, "--json")
    assert solved.exit_code == 3, solved.output
    doc = json.loads(solved.stdout, parse_constant=_refuse_constant)
    assert doc["status"] == "infeasible"
    assert doc["cross_check"]["status"] == "infeasible"
    assert doc["relaxation"] is None


# --- 4. nothing dropped silently --------------------------------------------------------------


def _sheet_texts(path: Path, title: str) -> list[str]:
    """Every text cell of one sheet of the workbook at `path`."""
    import openpyxl

    sheet = openpyxl.load_workbook(path)[title]
    return [cell.value for row in sheet.iter_rows() for cell in row if isinstance(cell.value, str)]


def test_the_output_sheet_titles_are_the_writers(tmp_path):
    from blendkit.model.blend import OUTPUT_SHEET_TITLES
    from blendkit.write.workbook.book import OUTPUT_SHEETS

    assert set(OUTPUT_SHEET_TITLES) == set(OUTPUT_SHEETS)


def test_a_users_own_result_sheet_is_kept_renamed_with_a_note(tmp_path):
    import openpyxl

    path = make_workbook(tmp_path, INGREDIENTS, SPECS, sheets={"Result": [["my own notes", 42]]}, name="f.xlsx")
    before = path.read_bytes()
    note = ('the sheet "Result" was not written by blendkit, whose output has a sheet of that name: '
            'the output workbook keeps it as "Result (input)"')
    checked = run("check", path)
    assert checked.exit_code == 0 and f"  {note}" in checked.stdout
    out = tmp_path / "out.xlsx"
    solved = run("solve", path, "-o", out, "--json")
    assert solved.exit_code == 0, solved.output
    assert note in json.loads(solved.stdout)["notes"]
    assert note in run("solve", path, "-o", tmp_path / "again.xlsx").stdout  # the console too
    written = openpyxl.load_workbook(out)
    assert written["Result (input)"]["A1"].value == "my own notes"
    assert written["Result (input)"]["B1"].value == 42
    assert note in _sheet_texts(out, "Result")
    assert path.read_bytes() == before
    # Solved again, the output's own sheets are replaced and the user's kept sheet stays as it is.
    again = run("solve", out, "--in-place", "--json")
    assert again.exit_code == 0, again.output
    assert not any("was not written by blendkit" in n for n in json.loads(again.stdout)["notes"])
    names = openpyxl.load_workbook(out).sheetnames
    assert names.count("Result") == 1 and names.count("Result (input)") == 1
    assert not any("(input 2)" in name for name in names)


def test_every_output_sheet_name_of_the_users_is_kept(tmp_path):
    import openpyxl

    sheets = {title: [[f"mine: {title}"]] for title in ("RESULT", "Shadow prices", "Run info", "conflicts",
                                                        "Run info (input)")}
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, sheets=sheets, name="f.xlsx")
    out = tmp_path / "out.xlsx"
    assert run("solve", path, "-o", out).exit_code == 0
    written = openpyxl.load_workbook(out)
    kept = {"RESULT (input)": "RESULT", "Shadow prices (input)": "Shadow prices",
            "Run info (input 2)": "Run info", "conflicts (input)": "conflicts",
            "Run info (input)": "Run info (input)"}
    for title, was in kept.items():
        assert written[title]["A1"].value == f"mine: {was}"
    assert {"Result", "Shadow prices", "Run info"} <= set(written.sheetnames)
    assert "Conflicts" not in written.sheetnames  # feasible: blendkit writes no Conflicts sheet
    written_titles = json.loads(written.custom_doc_props["blendkit output sheets"].value)
    assert {"Result", "Shadow prices", "Run info"} <= set(written_titles)
    assert not any("(input" in title for title in written_titles)


def test_a_kept_title_fits_in_31_characters():
    from blendkit.model.blend import kept_sheet_titles

    assert kept_sheet_titles(["Shadow prices", "Shadow prices (input)"], frozenset()) == {
        "Shadow prices": "Shadow prices (input 2)"
    }
    assert kept_sheet_titles(["Result"], frozenset({"result"})) == {"Result": None}
    assert all(len(t) <= 31 for t in kept_sheet_titles(["Run info"], frozenset()).values())


def _edited(path: Path, change) -> Path:
    """The workbook at `path` after `change(workbook)`, saved in place (a fixture, not an input
    under test)."""
    import openpyxl

    book = openpyxl.load_workbook(path)
    change(book)
    book.save(path)
    return path


def test_numbers_under_a_blank_header_in_ingredients_are_a_problem(tmp_path):
    ingredients = [row + [None, None] for row in INGREDIENTS]
    ingredients[2][9] = 0.4  # column J: numbers with no header, after a blank column I
    ingredients[4][9] = 0.1
    path = make_workbook(tmp_path, ingredients, SPECS)
    checked = run("check", path)
    assert checked.exit_code == 1
    assert ("Ingredients!J1: column J has no header, but holds numbers (Ingredients!J3 and 1 more below), "
            'which are not read; type the nutrient\'s name and unit in J1, as in "Crude protein (%)", '
            "or clear the column") in checked.stderr
    assert run("solve", path, "--json").exit_code == 1


def test_numbers_under_a_merged_header_are_a_problem(tmp_path):
    ingredients = [row + [None] for row in INGREDIENTS]
    ingredients[0][7:9] = ["Minerals (%)", None]
    for row in ingredients[1:]:
        row[7:9] = [0.3, 0.2]
    path = _edited(make_workbook(tmp_path, ingredients, SPECS), lambda b: b["Ingredients"].merge_cells("H1:I1"))
    checked = run("check", path)
    assert checked.exit_code == 1
    assert ("Ingredients!I1: I1 is covered by the merged cells H1:I1, so column I has no header of its "
            "own, but holds numbers (Ingredients!I2 and 3 more below), which are not read; unmerge the "
            "header cells and give each column its own header, or clear the column") in checked.stderr


def test_merged_content_cells_are_a_problem(tmp_path):
    path = _edited(make_workbook(tmp_path, INGREDIENTS, SPECS), lambda b: b["Ingredients"].merge_cells("H2:H3"))
    checked = run("check", path)
    assert checked.exit_code == 1
    assert ("Ingredients!H2: the cells H2:H3 are merged, so only H2 holds a value and the others read as "
            "blank (a content as 0); unmerge them and type the value in each row") in checked.stderr


def test_text_under_a_blank_header_and_notes_on_other_sheets_are_noted(tmp_path):
    ingredients = [row + [None, None] for row in INGREDIENTS]
    ingredients[3][9] = "bought in March"
    specs = [row + [None] for row in SPECS]
    specs[2][3] = "from the feed table"
    path = _edited(make_workbook(tmp_path, ingredients, specs), lambda b: b["Specs"].merge_cells("D3:D4"))
    notes = [
        "Ingredients: column J has no header, so its cell is not read (Ingredients!J4)",
        "Specs: column D has no header, so its cell is not read (Specs!D3)",
    ]
    checked = run("check", path)
    assert checked.exit_code == 0, checked.output
    for note in notes:
        assert f"  {note}\n" in checked.stdout
    assert "D3:D4 are merged" not in checked.stdout  # a merge under no header blanks nothing read
    solved = run("solve", path, "-o", tmp_path / "out.xlsx", "--json")
    assert set(notes) <= set(json.loads(solved.stdout)["notes"])


def test_hidden_rows_columns_and_sheets_are_read_and_noted(tmp_path):
    def hide(book):
        sheet = book["Ingredients"]
        for row in (3, 4):
            sheet.row_dimensions[row].hidden = True
        sheet.column_dimensions["F"].hidden = True
        book["Specs"].sheet_state = "hidden"

    path = _edited(make_workbook(tmp_path, INGREDIENTS, SPECS), hide)
    solved = run("solve", path, "-o", tmp_path / "out.xlsx", "--json")
    assert solved.exit_code == 0, solved.output
    doc = json.loads(solved.stdout)
    assert doc["ingredients"]["Soybean meal"] > 0  # row 3, hidden, is read
    assert {
        "Ingredients: rows 3–4 are hidden; blendkit reads them like the others",
        "Ingredients: column F is hidden; blendkit reads it like the others",
        'the sheet "Specs" is hidden; blendkit reads it like the others',
    } <= set(doc["notes"])


# --- 5. corrupted files -------------------------------------------------------------------------

SAMPLES = sorted((ROOT / "sample_workbooks").glob("*.xlsx"))


def _rules_book() -> bytes:
    """The broiler sample with every cell of today's features filled: Min if used, Pack size
    and Scale step on Ingredients, Margin and Step on Specs, Max ingredients, Hand-add below
    and Time limit on Settings, Products with Max ingredients, Limits with Min if used and
    Pack size (its Combined sheet is the sample's). It solves; corrupted, it must not crash."""
    import io

    import openpyxl

    book = openpyxl.load_workbook(ROOT / "sample_workbooks" / "broiler_starter.xlsx")
    sheet = book["Ingredients"]
    base = sheet.max_column
    for offset, header in enumerate(("Min if used", "Pack size (kg)", "Scale step (kg)"), start=1):
        sheet.cell(1, base + offset, header)
    rules = {"Wheat": (5, None, None), "Soybean oil": (1, 25, None), "Salt": (None, None, 0.5),
             "Vitamin-mineral premix": (None, None, 0.1)}
    for row in range(2, sheet.max_row + 1):
        for offset, value in enumerate(rules.get(sheet.cell(row, 1).value, (None,) * 3), start=1):
            sheet.cell(row, base + offset).value = value
    specs = book["Specs"]
    for header, row, value in (("Margin", 2, 0.05), ("Step", 3, 0.5)):
        column = specs.max_column + 1
        specs.cell(1, column, header)
        specs.cell(row, column, value)
    for name, value in (("Max ingredients", 16), ("Hand-add below", 20), ("Time limit", 5)):
        book["Settings"].append([name, value])
    for title, rows in (("Products", [["Product", "Max ingredients"], ["Starter", 15], ["Pre-starter", None]]),
                        ("Limits", [["Product", "Ingredient", "Min", "Max", "Min if used", "Pack size"],
                                    ["Starter", "Wheat middlings", None, 5, 2, None],
                                    ["Pre-starter", "Soybean oil", None, None, None, 20]])):
        added = book.create_sheet(title)
        for row in rows:
            added.append(row)
    out = io.BytesIO()
    book.save(out)
    return out.getvalue()


# What the corruption tests start from: every sample, and the sample with today's features.
SOURCES = [path.read_bytes() for path in SAMPLES] + [_rules_book()]


def test_the_rules_book_solves_before_it_is_corrupted(tmp_path):
    path = tmp_path / "rules.xlsx"
    path.write_bytes(SOURCES[-1])
    solved = run("solve", path, "--json")
    doc = json.loads(solved.stdout)
    assert solved.exit_code == 0 and set(doc["products"]) == {"Starter", "Pre-starter"}
    assert all(product["practical"]["status"] == "optimal" for product in doc["products"].values())

# Junk to put in place of a part of the package: not XML, broken XML, XML of the wrong kind,
# an entity bomb (refused by defusedxml), a cell far away, an empty part.
_JUNK_PARTS = [
    b"\x00\xff junk \x89PNG",
    b'<?xml version="1.0"?><worksheet><sheetData><row r="1"><c r="A1"',
    b'<?xml version="1.0"?><html><body>not a sheet</body></html>',
    b'<?xml version="1.0"?><!DOCTYPE x [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;">]><x>&b;</x>',
    b'<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>'
    b'<row r="1048576"><c r="XFD1048576" t="n"><v>1e400</v></c></row></sheetData></worksheet>',
    b"",
]


def _corrupt_member(data: bytes, draw) -> bytes:
    """The package with one part replaced by junk, cut short, or with a few bytes changed."""
    import io
    import zipfile

    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        members = [(info.filename, archive.read(info)) for info in archive.infolist()]
    index = draw(st.integers(0, len(members) - 1))
    name, content = members[index]
    how = draw(st.sampled_from(["junk", "cut", "flip"]))
    if how == "junk":
        content = draw(st.sampled_from(_JUNK_PARTS))
    elif how == "cut" or not content:
        content = content[: draw(st.integers(0, len(content)))]
    else:  # a few bytes of the XML itself changed: a valid archive of damaged parts
        content = bytearray(content)
        for _ in range(draw(st.integers(1, 4))):
            content[draw(st.integers(0, len(content) - 1))] = draw(st.sampled_from(b'<>"/=x9 .-\x00'))
        content = bytes(content)
    members[index] = (name, content)
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        for member, body in members:
            archive.writestr(member, body)
    return out.getvalue()


def _corrupt_bytes(data: bytes, draw) -> bytes:
    """The file with bytes flipped, cut off or inserted."""
    data = bytearray(data)
    kind = draw(st.sampled_from(["flip", "truncate", "insert"]))
    if kind == "truncate":
        return bytes(data[: draw(st.integers(0, len(data) - 1))])
    if kind == "insert":
        at = draw(st.integers(0, len(data)))
        return bytes(data[:at] + draw(st.binary(min_size=1, max_size=64)) + data[at:])
    for _ in range(draw(st.integers(1, 8))):
        at = draw(st.integers(0, len(data) - 1))
        data[at] ^= draw(st.integers(1, 255))
    return bytes(data)


@st.composite
def corrupted_workbooks(draw):
    """A sample workbook's bytes, corrupted as a whole file or in one zip member."""
    data = draw(st.sampled_from(SOURCES))
    if draw(st.booleans()):
        return _corrupt_member(data, draw)
    return _corrupt_bytes(data, draw)


def _check_corrupted_run(folder: Path, data: bytes) -> None:
    """`check` and `solve --json` on one corrupted workbook end as the catalogue requires."""
    path = folder / "damaged.xlsx"
    path.write_bytes(data)
    checked = run("check", path)
    assert checked.exception is None or isinstance(checked.exception, SystemExit), repr(checked.exception)
    assert checked.exit_code in (0, 1), checked.output
    assert (checked.stdout if checked.exit_code == 0 else checked.stderr).strip()
    assert leftovers(folder, {"damaged.xlsx"}) == set()
    solved = run("solve", path, "--json")
    assert solved.exception is None or isinstance(solved.exception, SystemExit), repr(solved.exception)
    assert solved.exit_code in (0, 1, 3, 4), solved.output
    assert "Traceback" not in solved.output + checked.output
    doc = json.loads(solved.stdout)
    assert solved.exit_code == {"optimal": 0, "workbook_error": 1, "infeasible": 3, "unbounded": 3}.get(doc["status"], 4)
    assert (solved.exit_code == 1) == (checked.exit_code == 1)  # solve refuses what check reports
    written = {"damaged.result.xlsx"} if solved.exit_code != 1 else set()
    assert leftovers(folder, {"damaged.xlsx"}) == written  # no temporary file, no output from a failure
    assert path.read_bytes() == data


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(corrupted_workbooks())
def test_a_corrupted_workbook_gets_a_message_and_an_exit_code(tmp_path_factory, data):
    _check_corrupted_run(tmp_path_factory.mktemp("damaged"), data)


@pytest.mark.long
@settings(max_examples=2000, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(corrupted_workbooks())
def test_many_corrupted_workbooks_get_a_message_and_an_exit_code(tmp_path_factory, data):
    _check_corrupted_run(tmp_path_factory.mktemp("damaged"), data)

"""The command line end to end: exit codes, exact messages, files on disk."""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.cli import app
from tests.reference import highs_form
from tests.workbooks import INGREDIENTS, SPECS, make_workbook

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_workbooks" / "broiler_starter.xlsx"
runner = CliRunner()


def run(*args):
    """Invoke the CLI in-process; returns the click Result (stdout and stderr separate)."""
    return runner.invoke(app, [str(a) for a in args])


@pytest.fixture
def sample(tmp_path):
    """A copy of the sample workbook in tmp_path."""
    copy = tmp_path / SAMPLE.name
    shutil.copyfile(SAMPLE, copy)
    return copy


def _sheet_rows(path, title):
    book = openpyxl.load_workbook(path)
    return [[c for c in row] for row in book[title].iter_rows(values_only=True)]


def test_solve_sample_writes_output_and_keeps_input(sample):
    before = sample.read_bytes()
    result = run("solve", sample)
    assert result.exit_code == 0, result.output
    assert "optimal" in result.stdout
    output = sample.with_name("broiler_starter.result.xlsx")
    assert output.exists()
    assert sample.read_bytes() == before  # the input is byte-for-byte unchanged
    book = openpyxl.load_workbook(output)
    assert {"Ingredients", "Specs", "Settings", "Result", "Shadow prices", "Run info"} <= set(book.sheetnames)


def test_json_matches_workbook_and_independent_lp(sample, tmp_path):
    out = tmp_path / "out.xlsx"
    result = run("solve", sample, "-o", out, "--json")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert doc["status"] == "optimal"
    assert abs(sum(doc["ingredients"].values()) - 100) < 1e-7
    # The cost agrees with an independent formulation solved by HiGHS (tests/test_examples.py
    # builds that LP from the workbook cells with openpyxl only).
    from tests.test_examples import solve_with_highs

    reference, *_ = solve_with_highs(sample)
    assert doc["cost"] == pytest.approx(reference.fun, rel=1e-7)
    # Every number in the JSON appears in the output workbook's Result sheet.
    rows = _sheet_rows(out, "Result")
    by_name = {}
    for row in rows:
        if row and isinstance(row[0], str) and len(row) > 1 and isinstance(row[1], (int, float)):
            by_name.setdefault(row[0], row[1])
    for name, inclusion in doc["ingredients"].items():
        assert by_name[name] == pytest.approx(inclusion, abs=1e-9)
    limits = _sheet_rows(out, "Shadow prices")
    cells = {row[10] for row in limits if row and len(row) > 10 and row[10]}
    for limit in doc["limits"]:
        assert limit["cell"] in cells
        assert re.fullmatch(r"(Specs|Ingredients)![A-Z]+[0-9]+", limit["cell"])


def test_shadow_prices_match_highs_marginals(sample, tmp_path):
    # d(cost)/d(bound) from HiGHS's duals on the same LP (built from the workbook by our
    # reader and builder; the duals themselves come from the outside library). Which side
    # of a spec binds is read from HiGHS's blend (its level sits on that bound), not from
    # the sign of a marginal.
    from blendkit.lp.build import build_lp
    from blendkit.read.workbook import read_workbook

    lp = build_lp(read_workbook(sample))
    ref = highs_form(lp.form)
    levels = lp.form.A @ ref.x
    doc = json.loads(run("solve", sample, "-o", tmp_path / "o.xlsx", "--json").stdout)
    by_bound = {(limit["name"], limit["side"]): limit for limit in doc["limits"] if limit["kind"] == "nutrient"}
    checked = 0
    for row, level, marginal in zip(lp.rows, levels, ref.marginals_eq):
        at = [side for side in row.sides if abs(level - side.bound) <= 1e-9 * (1 + abs(side.bound))]
        assert len(at) <= 1, row.name  # the sample has no spec with min = max
        for side in row.sides:
            limit = by_bound[(row.name, side.side)]
            assert limit["binding"] == (side in at), (row.name, side.side)
            expected = marginal if side in at else 0.0
            assert limit["shadow_price"] == pytest.approx(expected, rel=1e-6, abs=1e-7), (row.name, side.side)
            checked += side in at and abs(marginal) > 1e-7
    assert checked >= 5  # the sample has several binding specs with a non-zero price


def test_pearson_square_workbook(tmp_path):
    # Pearson square, common practice: 8.5 % and 44 % crude protein feeds blended to 16 %
    # give 78.87 % and 21.13 %.
    book = make_workbook(
        tmp_path,
        [["Ingredient", "Cost", "Crude protein (%)"], ["Barley", 180, 8.5], ["Soybean meal", 400, 44]],
        [["Nutrient", "Min", "Max"], ["Crude protein", 16, 16]],
    )
    doc = json.loads(run("solve", book, "--json").stdout)
    assert doc["ingredients"]["Barley"] == pytest.approx(78.87, abs=0.005)
    assert doc["ingredients"]["Soybean meal"] == pytest.approx(21.13, abs=0.005)
    assert doc["nutrients"]["Crude protein"] == pytest.approx(16)


def test_infeasible_exits_3_and_says_so(tmp_path):
    specs = [row[:] for row in SPECS]
    specs[1] = ["Crude protein", 60, None]  # no ingredient has 60 % protein
    book = make_workbook(tmp_path, INGREDIENTS, specs)
    result = run("solve", book)
    assert result.exit_code == 3
    assert "infeasible" in result.stdout
    assert book.with_name("blend.result.xlsx").exists()  # written so the reviewer sees it
    doc = json.loads(run("solve", book, "--json").stdout)
    assert doc["status"] == "infeasible" and doc["cost"] is None


def test_workbook_errors_exit_1_with_cells(tmp_path):
    ingredients = [row[:] for row in INGREDIENTS]
    ingredients[2][1] = "n/a"
    book = make_workbook(tmp_path, ingredients, SPECS)
    for command in ("solve", "check"):
        result = run(command, book)
        assert result.exit_code == 1
        assert 'Ingredients!B3: cost "n/a" is not a number' in result.stderr
        assert "Traceback" not in result.output
    assert not book.with_name("blend.result.xlsx").exists()
    doc = json.loads(run("solve", book, "--json").stdout)
    assert doc["status"] == "workbook_error"
    assert doc["problems"][0]["where"] == "Ingredients!B3"


def test_check_valid_workbook(sample):
    result = run("check", sample)
    assert result.exit_code == 0
    assert "no problems found" in result.stdout
    assert not sample.with_name("broiler_starter.result.xlsx").exists()


def test_output_over_input_is_refused(sample):
    before = sample.read_bytes()
    result = run("solve", sample, "-o", sample)
    assert result.exit_code == 2
    assert "would overwrite the input" in result.stderr
    assert sample.read_bytes() == before


def test_missing_file_and_not_a_workbook(tmp_path):
    result = run("solve", tmp_path / "nothing.xlsx")
    assert result.exit_code == 1 and "Traceback" not in result.output
    junk = tmp_path / "junk.xlsx"
    junk.write_text("not a workbook")
    result = run("check", junk)
    assert result.exit_code == 1 and "junk.xlsx" in result.stderr


def test_solving_an_output_again_replaces_result_sheets(sample, tmp_path):
    first = tmp_path / "first.xlsx"
    assert run("solve", sample, "-o", first).exit_code == 0
    second_run = run("solve", first)
    assert second_run.exit_code == 0
    second = tmp_path / "first.result.xlsx"
    names = openpyxl.load_workbook(second).sheetnames
    assert names.count("Result") == 1 and names.count("Shadow prices") == 1 and names.count("Run info") == 1


def test_every_command_has_help_and_is_in_readme():
    readme = (ROOT / "README.md").read_text()
    commands = [command.name or command.callback.__name__ for command in app.registered_commands]
    assert set(commands) == {"solve", "check", "new", "sweep"}
    for name in commands:
        result = run(name, "--help")
        assert result.exit_code == 0
        assert len(result.stdout.strip()) > 40
        assert f"blendkit {name}" in readme


def test_python_dash_m_runs(tmp_path):
    result = subprocess.run([sys.executable, "-m", "blendkit", "--version"], capture_output=True, text=True, cwd=ROOT)
    assert result.returncode == 0 and result.stdout.startswith("blendkit ")


def test_export_mps_resolves_to_the_same_cost_in_highs(sample, tmp_path):
    # The exported LP, read and solved by HiGHS itself (highspy), gives the cost blendkit
    # reports: the file is a faithful, solver-neutral copy of the blend.
    import highspy

    mps_file = tmp_path / "blend.mps"
    result = run("solve", sample, "-o", tmp_path / "o.xlsx", "--json", "--export-mps", mps_file)
    assert result.exit_code == 0
    doc = json.loads(result.stdout)
    h = highspy.Highs()
    h.setOptionValue("output_flag", False)
    h.readModel(str(mps_file))
    h.run()
    assert h.getInfo().objective_function_value == pytest.approx(doc["cost"], rel=1e-9)
    text = mps_file.read_text()
    assert "TOTAL" in text and "Maize" in text


@pytest.mark.parametrize("example", [None, "layer", "diet", "fertilizer", "plant", "broiler"])
def test_new_writes_a_workbook_that_solves(tmp_path, example):
    target = tmp_path / "new.xlsx"
    args = ["new", target] + (["--example", example] if example else [])
    result = run(*args)
    assert result.exit_code == 0, result.output
    assert target.exists()
    solved = run("solve", target, "--json")
    assert solved.exit_code == 0, solved.output
    doc = json.loads(solved.stdout)
    assert doc["status"] == "optimal"


def test_new_never_replaces_a_file(tmp_path):
    target = tmp_path / "mine.xlsx"
    target.write_bytes(b"precious")
    result = run("new", target)
    assert result.exit_code == 2
    assert "already exists" in result.stderr
    assert target.read_bytes() == b"precious"
    assert run("new", tmp_path / "x.xlsx", "--example", "nonsense").exit_code == 2


def test_engine_trouble_exits_4_with_the_reason(sample, tmp_path, monkeypatch):
    # An engine that stops without an answer (here: made to hit its iteration limit).
    import blendkit.pipeline as pipeline
    from blendkit.engine import solve_form

    monkeypatch.setattr(pipeline, "solve_form", lambda form, **options: solve_form(form, max_iterations=1))
    result = run("solve", sample, "-o", tmp_path / "o.xlsx")
    assert result.exit_code == 4
    assert "iteration limit" in result.stdout
    assert (tmp_path / "o.xlsx").exists()  # the reviewer still gets the run's facts


def test_example_names_listed_without_loading_the_examples_match_them():
    from blendkit.authoring import EXAMPLE_NAMES
    from blendkit.authoring.examples import EXAMPLES

    assert EXAMPLE_NAMES == tuple(EXAMPLES)


def test_help_loads_neither_the_numbers_nor_the_workbook_libraries():
    # Start-up stays fast: `blendkit --help` must not import numpy, scipy, openpyxl or pandas.
    code = ("import sys; sys.argv = ['blendkit', '--help']\n"
            "try:\n    from blendkit.start import main; main()\nexcept SystemExit:\n    pass\n"
            "print(sorted(m for m in ('numpy', 'scipy', 'openpyxl', 'pandas') if m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    assert done.stdout.strip().splitlines()[-1] == "[]"


def test_export_mps_keeps_a_long_name_in_free_mps(tmp_path):
    # Outside reference: HiGHS (highspy) reads the free MPS file the long name makes.
    import highspy

    from blendkit.pipeline import check_workbook
    from blendkit.write.mps import export_mps

    blend = check_workbook(ROOT / "sample_workbooks" / "layer_feed.xlsx")
    assert len(blend.settings.name) > 8
    mps_file = export_mps(blend, tmp_path / "layer.mps")
    first = mps_file.read_text().splitlines()[0]
    assert first == "NAME " + "_".join(blend.settings.name.split())
    h = highspy.Highs()
    h.setOptionValue("output_flag", False)
    assert h.readModel(str(mps_file)) == highspy.HighsStatus.kOk


def test_usage_names_arguments_plainly():
    # Usage lines read "BOOK...", not "{book}" or "<bool>" (words a user sees; common practice
    # of command-line help).
    for command in ("solve", "check", "sweep", "new"):
        text = run(command, "--help").stdout
        assert "{" not in text and "<" not in text, command
    assert "solve [OPTIONS] BOOK...\n" in run("solve", "--help").stdout

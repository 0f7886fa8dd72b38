"""The weekly run starts from last week's optimal basis (`blendkit.lp.start`): a plant
solved again after its prices or specs changed takes far fewer simplex iterations, and
every answer is still the optimum HiGHS finds for the workbook as it now stands (outside
check: tests/test_examples.formulate_with_highs, an LP written from the workbook format
alone and solved by HiGHS)."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.bench.plant import plant_workbook
from blendkit.cli import app
from blendkit.model import record
from blendkit.pipeline import solve_workbook
from blendkit.read.previous import read_run_record
from tests.test_examples import formulate_with_highs

STARTED = "Started from the earlier result's optimal basis"
NOT_FITTED = "did not fit this LP"


@pytest.fixture
def plant(tmp_path: Path) -> Path:
    """A 5-product plant (365 rows: the engine's sparse path) with shared stocks."""
    return plant_workbook(tmp_path / "plant.xlsx", 5, 60, 30, 7)


def _edit(path: Path, change) -> None:
    """Apply `change(book)` to the workbook at `path` and save it."""
    book = openpyxl.load_workbook(path)
    change(book)
    book.save(path)


def _scale_prices(book, factors) -> None:
    """Each ingredient's Cost cell times its factor (one price per ingredient, as a buyer's list has it)."""
    for row, factor in zip(book["Ingredients"].iter_rows(min_row=2), factors):
        row[1].value = float(row[1].value) * float(factor)


def _assert_highs_optimum(path: Path, formula) -> None:
    reference = formulate_with_highs(path)
    assert reference.result.status == 0
    assert formula.status == "optimal"
    assert formula.cost == pytest.approx(reference.result.fun, rel=1e-7)


def test_a_plant_solved_again_after_a_price_change_starts_from_the_last_basis(plant, tmp_path):
    out = tmp_path / "plant.result.xlsx"
    first = solve_workbook(plant, out, check=False).formula
    assert first.status == "optimal" and first.iterations > 100
    assert not any(STARTED in note for note in first.notes)
    factors = np.random.default_rng(3).uniform(0.97, 1.03, 60)
    _edit(plant, lambda book: _scale_prices(book, factors))
    cold = solve_workbook(plant, tmp_path / "cold.xlsx", check=False, start=False).formula
    warm = solve_workbook(plant, out, check=False).formula
    assert any(STARTED in note for note in warm.notes)
    assert warm.iterations < cold.iterations / 2
    _assert_highs_optimum(plant, warm)
    assert warm.cost == pytest.approx(cold.cost, rel=1e-9)


def test_the_same_plant_solved_again_takes_no_iterations_and_gives_the_same_formula(plant, tmp_path):
    out = tmp_path / "plant.result.xlsx"
    first = solve_workbook(plant, out, check=False).formula
    again = solve_workbook(plant, out, check=False).formula
    assert again.iterations == 0
    assert any(STARTED in note for note in again.notes)
    for before, after in zip(first.products, again.products):
        assert [line.inclusion for line in after.ingredients] == pytest.approx(
            [line.inclusion for line in before.ingredients], abs=1e-9)
    _assert_highs_optimum(plant, again)


def _change_specs_and_ingredients(book) -> None:
    """Drop one product's first spec row, raise another's minimum by 2 % and add a new,
    cheap ingredient copied from the first one."""
    specs = book["Specs"]
    specs.delete_rows(2)
    specs.cell(5, 2).value = float(specs.cell(5, 2).value) * 1.02
    sheet = book["Ingredients"]
    copied = [cell.value for cell in sheet[2]]
    copied[0], copied[1] = "New ingredient", float(copied[1]) * 0.9
    sheet.append(copied)


def test_specs_and_ingredients_changed_since_still_solve_to_the_highs_optimum(plant, tmp_path):
    out = tmp_path / "plant.result.xlsx"
    solve_workbook(plant, out, check=False)
    _edit(plant, _change_specs_and_ingredients)
    changed = solve_workbook(plant, out, check=False).formula
    assert any(STARTED in note or NOT_FITTED in note for note in changed.notes)
    _assert_highs_optimum(plant, changed)


def test_from_scratch_ignores_the_earlier_basis(plant, tmp_path):
    out = tmp_path / "plant.result.xlsx"
    runner = CliRunner()
    first = json.loads(runner.invoke(app, ["solve", str(plant), "-o", str(out), "--json", "--jobs", "1",
                                           "--no-cross-check"]).stdout)
    again = json.loads(runner.invoke(app, ["solve", str(plant), "-o", str(out), "--json", "--jobs", "1",
                                           "--no-cross-check", "--from-scratch"]).stdout)
    assert not any(STARTED in note for note in again["notes"])
    assert again["status"] == "optimal"
    assert again["total_cost"] == pytest.approx(first["total_cost"], rel=1e-9)
    assert again["total_cost"] == pytest.approx(formulate_with_highs(plant).result.fun, rel=1e-7)


def test_the_record_keeps_the_basis_and_passes_over_damaged_rows(plant, tmp_path):
    out = tmp_path / "plant.result.xlsx"
    formula = solve_workbook(plant, out, check=False).formula
    kept = read_run_record(out).basis
    assert kept == tuple(pair for part in (formula.parts or (formula,)) for pair in part.basis)
    # Every row of the LP has one basic variable: as many "1" rows as LP rows (5 x 31 + 60).
    assert sum(state == 1 for _, state in kept) == 5 * 31 + 60

    def damage(book):
        sheet = book[record.SHEET]
        sheet.append([None, record.BASIS, "not json [", 1])
        sheet.append([None, record.BASIS, '["ingredient", "Product 1", "Ingredient 1"]', 7])
        sheet.append([None, record.BASIS, "[1, 2]", 1])

    _edit(out, damage)
    assert read_run_record(out).basis == kept
    again = solve_workbook(plant, out, check=False).formula
    assert again.iterations == 0
    _assert_highs_optimum(plant, again)


# --- Random edits between two runs -------------------------------------------------------

from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]


def _random_edit(book, draw_prices, spec_scale, drop_spec, use_off, stock_scale) -> None:
    """Prices moved per ingredient, one spec's bounds scaled, one spec row dropped, one
    ingredient's Use set to no, stocks scaled (where the sheets have them)."""
    sheet = book["Ingredients"]
    header = [str(cell.value or "").lower() for cell in sheet[1]]
    for row, factor in zip(sheet.iter_rows(min_row=2), draw_prices):
        if isinstance(row[1].value, (int, float)):
            row[1].value = float(row[1].value) * factor
    if use_off is not None and "use" in header:
        sheet.cell(2 + use_off % (sheet.max_row - 1), header.index("use") + 1).value = "no"
    if "stock (t)" in header:
        column = header.index("stock (t)") + 1
        for row in range(2, sheet.max_row + 1):
            value = sheet.cell(row, column).value
            if isinstance(value, (int, float)):
                sheet.cell(row, column).value = float(value) * stock_scale
    specs = book["Specs"]
    spec_header = [str(cell.value or "").lower() for cell in specs[1]]
    row = 2 + spec_scale[0] % (specs.max_row - 1)
    for side in ("min", "max"):
        cell = specs.cell(row, spec_header.index(side) + 1)
        if isinstance(cell.value, (int, float)):
            cell.value = float(cell.value) * spec_scale[1]
    if drop_spec is not None and specs.max_row > 3:
        specs.delete_rows(2 + drop_spec % (specs.max_row - 1))


@pytest.mark.parametrize("sample", ["pig_feed_plant", "layer_feed"])
@settings(max_examples=6, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(prices=st.lists(st.floats(0.8, 1.25), min_size=20, max_size=20),
       spec_scale=st.tuples(st.integers(0, 40), st.floats(0.9, 1.1)),
       drop_spec=st.none() | st.integers(0, 40), use_off=st.none() | st.integers(0, 40),
       stock_scale=st.floats(0.7, 1.5))
def test_a_workbook_edited_at_random_solves_from_its_earlier_basis_to_the_highs_optimum(
        sample, tmp_path, prices, spec_scale, drop_spec, use_off, stock_scale):
    # Whatever changed between two runs, the run started from the earlier basis ends where
    # HiGHS ends on the workbook as it now stands: the same status, the same least cost.
    folder = tmp_path / f"run{abs(hash((tuple(prices), spec_scale, drop_spec, use_off, stock_scale)))}"
    folder.mkdir()
    book_path = folder / f"{sample}.xlsx"
    book_path.write_bytes((ROOT / "sample_workbooks" / f"{sample}.xlsx").read_bytes())
    out = folder / "out.xlsx"
    solve_workbook(book_path, out, check=False)
    _edit(book_path, lambda book: _random_edit(book, prices, spec_scale, drop_spec, use_off, stock_scale))
    formula = solve_workbook(book_path, out, check=False).formula
    reference = formulate_with_highs(book_path)
    if reference.result.status == 2:  # HiGHS: infeasible
        assert formula.status == "infeasible"
        return
    assert reference.result.status == 0
    assert formula.status == "optimal"
    assert formula.cost == pytest.approx(reference.result.fun, rel=1e-7)


def test_finish_compares_with_the_file_it_is_given_after_a_prepare_without_it(tmp_path):
    # The earlier result is read when the workbook is prepared; a `compare` file named only
    # to `finish` is still the one compared with (the library's two-step use).
    from blendkit.pipeline import finish, formulate, prepare

    book = tmp_path / "layer_feed.xlsx"
    book.write_bytes((ROOT / "sample_workbooks" / "layer_feed.xlsx").read_bytes())
    earlier = solve_workbook(book, tmp_path / "earlier.xlsx", check=False).output
    prepared = prepare(book, tmp_path / "new.xlsx")
    assert prepared.earlier == (None, ())  # nothing at new.xlsx yet
    outcome = finish(prepared, formulate(prepared.blend, check=False), compare=earlier)
    assert outcome.formula.changes is not None
    # The same run compared by HiGHS's measure: the cost is the optimum of the workbook.
    assert outcome.formula.cost == pytest.approx(formulate_with_highs(book).result.fun, rel=1e-7)


def test_a_binding_spec_dropped_from_a_large_plant_still_starts_from_the_earlier_basis(tmp_path):
    # One binding row fewer leaves one basic column too many; on this LP of 680 rows the
    # column to leave is named by a null vector from one sparse factorisation. The run
    # starts from the earlier basis and ends at HiGHS's optimum.
    book = plant_workbook(tmp_path / "plant.xlsx", 20, 60, 30, 5)
    out = tmp_path / "plant.result.xlsx"
    first = solve_workbook(book, out, check=False).formula
    product = first.products[0]
    name = next(limit.name for limit in product.limits if limit.binding and limit.kind == "nutrient")

    def drop(book_):
        specs = book_["Specs"]
        row = next(r for r in range(2, specs.max_row + 1)
                   if specs.cell(r, 1).value == name and specs.cell(r, 4).value == product.name)
        specs.delete_rows(row)

    _edit(book, drop)
    again = solve_workbook(book, out, check=False).formula
    assert any(STARTED in note for note in again.notes)
    _assert_highs_optimum(book, again)


@pytest.mark.parametrize("products, extra", [(3, 1), (3, 2), (12, 1)])
def test_the_column_that_leaves_an_overfull_basis_leaves_an_independent_basis(tmp_path, products, extra):
    # Reference: numpy's matrix rank. A plant LP's optimal basis with `extra` more
    # ingredient columns (as after binding rows were dropped) loses columns one at a time;
    # what is left must be of full rank, on a small LP (3 products, 125 rows) and on one of
    # 455 rows alike.
    from blendkit.engine import solve_form
    from blendkit.lp import start
    from blendkit.lp.build import build_lp
    from blendkit.pipeline import prepare

    book = plant_workbook(tmp_path / "plant.xlsx", products, 40, 20, 11)
    lp = build_lp(prepare(book, tmp_path / "out.xlsx").blend)
    m, n = lp.form.A.shape
    head = [int(j) for j in solve_form(lp.form).basis.head]
    outside = [j for j in range(n) if j not in set(head)]
    head += outside[:extra]
    while len(head) > m:
        leaving = start._dependent_column(lp, head)
        assert leaving < n, "an ingredient column leaves"
        head.remove(leaving)
    B = start._columns(lp, head).toarray()
    assert np.linalg.matrix_rank(B) == m

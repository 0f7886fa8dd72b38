"""Sweeps: every breakpoint as a price or a spec bound moves, checked against HiGHS at the
midpoint of every piece and on both sides of every breakpoint (tests/test_examples.py
builds the LP from the workbook cells alone)."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.cli import app
from tests.test_examples import formulate_with_highs

ROOT = Path(__file__).resolve().parents[1]


def run(*args):
    """Invoke the CLI in-process."""
    return CliRunner().invoke(app, [str(a) for a in args])


def _highs_with(tmp_path: Path, source: Path, sheet: str, cell: str, value: float):
    """HiGHS on `source` with one cell set: (cost, the reference) — the LP from the cells."""
    book = openpyxl.load_workbook(source)
    book[sheet][cell] = value
    path = tmp_path / f"{sheet}-{cell}-{value:.9f}.xlsx"
    book.save(path)
    reference = formulate_with_highs(path)
    assert reference.result.status == 0
    return float(reference.result.fun), reference


@pytest.fixture
def broiler(tmp_path):
    """A copy of the broiler sample."""
    path = tmp_path / "broiler_starter.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "broiler_starter.xlsx", path)
    return path


def test_a_price_sweep_finds_every_breakpoint(tmp_path, broiler):
    before = broiler.read_bytes()
    result = run("sweep", broiler, "--ingredient", "Maize", "--from", 100, "--to", 400, "--json")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert doc["sweep"] == "ingredient" and len(doc["breakpoints"]) >= 2
    maize_cost = "B2"  # Maize's Cost cell in the sample
    for piece in doc["segments"]:
        mid = (piece["from"] + piece["to"]) / 2
        cost, reference = _highs_with(tmp_path, broiler, "Ingredients", maize_cost, mid)
        share = (mid - piece["from"]) / (piece["to"] - piece["from"])
        assert cost == pytest.approx(piece["cost_at_from"] + share * (piece["cost_at_to"] - piece["cost_at_from"]), rel=1e-7)
        assert reference.result.x[reference.names.index("Maize")] == pytest.approx(piece["inclusion"], abs=1e-6)
    for k, point in enumerate(doc["breakpoints"]):
        below = _highs_with(tmp_path, broiler, "Ingredients", maize_cost, point - 1e-4)[1]
        above = _highs_with(tmp_path, broiler, "Ingredients", maize_cost, point + 1e-4)[1]
        at = below.names.index("Maize")
        assert below.result.x[at] == pytest.approx(doc["segments"][k]["inclusion"], abs=1e-6)
        assert above.result.x[at] == pytest.approx(doc["segments"][k + 1]["inclusion"], abs=1e-6)
    assert broiler.read_bytes() == before
    sheet = openpyxl.load_workbook(tmp_path / "broiler_starter.sweep.xlsx")["Sweep"]
    assert sheet._charts and sheet["A8"].value == "From"


def test_a_spec_sweep_gives_the_shadow_price_of_each_piece(tmp_path, broiler):
    result = run("sweep", broiler, "--spec", "Crude protein min", "--from", 19, "--to", 24, "--json")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    protein_min = "B3"  # the Crude protein row's Min cell in the sample's Specs
    for piece in doc["segments"]:
        mid, h = (piece["from"] + piece["to"]) / 2, 1e-3 * (piece["to"] - piece["from"])
        cost = _highs_with(tmp_path, broiler, "Specs", protein_min, mid)[0]
        share = (mid - piece["from"]) / (piece["to"] - piece["from"])
        assert cost == pytest.approx(piece["cost_at_from"] + share * (piece["cost_at_to"] - piece["cost_at_from"]), rel=1e-7)
        slope = (_highs_with(tmp_path, broiler, "Specs", protein_min, mid + h)[0]
                 - _highs_with(tmp_path, broiler, "Specs", protein_min, mid - h)[0]) / (2 * h)
        assert slope == pytest.approx(piece["shadow_price"], rel=1e-5)


def test_sweep_mistakes_exit_2_with_a_message(broiler):
    assert "no ingredient 'Nothing'" in run("sweep", broiler, "--ingredient", "Nothing").stderr
    assert run("sweep", broiler, "--spec", "Crude protein", "--from", 1, "--to", 2).exit_code == 2
    assert run("sweep", broiler, "--spec", "Crude protein min").exit_code == 2  # no range
    assert run("sweep", broiler, "--ingredient", "Maize", "--from", 5, "--to", 1).exit_code == 2


def test_a_spec_with_a_margin_is_swept_by_its_bound_as_written(tmp_path, broiler):
    # Crude protein min with a Margin of 0.4: at a written bound v the formula is made to
    # v + 0.4, so the sweep's cost at v is HiGHS's with the Min cell set to v + 0.4 (the
    # Max of 24 becomes 23.6 with the same margin: the sweep stops below it).
    margin = 0.4
    book = openpyxl.load_workbook(broiler)
    specs = book["Specs"]
    column = specs.max_column + 1
    specs.cell(1, column, "Margin")
    specs.cell(3, column, margin)  # row 3: Crude protein (its Min is B3)
    assert specs["A3"].value == "Crude protein"
    with_margin = tmp_path / "margin.xlsx"
    book.save(with_margin)
    result = run("sweep", with_margin, "--spec", "Crude protein min", "--from", 19, "--to", 23, "--json")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert (doc["from"], doc["to"], doc["margin"]) == (19, 23, margin)
    assert doc["segments"][0]["from"] == 19 and doc["segments"][-1]["to"] == 23
    protein_min = "B3"
    for piece in doc["segments"]:
        mid = (piece["from"] + piece["to"]) / 2
        cost = _highs_with(tmp_path, broiler, "Specs", protein_min, mid + margin)[0]
        share = (mid - piece["from"]) / (piece["to"] - piece["from"])
        # reference: scipy.optimize.linprog (HiGHS) with the bound + margin written in
        assert cost == pytest.approx(piece["cost_at_from"] + share * (piece["cost_at_to"] - piece["cost_at_from"]), rel=1e-7)
    for k, point in enumerate(doc["breakpoints"]):
        h = 1e-4
        rates = []
        for at in (point - h, point + h):
            low = _highs_with(tmp_path, broiler, "Specs", protein_min, at + margin - h / 10)[0]
            high = _highs_with(tmp_path, broiler, "Specs", protein_min, at + margin + h / 10)[0]
            rates.append((high - low) / (h / 5))
        # reference: HiGHS slopes on both sides of each breakpoint, at the bound + margin
        assert rates[0] == pytest.approx(doc["segments"][k]["shadow_price"], rel=1e-5)
        assert rates[1] == pytest.approx(doc["segments"][k + 1]["shadow_price"], rel=1e-5)
    sheet = openpyxl.load_workbook(tmp_path / "margin.sweep.xlsx")["Sweep"]
    assert sheet["A7"].value == "Margin" and "bound + its Margin of 0.4" in sheet["B7"].value
    text = run("sweep", with_margin, "--spec", "Crude protein min", "--from", 19, "--to", 23)
    assert "the formula is made to the bound + its Margin of 0.4" in text.output


def test_a_spec_sweep_without_a_margin_says_margin_0(tmp_path, broiler):
    result = run("sweep", broiler, "--spec", "Crude protein min", "--from", 19, "--to", 23, "--json")
    assert json.loads(result.stdout)["margin"] == 0
    assert "Margin" not in run("sweep", broiler, "--spec", "Crude protein min", "--from", 19, "--to", 23).output

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

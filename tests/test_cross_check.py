"""The independent cross-check: every LP re-solved with HiGHS through highspy, recorded in the
JSON and in Run info, with a warning when the two solvers disagree."""

from __future__ import annotations

import dataclasses
import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.cli import app
from tests.test_examples import formulate_with_highs

ROOT = Path(__file__).resolve().parents[1]
runner = CliRunner()


def run(*args):
    """Invoke the CLI in-process."""
    return runner.invoke(app, [str(a) for a in args])


@pytest.mark.parametrize("name", ["layer_feed.xlsx", "pig_feed_plant.xlsx", "day_menu.xlsx"])
def test_the_cross_check_agrees_on_the_samples(tmp_path, name):
    book = tmp_path / name
    shutil.copyfile(ROOT / "sample_workbooks" / name, book)
    doc = json.loads(run("solve", book, "--json").stdout)
    check = doc["cross_check"]
    assert check["solver"] == "HiGHS (highspy)" and check["status"] == "optimal" and check["agrees"]
    # Outside check: HiGHS on an LP built from the workbook cells alone (tests/test_examples.py).
    assert check["cost"] == pytest.approx(formulate_with_highs(book).result.fun, rel=1e-9)
    assert abs(check["difference"]) <= 1e-6 * max(1, abs(check["cost"]))
    info = {row[0]: row[1] for row in openpyxl.load_workbook(tmp_path / name.replace(".xlsx", ".result.xlsx"))["Run info"].iter_rows(values_only=True) if row[0]}
    assert info["Cross-check"] == "HiGHS (highspy): optimal, agrees"
    assert info["Tolerance: residual"] == 1e-6


def test_no_cross_check_turns_it_off(tmp_path):
    book = tmp_path / "layer_feed.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "layer_feed.xlsx", book)
    doc = json.loads(run("solve", book, "--json", "--no-cross-check").stdout)
    assert doc["cross_check"] is None


def test_a_disagreement_is_a_warning(tmp_path, monkeypatch):
    # HiGHS made to answer 1 % dearer: the run must say that the solvers differ.
    import blendkit.lp.cross_check

    real = blendkit.lp.cross_check.solve_with_highs

    def dearer(*args, **kwargs):
        answer = real(*args, **kwargs)
        return dataclasses.replace(answer, cost=answer.cost * 1.01)

    monkeypatch.setattr(blendkit.lp.cross_check, "solve_with_highs", dearer)
    book = tmp_path / "layer_feed.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "layer_feed.xlsx", book)
    doc = json.loads(run("solve", book, "--json").stdout)
    assert doc["cross_check"]["agrees"] is False
    assert doc["notes"][0].startswith("Cross-check: HiGHS (highspy) finds cost ")
    assert "please report it" in doc["notes"][0]

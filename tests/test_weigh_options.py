"""The rules a mill can weigh beside the run's options: a price list (`--prices`), a
comparison (`--compare`, `--in-place`) and `--export-mps`.

A price list has our Ingredients headers; the weighing-rule columns there (Min if used,
Pack size, Scale step) are the workbook's own business, as Min and Max are: allowed and
not applied, never read as nutrient columns. The MPS file of a workbook under the rules
is re-read by HiGHS (highspy), whose MIP optimum must equal ours.
"""

from __future__ import annotations

import hashlib
import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from typer.testing import CliRunner

from blendkit.cli import app

SAMPLES = Path(__file__).resolve().parents[1] / "sample_workbooks"
runner = CliRunner()


def broiler_with_rules(tmp_path: Path) -> Path:
    """The broiler example weighed on a 0.5 kg scale step, its soybean oil in 25 kg packs."""
    path = tmp_path / "broiler.xlsx"
    shutil.copy(SAMPLES / "broiler_starter.xlsx", path)
    book = openpyxl.load_workbook(path)
    sheet = book["Ingredients"]
    column = sheet.max_column + 1
    sheet.cell(1, column, "Pack size (kg)")
    for row in range(2, sheet.max_row + 1):
        if sheet.cell(row, 1).value == "Soybean oil":
            sheet.cell(row, column, 25)
    book["Settings"].append(["Scale step", 0.5])
    book.save(path)
    return path


def test_a_price_list_may_carry_the_weighing_rule_columns(tmp_path):
    book = broiler_with_rules(tmp_path)
    prices = openpyxl.Workbook()
    sheet = prices.active
    sheet.title = "Ingredients"
    sheet.append(["Ingredient", "Cost", "Min if used", "Pack size", "Scale step"])
    sheet.append(["Soybean oil", 1100, "2 %", "25 kg bag", None])
    prices.save(tmp_path / "prices.xlsx")
    result = runner.invoke(app, ["solve", str(book), "--prices", str(tmp_path / "prices.xlsx"), "--json",
                                 "-o", str(tmp_path / "out.xlsx")])
    assert result.exit_code == 0, result.output
    doc = json.loads(result.output)
    oil = next(line for line in doc["batch"]["weights"] if line["ingredient"] == "Soybean oil")
    # The workbook's own 25 kg pack still applies: a whole number of packs (common practice).
    assert oil["weight"] % 25 == 0

"""Prices a buyer can trust: the price at which an ingredient comes in, checked by
re-solving with HiGHS just above and just below it (tests/test_examples.py builds the LP
from the workbook cells alone)."""

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


def _inclusion_at_price(tmp_path: Path, source: Path, name: str, price: float, allow: bool) -> float:
    """HiGHS's inclusion of `name` in `source` with its Cost cell set to `price` (and its
    Use set to yes when `allow`)."""
    book = openpyxl.load_workbook(source)
    sheet = book["Ingredients"]
    header = [str(cell.value or "").lower() for cell in sheet[1]]
    row = next(r for r in sheet.iter_rows(min_row=2) if r[0].value == name)
    row[next(k for k, h in enumerate(header) if h.startswith("cost"))].value = price
    if allow:
        row[header.index("use")].value = "yes"
    path = tmp_path / f"at-{price:.6f}.xlsx"
    book.save(path)
    reference = formulate_with_highs(path)
    assert reference.result.status == 0
    return float(reference.result.x[reference.names.index(name)])


def test_a_use_no_ingredient_gets_the_price_at_which_it_would_come_in(tmp_path):
    source = tmp_path / "broiler_starter.xlsx"
    shutil.copyfile(ROOT / "sample_workbooks" / "broiler_starter.xlsx", source)
    doc = json.loads(CliRunner().invoke(app, ["solve", str(source), "--json", "--no-cross-check"]).stdout)
    price = doc["prices"]["Fish meal 65"]["more_below"]
    assert price is not None and doc["prices"]["Fish meal 65"]["less_above"] is None
    # Allowed at a price just above it, HiGHS leaves it out; just below, HiGHS uses it.
    assert _inclusion_at_price(tmp_path, source, "Fish meal 65", price * 1.001, allow=True) <= 1e-9
    assert _inclusion_at_price(tmp_path, source, "Fish meal 65", price * 0.999, allow=True) > 1e-6

"""The hidden Result data sheet: this run's machine-readable record.

A flat table (Formula, What, Name, Value), laid out as `blendkit.model.record`
describes, that a later run of the same workbook reads back to show what changed. It is
hidden because it is for blendkit, not for the reader. Numbers are stored as numbers, to
the 16 significant digits the file keeps.
"""

from __future__ import annotations

import json

from openpyxl.workbook.workbook import Workbook

from blendkit.model import record
from blendkit.model.formula import Formula, RunInfo
from blendkit.model.record import RecordedFormula, run_record
from blendkit.write.workbook.cells import header, put

TITLE = record.SHEET

# Column widths, in characters: formula key, what, name, value.
_WIDTHS = {"A": 24, "B": 14, "C": 44, "D": 24}


def write(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """The record of this run, in a hidden sheet."""
    sheet = workbook.create_sheet(TITLE)
    sheet.sheet_state = "hidden"
    header(sheet, 1, list(record.HEADER))
    for row, values in enumerate(_rows(formula, run), start=2):
        for column, value in enumerate(values, start=1):
            put(sheet, row, column, value)
    for column, width in _WIDTHS.items():
        sheet.column_dimensions[column].width = width


def _rows(formula: Formula, run: RunInfo) -> list[tuple]:
    """The record's rows: the format mark, the run rows, each formula's rows, then the
    optimal basis."""
    this = run_record(formula, run)
    rows: list[tuple] = [(None, "record", record.RECORD_NAME, record.FORMAT)]
    rows += [(None, what, None, getattr(this, field)) for what, field in record.RUN_ROWS.items()]
    for recorded in this.formulas:
        rows += _formula_rows(recorded)
    rows += [(None, record.BASIS, json.dumps(label, ensure_ascii=False), state) for label, state in this.basis]
    return rows


def _formula_rows(recorded: RecordedFormula) -> list[tuple]:
    """One formula's rows: cost, inclusions, prices, nutrient levels, binding limits."""
    key = recorded.key
    rows: list[tuple] = [(key, record.COST, None, recorded.cost)]
    rows += [(key, record.INCLUSION, name, value) for name, value in recorded.inclusions.items()]
    rows += [(key, record.PRICE, name, value) for name, value in recorded.prices.items()]
    rows += [(key, record.NUTRIENT, name, _finite(value)) for name, value in recorded.nutrients.items()]
    rows += [(key, record.BINDING, label, _finite(bound)) for label, bound in recorded.binding.items()]
    return rows


def _finite(value: float | None) -> float | None:
    """A plain float, or None (a blank cell) for a missing or non-finite value."""
    if value is None or value != value or abs(value) == float("inf"):
        return None
    return float(value) + 0.0

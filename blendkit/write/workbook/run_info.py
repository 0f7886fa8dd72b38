"""The Run info sheet: key/value facts that tie the output to its input and to this run
(tool version, time, input file name and SHA-256, status, caution)."""

from __future__ import annotations

import dataclasses
import math

from openpyxl.workbook.workbook import Workbook

from blendkit import CAUTION
from blendkit.engine.tolerances import Tolerances
from blendkit.model.formula import Formula, RunInfo
from blendkit.write.workbook.cells import BOLD, WRAP_TOP, header, new_sheet, put

TITLE = "Run info"

# The caution's cell is about this many characters wide; its row grows to show it all.
_CAUTION_LINE = 70


def _cross_check_rows(formula: Formula) -> list[tuple[str, object]]:
    """The cross-check: the same LP re-solved with HiGHS, its cost and the difference."""
    check = formula.cross_check
    if check is None:
        return [("Cross-check", "off (--no-cross-check)")]
    verdict = "agrees" if check.agrees else "DIFFERS: see the warnings"
    rows = [("Cross-check", f"{check.solver}: {check.status}, {verdict}")]
    if check.cost is not None:
        rows.append(("Cross-check cost", check.cost))
    if check.difference is not None:
        rows.append(("Our cost less its", check.difference))
    return rows


def _tolerance_rows() -> list[tuple[str, object]]:
    """The engine's tolerances, so a reviewer knows what "feasible" and "optimal" meant."""
    tolerances = Tolerances()
    return [(f"Tolerance: {field.name.replace('_', ' ')}", getattr(tolerances, field.name))
            for field in dataclasses.fields(tolerances)]


def write(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """Key/value facts that tie the output to its input and to this run."""
    sheet = new_sheet(workbook, TITLE)
    rows = [
        ("Title", title),
        ("Tool version", f"blendkit {run.tool_version}"),
        ("Run at (UTC)", run.started_utc),
        ("Input file", run.input_name),
        ("Input SHA-256", run.input_sha256),
        *((("Price list", run.price_list_name), ("Price list SHA-256", run.price_list_sha256))
          if run.price_list_name else ()),
        ("Status", formula.status),
        ("Message", formula.message),
        ("Iterations", formula.iterations),
        *_cross_check_rows(formula),
        *_tolerance_rows(),
        *(("Warning" if k == 0 else "", note) for k, note in enumerate(formula.notes)),
        ("Caution", CAUTION),
    ]
    header(sheet, 1, ["Item", "Value"])
    for offset, (key, value) in enumerate(rows, start=2):
        put(sheet, offset, 1, key).font = BOLD
        cell = put(sheet, offset, 2, value)
        if key == "Caution":
            cell.alignment = WRAP_TOP
            cell.font = BOLD
            sheet.row_dimensions[offset].height = 15 * math.ceil(len(CAUTION) / _CAUTION_LINE) + 4
    sheet.column_dimensions["A"].width = 16
    sheet.column_dimensions["B"].width = 80
    sheet.freeze_panes = "A2"

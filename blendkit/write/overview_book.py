"""`solve --overview FILE`: one workbook summarising every book and formula of a batch.

One sheet, "Overview": the caution, then one row per formula of every book (a book that
could not be read has one row with its first problem): book, formula, status, cost,
cost unit, previous cost and change (when the book was compared with an earlier
result), and the output workbook; when some formula is under the rules a mill can weigh,
three more columns as on the Overview sheet (`overview.PRACTICAL_LABELS`): its LP cost
without those rules, what the rules add and the search's proven gap. Saved atomically,
like every output.
"""

from __future__ import annotations

import io
from pathlib import Path

from openpyxl import Workbook
from openpyxl.utils import get_column_letter

from blendkit.batch import BookResult
from blendkit.errors import WorkbookError
from blendkit.model.formula import Formula, Practical
from blendkit.model.units import cost_unit
from blendkit.write.workbook.cells import MONEY_FORMAT, TITLE_FONT, header, number, put, write_caution
from blendkit.write.workbook.overview import PRACTICAL_LABELS, PRACTICAL_WIDTHS, write_practical
from blendkit.write.workbook.save import save_atomically

_LABELS = ("Book", "Formula", "Status", "Cost", "Unit", "Previous cost", "Change", "Output workbook")
_WIDTHS = (28, 24, 14, 12, 14, 14, 12, 40)
_HEADER_ROW = 4


def write_overview(results: list[BookResult], path: Path) -> Path:
    """Write the batch's overview workbook to `path` and return it."""
    workbook = Workbook()
    sheet = workbook.active
    sheet.title = "Overview"
    rows = [row for result in results for row in _rows(result)]
    weighed = any(practical is not None for *_, practical in rows)
    labels, widths = (_LABELS + PRACTICAL_LABELS, _WIDTHS + PRACTICAL_WIDTHS) if weighed else (_LABELS, _WIDTHS)
    for column, width in enumerate(widths, start=1):
        sheet.column_dimensions[get_column_letter(column)].width = width
    put(sheet, 1, 1, f"Overview of {len(results)} workbook{'' if len(results) == 1 else 's'}").font = TITLE_FONT
    write_caution(sheet, 2, len(widths), sum(widths))
    header(sheet, _HEADER_ROW, list(labels))
    for row, (*values, practical) in enumerate(rows, start=_HEADER_ROW + 1):
        _write_row(sheet, row, tuple(values))
        if weighed:
            write_practical(sheet, row, len(_LABELS) + 1, practical)
    sheet.freeze_panes = sheet.cell(_HEADER_ROW + 1, 1)
    buffer = io.BytesIO()
    workbook.save(buffer)
    save_atomically(buffer.getvalue(), Path(path))
    return Path(path)


def _rows(result: BookResult) -> list[tuple]:
    """The rows of one book: one per formula, or one saying why it has none; each ends in
    the formula's Practical record (None without the rules a mill can weigh)."""
    book = result.book.name
    if isinstance(result.error, WorkbookError):
        first = result.error.problems[0]
        return [(book, None, "workbook error", None, None, None, None, f"{first.where}: {first.message}", None)]
    if result.error is not None:
        return [(book, None, "output error", None, None, None, None, str(result.error), None)]
    formula = result.outcome.formula
    return [(book, key, status, cost, cost_unit(formula.blend.settings), *_previous(formula, key, cost),
             str(result.outcome.output), practical) for key, status, cost, practical in _formulas(formula)]


def _formulas(formula: Formula) -> list[tuple[str, str, float | None, Practical | None]]:
    """Each formula of a book: its key (product, or the blend's Name, or "blend"), status,
    cost and what the weighing rules cost it (None without them)."""
    if formula.several:
        return [(str(product.name), product.status, product.cost, product.practical) for product in formula.products]
    practical = formula.products[0].practical if formula.products else None
    return [(formula.blend.settings.name or "blend", formula.status, formula.cost, practical)]


def _previous(formula: Formula, key: str, cost: float | None) -> tuple[float | None, float | None]:
    """The formula's cost at the compared run and the change (None, None without one)."""
    if formula.changes is None:
        return None, None
    entry = next((item for item in formula.changes.formulas if item.key == key), None)
    if entry is None:
        return None, None
    return entry.cost_before, (None if cost is None else cost - entry.cost_before)


def _write_row(sheet, row: int, values: tuple) -> None:
    """One row: text cells as text, the three money columns as numbers."""
    for column, value in enumerate(values, start=1):
        if column in (4, 6, 7):
            number(sheet.cell(row, column), value, MONEY_FORMAT)
        else:
            put(sheet, row, column, value)

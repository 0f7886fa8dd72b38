"""Input cells whose value came from a price list (`solve --prices`), shown and marked.

The output's Ingredients sheet shows the values the run actually used: each replaced
cell gets the price list's value, a pale green fill and a comment saying where the value
came from and what the workbook held before. Marked before the saved formula results are
collected, so a formula the price list replaced is not restored.
"""

from __future__ import annotations

from copy import copy

from openpyxl.comments import Comment
from openpyxl.workbook.workbook import Workbook

from blendkit.model.prices import Replacement
from blendkit.write.workbook.cells import REPLACED_FILL


def mark_replaced(workbook: Workbook, replaced: tuple[Replacement, ...]) -> None:
    """Write each replacement's value into its cell and mark it."""
    for change in replaced:
        title, _, coordinate = change.cell.rpartition("!")
        if title not in workbook.sheetnames or not coordinate:
            continue
        cell = workbook[title][coordinate]
        # The reader lets cells of one style share a style record (see
        # blendkit.read.workbook._share_styles); the fill below must change this cell only.
        cell._style = copy(cell._style)
        cell.value = change.after
        cell.fill = REPLACED_FILL
        before = "blank" if change.before is None else f"{change.before:g}"
        cell.comment = Comment(f"From the price list {change.source} (the workbook held {before})", "blendkit")

"""A batch of workbooks (`blendkit solve BOOK BOOK ...`) rendered for the console and JSON.

Each workbook is rendered as `console` and `json` render one; a workbook that could not
be read shows its problems instead. One workbook alone renders exactly as before.
"""

from __future__ import annotations

from typing import Any

from blendkit.batch import BookResult
from blendkit.errors import WorkbookError
from blendkit.write.console import render_summary
from blendkit.write.json import formula_to_dict


def books_to_dict(results: list[BookResult]) -> dict[str, Any]:
    """One JSON document: {"books": {path: the document of that book}}; a book that
    could not be read has {"status": "workbook_error", "problems": [...]}, one whose
    output could not be written {"status": "output_error", "message": ...}."""
    return {"books": {str(result.book): book_to_dict(result) for result in results}}


def book_to_dict(result: BookResult) -> dict[str, Any]:
    """The document of one book of a batch."""
    if isinstance(result.error, WorkbookError):
        return {"status": "workbook_error", "problems": problems_to_list(result.error)}
    if result.error is not None:
        return {"status": "output_error", "message": str(result.error)}
    return formula_to_dict(result.outcome.formula)


def problems_to_list(error: WorkbookError) -> list[dict[str, str]]:
    """A workbook's problems as JSON: where and what."""
    return [{"where": problem.where, "message": problem.message} for problem in error.problems]


def books_to_text(results: list[BookResult]) -> str:
    """Each book under its name: its summary and output file, or its problems."""
    blocks = []
    for result in results:
        heading = str(result.book)
        lines = [heading, "#" * len(heading), ""]
        if isinstance(result.error, WorkbookError):
            lines.append(result.error.describe())
        elif result.error is not None:
            lines.append(f"cannot write the output: {result.error}")
        else:
            lines.append(render_summary(result.outcome.formula))
            lines.append(f"\nOutput workbook: {result.outcome.output}")
        blocks.append("\n".join(lines))
    return "\n\n\n".join(blocks)

"""The one error type for bad input: every problem found, each with its sheet and cell."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Problem:
    """One mistake in a workbook: where it is and what to do about it.

    `where` is a cell reference such as ``Ingredients!D7``, or a sheet name alone
    (``Specs``) when the problem is the whole sheet, or the file name when the file
    itself cannot be read.
    """

    where: str
    message: str

    def __str__(self) -> str:
        return f"{self.where}: {self.message}"


class WorkbookError(Exception):
    """Raised once per run with every problem found in the workbook."""

    def __init__(self, problems: list[Problem] | tuple[Problem, ...]):
        self.problems = tuple(problems)
        super().__init__(self.describe())

    def describe(self) -> str:
        """All problems, one per line, with a count first."""
        count = len(self.problems)
        head = f"{count} problem{'s' if count != 1 else ''} in the workbook:"
        return "\n".join([head, *(f"  {p}" for p in self.problems)])


class OutputError(Exception):
    """The output cannot be written where asked (the input is never the target)."""

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
    """Raised once per run with every problem found in the workbook.

    `within` names what was read in the count line: "the workbook", or "the frames" for
    the tables of `Blend.from_frames`.
    """

    def __init__(self, problems: list[Problem] | tuple[Problem, ...], within: str = "the workbook"):
        self.problems = tuple(problems)
        self.within = within
        super().__init__(self.describe())

    def describe(self) -> str:
        """All problems, one per line, with a count first."""
        count = len(self.problems)
        head = f"{count} problem{'s' if count != 1 else ''} in {self.within}:"
        return "\n".join([head, *(f"  {p}" for p in self.problems)])


class OutputError(Exception):
    """The output cannot be written where asked (the input is never the target)."""


class UsageError(Exception):
    """A command asked for something the workbook does not have (exit code 2), such as a
    sweep of an ingredient that is not in it."""

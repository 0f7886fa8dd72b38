"""Min, Max and Priority cells, read the same way on Ingredients, Specs, Groups and Limits."""

from __future__ import annotations

from blendkit.errors import Problem
from blendkit.read.cells import Cell
from blendkit.read.tables import Row
from blendkit.read.values import format_number, read_number


def read_inclusion(
    cell: Cell | None, what: str, diet: bool, problems: list[Problem], *, of: str = "inclusion limits"
) -> float | None:
    """An inclusion limit (None when blank): % within 0..100, or in diet mode an amount >= 0."""
    limit = read_number(cell, what, problems)
    if limit is None:
        return None
    if diet and limit < 0:
        problems.append(Problem(cell.ref, (
            f"{what} {format_number(limit)} is below 0; in diet mode {of} are amounts in each food's unit, "
            "0 or more"
        )))
        return None
    if not diet and not 0 <= limit <= 100:
        problems.append(Problem(cell.ref, (
            f"{what} {format_number(limit)} is outside 0 to 100; {of} are % of the blend"
        )))
        return None
    return limit


def read_priority(cell: Cell | None, problems: list[Problem]) -> float | None:
    """A Priority cell: a number from 1 to 9, or None when blank (wrong ones are reported)."""
    value = read_number(cell, "priority", problems)
    if value is not None and not 1 <= value <= 9:
        problems.append(Problem(cell.ref, (
            f"priority {value:g} must be from 1 to 9: limits with a lower priority give way first "
            "when limits conflict (the defaults are in the README)"
        )))
        return None
    return value


def check_min_max(row: Row, minimum: float | None, maximum: float | None, problems: list[Problem]) -> None:
    """Report a row whose min is above its max, on the max cell."""
    if minimum is not None and maximum is not None and minimum > maximum:
        problems.append(Problem(row["max"].ref, (
            f"max {format_number(maximum)} is below min {format_number(minimum)} in {row['min'].ref}; "
            "make max at least min"
        )))


def neither_bound(row: Row) -> bool:
    """True when the row has Min and Max columns and both its cells are blank."""
    return "min" in row and "max" in row and row["min"].kind == row["max"].kind == "blank"


def bounds_unread(row: Row) -> bool:
    """True when a Min or Max column is missing or holds a formula with no saved value."""
    return "min" not in row or "max" not in row or "unsaved" in (row["min"].kind, row["max"].kind)

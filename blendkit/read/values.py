"""Values in cells: numbers (percent formats included), names, yes/no, units in headers.

Every sheet reads its cells through these, so a number or a name means the same on every
sheet and a mistake in one is worded the same way everywhere.
"""

from __future__ import annotations

import functools
import math
import re
from datetime import date, datetime, time, timedelta
from decimal import Decimal

from blendkit.errors import Problem
from blendkit.read.cells import Cell

# A plain decimal number: optional sign, digits with an optional point, optional exponent.
_PLAIN_NUMBER = re.compile(r"[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?")
# A trailing "(unit)" on a header; the unit itself holds no parentheses.
_TRAILING_UNIT = re.compile(r"(?P<name>.*?)\s*\((?P<unit>[^()]*)\)\s*", re.DOTALL)
# Parts of a number format that never scale a number: quoted text, escaped characters and
# [bracketed] sections (colours, conditions, locales).
_LITERAL_FORMAT_PARTS = re.compile(r'"[^"]*"|\\.|\[[^\]]*\]')

# The largest size of any number read (contents, costs, bounds, amounts, stocks, batch
# size), either way. Vitamin premixes reach about 1e9 IU/kg; a bigger number is a slip (a
# wrong unit, a pasted serial number) and would swamp the engine's tolerances.
LARGEST_NUMBER = 1e12

_YES = {"yes", "y", "true", "1"}
_NO = {"no", "n", "false", "0"}


def name_key(text: str) -> str:
    """The form names are compared in: case-folded, with spaces collapsed and trimmed."""
    return " ".join(text.split()).casefold()


def split_unit(text: str) -> tuple[str, str]:
    """Split ``Crude protein (%)`` into ("Crude protein", "%"); no unit gives ""."""
    text = text.strip()
    match = _TRAILING_UNIT.fullmatch(text)
    if match is None:
        return text, ""
    return match["name"].strip(), match["unit"].strip()


def as_text(value: object) -> str:
    """A cell value as the text a user would recognise, trimmed."""
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    if isinstance(value, (datetime, date, time)):
        return value.isoformat(sep=" ") if isinstance(value, datetime) else value.isoformat()
    return str(value).strip()


def format_number(number: float) -> str:
    """A number for a message: no needless decimals."""
    return f"{number:g}"


@functools.lru_cache(maxsize=256)  # a sheet has a few formats, and 400,000 cells ask
def is_percent_format(number_format: str) -> bool:
    """True when the format shows numbers as percentages (an unquoted, unescaped %)."""
    return "%" in _LITERAL_FORMAT_PARTS.sub("", number_format)


def read_number(cell: Cell | None, what: str, problems: list[Problem]) -> float | None:
    """The cell's number; None when blank, missing or wrong (wrong ones are reported).

    A number larger than `LARGEST_NUMBER` either way is wrong too.
    """
    if cell is None or cell.kind in ("blank", "unsaved"):
        return None
    value = cell.value
    if (type(value) is float and -LARGEST_NUMBER <= value <= LARGEST_NUMBER
            and not is_percent_format(cell.number_format)):
        return value  # most cells: a plain number in range, as the general path below reads it
    if cell.kind == "error":
        problems.append(Problem(cell.ref, f'{what} "{cell.value}" is not a number'))
        return None
    number = _as_number(value)
    if number is None or not math.isfinite(number):
        problems.append(Problem(cell.ref, f'{what} "{as_text(value)}" is not a number{_number_hint(value)}'))
        return None
    if not isinstance(value, str) and is_percent_format(cell.number_format):
        number = float(Decimal(repr(number)) * 100)  # via Decimal so 0.07 gives 7, not 7.000000000000001
    if abs(number) > LARGEST_NUMBER:
        problems.append(Problem(cell.ref, (
            f"{what} {format_number(number)} is too large: numbers must lie between {-LARGEST_NUMBER:g} "
            f"and {LARGEST_NUMBER:g}; check the value, or give it in a larger unit"
        )))
        return None
    return number


def is_number_cell(cell: Cell) -> bool:
    """True when the cell holds a number, or text that reads as one."""
    return cell.kind == "value" and _as_number(cell.value) is not None


def _as_number(value: object) -> float | None:
    """A number cell's value, or text that is a plain decimal number, as a float; else None."""
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        try:
            return float(value)
        except OverflowError:  # an integer too large for a float
            return None
    if isinstance(value, str) and _PLAIN_NUMBER.fullmatch(value.strip()):
        return float(value.strip())
    return None


def _number_hint(value: object) -> str:
    """A short fix for the common ways a number is mistyped, or ""."""
    if isinstance(value, (datetime, date, time, timedelta)):
        return " (the cell is formatted as a date or time; format it as a number)"
    if isinstance(value, str):
        text = value.strip()
        if re.fullmatch(r"[+-]?[\d.,\s]*\d[\d.,\s]*", text):
            return " (write it with no commas or spaces, with a point for decimals, as in 1250.5)"
        if text.endswith("%") and _PLAIN_NUMBER.fullmatch(text[:-1].strip()):
            return " (type the number alone; put a unit in the column header, as in \"Min (%)\")"
    return ""


def read_name(cell: Cell | None, what: str, problems: list[Problem]) -> str | None:
    """The text of a name cell; None when blank, missing or an error value (reported)."""
    if cell is None or cell.kind in ("blank", "unsaved"):
        return None
    value = cell.value
    if type(value) is float and -LARGEST_NUMBER <= value <= LARGEST_NUMBER and not is_percent_format(cell.number_format):
        return value  # most cells: a plain number in range, as the general path below reads it
    if cell.kind == "error":
        problems.append(Problem(cell.ref, (
            f'{what} "{cell.value}" is an error value from a formula; fix the formula or type the {what}'
        )))
        return None
    return as_text(cell.value)


def read_yes_no(cell: Cell | None, what: str, problems: list[Problem]) -> bool | None:
    """A yes/no cell as True/False (blank or missing is yes); None when wrong (reported)."""
    if cell is None or cell.kind == "blank":
        return True
    if cell.kind == "unsaved":
        return None
    if cell.kind == "value":
        if isinstance(cell.value, bool):
            return cell.value
        word = as_text(cell.value).casefold()
        if word in _YES:
            return True
        if word in _NO:
            return False
    problems.append(Problem(cell.ref, (
        f'{what} "{as_text(cell.value)}" is not yes or no; write yes or no (blank means yes)'
    )))
    return None

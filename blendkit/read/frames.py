"""DataFrames in, a validated Blend out: the workbook reader run on pandas frames.

`read_frames(ingredients, specs, ...)` writes each frame as one sheet of a workbook held in
memory (its first row the frame's column names, then one row per frame row, in order) and
reads that workbook with `read_workbook`, so frames follow every rule of the sheets they
stand for and are checked with the same words. Each problem is then placed in the frame's
words instead of a cell:

    ``ingredients[row "Maize", column "Cost"]``   a value: the row's index label, the column
    ``specs[column "Min (%)"]``                   a column name
    ``specs[columns]``                            the column names as a whole (a missing column)
    ``groups``                                    the whole frame

and cell references inside a message (``already listed in Ingredients!A3``) are placed the
same way. So are the cells the `Blend` keeps for each bound (a formula's limits name them),
and the blend has no `source`.

An index named like the frame's naming column (``Ingredient``, ``Nutrient``, ``Group``,
``Product``, ``Setting``; ``Product`` and ``Ingredient`` for limits; ``Nutrient`` for
combined) counts as that column,
so ``ingredients.set_index("Ingredient")`` works and its rows are labelled by name. Values
are written as they are: NaN, None and other missing values are blank cells; text is
always text (also when it starts with "="); a number that is not finite is written as text
and so reported as not a number. Text holding control characters cannot be stored and is
reported here, on its own.
"""

from __future__ import annotations

import dataclasses
import io
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from datetime import date, datetime, time
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.utils import column_index_from_string

from blendkit.errors import Problem, WorkbookError
from blendkit.model.blend import Blend
from blendkit.read.values import name_key, split_unit
from blendkit.read.workbook import read_workbook

# Each frame: its argument name, the sheet it stands for, and the keys of its naming
# columns (an index named like one of them counts as that column).
_FRAMES = {
    "ingredients": ("Ingredients", ("ingredient",)),
    "specs": ("Specs", ("nutrient",)),
    "groups": ("Groups", ("group",)),
    "products": ("Products", ("product",)),
    "limits": ("Limits", ("product", "ingredient")),
    "settings": ("Settings", ("setting",)),
    "combined": ("Combined", ("nutrient",)),
}

# The name the in-memory workbook is read under; problems with the file itself (none are
# expected: the workbook is written here) are placed on "frames".
_FILE = Path("frames.xlsx")

# A cell reference to a sheet written here, inside a problem's message.
_REFERENCE = re.compile(
    r"\b(?P<sheet>" + "|".join(sheet for sheet, _keys in _FRAMES.values()) + r")!(?P<place>[A-Z]+\d+|\d+:\d+)"
)


@dataclass(frozen=True)
class _Frame:
    """One frame as written to its sheet: column names and row labels for placing problems."""

    name: str
    columns: list
    labels: list
    rows: list[tuple]


def read_frames(
    ingredients: pd.DataFrame,
    specs: pd.DataFrame,
    settings: pd.DataFrame | Mapping | None = None,
    groups: pd.DataFrame | None = None,
    products: pd.DataFrame | None = None,
    limits: pd.DataFrame | None = None,
    combined: pd.DataFrame | None = None,
) -> Blend:
    """A `Blend` from DataFrames with the workbook's column names, one per sheet.

    `settings` is a frame with the columns Setting and Value, or a mapping
    {setting: value} (its rows are then labelled by setting). An optional frame left as
    None is an absent sheet. Raises `WorkbookError` with every problem ("2 problems in the
    frames:"), each placed in the frame's words (see the module docstring); the messages
    are the reader's.
    """
    given = {"ingredients": ingredients, "specs": specs, "settings": _settings_frame(settings),
             "groups": groups, "products": products, "limits": limits, "combined": combined}
    frames = {name: _frame(name, frame) for name, frame in given.items() if frame is not None}
    data, problems = _workbook_bytes(frames)
    places = _Places({_FRAMES[name][0]: frame for name, frame in frames.items()})
    try:
        blend = read_workbook(_FILE, data=data)
    except WorkbookError as error:
        found = problems + [places.problem(problem) for problem in error.problems]
        raise WorkbookError(found, within="the frames") from None
    if problems:
        raise WorkbookError(problems, within="the frames")
    return _placed_blend(blend, places)


def _settings_frame(settings: pd.DataFrame | Mapping | None) -> pd.DataFrame | None:
    """Settings as a frame: a mapping becomes Setting / Value rows labelled by setting."""
    if settings is None or isinstance(settings, pd.DataFrame):
        return settings
    if isinstance(settings, pd.Series):
        settings = settings.to_dict()
    if not isinstance(settings, Mapping):
        raise TypeError(f"settings must be a DataFrame or a mapping, not {type(settings).__name__}")
    names = list(settings)
    return pd.DataFrame({"Setting": names, "Value": list(settings.values())}, index=names)


def _frame(name: str, frame: pd.DataFrame) -> _Frame:
    """The frame's columns (with an index named like its naming column first) and rows."""
    if not isinstance(frame, pd.DataFrame):
        raise TypeError(f"{name} must be a pandas DataFrame, not {type(frame).__name__}")
    naming = _FRAMES[name][1]
    present = {_header_key(column) for column in frame.columns}
    levels = [level for level in frame.index.names
              if level is not None and _header_key(level) in naming and _header_key(level) not in present]
    written = frame.reset_index(level=levels) if levels else frame
    return _Frame(
        name=name,
        columns=list(written.columns),
        labels=list(frame.index),
        rows=list(written.itertuples(index=False, name=None)),
    )


def _header_key(header: object) -> str:
    """A column name as the reader compares headers (case, spaces and a unit ignored)."""
    return name_key(split_unit(str(header))[0])


# --- Writing the workbook --------------------------------------------------------------


def _workbook_bytes(frames: dict[str, _Frame]) -> tuple[bytes, list[Problem]]:
    """The frames as an .xlsx file, one sheet each, and the values that cannot be stored."""
    workbook = openpyxl.Workbook()
    workbook.remove(workbook.active)
    problems: list[Problem] = []
    for name, frame in frames.items():
        sheet = workbook.create_sheet(_FRAMES[name][0])
        for column, header in enumerate(frame.columns, start=1):
            if (message := _put(sheet.cell(1, column), header)) is not None:
                problems.append(Problem(f"{name}[column {_label(header)}]", message))
        for row, (label, values) in enumerate(zip(frame.labels, frame.rows), start=2):
            for column, (header, value) in enumerate(zip(frame.columns, values), start=1):
                if (message := _put(sheet.cell(row, column), value)) is not None:
                    problems.append(Problem(f"{name}[row {_label(label)}, column {_label(header)}]", message))
    buffer = io.BytesIO()
    workbook.save(buffer)
    return buffer.getvalue(), problems


def _put(cell, value: object) -> str | None:
    """Store one frame value in a cell as the reader should see it (text stays text); the
    problem's message when the value cannot be stored as it is."""
    value = _cell_value(value)
    message = None
    if isinstance(value, str) and ILLEGAL_CHARACTERS_RE.search(value):
        value = ILLEGAL_CHARACTERS_RE.sub("", value)
        message = f'text "{value}" holds control characters, which a workbook cannot store; remove them'
    cell.value = value
    if isinstance(value, str):
        cell.data_type = "s"  # never a formula, even when it starts with "="
    return message


def _cell_value(value: object) -> object:
    """A frame value as a cell value: missing ones blank, numpy scalars plain, a number that
    is not finite as text (which the reader reports), anything else unknown as text."""
    if isinstance(value, np.generic):
        value = value.item()
    if value is None or (pd.api.types.is_scalar(value) and pd.isna(value)):
        return None
    if isinstance(value, float) and not math.isfinite(value):
        return str(value)
    if isinstance(value, pd.Timestamp):
        value = value.to_pydatetime()
    if isinstance(value, (datetime, time)) and value.tzinfo is not None:
        return str(value)
    if isinstance(value, (str, bool, int, float, date, time)):
        return value
    return str(value)


def _label(label: object) -> str:
    """A row label or column name in a problem's place: numbers bare, anything else quoted."""
    if isinstance(label, np.generic):
        label = label.item()
    if isinstance(label, (int, float)) and not isinstance(label, bool):
        return str(label)
    return f'"{label}"'


# --- Placing problems and cells in the frames' words -----------------------------------


class _Places:
    """Turns the in-memory workbook's cell references into the frames' words."""

    def __init__(self, frames: dict[str, _Frame]):
        self._frames = frames  # by sheet title

    def problem(self, problem: Problem) -> Problem:
        """The problem placed in a frame, with the cell references in its message too."""
        return Problem(self.where(problem.where), self.in_text(problem.message))

    def in_text(self, text: str) -> str:
        """`text` with every cell reference to a written sheet placed in its frame."""
        return _REFERENCE.sub(lambda match: self.where(match[0]), text)

    def where(self, reference: str) -> str:
        """``Sheet!B5``, ``Sheet!1:1`` or ``Sheet`` in a frame's words (others unchanged)."""
        if reference == _FILE.name:
            return "frames"
        sheet, _bang, place = reference.partition("!")
        frame = self._frames.get(sheet)
        if frame is None:
            return reference
        if not place:
            return frame.name
        cell = re.fullmatch(r"([A-Z]+)(\d+)", place)
        if cell is not None:
            return _cell_place(frame, column_index_from_string(cell[1]), int(cell[2])) or reference
        row = re.fullmatch(r"(\d+):\d+", place)
        if row is not None:
            return _row_place(frame, int(row[1])) or reference
        return reference


def _cell_place(frame: _Frame, column: int, row: int) -> str | None:
    """Column `column`, row `row` of the sheet (1-based, header on row 1) in frame words."""
    if not 1 <= column <= len(frame.columns):
        return None
    header = _label(frame.columns[column - 1])
    if row == 1:
        return f"{frame.name}[column {header}]"
    if not 2 <= row <= len(frame.labels) + 1:
        return None
    return f"{frame.name}[row {_label(frame.labels[row - 2])}, column {header}]"


def _row_place(frame: _Frame, row: int) -> str | None:
    """A whole sheet row in frame words: the column names, or one frame row."""
    if row == 1:
        return f"{frame.name}[columns]"
    if not 2 <= row <= len(frame.labels) + 1:
        return None
    return f"{frame.name}[row {_label(frame.labels[row - 2])}]"


def _placed_blend(blend: Blend, places: _Places) -> Blend:
    """The blend with every cell it keeps placed in the frames' words, and no source."""

    def placed(record):
        """The record with its `cells` placed."""
        return dataclasses.replace(record, cells={key: places.where(ref) for key, ref in record.cells.items()})

    ingredients = tuple(
        dataclasses.replace(
            placed(item),
            content_cells={nutrient: places.where(ref) for nutrient, ref in item.content_cells.items()},
        )
        for item in blend.ingredients
    )
    return dataclasses.replace(
        blend,
        ingredients=ingredients,
        specs=tuple(map(placed, blend.specs)),
        groups=tuple(map(placed, blend.groups)),
        products=tuple(map(placed, blend.products)),
        limits=tuple(map(placed, blend.limits)),
        combined=tuple(map(placed, blend.combined)),
        settings=placed(blend.settings),
        source=None,
    )

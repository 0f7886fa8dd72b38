"""One cell as the reader sees it: its shown value or error, its number format, its formula.

Each cell is read from both loads of the workbook (see `blendkit.read.workbook`): the saved
results that spreadsheet programs store with a formula, and the formulas themselves.
"""

from __future__ import annotations

from dataclasses import dataclass

from openpyxl.worksheet.formula import ArrayFormula

@dataclass(frozen=True, slots=True)  # slots: a big sheet is read into hundreds of thousands
class Cell:
    """One cell as a spreadsheet program would show it, with where it is.

    `kind` is "blank", "value", "error" (a saved error value such as #DIV/0!, in `value`)
    or "unsaved" (a formula, in `formula`, with no saved result).
    """

    ref: str
    kind: str
    value: object = None
    number_format: str = "General"
    formula: str | None = None


def read_cell(title: str, value_cell, formula_cell, number_format: str | None = None,
              coordinate: str | None = None) -> Cell:
    """Combine a cell's saved value and its formula (if any) into one `Cell`; its number
    format and coordinate are `number_format` and `coordinate` when the caller knows
    them (else the value cell's)."""
    formula = _formula_text(formula_cell)
    kind, value = _shown(value_cell, formula)
    if number_format is None:
        number_format = getattr(value_cell, "number_format", None)
    return Cell(
        ref=f"{title}!{coordinate or value_cell.coordinate}",
        kind=kind,
        value=value,
        number_format=number_format or "General",
        formula=formula,
    )


def _shown(value_cell, formula: str | None) -> tuple[str, object]:
    """What the cell shows: its kind and its value (the error's text for an error value)."""
    value = value_cell.value
    if value_cell.data_type == "e":
        return "error", str(value)
    if value is None:
        # A formula whose saved result is empty text is stored with type "str" and no value;
        # one never calculated has no type.
        if formula is not None and value_cell.data_type != "str":
            return "unsaved", None
        return "blank", None
    if isinstance(value, str) and not value.strip():
        return "blank", None
    return "value", value


def _formula_text(formula_cell) -> str | None:
    """The cell's formula as typed (``=B2*2``), or None when it holds none."""
    if formula_cell.data_type != "f":
        return None
    formula = formula_cell.value
    if isinstance(formula, ArrayFormula):
        return formula.text
    if isinstance(formula, str):
        return formula
    return "a data table formula"


def unsaved_message(cell: Cell) -> str:
    """The message for a formula with no saved result."""
    return (
        f'formula "{cell.formula}" has no saved value; open the workbook in a spreadsheet '
        "program and save it so the result is stored"
    )

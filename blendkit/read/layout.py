"""What a sheet's layout hides from the eye: data under blank or merged header cells,
merged data cells, hidden rows, columns and sheets.

Nothing is dropped without a word. The rules:

* A column whose header cell is blank (or covered by a merged header) is not read. When it
  holds numbers below the header in Ingredients, that is a problem on its header cell:
  numbers there are most likely a nutrient whose header is missing. Any other data under a
  blank header (text in Ingredients, anything on another sheet, where extra columns are
  notes) gets a note.
* Merged cells over data rows: only the first cell of a merged range holds its value, so
  the others read as blank (a content as 0). In Ingredients, where every headed column is
  read, that is a problem on the range's first cell; on other sheets, a note.
* Hidden rows and columns of the table, and hidden sheets, are read like the others, and
  the notes say which.

The notes reach the console, the JSON and the Result sheet (as the formula's notes) and
`blendkit check`.
"""

from __future__ import annotations

from openpyxl.utils import get_column_letter

from blendkit.errors import Problem
from blendkit.read.ingredients import INGREDIENTS
from blendkit.read.reading import Reading
from blendkit.read.tables import Table, Unheaded

# (first row, first column, last row, last column) of a merged range.
Span = tuple[int, int, int, int]


def check_layout(reading: Reading) -> None:
    """Point out, for every known sheet with a table, what its layout hides (see module)."""
    for name, table in reading.tables.items():
        if table is None:
            continue
        problems = reading.problems[name]
        strict = name == INGREDIENTS
        if table.layout.hidden:
            reading.notes.append(f'the sheet "{table.title}" is hidden; blendkit reads it like the others')
        reading.notes.extend(_hidden_notes(table))
        for index, found in sorted(table.unheaded.items()):
            _unheaded(table, index, found, strict, problems, reading.notes)
        for span in sorted(table.layout.merged):
            if _covers_data(table, span):
                _merged_data(table, span, strict, problems, reading.notes)


def _hidden_notes(table: Table) -> list[str]:
    """Notes naming the table's hidden rows and hidden headed columns."""
    notes = []
    rows = table.layout.hidden_rows & {table.header_row, *table.row_numbers}
    if rows:
        notes.append(_hidden_note(table.title, rows, "row", str))
    columns = table.layout.hidden_columns & {column.index for column in table.columns}
    if columns:
        notes.append(_hidden_note(table.title, columns, "column", get_column_letter))
    return notes


def _hidden_note(title: str, numbers: set[int], word: str, show) -> str:
    """A note naming hidden rows or columns, such as "Ingredients: rows 3–4 are hidden; ..."."""
    if len(numbers) == 1:
        return f"{title}: {word} {_spans(numbers, show)} is hidden; blendkit reads it like the others"
    return f"{title}: {word}s {_spans(numbers, show)} are hidden; blendkit reads them like the others"


def _unheaded(
    table: Table, index: int, found: Unheaded, strict: bool, problems: list[Problem], notes: list[str]
) -> None:
    """A problem (numbers in Ingredients) or a note for data under a blank header cell."""
    letter = get_column_letter(index)
    header = f"{letter}{table.header_row}"
    merge = _merge_over(table, table.header_row, index)
    why = (f"{header} is covered by the merged cells {_range(merge)}, so column {letter} has no header "
           "of its own" if merge else f"column {letter} has no header")
    more = f" and {found.count - 1} more below" if found.count > 1 else ""
    if strict and found.numbers:
        fix = ("unmerge the header cells and give each column its own header" if merge else
               f'type the nutrient\'s name and unit in {header}, as in "Crude protein (%)"')
        problems.append(Problem(f"{table.title}!{header}", (
            f"{why}, but holds numbers ({found.first.ref}{more}), which are not read; {fix}, "
            "or clear the column"
        )))
        return
    cells = f"{found.count} cells are" if found.count > 1 else "cell is"
    notes.append(f"{table.title}: {why}, so its {cells} not read ({found.first.ref}{more})")


def _merged_data(table: Table, span: Span, strict: bool, problems: list[Problem], notes: list[str]) -> None:
    """A problem (Ingredients) or a note for merged cells over data rows of a read column."""
    first = f"{get_column_letter(span[1])}{span[0]}"
    message = (f"the cells {_range(span)} are merged, so only {first} holds a value and the others "
               "read as blank")
    if strict:
        problems.append(Problem(f"{table.title}!{first}", (
            f"{message} (a content as 0); unmerge them and type the value in each row"
        )))
    else:
        notes.append(f"{table.title}: {message}")


def _covers_data(table: Table, span: Span) -> bool:
    """True when a merged range blanks a cell of a headed column below the header row."""
    first_row, first_column, last_row, last_column = span
    for column in table.columns:
        if not first_column <= column.index <= last_column:
            continue
        lowest = max(first_row, table.header_row + 1)
        if column.index == first_column and lowest == first_row:
            lowest += 1  # the range's first cell keeps its value
        if lowest <= last_row:
            return True
    return False


def _merge_over(table: Table, row: int, column: int) -> Span | None:
    """The merged range that covers (row, column) without starting there, or None."""
    for span in table.layout.merged:
        first_row, first_column, last_row, last_column = span
        inside = first_row <= row <= last_row and first_column <= column <= last_column
        if inside and (row, column) != (first_row, first_column):
            return span
    return None


def _range(span: Span) -> str:
    """A merged range as a spreadsheet writes it, such as D1:E1."""
    first_row, first_column, last_row, last_column = span
    return f"{get_column_letter(first_column)}{first_row}:{get_column_letter(last_column)}{last_row}"


def _spans(numbers, show) -> str:
    """Numbers as runs, such as "5, 9–12" (rows) or "F, H–J" (columns, with `show`)."""
    runs: list[list[int]] = []
    for number in sorted(numbers):
        if runs and number == runs[-1][1] + 1:
            runs[-1][1] = number
        else:
            runs.append([number, number])
    return ", ".join(show(low) if low == high else f"{show(low)}–{show(high)}" for low, high in runs)

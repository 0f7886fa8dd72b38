"""Read back the record of an earlier run from its output workbook.

Only the hidden "Result data" sheet is read (`blendkit.model.record` describes it); the
visible sheets are for people and may change their layout. A workbook without a usable
record raises `NoRecord`, saying why, so the caller can note it; nothing here ever
raises anything else for a bad file.
"""

from __future__ import annotations

import io
import json
from pathlib import Path

from openpyxl import load_workbook

from blendkit.read.package import open_archive, worksheet_parts
from blendkit.read.saved_values import sheet_values

from blendkit.model import record
from blendkit.model.record import RecordedFormula, RunRecord

# Sheets every blendkit output workbook has had, by lower-case title: a workbook with one
# of them but no record is an output of an older version.
_OUTPUT_SHEETS = {"result", "run info"}
_ROW_KINDS = (record.COST, record.INCLUSION, record.PRICE, record.NUTRIENT, record.BINDING)


class NoRecord(Exception):
    """Why a workbook gives no earlier run to compare with.

    `output` is True for an output workbook without a usable record (an older version's,
    or a damaged one), False for a file that is not a blendkit output workbook at all.
    """

    def __init__(self, message: str, *, output: bool):
        super().__init__(message)
        self.output = output


def read_run_record(path: Path, data: bytes | None = None) -> RunRecord:
    """The run recorded in the output workbook at `path` (or in its bytes `data`).

    Raises NoRecord when the file cannot be read as a workbook, is not an output
    workbook, or holds no usable record.
    """
    path = Path(path)
    rows, titles = _record_rows(path, data)
    if rows is None:
        if titles & _OUTPUT_SHEETS:
            raise NoRecord(f"{path.name} was written by an older version of blendkit, without "
                           f"the {record.SHEET} sheet that a comparison needs", output=True)
        raise NoRecord(f"{path.name} is not a blendkit output workbook (it has no "
                       f"{record.SHEET} sheet)", output=False)
    try:
        return _parse(rows, path.name)
    except ValueError as error:
        raise NoRecord(f"the {record.SHEET} sheet of {path.name} cannot be read: {error}", output=True) from None


def _record_rows(path: Path, data: bytes | None) -> tuple[list[tuple] | None, set[str]]:
    """The record sheet's rows (None without one) and every sheet's lower-case title: read
    straight from the package (a plant's record of 10,000 rows took openpyxl 0.4 s), and
    by openpyxl when anything there is not as blendkit writes it."""
    try:
        return _rows_from_package(path, data)
    except Exception:  # a damaged, foreign or unusual file: openpyxl's reader decides, and says why
        return _rows_by_openpyxl(path, data)


def _rows_from_package(path: Path, data: bytes | None) -> tuple[list[tuple] | None, set[str]]:
    """`_record_rows` from the worksheet part itself (`read.saved_values.sheet_values`)."""
    with open_archive(data if data is not None else path.read_bytes()) as archive:
        parts = worksheet_parts(archive)
        titles = {title.casefold() for title in parts.values()}
        part = next((part for part, title in parts.items() if title.casefold() == record.SHEET.casefold()), None)
        if part is None:
            return None, titles
        cells = sheet_values(archive, part)
    rows = [[None] * len(record.HEADER) for _ in range(max((row for row, _ in cells), default=0))]
    for (row, column), (_, value) in cells.items():
        if column <= len(record.HEADER):
            rows[row - 1][column - 1] = value
    return [tuple(row) for row in rows], titles


def _rows_by_openpyxl(path: Path, data: bytes | None) -> tuple[list[tuple] | None, set[str]]:
    """`_record_rows` by openpyxl's read-only reader."""
    try:
        book = load_workbook(io.BytesIO(data) if data is not None else path, read_only=True, data_only=True)
    except FileNotFoundError:
        raise NoRecord(f"{path}: no such file", output=False) from None
    except Exception as error:  # a damaged or foreign file raises many kinds: all mean "no record"
        raise NoRecord(f"{path.name} cannot be read as a workbook ({type(error).__name__})", output=False) from None
    try:
        titles = {title.casefold(): title for title in book.sheetnames}
        title = titles.get(record.SHEET.casefold())
        if title is None:
            return None, set(titles)
        return [tuple(row) for row in book[title].iter_rows(values_only=True)], set(titles)
    except Exception as error:  # as above: a damaged sheet is a note, never a crash
        raise NoRecord(f"the {record.SHEET} sheet of {path.name} cannot be read "
                       f"({type(error).__name__})", output=True) from None
    finally:
        book.close()


def _parse(rows: list[tuple], output: str) -> RunRecord:
    """The RunRecord in the sheet's rows; ValueError naming the first bad row."""
    rows = [tuple(row[:4]) + (None,) * (4 - len(row)) for row in rows]
    if len(rows) < 2 or rows[0] != record.HEADER:
        raise ValueError(f"its first row is not {', '.join(record.HEADER)}")
    _check_format(rows[1])
    run: dict[str, str] = {}
    formulas: dict[str, dict] = {}
    basis: list[tuple[tuple[str, ...], int]] = []
    for number, (key, what, name, value) in enumerate(rows[2:], start=3):
        if key in (None, ""):
            if what in record.RUN_ROWS:
                run[record.RUN_ROWS[what]] = "" if value is None else str(value)
            elif what == record.BASIS:
                basis += _basis_row(name, value)
            continue
        if what not in _ROW_KINDS:
            raise ValueError(f"row {number}: unknown item {what!r}")
        _add_row(formulas.setdefault(str(key), {}), what, name, value, number)
    missing = [field for field in ("input_name", "mode", "status") if field not in run]
    if missing:
        raise ValueError(f"it does not say the run's {', '.join(missing)}")
    recorded = tuple(_formula(key, items) for key, items in formulas.items())
    return RunRecord(**{"input_sha256": "", "started_utc": "", "tool_version": "", **run},
                     formulas=recorded, output=output, basis=tuple(basis))


def _basis_row(name: object, value: object) -> list[tuple[tuple[str, ...], int]]:
    """One basis row as [(label, state)], or [] when it is not one we wrote: the basis
    only saves time, so a damaged row is passed over, never an error."""
    if not isinstance(name, str) or value not in (1, 2):
        return []
    try:
        label = json.loads(name)
    except ValueError:
        return []
    if not isinstance(label, list) or not all(isinstance(part, str) for part in label):
        return []
    return [(tuple(label), int(value))]


def _check_format(row: tuple) -> None:
    """Refuse a record that is not ours, or of a later form than this version reads."""
    _, what, name, value = row
    if what != "record" or name != record.RECORD_NAME or not _is_number(value):
        raise ValueError("its second row does not mark a blendkit record")
    if value > record.FORMAT:
        raise ValueError(f"its form ({value:g}) is newer than this version of blendkit reads")


def _add_row(items: dict, what: str, name: object, value: object, number: int) -> None:
    """Put one formula row into `items` (what -> value, or what -> {name: value})."""
    if what == record.COST:
        if not _is_number(value):
            raise ValueError(f"row {number}: the cost is not a number")
        items[what] = float(value)
        return
    if name in (None, ""):
        raise ValueError(f"row {number}: no name for the {what}")
    if value is None and what in (record.NUTRIENT, record.BINDING):
        items.setdefault(what, {})[str(name)] = None
        return
    if not _is_number(value):
        raise ValueError(f"row {number}: the {what} of {name} is not a number")
    items.setdefault(what, {})[str(name)] = float(value)


def _formula(key: str, items: dict) -> RecordedFormula:
    """One recorded formula from its rows."""
    if record.COST not in items:
        raise ValueError(f"formula {key!r} has no cost")
    return RecordedFormula(
        key=key,
        cost=items[record.COST],
        inclusions=items.get(record.INCLUSION, {}),
        prices=items.get(record.PRICE, {}),
        nutrients=items.get(record.NUTRIENT, {}),
        binding=items.get(record.BINDING, {}),
    )


def _is_number(value: object) -> bool:
    """True for an int or float cell value that is finite (never a bool)."""
    return isinstance(value, (int, float)) and not isinstance(value, bool) and value == value and abs(value) != float("inf")

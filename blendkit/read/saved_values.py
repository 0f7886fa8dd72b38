"""The results saved with a workbook's formula cells, read straight from the package.

A spreadsheet program stores each formula cell with its last result (``<c><f>B2*2</f>
<v>42</v></c>``). openpyxl keeps one of the two per load, so reading both used to cost a
second full load of the workbook. Only formula cells differ between the two loads, so
`saved_values` scans the worksheet parts for them alone: a part without a formula element
is skipped after one search of its bytes, and a part with formulas is parsed as a stream
(defusedxml, never the whole tree) keeping only the formula cells.

The values are as the file stores them, cast as openpyxl would cast them (numbers, text,
booleans, error text); `SavedValue` turns one into what a results-only load would show,
dates included. The reader (`blendkit.read.tables`) and the writer (the saved results put
back into the output, `blendkit.write.workbook.saved_results`) both use it.
"""

from __future__ import annotations

import html
import io
import re
import zipfile
from dataclasses import dataclass

from defusedxml import ElementTree

from blendkit.read.package import open_archive, worksheet_parts

_MAIN_NS = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
_ROW, _CELL, _FORMULA = f"{_MAIN_NS}row", f"{_MAIN_NS}c", f"{_MAIN_NS}f"
_VALUE, _INLINE = f"{_MAIN_NS}v", f"{_MAIN_NS}is"
_TEXT, _RUN = f"{_MAIN_NS}t", f"{_MAIN_NS}r"
_SHARED_STRINGS = "xl/sharedStrings.xml"
# A formula element, with or without a namespace prefix: a part without one is skipped.
_ANY_FORMULA = re.compile(rb"<(?:[A-Za-z_][\w.-]{0,31}:)?f[\s/>]")
_REFERENCE = re.compile(r"\$?([A-Za-z]{1,3})\$?(\d+)")
# A cell as openpyxl writes it: a reference, a style, a type, and a value, inline text or
# nothing; text and values without markup inside (entities only).
_PLAIN_CELL = re.compile(
    rb'<c r="([A-Z]{1,3})(\d+)"(?: s="\d+")?(?: t="(n|s|b|str|e|inlineStr)")?'
    rb'(?:/>|>(?:<v>([^<]*)</v>|<is><t(?: xml:space="preserve")?>([^<]*)</t></is>)?</c>)')
# An element with a namespace prefix (<x:c ...>): such a part is left to the parser.
_PREFIXED = re.compile(rb"<[A-Za-z_][\w.-]*:")

# A sheet's saved formula results: by (row, column), the cell's type code as the file
# gives it (t="n", "s", "str", "b", "e", "inlineStr") and its value as openpyxl casts it.
SheetValues = dict[tuple[int, int], tuple[str, object]]


@dataclass(frozen=True)
class SavedValue:
    """A formula cell as a results-only load shows it: the saved value, its data type
    (openpyxl's codes: "n", "s", "b", "e", "d", or "str" for an empty text result) and
    the formula cell's number format and coordinate."""

    value: object
    data_type: str
    number_format: str
    coordinate: str


def saved_values(data: bytes) -> dict[str, SheetValues]:
    """Per sheet title, the saved result of every formula cell of the workbook `data`.

    May raise any error of `zipfile` or of the XML parser for a damaged package; the
    reader has opened the workbook with openpyxl first, so such a package never gets here.
    """
    found: dict[str, SheetValues] = {}
    with open_archive(data) as archive:
        strings: list[str] | None = None
        for part, title in worksheet_parts(archive).items():
            if part not in archive.NameToInfo:
                continue
            xml = archive.read(part)
            if not _ANY_FORMULA.search(xml):
                continue
            cells = _formula_cells(xml)
            if any(kind == "s" for kind, _ in cells.values()):
                strings = strings if strings is not None else _shared_strings(archive)
                cells = {where: _looked_up(kind, value, strings) for where, (kind, value) in cells.items()}
            if cells:
                found[title] = cells
    return found


def shown_value(stored: tuple[str, object] | None, number_format: str, coordinate: str, epoch) -> SavedValue:
    """What a results-only load of the workbook shows in a formula cell (`stored` as
    `saved_values` found it, None when the cell has no saved result), dates as dates."""
    from openpyxl.styles.numbers import is_date_format, is_timedelta_format
    from openpyxl.utils.datetime import from_excel, from_ISO8601

    kind, value = stored if stored is not None else ("n", None)
    if value is None:
        return SavedValue(None, kind, number_format, coordinate)
    data_type = {"str": "s", "inlineStr": "s"}.get(kind, kind)
    if data_type == "d":
        return SavedValue(from_ISO8601(value), data_type, number_format, coordinate)
    if data_type == "n" and is_date_format(number_format):
        try:
            value = from_excel(value, epoch, timedelta=is_timedelta_format(number_format))
            data_type = "d"
        except (OverflowError, ValueError):
            value, data_type = "#VALUE!", "e"
    return SavedValue(value, data_type, number_format, coordinate)


def sheet_values(archive: zipfile.ZipFile, part: str) -> SheetValues:
    """Every cell of the worksheet `part` by position, with its value as a results-only
    load gives it (shared strings looked up; dates left as stored numbers). A part whose
    cells all have the plain form openpyxl writes is read by one pattern (`_PLAIN_CELL`,
    ten times faster than the parser), any other by the XML parser."""
    xml = archive.read(part)
    cells = _plain_cells(xml)
    if cells is None:
        cells = _formula_cells(xml, every_cell=True)
    if any(kind == "s" for kind, _ in cells.values()):
        strings = _shared_strings(archive)
        cells = {where: _looked_up(kind, value, strings) for where, (kind, value) in cells.items()}
    return cells


def _plain_cells(xml: bytes) -> SheetValues | None:
    """Every cell of a part written in the plain form, or None when any cell is not."""
    found = _PLAIN_CELL.findall(xml)
    if len(found) != xml.count(b"<c ") or xml.count(b"<c>") or b"<!" in xml or _PREFIXED.search(xml):
        return None
    cells: SheetValues = {}
    for letters, number, kind, value, text in found:
        kind = kind.decode() or "n"
        if kind == "inlineStr":
            cells[_position(f"{letters.decode()}{number.decode()}", 0, 0)] = (kind, html.unescape(text.decode()))
            continue
        stored = html.unescape(value.decode()) if value else None
        cells[_position(f"{letters.decode()}{number.decode()}", 0, 0)] = _cast(kind, stored)
    return cells


def _formula_cells(xml: bytes, every_cell: bool = False) -> SheetValues:
    """The formula cells (or `every_cell`) of one worksheet part, by position, with their
    saved values."""
    cells: SheetValues = {}
    row = column = 0
    for event, element in ElementTree.iterparse(io.BytesIO(xml), events=("start", "end")):
        tag = element.tag
        if event == "start":
            if tag == _ROW:  # as openpyxl counts rows: the row's number, else the next
                number = element.get("r")
                row, column = (int(number) if number else row + 1), 0
            continue
        if tag == _CELL:
            row, column = _position(element.get("r"), row, column)
            if every_cell or element.find(_FORMULA) is not None:
                cells[(row, column)] = _cell_value(element)
            element.clear()
        elif tag == _ROW:
            element.clear()
    return cells


def _position(reference: str | None, row: int, previous: int) -> tuple[int, int]:
    """A cell's row and column from its reference, else (as openpyxl does without one)
    the current row and the column after the previous cell."""
    match = _REFERENCE.fullmatch(reference or "")
    if match is None:
        return row, previous + 1
    number = 0
    for letter in match[1].upper():
        number = number * 26 + ord(letter) - ord("A") + 1
    return int(match[2]), number


def _cell_value(element) -> tuple[str, object]:
    """One formula cell's saved value as the file stores it, cast as openpyxl does."""
    kind = element.get("t", "n")
    if kind == "inlineStr":
        inline = element.find(_INLINE)
        text = None if inline is None else _text_of(inline)
        return kind, text
    return _cast(kind, element.findtext(_VALUE) or None)


def _cast(kind: str, value: str | None) -> tuple[str, object]:
    """A stored value of type `kind` cast as openpyxl casts it."""
    if value is None:
        return kind, None
    if kind == "n":
        return kind, _number(value)
    if kind == "b":
        return kind, bool(int(value))
    return kind, value  # "s" (an index, looked up later), "str", "e", "d"


def _number(text: str) -> int | float:
    """A stored number as openpyxl casts it: an int unless it has a point or exponent."""
    if "." in text or "E" in text or "e" in text:
        return float(text)
    return int(text)


def _looked_up(kind: str, value: object, strings: list[str]) -> tuple[str, object]:
    """A shared-string result replaced by its text."""
    if kind != "s" or value is None:
        return kind, value
    index = int(value)
    return kind, strings[index] if 0 <= index < len(strings) else None


def _shared_strings(archive: zipfile.ZipFile) -> list[str]:
    """The package's shared strings, each the text of all its runs."""
    if _SHARED_STRINGS not in archive.NameToInfo:
        return []
    tree = ElementTree.fromstring(archive.read(_SHARED_STRINGS))
    return [_text_of(item) for item in tree.iter(f"{_MAIN_NS}si")]


def _text_of(item) -> str:
    """A string item's text as openpyxl reads it: its own text and its runs' text (the
    phonetic guides left out)."""
    parts = [item.findtext(_TEXT) or ""]
    parts.extend(run.findtext(_TEXT) or "" for run in item.iter(_RUN))
    return "".join(parts)


"""Put the input's saved formula results back into the output workbook.

openpyxl keeps a formula or its saved result, never both. Without the results, solving
the output workbook again would fail (the reader needs them) until it is opened and
saved in a spreadsheet program. So the results are read from the input package (`saved_results`) and
put back into the saved package (`with_saved_results`), each worksheet part patched as text so that everything else in
it stays exactly as openpyxl wrote it.
"""

from __future__ import annotations

import io
import re
import zipfile
from xml.etree import ElementTree

from openpyxl.utils.datetime import from_ISO8601, to_excel
from openpyxl.workbook.workbook import Workbook

from blendkit.read.saved_values import saved_values

# The saved results of one workbook: per sheet title, per cell ("B2"), the value.
SavedResults = dict[str, dict[str, object]]

# Namespaces of the spreadsheet package parts we touch.
_MAIN_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_REL_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
# A cell element (empty or not), its formula and its value, in a worksheet part.
_CELL_ELEMENT = re.compile(r"<c\b(?P<attrs>[^>]*?)(?:/>|>(?P<body>.*?)</c>)", re.DOTALL)
_FORMULA_ELEMENT = re.compile(r"<f\b[^>]*?(?:/>|>.*?</f>)", re.DOTALL)
_VALUE_ELEMENT = re.compile(r"<v\b[^>]*?(?:/>|>.*?</v>)", re.DOTALL)
# The error values a formula can leave as its result.
_ERROR_VALUES = {"#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A",
                 "#GETTING_DATA"}


def saved_results(data: bytes, workbook: Workbook) -> SavedResults:
    """The results saved with the formula cells of `workbook` (loaded from `data`), per
    sheet title and cell, as the file stores them (dates as serial numbers), read from
    the package (`blendkit.read.saved_values`) rather than by a second load."""
    stored = saved_values(data)
    saved: SavedResults = {}
    for sheet in workbook.worksheets:
        values = stored.get(sheet.title, {})
        cells: dict[str, object] = {}
        # The stored cells only (openpyxl keeps them in `_cells`): iter_rows would make a
        # cell for every empty position up to the last used row, which for one formatted
        # cell in row 1,048,576 takes minutes and gigabytes.
        for (row, column), cell in sheet._cells.items():
            if cell.data_type != "f":
                continue
            kind, value = values.get((row, column), ("n", None))
            if kind == "d" and value is not None:  # an ISO date: stored back as a serial number
                value = to_excel(from_ISO8601(value), workbook.epoch)
            if value is not None:
                cells[cell.coordinate] = value
        if cells:
            saved[sheet.title] = cells
    return saved


def with_saved_results(content: bytes, saved: SavedResults) -> bytes:
    """The saved workbook `content` with each input formula cell's saved result restored."""
    if not saved:
        return content
    with zipfile.ZipFile(io.BytesIO(content)) as archive:
        members = [(info, archive.read(info)) for info in archive.infolist()]
    parts = _worksheet_parts(dict((info.filename, data) for info, data in members))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        for info, data in members:
            title = parts.get(info.filename)
            if title in saved:
                data = _restore_results(data, saved[title])
            archive.writestr(info, data)
    return out.getvalue()


def _worksheet_parts(members: dict[str, bytes]) -> dict[str, str]:
    """Map each worksheet's part name in the package to its sheet title."""
    rels = ElementTree.fromstring(members["xl/_rels/workbook.xml.rels"])
    targets = {}
    for rel in rels:
        target = rel.get("Target", "")
        targets[rel.get("Id")] = target.lstrip("/") if target.startswith("/") else f"xl/{target}"
    book = ElementTree.fromstring(members["xl/workbook.xml"])
    parts = {}
    for sheet in book.iter(f"{{{_MAIN_NS}}}sheet"):
        target = targets.get(sheet.get(f"{{{_REL_NS}}}id"))
        if target:
            parts[target] = sheet.get("name")
    return parts


def _restore_results(xml: bytes, results: dict[str, object]) -> bytes:
    """Fill in the result of each formula cell of one worksheet part.

    The part is patched as text, cell by cell, rather than parsed and written again, so
    everything else in it stays exactly as openpyxl wrote it.
    """

    def patch(match: re.Match) -> str:
        attrs, body = match.group("attrs"), match.group("body")
        where = re.search(r'\br="\$?([A-Z]+)\$?([0-9]+)"', attrs)
        formula = body and _FORMULA_ELEMENT.search(body)
        value = results.get(where.group(1) + where.group(2)) if where else None
        if value is None or not formula:
            return match.group(0)
        kind, text = _result_text(value)
        attrs = re.sub(r'\s+t="[^"]*"', "", attrs) + f' t="{kind}"'
        rest = _VALUE_ELEMENT.sub("", body[formula.end():])
        return f"<c{attrs}>{body[:formula.end()]}<v>{text}</v>{rest}</c>"

    return _CELL_ELEMENT.sub(patch, xml.decode("utf-8")).encode("utf-8")


def _result_text(value: object) -> tuple[str, str]:
    """A saved result as a cell type code and the text of its <v> element."""
    if isinstance(value, bool):
        return "b", "1" if value else "0"
    if isinstance(value, int):
        return "n", str(value)
    if isinstance(value, float):
        return "n", repr(value)
    if isinstance(value, str) and value in _ERROR_VALUES:
        return "e", value
    return "str", _xml_escape(str(value))


def _xml_escape(text: str) -> str:
    """&, < and > as XML entities, as xml.sax.saxutils.escape does (which brings in urllib)."""
    return text.replace("&", "&amp;").replace(">", "&gt;").replace("<", "&lt;")

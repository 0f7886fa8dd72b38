"""Big input sheets copied into the output as the input stores them, not written again.

openpyxl writes about 200,000 cells a second, so re-writing a 2,000-ingredient sheet of
400,000 unchanged cells took as long as reading it. Every input sheet is kept unchanged
(only its print settings and view change, which live outside its cells), so a big one's
cells are held back while openpyxl saves the workbook: openpyxl writes the sheet's
settings, columns, merged ranges and print layout as always, around an empty cell table.
The input's own cell table (its ``<sheetData>`` element, rows and cells with their saved
formula results) then takes that place, byte for byte.

Why the copied cells still mean what they meant in the input:

* style indices: openpyxl keeps the input's cell formats (``cellXfs``) in their order and
  adds the output's after them, so a cell's ``s="7"`` names the same format;
* text: cells may refer to the input's shared strings by index; openpyxl writes its own
  text inline and no shared strings at all, so the input's shared strings part is added
  as it is, with its relationship and content type;
* namespaces: the prefixes the input's worksheet declares (``x14ac:dyDescent`` on rows,
  say) are declared on the output's worksheet too, with the input's ``mc:Ignorable``.

A sheet is copied only when that holds and nothing the writer does reaches its cells: it
has at least `LEAST_COPIED_CELLS` cells (below that, now that cells are written as text,
copying saves no time, and the ordinary path is the one every spreadsheet program has
opened), no price-list value was written into it, none of its cells has a comment or a
hyperlink, and its part in the input is found with one cell table. Any other sheet is
written by openpyxl as before.
"""

from __future__ import annotations

import io
import re
import zipfile
from dataclasses import dataclass, field

from openpyxl.workbook.workbook import Workbook

from blendkit.read.package import open_archive, shared_strings_part, worksheet_parts

# A sheet with at least this many stored cells is copied rather than written again.
# Measured since cells are written as text (`sheet_rows`): the write step, copied and
# written in alternating runs, load 1.2-2. Copying was 4-9 % slower for sheets of 5,000
# to 40,000 cells and no faster at 100,000; it gained 2-4 % on ingredient tables of 200,000 and
# 400,000 cells (1,600 x 120 and 2,000 x 200 nutrients), and still lost on a long narrow
# one (12,000 x 30, 400,000 cells: 16 %), as the copy zips every other part again.
LEAST_COPIED_CELLS = 200_000

_WORKSHEET = re.compile(rb"<(?:([A-Za-z_][\w.-]*):)?worksheet\b([^>]*)>")
_DECLARATION = re.compile(rb"""\sxmlns(?::([A-Za-z_][\w.-]*))?\s*=\s*("[^"]*"|'[^']*')""")
_IGNORABLE = re.compile(rb"""\s[A-Za-z_][\w.-]*:Ignorable\s*=\s*("[^"]*"|'[^']*')""")
_SHEET_DATA = re.compile(rb"<(?:([A-Za-z_][\w.-]*):)?sheetData\b[^>]*?(/?)>")
_DIMENSION = re.compile(rb"<dimension\b[^>]*?/>")
_SHARED_TEXT = re.compile(rb"""<(?:[A-Za-z_][\w.-]*:)?c\b[^>]*?\st\s*=\s*["']s["']""")
_MAIN_NS = b"http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_MC_NS = b"http://schemas.openxmlformats.org/markup-compatibility/2006"
_STRINGS_PART = "xl/sharedStrings.xml"
_STRINGS_TYPE = "application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"
_STRINGS_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships/sharedStrings"


@dataclass
class Held:
    """The sheets whose cells are held back during one save: each sheet's stored cells
    (to give back), its dimension and the input part it is copied from."""

    cells: dict = field(default_factory=dict)  # sheet -> its `_cells`
    dimensions: dict = field(default_factory=dict)  # sheet -> "A1:GT2001"
    parts: dict = field(default_factory=dict)  # sheet -> (its input cell table, namespaces, mc:Ignorable)
    strings: bytes | None = None  # the input's shared strings part

    def restore(self) -> None:
        """Give every held sheet its cells back."""
        for sheet, cells in self.cells.items():
            sheet._cells = cells

    def titles(self) -> set[str]:
        """The titles of the copied sheets (their saved formula results come with them)."""
        return {sheet.title for sheet in self.cells}


def hold_back(workbook: Workbook, data: bytes, original_titles: dict, touched: set[str],
              least: int | None = None) -> Held:
    """Empty the cell table of each input sheet that can be copied (see the module
    docstring); `original_titles` gives each sheet's title in the input (before any
    rename), `touched` the titles of sheets a price list wrote into. Call `Held.restore`
    after the save, and `put_back` on the saved bytes."""
    least = LEAST_COPIED_CELLS if least is None else least
    held = Held()
    candidates = [sheet for sheet in workbook.worksheets
                  if len(sheet._cells) >= least and original_titles.get(sheet) is not None
                  and original_titles[sheet] not in touched and _plain_cells(sheet)]
    if not candidates:
        return held
    with open_archive(data) as archive:
        parts = {title: part for part, title in worksheet_parts(archive).items()}
        for sheet in candidates:
            part = parts.get(original_titles[sheet])
            found = _cell_table(archive.read(part)) if part in archive.NameToInfo else None
            if found is not None:
                held.parts[sheet] = found
        strings = shared_strings_part(archive)
        if held.parts and strings is not None and strings in archive.NameToInfo:
            held.strings = archive.read(strings)
    if held.strings is None:  # a table that refers to shared strings needs them
        held.parts = {sheet: found for sheet, found in held.parts.items() if not _SHARED_TEXT.search(found[0])}
    for sheet in held.parts:
        held.dimensions[sheet] = sheet.calculate_dimension()
        held.cells[sheet], sheet._cells = sheet._cells, {}
    return held


def _plain_cells(sheet) -> bool:
    """True when no cell has a comment or a hyperlink (openpyxl writes those from the
    cells, as it writes them)."""
    return not any(cell.comment is not None or cell.hyperlink is not None for cell in sheet._cells.values())


def _cell_table(xml: bytes) -> tuple[memoryview, bytes, bytes | None] | None:
    """An input worksheet part's cell table (its whole sheetData element), the namespace
    declarations of its worksheet element and its mc:Ignorable value; None when the part
    is not as expected (no worksheet element, a default namespace of another kind, or not
    exactly one cell table)."""
    root = _WORKSHEET.search(xml)
    starts = list(_SHEET_DATA.finditer(xml))
    if root is None or len(starts) != 1:
        return None
    declarations = {prefix: uri for prefix, uri in _DECLARATION.findall(root.group(2))}
    default = declarations.get(b"")
    if default is not None and default[1:-1] != _MAIN_NS:
        return None
    start = starts[0]
    prefix = start.group(1)
    if prefix is not None and prefix not in declarations:
        return None
    if start.group(2):  # <sheetData/>
        table = memoryview(start.group(0))
    else:
        closing = b"</" + (prefix + b":" if prefix else b"") + b"sheetData>"
        end = xml.find(closing, start.end())
        if end < 0:
            return None
        table = memoryview(xml)[start.start(): end + len(closing)]  # a view: the part may be 20 MB
    names = b"".join(b" xmlns:" + name + b"=" + uri for name, uri in declarations.items() if name)
    ignorable = _IGNORABLE.search(root.group(2))
    return table, names, ignorable.group(1) if ignorable else None


def put_back(content: bytes, held: Held) -> bytes | None:
    """The saved workbook `content` with each held sheet's cell table copied from the
    input (and the input's shared strings added); None when the package is not as this
    module expects (then the caller saves again with every cell). Written part by part,
    so that no more than one part is in memory twice."""
    if not held.parts:
        return content
    copied = {sheet.path.lstrip("/"): sheet for sheet in held.parts}
    out = io.BytesIO()
    with zipfile.ZipFile(io.BytesIO(content)) as source, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as target:
        names = set(source.NameToInfo)
        if _STRINGS_PART in names or "xl/_rels/workbook.xml.rels" not in names:
            return None
        for info in source.infolist():
            data = source.read(info)
            if info.filename in copied:
                sheet = copied[info.filename]
                pieces = _spliced(data, *held.parts.pop(sheet), held.dimensions[sheet])
                if pieces is None:
                    return None
                with target.open(info, "w") as stream:
                    for piece in pieces:
                        stream.write(piece)
                continue
            if held.strings is not None:
                data = _with_shared_strings(info.filename, data)
            target.writestr(info, data)
        if held.strings is not None:
            target.writestr(zipfile.ZipInfo(_STRINGS_PART, date_time=source.infolist()[0].date_time), held.strings,
                            compress_type=zipfile.ZIP_DEFLATED)
    return out.getvalue()


def _with_shared_strings(name: str, data: bytes) -> bytes:
    """The workbook's relationships and the content types, naming the shared strings part."""
    if name == "xl/_rels/workbook.xml.rels":
        return data.replace(b"</Relationships>", (
            f'<Relationship Id="blendkitSharedStrings" Type="{_STRINGS_REL}" '
            f'Target="sharedStrings.xml"/></Relationships>').encode())
    if name == "[Content_Types].xml":
        return data.replace(b"</Types>", (
            f'<Override PartName="/{_STRINGS_PART}" ContentType="{_STRINGS_TYPE}"/></Types>').encode())
    return data


def _spliced(xml: bytes, table: memoryview, names: bytes, ignorable: bytes | None,
             dimension: str) -> tuple[bytes, memoryview, bytes] | None:
    """openpyxl's part for a held sheet, in three pieces around the input's cell table:
    with the dimension openpyxl would have written and the input's namespace
    declarations; None when openpyxl's part has not one cell table."""
    starts = list(_SHEET_DATA.finditer(xml))
    if len(starts) != 1 or starts[0].group(1) is not None:
        return None
    start = starts[0]
    end = start.end() if start.group(2) else xml.find(b"</sheetData>", start.end()) + len(b"</sheetData>")
    if end < start.end():
        return None
    head = _DIMENSION.sub(f'<dimension ref="{dimension}"/>'.encode(), xml[:start.start()], count=1)
    root = _WORKSHEET.search(head)
    present = {prefix for prefix, _ in _DECLARATION.findall(root.group(2))}
    extra = b"".join(declaration for declaration in re.findall(rb" xmlns:[^=]+=(?:\"[^\"]*\"|'[^']*')", names)
                     if declaration[7:declaration.index(b"=")] not in present)
    if ignorable is not None and b"Ignorable" not in root.group(2):
        if b"mc" not in present and b" xmlns:mc=" not in extra:
            extra += b' xmlns:mc="' + _MC_NS + b'"'
        extra += b" mc:Ignorable=" + ignorable
    return head[:root.end() - 1] + extra + head[root.end() - 1:], table, xml[end:]

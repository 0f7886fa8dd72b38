"""The workbook's zip package, measured before any sheet is parsed.

An .xlsx file is a zip archive of XML parts. A small file can unpack to gigabytes (rows
repeated many times compress very well), and a spreadsheet library holds every stored
cell in memory, so both are checked here, from the archive alone, before openpyxl parses
anything:

* the unpacked size: the sum of the parts' sizes as the archive records them (unpacking
  never yields more than the recorded size, so this bounds the work);
* the number of cells: each part is scanned for cell elements (row and column formats
  count as cells too), and a merged range counts every cell it covers, because openpyxl
  makes an object for each.

Both limits are in `ReadLimits`; a user may raise them (``--max-cells``,
``--max-unpacked-mb``). The defaults fit any real formulation with a wide margin.
"""

from __future__ import annotations

import io
import posixpath
import re
import zipfile
from dataclasses import dataclass

from defusedxml import ElementTree

from blendkit.errors import Problem

# 2,000 ingredients x 300 nutrients is 600,000 cells; the default leaves room for three
# times that, or for other sheets of the same size.
DEFAULT_MAX_CELLS = 2_000_000
# Such a workbook unpacks to well under 100 MB of XML.
DEFAULT_MAX_UNPACKED_MB = 500.0

_MB = 1_000_000

# A cell, row or column element, with or without a namespace prefix: "<c r=...", "<x:c>",
# "<row r=...>", "<col min=...>". openpyxl makes an object for each, so each counts.
_CELL = re.compile(rb"<(?:[A-Za-z_][\w.-]{0,31}:)?(?:c|row|col)[\s/>]")
# A merged range, as a worksheet stores it: <mergeCell ref="B2:D4"/>.
_MERGE = re.compile(
    rb"<(?:[A-Za-z_][\w.-]{0,31}:)?mergeCell\s[^>]{0,200}?ref=[\"']"
    rb"([A-Za-z]{1,3})(\d{1,9})(?::([A-Za-z]{1,3})(\d{1,9}))?[\"']"
)
# How much of one chunk is kept for the next, so that no element is split between two
# chunks; longer than any match of _CELL or _MERGE.
_OVERLAP = 512
_CHUNK = 1 << 20

_RELS_NS = "{http://schemas.openxmlformats.org/package/2006/relationships}"
_MAIN_NS = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
_DOC_REL_NS = "{http://schemas.openxmlformats.org/officeDocument/2006/relationships}"


@dataclass(frozen=True)
class ReadLimits:
    """How large a workbook the reader accepts: cells in all worksheets together
    (formatted empty cells and merged ranges included) and the unpacked size in MB."""

    max_cells: int = DEFAULT_MAX_CELLS
    max_unpacked_mb: float = DEFAULT_MAX_UNPACKED_MB


def check_package(archive: zipfile.ZipFile, limits: ReadLimits, file_name: str) -> list[Problem]:
    """The problems of a workbook package larger than `limits` allow (none when it fits).

    Every part is scanned for cells, not only those the workbook names as worksheets: a
    spreadsheet library may find its sheets another way than the relationships say. May
    raise any error of `zipfile` or zlib for a damaged archive; the caller turns it into a
    problem with the file.
    """
    sheets = worksheet_parts(archive)
    too_big = _check_unpacked_size(archive, limits, sheets, file_name)
    if too_big:
        return [too_big]
    counts = {info.filename: _count_cells(archive, info) for info in archive.infolist()}
    total = sum(counts.values())
    if total <= limits.max_cells:
        return []
    biggest = max(counts, key=counts.get)
    where = sheets.get(biggest, file_name)
    holder = "the sheet holds" if biggest in sheets else f"the part {biggest} holds"
    return [Problem(where, (
        f"{holder} {counts[biggest]:,} cells (the workbook {total:,} in all, counting formatted "
        f"empty cells, rows and columns, and merged ranges), more than the limit of {limits.max_cells:,}; "
        "delete the unused rows and columns beyond the tables (cells formatted far below or to "
        "the right count too) and save the workbook again, or raise the limit with --max-cells"
    ))]


def _check_unpacked_size(
    archive: zipfile.ZipFile, limits: ReadLimits, sheets: dict[str, str], file_name: str
) -> Problem | None:
    """A problem when the parts unpack to more than the limit, placed on the largest part's
    sheet (or on the file, when that part is not a sheet)."""
    infos = archive.infolist()
    total = sum(info.file_size for info in infos)
    if not infos or total <= limits.max_unpacked_mb * _MB:
        return None
    largest = max(infos, key=lambda info: info.file_size)
    where = sheets.get(largest.filename, file_name)
    part = "this sheet" if largest.filename in sheets else f"the part {largest.filename}"
    return Problem(where, (
        f"the workbook unpacks to {_megabytes(total)} ({part} alone {_megabytes(largest.file_size)}), "
        f"more than the limit of {limits.max_unpacked_mb:g} MB; delete the unused rows, columns "
        "and sheets and save the workbook again, or raise the limit with --max-unpacked-mb"
    ))


def _megabytes(size: int) -> str:
    """A size for a message, in MB."""
    return f"{size / _MB:,.1f} MB"


def _count_cells(archive: zipfile.ZipFile, info: zipfile.ZipInfo) -> int:
    """The cells openpyxl would make for one part: its cell, row and column elements plus
    the cells its merged ranges cover (a merged range's first cell is usually stored too)."""
    count = 0
    carry = b""
    with archive.open(info) as stream:
        while True:
            chunk = stream.read(_CHUNK)
            buffer = carry + chunk
            # Matches that start in the kept overlap are counted with the next chunk.
            end = len(buffer) if not chunk else max(len(buffer) - _OVERLAP, 0)
            count += sum(1 for match in _CELL.finditer(buffer) if match.start() < end)
            count += sum(_merged_area(match) for match in _MERGE.finditer(buffer) if match.start() < end)
            if not chunk:
                return count
            carry = buffer[end:]


def _merged_area(match: re.Match) -> int:
    """How many cells one merged range covers."""
    first_column, first_row, last_column, last_row = match.groups()
    if last_column is None:
        return 1
    columns = abs(_column_number(last_column) - _column_number(first_column)) + 1
    return columns * (abs(int(last_row) - int(first_row)) + 1)


def _column_number(letters: bytes) -> int:
    """A column's number from its letters (A is 1, XFD is 16384); here rather than
    openpyxl's, so that the command line can import this module without openpyxl."""
    number = 0
    for letter in letters.upper():
        number = number * 26 + letter - ord("A") + 1
    return number


def worksheet_parts(archive: zipfile.ZipFile) -> dict[str, str]:
    """The worksheet parts of the package, each with its sheet's title.

    Found as a spreadsheet program finds them: the package's relationships name the
    workbook part, whose relationships name each sheet's part. Should that fail (a damaged
    package), every part in a "worksheets" folder counts, named by its path.
    """
    try:
        return _named_worksheet_parts(archive)
    except (KeyError, ValueError, SyntaxError, ElementTree.ParseError):
        return {
            name: name for name in archive.NameToInfo
            if "/worksheets/" in f"/{name}" and name.endswith(".xml")
        }


def _named_worksheet_parts(archive: zipfile.ZipFile) -> dict[str, str]:
    """The worksheet parts by the package's relationships (raises when they are unreadable)."""
    workbook_part = _relation_targets(archive, "_rels/.rels", "")["officeDocument"][0][1]
    folder, name = posixpath.split(workbook_part)
    relations = _relation_targets(archive, posixpath.join(folder, "_rels", f"{name}.rels"), folder)
    targets = {identity: target for identity, target in relations.get("worksheet", [])}
    workbook = ElementTree.fromstring(archive.read(workbook_part))
    parts = {}
    for sheet in workbook.iter(f"{_MAIN_NS}sheet"):
        target = targets.get(sheet.get(f"{_DOC_REL_NS}id"))
        if target is not None:
            parts[target] = sheet.get("name") or target
    return parts


def _relation_targets(archive: zipfile.ZipFile, rels_part: str, folder: str) -> dict[str, list[tuple[str, str]]]:
    """A relationships part: by relationship kind (the last word of its type), the
    (id, part path) of each target inside the package."""
    tree = ElementTree.fromstring(archive.read(rels_part))
    found: dict[str, list[tuple[str, str]]] = {}
    for relation in tree.iter(f"{_RELS_NS}Relationship"):
        kind = (relation.get("Type") or "").rsplit("/", 1)[-1]
        target = relation.get("Target") or ""
        path = target.lstrip("/") if target.startswith("/") else posixpath.normpath(posixpath.join(folder, target))
        found.setdefault(kind, []).append((relation.get("Id") or "", path))
    return found


def open_archive(data: bytes) -> zipfile.ZipFile:
    """The workbook's bytes as a zip archive (raises zipfile.BadZipFile when damaged)."""
    return zipfile.ZipFile(io.BytesIO(data))


def shared_strings_part(archive: zipfile.ZipFile) -> str | None:
    """The path of the workbook's shared strings part, by the package's relationships
    (None when it has none, or they are unreadable)."""
    try:
        workbook_part = _relation_targets(archive, "_rels/.rels", "")["officeDocument"][0][1]
        folder, name = posixpath.split(workbook_part)
        relations = _relation_targets(archive, posixpath.join(folder, "_rels", f"{name}.rels"), folder)
    except (KeyError, ValueError, SyntaxError, ElementTree.ParseError):
        return None
    found = relations.get("sharedStrings", [])
    return found[0][1] if found else None

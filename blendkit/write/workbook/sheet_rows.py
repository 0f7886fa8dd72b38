"""A worksheet's cell table (its ``<sheetData>``) written as plain text, byte for byte as
openpyxl 3.1 writes it.

openpyxl's `WorksheetWriter` writes each cell as an ElementTree element that et_xmlfile
serialises: about 7 us a cell on the development machine, 1.4 s of the 3.1 s write of a
40-product plant's output (200,000 cells). Here the common cells are formatted as strings,
a row at a time, and handed to the same text writer that openpyxl's own elements go
through (so encoding and order are unchanged), 1 us a cell:

* a number (int or finite float): ``<c r="B2" s="3" t="n"><v>0.1</v></c>``, the value as
  openpyxl's ``safe_string`` gives it (``"%.16g"``);
* text: ``<c r="B2" t="inlineStr"><is><t>a &amp; b</t></is></c>`` (openpyxl writes text
  inline and no shared strings), ``xml:space="preserve"`` when the text has spaces around
  it, the empty string as an empty cell;
* a formula (text after "="): ``<c r="B2"><f>SUM(A1:A9)</f><v /></c>``;
* a boolean (``t="b"``, 1 or 0), an error (``t="e"``, its text);
* a cell with a style and no value: ``<c r="B2" s="3" t="n" />``; a cell with neither is
  left out, as openpyxl leaves it out.

Every other cell (dates and times, rich text, array and data-table formulas, numbers of
other types such as Decimal or numpy's, NaN and infinities, cells with a comment or a
hyperlink, which openpyxl records while writing) goes to openpyxl's own cell writer, in
its place in the row. The rows are those of openpyxl's `rows` (`sorted_rows`), their
attributes (``ht``, ``customHeight``, ``hidden``, ``outlineLevel``...) those of its row
dimensions. Text is escaped as ElementTree escapes it. tests/test_in_memory_save.py compares every part with
`Workbook.save`'s.

The text path is taken only with the writer this was made for (et_xmlfile's, whose write
function the element writer holds); with lxml installed, or another shape, openpyxl's
`write_rows` writes the cells as before.
"""

from __future__ import annotations

from math import isfinite

from openpyxl.cell import _writer as cell_writer
from openpyxl.cell.cell import Cell, MergedCell
from openpyxl.comments.comment_sheet import CommentRecord
from openpyxl.utils.cell import get_column_letter
from openpyxl.worksheet import _writer as sheet_writer
from openpyxl.worksheet._writer import WorksheetWriter

# The type attribute openpyxl writes for each data type it writes as text here.
_TYPES = {"n": ' t="n"', "s": ' t="inlineStr"', "b": ' t="b"', "e": ' t="e"', "f": ""}


class SheetRowsWriter(WorksheetWriter):
    """openpyxl's worksheet writer with the cell table written as text (module docstring)."""

    def write_rows(self) -> None:
        """As `WorksheetWriter.write_rows`, each row formatted by `_RowText`."""
        if not _text_path_fits():
            super().write_rows()
            return
        xf = self.xf.send(True)
        write = _text_writer(xf)
        with xf.element("sheetData"):
            if write is None:  # another et_xmlfile: openpyxl's own rows
                for row_idx, row in self.rows():
                    self.write_row(xf, row, row_idx)
            else:
                rows = _RowText(self.ws, xf, write)
                for row_idx, row in sorted_rows(self.ws):
                    rows.write(row, row_idx)
        self.xf.send(None)  # as openpyxl: control back to its element stream


def sorted_rows(ws) -> list[tuple[int, list]]:
    """`WorksheetWriter.rows`: each row's number and its cells by column, rows with
    dimensions but no cells included, in order; grouped from the sorted cell keys
    (a third of openpyxl's time, which sorts the cells themselves into a defaultdict)."""
    cells = ws._cells
    rows: dict[int, list] = {}
    for key in sorted(cells):
        found = rows.get(key[0])
        if found is None:
            rows[key[0]] = [cells[key]]
        else:
            found.append(cells[key])
    for row in ws.row_dimensions.keys() - rows.keys():
        rows[row] = []
    return sorted(rows.items())


def _text_path_fits() -> bool:
    """The text is what openpyxl writes only while its cell writer is ElementTree's."""
    return sheet_writer.write_cell is cell_writer.etree_write_cell


def _text_writer(xf):
    """The text writer behind et_xmlfile's element writer (its elements' text goes
    through it), or None should et_xmlfile keep it elsewhere."""
    write = getattr(xf, "_file", None)
    return write if callable(write) else None


class _RowText:
    """The rows of one worksheet as text, each row handed to `write` at once."""

    def __init__(self, ws, xf, write) -> None:
        self.ws, self.xf, self.write_text = ws, xf, write
        self.dims = ws.row_dimensions
        self.add_style = ws.parent._cell_styles.add
        self.letters: dict[int, str] = {}
        self.style_ids: dict[bytes, int] = {}  # a look's bytes -> its index in the workbook

    def write(self, row: list, row_idx: int) -> None:
        """One ``<row>`` element and its cells, as `WorksheetWriter.write_row` writes them."""
        parts = [self._start(row_idx)]
        row_text = str(row_idx)
        for cell in row:
            kind = type(cell)
            if kind is Cell and cell._comment is None and cell._hyperlink is None:
                text = self._cell(cell, row_text if cell.row == row_idx else str(cell.row))
            elif kind is MergedCell:
                text = self._cell(cell, row_text if cell.row == row_idx else str(cell.row))
            else:
                text = None
            if text is None:  # openpyxl's own writer, after the text so far
                self.write_text("".join(parts))
                parts = []
                self._openpyxl_cell(cell)
            elif text:
                parts.append(text)
        parts.append("</row>")
        self.write_text("".join(parts))

    def _start(self, row_idx: int) -> str:
        """The row's start tag: its number and its dimension's attributes, in openpyxl's order."""
        attrs = {"r": f"{row_idx}"}
        attrs.update(self.dims.get(row_idx, {}))
        return "<row" + "".join(f' {key}="{_attribute(value)}"' for key, value in attrs.items()) + ">"

    def _cell(self, cell, row_text: str) -> str | None:
        """The cell's text ("" when openpyxl leaves it out), or None for openpyxl's writer."""
        value = cell._value
        style = cell._style
        styled = style is not None and any(style)
        if value is None and not styled:
            return ""
        data_type = cell.data_type
        inner = _inner(value, data_type)
        if inner is None:
            return None
        column = cell.column
        letter = self.letters.get(column)
        if letter is None:
            letter = self.letters[column] = get_column_letter(column)
        start = f'<c r="{letter}{row_text}" s="{self._style_id(style)}"' if styled else f'<c r="{letter}{row_text}"'
        kind = _TYPES.get(data_type)
        if kind is None:
            kind = _type_attribute(data_type)
        return f"{start}{kind} />" if inner == "" else f"{start}{kind}>{inner}</c>"

    def _style_id(self, style) -> int:
        """openpyxl's `cell.style_id`: the look's index, added to the workbook's looks the
        first time it is met (so in cell order, as openpyxl adds them), remembered by its
        bytes (equal arrays, equal bytes), which is quicker than the look's own hash."""
        key = style.tobytes()
        found = self.style_ids.get(key)
        if found is None:
            found = self.style_ids[key] = self.add_style(style)
        return found

    def _openpyxl_cell(self, cell) -> None:
        """One cell exactly as `WorksheetWriter.write_row` treats it (comments recorded)."""
        if cell._comment is not None:
            self.ws._comments.append(CommentRecord.from_cell(cell))
        if cell._value is None and not cell.has_style and not cell._comment:
            return
        sheet_writer.write_cell(self.xf, self.ws, cell, cell.has_style)


def _inner(value, data_type: str) -> str | None:
    """What goes inside ``<c>`` for the common cells ("" for none), or None when
    openpyxl's writer must write the cell."""
    kind = type(value)
    if value is None:  # a date's type comes from its value: openpyxl's writer
        return "" if data_type != "d" else None
    if data_type == "n":
        if kind is int or (kind is float and isfinite(value)):
            return f"<v>{'%.16g' % value}</v>"
        return None
    if data_type == "b":
        return ("<v>1</v>" if value else "<v>0</v>") if kind is bool else None
    if kind is not str:
        return None
    if data_type == "s":
        if value == "":
            return ""
        stripped = value.strip()
        space = ' xml:space="preserve"' if stripped and stripped != value else ""
        return f"<is><t{space}>{_escape(value)}</t></is>"
    if data_type == "f":
        return f"<f>{_escape(value[1:])}</f><v />" if len(value) > 1 else None
    if data_type == "e":
        return f"<v>{_escape(value)}</v>" if value else None
    return None


def _type_attribute(data_type: str) -> str:
    """The type attribute of a data type not in `_TYPES` (the "inlineStr" of a cell read
    from openpyxl's own empty text, say), as openpyxl writes it."""
    return f' t="{_attribute(data_type)}"'


def _escape(text: str) -> str:
    """Character data escaped as ElementTree escapes it (its _escape_cdata)."""
    if "&" in text:
        text = text.replace("&", "&amp;")
    if "<" in text:
        text = text.replace("<", "&lt;")
    if ">" in text:
        text = text.replace(">", "&gt;")
    return text


def _attribute(text: str) -> str:
    """An attribute value escaped as ElementTree escapes it (its _escape_attrib)."""
    text = _escape(text)
    if '"' in text:
        text = text.replace('"', "&quot;")
    if "\r" in text:
        text = text.replace("\r", "&#13;")
    if "\n" in text:
        text = text.replace("\n", "&#10;")
    if "\t" in text:
        text = text.replace("\t", "&#09;")
    return text

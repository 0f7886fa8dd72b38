"""Write the result workbook: the input sheets unchanged, plus the output sheets.

The writer renders a `Formula`; it computes nothing of its own. For the reviewer it adds
live spreadsheet formulas that recompute the blend cost and every nutrient level from the
input cells, so the numbers can be checked in any spreadsheet program.

Output sheets (replaced, never duplicated, when an output workbook is solved again), one
module each. A workbook property lists the sheets a run wrote, so that a later run replaces
only those: a user's own sheet of one of these names is kept as "<name> (input)".

* ``Result`` (`result`, `first_page`, `result_tables`, `live`, `spec_checks`, `tidy`,
  `layout`, `charts`): page one to sign (status, cost, spec check, binding limits, notes),
  then the ingredient and nutrient tables with live checks, stocks and charts.
* ``Overview`` (`overview`, several products only): one row per product, first.
* ``Batch sheet`` (`batch_sheet`, one per product with a formula: ``Batch sheet 2``, ...):
  what the mill weighs for one batch, its total, a live spec check and sign-off cells,
  on one printed page.
* ``Conflicts`` (`conflicts`, only when the run is infeasible): each conflicting set of
  limits and the least-cost way out. One left by an earlier run is removed when the
  workbook is now feasible.
* ``Changes`` (`changes`, only when the run was compared with an earlier result): what
  changed in each formula since then, and why.
* ``Shadow prices`` (`shadow_prices`): one row per limit the user wrote.
* ``Run info`` (`run_info`): tool version, time, input file name and SHA-256, status.
* ``Result data`` (`result_data`, hidden): the run's machine-readable record, which a
  later run reads back to show what changed.

Every sheet, the input sheets too, then gets the same print layout (`printing`): one page
wide, with the title, the page, the run time and the input's SHA-256 on every page. An
input sheet's cells are never changed, only its print settings.

The package is built in memory (`in_memory`: openpyxl's save, without a temporary file
per worksheet), and the save is atomic (`save`): a temporary file in the output's folder
is moved into place, so a failed run leaves no half-written output. The source file is only ever read; the
results saved with its formula cells are put back into the output (`saved_results`). A big
input sheet's cells are not written again: its cell table is copied from the input byte
for byte (`copied_sheets`).
"""

from __future__ import annotations

import hashlib
import io
from pathlib import Path

from openpyxl import load_workbook
from openpyxl.packaging.custom import StringProperty
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.blend import (
    OUTPUT_SHEETS_PROPERTY,
    is_output_title,
    kept_sheet_titles,
    output_sheets_value,
    written_sheets,
)
from blendkit.model.formula import Formula, RunInfo
from blendkit.write.workbook import (
    batch_sheet,
    changes,
    conflicts,
    copied_sheets,
    overview,
    printing,
    result,
    result_data,
    run_info,
    shadow_prices,
)
from blendkit.write.workbook.in_memory import workbook_bytes
from blendkit.write.workbook.replaced import mark_replaced
from blendkit.write.workbook.save import same_file, save_atomically
from blendkit.write.workbook.saved_results import saved_results, with_saved_results

# The output sheets, in tab order. Each is a module with TITLE (the sheet's name) and
# write(workbook, formula, run, title), which adds its sheet (or nothing, when the run
# does not call for it). A new output sheet is a module in this folder and one line here.
SHEET_WRITERS = (
    result,
    overview,  # written after Result (it links to its blocks), then moved first
    batch_sheet,  # one per product with a formula: "Batch sheet", "Batch sheet 2", ...
    conflicts,
    changes,
    shadow_prices,
    run_info,
    result_data,
)

# Sheets this writer owns. A sheet of one of these names (any case) is replaced when the
# workbook property OUTPUT_SHEETS_PROPERTY lists it (an earlier run wrote it), and kept
# under a new title otherwise (it is the user's). The model lists the same titles, for the
# reader to note what is kept.
OUTPUT_SHEETS = tuple(writer.TITLE for writer in SHEET_WRITERS)


def write_workbook(
    formula: Formula, run: RunInfo, source: Path, output: Path, *, data: bytes | None = None,
    loaded: Workbook | None = None,
) -> Path:
    """Write `formula` into a copy of the `source` workbook at `output`; return `output`.

    `data` is the source's bytes as they were read and solved (the pipeline passes them,
    so that the copy is of what was solved even if the file changes meanwhile); without
    it the file is read here. Every input sheet is kept unchanged; output sheets an earlier
    run wrote (see `OUTPUT_SHEETS`) are removed and written afresh, and a user's own sheet
    of such a name is kept under a new title. Without `data`, raises
    ValueError if `output` is the source file itself, or if the source no longer matches
    the SHA-256 recorded in `run`. The write is atomic: on any failure no output file is
    left behind and an existing output is untouched. `loaded` is the workbook of `data`
    as the reader loaded it (with its formulas, unchanged); the writer then uses it, and
    changes it, instead of loading `data` again.
    """
    source = Path(source)
    output = Path(output)
    if data is None:
        data = _read_source(source, output, run)
    workbook = loaded if loaded is not None and data is not None else load_workbook(io.BytesIO(data), data_only=False)
    kept = _make_room(workbook)
    mark_replaced(workbook, formula.blend.replaced)
    saved = saved_results(data, workbook)  # by the titles the input gives its sheets
    original_titles = {sheet: sheet.title for sheet in workbook.worksheets}
    _rename(workbook, kept)
    saved = {kept.get(title, title): cells for title, cells in saved.items()}
    title = formula.blend.settings.name or source.stem
    for writer in SHEET_WRITERS:
        writer.write(workbook, formula, run, title)
    # Input sheets too; each Batch sheet on one page.
    printing.apply_to_workbook(workbook, title, run, one_page=batch_sheet.written_titles(workbook))
    _mark_output_sheets(workbook)
    first = overview.TITLE if overview.TITLE in workbook.sheetnames else result.TITLE
    _show_first(workbook, workbook[first])
    # The live formulas on Result have no saved result yet: ask for a full recalculation.
    workbook.calculation.fullCalcOnLoad = True
    touched = {change.cell.rpartition("!")[0] for change in formula.blend.replaced}
    content, copied = _saved(workbook, data, original_titles, touched)
    saved = {title: cells for title, cells in saved.items() if title not in copied}
    save_atomically(with_saved_results(content, saved), output)
    return output


def _saved(workbook: Workbook, data: bytes, original_titles: dict, touched: set[str]) -> tuple[bytes, set[str]]:
    """The workbook saved, its big input sheets' cells copied from the input
    (`copied_sheets`), and the titles of those sheets; saved again with every cell written
    by openpyxl should the copy not fit the package openpyxl wrote."""
    held = copied_sheets.hold_back(workbook, data, original_titles, touched)
    try:
        saved = workbook_bytes(workbook)
    finally:
        held.restore()
    content = copied_sheets.put_back(saved, held)
    if content is not None:
        return content, held.titles()
    return workbook_bytes(workbook), set()


def _read_source(source: Path, output: Path, run: RunInfo) -> bytes:
    """The source's bytes, once sure the output is another file and the source is the one
    that was solved (its SHA-256 is the run's)."""
    if same_file(source, output):
        raise ValueError(
            f"output {output} is the input workbook itself; blendkit never overwrites its "
            "input. Choose another output file name."
        )
    data = source.read_bytes()
    digest = hashlib.sha256(data).hexdigest()
    if run.input_sha256 and digest != run.input_sha256.lower():
        raise ValueError(
            f"{source.name} changed since it was read (SHA-256 {digest}, expected "
            f"{run.input_sha256}); solve it again so the result matches the file."
        )
    return data


def _make_room(workbook: Workbook) -> dict[str, str]:
    """Drop the output sheets an earlier run wrote, so a second solve replaces rather than
    adds copies; return the user's own sheets of those names, each with the title it keeps
    (the reader has noted it; see `kept_sheet_titles`)."""
    written = written_sheets(_custom_property(workbook, OUTPUT_SHEETS_PROPERTY))
    fate = kept_sheet_titles(workbook.sheetnames, written)
    for sheet in list(workbook._sheets):  # worksheets and chart sheets alike
        if sheet.title in fate and fate[sheet.title] is None:
            workbook.remove(sheet)
    return {title: kept for title, kept in fate.items() if kept is not None}


def _rename(workbook: Workbook, kept: dict[str, str]) -> None:
    """Give each of the user's sheets named like an output sheet its new title."""
    for sheet in workbook._sheets:
        if sheet.title in kept:
            sheet.title = kept[sheet.title]


def _mark_output_sheets(workbook: Workbook) -> None:
    """Record in a workbook property which sheets this run wrote, so a later run removes
    these and no sheet of the user's."""
    written = [sheet.title for sheet in workbook._sheets if is_output_title(sheet.title)]
    properties = workbook.custom_doc_props
    if OUTPUT_SHEETS_PROPERTY in properties.names:
        del properties[OUTPUT_SHEETS_PROPERTY]
    properties.append(StringProperty(name=OUTPUT_SHEETS_PROPERTY, value=output_sheets_value(written)))


def _custom_property(workbook: Workbook, name: str) -> object:
    """The value of the workbook's custom document property `name`, or None."""
    for prop in workbook.custom_doc_props:
        if prop.name == name:
            return prop.value
    return None


def _show_first(workbook: Workbook, sheet: Worksheet) -> None:
    """Open the workbook on the Result sheet, with no other tab selected."""
    for other in workbook.worksheets:
        other.sheet_view.tabSelected = False
    sheet.sheet_view.tabSelected = True
    workbook.active = workbook.index(sheet)

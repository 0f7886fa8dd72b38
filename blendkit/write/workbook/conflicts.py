"""The Conflicts sheet, written only when the run is infeasible: why no blend was found.

Title, caution, a short explanation, one block per irreducible conflicting set of
limits (each member with the cell it was read from and how far its bound alone would
have to move), then the least-cost way out and the cost of the blend once it is made.
A Conflicts sheet left by an earlier run is removed (by `book`) when the workbook is now
feasible.
"""

from __future__ import annotations

from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.blend import Blend
from blendkit.model.formula import CUT_SHORT, WAY_OUT, ConflictLine, Formula, RunInfo
from blendkit.model.units import ingredient_word, kind_word, run_cost_unit
from blendkit.write.workbook.cells import (
    ALERT_TEXT,
    AMOUNT_FORMAT,
    BOLD,
    INCLUSION_FORMAT,
    MONEY_FORMAT,
    SECTION,
    TITLE_FONT,
    cell_at,
    format_by_size,
    header,
    new_sheet,
    number,
    paragraph,
    put,
    write_caution,
)

TITLE = "Conflicts"

# Column widths, in characters: Kind, Name, Product, Side, Bound, Cell, move, fixes all.
_WIDTHS = (12, 28, 18, 8, 14, 18, 34, 22)
# Paragraphs span every column.
_COLUMNS, _WIDTH = len(_WIDTHS), sum(_WIDTHS)


def write(workbook: Workbook, formula: Formula, run: RunInfo, title: str) -> None:
    """Why no blend was found: each conflicting set, then the least-cost way out.

    Nothing is written unless the run is infeasible. Layout, top to bottom: title,
    caution, a short explanation, one block per conflict (heading, then Kind, Name,
    Product, Side, Bound, Cell, "Move this bound alone to"), the least-cost way out
    (the same columns with "New bound" last) and the cost of the blend once
    it is made.
    """
    if formula.status != "infeasible":
        return
    sheet = new_sheet(workbook, TITLE)
    for column, size in enumerate(_WIDTHS, start=1):
        sheet.column_dimensions[get_column_letter(column)].width = size
    put(sheet, 1, 1, f"{title}: limits that cannot all be met").font = TITLE_FONT
    write_caution(sheet, 2, _COLUMNS, _WIDTH)
    row = _write_explanation(sheet, formula, 4)
    if not formula.parts:
        row = _write_conflict_sets(sheet, formula, row)
        _write_relaxation(sheet, formula, row)
        return
    for part in formula.parts:  # products solved as separate LPs: one section each
        if part.status == "infeasible":
            names = ", ".join(str(product.name) for product in part.blend.products)
            put(sheet, row, 1, f"Product: {names}").font = TITLE_FONT
            row = _write_conflict_sets(sheet, part, row + 2)
            row = _write_relaxation(sheet, part, row) + 2


def _write_explanation(sheet: Worksheet, formula: Formula, row: int) -> int:
    """What a conflict and a move mean, one paragraph each from `row`, and a warning when
    more conflicts may remain; returns the first row after a blank one."""
    changes = formula.relaxation.changes if formula.relaxation else ()
    kinds = {line.kind for line in (*formula.conflicts, *changes)}
    explain = [
        ("Each conflict below is an irreducible set of limits: they cannot all hold together, "
         "but drop or move any one of them and the rest of that set can be met."),
        ('"Move this bound alone to": the value that one bound, moved on its own, would '
         "need for the workbook to become feasible (other conflicts set aside); "
         '"no single move" where moving it alone is not enough.'),
        ('"Dropped alone, fixes all": yes when dropping that one limit makes the whole workbook '
         "feasible (every conflicting set holds it); conflicts may share limits."),
    ]
    if "use" in kinds:
        explain.append('Kind "use" is a Use = no (a max of 0): its new value is the most of that '
                       f"{ingredient_word(formula.blend).lower()} to allow once Use is yes.")
    if "total" in kinds:
        explain.append('Kind "total" is the rule that the inclusions sum to 100 % (for a product, '
                       "tied to its Amount cell); it cannot move.")
    for text in explain:
        paragraph(sheet, row, text, _COLUMNS, _WIDTH)
        row += 1
    if not formula.conflicts_complete:
        cell = paragraph(sheet, row, "More conflicts may remain after these are fixed: fix these, "
                                     "then solve again to see the rest.", _COLUMNS, _WIDTH)
        cell.font = ALERT_TEXT
        row += 1
    if formula.conflicts_cut_short:
        paragraph(sheet, row, CUT_SHORT, _COLUMNS, _WIDTH).font = ALERT_TEXT
        row += 1
    return row + 1


def _write_conflict_sets(sheet: Worksheet, formula: Formula, row: int) -> int:
    """One block per conflicting set from `row`: heading, header, members and the move
    each alone would need; returns the row after them."""
    sets = formula.conflict_sets
    if not sets:
        put(sheet, row, 1, "No conflicting set of limits was found for this run.").font = BOLD
        row += 2
    for number_of_set, members in sets.items():
        heading = f"Conflict {number_of_set}" + (f" of {len(sets)}" if len(sets) > 1 else "")
        put(sheet, row, 1, heading).font = SECTION
        header(sheet, row + 1, ["Kind", "Name", "Product", "Side", "Bound", "Cell",
                                "Move this bound alone to", "Dropped alone, fixes all"])
        for offset, line in enumerate(members, start=2):
            number_format = _conflict_format(line)
            _write_member(sheet, row + offset, line, formula.blend, number_format)
            put(sheet, row + offset, 8, ("yes" if line.fixes_alone else "no") if line.worked_out else "not checked")
            if line.kind == "total":
                put(sheet, row + offset, 7, "cannot move: inclusions sum to 100 %")
            elif not line.worked_out:
                put(sheet, row + offset, 7, "not worked out (time limit)")
            elif line.relax_to is None:
                put(sheet, row + offset, 7, "no single move")
            else:
                number(cell_at(sheet, row + offset, 7), line.relax_to, number_format)
        row += len(members) + 3
    return row


def _write_relaxation(sheet: Worksheet, formula: Formula, row: int) -> int:
    """The least-cost way out from `row`: the changes, then the cost once they are made;
    returns the last row written."""
    put(sheet, row, 1, WAY_OUT).font = SECTION
    relaxation = formula.relaxation
    if relaxation is None or not relaxation.changes:
        put(sheet, row + 1, 1, "No way out was found: change the limits above by hand; "
                               "one move per conflict is enough.")
        return row + 1
    paragraph(sheet, row + 1, "Move all of these bounds together: the smallest moves that make the "
                              "workbook feasible (limits with a lower Priority give way first), and "
                              "among those the one with the cheapest blend.", _COLUMNS, _WIDTH)
    header(sheet, row + 2, ["Kind", "Name", "Product", "Side", "Old bound", "Cell", "New bound"])
    for offset, line in enumerate(relaxation.changes, start=3):
        number_format = _conflict_format(line)
        _write_member(sheet, row + offset, line, formula.blend, number_format)
        number(cell_at(sheet, row + offset, 7), line.relax_to, number_format)
    last = row + 3 + len(relaxation.changes) + 1
    _write_relaxed_cost(sheet, formula, last)
    return last


def _write_relaxed_cost(sheet: Worksheet, formula: Formula, row: int) -> None:
    """The cost of the blend once every move of the way out is made, on `row`."""
    blend = formula.blend
    label = "Total cost" if formula.several else "Diet cost" if blend.diet else "Blend cost"
    put(sheet, row, 1, f"{label} once all of them are moved").font = BOLD
    sheet.merge_cells(start_row=row, start_column=1, end_row=row, end_column=2)
    moved = formula.relaxation.formula
    if moved is not None and moved.cost is not None:
        number(cell_at(sheet, row, 3), moved.cost, MONEY_FORMAT)
        cell_at(sheet, row, 3).font = BOLD
        put(sheet, row, 4, run_cost_unit(blend))
    else:
        put(sheet, row, 3, "unknown: the workbook with these moves did not solve")


def _write_member(sheet: Worksheet, row: int, line: ConflictLine, blend: Blend,
                  number_format: str) -> None:
    """Kind, name, product, side, bound and cell of one conflict member (columns A-F)."""
    total = line.kind == "total"
    put(sheet, row, 1, kind_word(line.kind, blend))
    put(sheet, row, 2, "sum of inclusions" if total else line.name)
    put(sheet, row, 3, line.product)
    put(sheet, row, 4, "=" if line.side == "eq" else line.side)
    number(cell_at(sheet, row, 5), line.bound, number_format)
    put(sheet, row, 6, line.cell)


def _conflict_format(line: ConflictLine) -> str:
    """A member's bound and move in one format: inclusions to 0.001 %, stocks as amounts,
    specs by size."""
    if line.kind in ("ingredient", "use", "group", "total"):
        return INCLUSION_FORMAT
    if line.kind == "stock":
        return AMOUNT_FORMAT
    return format_by_size([line.bound, line.relax_to], 1)

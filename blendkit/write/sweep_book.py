"""`blendkit sweep`: the output workbook (a copy of the input plus a Sweep sheet) and JSON.

The Sweep sheet: the caution, what moved and over which range, the breakpoints, one row
per piece (from, to, the ingredient's inclusion or the spec's shadow price, the cost at
both ends) and a step chart of that value against the swept value. A spec with a Margin
is swept by its bound as written (a "margin" key in JSON and a line on the sheet and in
the text say that the formula is made to the bound plus or minus the margin).
"""

from __future__ import annotations

import io
from pathlib import Path
from typing import Any

from openpyxl import load_workbook
from openpyxl.chart import Reference, ScatterChart, Series

from blendkit.lp.sweep import Sweep
from blendkit.write.workbook.cells import BOLD, MONEY_FORMAT, TITLE_FONT, header, new_sheet, number, put, write_caution
from blendkit.write.workbook.save import save_atomically
from blendkit.write.workbook.saved_results import saved_results, with_saved_results

TITLE = "Sweep"
_WIDTHS = {"A": 16, "B": 16, "C": 18, "D": 16, "E": 16, "F": 14}
_HEADER_ROW = 8


def sweep_to_dict(sweep: Sweep) -> dict[str, Any]:
    """The sweep as JSON: what moved, the breakpoints and the pieces."""
    value = "inclusion" if sweep.kind == "ingredient" else "shadow_price"
    margin = {"margin": float(sweep.margin)} if sweep.kind == "spec" else {}
    return {
        "sweep": sweep.kind,
        "name": sweep.name,
        "product": sweep.product,
        "from": sweep.start,
        "to": sweep.end,
        **margin,
        "complete": sweep.complete,
        "breakpoints": [float(point) for point in sweep.breakpoints],
        "segments": [
            {"from": float(s.start), "to": float(s.end), value: _value(sweep, s), "cost_at_from": s.cost_at_start,
             "cost_at_to": s.cost_at_end, "status": s.status}
            for s in sweep.segments
        ],
    }


def sweep_text(sweep: Sweep) -> str:
    """The sweep as a short table for the terminal."""
    value = "inclusion %" if sweep.kind == "ingredient" else "shadow price"
    lines = [f"Sweep of {sweep.name}" + (f" in {sweep.product}" if sweep.product else "") +
             f" from {sweep.start:g} to {sweep.end:g}: {len(sweep.breakpoints)} breakpoints",
             *([margin_words(sweep)] if sweep.margin else []),
             f"{'from':>12} {'to':>12} {value:>14} {'cost at from':>14} {'cost at to':>14}"]
    for s in sweep.segments:
        shown = _value(sweep, s)
        lines.append(f"{s.start:12.4f} {s.end:12.4f} {'' if shown is None else f'{shown:.4f}':>14} "
                     f"{'' if s.cost_at_start is None else f'{s.cost_at_start:,.2f}':>14} "
                     f"{'' if s.cost_at_end is None else f'{s.cost_at_end:,.2f}':>14}"
                     + ("" if s.status == "optimal" else f"  {s.status}"))
    if not sweep.complete:
        lines.append("The sweep stopped at its limit of pieces; narrow the range.")
    return "\n".join(lines)


def write_sweep_book(sweep: Sweep, source_data: bytes, output: Path, title: str) -> Path:
    """A copy of the input workbook with the Sweep sheet added (replacing an earlier one)."""
    workbook = load_workbook(io.BytesIO(source_data))
    if TITLE in workbook.sheetnames:
        workbook.remove(workbook[TITLE])
    saved = saved_results(source_data, workbook)
    sheet = new_sheet(workbook, TITLE)
    for column, width in _WIDTHS.items():
        sheet.column_dimensions[column].width = width
    _write_top(sheet, sweep, title)
    last = _write_pieces(sheet, sweep)
    _add_chart(sheet, sweep, last)
    workbook.active = workbook.index(sheet)
    buffer = io.BytesIO()
    workbook.save(buffer)
    save_atomically(with_saved_results(buffer.getvalue(), saved), output)
    return output


def _value(sweep: Sweep, segment) -> float | None:
    """The value that holds on a piece: the inclusion, or the shadow price."""
    return segment.inclusion if sweep.kind == "ingredient" else segment.shadow_price


def _write_top(sheet, sweep: Sweep, title: str) -> None:
    """Title, caution, what moved and the breakpoints."""
    put(sheet, 1, 1, f"{title}: sweep of {sweep.name}").font = TITLE_FONT
    write_caution(sheet, 2, 6, sum(_WIDTHS.values()))
    moved = "price" if sweep.kind == "ingredient" else "bound"
    where = f" in {sweep.product}" if sweep.product else (" in every product" if sweep.kind == "ingredient" else "")
    put(sheet, 4, 1, "Moved").font = BOLD
    put(sheet, 4, 2, f"the {moved} of {sweep.name}{where}, from {sweep.start:g} to {sweep.end:g}")
    put(sheet, 5, 1, "Breakpoints").font = BOLD
    put(sheet, 5, 2, ", ".join(f"{point:.6g}" for point in sweep.breakpoints) or "none: one formula over the range")
    if not sweep.complete:
        put(sheet, 6, 2, "the sweep stopped at its limit of pieces; narrow the range")
    if sweep.margin:
        put(sheet, 7, 1, "Margin").font = BOLD
        put(sheet, 7, 2, margin_words(sweep))


def margin_words(sweep: Sweep) -> str:
    """What a spec's Margin does to a sweep of its bound, in words."""
    side = sweep.name.rsplit(" ", 1)[-1]
    sign = "+" if side == "min" else "-"
    return (f"From and To are the bound as written on Specs; at each, the formula is made to the bound "
            f"{sign} its Margin of {sweep.margin:g}, as a solve with that bound would be")


def _write_pieces(sheet, sweep: Sweep) -> int:
    """One row per piece; returns the last row."""
    value = "Inclusion (%)" if sweep.kind == "ingredient" else "Shadow price"
    header(sheet, _HEADER_ROW, ["From", "To", value, "Cost at from", "Cost at to", "Status"])
    row = _HEADER_ROW
    for segment in sweep.segments:
        row += 1
        number(sheet.cell(row, 1), segment.start, "0.0000")
        number(sheet.cell(row, 2), segment.end, "0.0000")
        number(sheet.cell(row, 3), _value(sweep, segment), "0.0000")
        number(sheet.cell(row, 4), segment.cost_at_start, MONEY_FORMAT)
        number(sheet.cell(row, 5), segment.cost_at_end, MONEY_FORMAT)
        put(sheet, row, 6, segment.status)
    return row


def _add_chart(sheet, sweep: Sweep, last: int) -> None:
    """A step chart: the value of each piece held flat from its start to its end (drawn from
    two points per piece in columns J and K)."""
    if last <= _HEADER_ROW:
        return
    header(sheet, _HEADER_ROW, ["From", "To", "Inclusion (%)" if sweep.kind == "ingredient" else "Shadow price",
                                "Cost at from", "Cost at to", "Status", "", "", "Chart: x", "Chart: y"])
    row = _HEADER_ROW
    for segment in sweep.segments:
        for x in (segment.start, segment.end):
            row += 1
            number(sheet.cell(row, 10), x, "0.0000")
            number(sheet.cell(row, 11), _value(sweep, segment), "0.0000")
    chart = ScatterChart()
    chart.title = f"{'Inclusion' if sweep.kind == 'ingredient' else 'Shadow price'} as the {sweep.name} moves"
    chart.style = 2
    chart.legend = None
    chart.x_axis.title = "price" if sweep.kind == "ingredient" else "bound"
    xs = Reference(sheet, min_col=10, min_row=_HEADER_ROW + 1, max_row=row)
    ys = Reference(sheet, min_col=11, min_row=_HEADER_ROW + 1, max_row=row)
    series = Series(ys, xs)
    series.marker.symbol = "none"
    chart.series.append(series)
    chart.height, chart.width = 8, 16
    sheet.add_chart(chart, "M4")

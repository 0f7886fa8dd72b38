"""Charts on the Result sheet, in blendkit's own plain style (one colour, no effects): the
composition (each ingredient's inclusion) and each ingredient's share of the cost, under
a blend's tables; with several products, the cost of each product.

The charts read the cells of the tables, so they follow any edit of an inclusion.
"""

from __future__ import annotations

import math

from openpyxl.chart import BarChart, Reference
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.formula import Formula
from blendkit.model.units import cost_unit
from blendkit.write.workbook.cells import BOLD, MONEY_FORMAT, SECTION, cell_at, number, put
from blendkit.write.workbook.result_tables import Block
from blendkit.write.workbook.tidy import tidy

# One plain colour for every bar (a muted blue-grey), in centimetres the charts' size.
BAR_COLOUR = "5B7083"
WIDTH_CM = 15.0
HEIGHT_CM = 7.5
# Rows a chart covers at the default row height, so what follows goes below it.
CHART_ROWS = 16
# Height of one bar (an ingredient) and of a row at the default height, in centimetres.
BAR_CM = 0.45
ROW_CM = 0.53


def add_block_charts(sheet: Worksheet, block: Block, row: int, diet: bool = False) -> int:
    """The composition and the cost share charts of `block` from `row` (a blend shows
    both, a diet only the cost share); returns the first row below them."""
    if not block.ingredients:
        return row
    names = Reference(sheet, min_col=1, min_row=block.first_row, max_row=block.last_row)
    if not diet:  # a diet's amounts are in each food's own unit: they do not add up
        composition = _bar_chart("Composition (inclusion, %)", sheet, names, 2, block)
        sheet.add_chart(composition, f"A{row}")
    share = _bar_chart("Share of the cost", sheet, names, 4, block)
    sheet.add_chart(share, f"A{row}" if diet else f"F{row}")
    return row + _rows_covered(share.height)


def _bar_chart(title: str, sheet: Worksheet, names: Reference, column: int, block: Block) -> BarChart:
    """A horizontal bar chart of column `column` of the ingredient rows, one colour."""
    chart = BarChart()
    chart.type = "bar"
    chart.title = title
    chart.legend = None
    chart.add_data(Reference(sheet, min_col=column, min_row=block.header_row, max_row=block.last_row),
                   titles_from_data=True)
    chart.set_categories(names)
    chart.series[0].graphicalProperties.solidFill = BAR_COLOUR
    count = block.last_row - block.first_row + 1
    chart.width, chart.height = WIDTH_CM, max(HEIGHT_CM, BAR_CM * count + 2.5)
    return chart


def _rows_covered(height_cm: float) -> int:
    """Rows of default height a chart this tall covers, and one to spare."""
    return math.ceil(height_cm / ROW_CM) + 1


def add_product_cost_chart(sheet: Worksheet, formula: Formula, row: int) -> int:
    """Several products: a small table of each product's cost from `row` and a bar chart of
    it beside; returns the first row below both."""
    solved = [product for product in formula.products if product.solved]
    if len(solved) < 2:
        return row
    put(sheet, row, 1, "Cost per product").font = SECTION
    put(sheet, row + 1, 1, "Product name").font = BOLD
    put(sheet, row + 1, 2, f"Cost ({cost_unit(formula.blend.settings)})").font = BOLD
    for offset, product in enumerate(solved, start=2):
        put(sheet, row + offset, 1, product.name)
        number(cell_at(sheet, row + offset, 2), tidy(product.cost), MONEY_FORMAT)
    last = row + 1 + len(solved)
    chart = BarChart()
    chart.title = "Cost per product"
    chart.legend = None
    chart.add_data(Reference(sheet, min_col=2, min_row=row + 1, max_row=last), titles_from_data=True)
    chart.set_categories(Reference(sheet, min_col=1, min_row=row + 2, max_row=last))
    chart.series[0].graphicalProperties.solidFill = BAR_COLOUR
    chart.width, chart.height = WIDTH_CM, HEIGHT_CM
    sheet.add_chart(chart, f"D{row}")
    return max(last + 2, row + CHART_ROWS)

"""The tables of the Result sheet: ingredients (with their Total row and the limit each
sits at), nutrients (with a live formula recomputing each level and a check cell that
turns on when that level breaks a bound) and stocks. Numbers are written clean (`tidy`).

One blend, one diet or one product is a `Block`: its lines and the row its ingredient
table starts on. The sheet's top part and its blocks' order are `result`'s.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import cached_property

from openpyxl.cell.cell import Cell
from openpyxl.styles import Border
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.blend import MASS_UNITS_KG, Blend
from blendkit.model.formula import (
    THIS_PRODUCT_ALONE,
    Formula,
    IngredientLine,
    Limit,
    NutrientLine,
    basis_label,
)
from blendkit.model.units import cost_unit, food_unit, ingredient_word, stock_unit
from blendkit.write.workbook.cells import (
    AMOUNT_FORMAT,
    BOLD,
    INCLUSION_FORMAT,
    MONEY_FORMAT,
    REDUCED_COST_FORMAT,
    SECTION,
    THIN,
    cell_at,
    fixed_format,
    format_by_size,
    header,
    number,
    nutrient_format,
    plain,
    put,
)
from blendkit.write.workbook.live import input_operand, write_derived_check, write_level_checks
from blendkit.write.workbook.spec_checks import write_spec_checks
from blendkit.write.workbook.tidy import tidy, tidy_inclusion, tidy_level


# A diet food's unit that is a quantity in grams or millilitres: "100 g", "250 ml".
_MEASURE = re.compile(r"(?P<size>\d+(?:\.\d+)?)\s*(?P<symbol>g|ml)")


@dataclass(frozen=True)
class Block:
    """One blend's (or one product's) tables: its lines, and where they go."""

    ingredients: tuple[IngredientLine, ...]
    nutrients: tuple[NutrientLine, ...]
    header_row: int  # the ingredient table's header; its rows and the nutrients follow
    amount: float  # the batch size, or the amount of the product made
    made: bool = False  # word the amount and cost columns for a product, not a batch
    limits: tuple[Limit, ...] = ()  # the blend's (product's) limits: which ingredients bind
    amount_cell: str = ""  # the cell holding `amount` ("$B$8"): live amounts multiply it
    alone: bool = False  # a product linked to others: its price ranges are for its price alone

    @property
    def first_row(self) -> int:
        """The first ingredient row."""
        return self.header_row + 1

    @property
    def last_row(self) -> int:
        """The last ingredient row."""
        return self.header_row + len(self.ingredients)

    def bounds_of(self, name: str) -> tuple[float | None, float | None]:
        """The min and max of ingredient `name`'s inclusion limits that bind (None: none)."""
        found = {limit.side: limit.bound for limit in self._binding.get(name, ())}
        return found.get("min"), found.get("max")

    def limit_of(self, line: IngredientLine) -> str:
        """In words, the inclusion limit an ingredient sits at: "at min", "at max", "fixed
        (min = max)", "held at 0 (Use = no)"; "" when none binds."""
        if not line.used:
            return "held at 0 (Use = no)"
        sides = {limit.side for limit in self._binding.get(line.name, ())}
        if sides == {"min", "max"}:
            return "fixed (min = max)"
        return f"at {sides.pop()}" if sides else ""

    @cached_property
    def _binding(self) -> dict[str, list[Limit]]:
        """The binding inclusion limits by ingredient, in the order of `limits`: found once,
        not once per ingredient row (2,000 rows x 2,000 limits on a big workbook)."""
        found: dict[str, list[Limit]] = {}
        for limit in self.limits:
            if limit.kind == "ingredient" and limit.binding:
                found.setdefault(limit.name, []).append(limit)
        return found

    @property
    def inclusion_rows(self) -> dict[str, int]:
        """Where each ingredient's inclusion (or diet amount) is: column B below the header."""
        return {line.name: self.header_row + offset
                for offset, line in enumerate(self.ingredients, start=1)}


def write_tables(sheet: Worksheet, workbook: Workbook, blend: Blend, block: Block) -> tuple[int, str | None]:
    """The ingredient table with its Total row, then the nutrient table; returns the first
    free row after a blank one, and the range of the nutrient table's check cells (None
    when it has none)."""
    _write_ingredients(sheet, blend, block)
    _write_live_amounts(sheet, workbook, blend, block)
    total_row = _write_total_row(sheet, blend, block)
    nutrient_header = total_row + 2
    checks = _write_nutrients(sheet, workbook, blend, block, nutrient_header)
    return nutrient_header + len(block.nutrients) + 2, checks


def _write_ingredients(sheet: Worksheet, blend: Blend, block: Block) -> None:
    """One row per ingredient line under its header, numbers as numbers."""
    header(sheet, block.header_row, _ingredient_labels(blend, block))
    amount_format = format_by_size([tidy(line.amount) for line in block.ingredients], 2)
    for offset, line in enumerate(block.ingredients, start=1):
        row = block.header_row + offset
        _write_ingredient_row(sheet, row, blend, line, amount_format, block.bounds_of(line.name))
        put(sheet, row, 10, block.limit_of(line) or None)


def _ingredient_labels(blend: Blend, block: Block) -> list[str]:
    """The ingredient table's header: a diet's amounts and prices are per food unit, a
    blend's per batch (or per amount made) and per `Cost per` unit."""
    settings = blend.settings
    money = settings.currency or "currency"
    if blend.diet:
        return [
            ingredient_word(blend),
            "Amount",
            "Measure",
            f"Cost ({money})",
            f"Price ({money} per unit)",
            f"Reduced cost ({money} per 1 unit)",
            f"Price at which it would come in ({money} per unit)",
            f"Used more if its price falls below ({money} per unit)",
            f"Used less if its price rises above ({money} per unit)",
            "Limit",
        ]
    unit_of_cost = cost_unit(settings)
    # A linked product's ranges hold for a price change in it alone; the run's one price
    # per ingredient is on the Overview sheet.
    scope = f"{unit_of_cost}, {THIS_PRODUCT_ALONE}" if block.alone else unit_of_cost
    mass = settings.mass_unit
    if block.made:
        amount_label = f"Amount ({mass} in {plain(block.amount)} {mass} made)"
        cost_label = f"Cost of the amount made ({money})"
    else:
        amount_label = f"Amount ({mass} per {plain(block.amount)} {mass} batch)"
        cost_label = f"Cost per batch ({money})"
    return [
        "Ingredient",
        "Inclusion (%)",
        amount_label,
        cost_label,
        f"Price ({unit_of_cost})",
        f"Reduced cost ({unit_of_cost} per 1 % inclusion)",
        f"Price at which it would come in ({scope})",
        f"Used more if its price falls below ({scope})",
        f"Used less if its price rises above ({scope})",
        "Limit",
    ]


def _write_ingredient_row(
    sheet: Worksheet, row: int, blend: Blend, line: IngredientLine, amount_format: str,
    bounds: tuple[float | None, float | None],
) -> None:
    """One ingredient: inclusion % in column B (a diet: the amount in B and the food's unit
    in C; exactly its bound when at a binding limit), its cost, price, reduced cost and the
    price range it stays in the formula."""
    put(sheet, row, 1, line.name)
    inclusion = tidy_inclusion(line.inclusion)
    if inclusion and any(bound is not None for bound in bounds):
        inclusion = tidy_level(inclusion, *bounds)
    number(cell_at(sheet, row, 2), inclusion, INCLUSION_FORMAT)
    if blend.diet:
        _write_measure(sheet, row, food_unit(blend, line.name), inclusion)
    else:
        number(cell_at(sheet, row, 3), tidy(line.amount) if inclusion else 0.0, amount_format)
    number(cell_at(sheet, row, 4), tidy(line.batch_cost) if inclusion else 0.0, MONEY_FORMAT)
    number(cell_at(sheet, row, 5), tidy(line.cost), MONEY_FORMAT)
    number(cell_at(sheet, row, 6), tidy(line.reduced_cost), REDUCED_COST_FORMAT)
    if not line.used:
        put(sheet, row, 7, "not in use (Use = no)")
    elif line.entry_price is not None:
        number(cell_at(sheet, row, 7), tidy(line.entry_price), MONEY_FORMAT)
    # The price range over which this formula stays the cheapest (cost ranging); an
    # unused ingredient's lower end is its entry price, already in column 7.
    if line.more_below is not None and line.entry_price is None:
        number(cell_at(sheet, row, 8), tidy(line.more_below), MONEY_FORMAT)
    if line.less_above is not None:
        number(cell_at(sheet, row, 9), tidy(line.less_above), MONEY_FORMAT)


def _write_measure(sheet: Worksheet, row: int, unit: str, amount: float) -> None:
    """A diet food's measure in column C: a unit that is a quantity of grams or millilitres
    ("100 g") as a live amount in that measure ("82 g", from the Amount cell); any other
    unit ("slice") as written."""
    match = _MEASURE.fullmatch(unit.strip())
    if not match:
        put(sheet, row, 3, unit)
        return
    size, symbol = float(match["size"]), match["symbol"]
    quantity = amount * size
    places = 0 if quantity >= 10 or float(quantity).is_integer() else 1
    cell = cell_at(sheet, row, 3, f"=B{row}*{plain(size)}")
    cell.number_format = f'{fixed_format(places)}" {symbol}"'


def _write_live_amounts(sheet: Worksheet, workbook: Workbook, blend: Blend, block: Block) -> None:
    """Turn each ingredient's amount (column C) and cost (D) into live formulas from its
    inclusion (B), the batch size (or amount made) and its input price, so editing an
    inclusion updates them; where a price cell is unknown the written cost stays. An
    amount that would show as 0.00 in the mass unit (3 kg in tonnes) is shown in grams."""
    per = plain(blend.settings.cost_unit_in_mass_units)
    for row, line in zip(range(block.first_row, block.last_row + 1), block.ingredients):
        amount = f"B{row}*{block.amount_cell}/100"
        grams = None
        if not blend.diet and block.amount_cell:
            grams = _in_grams(cell_at(sheet, row, 3), blend.settings.mass_unit, line.amount)
            cell_at(sheet, row, 3).value = f"={amount}*{grams:.12g}" if grams else f"={amount}"
        try:
            price = input_operand(workbook, blend.ingredient(line.name).cells.get("cost"))
        except KeyError:
            price = None
        if price is None:
            continue
        if blend.diet:
            cell_at(sheet, row, 4).value = f"=B{row}*{price}"
        elif block.amount_cell:
            cell_at(sheet, row, 4).value = f"={amount}*{price}/{per}" if grams else f"=C{row}*{price}/{per}"


def _in_grams(cell: Cell, mass_unit: str, amount: float) -> float | None:
    """Grams per mass unit when `amount` would show as 0.00 in `cell`'s format (and the
    unit is not grams already), the cell then formatted in grams; None otherwise."""
    places = len(cell.number_format.partition(".")[2])
    kilograms = MASS_UNITS_KG.get(mass_unit.lower())
    if not amount or round(abs(amount), places) != 0 or not kilograms or kilograms <= 0.001:
        return None
    grams = round(kilograms * 1000, 9)
    cell.number_format = format_by_size([amount * grams], 0) + '" g"'
    return grams


def _write_total_row(sheet: Worksheet, blend: Blend, block: Block) -> int:
    """The Total row under the ingredients, with live sums; returns its row."""
    first = block.header_row + 1
    last = block.header_row + len(block.ingredients)
    total_row = last + 1
    put(sheet, total_row, 1, "Total").font = BOLD
    # Diet amounts are in each food's own unit: only their cost adds up.
    amounts = cell_at(sheet, block.first_row, 3).number_format if block.ingredients else AMOUNT_FORMAT
    amounts = amounts if not amounts.endswith('" g"') else AMOUNT_FORMAT
    sums = ((4, MONEY_FORMAT),) if blend.diet else (
        (2, INCLUSION_FORMAT), (3, amounts), (4, MONEY_FORMAT))
    if block.ingredients:
        for column, number_format in sums:
            letter = get_column_letter(column)
            cell = cell_at(sheet, total_row, column, f"=SUM({letter}{first}:{letter}{last})")
            if column == 3 and _any_in_grams(sheet, block):
                # Amounts in two units do not add up: the total from the inclusions.
                cell.value = f"=SUM(B{first}:B{last})*{block.amount_cell}/100"
            cell.number_format = number_format
            cell.font = BOLD
            cell.border = Border(top=THIN)
    return total_row


def _any_in_grams(sheet: Worksheet, block: Block) -> bool:
    """True when an amount of the block is shown in grams (see `_in_grams`)."""
    return any(cell_at(sheet, row, 3).number_format.endswith('" g"')
               for row in range(block.first_row, block.last_row + 1))


def _write_nutrients(
    sheet: Worksheet, workbook: Workbook, blend: Blend, block: Block, header_row: int
) -> str | None:
    """One row per nutrient line from `header_row`, with a live formula recomputing its
    level from the input contents and the inclusions (amounts) on this sheet, and a check
    cell beside it; returns the check cells' range."""
    level = "Total" if blend.diet else "Level"
    margins = any(line.has_margin for line in block.nutrients)
    header(
        sheet,
        header_row,
        ["Nutrient", "Basis", "Unit", "Min", "Max", level, "Position",
         f"{level} from input contents", "Check", *(_TARGETS if margins else ())],
    )
    live_rows = write_level_checks(sheet, workbook, blend, block.ingredients, block.nutrients,
                                   header_row, block.inclusion_rows)
    for offset, line in enumerate(block.nutrients, start=1):
        row = header_row + offset
        _write_nutrient_row(sheet, row, line)
        write_derived_check(sheet, row, blend, line, live_rows)
        if margins:  # what the formula is made to: min + margin, max - margin
            number(cell_at(sheet, row, 10), line.target_minimum, nutrient_format(line))
            number(cell_at(sheet, row, 11), line.target_maximum, nutrient_format(line))
    return write_spec_checks(sheet, header_row + 1, header_row + len(block.nutrients))


# With a Margin on Specs: the bounds the formula is made to, beside the spec as written.
_TARGETS = ("Target min (min + margin)", "Target max (max - margin)")


def _write_nutrient_row(sheet: Worksheet, row: int, line: NutrientLine) -> None:
    """One nutrient line: name, basis, unit, min, max, level and position."""
    number_format = nutrient_format(line)
    put(sheet, row, 1, line.name)
    put(sheet, row, 2, basis_label(line.kind, line.basis))
    put(sheet, row, 3, line.unit)
    number(cell_at(sheet, row, 4), line.minimum, number_format)
    number(cell_at(sheet, row, 5), line.maximum, number_format)
    number(cell_at(sheet, row, 6), tidy_level(line.level, line.minimum, line.maximum), number_format)
    put(sheet, row, 7, line.position)


def write_stocks(sheet: Worksheet, formula: Formula, row: int) -> int:
    """The Stocks table from `row`, if the run has stocks; returns the first free row after."""
    if not formula.stocks:
        return row
    blend = formula.blend
    money = blend.settings.currency or "currency"
    title = "Stocks (shared by all products)" if formula.several else "Stocks"
    put(sheet, row, 1, title).font = SECTION
    top = row + 1
    header(
        sheet,
        top,
        [
            ingredient_word(blend),
            "Used",
            "Available",
            "Unit",
            "Binding",
            f"Shadow price ({money} per 1 unit of stock)",
            f"Value of one more unit ({money})",
            "Stock read from",
        ],
    )
    for offset, line in enumerate(formula.stocks, start=1):
        at = top + offset
        put(sheet, at, 1, line.ingredient)
        number(cell_at(sheet, at, 2), tidy(line.used), AMOUNT_FORMAT)
        number(cell_at(sheet, at, 3), line.available, AMOUNT_FORMAT)
        put(sheet, at, 4, stock_unit(blend, line.ingredient))
        put(sheet, at, 5, "yes" if line.binding else "no")
        price_format = format_by_size([line.shadow_price], 2)
        number(cell_at(sheet, at, 6), tidy(line.shadow_price), price_format)
        number(cell_at(sheet, at, 7), tidy(-line.shadow_price), price_format)
        put(sheet, at, 8, line.cell)
    return top + len(formula.stocks) + 2

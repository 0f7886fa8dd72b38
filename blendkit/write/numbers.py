"""How many decimals a writer shows: one rule for the workbook and the console summary.

A number is shown with about four significant digits of the largest value it is shown
beside (a spec's min, max and level alike), inclusions to 0.001 %, and amounts with no
decimals when whole, two otherwise.
"""

from __future__ import annotations

import math

from blendkit.model.formula import Formula, Limit, NutrientLine

# Inclusions (and inclusion limits) to 0.001 % of the blend; diet amounts to 0.001 of the
# food's unit.
INCLUSION_DECIMALS = 3
# Amounts of an ingredient (stocks, amounts per batch) and money: two decimals.
AMOUNT_DECIMALS = 2
# Most decimals the significant-digits rule gives, for very small values.
_MOST_DECIMALS = 6


def decimals(values: list[float | None], least: int = 1) -> int:
    """Decimal places that show about four significant digits of the largest value, and
    at least `least` of them (blank, zero and non-finite values are ignored)."""
    sizes = [abs(v) for v in values if v is not None and math.isfinite(v) and v != 0]
    if not sizes:
        return least
    return min(_MOST_DECIMALS, max(least, 3 - math.floor(math.log10(max(sizes)))))


def line_decimals(line: NutrientLine) -> int:
    """The decimals of a nutrient line's min, max and level, wherever they appear."""
    return decimals([line.minimum, line.maximum, line.level])


def whole_decimals(value: float) -> int:
    """No decimals for a whole amount (a 2000 kg batch), two otherwise."""
    return 0 if float(value).is_integer() else AMOUNT_DECIMALS


def limit_key(limit: Limit) -> tuple:
    """Which nutrient line a limit bounds: (product, kind, name, basis)."""
    return (limit.product, limit.kind, limit.name, limit.basis)


def nutrient_decimals(formula: Formula) -> dict[tuple, int]:
    """Each nutrient line's decimals by `limit_key`, so a limit's bound is shown as in the
    nutrient table it belongs to."""
    places = {}
    for product in formula.products if formula.several else ():
        for line in product.nutrients:
            places[(product.name, line.kind, line.name, line.basis)] = line_decimals(line)
    for line in formula.nutrients:
        places[(None, line.kind, line.name, line.basis)] = line_decimals(line)
    return places

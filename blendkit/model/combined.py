"""Combined nutrients: a level defined as a sum of other nutrients, each times a number.

A row of the optional Combined sheet such as ``Electrolyte balance = 434.8 * Sodium +
255.8 * Potassium - 282.1 * Chloride`` is a `Combined`. Since a level is linear in the
contents, an ingredient's content of a combined nutrient is the same sum of its contents,
so the reader adds that content to every ingredient (`add_combined_contents`) and every
later stage treats the combined nutrient as one more nutrient column; the terms are kept
for the live formulas of the output.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass


@dataclass(frozen=True)
class Combined:
    """One row of the Combined sheet: a new nutrient as a sum of numbers times nutrients.

    `terms` are (number, nutrient) pairs as written (a minus sign makes the number
    negative; a nutrient named twice appears twice); each nutrient is a nutrient column
    of Ingredients or another combined nutrient, named as in its header or Combined row.
    `cells`: "nutrient", "sum", "unit" -> cell reference.
    """

    name: str
    terms: tuple[tuple[float, str], ...]
    unit: str
    cells: dict[str, str]
    text: str = ""  # the Sum as written


def add_combined_contents(contents: Mapping[str, float], combined: Iterable[Combined]) -> dict[str, float]:
    """`contents` with each combined nutrient's content added, in the order given (a combined
    nutrient after those it refers to); a part missing from `contents` counts as 0."""
    result = dict(contents)
    for item in combined:
        result[item.name] = sum(number * result.get(part, 0.0) for number, part in item.terms)
    return result

"""The validated domain model: what the workbook says, free of spreadsheet details.

The reader builds these objects and guarantees their invariants (names unique, numbers
finite, min <= max, every spec names a nutrient column). Later stages trust them.
Every bound keeps the cell it was read from, so reports can point back to it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

# Mass units blendkit understands, in kilograms. Keys are lower-case.
MASS_UNITS_KG: dict[str, float] = {
    "g": 0.001,
    "kg": 1.0,
    "t": 1000.0,
    "tonne": 1000.0,
    "metric ton": 1000.0,
    "lb": 0.45359237,
    "cwt": 45.359237,  # US hundredweight, 100 lb
    "ton": 907.18474,  # US short ton, 2000 lb
    "short ton": 907.18474,
}


@dataclass(frozen=True)
class Ingredient:
    """One row of the Ingredients sheet.

    `minimum` / `maximum` are inclusion limits in % of the blend (None = no limit).
    `contents` maps every nutrient column to this ingredient's content, as fed;
    a blank cell is 0 and its nutrient name is listed in `blanks`.
    `cells` maps "name", "cost", "min", "max", "use" to the cell each was read from,
    and `content_cells` maps each nutrient to the cell holding this ingredient's content.
    """

    name: str
    cost: float
    minimum: float | None
    maximum: float | None
    use: bool
    contents: dict[str, float]
    blanks: tuple[str, ...]
    cells: dict[str, str]
    content_cells: dict[str, str] = field(default_factory=dict)


@dataclass(frozen=True)
class Spec:
    """One row of the Specs sheet: bounds on a nutrient's level in the blend."""

    nutrient: str
    minimum: float | None
    maximum: float | None
    cells: dict[str, str]  # "nutrient", "min", "max" -> cell reference


@dataclass(frozen=True)
class Settings:
    """The optional Settings sheet, with defaults for anything not given."""

    batch_size: float = 1000.0
    mass_unit: str = "kg"
    cost_per: str = "tonne"
    currency: str = ""
    name: str = ""

    @property
    def cost_unit_in_mass_units(self) -> float:
        """How many `mass_unit`s make one `cost_per` unit (1000 for kg and tonne)."""
        return MASS_UNITS_KG[self.cost_per.lower()] / MASS_UNITS_KG[self.mass_unit.lower()]


@dataclass(frozen=True)
class Blend:
    """A whole formulation problem: ingredients, nutrient columns, specs, settings."""

    ingredients: tuple[Ingredient, ...]
    nutrients: tuple[str, ...]  # nutrient columns in workbook order
    specs: tuple[Spec, ...]
    settings: Settings = field(default_factory=Settings)
    source: Path | None = None
    nutrient_units: dict[str, str] = field(default_factory=dict)  # from "(unit)" in headers

    def ingredient(self, name: str) -> Ingredient:
        """The ingredient called `name` (exact match)."""
        for item in self.ingredients:
            if item.name == name:
                return item
        raise KeyError(name)

"""The validated domain model: what the workbook says, free of spreadsheet details.

The reader builds these objects and guarantees their invariants (names unique, numbers
finite, min <= max, every spec names a nutrient column). Later stages trust them.
Every bound keeps the cell it was read from, so reports can point back to it.
"""

from __future__ import annotations

import json
import re
from collections.abc import Iterable
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from blendkit.model.combined import Combined
    from blendkit.model.prices import Replacement
    from collections.abc import Mapping

    import pandas as pd

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

    `minimum` / `maximum` are inclusion limits in % of the blend (None = no limit); in
    diet mode they are amounts in the ingredient's `unit`, and `cost` is per `unit`.
    `contents` maps every nutrient column to this ingredient's content, as fed (per
    `unit` in diet mode); a blank cell is 0 and its nutrient name is listed in `blanks`.
    `stock` is the quantity on hand in the mass unit, shared by all products (None = no
    limit). `cells` maps "name", "cost", "min", "max", "use", "unit", "stock" to the cell
    each was read from (a key is absent when its column is), and `content_cells` maps
    each nutrient to the cell holding this ingredient's content.
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
    unit: str = ""  # diet mode: what one unit of amount is ("100 g", "serving")
    stock: float | None = None
    # Rules a mill can weigh (`blendkit.model.weighing`); None = no such rule.
    min_if_used: float | None = None  # 0 or at least this (% of blend; diet: amount)
    pack_size: float | None = None  # whole packs per batch (mass unit)
    scale_step: float | None = None  # batch weight a whole multiple of this (mass unit)


AS_FED = "as fed"
DRY_MATTER = "dry matter"
BASES = (AS_FED, DRY_MATTER)


@dataclass(frozen=True)
class Spec:
    """One row of the Specs sheet: bounds on a nutrient's level, or on a ratio of two.

    For a plain spec `nutrient` is the nutrient's name (as in the Ingredients header)
    and `ratio` is None; for a ratio spec (written "A / B") `ratio` is (A, B) and
    `nutrient` the text as written, and the bounds apply to level(A) / level(B).
    `basis` is AS_FED or DRY_MATTER (level per unit of dry matter; ratios are the same
    on both bases). `product` names the product the spec applies to (None = every
    product). `cells`: "nutrient", "min", "max", "basis", "product" -> cell reference.
    """

    nutrient: str
    minimum: float | None
    maximum: float | None
    cells: dict[str, str]
    basis: str = AS_FED
    ratio: tuple[str, str] | None = None
    product: str | None = None
    penalty: float | None = None  # soft spec: cost per unit of violation (None = hard)
    priority: float | None = None  # which limits give way first when in conflict
    step: float | None = None  # the change of a bound the Result sheet prices (None = by unit)
    margin: float | None = None  # the formula is made to min + margin and max - margin

    @property
    def target_minimum(self) -> float | None:
        """The least level the formula is made to: the min plus the margin (if any)."""
        return None if self.minimum is None else self.minimum + (self.margin or 0.0)

    @property
    def target_maximum(self) -> float | None:
        """The most level the formula is made to: the max less the margin (if any)."""
        return None if self.maximum is None else self.maximum - (self.margin or 0.0)


@dataclass(frozen=True)
class Group:
    """One row of the Groups sheet: bounds on the total inclusion of some ingredients.

    `minimum` / `maximum` are in % of the blend (amounts in diet mode). `product` as
    for Spec. `cells`: "group", "ingredients", "min", "max", "product" -> cell.
    """

    name: str
    ingredients: tuple[str, ...]
    minimum: float | None
    maximum: float | None
    cells: dict[str, str]
    product: str | None = None
    priority: float | None = None


@dataclass(frozen=True)
class Product:
    """One row of the Products sheet: a product to make and how much (mass unit).

    `amount` is None when the row gives none: the product is then a formula of its own,
    made per batch (the `Batch size` setting), and no stock applies to it.
    """

    name: str
    amount: float | None
    cells: dict[str, str]  # "product", "amount" -> cell
    max_ingredients: int | None = None  # overrides the Max ingredients setting


@dataclass(frozen=True)
class ProductLimit:
    """One row of the Limits sheet: inclusion limits of one ingredient in one product.

    They replace the ingredient's own Min / Max (from Ingredients) in that product.
    """

    product: str
    ingredient: str
    minimum: float | None
    maximum: float | None
    cells: dict[str, str]  # "product", "ingredient", "min", "max" -> cell
    priority: float | None = None
    min_if_used: float | None = None  # replaces the ingredient's own in this product
    pack_size: float | None = None  # replaces the ingredient's own in this product


@dataclass(frozen=True)
class Settings:
    """The optional Settings sheet, with defaults for anything not given."""

    batch_size: float = 1000.0
    mass_unit: str = "kg"
    cost_per: str = "tonne"
    currency: str = ""
    name: str = ""
    mode: str = "blend"  # "blend" (inclusions in %, summing to 100) or "diet" (amounts)
    dry_matter: str = "Dry matter"  # the nutrient column (in %) that dry-matter specs use
    max_ingredients: int | None = None  # at most this many ingredients above 0 per formula
    scale_step: float | None = None  # every batch weight a whole multiple of this (mass)
    hand_add_below: float | None = None  # Batch sheet: weights below this are hand-added
    time_limit: float | None = None  # seconds for the search under these rules (None: the default)
    cells: dict[str, str] = field(default_factory=dict)  # setting key -> cell of its value

    @property
    def cost_unit_in_mass_units(self) -> float:
        """How many `mass_unit`s make one `cost_per` unit (1000 for kg and tonne)."""
        return MASS_UNITS_KG[self.cost_per.lower()] / MASS_UNITS_KG[self.mass_unit.lower()]


@dataclass(frozen=True)
class Blend:
    """A whole formulation problem: ingredients, nutrient columns, specs, settings."""

    ingredients: tuple[Ingredient, ...]
    nutrients: tuple[str, ...]  # nutrient columns in workbook order, then combined nutrients
    specs: tuple[Spec, ...]
    settings: Settings = field(default_factory=Settings)
    source: Path | None = None
    nutrient_units: dict[str, str] = field(default_factory=dict)  # from "(unit)" in headers
    groups: tuple[Group, ...] = ()
    products: tuple[Product, ...] = ()  # empty: one blend of `settings.batch_size`
    limits: tuple[ProductLimit, ...] = ()
    # Values a price list replaced (`blendkit.model.prices`), for the output to mark.
    replaced: tuple[Replacement, ...] = ()
    notes: tuple[str, ...] = ()  # what the reader found worth saying (hidden rows, kept sheets)
    # Combined nutrients (`blendkit.model.combined`), each after those it refers to; their
    # contents are already in every ingredient's `contents`.
    combined: tuple[Combined, ...] = ()
    # The earlier result's optimal basis, to start this run's LPs from (`blendkit.lp.start`):
    # (label, state) pairs read from its record; empty for a first run or a fresh start.
    start: tuple[tuple[tuple[str, ...], int], ...] = field(default=(), repr=False)

    @classmethod
    def from_frames(
        cls,
        ingredients: pd.DataFrame,
        specs: pd.DataFrame,
        settings: pd.DataFrame | Mapping | None = None,
        groups: pd.DataFrame | None = None,
        products: pd.DataFrame | None = None,
        limits: pd.DataFrame | None = None,
        combined: pd.DataFrame | None = None,
    ) -> Blend:
        """A blend from pandas DataFrames with the workbook's column names, one per sheet.

        Each frame is checked exactly as its sheet would be; `settings` is a frame with
        the columns Setting and Value or a mapping {setting: value}; `combined` has the
        Combined sheet's columns (Nutrient, Sum, Unit); None is an absent sheet. Raises `WorkbookError` with every problem, each placed as
        ``ingredients[row "Maize", column "Cost"]`` (the row's index label and the column's
        name). See `blendkit.read.frames`.
        """
        from blendkit.read.frames import read_frames  # the reader and pandas only when used

        return read_frames(ingredients, specs, settings=settings, groups=groups,
                           products=products, limits=limits, combined=combined)

    @property
    def diet(self) -> bool:
        """True in diet mode: amounts in each food's unit, no sum-to-100 row."""
        return self.settings.mode == "diet"

    def ingredient(self, name: str) -> Ingredient:
        """The ingredient called `name` (exact match); KeyError when there is none."""
        return self._by_name[name]

    @cached_property
    def _by_name(self) -> dict[str, Ingredient]:
        """Ingredients by name, built once: writers look them up per line."""
        return {item.name: item for item in self.ingredients}

    def product_limit(self, product: str | None, ingredient: str) -> ProductLimit | None:
        """The Limits row of the ingredient called `ingredient` in `product` (the first, were
        there two: the reader refuses that), or None."""
        return self._limits_by.get((product, ingredient))

    @cached_property
    def _limits_by(self) -> dict[tuple[str | None, str], ProductLimit]:
        """Limits rows by (product, ingredient), built once: the LP's bounds and the weighing
        rules ask for every ingredient in every product."""
        found: dict[tuple[str | None, str], ProductLimit] = {}
        for limit in self.limits:
            found.setdefault((limit.product, limit.ingredient), limit)
        return found

    def stepped_specs(self, nutrient: str) -> tuple[Spec, ...]:
        """The spec rows on `nutrient` that give a Step, in sheet order."""
        return self._stepped.get(nutrient, ())

    @cached_property
    def _stepped(self) -> dict[str, tuple[Spec, ...]]:
        """Spec rows with a Step by nutrient, built once: every limit of every product
        asks (a set of 200 formulas scanned 5,400 spec rows for each of 35,000 limits)."""
        found: dict[str, list[Spec]] = {}
        for spec in self.specs:
            if spec.step:
                found.setdefault(spec.nutrient, []).append(spec)
        return {name: tuple(rows) for name, rows in found.items()}


# --- The output sheets: blendkit's own, and a user's sheet of the same name --------------------

# The sheets blendkit adds to an output workbook (the titles of the writer's sheets), and the
# workbook property (a custom document property) listing those a run wrote. A later run
# replaces only the sheets that property lists, and keeps a user's own sheet of one of these
# names under a new title. The reader notes the new title; the writer gives it.
OUTPUT_SHEET_TITLES = ("Overview", "Result", "Batch sheet", "Conflicts", "Changes", "Shadow prices", "Run info",
                       "Result data")
# A run of several products writes one Batch sheet each: "Batch sheet", "Batch sheet 2", ...
BATCH_SHEET_TITLE = "Batch sheet"
_NUMBERED_BATCH_SHEET = re.compile(r"batch sheet [1-9][0-9]*")
OUTPUT_SHEETS_PROPERTY = "blendkit output sheets"

# Excel's longest sheet title.
_LONGEST_TITLE = 31


def batch_sheet_title(number: int) -> str:
    """The title of a run's `number`th Batch sheet (1: "Batch sheet", 2: "Batch sheet 2")."""
    return BATCH_SHEET_TITLE if number == 1 else f"{BATCH_SHEET_TITLE} {number}"


def is_output_title(title: str) -> bool:
    """True when `title` (any case) names one of blendkit's output sheets."""
    folded = title.casefold()
    owned = {name.casefold() for name in OUTPUT_SHEET_TITLES}
    return folded in owned or _NUMBERED_BATCH_SHEET.fullmatch(folded) is not None


def output_sheets_value(titles: Iterable[str]) -> str:
    """The value of OUTPUT_SHEETS_PROPERTY for the sheets a run wrote."""
    return json.dumps(list(titles), ensure_ascii=False)


def written_sheets(value: object) -> frozenset[str]:
    """The sheet titles (case-folded) an OUTPUT_SHEETS_PROPERTY value lists; none when the
    property is missing or not as blendkit writes it."""
    try:
        titles = json.loads(value) if isinstance(value, str) else []
    except ValueError:
        return frozenset()
    if not isinstance(titles, list):
        return frozenset()
    return frozenset(title.casefold() for title in titles if isinstance(title, str))


def kept_sheet_titles(titles: list[str], written: frozenset[str]) -> dict[str, str | None]:
    """What becomes of each sheet named like an output sheet (ignoring case) when blendkit
    writes its output: None for a sheet an earlier run wrote (`written`, see
    `written_sheets`), which is replaced; for a user's own sheet, the title it keeps in the
    output: "<title> (input)", numbered when taken, at most 31 characters."""
    owned = {title.casefold() for title in OUTPUT_SHEET_TITLES}
    taken = {title.casefold() for title in titles} | owned
    fate: dict[str, str | None] = {}
    for title in titles:
        if not is_output_title(title):
            continue
        if title.casefold() in written:
            fate[title] = None
            continue
        fate[title] = _free_title(title, taken)
        taken.add(fate[title].casefold())
    return fate


def _free_title(title: str, taken: set[str]) -> str:
    """The first of "<title> (input)", "<title> (input 2)", ... not in `taken` (case-folded)."""
    number = 1
    while True:
        suffix = " (input)" if number == 1 else f" (input {number})"
        candidate = title[: _LONGEST_TITLE - len(suffix)] + suffix
        if candidate.casefold() not in taken:
            return candidate
        number += 1

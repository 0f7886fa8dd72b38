"""One workbook being read: what each sheet reader gets from and adds for the others.

The sheet readers run one after another (see `blendkit.read.workbook.READERS`); each takes
its sheet's table from a `Reading`, reports its problems there, and stores what it read for
the sheets read after it and for the `Blend` built at the end.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from blendkit.errors import Problem
from blendkit.model.blend import Group, Ingredient, Product, ProductLimit, Settings, Spec
from blendkit.model.combined import Combined
from blendkit.read.names import Names
from blendkit.read.tables import Column, Table


@dataclass
class Reading:
    """A workbook part-way through reading: the sheets' tables and problems, and the records
    read so far.

    `tables` holds the known sheets present in the workbook, by name (None for a sheet with
    nothing in it); `titles` and `problems` hold every known sheet, present or not (an
    absent sheet's title is its name).
    """

    tables: dict[str, Table | None]
    titles: dict[str, str]
    problems: dict[str, list[Problem]]
    settings: Settings = field(default_factory=Settings)
    ingredients: list[Ingredient] = field(default_factory=list)
    nutrients: list[Column] | None = None  # None when the Ingredients header could not be read
    ingredient_names: Names | None = None  # set by the Ingredients reader
    dry_matter: Column | None = None  # the nutrient column the Dry matter setting names
    combined: list[Combined] = field(default_factory=list)  # set by the Combined reader
    products: list[Product] = field(default_factory=list)
    product_names: Names | None = None  # set by the Products reader
    specs: list[Spec] = field(default_factory=list)
    groups: list[Group] = field(default_factory=list)
    limits: list[ProductLimit] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)  # what the run should say, though no problem

    def has(self, sheet: str) -> bool:
        """True when the workbook has the sheet (even with nothing in it)."""
        return sheet in self.tables

    def table(self, sheet: str) -> Table | None:
        """The sheet's table; None when the sheet is absent or has nothing in it."""
        return self.tables.get(sheet)

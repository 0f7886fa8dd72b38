"""Hand-built blends and formulas for the writer tests, and a source workbook to match.

The scenario is invented: a goat ration for a made-up farm, with round made-up prices.
Nutrient levels, amounts and costs are worked out here from the contents and inclusions,
so the numbers agree with the source workbook the live formulas read; the reduced costs
and shadow prices are simply chosen, since the writers only render them.
"""

from __future__ import annotations

from pathlib import Path

from openpyxl import Workbook

from blendkit.formula import (
    INFEASIBLE,
    OPTIMAL,
    Formula,
    IngredientLine,
    Limit,
    NutrientLine,
    RunInfo,
)
from blendkit.model import Blend, Ingredient, Settings, Spec

NUTRIENTS = ("Crude protein", "Energy", "Calcium", "Fibre")
UNITS = {"Crude protein": "%", "Energy": "MJ/kg", "Calcium": "%", "Fibre": "%"}
FIRST_NUTRIENT_COLUMN = "F"  # Ingredients sheet: Ingredient, Cost, Min, Max, Use, then nutrients

# name, cost, min, max, use, contents (None = blank cell), inclusion %
ROWS = (
    ("Barley", 210.0, None, None, True, (11.0, 12.5, 0.05, 5.0), 60.0),
    ("Pea meal", 290.0, None, None, True, (22.0, 13.0, None, 6.0), 20.0),
    ("Rapeseed meal", 260.0, None, 18.0, True, (34.0, 10.5, 0.7, 12.0), 18.0),
    ("Limestone", 60.0, 0.5, None, True, (0.0, 0.0, 38.0, 0.0), 2.0),
    ("Wheat feed", 230.0, None, None, True, (15.5, 11.0, 0.12, 8.5), 0.0),
    ("Oat hulls", 120.0, None, None, False, (4.0, 6.0, 0.1, 30.0), 0.0),
)
# Chosen, not computed: what the writers must pass through.
REDUCED_COSTS = {"Wheat feed": 0.35, "Oat hulls": 1.1}
ENTRY_PRICES = {"Wheat feed": 195.0}
BARLEY_COST_FORMULA = "=200+10"  # an input formula the writer must keep

SPECS = (
    # nutrient, min, max
    ("Crude protein", 17.12, None),
    ("Energy", 11.5, 12.5),
    ("Calcium", 0.8, 1.2),
)

SETTINGS = Settings(
    batch_size=2000.0, mass_unit="kg", cost_per="tonne", currency="EUR",
    name="Meadowbank goat ration",
)
NOTES = ("Pea meal has no Calcium value; it was taken as 0.",)


def make_blend(source: Path | None = None) -> Blend:
    """The blend as the reader would build it, with the cells `write_source` fills."""
    ingredients = []
    for offset, (name, cost, minimum, maximum, use, contents, _) in enumerate(ROWS):
        row = offset + 2
        ingredients.append(
            Ingredient(
                name=name,
                cost=cost,
                minimum=minimum,
                maximum=maximum,
                use=use,
                contents={n: (c or 0.0) for n, c in zip(NUTRIENTS, contents)},
                blanks=tuple(n for n, c in zip(NUTRIENTS, contents) if c is None),
                cells={key: f"Ingredients!{col}{row}" for key, col in zip(
                    ("name", "cost", "min", "max", "use"), "ABCDE")},
                content_cells={n: f"Ingredients!{_nutrient_column(i)}{row}"
                               for i, n in enumerate(NUTRIENTS)},
            )
        )
    specs = tuple(
        Spec(nutrient, minimum, maximum,
             {"nutrient": f"Specs!A{row}", "min": f"Specs!B{row}", "max": f"Specs!C{row}"})
        for row, (nutrient, minimum, maximum) in enumerate(SPECS, start=2)
    )
    return Blend(
        ingredients=tuple(ingredients),
        nutrients=NUTRIENTS,
        specs=specs,
        settings=SETTINGS,
        source=source,
        nutrient_units=dict(UNITS),
    )


def levels() -> dict[str, float]:
    """Each nutrient's level in the blend: sum of inclusion x content / 100."""
    return {
        n: sum(row[6] * (row[5][i] or 0.0) for row in ROWS) / 100
        for i, n in enumerate(NUTRIENTS)
    }


def blend_cost() -> float:
    """Cost of the blend in EUR per tonne: sum of inclusion x price / 100."""
    return sum(row[6] * row[1] for row in ROWS) / 100


def optimal_formula(source: Path | None = None) -> Formula:
    """A solved formula for `make_blend`, with one binding spec and one binding ingredient limit."""
    blend = make_blend(source)
    lines = []
    for name, cost, _, _, use, _, inclusion in ROWS:
        amount = inclusion / 100 * SETTINGS.batch_size
        lines.append(
            IngredientLine(
                name=name,
                inclusion=inclusion,
                amount=amount,
                batch_cost=amount * cost / SETTINGS.cost_unit_in_mass_units,
                cost=cost,
                used=use,
                reduced_cost=REDUCED_COSTS.get(name, 0.0),
                entry_price=ENTRY_PRICES.get(name),
            )
        )
    level = levels()
    spec = {nutrient: (minimum, maximum) for nutrient, minimum, maximum in SPECS}
    positions = {"Crude protein": "at min", "Energy": "within", "Calcium": "within",
                 "Fibre": "no spec"}
    nutrients = tuple(
        NutrientLine(n, UNITS[n], *spec.get(n, (None, None)), level[n], positions[n])
        for n in NUTRIENTS
    )
    limits = (
        Limit("nutrient", "Crude protein", "min", 17.12, level["Crude protein"], True, 4.5,
              "Specs!B2"),
        Limit("nutrient", "Energy", "min", 11.5, level["Energy"], False, 0.0, "Specs!B3"),
        Limit("nutrient", "Energy", "max", 12.5, level["Energy"], False, 0.0, "Specs!C3"),
        Limit("nutrient", "Calcium", "min", 0.8, level["Calcium"], False, 0.0, "Specs!B4"),
        Limit("nutrient", "Calcium", "max", 1.2, level["Calcium"], False, 0.0, "Specs!C4"),
        Limit("ingredient", "Rapeseed meal", "max", 18.0, 18.0, True, -1.25, "Ingredients!D4"),
        Limit("ingredient", "Limestone", "min", 0.5, 2.0, False, 0.0, "Ingredients!C5"),
    )
    return Formula(
        blend=blend,
        status=OPTIMAL,
        message="Found the least-cost blend.",
        cost=blend_cost(),
        ingredients=tuple(lines),
        nutrients=nutrients,
        limits=limits,
        iterations=7,
        notes=NOTES,
    )


def infeasible_formula(source: Path | None = None) -> Formula:
    """An unsolved formula: status and message only, no numbers."""
    return Formula(
        blend=make_blend(source),
        status=INFEASIBLE,
        message="No blend meets every limit: Calcium min 0.8 cannot be reached.",
        cost=None,
        ingredients=(),
        nutrients=(),
        limits=(),
        iterations=3,
        notes=("Check the Calcium contents of the ingredients.",),
    )


def run_info(sha256: str) -> RunInfo:
    """Run facts for a source file with the given SHA-256."""
    return RunInfo(
        tool_version="0.1.0",
        started_utc="2026-12-01T21:41:45Z",
        input_name="meadowbank.xlsx",
        input_sha256=sha256,
    )


def write_source(path: Path, extra_sheets: tuple[str, ...] = ()) -> Path:
    """A small input workbook laid out as `make_blend`'s cells say; returns `path`.

    `extra_sheets` adds empty sheets with those names (for output sheets left by an
    earlier run, for example).
    """
    workbook = Workbook()
    sheet = workbook.active
    sheet.title = "Ingredients"
    sheet.append(["Ingredient", "Cost (EUR/t)", "Min (%)", "Max (%)", "Use",
                  *(f"{n} ({UNITS[n]})" for n in NUTRIENTS)])
    for name, cost, minimum, maximum, use, contents, _ in ROWS:
        sheet.append([name, cost, minimum, maximum, "yes" if use else "no", *contents])
    sheet["B2"] = BARLEY_COST_FORMULA
    specs = workbook.create_sheet("Specs")
    specs.append(["Nutrient", "Min", "Max"])
    for row in SPECS:
        specs.append(list(row))
    settings = workbook.create_sheet("Settings")
    settings.append(["Setting", "Value"])
    for key, value in (("Name", SETTINGS.name), ("Batch size", SETTINGS.batch_size),
                       ("Mass unit", SETTINGS.mass_unit), ("Cost per", SETTINGS.cost_per),
                       ("Currency", SETTINGS.currency)):
        settings.append([key, value])
    for name in extra_sheets:
        workbook.create_sheet(name)["A1"] = "left over from an earlier run"
    workbook.save(path)
    return path


def _nutrient_column(index: int) -> str:
    """Column letter of the index-th nutrient on the Ingredients sheet."""
    return chr(ord(FIRST_NUTRIENT_COLUMN) + index)

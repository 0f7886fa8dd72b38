"""Hand-built blends and formulas for the writer tests, and a source workbook to match.

The scenarios are invented: a goat ration for a made-up farm, with round made-up prices;
further down, a grower pig ration with dry-matter and ratio specs, a group and stocks, a
hostel's day menu (diet mode) and three broiler feeds made from shared stocks; at the end,
the goat ration made infeasible (two conflicts and a way out) and with a soft spec broken.
Nutrient levels, amounts and costs are worked out here from the contents and inclusions,
so the numbers agree with the source workbook the live formulas read; the reduced costs
and shadow prices are simply chosen, since the writers only render them.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from pathlib import Path

from openpyxl import Workbook
from openpyxl.packaging.custom import StringProperty
from openpyxl.utils import get_column_letter

from blendkit.model.formula import (
    INFEASIBLE,
    OPTIMAL,
    ConflictLine,
    Formula,
    IngredientLine,
    Limit,
    NutrientLine,
    ProductFormula,
    Relaxation,
    RunInfo,
    StockLine,
)
from blendkit.model.blend import (
    DRY_MATTER, OUTPUT_SHEETS_PROPERTY, Blend, Group, Ingredient, Product, Settings, Spec, output_sheets_value,
)

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

    `extra_sheets` adds sheets with those names, marked (as blendkit marks its output
    sheets) as left by an earlier run.
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
    if extra_sheets:
        workbook.custom_doc_props.append(StringProperty(name=OUTPUT_SHEETS_PROPERTY, value=output_sheets_value(extra_sheets)))
    workbook.save(path)
    return path


def _nutrient_column(index: int) -> str:
    """Column letter of the index-th nutrient on the Ingredients sheet."""
    return chr(ord(FIRST_NUTRIENT_COLUMN) + index)


# --- the full model: a ratio and dry-matter ration, a diet, three products ----------------
#
# Each scenario below is invented, with round made-up prices and contents of a plausible
# size. As above, levels, amounts and costs are worked out from the contents and the
# inclusions (amounts), so they agree with the source workbook the live formulas read;
# reduced costs and shadow prices are chosen.




# Ingredients sheet headers of the fixed columns, by the key the reader gives their cells.
_HEADERS = {"name": "Ingredient", "unit": "Unit", "cost": "Cost", "min": "Min", "max": "Max",
            "use": "Use", "stock": "Stock"}


@dataclass(frozen=True)
class Row:
    """One ingredient of a scenario and its inclusion % (diet: amount) in the result.

    `x` holds one value per product for a run of several products.
    """

    name: str
    cost: float
    minimum: float | None
    maximum: float | None
    use: bool
    contents: tuple[float | None, ...]
    x: tuple[float, ...]
    unit: str = ""
    stock: float | None = None
    reduced_cost: float = 0.0
    entry_price: float | None = None


def _items(rows: tuple[Row, ...], keys: tuple[str, ...], nutrients: tuple[str, ...]
           ) -> tuple[Ingredient, ...]:
    """The ingredients as the reader builds them from `_write_ingredients` 's sheet."""
    items = []
    for row_number, row in enumerate(rows, start=2):
        items.append(Ingredient(
            name=row.name, cost=row.cost, minimum=row.minimum, maximum=row.maximum,
            use=row.use,
            contents={n: (c or 0.0) for n, c in zip(nutrients, row.contents)},
            blanks=tuple(n for n, c in zip(nutrients, row.contents) if c is None),
            cells={key: f"Ingredients!{get_column_letter(i)}{row_number}"
                   for i, key in enumerate(keys, start=1)},
            content_cells={n: f"Ingredients!{get_column_letter(len(keys) + i)}{row_number}"
                           for i, n in enumerate(nutrients, start=1)},
            unit=row.unit, stock=row.stock,
        ))
    return tuple(items)


def _write_ingredients(workbook: Workbook, rows: tuple[Row, ...], keys: tuple[str, ...],
                       nutrients: tuple[str, ...], units: dict[str, str]) -> None:
    """The Ingredients sheet: the `keys` columns, then one column per nutrient."""
    sheet = workbook.active
    sheet.title = "Ingredients"
    sheet.append([*(_HEADERS[key] for key in keys), *(f"{n} ({units[n]})" for n in nutrients)])
    for row in rows:
        values = {"name": row.name, "unit": row.unit, "cost": row.cost, "min": row.minimum,
                  "max": row.maximum, "use": "yes" if row.use else "no", "stock": row.stock}
        sheet.append([*(values[key] for key in keys), *row.contents])


def _write_table(workbook: Workbook, title: str, rows: list[list]) -> None:
    """A sheet holding `rows`, the first being the header."""
    sheet = workbook.create_sheet(title)
    for row in rows:
        sheet.append(row)


def _levels(rows: tuple[Row, ...], nutrients: tuple[str, ...], per: float, p: int = 0
            ) -> dict[str, float]:
    """Each nutrient's level: per x sum of inclusion (amount) x content."""
    return {n: per * sum(row.x[p] * (row.contents[i] or 0.0) for row in rows)
            for i, n in enumerate(nutrients)}


def _lines(rows: tuple[Row, ...], amount: float, settings: Settings, diet: bool, p: int = 0
           ) -> tuple[IngredientLine, ...]:
    """The ingredient lines of product p (or the one blend, or the diet)."""
    lines = []
    for row in rows:
        x = row.x[p]
        if diet:
            mass, money = x, x * row.cost
        else:
            mass = x / 100 * amount
            money = mass / settings.cost_unit_in_mass_units * row.cost
        lines.append(IngredientLine(row.name, x, mass, money, row.cost, row.use,
                                    row.reduced_cost, row.entry_price))
    return tuple(lines)


def _position(level: float, low: float | None, high: float | None) -> str:
    """As the analysis words it (levels here sit exactly at a bound or clearly off it)."""
    if low is None and high is None:
        return "no spec"
    if level == low:
        return "at min"
    if level == high:
        return "at max"
    return "within"


# --- a grower pig ration with a ratio, dry-matter specs, a group and stocks -------------

RATION_NUTRIENTS = ("Dry matter", "Crude protein", "Calcium", "Available phosphorus", "Fibre")
RATION_UNITS = {"Dry matter": "%", "Crude protein": "%", "Calcium": "%",
                "Available phosphorus": "%", "Fibre": "%"}
RATION_KEYS = ("name", "cost", "min", "max", "use", "stock")
RATION_ROWS = (
    #   name                    cost   min   max   use   DM    CP    Ca    avP   Fibre    x
    Row("Wheat",                215.0, None, None, True, (87.0, 11.5, 0.05, 0.12, 2.5), (55.0,)),
    Row("Barley",               200.0, None, None, True, (86.0, 10.5, 0.06, 0.10, 4.5), (15.0,),
        stock=5000.0),
    Row("Soybean meal",         410.0, None, None, True, (88.0, 46.0, 0.30, 0.20, 6.0), (22.0,),
        stock=440.0),
    Row("Wet brewers' grains",  60.0,  None, 5.0,  True, (24.0, 6.0, 0.08, 0.12, 4.0), (5.0,)),
    Row("Limestone",            55.0,  None, None, True, (99.0, 0.0, 38.0, 0.0, 0.0), (1.5,)),
    Row("Dicalcium phosphate",  600.0, None, None, True, (97.0, 0.0, 23.0, 18.0, 0.0), (1.5,)),
    Row("Peas",                 270.0, None, None, True, (86.0, 21.0, 0.08, 0.15, 5.5), (0.0,),
        reduced_cost=0.42, entry_price=228.0),
)
RATION_SETTINGS = Settings(batch_size=2000.0, mass_unit="kg", cost_per="tonne", currency="EUR",
                           name="Ashgrove grower pigs")
RATIO = "Calcium / Available phosphorus"
CEREALS = ("Wheat", "Barley")


def ration_levels() -> dict[str, float]:
    """As-fed levels of the grower ration."""
    return _levels(RATION_ROWS, RATION_NUTRIENTS, 1 / 100)


def ration_special_levels() -> dict[str, float]:
    """Its ratio and dry-matter levels: "<nutrient> (dry matter)" and the ratio's text.

    Rounded to 12 significant digits, so that a bound set to one of them survives the trip
    through a workbook cell (stored to 16 digits) unchanged.
    """
    level = ration_levels()
    dry = level["Dry matter"] / 100
    return {
        key: float(f"{value:.12g}")
        for key, value in (
            ("Crude protein (dry matter)", level["Crude protein"] / dry),
            ("Fibre (dry matter)", level["Fibre"] / dry),
            (RATIO, level["Calcium"] / level["Available phosphorus"]),
        )
    }


def _ration_specs() -> tuple[tuple, ...]:
    """nutrient, min, max, basis; the dry-matter protein min and the ratio max bind."""
    special = ration_special_levels()
    return (
        ("Crude protein", 16.0, None, "as fed"),
        ("Crude protein", special["Crude protein (dry matter)"], None, DRY_MATTER),
        ("Fibre", None, 5.0, DRY_MATTER),
        (RATIO, 1.8, special[RATIO], "as fed"),
    )


def make_ration(source: Path | None = None) -> Blend:
    """The grower ration as the reader builds it from `write_ration_source`'s workbook."""
    specs = []
    for row, (nutrient, minimum, maximum, basis) in enumerate(_ration_specs(), start=2):
        ratio = tuple(nutrient.split(" / ")) if " / " in nutrient else None
        specs.append(Spec(nutrient, minimum, maximum,
                          {"nutrient": f"Specs!A{row}", "min": f"Specs!B{row}",
                           "max": f"Specs!C{row}", "basis": f"Specs!D{row}"},
                          basis=basis, ratio=ratio))
    group = Group("Cereals", CEREALS, None, 70.0,
                  {"group": "Groups!A2", "ingredients": "Groups!B2", "min": "Groups!C2",
                   "max": "Groups!D2"})
    return Blend(
        ingredients=_items(RATION_ROWS, RATION_KEYS, RATION_NUTRIENTS),
        nutrients=RATION_NUTRIENTS, specs=tuple(specs), settings=RATION_SETTINGS,
        source=source, nutrient_units=dict(RATION_UNITS), groups=(group,),
    )


def ration_formula(source: Path | None = None) -> Formula:
    """A solved grower ration: dry-matter and ratio lines, and group, stock and ratio limits
    that bind."""
    blend = make_ration(source)
    level = ration_levels()
    special = ration_special_levels()
    specs = _ration_specs()
    nutrients = [
        NutrientLine("Dry matter", "%", None, None, level["Dry matter"], "no spec"),
        NutrientLine("Crude protein", "%", 16.0, None, level["Crude protein"], "within"),
        NutrientLine("Calcium", "%", None, None, level["Calcium"], "no spec"),
        NutrientLine("Available phosphorus", "%", None, None, level["Available phosphorus"],
                     "no spec"),
        NutrientLine("Fibre", "%", None, None, level["Fibre"], "no spec"),
        NutrientLine("Crude protein", "%", specs[1][1], None,
                     special["Crude protein (dry matter)"], "at min", basis=DRY_MATTER),
        NutrientLine("Fibre", "%", None, 5.0, special["Fibre (dry matter)"], "within",
                     basis=DRY_MATTER),
        NutrientLine(RATIO, "", 1.8, specs[3][2], special[RATIO], "at max", kind="ratio"),
    ]
    cereals = sum(row.x[0] for row in RATION_ROWS if row.name in CEREALS)
    soy = next(row for row in RATION_ROWS if row.name == "Soybean meal")
    barley = next(row for row in RATION_ROWS if row.name == "Barley")
    batch = RATION_SETTINGS.batch_size
    stocks = (
        StockLine("Barley", barley.x[0] / 100 * batch, 5000.0, False, 0.0, "Ingredients!F3"),
        StockLine("Soybean meal", soy.x[0] / 100 * batch, 440.0, True, -0.0375, "Ingredients!F4"),
    )
    limits = (
        Limit("nutrient", "Crude protein", "min", 16.0, level["Crude protein"], False, 0.0,
              "Specs!B2"),
        Limit("nutrient", "Crude protein", "min", specs[1][1], special["Crude protein (dry matter)"],
              True, 3.85, "Specs!B3", basis=DRY_MATTER),
        Limit("nutrient", "Fibre", "max", 5.0, special["Fibre (dry matter)"], False, 0.0,
              "Specs!C4", basis=DRY_MATTER),
        Limit("ratio", RATIO, "min", 1.8, special[RATIO], False, 0.0, "Specs!B5"),
        Limit("ratio", RATIO, "max", specs[3][2], special[RATIO], True, -6.2, "Specs!C5"),
        Limit("group", "Cereals", "max", 70.0, cereals, True, -0.55, "Groups!D2"),
        Limit("ingredient", "Wet brewers' grains", "max", 5.0, 5.0, True, -1.4, "Ingredients!D5"),
        Limit("stock", "Barley", "max", 5000.0, stocks[0].used, False, 0.0, "Ingredients!F3"),
        Limit("stock", "Soybean meal", "max", 440.0, stocks[1].used, True, -0.0375,
              "Ingredients!F4"),
    )
    lines = _lines(RATION_ROWS, batch, RATION_SETTINGS, diet=False)
    cost = sum(row.x[0] * row.cost for row in RATION_ROWS) / 100
    product = ProductFormula(None, batch, cost, lines, tuple(nutrients), limits[:-2])
    return Formula(
        blend=blend, status=OPTIMAL, message="least-cost blend found", cost=cost,
        ingredients=lines, nutrients=tuple(nutrients), limits=limits, iterations=11,
        products=(product,), stocks=stocks,
    )


def write_ration_source(path: Path) -> Path:
    """The grower ration's input workbook, laid out as `make_ration`'s cells say."""
    workbook = Workbook()
    _write_ingredients(workbook, RATION_ROWS, RATION_KEYS, RATION_NUTRIENTS, RATION_UNITS)
    _write_table(workbook, "Specs", [["Nutrient", "Min", "Max", "Basis"],
                                     *(list(spec) for spec in _ration_specs())])
    _write_table(workbook, "Groups", [["Group", "Ingredients", "Min", "Max"],
                                      ["Cereals", ", ".join(CEREALS), None, 70.0]])
    _write_table(workbook, "Settings", [
        ["Setting", "Value"], ["Name", RATION_SETTINGS.name],
        ["Batch size", RATION_SETTINGS.batch_size], ["Currency", RATION_SETTINGS.currency]])
    workbook.save(path)
    return path


# --- a day's menu for a hostel (diet mode) ---------------------------------------------

DIET_NUTRIENTS = ("Energy", "Protein", "Calcium", "Vitamin C")
DIET_UNITS = {"Energy": "kcal", "Protein": "g", "Calcium": "mg", "Vitamin C": "mg"}
DIET_KEYS = ("name", "unit", "cost", "min", "max", "use")
DIET_ROWS = (
    #   name                 cost  min   max   use    kcal   prot  Ca     vit C  amount
    Row("Porridge oats",     0.08, None, 2.0,  True,  (150.0, 5.2, 20.0, 0.0), (2.0,),
        unit="40 g portion"),
    Row("Wholemeal bread",   0.09, None, 6.0,  True,  (95.0, 4.0, 40.0, 0.0), (6.0,),
        unit="slice"),
    Row("Semi-skimmed milk", 0.16, None, None, True,  (94.0, 6.8, 240.0, 2.0), (2.5,),
        unit="glass (200 ml)"),
    Row("Lentil soup",       0.55, None, None, True,  (180.0, 11.0, 40.0, 6.0), (1.5,),
        unit="bowl"),
    Row("Baked potato",      0.20, None, None, True,  (160.0, 4.3, 26.0, 20.0), (3.0,),
        unit="medium potato"),
    Row("Apples",            0.25, None, None, True,  (80.0, 0.4, 8.0, 6.0), (1.0,),
        unit="piece"),
    Row("Oranges",           0.30, None, None, True,  (60.0, 1.2, 50.0, 70.0), (1.0,),
        unit="piece"),
    Row("Cheddar",           0.35, None, None, True,  (125.0, 7.5, 220.0, None), (0.0,),
        unit="30 g slice", reduced_cost=0.04, entry_price=0.31),
    Row("Peanut butter",     0.12, None, None, False, (95.0, 3.6, 7.0, 0.0), (0.0,),
        unit="tablespoon", reduced_cost=0.02),
)
# nutrient, min, max
DIET_SPECS = (("Energy", 1900.0, 2400.0), ("Protein", 70.0, None), ("Calcium", 1000.0, None),
              ("Vitamin C", 150.0, None))
FRUIT = ("Apples", "Oranges")
DIET_SETTINGS = Settings(currency="EUR", name="Wrenhill hostel day menu", mode="diet")


def diet_levels() -> dict[str, float]:
    """Daily totals of the menu: sum of amount x content per unit."""
    return _levels(DIET_ROWS, DIET_NUTRIENTS, 1.0)


def diet_cost() -> float:
    """The menu's cost in EUR: sum of amount x price per unit."""
    return sum(row.x[0] * row.cost for row in DIET_ROWS)


def make_diet(source: Path | None = None) -> Blend:
    """The menu as the reader builds it from `write_diet_source`'s workbook."""
    specs = tuple(
        Spec(nutrient, minimum, maximum,
             {"nutrient": f"Specs!A{row}", "min": f"Specs!B{row}", "max": f"Specs!C{row}"})
        for row, (nutrient, minimum, maximum) in enumerate(DIET_SPECS, start=2)
    )
    group = Group("Fruit", FRUIT, 2.0, None,
                  {"group": "Groups!A2", "ingredients": "Groups!B2", "min": "Groups!C2",
                   "max": "Groups!D2"})
    return Blend(
        ingredients=_items(DIET_ROWS, DIET_KEYS, DIET_NUTRIENTS), nutrients=DIET_NUTRIENTS,
        specs=specs, settings=DIET_SETTINGS, source=source, nutrient_units=dict(DIET_UNITS),
        groups=(group,),
    )


def diet_formula(source: Path | None = None) -> Formula:
    """A solved day's menu: amounts in each food's unit, totals against daily intakes."""
    blend = make_diet(source)
    level = diet_levels()
    spec = {nutrient: (low, high) for nutrient, low, high in DIET_SPECS}
    nutrients = tuple(
        NutrientLine(n, DIET_UNITS[n], *spec[n], level[n], _position(level[n], *spec[n]))
        for n in DIET_NUTRIENTS
    )
    fruit = sum(row.x[0] for row in DIET_ROWS if row.name in FRUIT)
    limits = (
        Limit("nutrient", "Energy", "min", 1900.0, level["Energy"], False, 0.0, "Specs!B2"),
        Limit("nutrient", "Energy", "max", 2400.0, level["Energy"], False, 0.0, "Specs!C2"),
        Limit("nutrient", "Protein", "min", 70.0, level["Protein"], False, 0.0, "Specs!B3"),
        Limit("nutrient", "Calcium", "min", 1000.0, level["Calcium"], False, 0.0, "Specs!B4"),
        Limit("nutrient", "Vitamin C", "min", 150.0, level["Vitamin C"], True, 0.0021,
              "Specs!B5"),
        Limit("group", "Fruit", "min", 2.0, fruit, True, 0.07, "Groups!C2"),
        Limit("ingredient", "Porridge oats", "max", 2.0, 2.0, True, -0.035, "Ingredients!E2"),
        Limit("ingredient", "Wholemeal bread", "max", 6.0, 6.0, True, -0.012, "Ingredients!E3"),
        Limit("ingredient", "Peanut butter", "max", 0.0, 0.0, False, 0.0, "Ingredients!F10"),
    )
    lines = _lines(DIET_ROWS, 0.0, DIET_SETTINGS, diet=True)
    return Formula(
        blend=blend, status=OPTIMAL, message="least-cost diet found", cost=diet_cost(),
        ingredients=lines, nutrients=nutrients, limits=limits, iterations=9,
        notes=("Cheddar: 1 blank nutrient cell counted as 0 (Vitamin C)",),
        products=(ProductFormula(None, DIET_SETTINGS.batch_size, diet_cost(), lines, nutrients,
                                 limits),),
    )


def write_diet_source(path: Path) -> Path:
    """The menu's input workbook, laid out as `make_diet`'s cells say."""
    workbook = Workbook()
    _write_ingredients(workbook, DIET_ROWS, DIET_KEYS, DIET_NUTRIENTS, DIET_UNITS)
    _write_table(workbook, "Specs", [["Nutrient", "Min", "Max"], *(list(s) for s in DIET_SPECS)])
    _write_table(workbook, "Groups", [["Group", "Ingredients", "Min", "Max"],
                                      ["Fruit", ", ".join(FRUIT), 2.0, None]])
    _write_table(workbook, "Settings", [
        ["Setting", "Value"], ["Name", DIET_SETTINGS.name], ["Mode", "diet"],
        ["Currency", DIET_SETTINGS.currency]])
    workbook.save(path)
    return path


# --- three broiler feeds made from shared stocks ----------------------------------------

MILL_NUTRIENTS = ("Crude protein", "Energy", "Calcium")
MILL_UNITS = {"Crude protein": "%", "Energy": "MJ/kg", "Calcium": "%"}
MILL_KEYS = ("name", "cost", "min", "max", "use", "stock")
PRODUCTS = (("Starter crumb", 8000.0), ("Grower pellet", 20000.0), ("Finisher pellet", 12000.0))
MILL_ROWS = (
    #   name             cost   min   max   use   CP    ME    Ca      starter grower finisher
    Row("Wheat",         220.0, None, None, True, (11.5, 12.8, 0.05), (59.5, 64.0, 70.0)),
    Row("Soybean meal",  420.0, None, None, True, (46.0, 9.8, 0.30), (33.0, 20.0, 3.0),
        stock=7000.0),
    Row("Rapeseed meal", 280.0, None, 20.0, True, (34.0, 8.0, 0.70), (0.0, 8.0, 18.5),
        stock=4000.0),
    Row("Vegetable oil", 950.0, None, 6.0,  True, (0.0, 35.0, 0.0), (5.0, 5.5, 6.0)),
    Row("Limestone",     60.0,  None, None, True, (0.0, 0.0, 38.0), (2.5, 2.5, 2.5)),
)
MILL_SETTINGS = Settings(mass_unit="kg", cost_per="tonne", currency="EUR",
                         name="Kestrel Hill broiler feeds")
# Reduced costs per product, chosen: Rapeseed meal is out of the starter.
MILL_REDUCED = {("Starter crumb", "Rapeseed meal"): (0.18, 262.0)}


def mill_levels(p: int) -> dict[str, float]:
    """Product p's nutrient levels."""
    return _levels(MILL_ROWS, MILL_NUTRIENTS, 1 / 100, p)


def mill_costs() -> list[float]:
    """Each product's cost in EUR per tonne."""
    return [sum(row.x[p] * row.cost for row in MILL_ROWS) / 100 for p in range(len(PRODUCTS))]


def mill_total() -> float:
    """The run's total cost in EUR: each product's cost per tonne x tonnes made."""
    return sum(cost * amount / 1000 for cost, (_, amount) in zip(mill_costs(), PRODUCTS))


def _mill_specs() -> tuple[tuple, ...]:
    """nutrient, min, max, product; each product's protein min binds, so does the starter's
    energy min. The calcium spec applies to every product."""
    return (
        ("Crude protein", mill_levels(0)["Crude protein"], None, "Starter crumb"),
        ("Crude protein", mill_levels(1)["Crude protein"], None, "Grower pellet"),
        ("Crude protein", mill_levels(2)["Crude protein"], None, "Finisher pellet"),
        ("Energy", mill_levels(0)["Energy"], None, "Starter crumb"),
        ("Energy", 12.7, None, "Grower pellet"),
        ("Energy", 12.8, None, "Finisher pellet"),
        ("Calcium", 0.9, 1.2, None),
    )


def make_mill(source: Path | None = None) -> Blend:
    """The three-product run as the reader builds it from `write_mill_source`'s workbook."""
    specs = tuple(
        Spec(nutrient, minimum, maximum,
             {"nutrient": f"Specs!A{row}", "min": f"Specs!B{row}", "max": f"Specs!C{row}",
              "product": f"Specs!D{row}"}, product=product)
        for row, (nutrient, minimum, maximum, product) in enumerate(_mill_specs(), start=2)
    )
    products = tuple(Product(name, amount, {"product": f"Products!A{row}",
                                            "amount": f"Products!B{row}"})
                     for row, (name, amount) in enumerate(PRODUCTS, start=2))
    return Blend(
        ingredients=_items(MILL_ROWS, MILL_KEYS, MILL_NUTRIENTS), nutrients=MILL_NUTRIENTS,
        specs=specs, settings=MILL_SETTINGS, source=source, nutrient_units=dict(MILL_UNITS),
        products=products,
    )


def mill_formula(source: Path | None = None) -> Formula:
    """A solved run of three products sharing a binding soybean meal stock."""
    blend = make_mill(source)
    specs = _mill_specs()
    shadow = {("Starter crumb", "Crude protein"): 5.1, ("Grower pellet", "Crude protein"): 4.6,
              ("Finisher pellet", "Crude protein"): 3.9, ("Starter crumb", "Energy"): 21.5}
    products, every_limit = [], []
    for p, ((name, amount), cost) in enumerate(zip(PRODUCTS, mill_costs())):
        level = mill_levels(p)
        mine = [(row, spec) for row, spec in enumerate(specs, start=2) if spec[3] in (None, name)]
        nutrients = []
        for nutrient in MILL_NUTRIENTS:
            bounds = next(((low, high) for _, (n, low, high, _) in mine if n == nutrient),
                          (None, None))
            nutrients.append(NutrientLine(nutrient, MILL_UNITS[nutrient], *bounds, level[nutrient],
                                          _position(level[nutrient], *bounds)))
        limits = []
        for row, (nutrient, low, high, _) in mine:
            for side, bound, column in (("min", low, "B"), ("max", high, "C")):
                if bound is None:
                    continue
                binding = level[nutrient] == bound
                limits.append(Limit("nutrient", nutrient, side, bound, level[nutrient], binding,
                                    shadow.get((name, nutrient), 0.0) if binding else 0.0,
                                    f"Specs!{column}{row}", name))
        for row_number, row in enumerate(MILL_ROWS, start=2):
            if row.maximum is not None:
                binding = row.x[p] == row.maximum
                limits.append(Limit("ingredient", row.name, "max", row.maximum, row.x[p], binding,
                                    -2.4 if binding else 0.0, f"Ingredients!D{row_number}", name))
        lines = tuple(
            dataclasses.replace(line, reduced_cost=MILL_REDUCED[(name, line.name)][0],
                                entry_price=MILL_REDUCED[(name, line.name)][1])
            if (name, line.name) in MILL_REDUCED else line
            for line in _lines(MILL_ROWS, amount, MILL_SETTINGS, diet=False, p=p)
        )
        products.append(ProductFormula(name, amount, cost, lines, tuple(nutrients), tuple(limits)))
        every_limit.extend(limits)
    stocks = []
    for row_number, row in enumerate(MILL_ROWS, start=2):
        if row.stock is None:
            continue
        used = sum(x / 100 * amount for x, (_, amount) in zip(row.x, PRODUCTS))
        binding = used == row.stock
        price = -0.095 if binding else 0.0
        stocks.append(StockLine(row.name, used, row.stock, binding, price, f"Ingredients!F{row_number}"))
        every_limit.append(Limit("stock", row.name, "max", row.stock, used, binding, price,
                                 f"Ingredients!F{row_number}", None))
    return Formula(
        blend=blend, status=OPTIMAL, message="least-cost products found", cost=mill_total(),
        ingredients=(), nutrients=(), limits=tuple(every_limit), iterations=23,
        products=tuple(products), stocks=tuple(stocks),
    )


def write_mill_source(path: Path) -> Path:
    """The three-product run's input workbook, laid out as `make_mill`'s cells say."""
    workbook = Workbook()
    _write_ingredients(workbook, MILL_ROWS, MILL_KEYS, MILL_NUTRIENTS, MILL_UNITS)
    _write_table(workbook, "Specs", [["Nutrient", "Min", "Max", "Product"],
                                     *(list(spec) for spec in _mill_specs())])
    _write_table(workbook, "Products", [["Product", "Amount"], *(list(p) for p in PRODUCTS)])
    _write_table(workbook, "Settings", [
        ["Setting", "Value"], ["Name", MILL_SETTINGS.name], ["Currency", MILL_SETTINGS.currency]])
    workbook.save(path)
    return path


# --- conflicts and soft limits -------------------------------------------------------------
#
# The goat ration again, made infeasible: its protein min raised to 26 % (Rapeseed meal,
# the richest feed, is capped at 18 %) and Limestone, the only calcium source, switched
# off (Use = no) with the calcium min at 0.8 %. The moves and the relaxation are chosen,
# since the writers only render them.

CONFLICT_PROTEIN_MIN = 26.0


def _member(conflict: int, kind: str, name: str, side: str, bound: float, cell: str | None,
            relax_to: float | None, rule: str) -> ConflictLine:
    """One conflict member, its text worded as the diagnosis words it."""
    return ConflictLine(conflict, kind, name, None, side, bound, cell, relax_to,
                        f"{cell or ''}  {name}  {rule}".strip())


CONFLICTS = (
    # Listed with the sum-to-100 row first, as the diagnosis may list it.
    _member(1, "total", "total", "eq", 100.0, None, None, "inclusions sum to 100 %"),
    _member(1, "nutrient", "Crude protein", "min", CONFLICT_PROTEIN_MIN, "Specs!B2", 21.5, "min 26"),
    _member(1, "ingredient", "Rapeseed meal", "max", 18.0, "Ingredients!D4", 44.25, "max 18"),
    _member(2, "nutrient", "Calcium", "min", 0.8, "Specs!B4", 0.1326, "min 0.8"),
    _member(2, "use", "Limestone", "max", 0.0, "Ingredients!E5", 1.75, "Use = no"),
    _member(2, "total", "total", "eq", 100.0, None, None, "inclusions sum to 100 %"),
)
CHANGES = (
    _member(0, "nutrient", "Crude protein", "min", CONFLICT_PROTEIN_MIN, "Specs!B2", 21.5, "min 26"),
    _member(0, "use", "Limestone", "max", 0.0, "Ingredients!E5", 1.75, "Use = no"),
)


def conflicted_formula(source: Path | None = None, complete: bool = False) -> Formula:
    """An infeasible goat ration with two conflicts, more perhaps to come (unless
    `complete`), and a least-cost way out whose blend is `optimal_formula`'s."""
    blend = make_blend(source)
    specs = tuple(dataclasses.replace(spec, minimum=CONFLICT_PROTEIN_MIN)
                  if spec.nutrient == "Crude protein" else spec for spec in blend.specs)
    ingredients = tuple(dataclasses.replace(item, use=False) if item.name == "Limestone" else item
                        for item in blend.ingredients)
    blend = dataclasses.replace(blend, specs=specs, ingredients=ingredients)
    return Formula(
        blend=blend,
        status=INFEASIBLE,
        message="the specs and limits cannot all be met at once",
        cost=None, ingredients=(), nutrients=(), limits=(), iterations=5,
        notes=("Pea meal: 1 blank nutrient cell counted as 0 (Calcium)",),
        conflicts=CONFLICTS,
        conflicts_complete=complete,
        relaxation=Relaxation(CHANGES, optimal_formula(source)),
    )


# The goat ration with a soft protein min of 18.5 % at a penalty of 6 EUR/t per unit: the
# blend stays at 17.12 % and pays for the 1.38 % it misses.
SOFT_PROTEIN_MIN = 18.5
SOFT_PENALTY = 6.0
SOFT_NOTE = ("Soft spec not met: Crude protein min 18.5 is missed by 1.38 (level 17.12) at a "
             "penalty of 6 per unit (Specs!B2)")


def soft_formula(source: Path | None = None) -> Formula:
    """`optimal_formula` with its protein min made soft and broken."""
    formula = optimal_formula(source)
    level = levels()["Crude protein"]
    specs = tuple(dataclasses.replace(spec, minimum=SOFT_PROTEIN_MIN, penalty=SOFT_PENALTY)
                  if spec.nutrient == "Crude protein" else spec for spec in formula.blend.specs)
    blend = dataclasses.replace(formula.blend, specs=specs)
    limits = tuple(
        dataclasses.replace(limit, bound=SOFT_PROTEIN_MIN, binding=True, shadow_price=SOFT_PENALTY,
                            violation=SOFT_PROTEIN_MIN - level, penalty=SOFT_PENALTY)
        if limit.name == "Crude protein" else limit for limit in formula.limits)
    nutrients = tuple(
        dataclasses.replace(line, minimum=SOFT_PROTEIN_MIN, position="below min")
        if line.name == "Crude protein" else line for line in formula.nutrients)
    return dataclasses.replace(formula, blend=blend, limits=limits, nutrients=nutrients,
                               notes=(SOFT_NOTE, *formula.notes))


def soft_mill_formula(source: Path | None = None) -> Formula:
    """`mill_formula` with the grower's energy min 12.7 made soft and missed by 0.2."""
    formula = mill_formula(source)

    def soften(limit: Limit) -> Limit:
        if (limit.product, limit.name, limit.side) != ("Grower pellet", "Energy", "min"):
            return limit
        return dataclasses.replace(limit, level=limit.bound - 0.2, violation=0.2, penalty=3.5)

    products = tuple(dataclasses.replace(product, limits=tuple(map(soften, product.limits)))
                     for product in formula.products)
    return dataclasses.replace(formula, products=products, limits=tuple(map(soften, formula.limits)))

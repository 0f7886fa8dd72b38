"""Worked examples: ready-made workbooks to try blendkit on and to test it against.

Each example is plain data (an `Example`) kept in `EXAMPLES` under a short name;
`write_example` turns one into a workbook in the format the reader expects. Add a new
example by writing another `Example` and listing it in `EXAMPLES`.

    broiler     a broiler starter feed (one blend)
    feed        a laying-hen feed with a ratio spec and ingredient groups
    diet        a day's menu for one adult (diet mode: amounts of foods per 100 g)
    fertilizer  an N-P-K 15-15-15 bulk blend with sulphur, from straight materials
    plant       a pig feed plant making three feeds from shared, limited stocks

Run ``python -m blendkit.authoring.examples OUT_DIR`` to write every example into OUT_DIR.

The scenarios, places, people and prices are invented. Composition values are from
memory of published feed, food and fertilizer tables; for demonstration only, not for
feeding, eating or spreading.
"""

from __future__ import annotations

import argparse
from dataclasses import dataclass
from pathlib import Path

from openpyxl import Workbook
from openpyxl.styles import Alignment, Font
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.worksheet import Worksheet

from blendkit import CAUTION

# Number formats for the written cells: at least two decimals, up to four where the value has them.
AMOUNT_FORMAT = "0.00##"
COST_FORMAT = "#,##0"
# Diet-mode prices are small (per 100 g), so they keep two decimals.
SMALL_COST_FORMAT = "#,##0.00"

# Column widths in characters: wide enough for the header, never wider than this.
MAX_COLUMN_WIDTH = 40
NOTES_COLUMN_WIDTH = 110

# Short forms of the "Cost per" setting for the cost column header; others are written out.
COST_PER_SHORT = {"tonne": "t", "metric ton": "t"}


@dataclass(frozen=True)
class Example:
    """One worked example, laid out the way its workbook is.

    `nutrients` are the nutrient columns as (name, unit). Each row of `ingredients` is
    (name, cost, min, max, use, *extras, *contents): cost per `Cost per` (per the
    food's Unit in diet mode), limits in % (amounts in diet mode), then one value per
    `extra_columns` header (such as "Unit" or "Stock (t)"), then one content per
    nutrient column, in the same order. None is a blank cell (no limit, or a value not
    known, which the reader counts as 0). Each row of `specs` has one value per
    `spec_columns` header. `groups` rows are (group, ingredients, min, max) with a fifth
    value, the product, when any row has one. `products` rows are (product, amount in
    the mass unit) and `limits` rows (product, ingredient, min %, max %); both sheets
    are written only when they have rows. `settings` are the Settings sheet's rows in
    order. `notes` are the Notes sheet's paragraphs: the scenario and where the numbers
    come from.
    """

    file_stem: str
    settings: tuple[tuple[str, str | float], ...]
    nutrients: tuple[tuple[str, str], ...]
    ingredients: tuple[tuple, ...]  # (name, cost, min, max, use, *extras, *contents)
    specs: tuple[tuple, ...]
    notes: tuple[str, ...]
    extra_columns: tuple[str, ...] = ()
    spec_columns: tuple[str, ...] = ("Nutrient", "Min", "Max")
    groups: tuple[tuple, ...] = ()
    products: tuple[tuple[str, float], ...] = ()
    limits: tuple[tuple[str, str, float | None, float | None], ...] = ()

    @property
    def diet(self) -> bool:
        """True for a diet-mode example (Setting Mode = diet)."""
        return str(dict(self.settings).get("Mode", "blend")).lower() == "diet"

    @property
    def cost_header(self) -> str:
        """The Ingredients sheet's cost column header, e.g. ``Cost (EUR/t)``."""
        settings = dict(self.settings)
        if self.diet:
            return f"Cost ({settings['Currency']}/unit)"
        per = COST_PER_SHORT.get(str(settings["Cost per"]).lower(), settings["Cost per"])
        return f"Cost ({settings['Currency']}/{per})"

    @property
    def limit_unit(self) -> str:
        """The unit of ingredient and group limits: % of the blend, or units of each food."""
        return "units" if self.diet else "%"

    @property
    def mass_unit(self) -> str:
        """The Mass unit setting, for the Stock and Amount headers."""
        return str(dict(self.settings).get("Mass unit", "kg"))


# --- Broiler starter feed -------------------------------------------------------------
#
# Composition: from memory of published feed tables; for demonstration only, not for
# feeding. ME is nitrogen-corrected apparent metabolisable energy for poultry; the amino
# acids are standardised ileal digestible (for broilers); phosphorus is the available
# (non-phytate, plus digestible mineral) fraction; everything else is total, as fed.
# Blank (None) contents are values the tables at hand did not give: the reader counts
# them as 0. Prices are invented but of a plausible size for feed materials in euros.

_BROILER_NUTRIENTS = (
    ("ME", "MJ/kg"),
    ("Crude protein", "%"),
    ("Crude fat", "%"),
    ("Crude fibre", "%"),
    ("Calcium", "%"),
    ("Available phosphorus", "%"),
    ("Sodium", "%"),
    ("Chloride", "%"),
    ("Linoleic acid", "%"),
    ("Digestible lysine", "%"),
    ("Digestible methionine", "%"),
    ("Digestible methionine + cystine", "%"),
    ("Digestible threonine", "%"),
)

# fmt: off
_BROILER_INGREDIENTS = (
    # name                         cost   min   max   use     ME    CP    fat   fibre   Ca     avP    Na     Cl     C18:2  Lys    Met    M+C    Thr
    ("Maize",                      215,  None, None, True,  13.8,  8.0,  3.7,  2.2,  0.02,  0.08,  0.02,  0.05,  1.9,  0.20,  0.16,  0.31,  0.23),
    ("Wheat",                      195,  None, 20,   True,  12.6, 11.5,  1.7,  2.4,  0.05,  0.13,  0.02,  0.06,  0.6,  0.28,  0.17,  0.39,  0.29),
    ("Soybean meal 47",            450,  None, None, True,   9.8, 47.0,  1.8,  3.5,  0.30,  0.22,  0.02,  0.05,  0.7,  2.62,  0.60,  1.20,  1.62),
    ("Full-fat soybean, extruded", 520,  None, 10,   True,  13.6, 36.0, 18.5,  5.0,  0.25,  0.20,  0.02,  0.03,  9.5,  1.95,  0.45,  0.86,  1.20),
    ("Sunflower meal 36",          280,  None, 5,    True,   7.9, 36.0,  2.0, 21.0,  0.40,  0.17,  0.02,  0.10,  0.9,  1.05,  0.74,  1.25,  1.08),
    ("Rapeseed meal",              300,  None, 5,    True,   8.2, 35.0,  2.5, 12.0,  0.65,  0.30,  0.05,  None,  0.5,  1.50,  0.60,  1.30,  1.15),
    ("Meat and bone meal 50",      420,  None, 4,    True,  10.2, 50.0, 10.0,  2.0,  9.50,  4.20,  0.70,  0.70,  None, 2.10,  0.55,  0.80,  1.30),
    ("Fish meal 65",              1600,  None, 4,    False, 12.0, 65.0,  9.0,  0.5,  4.00,  2.70,  0.90,  1.00,  0.2,  4.40,  1.65,  2.10,  2.35),
    ("Wheat middlings",            185,  None, 5,    True,   7.5, 16.0,  4.0,  8.0,  0.12,  0.30,  0.02,  0.04,  1.8,  0.50,  0.20,  0.48,  0.40),
    ("Soybean oil",               1050,  None, 4,    True,  35.0,  0.0, 99.0,  0.0,  0.00,  0.00,  0.00,  0.00, 52.0,  0.00,  0.00,  0.00,  0.00),
    ("Limestone",                   50,  None, None, True,   0.0,  0.0,  0.0,  0.0, 38.00,  0.00,  0.05,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("Monocalcium phosphate",      800,  None, None, True,   0.0,  0.0,  0.0,  0.0, 16.50, 21.00,  0.05,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("Salt",                       120,  0.15, 0.35, True,   0.0,  0.0,  0.0,  0.0,  0.00,  0.00, 39.30, 60.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("Sodium bicarbonate",         450,  None, 0.3,  True,   0.0,  0.0,  0.0,  0.0,  0.00,  0.00, 27.30,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("L-lysine HCl",              1700,  None, None, True,  None, 95.8,  0.0,  0.0,  0.00,  0.00,  0.00, 19.40,  0.0, 78.80,  0.00,  0.00,  0.00),
    ("DL-methionine",             3000,  None, None, True,  None, 58.7,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.0,  0.00, 99.00, 99.00,  0.00),
    ("L-threonine",               1900,  None, None, True,  None, 73.5,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.0,  0.00,  0.00,  0.00, 98.50),
    ("Vitamin-mineral premix",    2800,  0.5,  0.5,  True,   0.0,  0.0,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
)

# Specs typical of broiler starter feeds (about days 0-10), from memory of common
# recommendations; for demonstration only.
_BROILER_SPECS = (
    # nutrient                          min    max
    ("ME",                              12.55, 12.95),
    ("Crude protein",                   21.5,  24.0),
    ("Crude fat",                       None,  7.0),
    ("Crude fibre",                     None,  4.0),
    ("Calcium",                         0.90,  1.00),
    ("Available phosphorus",            0.45,  0.50),
    ("Sodium",                          0.16,  0.23),
    ("Chloride",                        0.16,  0.30),
    ("Linoleic acid",                   1.0,   None),
    ("Digestible lysine",               1.28,  None),
    ("Digestible methionine",           0.51,  None),
    ("Digestible methionine + cystine", 0.95,  None),
    ("Digestible threonine",            0.86,  None),
)
# fmt: on

BROILER_STARTER = Example(
    file_stem="broiler_starter",
    settings=(
        ("Name", "Broiler starter, days 0-10"),
        ("Batch size", 2000),
        ("Mass unit", "kg"),
        ("Cost per", "tonne"),
        ("Currency", "EUR"),
    ),
    nutrients=_BROILER_NUTRIENTS,
    ingredients=_BROILER_INGREDIENTS,
    specs=_BROILER_SPECS,
    notes=(
        "Scenario (invented): Larkfield Farm runs a small on-farm mill that feeds its "
        "own three broiler houses. The mill manager, Ruth Okafor, mixes the starter "
        "crumble in 2000 kg batches and wants the cheapest mix that still meets the "
        "starter specs agreed with the farm's advisor, Daniel Brandt, for chicks from "
        "hatch to about day 10.",
        "Prices (invented, EUR per tonne delivered to the mill) are of a plausible size "
        "for feed materials; they are not quotes from any real market.",
        "Composition values are from memory of published feed tables; for demonstration "
        "only, not for feeding. ME is nitrogen-corrected apparent metabolisable energy for "
        "poultry; the amino acids are standardised ileal digestible for broilers; "
        "available phosphorus is the non-phytate fraction of plant phosphorus plus the "
        "digestible phosphorus of the mineral and animal sources; the other nutrients "
        "are total, as fed.",
        "The specs are typical of broiler starter feeds, from memory of common "
        "recommendations. Ratios (such as calcium to available phosphorus) are not "
        "constrained directly; check them in the result.",
        "Fish meal 65 has Use = no: the supplier's price quote is not yet confirmed, so "
        "it is held out of the blend. Set Use to yes to let it in.",
        "Blank nutrient cells are values not known for that ingredient and count as 0: "
        "the ME of the three feed-grade amino acids, the chloride of rapeseed meal and "
        "the linoleic acid of meat and bone meal.",
        "The premix is fixed at 0.5 % (Min = Max). Meat and bone meal may only be used "
        "where local rules allow it in poultry feed.",
        CAUTION,
    ),
)

# --- Laying-hen feed -------------------------------------------------------------------
#
# Composition: from memory of published feed tables; for demonstration only, not for
# feeding. Same conventions as the broiler starter (poultry AMEn, digestible amino acids,
# available phosphorus); the digestible amino acids of broiler tables are used for hens,
# as is common where layer values are not to hand. Prices are invented.

_LAYER_NUTRIENTS = _BROILER_NUTRIENTS

# fmt: off
_LAYER_INGREDIENTS = (
    # name                         cost   min   max   use     ME    CP    fat   fibre   Ca     avP    Na     Cl     C18:2  Lys    Met    M+C    Thr
    ("Maize",                      215,  None, None, True,  13.8,  8.0,  3.7,  2.2,  0.02,  0.08,  0.02,  0.05,  1.9,  0.20,  0.16,  0.31,  0.23),
    ("Wheat",                      195,  None, 30,   True,  12.6, 11.5,  1.7,  2.4,  0.05,  0.13,  0.02,  0.06,  0.6,  0.28,  0.17,  0.39,  0.29),
    ("Barley",                     180,  None, 15,   True,  11.2, 10.5,  1.8,  4.5,  0.06,  0.12,  0.02,  0.12,  0.8,  0.29,  0.15,  0.33,  0.27),
    ("Soybean meal 47",            450,  None, None, True,   9.8, 47.0,  1.8,  3.5,  0.30,  0.22,  0.02,  0.05,  0.7,  2.62,  0.60,  1.20,  1.62),
    ("Sunflower meal 36",          280,  None, 8,    True,   7.9, 36.0,  2.0, 21.0,  0.40,  0.17,  0.02,  0.10,  0.9,  1.05,  0.74,  1.25,  1.08),
    ("Rapeseed meal",              300,  None, 6,    True,   8.2, 35.0,  2.5, 12.0,  0.65,  0.30,  0.05,  0.06,  0.5,  1.50,  0.60,  1.30,  1.15),
    ("Meat and bone meal 50",      420,  None, None, True,  10.2, 50.0, 10.0,  2.0,  9.50,  4.20,  0.70,  0.70,  0.4,  2.10,  0.55,  0.80,  1.30),
    ("Fish meal 65",              1600,  None, 3,    True,  12.0, 65.0,  9.0,  0.5,  4.00,  2.70,  0.90,  1.00,  0.2,  4.40,  1.65,  2.10,  2.35),
    ("Wheat middlings",            185,  None, 10,   True,   7.5, 16.0,  4.0,  8.0,  0.12,  0.30,  0.02,  0.04,  1.8,  0.50,  0.20,  0.48,  0.40),
    ("Soybean oil",               1050,  None, 3,    True,  35.0,  0.0, 99.0,  0.0,  0.00,  0.00,  0.00,  0.00, 52.0,  0.00,  0.00,  0.00,  0.00),
    ("Limestone grit",              55,  None, None, True,   0.0,  0.0,  0.0,  0.0, 38.00,  0.00,  0.05,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("Monocalcium phosphate",      800,  None, None, True,   0.0,  0.0,  0.0,  0.0, 16.50, 21.00,  0.05,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("Salt",                       120,  0.15, 0.35, True,   0.0,  0.0,  0.0,  0.0,  0.00,  0.00, 39.30, 60.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("Sodium bicarbonate",         450,  None, 0.3,  True,   0.0,  0.0,  0.0,  0.0,  0.00,  0.00, 27.30,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("L-lysine HCl",              1700,  None, None, True,  None, 95.8,  0.0,  0.0,  0.00,  0.00,  0.00, 19.40,  0.0, 78.80,  0.00,  0.00,  0.00),
    ("DL-methionine",             3000,  None, None, True,  None, 58.7,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.0,  0.00, 99.00, 99.00,  0.00),
    ("Layer premix",              2600,  0.5,  0.5,  True,   0.0,  0.0,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
)

# Specs typical of feeds for brown laying hens in peak lay eating about 115 g a day, from
# memory of common recommendations; for demonstration only. The last row is a ratio.
_LAYER_SPECS = (
    # nutrient                          min    max
    ("ME",                              11.40, 11.80),
    ("Crude protein",                   16.0,  18.0),
    ("Crude fat",                       None,  6.0),
    ("Crude fibre",                     None,  5.0),
    ("Calcium",                         3.80,  4.20),
    ("Available phosphorus",            0.33,  0.45),
    ("Sodium",                          0.16,  0.22),
    ("Chloride",                        0.16,  0.30),
    ("Linoleic acid",                   1.4,   None),
    ("Digestible lysine",               0.72,  None),
    ("Digestible methionine",           0.36,  None),
    ("Digestible methionine + cystine", 0.64,  None),
    ("Digestible threonine",            0.50,  None),
    ("Calcium / Available phosphorus",  8.5,   10.5),
)

_LAYER_GROUPS = (
    # group                           ingredients                                   min   max
    ("Animal proteins",               "Meat and bone meal 50, Fish meal 65",        None, 5),
    ("Sunflower and rapeseed meals",  "Sunflower meal 36; Rapeseed meal",           None, 10),
)
# fmt: on

LAYER_FEED = Example(
    file_stem="layer_feed",
    settings=(
        ("Name", "Layer feed, peak lay"),
        ("Batch size", 3000),
        ("Mass unit", "kg"),
        ("Cost per", "tonne"),
        ("Currency", "EUR"),
    ),
    nutrients=_LAYER_NUTRIENTS,
    ingredients=_LAYER_INGREDIENTS,
    specs=_LAYER_SPECS,
    groups=_LAYER_GROUPS,
    notes=(
        "Scenario (invented): Wrenbeck Lane Eggs keeps about 9000 brown laying hens on "
        "free range and mixes their mash on the farm in 3000 kg batches. The farm's "
        "feed buyer, Mei Lindqvist, wants the cheapest mash for hens in peak lay (about "
        "22 to 45 weeks of age) that still meets the specs the farm has used for years.",
        "Prices (invented, EUR per tonne delivered to the farm) are of a plausible size "
        "for feed materials; they are not quotes from any real market.",
        "Composition values are from memory of published feed tables; for demonstration "
        "only, not for feeding. ME is nitrogen-corrected apparent metabolisable energy for "
        "poultry; the amino acids are standardised ileal digestible (broiler values, used "
        "for hens); available phosphorus is the non-phytate fraction of plant phosphorus "
        "plus the digestible phosphorus of the mineral and animal sources; the other "
        "nutrients are total, as fed.",
        "The specs are typical of layer feeds in peak lay for hens eating about 115 g a "
        "day, from memory of common recommendations. The Specs row 'Calcium / Available "
        "phosphorus' bounds the ratio of the two levels, not a nutrient of its own.",
        "The Groups sheet bounds the total inclusion of several ingredients: animal "
        "proteins together at most 5 % (meat and bone meal has no limit of its own), and "
        "sunflower and rapeseed meals together at most 10 %. Rapeseed meal is kept low "
        "because it can give brown eggs an off flavour.",
        "The ME of the two feed-grade amino acids is left blank (not known here) and "
        "counts as 0. The premix is fixed at 0.5 % (Min = Max). Meat and bone meal and "
        "fish meal may only be used where local rules allow them in hen feed.",
        CAUTION,
    ),
)


# --- A day's menu (diet mode) ----------------------------------------------------------
#
# Composition per 100 g of the food as bought (dry for oats, rice, pasta and lentils; raw
# for vegetables, fruit, eggs and chicken; drained for canned foods): from memory of
# published food composition tables; for demonstration only, not dietary advice. Prices
# are invented, in euros per 100 g.

_DIET_NUTRIENTS = (
    ("Energy", "kcal"),
    ("Protein", "g"),
    ("Fat", "g"),
    ("Saturated fat", "g"),
    ("Carbohydrate", "g"),
    ("Fibre", "g"),
    ("Calcium", "mg"),
    ("Iron", "mg"),
    ("Vitamin C", "mg"),
    ("Sodium", "mg"),
    ("Potassium", "mg"),
)

# fmt: off
_DIET_FOODS = (
    # name                       cost   min   max   use   unit      kcal  prot  fat   sat   carb  fibre   Ca    Fe   vitC    Na     K
    ("Rolled oats",              0.15,  None, 1.0,  True, "100 g",   375, 13.0,  7.0,  1.2, 60.0, 10.0,   50,  4.0,    0,     5,  370),
    ("Wholemeal bread",          0.25,  None, 3.0,  True, "100 g",   245, 10.0,  3.0,  0.6, 42.0,  7.0,  100,  2.5,    0,   400,  250),
    ("Dry white rice",           0.20,  None, 1.5,  True, "100 g",   355,  7.0,  0.6,  0.2, 79.0,  1.3,   10,  0.8,    0,     2,  100),
    ("Dry pasta",                0.18,  None, 1.5,  True, "100 g",   355, 12.5,  1.5,  0.3, 72.0,  3.0,   20,  1.5,    0,     5,  200),
    ("Potatoes",                 0.10,  None, 4.0,  True, "100 g",    77,  2.0,  0.1,  0.0, 17.0,  2.0,   10,  0.5,   15,     6,  420),
    ("Dry red lentils",          0.35,  None, 1.0,  True, "100 g",   330, 24.0,  1.5,  0.2, 50.0, 11.0,   50,  7.5,    1,     5,  700),
    ("Canned chickpeas",         0.30,  None, 2.0,  True, "100 g",   120,  7.0,  2.5,  0.3, 16.0,  5.0,   45,  1.5,    0,   250,  150),
    ("Eggs",                     0.45,  None, 1.2,  True, "100 g",   140, 12.5,  9.5,  2.7,  0.7,  0.0,   55,  1.8,    0,   140,  135),
    ("Semi-skimmed milk",        0.10,  None, 5.0,  True, "100 g",    47,  3.5,  1.7,  1.1,  4.8,  0.0,  120,  0.03,   1,    45,  155),
    ("Plain low-fat yogurt",     0.30,  None, 2.5,  True, "100 g",    56,  5.0,  1.0,  0.7,  7.5,  0.0,  170,  0.1,    1,    70,  230),
    ("Hard cheese",              1.10,  None, 0.5,  True, "100 g",   415, 25.0, 35.0, 22.0,  0.1,  0.0,  720,  0.3,    0,   650,   75),
    ("Chicken breast",           0.90,  None, 1.5,  True, "100 g",   110, 23.5,  1.5,  0.4,  0.0,  0.0,    5,  0.4,    0,    60,  370),
    ("Canned sardines",          1.00,  None, 1.0,  True, "100 g",   210, 24.0, 12.0,  3.0,  0.0,  0.0,  380,  2.5,    0,   400,  400),
    ("Peanut butter",            0.60,  None, 0.3,  True, "100 g",   600, 25.0, 50.0, 10.0, 13.0,  6.0,   40,  1.9,    0,   400,  650),
    ("Rapeseed oil",             0.30,  None, 0.4,  True, "100 g",   900,  0.0,100.0,  7.0,  0.0,  0.0,    0,  0.0,    0,     0,    0),
    ("Carrots",                  0.12,  None, 2.0,  True, "100 g",    35,  0.6,  0.3,  0.0,  8.0,  2.6,   30,  0.3,    5,    40,  300),
    ("Cabbage",                  0.12,  None, 2.0,  True, "100 g",    25,  1.5,  0.1,  0.0,  5.0,  2.5,   45,  0.5,   35,    15,  250),
    ("Broccoli",                 0.35,  None, 2.0,  True, "100 g",    34,  3.5,  0.5,  0.1,  4.0,  2.6,   47,  0.8,   85,    30,  320),
    ("Tomatoes",                 0.30,  None, 2.0,  True, "100 g",    18,  0.9,  0.2,  0.0,  3.5,  1.2,   10,  0.3,   15,     5,  240),
    ("Onions",                   0.12,  None, 1.0,  True, "100 g",    40,  1.1,  0.1,  0.0,  9.0,  1.7,   23,  0.2,    7,     4,  150),
    ("Frozen peas",              0.25,  None, 1.5,  True, "100 g",    75,  5.5,  0.8,  0.1, 12.0,  5.0,   25,  1.5,   20,     5,  200),
    ("Bananas",                  0.22,  None, 2.0,  True, "100 g",    90,  1.1,  0.3,  0.1, 21.0,  2.5,    5,  0.3,    9,     1,  360),
    ("Apples",                   0.28,  None, 2.0,  True, "100 g",    52,  0.3,  0.2,  0.0, 12.0,  2.2,    6,  0.1,    5,     1,  110),
    ("Oranges",                  0.30,  None, 2.0,  True, "100 g",    47,  0.9,  0.1,  0.0,  9.0,  2.2,   40,  0.1,   53,     0,  180),
)

# Daily intakes for a moderately active adult man, from memory of published dietary
# reference values and population goals; for demonstration only.
_DIET_SPECS = (
    # nutrient          min     max
    ("Energy",          2400,   2600),
    ("Protein",         60,     None),
    ("Fat",             55,     95),
    ("Saturated fat",   None,   27),
    ("Carbohydrate",    280,    None),
    ("Fibre",           30,     None),
    ("Calcium",         950,    2500),
    ("Iron",            11,     45),
    ("Vitamin C",       110,    2000),
    ("Sodium",          None,   2000),
    ("Potassium",       3500,   None),
)

_DIET_GROUPS = (
    # group                     ingredients                                                               min   max
    ("Vegetables and fruit",
     "Carrots, Cabbage, Broccoli, Tomatoes, Onions, Frozen peas, Bananas, Apples, Oranges",                 4,    None),
    ("Fruit",                    "Bananas, Apples, Oranges",                                                2,    None),
    ("Eggs, fish, meat and pulses",
     "Eggs, Chicken breast, Canned sardines, Dry red lentils, Canned chickpeas",                              1.5,  None),
)
# fmt: on

DAY_MENU = Example(
    file_stem="day_menu",
    settings=(
        ("Name", "One day's menu, adult man"),
        ("Mode", "diet"),
        ("Currency", "EUR"),
    ),
    nutrients=_DIET_NUTRIENTS,
    ingredients=_DIET_FOODS,
    extra_columns=("Unit",),
    specs=_DIET_SPECS,
    groups=_DIET_GROUPS,
    notes=(
        "Scenario (invented): the Brookmere community kitchen cooks a daily meal plan for "
        "volunteers on a tight budget. Its coordinator, Tomasz Achterberg, wants the "
        "cheapest day's food for one moderately active adult man that meets the daily "
        "intakes below, with portions no one would find odd.",
        "This workbook is in diet mode (Settings: Mode = diet). The amount of each food "
        "is decided in its Unit (here 100 g); Cost is the price per Unit; Min and Max on "
        "Ingredients and Groups are amounts in Units (Max 2 = at most 200 g); a nutrient's "
        "total is the sum over foods of amount x content, and the Specs bounds are daily "
        "totals. The amounts do not have to add up to anything.",
        "Prices (invented, EUR per 100 g as bought) are of a plausible size for a shop; "
        "they are not quotes from any real market.",
        "Composition values per 100 g are from memory of published food composition "
        "tables; for demonstration only, not dietary advice. Foods are as bought: dry for "
        "oats, rice, pasta and lentils, raw for vegetables, fruit, eggs and chicken, "
        "drained for canned foods.",
        "The daily intakes are from memory of published dietary reference values and "
        "population goals for adults (energy for a moderately active man; fat 20 to 35 % "
        "and saturated fat at most 10 % of energy; carbohydrate at least 45 % of energy); "
        "for demonstration only.",
        "The Groups sheet asks for at least 400 g of vegetables and fruit a day (potatoes "
        "not counted) and at most 60 g of cheese and peanut butter together.",
        CAUTION,
    ),
)


# --- N-P-K bulk blend ------------------------------------------------------------------
#
# The analyses are the usual nominal grades of the straight materials (N - P2O5 - K2O, and
# S for ammonium sulphate), as commonly traded: common practice. The filler is inert
# (0-0-0). Prices are invented, in euros per tonne.

_FERTILIZER_NUTRIENTS = (
    ("N", "%"),
    ("P2O5", "%"),
    ("K2O", "%"),
    ("S", "%"),
)

# fmt: off
_FERTILIZER_MATERIALS = (
    # name                               cost   min   max   use      N     P2O5   K2O    S
    ("Urea 46-0-0",                      450,  None, None, True,  46.0,   0.0,   0.0,  0.0),
    ("Diammonium phosphate 18-46-0",     650,  None, None, True,  18.0,  46.0,   0.0,  0.0),
    ("Muriate of potash 0-0-60",         380,  None, None, True,   0.0,   0.0,  60.0,  0.0),
    ("Ammonium sulphate 21-0-0 24S",     280,  None, None, True,  21.0,   0.0,   0.0, 24.0),
    ("Limestone filler 0-0-0",            40,  None, None, True,   0.0,   0.0,   0.0,  0.0),
)

# The grade 15-15-15 with at least 2 % sulphur: common practice. Each of N, P2O5 and K2O
# is guaranteed at its grade, with at most 0.5 point over.
_FERTILIZER_SPECS = (
    # nutrient  min    max
    ("N",       15.0,  15.5),
    ("P2O5",    15.0,  15.5),
    ("K2O",     15.0,  15.5),
    ("S",        2.0,  None),
)
# fmt: on

NPK_BLEND = Example(
    file_stem="npk_15_15_15",
    settings=(
        ("Name", "NPK 15-15-15 + 2 S, bulk blend"),
        ("Batch size", 24),
        ("Mass unit", "t"),
        ("Cost per", "tonne"),
        ("Currency", "EUR"),
    ),
    nutrients=_FERTILIZER_NUTRIENTS,
    ingredients=_FERTILIZER_MATERIALS,
    specs=_FERTILIZER_SPECS,
    notes=(
        "Scenario (invented): Cressfield Agri Supplies blends granular fertilizer for "
        "farms in its valley and loads it 24 t to the lorry. Its blending manager, Amara "
        "Quist, needs the cheapest 15-15-15 with at least 2 % sulphur from the straight "
        "materials in the shed.",
        "The nutrient columns are the declared N, P2O5 and K2O (and S) in % of the "
        "product, the way fertilizer grades are written: 15-15-15 means 15 % N, 15 % "
        "P2O5 and 15 % K2O. A blend's grade is the inclusion-weighted mean of the "
        "materials' grades, so the same arithmetic as a feed applies.",
        "The analyses are the usual nominal grades of the straight materials as commonly "
        "traded (common practice); real lots vary, so use the analysis on the delivery "
        "note. The filler (ground limestone) is counted as 0-0-0.",
        "Prices (invented, EUR per tonne in the shed) are of a plausible size; they are "
        "not quotes from any real market.",
        "Check that the materials are compatible and of matching granule size before "
        "blending, and that the declared grade meets the rules where the product is sold.",
        CAUTION,
    ),
)


# --- Pig feed plant: three products from shared stocks ----------------------------------
#
# Composition: from memory of published feed tables for pigs; for demonstration only, not
# for feeding. Net energy is for growing pigs; the amino acids are standardised ileal
# digestible (SID); digestible phosphorus is standardised total tract digestible, without
# added phytase; everything else is total, as fed. Prices and stocks are invented.

_PLANT_NUTRIENTS = (
    ("Dry matter", "%"),
    ("Net energy", "MJ/kg"),
    ("Crude protein", "%"),
    ("Crude fibre", "%"),
    ("Calcium", "%"),
    ("Digestible phosphorus", "%"),
    ("Sodium", "%"),
    ("SID lysine", "%"),
    ("SID methionine + cystine", "%"),
    ("SID threonine", "%"),
    ("SID tryptophan", "%"),
)

# fmt: off
_PLANT_INGREDIENTS = (
    # name                    cost   min   max   use   stock(t)  DM    NE    CP    fibre  Ca     dP     Na     Lys    M+C    Thr    Trp
    ("Barley",                 175,  None, None, True, None,    87.0,  9.3, 10.5,  4.5,  0.06,  0.14,  0.02,  0.30,  0.32,  0.28,  0.10),
    ("Wheat",                  205,  None, 60,   True, None,    87.0, 10.3, 11.5,  2.4,  0.05,  0.17,  0.02,  0.27,  0.36,  0.29,  0.12),
    ("Maize",                  220,  None, None, True, None,    87.0, 11.0,  8.0,  2.2,  0.02,  0.08,  0.02,  0.20,  0.30,  0.23,  0.05),
    ("Wheat middlings",        175,  None, 15,   True, None,    88.0,  7.3, 16.0,  8.0,  0.12,  0.40,  0.02,  0.50,  0.46,  0.40,  0.16),
    ("Sugar beet pulp",        210,  None, 5,    True, 3,       89.0,  6.5,  9.0, 18.0,  0.90,  0.04,  0.20,  0.30,  0.10,  0.20,  0.05),
    ("Soybean meal 47",        450,  None, None, True, None,    88.0,  8.1, 47.0,  3.5,  0.30,  0.28,  0.02,  2.65,  1.22,  1.62,  0.58),
    ("Rapeseed meal",          290,  None, 10,   True, None,    89.0,  6.2, 34.0, 12.5,  0.70,  0.35,  0.05,  1.45,  1.25,  1.10,  0.36),
    ("Field peas",             250,  None, 25,   True, 12,      87.0,  9.6, 21.0,  5.5,  0.10,  0.22,  0.02,  1.30,  0.40,  0.65,  0.16),
    ("Rapeseed oil",          1100,  None, 3,    True, None,    99.5, 30.0,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.00,  0.00,  0.00),
    ("Limestone",               50,  None, None, True, None,    99.0,  0.0,  0.0,  0.0, 38.00,  0.00,  0.05,  0.00,  0.00,  0.00,  0.00),
    ("Monocalcium phosphate",  800,  None, None, True, None,    97.0,  0.0,  0.0,  0.0, 16.50, 19.50,  0.05,  0.00,  0.00,  0.00,  0.00),
    ("Salt",                   120,  None, None, True, None,    99.0,  0.0,  0.0,  0.0,  0.00,  0.00, 39.30,  0.00,  0.00,  0.00,  0.00),
    ("L-lysine HCl",          1700,  None, None, True, None,    98.0,  None, 95.8, 0.0,  0.00,  0.00,  0.00, 78.80,  0.00,  0.00,  0.00),
    ("DL-methionine",         3000,  None, None, True, None,    99.0,  None, 58.7, 0.0,  0.00,  0.00,  0.00,  0.00, 99.00,  0.00,  0.00),
    ("L-threonine",           1900,  None, None, True, None,    99.0,  None, 73.5, 0.0,  0.00,  0.00,  0.00,  0.00,  0.00, 98.50,  0.00),
    ("L-tryptophan",          9000,  None, None, True, None,    99.0,  None, 84.0, 0.0,  0.00,  0.00,  0.00,  0.00,  0.00,  0.00, 98.00),
    ("Pig premix",            2200,  0.4,  0.4,  True, None,    95.0,  0.0,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.00,  0.00,  0.00),
)

_PLANT_PRODUCTS = (
    # product        amount (t)
    ("Grower",       60),
    ("Finisher",     90),
    ("Sow feed",     30),
)

# Specs from memory of common recommendations for growing pigs of about 25-60 kg (Grower),
# 60-110 kg (Finisher) and pregnant sows (Sow feed); for demonstration only. A blank
# Product applies to every product; the ratios are the usual "ideal protein" ratios to
# lysine and a calcium to digestible phosphorus ratio.
_PLANT_SPECS = (
    # nutrient                                   basis          min    max    product
    ("Sodium",                                   "as fed",      0.15,  0.25,  None),
    ("SID methionine + cystine / SID lysine",    "as fed",      0.60,  None,  None),
    ("SID threonine / SID lysine",               "as fed",      0.65,  None,  None),
    ("SID tryptophan / SID lysine",              "as fed",      0.19,  None,  None),
    ("Calcium / Digestible phosphorus",          "as fed",      1.8,   2.4,   None),
    ("Net energy",                               "as fed",      9.70, 10.00,  "Grower"),
    ("Crude protein",                            "as fed",      15.5,  17.5,  "Grower"),
    ("Crude fibre",                              "as fed",      None,  5.0,   "Grower"),
    ("SID lysine",                               "as fed",      0.95,  None,  "Grower"),
    ("Calcium",                                  "as fed",      0.60,  0.75,  "Grower"),
    ("Digestible phosphorus",                    "as fed",      0.28,  None,  "Grower"),
    ("Net energy",                               "as fed",      9.60,  9.90,  "Finisher"),
    ("Crude protein",                            "as fed",      13.5,  15.5,  "Finisher"),
    ("SID lysine",                               "as fed",      0.78,  None,  "Finisher"),
    ("Calcium",                                  "as fed",      0.50,  0.65,  "Finisher"),
    ("Digestible phosphorus",                    "as fed",      0.23,  None,  "Finisher"),
    ("Net energy",                               "as fed",      8.80,  9.30,  "Sow feed"),
    ("Crude protein",                            "as fed",      12.0,  14.0,  "Sow feed"),
    ("Crude fibre",                              "dry matter",  7.0,   None,  "Sow feed"),
    ("SID lysine",                               "as fed",      0.52,  None,  "Sow feed"),
    ("Calcium",                                  "as fed",      0.70,  0.90,  "Sow feed"),
    ("Digestible phosphorus",                    "as fed",      0.27,  None,  "Sow feed"),
)

# Product-specific inclusion limits, in % of that product; they replace the Ingredients
# sheet's Min and Max for that ingredient in that product.
_PLANT_LIMITS = (
    # product       ingredient          min    max
    ("Grower",      "Rapeseed meal",    None,  5),
    ("Grower",      "Field peas",       None,  15),
    ("Sow feed",    "Sugar beet pulp",  None,  25),
    ("Sow feed",    "Wheat middlings",  None,  30),
)

_PLANT_GROUPS = (
    # group                            ingredients                               min   max   product
    ("Rapeseed meal and field peas",   "Rapeseed meal, Field peas",              None, 25,   "Finisher"),
)
# fmt: on

PIG_PLANT = Example(
    file_stem="pig_feed_plant",
    settings=(
        ("Name", "Week 14 pig feeds"),
        ("Mass unit", "t"),
        ("Cost per", "tonne"),
        ("Currency", "EUR"),
    ),
    nutrients=_PLANT_NUTRIENTS,
    ingredients=_PLANT_INGREDIENTS,
    extra_columns=("Stock (t)",),
    spec_columns=("Nutrient", "Basis", "Min", "Max", "Product"),
    specs=_PLANT_SPECS,
    groups=_PLANT_GROUPS,
    products=_PLANT_PRODUCTS,
    limits=_PLANT_LIMITS,
    notes=(
        "Scenario (invented): the Oakhollow co-operative mill makes the pig feeds for its "
        "members' farms. This week its planner, Sunita Varga, must make 60 t of grower, "
        "90 t of finisher and 30 t of sow feed at the least total cost, with only 12 t of "
        "field peas and 3 t of sugar beet pulp left in store until the next delivery.",
        "The Products sheet lists each product and the amount to make (t). Each product "
        "is its own blend (inclusions in % of that product, summing to 100), and one "
        "solve finds all three at once, because the Stock column of Ingredients is shared: "
        "the peas and the beet pulp used in all products together may not exceed the "
        "stock. A blank Stock is unlimited.",
        "Specs with a blank Product apply to every product; the others to the product "
        "named. Rows such as 'SID threonine / SID lysine' bound a ratio of two levels. "
        "The sow feed's crude fibre is on a dry-matter basis (Basis = dry matter): its "
        "level per unit of dry matter, using the Dry matter column. The Limits sheet sets "
        "product-specific inclusion limits that replace those on Ingredients, and the "
        "Groups row applies to the finisher only.",
        "Prices (invented, EUR per tonne delivered to the mill) are of a plausible size "
        "for feed materials; they are not quotes from any real market.",
        "Composition values are from memory of published feed tables for pigs; for "
        "demonstration only, not for feeding. Net energy is for growing pigs, the amino "
        "acids are standardised ileal digestible, digestible phosphorus is standardised "
        "total tract digestible without added phytase; the other nutrients are total, as "
        "fed. The net energy of the feed-grade amino acids is left blank (not known here) "
        "and counts as 0. The specs are from memory of common recommendations.",
        CAUTION,
    ),
)


# Every example, by the name `write_example` takes.
EXAMPLES: dict[str, Example] = {
    "broiler": BROILER_STARTER,
    "feed": LAYER_FEED,
    "diet": DAY_MENU,
    "fertilizer": NPK_BLEND,
    "plant": PIG_PLANT,
}


def write_example(path: str | Path, name: str = "broiler") -> Path:
    """Write the example called `name` as a workbook and return where it went.

    `path` is the file to write (an existing file is replaced); if it is an existing
    directory, the workbook goes inside it as ``<file_stem>.xlsx``. Raises KeyError for
    an unknown name.
    """
    example = EXAMPLES[name]
    target = Path(path)
    if target.is_dir():
        target = target / f"{example.file_stem}.xlsx"
    example_workbook(name).save(target)
    return target


def example_workbook(name: str) -> Workbook:
    """The example called `name` as an openpyxl Workbook, not yet saved (KeyError if unknown)."""
    example = EXAMPLES[name]
    workbook = Workbook()
    _write_ingredients(workbook.active, example)
    _write_specs(workbook.create_sheet("Specs"), example)
    if example.groups:
        _write_groups(workbook.create_sheet("Groups"), example)
    if example.products:
        _write_products(workbook.create_sheet("Products"), example)
    if example.limits:
        _write_limits(workbook.create_sheet("Limits"), example)
    _write_settings(workbook.create_sheet("Settings"), example)
    _write_notes(workbook.create_sheet("Notes"), example)
    return workbook


def _write_ingredients(sheet: Worksheet, example: Example) -> None:
    """The Ingredients sheet: one row per ingredient, one column per nutrient."""
    sheet.title = "Ingredients"
    limit = example.limit_unit
    header = [
        "Ingredient",
        example.cost_header,
        f"Min ({limit})",
        f"Max ({limit})",
        "Use",
        *example.extra_columns,
        *(f"{nutrient} ({unit})" for nutrient, unit in example.nutrients),
    ]
    sheet.append(header)
    for name, cost, minimum, maximum, use, *rest in example.ingredients:
        sheet.append([name, cost, minimum, maximum, "yes" if use else "no", *rest])
    cost_format = SMALL_COST_FORMAT if example.diet else COST_FORMAT
    formats = [None, cost_format, AMOUNT_FORMAT, AMOUNT_FORMAT, None]
    formats += [None if extra == "Unit" else AMOUNT_FORMAT for extra in example.extra_columns]
    formats += [AMOUNT_FORMAT] * len(example.nutrients)
    _finish(sheet, formats, freeze="B2")
    _centre(sheet, 5)


def _write_specs(sheet: Worksheet, example: Example) -> None:
    """The Specs sheet: min and max level of each constrained nutrient or ratio."""
    sheet.append(list(example.spec_columns))
    for row in example.specs:
        sheet.append(list(row))
    formats = [AMOUNT_FORMAT if column in ("Min", "Max") else None for column in example.spec_columns]
    _finish(sheet, formats, freeze="A2")


def _write_groups(sheet: Worksheet, example: Example) -> None:
    """The Groups sheet: bounds on the total inclusion of several ingredients."""
    unit = example.limit_unit
    header = ["Group", "Ingredients", f"Min ({unit})", f"Max ({unit})"]
    if any(len(row) > 4 for row in example.groups):
        header.append("Product")
    sheet.append(header)
    for row in example.groups:
        sheet.append(list(row))
    _finish(sheet, [None, None, AMOUNT_FORMAT, AMOUNT_FORMAT, None][: len(header)], freeze="A2")
    for (cell,) in sheet.iter_rows(min_row=2, min_col=2, max_col=2):
        cell.alignment = Alignment(wrap_text=True, vertical="top")


def _write_products(sheet: Worksheet, example: Example) -> None:
    """The Products sheet: each product to make and its amount in the mass unit."""
    sheet.append(["Product", f"Amount ({example.mass_unit})"])
    for row in example.products:
        sheet.append(list(row))
    _finish(sheet, [None, AMOUNT_FORMAT], freeze="A2")


def _write_limits(sheet: Worksheet, example: Example) -> None:
    """The Limits sheet: inclusion limits of one ingredient in one product."""
    sheet.append(["Product", "Ingredient", "Min (%)", "Max (%)"])
    for row in example.limits:
        sheet.append(list(row))
    _finish(sheet, [None, None, AMOUNT_FORMAT, AMOUNT_FORMAT], freeze="A2")


def _write_settings(sheet: Worksheet, example: Example) -> None:
    """The Settings sheet: name, mode, batch size and units."""
    sheet.append(["Setting", "Value"])
    for row in example.settings:
        sheet.append(list(row))
    _finish(sheet, [None, None], freeze="A2")
    for (cell,) in sheet.iter_rows(min_row=2, min_col=2, max_col=2):
        cell.alignment = Alignment(horizontal="left")


def _write_notes(sheet: Worksheet, example: Example) -> None:
    """The Notes sheet: the scenario, the sources and the caution, one paragraph a row."""
    sheet.append(["Notes"])
    for paragraph in example.notes:
        sheet.append([paragraph])
        sheet.cell(row=sheet.max_row, column=1).alignment = Alignment(wrap_text=True, vertical="top")
    sheet["A1"].font = Font(bold=True)
    sheet.freeze_panes = "A2"
    sheet.column_dimensions["A"].width = NOTES_COLUMN_WIDTH


def _finish(sheet: Worksheet, formats: list[str | None], freeze: str) -> None:
    """Shared look of the data sheets: bold frozen header, number formats, column widths."""
    for cell in sheet[1]:
        cell.font = Font(bold=True)
    sheet.freeze_panes = freeze
    for column, number_format in enumerate(formats, start=1):
        cells = [row[0] for row in sheet.iter_rows(min_col=column, max_col=column)]
        if number_format:
            for cell in cells[1:]:
                cell.number_format = number_format
        widest = max(len(_shown(cell.value)) for cell in cells)
        sheet.column_dimensions[get_column_letter(column)].width = min(widest + 2, MAX_COLUMN_WIDTH)


def _centre(sheet: Worksheet, column: int) -> None:
    """Centre a short yes/no column below the header."""
    for (cell,) in sheet.iter_rows(min_row=2, min_col=column, max_col=column):
        cell.alignment = Alignment(horizontal="center")


def _shown(value: object) -> str:
    """Roughly what a cell displays, to size its column."""
    if value is None:
        return ""
    if isinstance(value, float):
        return f"{value:.2f}"
    return str(value)


def main(argv: list[str] | None = None) -> None:
    """Write every example workbook into the directory given on the command line."""
    parser = argparse.ArgumentParser(
        prog="python -m blendkit.authoring.examples",
        description="Write every worked example workbook into OUT_DIR.",
    )
    parser.add_argument(
        "out_dir", metavar="OUT_DIR", type=Path, help="directory to write into (created if missing)"
    )
    args = parser.parse_args(argv)
    args.out_dir.mkdir(parents=True, exist_ok=True)
    for name in EXAMPLES:
        print(write_example(args.out_dir, name))


if __name__ == "__main__":
    main()

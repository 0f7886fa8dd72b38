"""A pig feed plant making three feeds from shared, limited stocks ('plant').

Composition: from memory of published feed tables for pigs; for demonstration only, not
for feeding. Net energy is for growing pigs; the amino acids are standardised ileal
digestible (SID); digestible phosphorus is standardised total tract digestible, without
added phytase; everything else is total, as fed. Prices and stocks are invented.
"""

from blendkit import CAUTION
from blendkit.authoring.examples.record import Example

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

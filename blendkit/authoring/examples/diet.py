"""A day's menu for one adult: diet mode, amounts of foods per 100 g ('diet').

Composition per 100 g of the food as bought (dry for oats, rice, pasta and lentils; raw
for vegetables, fruit, eggs and chicken; drained for canned foods): from memory of
published food composition tables; for demonstration only, not dietary advice. Prices
are invented, in euros per 100 g.
"""

from blendkit import CAUTION
from blendkit.authoring.examples.record import Example

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
        "not counted), of which at least 200 g of fruit, and at least 150 g of eggs, fish, "
        "meat and pulses together. Cheese and peanut butter are held down by their own Max "
        "on Ingredients (50 g and 30 g).",
        CAUTION,
    ),
)

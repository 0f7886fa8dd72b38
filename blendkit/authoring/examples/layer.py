"""The laying-hen feed: a ratio spec and ingredient groups ('feed').

Composition: from memory of published feed tables; for demonstration only, not for
feeding. Same conventions as the broiler starter (poultry AMEn, digestible amino acids,
available phosphorus); the digestible amino acids of broiler tables are used for hens,
as is common where layer values are not to hand. Prices are invented.
"""

from blendkit import CAUTION
from blendkit.authoring.examples.broiler import BROILER_NUTRIENTS
from blendkit.authoring.examples.record import Example

# The broiler's columns less potassium, which only the broiler's electrolyte balance uses.
_LAYER_NUTRIENTS = tuple(column for column in BROILER_NUTRIENTS if column[0] != "Potassium")

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

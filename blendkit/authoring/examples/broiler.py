"""The broiler starter: a broiler starter feed, one blend ('broiler').

Composition: from memory of published feed tables; for demonstration only, not for
feeding. ME is nitrogen-corrected apparent metabolisable energy for poultry; the amino
acids are standardised ileal digestible (for broilers); phosphorus is the available
(non-phytate, plus digestible mineral) fraction; everything else is total, as fed.
Blank (None) contents are values the tables at hand did not give: the reader counts
them as 0. Prices are invented but of a plausible size for feed materials in euros.
"""

from blendkit import CAUTION
from blendkit.authoring.examples.record import Example

BROILER_NUTRIENTS = (
    ("ME", "MJ/kg"),
    ("Crude protein", "%"),
    ("Crude fat", "%"),
    ("Crude fibre", "%"),
    ("Calcium", "%"),
    ("Available phosphorus", "%"),
    ("Sodium", "%"),
    ("Chloride", "%"),
    ("Potassium", "%"),
    ("Linoleic acid", "%"),
    ("Digestible lysine", "%"),
    ("Digestible methionine", "%"),
    ("Digestible methionine + cystine", "%"),
    ("Digestible threonine", "%"),
)

# fmt: off
_BROILER_INGREDIENTS = (
    # name                         cost   min   max   use     ME    CP    fat   fibre   Ca     avP    Na     Cl     K      C18:2  Lys    Met    M+C    Thr
    ("Maize",                      215,  None, None, True,  13.8,  8.0,  3.7,  2.2,  0.02,  0.08,  0.02,  0.05,  0.30,  1.9,  0.20,  0.16,  0.31,  0.23),
    ("Wheat",                      195,  None, 20,   True,  12.6, 11.5,  1.7,  2.4,  0.05,  0.13,  0.02,  0.06,  0.42,  0.6,  0.28,  0.17,  0.39,  0.29),
    ("Soybean meal 47",            450,  None, None, True,   9.8, 47.0,  1.8,  3.5,  0.30,  0.22,  0.02,  0.05,  2.10,  0.7,  2.62,  0.60,  1.20,  1.62),
    ("Full-fat soybean, extruded", 520,  None, 10,   True,  13.6, 36.0, 18.5,  5.0,  0.25,  0.20,  0.02,  0.03,  1.70,  9.5,  1.95,  0.45,  0.86,  1.20),
    ("Sunflower meal 36",          280,  None, 5,    True,   7.9, 36.0,  2.0, 21.0,  0.40,  0.17,  0.02,  0.10,  1.20,  0.9,  1.05,  0.74,  1.25,  1.08),
    ("Rapeseed meal",              300,  None, 5,    True,   8.2, 35.0,  2.5, 12.0,  0.65,  0.30,  0.05,  None,  1.20,  0.5,  1.50,  0.60,  1.30,  1.15),
    ("Meat and bone meal 50",      420,  None, 4,    True,  10.2, 50.0, 10.0,  2.0,  9.50,  4.20,  0.70,  0.70,  1.00,  None, 2.10,  0.55,  0.80,  1.30),
    ("Fish meal 65",              1600,  None, 4,    False, 12.0, 65.0,  9.0,  0.5,  4.00,  2.70,  0.90,  1.00,  0.80,  0.2,  4.40,  1.65,  2.10,  2.35),
    ("Wheat middlings",            185,  None, 5,    True,   7.5, 16.0,  4.0,  8.0,  0.12,  0.30,  0.02,  0.04,  1.10,  1.8,  0.50,  0.20,  0.48,  0.40),
    ("Soybean oil",               1050,  None, 4,    True,  35.0,  0.0, 99.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.00, 52.0,  0.00,  0.00,  0.00,  0.00),
    ("Limestone",                   50,  None, None, True,   0.0,  0.0,  0.0,  0.0, 38.00,  0.00,  0.05,  0.00,  0.06,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("Monocalcium phosphate",      800,  None, None, True,   0.0,  0.0,  0.0,  0.0, 16.50, 21.00,  0.05,  0.00,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("Salt",                       120,  0.15, 0.35, True,   0.0,  0.0,  0.0,  0.0,  0.00,  0.00, 39.30, 60.00,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("Sodium bicarbonate",         450,  None, 0.3,  True,   0.0,  0.0,  0.0,  0.0,  0.00,  0.00, 27.30,  0.00,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
    ("L-lysine HCl",              1700,  None, None, True,  None, 95.8,  0.0,  0.0,  0.00,  0.00,  0.00, 19.40,  0.00,  0.0, 78.80,  0.00,  0.00,  0.00),
    ("DL-methionine",             3000,  None, None, True,  None, 58.7,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.00,  0.0,  0.00, 99.00, 99.00,  0.00),
    ("L-threonine",               1900,  None, None, True,  None, 73.5,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.00,  0.0,  0.00,  0.00,  0.00, 98.50),
    ("Vitamin-mineral premix",    2800,  0.5,  0.5,  True,   0.0,  0.0,  0.0,  0.0,  0.00,  0.00,  0.00,  0.00,  0.00,  0.0,  0.00,  0.00,  0.00,  0.00),
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
    nutrients=BROILER_NUTRIENTS,
    ingredients=_BROILER_INGREDIENTS,
    specs=_BROILER_SPECS,
    # The dietary electrolyte balance in mEq/kg from Na, K and Cl in %: 10000 / atomic mass
    # (Na 23.0, K 39.1, Cl 35.45) per % of each (common practice).
    combined=(("Electrolyte balance", "434.8 * Sodium + 255.8 * Potassium - 282.1 * Chloride", "mEq/kg"),),
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
        "The Combined sheet adds the electrolyte balance (sodium + potassium - chloride, in "
        "mEq/kg): each element's % times 10000 over its atomic mass, that is 434.8 for sodium "
        "(23.0), 255.8 for potassium (39.1) and 282.1 for chloride (35.45), as is common "
        "practice. It has no spec here, so it is shown, not constrained: check it in the "
        "result against your advisor's target (starter recommendations are often given "
        "around 250 mEq/kg, from memory).",
        "The premix is fixed at 0.5 % (Min = Max). Meat and bone meal may only be used "
        "where local rules allow it in poultry feed.",
        CAUTION,
    ),
)

"""An N-P-K 15-15-15 bulk blend with sulphur, from straight materials ('fertilizer').

The analyses are the usual nominal grades of the straight materials (N - P2O5 - K2O, and
S for ammonium sulphate), as commonly traded: common practice. The filler is inert
(0-0-0). Prices are invented, in euros per tonne.
"""

from blendkit import CAUTION
from blendkit.authoring.examples.record import Example

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

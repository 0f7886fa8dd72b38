"""Worked examples: ready-made workbooks to try blendkit on and to test it against.

Each example is plain data (an `Example`) kept in `EXAMPLES` under a short name;
`write_example` turns one into a workbook in the format the reader expects. Add a new
example by writing another `Example` and listing it in `EXAMPLES`.

Run ``python -m blendkit.examples OUT_DIR`` to write every example into OUT_DIR.

The scenarios and prices are invented. Composition values are from memory of published
feed tables; for demonstration only, not for feeding.
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

# Column widths in characters: wide enough for the header, never wider than this.
MAX_COLUMN_WIDTH = 40
NOTES_COLUMN_WIDTH = 110

# Short forms of the "Cost per" setting for the cost column header; others are written out.
COST_PER_SHORT = {"tonne": "t", "metric ton": "t"}


@dataclass(frozen=True)
class Example:
    """One worked example, laid out the way its workbook is.

    `nutrients` are the nutrient columns as (name, unit). Each row of `ingredients` is
    (name, cost per `cost_per`, min %, max %, use, contents...) with one content per
    nutrient column, in the same order; None is a blank cell (no limit, or a value not
    known, which the reader counts as 0). Each row of `specs` is (nutrient, min, max).
    `settings` are the Settings sheet's rows in order. `notes` are the Notes sheet's
    paragraphs: the scenario and where the numbers come from.
    """

    file_stem: str
    settings: tuple[tuple[str, str | float], ...]
    nutrients: tuple[tuple[str, str], ...]
    ingredients: tuple[tuple, ...]  # (name, cost, min, max, use, *contents)
    specs: tuple[tuple[str, float | None, float | None], ...]
    notes: tuple[str, ...]

    @property
    def cost_header(self) -> str:
        """The Ingredients sheet's cost column header, e.g. ``Cost (EUR/t)``."""
        settings = dict(self.settings)
        per = COST_PER_SHORT.get(str(settings["Cost per"]).lower(), settings["Cost per"])
        return f"Cost ({settings['Currency']}/{per})"


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

# Every example, by the name `write_example` takes.
EXAMPLES: dict[str, Example] = {
    "feed": BROILER_STARTER,
}


def write_example(path: str | Path, name: str = "feed") -> Path:
    """Write the example called `name` as a workbook and return where it went.

    `path` is the file to write; if it is an existing directory, the workbook goes
    inside it as ``<file_stem>.xlsx``. Raises KeyError for an unknown name.
    """
    example = EXAMPLES[name]
    target = Path(path)
    if target.is_dir():
        target = target / f"{example.file_stem}.xlsx"

    workbook = Workbook()
    _write_ingredients(workbook.active, example)
    _write_specs(workbook.create_sheet("Specs"), example)
    _write_settings(workbook.create_sheet("Settings"), example)
    _write_notes(workbook.create_sheet("Notes"), example)
    workbook.save(target)
    return target


def _write_ingredients(sheet: Worksheet, example: Example) -> None:
    """The Ingredients sheet: one row per ingredient, one column per nutrient."""
    sheet.title = "Ingredients"
    header = [
        "Ingredient",
        example.cost_header,
        "Min (%)",
        "Max (%)",
        "Use",
        *(f"{nutrient} ({unit})" for nutrient, unit in example.nutrients),
    ]
    sheet.append(header)
    for name, cost, minimum, maximum, use, *contents in example.ingredients:
        sheet.append([name, cost, minimum, maximum, "yes" if use else "no", *contents])
    formats = [None, COST_FORMAT, AMOUNT_FORMAT, AMOUNT_FORMAT, None]
    formats += [AMOUNT_FORMAT] * len(example.nutrients)
    _finish(sheet, formats, freeze="B2")
    for (cell,) in sheet.iter_rows(min_row=2, min_col=5, max_col=5):
        cell.alignment = Alignment(horizontal="center")


def _write_specs(sheet: Worksheet, example: Example) -> None:
    """The Specs sheet: min and max level of each constrained nutrient."""
    sheet.append(["Nutrient", "Min", "Max"])
    for row in example.specs:
        sheet.append(list(row))
    _finish(sheet, [None, AMOUNT_FORMAT, AMOUNT_FORMAT], freeze="A2")


def _write_settings(sheet: Worksheet, example: Example) -> None:
    """The Settings sheet: name, batch size and units."""
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
        prog="python -m blendkit.examples",
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

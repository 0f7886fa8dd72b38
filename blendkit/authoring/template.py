"""Start a new workbook: a blank template in the format the reader expects, or a worked example.

`write_template(path)` writes the template: a ``Read me`` sheet that explains every sheet
and column, then ``Ingredients``, ``Specs``, ``Combined``, ``Groups``, ``Products``,
``Limits``, ``Settings`` and ``Notes`` with bold frozen headers, number formats, drop-down lists for
Use, Basis and Mode (and the mass units), and a few rows marked "(example row)" that show
each construct (a ratio spec, a dry-matter spec, a combined nutrient, a group). Products and Limits have their
headers only (an empty sheet adds nothing: one blend). The template is valid as written:
it solves as it stands, so a user can run it before replacing the example rows.

`write_new(path, example=None)` writes the template, or the worked example of that name
(see `blendkit.authoring.examples`), and never replaces an existing file.

Run ``python -m blendkit.authoring.template PATH`` to write the template to PATH (replacing it).
"""

from __future__ import annotations

import argparse
from pathlib import Path

from openpyxl import Workbook
from openpyxl.styles import Alignment, Font
from openpyxl.utils import column_index_from_string, get_column_letter
from openpyxl.worksheet.datavalidation import DataValidation
from openpyxl.worksheet.worksheet import Worksheet

from blendkit import CAUTION
from blendkit.authoring.examples import AMOUNT_FORMAT, EXAMPLES, example_workbook
from blendkit.authoring.examples.writer import write_notes
from blendkit.model.blend import BASES, MASS_UNITS_KG

COST_FORMAT = "#,##0.00"

# How far down the drop-down lists and number formats reach on the data sheets.
LAST_ROW = 500

# The choices offered by the drop-down lists.
USE_CHOICES = ("yes", "no")
BASIS_CHOICES = BASES  # ("as fed", "dry matter")
MODE_CHOICES = ("blend", "diet")

# Column widths in characters, by header, for the data sheets; others get DEFAULT_WIDTH.
DEFAULT_WIDTH = 16
WIDTHS = {"Ingredient": 30, "Ingredients": 50, "Nutrient": 28, "Sum": 50, "Group": 30, "Product": 20, "Setting": 14, "Value": 24}
README_WIDTHS = (22, 100)

EXAMPLE_ROW = "(example row)"

# The template's Ingredients sheet: three illustrative ingredients with rough round values
# (not from any table; replace them with your own prices and analyses).
INGREDIENT_HEADER = (
    "Ingredient", "Cost (per t)", "Min (%)", "Max (%)", "Use", "Unit", "Stock (kg)",
    "Min if used (%)", "Pack size (kg)", "Scale step (kg)", "Dry matter (%)", "Crude protein (%)", "Calcium (%)", "Phosphorus (%)",
)  # fmt: skip
INGREDIENT_ROWS = (
    (f"Grain {EXAMPLE_ROW}", 200, None, None, "yes", None, None, None, None, None, 88, 9.0, 0.03, 0.28),
    (f"Protein meal {EXAMPLE_ROW}", 420, None, 35, "yes", None, None, None, None, None, 89, 45.0, 0.30, 0.65),
    (f"Limestone {EXAMPLE_ROW}", 50, None, None, "yes", None, None, None, None, None, 99, 0.0, 38.0, 0.0),
)
SPEC_HEADER = ("Nutrient", "Basis", "Min", "Max", "Product", "Penalty", "Priority", "Step", "Margin")
SPEC_ROWS = (
    ("Crude protein", "dry matter", 18, None, None, None, None, None, None),
    ("Calcium", "as fed", 0.6, 1.0, None, None, None, None, None),
    ("Calcium / Phosphorus", "as fed", 1.5, 2.5, None, None, None, None, None),
)
# One combined nutrient, with no spec: it is shown in the results and changes nothing.
COMBINED_HEADER = ("Nutrient", "Sum", "Unit")
COMBINED_ROWS = (("Calcium plus phosphorus", "Calcium + Phosphorus", "%"),)
GROUP_HEADER = ("Group", "Ingredients", "Min (%)", "Max (%)", "Product", "Priority")
GROUP_ROWS = ((f"Grain and meal {EXAMPLE_ROW}", f"Grain {EXAMPLE_ROW}, Protein meal {EXAMPLE_ROW}", 90, None, None,
               None),)
PRODUCT_HEADER = ("Product", "Amount (kg)", "Max ingredients")
LIMIT_HEADER = ("Product", "Ingredient", "Min (%)", "Max (%)", "Priority", "Min if used (%)", "Pack size (kg)")
SETTING_ROWS = (
    ("Name", "New blend"),
    ("Mode", "blend"),
    ("Batch size", 1000),
    ("Mass unit", "kg"),
    ("Cost per", "tonne"),
    ("Currency", None),
    ("Dry matter", "Dry matter"),
    ("Max ingredients", None),
    ("Scale step", None),
    ("Hand-add below", None),
    ("Time limit", None),
)

# The Read me sheet: (term, explanation) rows. A term ending in " sheet" (or with no
# explanation) starts a section and is written as a heading after a blank row.
README = (
    ("blendkit workbook", None),
    ("What to do", "Enter your ingredients, their prices and analyses on Ingredients and the "
     "limits the blend must meet on Specs (and, if you need them, Groups, Products, Limits and "
     "Settings), then "
     "run:  blendkit solve <this file>.  The rows marked (example row) only show the format: "
     "replace or delete them. The workbook solves as it stands, so you can try it first."),
    ("Names", "Sheet names and column headers are matched ignoring case and extra spaces. A "
     "unit in parentheses at the end of a header, such as (%) or (EUR/t), is a label for you "
     "and is not read. Other sheets and columns (like this one and Notes) are left alone."),
    ("Numbers", "Percentages are plain numbers: 5 means 5 %. A cell formatted as a percentage "
     "is read as the percentage it shows. Blank means no limit (or, for a content, 0)."),
    ("Ingredients sheet", "Required: one row per ingredient."),
    ("Ingredient", "The name of each ingredient (a food in diet mode); each name once."),
    ("Cost", "The price per Cost per unit of mass (see Settings), e.g. per tonne. In diet mode: "
     "the price per Unit of the food."),
    ("Min, Max", "The least and most inclusion in % of the blend; blank = no limit. In diet "
     "mode: the least and most amount, in the food's Unit."),
    ("Use", "yes or no (drop-down). no keeps the ingredient out of the blend but in the report. "
     "Blank = yes."),
    ("Unit", "Diet mode only: what one unit of amount is, such as 100 g or 1 slice. Leave blank "
     "in blend mode."),
    ("Stock", "The quantity on hand, in the Mass unit (see Settings); blank = unlimited. With a "
     "Products sheet, the stock is shared by all products."),
    ("Min if used", "Either leave the ingredient out or use at least this much, in % of the blend "
     "(diet mode: an amount); blank = no such rule. Not above Max."),
    ("Pack size", "The ingredient is bought in packs of this mass (Mass unit), e.g. 25 kg bags: its "
     "weight per batch (Batch size) is a whole number of packs, 0 allowed. Blank = none."),
    ("Scale step", "Its weight per batch is a whole multiple of this mass, e.g. 0.5 kg for a scale "
     "that reads in half kilograms; overrides the Scale step setting. Blank = the setting."),
    ("Other columns", "One column per nutrient: the content of one unit of the ingredient, as "
     "fed, in the unit written in the header, e.g. Crude protein (%), Energy (MJ/kg), Iron (mg). "
     "A blank content counts as 0."),
    ("Specs sheet", "Required: one row per bound on a nutrient or a ratio (it may be empty)."),
    ("Nutrient", "A nutrient column of Ingredients, or a ratio of two written A / B, e.g. "
     "Calcium / Phosphorus: the bounds then apply to level(A) divided by level(B)."),
    ("Basis", "as fed (the default when blank) or dry matter (drop-down). dry matter bounds the "
     "level per unit of dry matter, using the nutrient column named by the Dry matter setting, "
     "in %. A ratio is the same on both bases."),
    ("Min, Max", "The least and most level in the blend, in the nutrient's unit; one may be "
     "blank, not both. In diet mode: totals, such as daily intakes."),
    ("Product", "Blank = every product; otherwise the product (from the Products sheet) the row "
     "applies to."),
    ("Penalty", "Blank (the usual case): the spec must be met. A number makes an as-fed nutrient "
     "spec soft: it may be missed, at that cost per unit it is missed by (currency per Cost per "
     "unit of blend); every soft spec not met is reported first."),
    ("Priority", "1 to 9, blank for the default. When limits cannot all be met, those with a lower "
     "priority give way first in the least-cost way out. Defaults: ingredient limits 2, nutrient, "
     "ratio and group specs 3, Use = no 4, stocks 5."),
    ("Step", "Optional: the change of this bound whose cost the output shows (shadow price times "
     "step); blank for the default by unit (0.01 for %, 0.1 for MJ/kg, 1 for mg/kg)."),
    ("Margin", "Optional, 0 or more, in the spec's unit: a safety margin. The formula is made to "
     "Min + Margin and Max - Margin; the results show the spec and this target."),
    ("Combined sheet", "Optional: nutrients made by adding up others, such as an electrolyte "
     "balance; a combined nutrient may then be used on Specs like any nutrient column."),
    ("Nutrient", "A new name, not a nutrient column of Ingredients."),
    ("Sum", "Numbers times nutrients joined by + and -, such as 434.8 * Sodium + 255.8 * "
     "Potassium - 282.1 * Chloride. A nutrient is named as on Specs (without its unit); a name "
     "alone counts once; it may be another combined nutrient. Decimals take a point."),
    ("Unit", "The unit of the combined level, such as mEq/kg (a label for the reports)."),
    ("Groups sheet", "Optional: bounds on the total of several ingredients."),
    ("Group", "A name for the group."),
    ("Ingredients", "The ingredient names, separated by commas or semicolons."),
    ("Min, Max", "The least and most total inclusion in % of the blend (amounts in diet mode)."),
    ("Product, Priority", "As on Specs."),
    ("Products sheet", "Optional; leave it empty to make one blend of Batch size. Fill it to make "
     "several products in one run from shared stocks (not in diet mode)."),
    ("Product", "The name of each product."),
    ("Amount", "How much of it to make, in the Mass unit. Each product is its own blend; Specs "
     "and Groups rows apply to the product named in their Product column, or to every product "
     "when it is blank."),
    ("Max ingredients", "At most this many ingredients in this product (a whole number); blank = "
     "the Max ingredients setting."),
    ("Limits sheet", "Optional: inclusion limits of one ingredient in one product."),
    ("Product, Ingredient", "A product from Products and an ingredient from Ingredients."),
    ("Min, Max", "Inclusion limits in % of that product. They replace the Ingredients sheet's "
     "Min and Max for that ingredient in that product (both blank: the row keeps them)."),
    ("Priority", "As on Specs."),
    ("Min if used, Pack size", "As on Ingredients, for that ingredient in that product."),
    ("Settings sheet", "Setting / Value rows; a blank value keeps the default."),
    ("Name", "A title for the blend."),
    ("Mode", "blend (default): the inclusions are in % and add up to 100. diet: the amount of "
     "each food is decided in its Unit, a nutrient's total is the sum of amount x content, "
     "Specs bounds are totals and the amounts need not add up to anything."),
    ("Batch size", "The amount of blend to make, in the Mass unit (default 1000)."),
    ("Mass unit", "kg (default), g, t (also tonne, metric ton), lb, cwt (100 lb), ton (also "
     "short ton, 2000 lb) (drop-down)."),
    ("Cost per", "The mass unit that Cost is a price per (default tonne); same choices."),
    ("Currency", "A label for the reports, such as EUR."),
    ("Dry matter", "The nutrient column (in %) that dry-matter specs use; default Dry matter."),
    ("Max ingredients", "At most this many ingredients in each formula (a whole number); blank = "
     "no limit."),
    ("Scale step", "Every weight per batch is a whole multiple of this mass (Mass unit), e.g. 0.5; "
     "the formula is found on those weights, so every spec holds for what is weighed. Blank = none."),
    ("Hand-add below", "Weights per batch below this mass are listed apart as hand additions on "
     "the batch sheet. Blank = none."),
    ("Time limit", "Seconds the search for a formula under Min if used, Pack size, Scale step and "
     "Max ingredients may take (default 60); then the best formula found is shown with its "
     "proven gap."),
    ("Caution", None),
    ("", CAUTION),
)

NOTES = (
    "Write here where your prices and analyses come from, and who checked the specs.",
    "The example rows of this template have rough round values, not from any table; "
    "replace them with your own.",
    CAUTION,
)


def template_workbook() -> Workbook:
    """The blank template as an openpyxl Workbook, not yet saved."""
    workbook = Workbook()
    _write_readme(workbook.active)
    _write_ingredients(workbook.create_sheet("Ingredients"))
    _write_specs(workbook.create_sheet("Specs"))
    _table(workbook.create_sheet("Combined"), COMBINED_HEADER, COMBINED_ROWS, freeze="A2")
    _write_groups(workbook.create_sheet("Groups"))
    _write_products_and_limits(workbook.create_sheet("Products"), workbook.create_sheet("Limits"))
    _write_settings(workbook.create_sheet("Settings"))
    write_notes(workbook.create_sheet("Notes"), NOTES)
    return workbook


def write_template(path: str | Path) -> Path:
    """Write the blank template to `path` (an existing file is replaced) and return it."""
    target = Path(path)
    template_workbook().save(target)
    return target


def write_new(path: str | Path, example: str | None = None) -> Path:
    """Write a new workbook to `path`: the template, or the worked example named `example`.

    Never replaces anything: raises FileExistsError if `path` exists (a file or a
    directory), and KeyError, before writing anything, for an unknown example name
    (the names are the keys of `blendkit.authoring.examples.EXAMPLES`). Returns the path written.
    """
    if example is not None and example not in EXAMPLES:
        raise KeyError(f"no example called {example!r}; the examples are: {', '.join(EXAMPLES)}")
    workbook = template_workbook() if example is None else example_workbook(example)
    target = Path(path)
    with open(target, "xb") as file:  # "x": fail if the path exists, atomically
        try:
            workbook.save(file)
        except BaseException:
            file.close()
            target.unlink(missing_ok=True)
            raise
    return target


def _write_readme(sheet: Worksheet) -> None:
    """The Read me sheet: a heading row per section, then one row per column or setting."""
    sheet.title = "Read me"
    for term, text in README:
        heading = text is None or term.endswith(" sheet")
        if heading and sheet.max_row > 1:
            sheet.append([])
        sheet.append([term, text])
        row = sheet.max_row
        sheet.cell(row=row, column=1).font = Font(bold=True, size=12 if heading else 11)
        sheet.cell(row=row, column=1).alignment = Alignment(vertical="top")
        sheet.cell(row=row, column=2).alignment = Alignment(wrap_text=True, vertical="top")
    sheet["A1"].font = Font(bold=True, size=14)
    sheet.freeze_panes = "A2"
    for column, width in enumerate(README_WIDTHS, start=1):
        sheet.column_dimensions[get_column_letter(column)].width = width


def _write_ingredients(sheet: Worksheet) -> None:
    """The Ingredients sheet: example rows, number formats and the Use drop-down."""
    _table(sheet, INGREDIENT_HEADER, INGREDIENT_ROWS, freeze="B2")
    _number_format(sheet, "B", COST_FORMAT)
    for column in ("C", "D", "G", "H", "I", "J", "K", "L", "M", "N"):
        _number_format(sheet, column, AMOUNT_FORMAT)
    _choices(sheet, "E", USE_CHOICES, "Use", "yes: the ingredient may be used; no: keep it out.")
    for row in sheet.iter_rows(min_row=2, max_row=LAST_ROW, min_col=5, max_col=5):
        row[0].alignment = Alignment(horizontal="center")


def _write_specs(sheet: Worksheet) -> None:
    """The Specs sheet: example rows (a ratio, a dry-matter spec) and the Basis drop-down."""
    _table(sheet, SPEC_HEADER, SPEC_ROWS, freeze="A2")
    for column in ("C", "D", "F", "H", "I"):
        _number_format(sheet, column, AMOUNT_FORMAT)
    _choices(sheet, "B", BASIS_CHOICES, "Basis", "as fed, or dry matter (level per unit of dry matter).")


def _write_groups(sheet: Worksheet) -> None:
    """The Groups sheet: one example group."""
    _table(sheet, GROUP_HEADER, GROUP_ROWS, freeze="A2")
    for column in ("C", "D"):
        _number_format(sheet, column, AMOUNT_FORMAT)


def _write_products_and_limits(products: Worksheet, limits: Worksheet) -> None:
    """The Products and Limits sheets: headers only, since an empty sheet makes one blend."""
    _table(products, PRODUCT_HEADER, (), freeze="A2")
    _number_format(products, "B", AMOUNT_FORMAT)
    _table(limits, LIMIT_HEADER, (), freeze="A2")
    for column in ("C", "D", "F", "G"):
        _number_format(limits, column, AMOUNT_FORMAT)


def _write_settings(sheet: Worksheet) -> None:
    """The Settings sheet: every setting with its default, drop-downs for Mode and the mass units."""
    _table(sheet, ("Setting", "Value"), SETTING_ROWS, freeze="A2")
    for (cell,) in sheet.iter_rows(min_row=2, min_col=2, max_col=2):
        cell.alignment = Alignment(horizontal="left")
    mode_row = 2 + [name for name, _ in SETTING_ROWS].index("Mode")
    _choices(sheet, f"B{mode_row}", MODE_CHOICES, "Mode", "blend: inclusions in %; diet: amounts of foods.")
    units = tuple(MASS_UNITS_KG)
    for name in ("Mass unit", "Cost per"):
        row = 2 + [setting for setting, _ in SETTING_ROWS].index(name)
        _choices(sheet, f"B{row}", units, name, "A mass unit: " + ", ".join(units) + ".")


def _table(sheet: Worksheet, header: tuple, rows: tuple, freeze: str) -> Worksheet:
    """A data sheet: bold frozen header, the rows, and column widths by header."""
    sheet.append(list(header))
    for row in rows:
        sheet.append(list(row))
    for cell in sheet[1]:
        cell.font = Font(bold=True)
    sheet.freeze_panes = freeze
    for column, title in enumerate(header, start=1):
        width = WIDTHS.get(title, max(DEFAULT_WIDTH, len(title) + 2))
        sheet.column_dimensions[get_column_letter(column)].width = width
    return sheet


def _number_format(sheet: Worksheet, column: str, number_format: str) -> None:
    """Format a column's data cells, down to LAST_ROW, so typed numbers look alike."""
    for (cell,) in sheet.iter_rows(
        min_row=2, max_row=LAST_ROW, min_col=column_index_from_string(column), max_col=column_index_from_string(column)
    ):
        cell.number_format = number_format


def _choices(sheet: Worksheet, where: str, choices: tuple[str, ...], title: str, prompt: str) -> None:
    """A drop-down list on a column's data cells (`where` a column letter) or on one cell."""
    validation = DataValidation(
        type="list",
        formula1='"' + ",".join(choices) + '"',
        allow_blank=True,
        showErrorMessage=True,
        errorTitle=title,
        error=f"Choose one of: {', '.join(choices)}.",
        promptTitle=title,
        prompt=prompt[:255],
    )
    validation.add(f"{where}2:{where}{LAST_ROW}" if where.isalpha() else where)
    sheet.add_data_validation(validation)


def main(argv: list[str] | None = None) -> None:
    """Write the blank template to the path given on the command line."""
    parser = argparse.ArgumentParser(
        prog="python -m blendkit.authoring.template",
        description="Write the blank blendkit workbook template to PATH (replacing it).",
    )
    parser.add_argument("path", metavar="PATH", type=Path, help="the .xlsx file to write")
    args = parser.parse_args(argv)
    print(write_template(args.path))


if __name__ == "__main__":
    main()

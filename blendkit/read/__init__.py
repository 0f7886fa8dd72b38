"""Workbook reader: an .xlsx file in, a validated Blend out, every problem with its cell.

`read_workbook(path)` (in `blendkit.read.workbook`) returns a `Blend` or raises one
`WorkbookError` listing every problem. One module reads each input sheet, and documents
that sheet's columns: `ingredients`, `combined`, `specs`, `groups`, `products`, `limits`,
`settings` (and `dry_matter` for the dry-matter column that Settings, Ingredients and Specs share).
The rules every sheet follows are these.

The workbook format
===================

Files
    An Office Open XML workbook: .xlsx (also .xlsm, .xltx, .xltm). Old binary .xls files,
    password-protected workbooks, CSV and other files are refused with a problem whose
    place is the file name. Before anything is parsed, the file's unpacked size and cell
    count are checked against `ReadLimits` (see `package`); a workbook over them is
    refused with a problem on its largest sheet.

Sheets
    Found by name, ignoring case and surrounding spaces: ``Ingredients`` (required),
    ``Specs`` (required, may have no data rows), and the optional ``Combined``,
    ``Groups``, ``Products``, ``Limits`` and ``Settings``. Other sheets are ignored. Cell references
    in problems use the sheet title as written in the file. An optional sheet with nothing
    in it, or only its header row, adds nothing.

Tables
    In each sheet the header row is the first row with any non-empty cell; the table
    may start in any column. The rows below it are data rows; rows that are blank in every
    headed column are skipped (a cell holding only spaces is blank). Only the cells a
    sheet stores are read. Columns with an empty header are not read; data under them is
    pointed out (see `layout`: numbers in Ingredients are a problem, anything else a
    note), and so are merged cells over data rows and hidden rows, columns and sheets.
    A required sheet with no header row is reported as empty. A missing required column
    is reported on the header row (``Specs!1:1``); when the column that names the rows
    (Ingredient, Nutrient, Group, Product, Setting; Product and Ingredient on Limits) or
    Settings' Value column is missing, that sheet's rows are not checked further.

Headers
    Compared without regard to case, surrounding spaces or runs of inner spaces, and
    without a trailing unit in parentheses: ``Cost (EUR/t)`` is the Cost column and
    ``Crude protein (%)`` is the nutrient "Crude protein" with unit "%". Only the last
    parenthesised part is a unit, so ``Lysine (digestible) (%)`` is the nutrient
    "Lysine (digestible)". A name that refers to a column (Specs, the Dry matter setting)
    is first compared whole, then less a trailing "(unit)": ``Lysine (digestible)`` names
    that column. Two headers that are the same after this are an error, reported
    on the second.

Names
    Names that one sheet uses to refer to another (nutrients, ingredients, products) are
    compared like headers, ignoring case and runs of spaces, and stored as written where
    they are defined (the Ingredients header, the Ingredient column, the Products sheet).

Modes (the ``Mode`` setting)
    ``blend`` (the default): the ingredients make up a blend; inclusion limits (Min and
    Max of Ingredients, Groups and Limits) are % of the blend, each within 0..100.
    ``diet``: each ingredient is a food bought by its own unit (the Unit column, such as
    "100 g" or "serving"); Cost and the contents are per that unit, and Min and Max are
    amounts in that unit, any number 0 or more. A diet has no Products.

Numbers
    A number cell, or text that is a plain decimal number once trimmed (" 12.5", "-3",
    "1e3"). Anything else is an error worded ``<what> "<value>" is not a number``: words,
    dates, TRUE/FALSE, "nan", "inf", error values such as #DIV/0!, and numbers too large
    to be finite. A number beyond ±`LARGEST_NUMBER` (1e12, in `values`) is an error too. A number cell whose number format shows it as a percentage (the format
    has a % that is not in quotes, escaped with a backslash or inside [brackets]) is read
    as the percentage shown: 0.05 formatted as 5% reads as 5. This applies to every number
    read (a formula's result too, but never to text), so limits, contents and spec bounds
    read as they look on screen.

Formulas
    The workbook is loaded twice, once for the results spreadsheet programs save with a
    formula and once for the formulas themselves. A formula's saved result is used like
    a typed value. A formula with no saved result (a file written by a script and never
    opened in a spreadsheet program) is an error: open and save the file to store results.
"""

from __future__ import annotations

__all__ = ["read_workbook"]


def __getattr__(name: str):
    """`read_workbook`, imported when first asked for: the command line imports the light
    `blendkit.read.package` at start-up, and that must not load openpyxl."""
    if name == "read_workbook":
        from blendkit.read.workbook import read_workbook

        return read_workbook
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")

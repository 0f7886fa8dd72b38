"""The Products sheet (optional), one row per product made from the same ingredients.

``Product``     required column; the name, unique ignoring case and spaces.
``Amount``      optional; how much to make, in the mass unit, more than 0. A product
                without an amount is a formula of its own, made per batch, and no
                stock applies to it (see `blendkit.lp.split`).
``Max ingredients`` optional; at most this many ingredients above 0 in this product's
                formula, a whole number, 1 or more; overrides the Max ingredients setting.
Without Products rows there is one blend of ``Batch size``. Not allowed in diet mode.
"""

from __future__ import annotations

from blendkit.errors import Problem
from blendkit.model.blend import Product, Settings
from blendkit.read.names import Names, read_row_name
from blendkit.read.reading import Reading
from blendkit.read.settings import BLEND_MODE, DIET_MODE, SETTINGS
from blendkit.read.tables import Row, Table, Wanted, check_columns
from blendkit.read.values import format_number, name_key, read_number
from blendkit.read.weigh_cells import read_count

PRODUCTS = "Products"

# The columns, by key (normalised header): header, what it is for, whether required.
_COLUMNS: Wanted = {
    "product": ("Product", "the name of each product", True),
    "amount": ("Amount", "how much of each product to make, in the mass unit", False),
    "max ingredients": ("Max ingredients", "at most this many ingredients in the product", False),
}


def read_products_sheet(reading: Reading) -> None:
    """Read the Products sheet, if any, into the products and the product names that other
    sheets refer to."""
    if not reading.has(PRODUCTS):
        reading.product_names = Names(PRODUCTS, {}, present=False)
        return
    reading.product_names = Names(reading.titles[PRODUCTS], {})
    table = reading.table(PRODUCTS)
    if table is not None:
        reading.products, reading.product_names = read_products(
            table, reading.settings, reading.problems[PRODUCTS]
        )


def read_products(table: Table, settings: Settings, problems: list[Problem]) -> tuple[list[Product], Names]:
    """The products of the Products sheet, in sheet order, and every product name."""
    missing = check_columns(table, _COLUMNS, problems)
    if "product" in missing:
        return [], Names(table.title, None)
    products: list[Product] = []
    seen: dict[str, str] = {}  # name key -> cell of its first appearance
    names: dict[str, str] = {}  # name key -> name as written
    for row in table.rows:
        name, product = _read_product(row, settings, seen, problems)
        if name is not None:
            names.setdefault(name_key(name), name)
        if product is not None:
            products.append(product)
    _check_blend_mode(table, settings, problems)
    return products, Names(table.title, names)


def _read_product(
    row: Row, settings: Settings, seen: dict[str, str], problems: list[Problem]
) -> tuple[str | None, Product | None]:
    """One row: its name (None if unreadable) and its product (None if the row has problems)."""
    problems_before = len(problems)
    name = read_row_name(row["product"], "product", seen, problems)
    amount = _amount(row, settings, problems)
    most = read_count(row.get("max ingredients"), "max ingredients", problems)
    if len(problems) > problems_before or name is None:
        return name, None
    cells = {"product": row["product"].ref}
    for key in ("amount", "max ingredients"):
        if key in row:
            cells[key] = row[key].ref
    return name, Product(name=name, amount=amount, cells=cells, max_ingredients=most)


def _amount(row: Row, settings: Settings, problems: list[Problem]) -> float | None:
    """The row's amount (None when blank or absent); one not above 0 is reported."""
    amount = read_number(row.get("amount"), "amount", problems)
    if amount is not None and amount <= 0:
        problems.append(Problem(row["amount"].ref, (
            f"amount {format_number(amount)} must be more than 0; it is how much of this product to make, "
            f"in {settings.mass_unit}"
        )))
    return amount


def _check_blend_mode(table: Table, settings: Settings, problems: list[Problem]) -> None:
    """Products are for blend mode: report rows in diet mode, on the first one."""
    if settings.mode == DIET_MODE and table.rows:
        mode_cell = settings.cells.get("mode", SETTINGS)
        problems.append(Problem(table.rows[0]["product"].ref, (
            f'products are for blend mode, and the Mode setting in {mode_cell} is "{DIET_MODE}"; '
            f"a diet is planned on its own: clear the rows of {table.title}, or set Mode to "
            f"{BLEND_MODE}"
        )))

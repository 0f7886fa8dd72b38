"""Names: each row's own name, and the names one sheet uses to refer to another.

Names are compared as `blendkit.read` describes (Names). An unknown name is reported with
the closest known one ("did you mean") and, when there are few, the list of known names.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass

from blendkit.errors import Problem
from blendkit.read.cells import Cell
from blendkit.read.values import name_key, read_name

# How many names an unknown-name message lists in full.
_LIST_AT_MOST = 8

# How to add the Products sheet, for a product named where there is none.
ADD_PRODUCTS = 'add a sheet named "Products" with the columns Product and Amount listing it'


@dataclass(frozen=True)
class Names:
    """The names other sheets may refer to (key -> name as written), from one sheet.

    `names` is None when they could not be read (references then go unchecked: the
    reason is already reported); `sheet` is the sheet's title, and `present` is False when
    the workbook has no such sheet.
    """

    sheet: str
    names: dict[str, str] | None
    present: bool = True


def read_row_name(cell: Cell, kind: str, seen: dict[str, str], problems: list[Problem]) -> str | None:
    """The name in a row's naming cell (None when unreadable); blank and repeated names are
    reported. `seen` maps the key of each name read so far to its cell, and gains this one."""
    name = read_name(cell, f"{kind} name", problems)
    if cell.kind == "blank":
        problems.append(Problem(cell.ref, (
            f"this row has values but no {kind} name; type a name, or clear the row"
        )))
    elif name is not None:
        key = name_key(name)
        if key in seen:
            problems.append(Problem(cell.ref, (
                f'{kind} "{name}" is already listed in {seen[key]} (names are compared '
                f"ignoring case and spaces); give each {kind} its own name, or delete one row"
            )))
        else:
            seen[key] = cell.ref
    return name


def refer(cell: Cell, text: str, what: str, names: Names, problems: list[Problem], *,
          blank_ok: bool = False, adding: str = "") -> str | None:
    """The name that `text` refers to, as written where defined; None when unknown (reported).

    `blank_ok` says that a blank cell would mean "every <what>"; `adding` is how to add
    the missing sheet, for when there is none.
    """
    if names.names is None:
        return text
    found = names.names.get(name_key(text))
    if found is not None:
        return found
    or_blank = f", or clear the cell (blank means every {what})" if blank_ok else ""
    if not names.present:
        message = f'no {what} "{text}": the workbook has no {names.sheet} sheet; {adding}{or_blank}'
    elif not names.names:
        message = f'no {what} "{text}" in {names.sheet}, which lists none; add it there{or_blank}'
    else:
        message = f'no {what} "{text}" in {names.sheet}; name one listed there{or_blank}'
        otherwise = f"check the spelling against {names.sheet}"
        message += suggestions(text, names.names, f"the {what}s are", otherwise)
    problems.append(Problem(cell.ref, message))
    return None


def suggestions(name: str, known: dict[str, str], listing: str, otherwise: str) -> str:
    """The end of an unknown-name message: the closest known name and the list, if short."""
    message = ""
    close = difflib.get_close_matches(name_key(name), list(known), n=1, cutoff=0.6)
    if close:
        message += f'; did you mean "{known[close[0]]}"?'
    if len(known) <= _LIST_AT_MOST:
        message += f"; {listing}: " + ", ".join(f'"{shown}"' for shown in known.values())
    elif not close:
        message += f"; {otherwise}"
    return message


def row_product(row: dict[str, Cell], products: Names, problems: list[Problem]) -> tuple[bool, str | None]:
    """The optional Product cell of a Specs or Groups row: (readable, product or None for every)."""
    cell = row.get("product")
    if cell is None or cell.kind == "blank":
        return True, None
    text = read_name(cell, "product", problems)
    if text is None:
        return False, None
    product = refer(cell, text, "product", products, problems, blank_ok=True, adding=ADD_PRODUCTS)
    return product is not None, product


def for_product(product: str | None) -> str:
    """' for product "X"', or "" for every product, to qualify a message."""
    return f' for product "{product}"' if product is not None else ""


def nutrient_suggestions(name: str, known: dict[str, str], title: str) -> str:
    """The end of a message about a name that is no nutrient column of the sheet `title`:
    the closest columns (`known`, key -> name), or that there are none."""
    if not known:
        return f"; {title} has no nutrient columns"
    return suggestions(name, known, "the nutrient columns are",
                       f"check the spelling against the headers of {title}")

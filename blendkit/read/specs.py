"""The Specs sheet (required, may have no data rows), one row per bound on a nutrient or on
a ratio of two nutrients.

``Nutrient``, ``Min``, ``Max`` are required columns; ``Basis``, ``Product``,
``Penalty``, ``Priority``, ``Step`` and ``Margin`` are optional; other columns are ignored (use them for
notes).
``Nutrient``    a nutrient column of Ingredients (or a combined nutrient of the Combined
                sheet, which counts as one), compared like headers; a unit in
                parentheses may be given and, if both it and the column have one,
                they must agree. `Spec.nutrient` is the name as written in the
                Ingredients header. Or a ratio ``A / B``: two nutrient columns around
                one "/" (each side may carry its unit), bounding level(A) / level(B);
                a "/" inside parentheses is part of a unit. Text that is itself a
                nutrient column (a column may be named "Ca/P") is that column, not a
                ratio. A ratio of a nutrient to itself is an error. For a ratio
                `Spec.ratio` is (A, B) as in the header and `Spec.nutrient` is the text
                as written.
``Min``, ``Max`` at least one of them; min <= max.
``Basis``       ``as fed`` (also blank) or ``dry matter`` (any case; "as-fed" and
                "dry-matter" too). A dry-matter bound is on the level per unit of
                dry matter and needs the dry-matter column (the ``Dry matter``
                setting): it must exist, be in % (or have no unit), and hold 0..100 in
                every ingredient. A ratio is the same on both bases and needs no
                dry-matter column.
``Product``     blank: the spec applies to every product; otherwise the name of a
                product of the Products sheet, and the spec applies to it alone.
``Penalty``     blank for a spec that must be met; a number above 0 makes an as-fed
                nutrient spec soft: it may be missed at that cost per unit of
                violation (currency per `Cost per` unit of blend). Ratio and
                dry-matter specs cannot be soft.
``Priority``    optional, 1 to 9: when limits conflict, those with a lower priority
                give way first (also on Groups and Limits; defaults by kind).
``Step``        optional, above 0: the change of the bound the Result sheet prices
                (shadow price x step); blank for the default by unit
                (`blendkit.model.steps`).
``Margin``      optional, 0 or more, in the spec's unit: a safety margin. The formula
                is made to min + margin and max - margin (the target); min + margin
                above max - margin is an error at the Margin cell.
The same nutrient (or ratio) with the same basis and product at most once. A ratio whose
divisor, or a dry-matter spec whose dry matter, is 0 in every ingredient that may be used is
an error (see `blendkit.read.undefined_specs`).
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass

from blendkit.errors import Problem
from blendkit.model.blend import AS_FED, DRY_MATTER, Settings, Spec
from blendkit.read.bounds import bounds_unread, check_min_max, neither_bound, read_priority
from blendkit.read.cells import Cell
from blendkit.read.dry_matter import check_dry_matter_column
from blendkit.read.ingredients import INGREDIENTS
from blendkit.read.names import Names, for_product, nutrient_suggestions, row_product
from blendkit.read.reading import Reading
from blendkit.read.tables import Column, Row, Table, Wanted, check_columns, empty_sheet, find_column
from blendkit.read.values import name_key, read_name, read_number, split_unit

SPECS = "Specs"

# The columns, by key (normalised header): header, what it is for, whether required.
_COLUMNS: Wanted = {
    "nutrient": ("Nutrient", "the nutrient column of Ingredients that the row limits", True),
    "min": ("Min", "the least level of the nutrient in the blend", True),
    "max": ("Max", "the most level of the nutrient in the blend", True),
    "basis": ("Basis", "as fed or dry matter", False),
    "product": ("Product", "the product the row applies to; blank for every product", False),
    "penalty": ("Penalty", "a soft spec's cost per unit of violation; blank for a hard spec", False),
    "priority": ("Priority", "which limits give way first when limits conflict", False),
    "step": ("Step", "the change of the bound the Result sheet prices; blank for the default", False),
    "margin": ("Margin", "how far inside its min and max the formula is made to; blank for none", False),
}

# The Basis column's words, compared after _basis_key.
_BASES = {AS_FED: AS_FED, DRY_MATTER: DRY_MATTER}


@dataclass(frozen=True)
class SpecContext:
    """What checking a Specs row needs from the rest of the workbook."""

    nutrients: list[Column] | None  # None when the Ingredients header could not be read
    ingredients_title: str
    dry_matter: Column | None
    settings: Settings
    products: Names


@dataclass(frozen=True)
class _Target:
    """What a spec bounds: one nutrient column, or the ratio of two.

    `identity` tells repeated specs apart (it is set even when the nutrient is unknown).
    """

    identity: tuple
    column: Column | None = None
    ratio: tuple[Column, Column] | None = None


def read_specs_sheet(reading: Reading) -> None:
    """Read the Specs sheet into the specs (a missing sheet is reported with the file), then
    check the dry-matter column if a dry-matter spec needs it."""
    if not reading.has(SPECS):
        return
    table = reading.table(SPECS)
    problems = reading.problems[SPECS]
    if table is None:
        problems.append(empty_sheet(reading.titles[SPECS], _COLUMNS))
        return
    context = SpecContext(
        nutrients=reading.nutrients,
        ingredients_title=reading.titles[INGREDIENTS],
        dry_matter=reading.dry_matter,
        settings=reading.settings,
        products=reading.product_names,
    )
    reading.specs, dry_matter_used = read_specs(table, context, problems)
    if dry_matter_used is not None and reading.dry_matter is not None:
        check_dry_matter_column(
            reading.tables[INGREDIENTS], reading.dry_matter, dry_matter_used, reading.problems[INGREDIENTS]
        )


def read_specs(table: Table, context: SpecContext, problems: list[Problem]) -> tuple[list[Spec], str | None]:
    """The specs, and the Basis cell of the first valid dry-matter spec on a nutrient (or None)."""
    missing = check_columns(table, _COLUMNS, problems)
    if "nutrient" in missing:
        return [], None
    specs: list[Spec] = []
    dry_matter_used: str | None = None
    seen: dict[tuple, str] = {}  # (target, basis, product) -> cell of its first spec
    for row in table.rows:
        spec = _read_spec(row, context, seen, problems)
        if spec is None:
            continue
        if spec.basis == DRY_MATTER and spec.ratio is None and dry_matter_used is None:
            dry_matter_used = spec.cells["basis"]
        specs.append(spec)
    return specs, dry_matter_used


def _read_spec(
    row: Row, context: SpecContext, seen: dict[tuple, str], problems: list[Problem]
) -> Spec | None:
    """One row's spec; None when the row has problems (reported) or cannot be checked."""
    problems_before = len(problems)
    name_cell = row["nutrient"]
    text, target = _read_target(name_cell, context, problems)
    basis = _basis(row.get("basis"), problems)
    product_ok, product = row_product(row, context.products, problems)
    if target is not None and basis == DRY_MATTER and target.ratio is None:
        _needs_dry_matter(row["basis"], context, problems)
    if target is not None and basis is not None and product_ok:
        _check_repeated(name_cell, text, target, basis, product, seen, problems)
    minimum = read_number(row.get("min"), "min", problems)
    maximum = read_number(row.get("max"), "max", problems)
    penalty = read_number(row.get("penalty"), "penalty", problems)
    priority = read_priority(row.get("priority"), problems)
    step = _read_step(row, problems)
    margin = _read_margin(row, minimum, maximum, problems)
    _check_penalty(row, penalty, target, basis, problems)
    if neither_bound(row) and text is not None:
        problems.append(Problem(name_cell.ref, (
            f'the spec for "{text}" has neither a min nor a max; give at least one, or delete the row'
        )))
    check_min_max(row, minimum, maximum, problems)
    if len(problems) > problems_before or target is None or basis is None or not product_ok:
        return None
    if target.column is None and target.ratio is None:
        return None  # the Ingredients header could not be read
    if bounds_unread(row):
        return None
    if target.ratio is None:
        nutrient, ratio = target.column.name, None
    else:
        nutrient, ratio = text, (target.ratio[0].name, target.ratio[1].name)
    return Spec(
        nutrient=nutrient,
        minimum=minimum,
        maximum=maximum,
        cells=_spec_cells(row),
        basis=basis,
        ratio=ratio,
        product=product,
        penalty=penalty,
        priority=priority,
        step=step,
        margin=margin,
    )


def _spec_cells(row: Row) -> dict[str, str]:
    """Where a spec was read: its Nutrient, Min and Max cells and those of its optional columns."""
    cells = {"nutrient": row["nutrient"].ref, "min": row["min"].ref, "max": row["max"].ref}
    cells.update({key: row[key].ref for key in ("basis", "product", "penalty", "priority", "step", "margin")
                  if key in row})
    return cells


def _read_target(
    cell: Cell, context: SpecContext, problems: list[Problem]
) -> tuple[str | None, _Target | None]:
    """The Nutrient cell's text and what it names (None for either when unreadable, reported)."""
    text = read_name(cell, "nutrient", problems)
    if cell.kind == "blank":
        problems.append(Problem(cell.ref, (
            "this row has values but no nutrient; type the nutrient's name as in the "
            f"{context.ingredients_title} header, or clear the row"
        )))
        return text, None
    if text is None:
        return None, None
    return text, _spec_target(cell, text, context, problems)


def _check_repeated(
    cell: Cell, text: str, target: _Target, basis: str, product: str | None, seen: dict[tuple, str],
    problems: list[Problem],
) -> None:
    """Report a spec whose (target, basis, product) an earlier row already bounds."""
    key = (target.identity, basis, name_key(product) if product is not None else None)
    if key not in seen:
        seen[key] = cell.ref
        return
    if target.ratio is not None or (target.column is not None and name_key(text) == target.column.key):
        shown = text.strip()  # a ratio, or a name with parentheses (no unit)
    else:
        shown = split_unit(text)[0]
    dry = " on a dry-matter basis" if basis == DRY_MATTER else ""
    problems.append(Problem(cell.ref, (
        f'"{shown}"{dry}{for_product(product)} already has a spec in {seen[key]}; '
        "put both bounds in one row and delete the other"
    )))


def _read_step(row: Row, problems: list[Problem]) -> float | None:
    """The Step cell: blank, or a number above 0 (the change of a bound that is priced)."""
    step = read_number(row.get("step"), "step", problems)
    if step is not None and not step > 0:
        problems.append(Problem(row["step"].ref, (
            f"step {step:g} must be above 0: it is the change of the bound whose cost the "
            "Result sheet shows; type a positive number, or leave it blank for the default"
        )))
        return None
    return step


def _read_margin(row: Row, minimum: float | None, maximum: float | None, problems: list[Problem]) -> float | None:
    """The Margin cell: blank, or a number of 0 or more that leaves min + margin at most
    max - margin."""
    margin = read_number(row.get("margin"), "margin", problems)
    if margin is None:
        return None
    if margin < 0:
        problems.append(Problem(row["margin"].ref, (
            f"margin {margin:g} must be 0 or more: the formula is made to min + margin and "
            "max - margin; type a margin of 0 or more, or leave it blank for none"
        )))
        return None
    if minimum is not None and maximum is not None and minimum <= maximum and minimum + margin > maximum - margin:
        problems.append(Problem(row["margin"].ref, (
            f"margin {margin:g} crosses: min + margin is {minimum + margin:g}, above max - margin "
            f"{maximum - margin:g}; make the margin at most {(maximum - minimum) / 2:g} "
            "(half the gap between min and max), or widen the spec"
        )))
        return None
    return margin


def _check_penalty(
    row: Row, penalty: float | None, target: _Target | None, basis: str | None, problems: list[Problem]
) -> None:
    """A penalty is above 0, and only on an as-fed nutrient spec (those alone can be soft)."""
    if penalty is not None and penalty <= 0:
        problems.append(Problem(row["penalty"].ref, (
            f"penalty {penalty:g} must be above 0: it is the cost per unit by which the spec "
            "may be missed; leave it blank for a spec that must be met"
        )))
    elif penalty is not None and target is not None and (target.ratio is not None or basis == DRY_MATTER):
        problems.append(Problem(row["penalty"].ref, (
            "a penalty makes only an as-fed nutrient spec soft; ratio and dry-matter specs "
            "must be met: clear the penalty, or give the limit a low Priority instead"
        )))


# --- What a spec names: a nutrient column, or a ratio of two ------------------------------


def _spec_target(cell: Cell, text: str, context: SpecContext, problems: list[Problem]) -> _Target:
    """The nutrient or ratio a Specs row names; unknown names and bad ratios are reported."""
    if context.nutrients is None:
        return _Target((name_key(split_unit(text)[0]),))
    by_key = {column.key: column for column in context.nutrients}
    column, name, unit = find_column(text, by_key)
    slashes = _top_level_slashes(text)
    if column is None and slashes:
        return _ratio_target(cell, text, slashes, by_key, context, problems)
    if column is None:
        shown = _typed_name(text, name, by_key)
        message = _unknown_nutrient(shown, context.nutrients, context.ingredients_title)
        problems.append(Problem(cell.ref, message))
    else:
        _check_unit(cell, unit, column, problems)
    return _Target((column.key if column is not None else name_key(name),), column=column)


def _ratio_target(
    cell: Cell, text: str, slashes: list[int], by_key: dict[str, Column], context: SpecContext,
    problems: list[Problem],
) -> _Target:
    """The ratio `text` names: the first "/" with a nutrient column on each side (reported
    when there is none, or when the two sides are the same column)."""
    for at in slashes:
        left, right = _nutrient(text[:at], by_key), _nutrient(text[at + 1:], by_key)
        if left[0] is not None and right[0] is not None:
            break
    else:
        if len(slashes) == 1:
            _report_ratio_sides(cell, text, slashes[0], by_key, context, problems)
        else:
            problems.append(Problem(cell.ref, (
                f'"{text}" is neither a nutrient column of {context.ingredients_title} nor a ratio of '
                'two of them; write a ratio as two nutrient columns around one "/", as in '
                '"Calcium / Phosphorus"'
            )))
        return _Target((name_key(text),))
    (numerator, numerator_unit), (denominator, denominator_unit) = left, right
    _check_unit(cell, numerator_unit, numerator, problems)
    _check_unit(cell, denominator_unit, denominator, problems)
    if numerator.key == denominator.key:
        problems.append(Problem(cell.ref, (
            f'the ratio "{text}" divides "{numerator.name}" by itself; name two different nutrient '
            "columns"
        )))
    return _Target(("ratio", numerator.key, denominator.key), ratio=(numerator, denominator))


def _top_level_slashes(text: str) -> list[int]:
    """Where "/" splits a ratio: every "/" outside parentheses (those belong to units)."""
    depth = 0
    found = []
    for index, character in enumerate(text):
        if character == "(":
            depth += 1
        elif character == ")":
            depth = max(depth - 1, 0)
        elif character == "/" and depth == 0:
            found.append(index)
    return found


def _nutrient(side: str, by_key: dict[str, Column]) -> tuple[Column | None, str]:
    """The nutrient column one side of a ratio names (None if none), and the unit written."""
    column, _name, unit = find_column(side, by_key)
    return column, unit


def _report_ratio_sides(
    cell: Cell, text: str, at: int, by_key: dict[str, Column], context: SpecContext,
    problems: list[Problem],
) -> None:
    """Report each side of the ratio `text` (split at `at`) that names no nutrient column."""
    title = context.ingredients_title
    for side, where in ((text[:at], "before"), (text[at + 1:], "after")):
        column, name, _unit = find_column(side, by_key)
        if not name:
            problems.append(Problem(cell.ref, (
                f'the ratio "{text}" has no nutrient {where} the "/"; write a ratio as two nutrient '
                'columns around one "/", as in "Calcium / Phosphorus"'
            )))
        elif column is None:
            name = _typed_name(side, name, by_key)
            known = {key: column.name for key, column in by_key.items()}
            problems.append(Problem(cell.ref, (
                f'the ratio "{text}" names "{name}" {where} the "/", which is not a nutrient column '
                f"of {title}; a ratio divides one nutrient column by another"
                + nutrient_suggestions(name, known, title)
            )))


def _typed_name(text: str, name: str, by_key: dict[str, Column]) -> str:
    """How to show an unknown nutrient: the whole text or the text less its trailing
    "(unit)", whichever is closer to a nutrient column (a name may hold parentheses)."""
    whole = text.strip()
    if whole == name or not by_key:
        return name

    def closeness(form: str) -> float:
        """How close `form` comes to the closest nutrient column."""
        return max(difflib.SequenceMatcher(None, name_key(form), key).ratio() for key in by_key)

    return whole if closeness(whole) > closeness(name) else name


def _check_unit(cell: Cell, unit: str, column: Column, problems: list[Problem]) -> None:
    """A unit written in a spec must agree with the nutrient column's unit, if both have one."""
    if unit and column.unit and name_key(unit) != name_key(column.unit):
        problems.append(Problem(cell.ref, (
            f'the unit "{unit}" differs from the unit "{column.unit}" of the column '
            f'"{column.name}" in {column.ref}; give the bounds in "{column.unit}" '
            "and write that unit, or leave the unit out"
        )))


def _unknown_nutrient(name: str, nutrients: list[Column], ingredients_title: str) -> str:
    """The message for a spec naming no nutrient column: the columns, or the closest one."""
    if not nutrients:
        return (
            f'no nutrient column "{name}" in {ingredients_title}, which has no nutrient columns; '
            f'add a column headed "{name}" to {ingredients_title}, or delete this row'
        )
    known = {column.key: column.name for column in nutrients}
    return (
        f'no nutrient column "{name}" in {ingredients_title}; a spec must name one of its nutrient columns'
        + nutrient_suggestions(name, known, ingredients_title)
    )


# --- The Basis column and the dry-matter column it may need --------------------------------


def _basis_key(text: str) -> str:
    """A basis as compared: case-folded, hyphens and runs of spaces made one space."""
    return " ".join(text.replace("-", " ").split()).casefold()


def _basis(cell: Cell | None, problems: list[Problem]) -> str | None:
    """The Basis cell: AS_FED when blank or missing; None when wrong (reported)."""
    if cell is None or cell.kind == "blank":
        return AS_FED
    text = read_name(cell, "basis", problems)
    if text is None:
        return None
    basis = _BASES.get(_basis_key(text))
    if basis is None:
        problems.append(Problem(cell.ref, (
            f'basis "{text}" is not {AS_FED} or {DRY_MATTER}; write {AS_FED} or {DRY_MATTER} '
            f"(blank means {AS_FED})"
        )))
    return basis


def _needs_dry_matter(cell: Cell, context: SpecContext, problems: list[Problem]) -> None:
    """A dry-matter spec on a nutrient needs the dry-matter column; report on the Basis cell if none."""
    if context.dry_matter is not None or context.nutrients is None:
        return
    if "dry matter" in context.settings.cells:
        return  # the Dry matter setting names no column: reported on the setting
    name = context.settings.dry_matter
    title = context.ingredients_title
    problems.append(Problem(cell.ref, (
        f'a dry-matter spec needs the dry-matter column, and {title} has no nutrient column "{name}"; '
        f'add a column "{name} (%)" with each ingredient\'s dry matter in % as fed, or name the '
        "column that holds it with the Dry matter setting in Settings"
    )))

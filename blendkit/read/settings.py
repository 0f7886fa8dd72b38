"""The Settings sheet (optional): columns ``Setting`` and ``Value``; names compared like headers.

``Batch size``  positive number, default 1000 (in the mass unit).
``Mass unit``   default kg; ``Cost per`` default tonne. Both must be one of
                `blendkit.model.MASS_UNITS_KG` (any case) and are stored in lower case.
``Currency``    a text label, default none.  ``Name``  the blend's title, default none.
``Mode``        ``blend`` (default) or ``diet`` (any case); see Modes in `blendkit.read`.
``Dry matter``  the nutrient column holding dry matter in % as fed, default "Dry
                matter". When given it must name a nutrient column; it is stored as
                the column's name in the Ingredients header.
``Max ingredients``  at most this many ingredients above 0 in each formula: a whole
                number, 1 or more (a Products row's Max ingredients overrides it).
``Scale step``  every batch weight (per ``Batch size``) a whole multiple of this mass
                in the mass unit, more than 0 (blend mode); an ingredient's own Scale
                step overrides it. ``Hand-add below``  the Batch sheet lists weights
                below this mass apart, as hand additions (more than 0; blend mode).
                See `blendkit.read.weigh_cells` and `blendkit.model.weighing`.
``Time limit``  seconds, more than 0, that the search for a formula under these rules
                may take (default `blendkit.lp.tolerances.WEIGH_TIME_LIMIT`, 60); when
                it runs out, the best formula found is reported with its proven gap.
A blank value keeps the default. Unknown and repeated settings are errors.
`Settings.cells` maps each setting read ("batch size", "mass unit", "cost per",
"currency", "name", "mode", "dry matter", "max ingredients", "scale step", "hand-add below")
to the cell of its value.
"""

from __future__ import annotations

import difflib

from blendkit.errors import Problem
from blendkit.model.blend import MASS_UNITS_KG, Settings
from blendkit.read.cells import Cell
from blendkit.read.reading import Reading
from blendkit.read.tables import Table, Wanted, check_columns
from blendkit.read.values import format_number, name_key, read_name, read_number, split_unit
from blendkit.read.weigh_cells import read_count, read_mass

SETTINGS = "Settings"

BLEND_MODE = "blend"
DIET_MODE = "diet"

# The columns, by key (normalised header): header, what it is for, whether required.
_COLUMNS: Wanted = {
    "setting": ("Setting", "the name of each setting", True),
    "value": ("Value", "the value of each setting", True),
}
_KNOWN_SETTINGS = {
    "batch size": "Batch size",
    "mass unit": "Mass unit",
    "cost per": "Cost per",
    "currency": "Currency",
    "name": "Name",
    "mode": "Mode",
    "dry matter": "Dry matter",
    "max ingredients": "Max ingredients",
    "scale step": "Scale step",
    "hand-add below": "Hand-add below",
    "time limit": "Time limit",
}


def read_settings_sheet(reading: Reading) -> None:
    """Read the Settings sheet, if any, into `reading.settings` (defaults otherwise)."""
    table = reading.table(SETTINGS)
    if table is not None:
        reading.settings = read_settings(table, reading.problems[SETTINGS])


def read_settings(table: Table, problems: list[Problem]) -> Settings:
    """The settings given, with defaults for the rest; `cells` holds where each was read."""
    if check_columns(table, _COLUMNS, problems):
        return Settings()
    given: dict[str, object] = {}
    cells: dict[str, str] = {}
    seen: dict[str, str] = {}
    for row in table.rows:
        name_cell, value_cell = row["setting"], row["value"]
        key = _setting_key(name_cell, seen, problems)
        if key is None:
            continue
        if value_cell.kind == "blank" or value_cell.kind == "unsaved":
            continue  # blank keeps the default; unsaved is already reported
        value = _setting_value(key, value_cell, problems)
        if value is not None:
            given[key.replace(" ", "_").replace("-", "_")] = value
            cells[key] = value_cell.ref
    _check_masses(given, cells, table, problems)
    return Settings(**given, cells=cells)


def _check_masses(given: dict[str, object], cells: dict[str, str], table: Table, problems: list[Problem]) -> None:
    """Scale step and Hand-add below are masses weighed per batch: read them once the mode
    and the mass unit are known (reported in diet mode)."""
    diet = given.get("mode") == DIET_MODE
    unit = given.get("mass_unit", Settings().mass_unit)
    by_ref = {row["value"].ref: row["value"] for row in table.rows}
    for key in ("scale step", "hand-add below"):
        field = key.replace(" ", "_").replace("-", "_")
        if field not in given:
            continue
        value = read_mass(by_ref[cells[key]], key, unit, diet, problems)
        if value is None:
            del given[field], cells[key]
        else:
            given[field] = value


def _setting_key(cell: Cell, seen: dict[str, str], problems: list[Problem]) -> str | None:
    """The key of the setting a row names; None when blank, unknown or repeated (reported)."""
    known = ", ".join(_KNOWN_SETTINGS.values())
    text = read_name(cell, "setting", problems)
    if cell.kind == "blank":
        problems.append(Problem(cell.ref, (
            f"this row has a value but no setting name; type one of {known}, or clear the row"
        )))
        return None
    if text is None:
        return None
    key = name_key(split_unit(text)[0])
    if key not in _KNOWN_SETTINGS:
        message = f'unknown setting "{text}"; the settings are: {known}'
        close = difflib.get_close_matches(key, list(_KNOWN_SETTINGS), n=1, cutoff=0.6)
        if close:
            message += f'; did you mean "{_KNOWN_SETTINGS[close[0]]}"?'
        problems.append(Problem(cell.ref, message))
        return None
    if key in seen:
        problems.append(Problem(cell.ref, (
            f'"{_KNOWN_SETTINGS[key]}" is already set in {seen[key]}; keep one of the two rows'
        )))
        return None
    seen[key] = cell.ref
    return key


def _setting_value(key: str, cell: Cell, problems: list[Problem]) -> object | None:
    """One setting's value, checked; None when wrong (reported)."""
    if key == "batch size":
        return _batch_size(cell, problems)
    if key == "max ingredients":
        return read_count(cell, "max ingredients", problems)
    if key == "time limit":
        return _time_limit(cell, problems)
    if key in ("scale step", "hand-add below"):
        return read_number(cell, key, problems)  # checked as a mass by _check_masses
    label = _KNOWN_SETTINGS[key].lower()
    text = read_name(cell, label, problems)
    if text is None:
        return None
    if key in ("mass unit", "cost per"):
        return _mass_unit(cell, label, text, problems)
    if key == "mode":
        return _mode(cell, text, problems)
    return text  # currency, name, dry matter (checked against the columns later)


def _batch_size(cell: Cell, problems: list[Problem]) -> float | None:
    """The batch size, more than 0; None when wrong (reported)."""
    return _positive(cell, "batch size", "it is the mass of one batch in the mass unit", problems)


def _time_limit(cell: Cell, problems: list[Problem]) -> float | None:
    """The time limit in seconds, more than 0; None when wrong (reported)."""
    return _positive(cell, "time limit", (
        "it is how many seconds the search for a formula under Min if used, Pack size, "
        "Scale step and Max ingredients may take"), problems)


def _positive(cell: Cell, label: str, meaning: str, problems: list[Problem]) -> float | None:
    """A number above 0, the one rule both settings share; None when wrong (reported,
    with what the setting means)."""
    value = read_number(cell, label, problems)
    if value is not None and value <= 0:
        problems.append(Problem(cell.ref, f"{label} {format_number(value)} must be more than 0; {meaning}"))
        return None
    return value


def _mass_unit(cell: Cell, label: str, text: str, problems: list[Problem]) -> str | None:
    """A unit of mass blendkit knows, in lower case; None when unknown (reported)."""
    unit = name_key(text)
    if unit not in MASS_UNITS_KG:
        problems.append(Problem(cell.ref, (
            f'{label} "{text}" is not a unit blendkit knows; use one of: ' + ", ".join(MASS_UNITS_KG)
        )))
        return None
    return unit


def _mode(cell: Cell, text: str, problems: list[Problem]) -> str | None:
    """The mode, blend or diet; None when neither (reported)."""
    mode = name_key(text)
    if mode not in (BLEND_MODE, DIET_MODE):
        problems.append(Problem(cell.ref, (
            f'mode "{text}" is not {BLEND_MODE} or {DIET_MODE}; write {BLEND_MODE} (inclusions in % '
            f"of the blend, the default) or {DIET_MODE} (amounts of each ingredient in its unit)"
        )))
        return None
    return mode

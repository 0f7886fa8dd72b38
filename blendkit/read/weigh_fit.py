"""Rules a mill can weigh that no batch can meet, found once every sheet is read.

Weights per batch add up to the `Batch size` setting, and a weight of at least one pack
(or one step) is at least that mass. So a pack size or an ingredient's own scale step
larger than the batch, or larger than the ingredient's Max share of it, means the
ingredient could never be used; a `Scale step` setting larger than the batch, or one that
does not divide it while no ingredient has a step or pack of its own, leaves no formula at
all; and a product's Max on Limits below the ingredient's Min if used means it could never
be used in that product. Each is reported at its cell, as a Min if used above the row's
own Max is (`blendkit.read.weigh_cells`), rather than left to an infeasible run.
"""

from __future__ import annotations

from blendkit.errors import Problem
from blendkit.model.batch import ON_STEP
from blendkit.model.blend import Settings
from blendkit.model.weighing import MOST_UNITS_PER_BATCH
from blendkit.read.values import format_number


def check_weigh_fit(reading) -> None:
    """Report every pack, step and Min if used that no batch can meet (see the module
    docstring); nothing in diet mode, whose amounts are not weighed per batch."""
    settings = reading.settings
    if settings.mode == "diet":
        return
    used = [item for item in reading.ingredients if item.use]
    limited = {limit.ingredient for limit in reading.limits}
    for item in used:
        # A product's Limits row may allow more than the ingredient's own Max: then only the
        # batch size bounds its pack or step here.
        maximum = None if item.name in limited else item.maximum
        for what, mass in (("pack size", item.pack_size), ("scale step", item.scale_step)):
            problem = _fit(settings, what, mass, item.cells.get(what), maximum, item.cells.get("max"),
                           f"{item.name} could never be used")
            if problem is not None:
                reading.problems["Ingredients"].append(problem)
    names = {item.name: item for item in used}
    for limit in reading.limits:
        item = names.get(limit.ingredient)
        if item is None:
            continue
        problem = _fit(settings, "pack size", limit.pack_size, limit.cells.get("pack size"), limit.maximum,
                       limit.cells.get("max"), f"{item.name} could never be used in {limit.product}")
        reading.problems["Limits"].extend([problem] if problem else _below_min_if_used(limit, item))
    own_units = any(item.pack_size or item.scale_step for item in used) or any(
        limit.pack_size for limit in reading.limits if limit.ingredient in names)
    reading.problems["Settings"].extend(_setting_step(settings, own_units))


def _batch(settings: Settings) -> str:
    """The batch size with its unit and where it comes from, for a message."""
    where = settings.cells.get("batch size", "the default")
    return f"the batch size {format_number(settings.batch_size)} {settings.mass_unit} ({where})"


def _fit(settings: Settings, what: str, mass: float | None, cell: str | None, maximum: float | None,
         max_cell: str | None, never: str) -> Problem | None:
    """A pack size or own scale step larger than the batch, or than the Max share of it."""
    if mass is None or cell is None or maximum == 0:
        return None
    unit, size = settings.mass_unit, settings.batch_size
    head = f"{what} {format_number(mass)} {unit}"
    if size / mass > MOST_UNITS_PER_BATCH * (1 + ON_STEP):
        return _too_fine(settings, what, mass, cell)
    fits = f"so not one {'pack' if what == 'pack size' else 'step'} fits in a batch and {never}"
    if mass > size * (1 + ON_STEP):
        fix = "give this row a Max of 0" if cell.startswith("Limits") else "set Use to no"
        return Problem(cell, f"{head} is more than {_batch(settings)}, {fits}; check the {what} and the "
                             f"Batch size setting, or {fix}")
    share = mass / size * 100
    if maximum is not None and share > maximum * (1 + ON_STEP):
        return Problem(cell, (
            f"{head} is {format_number(share)} % of {_batch(settings)}, above the max {format_number(maximum)} "
            f"in {max_cell}, {fits}; use a smaller {'pack (weigh it from an opened one)' if what == 'pack size' else 'step'}, "
            "raise the max, or set Use to no"
        ))
    return None


def _below_min_if_used(limit, item) -> list[Problem]:
    """A product's own Max on Limits below the ingredient's Min if used (the Limits row
    giving none of its own)."""
    cell = limit.cells.get("max")
    if (limit.min_if_used is not None or item.min_if_used is None or limit.maximum is None
            or cell is None or cell == item.cells.get("max") or not 0 < limit.maximum < item.min_if_used):
        return []
    return [Problem(cell, (
        f"max {format_number(limit.maximum)} is below the min if used {format_number(item.min_if_used)} of "
        f"{item.name} in {item.cells['min if used']}, so it could never be used in {limit.product}; raise this "
        "max, lower the min if used, or give this row its own Min if used"
    ))]


def _setting_step(settings: Settings, own_units: bool) -> list[Problem]:
    """The Scale step setting larger than the batch, or not dividing it when every
    ingredient is weighed on it (no step or pack of its own)."""
    step, cell = settings.scale_step, settings.cells.get("scale step")
    if step is None or cell is None:
        return []
    head = f"scale step {format_number(step)} {settings.mass_unit}"
    if step > settings.batch_size * (1 + ON_STEP):
        return [Problem(cell, f"{head} is more than {_batch(settings)}, so no weight could be weighed on it; "
                              "check the scale step and the Batch size setting")]
    steps = settings.batch_size / step
    if steps > MOST_UNITS_PER_BATCH * (1 + ON_STEP):
        return [_too_fine(settings, "scale step", step, cell)]
    if own_units or abs(round(steps) * step - settings.batch_size) <= ON_STEP * settings.batch_size:
        return []
    return [Problem(cell, (
        f"{head} does not divide {_batch(settings)}: weights that are each a whole number of steps could never "
        "add up to the batch; choose a step that divides it, or give some ingredients their own Scale step or "
        "Pack size"
    ))]


def _too_fine(settings: Settings, what: str, mass: float, cell: str) -> Problem:
    """A pack or step so small that a batch holds more than MOST_UNITS_PER_BATCH of them."""
    unit, size = settings.mass_unit, settings.batch_size
    return Problem(cell, (
        f"{what} {format_number(mass)} {unit} is too fine: {_batch(settings)} holds {format_number(size / mass)} "
        f"of them, more than the {MOST_UNITS_PER_BATCH:g} the exact search can count; give at least "
        f"{format_number(size / MOST_UNITS_PER_BATCH)} {unit}, or leave the cell blank to weigh freely"
    ))

"""Specs that have no value in any blend: they are refused, with their cells.

A ratio spec ``A / B`` divides by the level of B, and a dry-matter spec divides by the
dry matter of the blend. When that divisor is 0 (or blank) in every ingredient that may be
used (Use is not no), it is 0 in every blend the workbook allows, so the spec bounds
nothing and its level cannot be shown: a workbook mistake, not a result. An ingredient
with Use = no is held at 0, so its content cannot help; ingredients that may be used but
are limited elsewhere (Max 0, a Limits row) still count, since the spec means something
once that limit moves.

Checked once Ingredients and Specs are read, and only when Ingredients has no problems
(an ingredient left out for its own mistake could be the one with the divisor).
"""

from __future__ import annotations

from blendkit.errors import Problem
from blendkit.model.blend import DRY_MATTER, Ingredient, Spec
from blendkit.read.ingredients import INGREDIENTS
from blendkit.read.reading import Reading
from blendkit.read.specs import SPECS

_USABLE = "every ingredient that may be used (Use is not no)"


def check_undefined_specs(reading: Reading) -> None:
    """Report each ratio spec whose divisor, and each dry-matter spec whose dry matter, is 0
    in every ingredient that may be used."""
    usable = [item for item in reading.ingredients if item.use]
    if reading.problems[INGREDIENTS] or not usable:
        return  # with no usable ingredient the blend cannot be made: the solve explains why
    title = reading.titles[INGREDIENTS]
    dry_matter = reading.dry_matter.name if reading.dry_matter is not None else None
    for spec in reading.specs:
        if spec.ratio is not None:
            problem = _ratio_problem(spec, usable, title)
        elif spec.basis == DRY_MATTER and dry_matter is not None:
            problem = _dry_matter_problem(spec, dry_matter, usable, title)
        else:
            problem = None
        if problem is not None:
            reading.problems[SPECS].append(problem)


def _all_zero(nutrient: str, usable: list[Ingredient]) -> bool:
    """True when `nutrient` is 0 (or blank) in every usable ingredient."""
    return all(item.contents.get(nutrient, 0.0) == 0 for item in usable)


def _ratio_problem(spec: Spec, usable: list[Ingredient], title: str) -> Problem | None:
    """The problem of a ratio spec whose divisor is 0 in every usable ingredient, or None."""
    divisor = spec.ratio[1]
    if not _all_zero(divisor, usable):
        return None
    return Problem(spec.cells["nutrient"], (
        f'the ratio "{spec.nutrient}" divides by "{divisor}", which is 0 or blank in {_USABLE}, '
        f'so the ratio has no value in any blend; fill in "{divisor}" in {title}, or delete this row'
    ))


def _dry_matter_problem(spec: Spec, dry_matter: str, usable: list[Ingredient], title: str) -> Problem | None:
    """The problem of a dry-matter spec when dry matter is 0 in every usable ingredient, or None."""
    if not _all_zero(dry_matter, usable):
        return None
    return Problem(spec.cells["basis"], (
        f'a dry-matter spec divides by the blend\'s dry matter, and "{dry_matter}" is 0 or blank in '
        f"{_USABLE}, so there is no dry matter to divide by; fill in each ingredient's dry matter "
        f'(in % as fed) in the "{dry_matter}" column of {title}, or make the basis as fed'
    ))

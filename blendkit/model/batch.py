"""What a mill weighs for one batch of a formula: each used ingredient's weight, on its
scale step or in whole packs where the formula is already there, and which weights are
hand additions.

A weight is inclusion x `Batch size` / 100, in the mass unit. Where the ingredient has a
pack size (`blendkit.model.weighing.weigh_rule`), the weight is shown as whole packs when
it is a whole number of packs to `ON_STEP` of the batch size; where it has a scale step,
the weight is put on the step when it is within `ON_STEP` of it. Nothing is ever rounded
further: a weight off its step or its packs stays exact, with a note saying the formula
was not found there, so that the weights always meet the formula's specs. The Batch
sheet and the JSON document both read this one record.
"""

from __future__ import annotations

from dataclasses import dataclass

from blendkit.model.formula import Formula, IngredientLine, NutrientLine, ProductFormula
from blendkit.model.weighing import weigh_rule

# A weight within this distance of a whole multiple of its step or pack size (relative to
# the batch size) is on it: the formula was found there and the difference is rounding.
ON_STEP = 1e-9

# What the note column says of a weight with no rule, or one the formula is not on.
NO_STEP = "no scale step"


@dataclass(frozen=True)
class BatchLine:
    """One used ingredient in one batch.

    `weight` is in the mass unit: whole `packs` x `pack_size`, or a whole multiple of
    `step`, when the formula is on them; else the exact inclusion x batch size / 100.
    `packs` and `step` are None when the weight is not on them (or none applies);
    `note` says why. `hand_add` is True below the `Hand-add below` setting.
    """

    ingredient: str
    inclusion: float
    weight: float
    packs: int | None
    pack_size: float | None
    step: float | None
    hand_add: bool
    note: str = ""


@dataclass(frozen=True)
class Batch:
    """One product's batch: its name (None: the workbook's single formula), the batch
    size and mass unit, the used ingredients' lines in formula order, the product's
    nutrient lines (for the spec check) and the hand-add threshold (None: no split)."""

    product: str | None
    size: float
    unit: str
    lines: tuple[BatchLine, ...]
    nutrients: tuple[NutrientLine, ...]
    hand_add_below: float | None = None

    @property
    def weighed(self) -> tuple[BatchLine, ...]:
        """The lines weighed on the mill's scale (all of them without a hand-add setting)."""
        return tuple(line for line in self.lines if not line.hand_add)

    @property
    def hand_added(self) -> tuple[BatchLine, ...]:
        """The lines added by hand: weights below the `Hand-add below` setting."""
        return tuple(line for line in self.lines if line.hand_add)

    @property
    def total(self) -> float:
        """The sum of the weights."""
        return float(sum(line.weight for line in self.lines))


def batches(formula: Formula) -> tuple[Batch, ...]:
    """One Batch per product with a formula, in Products order; none for a diet (its
    amounts are per food unit, not a batch to weigh) or a run without a formula."""
    if formula.blend.diet:
        return ()
    products = formula.products
    if not formula.several and not products and formula.solved:
        products = (ProductFormula(name=None, amount=formula.blend.settings.batch_size,
                                   cost=formula.cost, ingredients=formula.ingredients,
                                   nutrients=formula.nutrients, limits=formula.limits),)
    if not formula.several and not formula.solved:
        return ()
    return tuple(batch_of(formula, product) for product in products if product.solved)


def batch_of(formula: Formula, product: ProductFormula) -> Batch:
    """The batch of one solved product (`product.name` None: the single formula)."""
    settings = formula.blend.settings
    size = settings.batch_size
    lines = tuple(_line(formula, product.name, line, size)
                  for line in product.ingredients if line.inclusion > 0)
    return Batch(product=product.name, size=size, unit=settings.mass_unit, lines=lines,
                 nutrients=product.nutrients, hand_add_below=settings.hand_add_below)


def _line(formula: Formula, product: str | None, line: IngredientLine, size: float) -> BatchLine:
    """One ingredient's weight, on its packs or step when the formula is there."""
    blend = formula.blend
    rule = weigh_rule(blend, blend.ingredient(line.name), product)
    exact = line.inclusion * size / 100
    unit = blend.settings.mass_unit
    packs, step, note, weight = None, None, NO_STEP, exact
    if rule.pack_size:
        whole = _whole(exact, rule.pack_size, size)
        if whole is None:
            note = f"not whole packs of {rule.pack_size:g} {unit}: the formula was not found on them"
        else:
            packs, weight, note = whole, whole * rule.pack_size, ""
    elif rule.scale_step:
        whole = _whole(exact, rule.scale_step, size)
        if whole is None:
            note = f"not on the {rule.scale_step:g} {unit} step: the formula was not found on it"
        else:
            step, weight, note = rule.scale_step, whole * rule.scale_step, ""
    below = blend.settings.hand_add_below
    return BatchLine(ingredient=line.name, inclusion=line.inclusion, weight=weight, packs=packs,
                     pack_size=rule.pack_size, step=step,
                     hand_add=below is not None and weight < below, note=note)


def _whole(weight: float, step: float, size: float) -> int | None:
    """How many `step`s make `weight`, when it is a whole number of them to `ON_STEP` of
    the batch `size` (and at least one); None otherwise."""
    count = round(weight / step)
    if count < 1 or abs(count * step - weight) > ON_STEP * size:
        return None
    return int(count)

"""Rules that make a formula one a mill can weigh, per ingredient and product.

The Ingredients sheet, the Limits sheet (per product), the Products sheet and Settings
carry them (`Min if used`, `Pack size`, `Scale step`, `Max ingredients`); this module
says which rule applies to an ingredient in a product, so that the integer program and
the Batch sheet read them from one place.
"""

from __future__ import annotations

from dataclasses import dataclass

from blendkit.model.blend import Blend, Ingredient

# Most packs or scale steps one batch may hold: the integer program counts them, and a
# count above this (a 0.1 g step in a 2 t batch is 2e7) is beyond what the search can hold
# exactly within its integrality tolerance; the reader refuses finer steps and packs at
# their cells. A 1 g step in a 10 t batch is 1e7, still allowed.
MOST_UNITS_PER_BATCH = 1e7


@dataclass(frozen=True)
class WeighRule:
    """What one ingredient must satisfy in one product (None = no such rule).

    `min_if_used` is in % of the blend (diet: amount); `pack_size` and `scale_step` are
    masses in the mass unit per batch of the `Batch size` setting. An ingredient with a
    pack size is weighed in whole packs, so its scale step does not apply.
    """

    min_if_used: float | None = None
    pack_size: float | None = None
    scale_step: float | None = None

    @property
    def any(self) -> bool:
        """True when some rule applies."""
        return any(v is not None for v in (self.min_if_used, self.pack_size, self.scale_step))


def weigh_rule(blend: Blend, ingredient: Ingredient, product: str | None = None) -> WeighRule:
    """The rule for `ingredient` in `product` (None: the blend's single formula).

    A Limits row for the product replaces the ingredient's own `min_if_used` and
    `pack_size` where it gives them; the scale step is the ingredient's own or, failing
    that, the `Scale step` setting.
    """
    min_if_used, pack = ingredient.min_if_used, ingredient.pack_size
    limit = blend.product_limit(product, ingredient.name)
    if limit is not None:
        min_if_used = limit.min_if_used if limit.min_if_used is not None else min_if_used
        pack = limit.pack_size if limit.pack_size is not None else pack
    step = ingredient.scale_step if ingredient.scale_step is not None else blend.settings.scale_step
    return WeighRule(min_if_used=min_if_used, pack_size=pack, scale_step=None if pack else step)


def max_ingredients(blend: Blend, product: str | None = None) -> int | None:
    """At most this many ingredients above 0 in `product`'s formula (None = no limit)."""
    for row in blend.products:
        if row.name == product and row.max_ingredients is not None:
            return row.max_ingredients
    return blend.settings.max_ingredients


def has_weigh_rules(blend: Blend) -> bool:
    """True when any rule of this module applies anywhere in the workbook."""
    if blend.settings.max_ingredients is not None or blend.settings.scale_step is not None:
        return True
    if any(p.max_ingredients is not None for p in blend.products):
        return True
    if any(i.min_if_used is not None or i.pack_size is not None or i.scale_step is not None
           for i in blend.ingredients):
        return True
    return any(l.min_if_used is not None or l.pack_size is not None for l in blend.limits)

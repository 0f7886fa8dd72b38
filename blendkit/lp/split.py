"""Split a run of several products into the parts that must be solved together.

Products are linked only by stock rows: a stock is shared by every product made in a
stated `Amount` that may use the ingredient (it is not held at 0 by `Use = no` or a
Limits row with Max 0). The parts are the connected components of that link: products
in one part are solved as one joint LP (the cheapest plan for all of them); every other
product is its own LP and gives exactly the formula that workbook would give with that
product alone on its Products sheet. A product without an `Amount` is always a part of
its own: it is formulated per batch (the `Batch size` setting) and no stock applies to it.
"""

from __future__ import annotations

import dataclasses

from blendkit.model.blend import Blend, Product


def parts(blend: Blend) -> list[tuple[Product, ...]]:
    """The products of `blend` grouped into parts to solve separately, in sheet order
    (by each part's first product)."""
    parent = list(range(len(blend.products)))

    def root(k: int) -> int:
        """The representative of k's part (path-halving union-find)."""
        while parent[k] != k:
            parent[k] = parent[parent[k]]
            k = parent[k]
        return k

    for item in blend.ingredients:
        if item.stock is None:
            continue
        sharing = [k for k, product in enumerate(blend.products) if _shares(blend, product, item.name)]
        for k in sharing[1:]:
            parent[root(k)] = root(sharing[0])
    grouped: dict[int, list[Product]] = {}
    for k, product in enumerate(blend.products):
        grouped.setdefault(root(k), []).append(product)
    return [tuple(group) for group in grouped.values()]


def _shares(blend: Blend, product: Product, ingredient: str) -> bool:
    """True when `product` draws on the stock of `ingredient`: it has an amount and may
    use the ingredient."""
    if product.amount is None or not blend.ingredient(ingredient).use:
        return False
    limit = blend.product_limit(product.name, ingredient)
    if limit is not None:
        return limit.maximum is None or limit.maximum > 0
    maximum = blend.ingredient(ingredient).maximum
    return maximum is None or maximum > 0


def part_blend(blend: Blend, products: tuple[Product, ...]) -> Blend:
    """The workbook as it would be with only `products` on its Products sheet: specs,
    groups and limits of other products dropped; a product without an amount made in
    one batch, with no stock applied."""
    names = {product.name for product in products}
    amounts = all(product.amount is not None for product in products)
    made = tuple(
        product if product.amount is not None
        else dataclasses.replace(product, amount=blend.settings.batch_size)
        for product in products
    )
    ingredients = blend.ingredients
    if not amounts:
        ingredients = tuple(dataclasses.replace(item, stock=None) for item in ingredients)
    return dataclasses.replace(
        blend,
        ingredients=ingredients,
        products=made,
        specs=tuple(spec for spec in blend.specs if spec.product is None or spec.product in names),
        groups=tuple(group for group in blend.groups if group.product is None or group.product in names),
        limits=tuple(limit for limit in blend.limits if limit.product in names),
    )


def unapplied_stocks(blend: Blend) -> tuple[str, ...]:
    """Notes for stocks that no product draws on because no product has an amount."""
    if not blend.products or any(product.amount is not None for product in blend.products):
        return ()
    return tuple(
        f"{item.name}: the stock in {item.cells.get('stock', 'Ingredients')} is not applied, "
        "because no product on the Products sheet has an Amount to draw on it"
        for item in blend.ingredients
        if item.stock is not None
    )

"""Render a `Formula` as JSON for other programs.

The shape is fixed (keys in this order). One blend (or one diet)::

    {"status": str, "message": str, "cost": float | null,
     "ingredients": {name: inclusion % (diet: amount)},
     "prices": {name: {"more_below": price | null, "less_above": price | null}},
     "nutrients": {name: level},
     "limits": [{"kind", "name", "product", "side", "bound", "level", "binding",
                 "shadow_price", "shadow_price_up", "shadow_price_down", "cell",
                 "holds_from", "holds_to", "step", "per_step", "note", "margin",
                 "target"}],
     "batch": {"size", "unit", "weights": [{"ingredient", "weight", "packs"?, "step"?,
               "hand_add", "note"?}]} | null,
     "stocks": {ingredient: {"used", "available", "shadow_price"}},
     "violations": [{"kind", "name", "product", "side", "bound", "level", "cell",
                     "violation", "penalty"}],
     "notes": [str]}

A limit's `holds_from` / `holds_to` are the bound values between which its shadow price
holds unchanged (null: no end, or not known, as for ratio and dry-matter bounds).
`shadow_price` is d(cost)/d(bound); `shadow_price_up` / `shadow_price_down` are the rates
just above and just below the bound (they differ at a degenerate optimum; null where not
known). `step` is the change of the bound that fits its unit (the Specs sheet's Step, else
`blendkit.model.steps`) and `per_step` the shadow price times it. `note` says what a buyer
should know of a binding limit's price ("binding, no cost (degenerate)", rates that differ
up and down), else null. `bound` is the spec as written; with a Margin on Specs the
formula is made to `target` (bound + margin for a min, bound - margin for a max; `margin`
is 0 and `target` the bound without one), and `holds_from` / `holds_to` are values of the
bound as written.
`prices` gives, per ingredient, the price range over which the formula stays the cheapest
(cost ranging): below `more_below` it would be used more (or come in), above `less_above`
it would be used less (or drop out); null where no price change that way alters it.
`batch` is what the Batch sheet weighs (`blendkit.model.batch`): the `Batch size` setting
and mass unit, and one entry per used ingredient in formula order: its `weight` per batch
(mass unit), how many `packs` when the weight is whole packs of the ingredient's pack size, the scale `step` it
is a whole multiple of when it is on one, `hand_add` when it is below the `Hand-add
below` setting, and a `note` when the ingredient has a pack size or a step the formula
was not found on (its weight is then exact). It is null for a diet and without a formula.
`violations` lists the soft limits (specs with a Penalty) that the formula breaks, with
the shortfall or excess and the penalty per unit; it is empty when every limit is met.

With a Products sheet::

    {"status": str, "message": str, "total_cost": float | null,
     "prices": {name: {"more_below", "less_above", "note", "scope"}},
     "products": {name: {"cost", "ingredients", "prices", "nutrients", "limits", "batch"}},
     "stocks": {ingredient: {"used", "available", "shadow_price"}},
     "violations": [...], "notes": [str]}

The top-level `prices` are the run's one price per ingredient: the range over which the
whole plan stays the cheapest with the price moving in every product at once (`scope`
"one price for every product"). A product's own `prices` carry `scope` "this product
alone" when it is linked to other products by a stock (the range holds for a price change
in it alone) and "this product" when it is a formula of its own.
Under the rules a mill can weigh (Min if used, Pack size, Scale step, Max ingredients;
`blendkit.lp.practical`) one more key follows "cross_check" (and ends each product's
entry)::

    "practical": {"lp_cost": float | null, "cost": float | null, "gap": float | null,
                  "nodes": int, "status": str, "binding": [str], "blocking": [str],
                  "lp_penalty": float, "penalty": float | null}

`lp_cost` is the cost without those rules, `cost` the cost under them, `gap` the
search's proven relative gap (0 when proven cheapest), `nodes` its node count, `status`
"optimal", "time_limit", "infeasible" or another engine status; `lp_penalty` and `penalty`
the penalties of the soft specs each breaks (0 without soft specs; both searches minimise
cost plus penalties, so the change is (cost + penalty) - (lp_cost + lp_penalty)); `binding` says which
rules bind, `blocking` (when the rules leave no formula) the rule families whose removal
alone restores one; `cross_check` is then the integer program re-solved by HiGHS's MIP
solver. With products, the run also has a top-level `"practical": {"lp_cost", "cost"}`
after "cross_check": the run's total cost without the rules and under them (currency,
with the penalties of broken soft specs of the products under the rules; a
product without rules counts its own cost in both; `cost` null unless every product has
a formula). A workbook without those rules has no such key.

With a Combined sheet, one more key follows those (after "practical" when there is one)::

    "combined": [{"name": str, "unit": str | null, "terms": {nutrient: coefficient}}]

one entry per combined nutrient, each after those it refers to: its name, its unit (null
when blank) and its Sum as coefficients by nutrient (a nutrient named twice has its
numbers added; a part may be another combined nutrient, not expanded). Its level is in
`nutrients` like any other.

When the status is "infeasible" two more keys follow "notes"::

    "conflicts": [{"kind", "name", "product", "side", "bound", "cell", "relax_to",
                   "conflict", "fixes_alone", "worked_out"}],
    "conflicts_complete": bool, "conflicts_cut_short": bool,
    "relaxation": {"changes": [{"kind", "name", "product", "side", "bound", "cell",
                                "relax_to"}], "cost": float | null} | null

Each conflicts entry is one member of an irreducible conflicting set (`conflict`
numbers the sets); `relax_to` is the value that bound alone would have to move to (null
where no move of it alone is enough); `fixes_alone` is true when dropping it alone makes
the whole workbook feasible; `worked_out` is false when the search's time limit came
before those two were worked out (both then say nothing). `conflicts_complete` is false
when more conflicts may remain; `conflicts_cut_short` is true when the time limit stopped
the search (a set may then hold limits that take no part, `worked_out` tells which moves
were not worked out). `kind` there may also be "use" (a Use = no) or
"total" (a sum-to-100 row). `relaxation` is the least-cost way out: the bounds to move
and the blend's cost (total cost with products) once they are moved.

When the run was compared with an earlier result (`blendkit.model.changes`), two more
keys come last::

    "compared_with": {"output": str, "input": str, "run_at": str},
    "changes": {formula: {"cost_before", "cost_after", "price_effect", "formula_effect",
                          "came_in": [name], "went_out": [name],
                          "inclusions": {name: [before, after]},
                          "nutrients": {name: [before, after]},
                          "started_binding": ["kind name side"],
                          "stopped_binding": ["kind name side"]}}

`compared_with` names the earlier output workbook, the input it was a result of and when
that run was (UTC). A formula is keyed by its product's name, or for one blend by the
workbook's Name (else "blend"). `price_effect` is what the earlier formula costs more at
the new prices, `formula_effect` the rest of the cost change; they add up to
`cost_after - cost_before`. `inclusions` and `nutrients` hold only the lines that changed
(null on a side without that line).

A nutrient's dry-matter level is keyed "<nutrient> (dry matter)"; a ratio by its text
("Calcium / Phosphorus"). `kind` is "nutrient", "ratio", "group", "stock" or
"ingredient"; `product` is null for one blend and for stocks (shared by all products).
`cost` is null unless the status is "optimal". Numbers are plain floats; a value that
is not finite becomes null, so the output is always strict JSON (NaN is never emitted).
"""

from __future__ import annotations

import json
import math
from typing import Any

from blendkit.model.batch import NO_STEP, Batch, BatchLine, batches
from blendkit.model.changes import FormulaChanges
from blendkit.model.formula import (
    EVERY_PRODUCT,
    THIS_PRODUCT,
    THIS_PRODUCT_ALONE,
    ConflictLine,
    Formula,
    Limit,
    NutrientLine,
    ProductFormula,
)
from blendkit.model.blend import Blend
from blendkit.model.record import nutrient_key
from blendkit.model.steps import limit_step
from blendkit.write.step_words import limit_note


def formula_to_dict(formula: Formula) -> dict[str, Any]:
    """The formula as plain Python data: str, float, bool, None, dict and list only."""
    stocks = {
        str(line.ingredient): {
            "used": _number(line.used),
            "available": _number(line.available),
            "shadow_price": _number(line.shadow_price),
        }
        for line in formula.stocks
    }
    if formula.several:
        return _with_changes(formula, _conflicts(formula, {
            "status": str(formula.status),
            "message": str(formula.message),
            "total_cost": _number(formula.cost) if formula.solved else None,
            "prices": {
                str(line.name): {"more_below": _number(line.more_below), "less_above": _number(line.less_above),
                                 "note": line.note or None, "scope": EVERY_PRODUCT}
                for line in formula.shared_prices
            },
            "products": _products(formula),
            "stocks": stocks,
            "violations": _violations(formula),
            "notes": [str(note) for note in formula.notes],
            "cross_check": _cross_check(formula),
            **_run_practical(formula),
            **_combined(formula.blend),
        }))
    batch_by_product = {batch.product: batch for batch in batches(formula)}
    return _with_changes(formula, _conflicts(formula, {
        "status": str(formula.status),
        "message": str(formula.message),
        "cost": _number(formula.cost) if formula.solved else None,
        "ingredients": {str(line.name): _number(line.inclusion) for line in formula.ingredients},
        "prices": _prices(formula.ingredients),
        "nutrients": {_key(line): _number(line.level) for line in formula.nutrients},
        "limits": [_limit(limit, formula.blend, formula.limits) for limit in formula.limits],
        "batch": _batch(batch_by_product.get(None)),
        "stocks": stocks,
        "violations": _violations(formula),
        "notes": [str(note) for note in formula.notes],
        "cross_check": _cross_check(formula),
        **_practical(formula.products[0] if formula.products else None),
        **_combined(formula.blend),
    }))


def _practical(product: ProductFormula | None) -> dict[str, Any]:
    """{"practical": ...} for a formula under the rules a mill can weigh; {} without them."""
    record = None if product is None else product.practical
    if record is None:
        return {}
    return {"practical": {
        "lp_cost": _number(record.lp_cost), "cost": _number(record.cost), "gap": _number(record.gap),
        "nodes": int(record.nodes), "status": str(record.status),
        "binding": [str(line) for line in record.binding], "blocking": [str(name) for name in record.blocking],
        "lp_penalty": _number(record.lp_penalty), "penalty": _number(record.penalty if record.cost is not None else None),
    }}


def _run_practical(formula: Formula) -> dict[str, Any]:
    """{"practical": {"lp_cost", "cost"}}: a plant's total cost without and under the rules
    a mill can weigh; {} without them."""
    totals = formula.practical_totals
    if totals is None:
        return {}
    return {"practical": {"lp_cost": _number(totals[0]), "cost": _number(totals[1])}}


def _combined(blend: Blend) -> dict[str, Any]:
    """{"combined": [...]}: each combined nutrient's definition; {} without a Combined sheet."""
    if not blend.combined:
        return {}
    entries = []
    for item in blend.combined:
        terms: dict[str, float] = {}
        for number, part in item.terms:  # a nutrient named twice counts once, its numbers added
            terms[str(part)] = terms.get(str(part), 0.0) + float(number)
        entries.append({"name": str(item.name), "unit": str(item.unit) if item.unit else None,
                        "terms": {part: _number(number) for part, number in terms.items()}})
    return {"combined": entries}


def _cross_check(formula: Formula) -> dict[str, Any] | None:
    """The same LP re-solved with HiGHS: solver, status, cost and our cost less its (null
    when the cross-check was turned off)."""
    check = formula.cross_check
    if check is None:
        return None
    return {"solver": check.solver, "status": check.status, "cost": _number(check.cost),
            "difference": _number(check.difference), "agrees": bool(check.agrees)}


def _with_changes(formula: Formula, data: dict[str, Any]) -> dict[str, Any]:
    """`data` with the compared_with and changes keys added, when there was a comparison."""
    changes = formula.changes
    if changes is None:
        return data
    data["compared_with"] = {
        "output": str(changes.earlier_output),
        "input": str(changes.earlier_input),
        "run_at": str(changes.earlier_run_utc),
    }
    data["changes"] = {str(item.key): _formula_changes(item) for item in changes.formulas}
    return data


def _formula_changes(item: FormulaChanges) -> dict[str, Any]:
    """One formula's changes, keys in the documented order."""
    return {
        "cost_before": _number(item.cost_before),
        "cost_after": _number(item.cost_after),
        "price_effect": _number(item.price_effect),
        "formula_effect": _number(item.formula_effect),
        "came_in": [str(name) for name in item.came_in],
        "went_out": [str(name) for name in item.went_out],
        "inclusions": {str(c.name): [_number(c.before), _number(c.after)] for c in item.inclusions},
        "nutrients": {str(c.name): [_number(c.before), _number(c.after)] for c in item.nutrients},
        "started_binding": [str(label) for label in item.started_binding],
        "stopped_binding": [str(label) for label in item.stopped_binding],
    }


def _products(formula: Formula) -> dict[str, Any]:
    """One entry per product: its status and formula; with products solved as separate
    LPs, an infeasible product also carries its LP's least-cost way out."""
    relaxations = {
        product.name: _relaxation(part)
        for part in formula.parts
        if part.status == "infeasible"
        for product in part.blend.products
    }
    batch_by_product = {batch.product: batch for batch in batches(formula)}
    products = {}
    for product in formula.products:
        entry = {
            "status": str(product.status),
            "message": str(product.message),
            "cost": _number(product.cost) if product.solved else None,
            "ingredients": {str(line.name): _number(line.inclusion) for line in product.ingredients},
            "prices": _prices(product.ingredients, THIS_PRODUCT_ALONE if formula.linked(product.name) else THIS_PRODUCT),
            "nutrients": {_key(line): _number(line.level) for line in product.nutrients},
            "limits": [_limit(limit, formula.blend, product.limits) for limit in product.limits],
            "batch": _batch(batch_by_product.get(product.name)),
            **_practical(product),
        }
        if product.name in relaxations:
            entry["relaxation"] = relaxations[product.name]
        products[str(product.name)] = entry
    return products


def _batch(batch: Batch | None) -> dict[str, Any] | None:
    """What to weigh for one batch (null without one: no formula, or a diet)."""
    if batch is None:
        return None
    return {"size": _number(batch.size), "unit": str(batch.unit),
            "weights": [_weight(line) for line in batch.lines]}


def _weight(line: BatchLine) -> dict[str, Any]:
    """One weight; "packs" and "step" only when the weight is on them, "note" only when
    the ingredient has a pack size or a step the formula is not on."""
    entry: dict[str, Any] = {"ingredient": str(line.ingredient), "weight": _number(line.weight)}
    if line.packs is not None:
        entry["packs"] = int(line.packs)
    if line.step is not None:
        entry["step"] = _number(line.step)
    entry["hand_add"] = bool(line.hand_add)
    if line.note and line.note != NO_STEP:
        entry["note"] = str(line.note)
    return entry


def _conflicts(formula: Formula, data: dict[str, Any]) -> dict[str, Any]:
    """`data` with the conflicts and relaxation keys added, for an infeasible formula."""
    if formula.status != "infeasible":
        return data
    data["conflicts"] = [dict(_member(line), conflict=line.conflict, fixes_alone=bool(line.fixes_alone),
                              worked_out=bool(line.worked_out))
                         for line in formula.conflicts]
    data["conflicts_complete"] = bool(formula.conflicts_complete)
    data["conflicts_cut_short"] = bool(formula.conflicts_cut_short)
    data["relaxation"] = _relaxation(formula)
    return data


def _relaxation(formula: Formula) -> dict[str, Any] | None:
    """The least-cost way out of one LP: the bounds to move and the cost once moved."""
    relaxation = formula.relaxation
    if relaxation is None:
        return None
    cost = relaxation.formula.cost if relaxation.formula is not None else None
    return {"changes": [_member(line) for line in relaxation.changes], "cost": _number(cost)}


def _prices(lines, scope: str | None = None) -> dict[str, dict[str, float | None]]:
    """Per ingredient, the price range over which the formula stays the cheapest; with
    products, the `scope` of that range."""
    prices = {}
    for line in lines:
        entry = {"more_below": _number(line.more_below), "less_above": _number(line.less_above),
                 "note": line.price_note or None}
        if scope is not None:
            entry["scope"] = scope
        prices[str(line.name)] = entry
    return prices


def _violations(formula: Formula) -> list[dict[str, Any]]:
    """The soft limits the formula breaks."""
    return [
        {
            **_which(limit),
            "level": _number(limit.level),
            "cell": str(limit.cell),
            "violation": _number(limit.violation),
            "penalty": _number(limit.penalty),
        }
        for limit in formula.limits
        if limit.broken
    ]


def _member(line: ConflictLine) -> dict[str, Any]:
    """One conflict member or change, keys as a limit's plus relax_to."""
    return {
        **_which(line),
        "cell": None if line.cell is None else str(line.cell),
        "relax_to": _number(line.relax_to),
    }


def _which(item: Limit | ConflictLine) -> dict[str, Any]:
    """The keys that say which bound an entry is about: kind, name, product, side, bound."""
    return {
        "kind": str(item.kind),
        "name": str(item.name),
        "product": None if item.product is None else str(item.product),
        "side": str(item.side),
        "bound": _number(item.bound),
    }


def _key(line: NutrientLine) -> str:
    """A nutrient line's key: its name, with " (dry matter)" for a dry-matter level."""
    return nutrient_key(line)


def formula_to_json(formula: Formula) -> str:
    """The formula as indented, strict JSON text (no trailing newline)."""
    return json.dumps(formula_to_dict(formula), indent=2, ensure_ascii=False, allow_nan=False)


def _limit(limit: Limit, blend: Blend, limits: tuple[Limit, ...]) -> dict[str, Any]:
    """One limit, keys in the documented order; `limits` are its formula's (for its note)."""
    step = limit_step(blend, limit)
    return {
        **_which(limit),
        "level": _number(limit.level),
        "binding": bool(limit.binding),
        "shadow_price": _number(limit.shadow_price),
        "shadow_price_up": _number(limit.shadow_price_up),
        "shadow_price_down": _number(limit.shadow_price_down),
        "cell": str(limit.cell),
        "holds_from": _number(limit.holds_from),
        "holds_to": _number(limit.holds_to),
        "step": _number(step),
        "per_step": _number(limit.shadow_price * step),
        "note": limit_note(limit, limits) or None,
        "margin": _number(limit.margin),
        "target": _number(limit.target),
    }


def _number(value: float | None) -> float | None:
    """A plain float (numpy scalars converted, -0.0 made 0.0); None if missing or not finite."""
    if value is None:
        return None
    number = float(value)
    return number + 0.0 if math.isfinite(number) else None

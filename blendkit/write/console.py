"""Render a short plain-text summary of a `Formula` for the terminal.

Fixed-width columns, no colours and no dependencies, so the text reads the same in a
terminal, a log file or an e-mail. The caution is always the last line.

Broken soft specs come right after the cost, before the tables. An infeasible blend shows
its conflicting sets of limits (each member with the value it alone would have to move
to) and the least-cost way out, kept within 80 columns where the names allow.
"""

from __future__ import annotations

import math

from blendkit import CAUTION
from blendkit.model.blend import DRY_MATTER, Blend
from blendkit.model.formula import (
    ConflictLine,
    Formula,
    IngredientLine,
    Limit,
    NutrientLine,
    ProductFormula,
    SOFT_SPECS_NOT_MET,
    THIS_PRODUCT_ALONE,
    WAY_OUT,
    CUT_SHORT,
    WEIGHING_RULES,
    basis_label,
)
from blendkit.model.units import (
    cost_unit,
    food_unit,
    ingredient_word,
    penalty_unit,
    run_cost_unit,
    stock_unit,
)
from blendkit.model.steps import binding_in_order, limit_step, limit_unit
from blendkit.write.price_words import shared_price_note
from blendkit.write.step_words import NO_COST, cost_part, signed
from blendkit.write.numbers import (
    AMOUNT_DECIMALS,
    INCLUSION_DECIMALS,
    decimals,
    limit_key,
    line_decimals,
    nutrient_decimals,
    whole_decimals,
)

# Gap between columns, in spaces.
_GAP = "  "
# Lines are kept within this width where the names in them allow it.
_WIDTH = 80
# Plain ASCII, like the rest of the summary: the text must survive any console encoding.
_ARROW = "->"


def render_summary(formula: Formula) -> str:
    """A few short blocks: title, status, cost, broken soft limits, ingredients used,
    nutrients, stocks, binding limits, notes, then the caution as the last line.

    A diet shows amounts in each food's unit and its cost for the whole diet; several
    products show the run's total cost, then each product's amount, cost and tables. For
    a blend that was not solved to optimality only the status, the message and any notes
    are shown (and the caution); an infeasible one adds its conflicting limits and the
    least-cost way out."""
    blend = formula.blend
    settings = blend.settings
    title = settings.name or (blend.source.stem if blend.source else "Blend")
    blocks: list[list[str]] = [[title, "=" * len(title)]]

    status = [f"Status: {formula.status}"]
    if formula.message:
        status.append(f"Message: {formula.message}")
    if formula.solved and formula.cost is not None:
        label = "Total cost" if formula.several else "Cost"
        status.append(f"{label}: {formula.cost:,.2f} {run_cost_unit(blend)}".rstrip())
        if not blend.diet and not formula.several:
            status.append(f"Batch: {settings.batch_size:g} {settings.mass_unit}")
    blocks.append(status)
    blocks.append(_changes(formula))
    blocks.append(_weighing(formula))
    blocks.append(_soft_limits(formula))
    blocks.extend(_explanations(formula))
    if formula.solved or any(product.solved for product in formula.products):
        blocks.extend(_formula_blocks(formula))
    notes = formula.notes_besides_broken_limits
    if notes:
        blocks.append(["Notes:", *(f"- {note}" for note in notes)])
    blocks.append([CAUTION])
    return "\n\n".join("\n".join(block) for block in blocks if block)


def _explanations(formula: Formula) -> list[list[str]]:
    """The conflicts and the least-cost way out of an infeasible run; with products solved as
    separate LPs, one pair per infeasible LP under the names of its products."""
    if formula.status != "infeasible":
        return []
    if not formula.parts:
        return [_conflicts(formula), _way_out(formula)]
    blocks = []
    for part in formula.parts:
        if part.status == "infeasible":
            names = ", ".join(str(product.name) for product in part.blend.products)
            blocks.extend([[f"{names}:"], _conflicts(part), _way_out(part)])
    return blocks


def _formula_blocks(formula: Formula) -> list[list[str]]:
    """The ingredient and nutrient tables (per product when there are several), then the
    stocks and the binding limits; a product without a formula shows its status."""
    blend = formula.blend
    blocks = []
    if not formula.several:
        blocks.append(_ingredients(blend, formula.ingredients))
        blocks.append(_nutrients(blend, formula.nutrients))
    for product in formula.products if formula.several else ():
        if not product.solved:
            blocks.append([f"{product.name}: {product.status}, no formula (see above)"])
            continue
        blocks.append([_product_heading(blend, product)])
        blocks.append(_ingredients(blend, product.ingredients))
        blocks.append(_nutrients(blend, product.nutrients))
    blocks.append(_stocks(formula))
    blocks.append(_shared_prices(formula))
    blocks.append(_binding_limits(formula))
    return blocks


def _shared_prices(formula: Formula) -> list[str]:
    """With products: one line per ingredient, its one price for the whole run and the
    range over which the whole plan stays the cheapest (every product at once)."""
    if not formula.shared_prices:
        return []
    rows = [
        [line.name, f"{line.price:,.2f}", _fixed(line.more_below, 2), _fixed(line.less_above, 2),
         shared_price_note(line)]
        for line in formula.shared_prices
    ]
    headers = ["Ingredient", "Price", "Used more below", "Used less above", "Note"]
    title = (f"One price per ingredient, every product at once ({cost_unit(formula.blend.settings)}); "
             f"each product's own ranges hold for {THIS_PRODUCT_ALONE}:")
    return [title, *_table(headers, rows, left=1, last_left=True)]
def _weighing(formula: Formula) -> list[str]:
    """What the rules a mill can weigh cost, per product (empty without such rules)."""
    unit = run_cost_unit(formula.blend) if formula.blend.diet else cost_unit(formula.blend.settings)
    lines = _weighing_totals(formula)
    for product in formula.products:
        if product.practical is not None:
            lines += [f"{product.name}: {line}" if formula.several and not line.startswith(" ") else line
                      for line in product.practical.lines(unit)]
    return lines


def _weighing_totals(formula: Formula) -> list[str]:
    """A plant's run under the rules a mill can weigh: its total cost without and with them."""
    totals = formula.practical_totals
    if totals is None:
        return []
    before, after = totals
    unit = f" {run_cost_unit(formula.blend)}".rstrip()
    line = f"{WEIGHING_RULES}, whole run: total cost without them {before:,.2f}{unit}"
    if after is not None:
        share = f", {100 * (after - before) / abs(before):+.2f} %" if before else ""
        line += f", with them {after:,.2f}{unit} ({after - before:+,.2f}{share})"
    return [line]


def _changes(formula: Formula) -> list[str]:
    """One line per formula compared with the earlier result: cost before -> after, and
    the price effect and formula effect that make up the change."""
    changes = formula.changes
    if changes is None:
        return []
    unit = run_cost_unit(formula.blend) if formula.blend.diet else cost_unit(formula.blend.settings)
    lines = [f"Changes since {changes.earlier_output} (details on the Changes sheet):"]
    for item in changes.formulas:
        lines.append(
            f"  {item.key}: cost {item.cost_before:,.2f} {_ARROW} {item.cost_after:,.2f} {unit}: "
            f"price effect {_signed(item.price_effect, 2)}, formula effect {_signed(item.formula_effect, 2)}"
        )
    return lines


def _soft_limits(formula: Formula) -> list[str]:
    """The broken soft limits: bound, level, violation, penalty and cell of each."""
    broken = formula.broken_limits
    if not broken:
        return []
    rows = []
    for limit in broken:
        places = decimals([limit.bound, limit.level])
        row = [
            _limit_label(limit),
            _fixed(limit.bound, places),
            _fixed(limit.level, places),
            _fixed(limit.violation, places),
            _fixed(limit.penalty, decimals([limit.penalty], least=2)),
            limit.cell,
        ]
        if formula.several:
            row.insert(1, limit.product or "")
        rows.append(row)
    headers = ["Soft limit", "Bound", "Level", "Violation", "Penalty", "Cell"]
    if formula.several:
        headers.insert(1, "Product")
    if len(broken) == 1:
        why = "Meeting it would cost more than its penalty."
    else:
        why = "Meeting them would cost more than their penalties."
    return [
        f"{SOFT_SPECS_NOT_MET}: {len(broken)}. {why}",
        f"Penalty: {penalty_unit(formula.blend)} for each unit of violation (shortfall or excess).",
        *_table(headers, rows, left=2 if formula.several else 1, last_left=True),
    ]


def _conflicts(formula: Formula) -> list[str]:
    """Each conflicting set, its members in the workbook's words with their one-bound moves."""
    if not formula.conflicts:
        return []
    sets = formula.conflict_sets
    rows: list[list[str] | str] = []
    for number, members in sets.items():
        if len(sets) > 1:
            rows.append(f"Conflict {number} of {len(sets)}:")
        rows.extend([member.text, f"{_ARROW} {_alone(member)}" + (" *" if member.fixes_alone else "")]
                    for member in members)
    lines = ["These limits cannot all hold together:", *_aligned(rows)]
    what = "that conflict" if len(sets) > 1 else "the conflict"
    lines.append(f"Dropping or moving any one limit of a conflict resolves {what}.")
    if any(line.fixes_alone for line in formula.conflicts):
        lines.append("* dropping this limit alone makes the whole workbook feasible.")
    if not formula.conflicts_complete:
        lines.append("More conflicts may remain after these are fixed: solve again to see them.")
    if formula.conflicts_cut_short:
        lines.append(CUT_SHORT)
    return lines


def _alone(line: ConflictLine) -> str:
    """The one-bound move of a conflict member, in words."""
    if line.kind == "total":
        return "cannot move"
    if not line.worked_out:
        return "not worked out (time limit)"
    if line.relax_to is None:
        return "no single move"
    if line.kind == "use":
        return f"alone: set Use to yes, max {_short(line.relax_to)}"
    return f"alone: move to {_short(line.relax_to)}"


def _way_out(formula: Formula) -> list[str]:
    """The least-cost way out: each bound's old and new value and cell, then the cost."""
    relaxation = formula.relaxation
    if relaxation is None or not relaxation.changes:
        if not formula.conflicts:
            return []
        return [f"{WAY_OUT}: none found; change the limits above by hand."]
    rows: list[list[str] | str] = []
    for change in relaxation.changes:
        # In the conflicts' own words: cell, name and old bound, then the new bound.
        new = _short(change.relax_to)
        if change.kind == "use":
            new = f"Use = yes, max {new}"
        rows.append([change.text, f"{_ARROW} {new}"])
    blend = formula.blend
    label = "Total cost" if formula.several else "Diet cost" if blend.diet else "Cost"
    result = relaxation.formula
    if result is not None and result.cost is not None:
        cost = f"{label} once all of them are moved: {result.cost:,.2f} {run_cost_unit(blend)}".rstrip()
    else:
        cost = f"{label} once all of them are moved: unknown (the moved workbook did not solve)."
    return [f"{WAY_OUT}:", *_aligned(rows), cost]


def _aligned(rows: list[list[str] | str]) -> list[str]:
    """Indented rows of parts in columns, where that fits in _WIDTH; a plain string is a
    heading between them. A row too wide for its columns is written with single gaps, and
    one still too wide has its last parts on a line of their own, further indented."""
    indent = "  "
    table = [row for row in rows if not isinstance(row, str)]
    widths = [max(len(row[i]) for row in table) for i in range(len(table[0]))] if table else []
    lines = []
    for row in rows:
        if isinstance(row, str):
            lines.append(row)
            continue
        padded = indent + _GAP.join(part.ljust(width) for part, width in zip(row, widths)).rstrip()
        plain = indent + _GAP.join(part for part in row if part)
        if len(padded) <= _WIDTH:
            lines.append(padded)
        elif len(plain) <= _WIDTH:
            lines.append(plain)
        else:
            lines.extend([indent + row[0], indent + "    " + _GAP.join(part for part in row[1:] if part)])
    return lines


def _short(value: float | None) -> str:
    """A bound in few characters: four significant digits, no exponent for large values."""
    if value is None or not math.isfinite(value):
        return "-"
    if abs(value) >= 1e4:
        return f"{value:.0f}"
    return f"{value + 0.0:.4g}"


def _product_heading(blend: Blend, product: ProductFormula) -> str:
    """E.g. "Product: Starter crumb, 8,000 kg at 312.40 EUR per tonne"."""
    settings = blend.settings
    return (f"Product: {product.name}, {product.amount:,.{whole_decimals(product.amount)}f} "
            f"{settings.mass_unit} at {product.cost:,.2f} {cost_unit(settings)}")


def _ingredients(blend: Blend, lines: tuple[IngredientLine, ...]) -> list[str]:
    """The ingredients in the blend (inclusion above 0), with inclusion and amount; in a
    diet, the amount in the food's unit and its cost."""
    used = [line for line in lines if line.inclusion > 0]
    if not used:
        return [f"No {ingredient_word(blend).lower()} is in the {'diet' if blend.diet else 'blend'}."]
    if blend.diet:
        money = blend.settings.currency or "cost"
        rows = [
            [line.name, _fixed(line.amount, INCLUSION_DECIMALS), food_unit(blend, line.name),
             f"{line.batch_cost:,.2f}"]
            for line in used
        ]
        return _table(["Food", "Amount", "Unit", f"Cost {money}"], rows, left=1, text=(2,))
    unit = blend.settings.mass_unit
    rows = [
        [line.name, _fixed(line.inclusion, INCLUSION_DECIMALS), f"{line.amount:,.2f}"]
        for line in used
    ]
    return _table(["Ingredient", "Inclusion %", f"Amount {unit}"], rows, left=1)


def _nutrients(blend: Blend, lines: tuple[NutrientLine, ...]) -> list[str]:
    """Every nutrient line with its basis, its spec (- where open) and its level (a
    diet's total)."""
    if not lines:
        return []
    rows = []
    for line in lines:
        places = line_decimals(line)
        rows.append(
            [
                line.name,
                basis_label(line.kind, line.basis),
                line.unit,
                _fixed(line.minimum, places),
                _fixed(line.maximum, places),
                _fixed(line.level, places),
                line.position,
            ]
        )
    level = "Total" if blend.diet else "Level"
    headers = ["Nutrient", "Basis", "Unit", "Min", "Max", level, "Position"]
    if any(line.has_margin for line in lines):  # a Margin: what the formula is made to
        headers[5:5] = ["Target min", "Target max"]
        for row, line in zip(rows, lines):
            places = line_decimals(line)
            row[5:5] = [_fixed(line.target_minimum, places), _fixed(line.target_maximum, places)]
    return _table(headers, rows, left=3, last_left=True)


def _stocks(formula: Formula) -> list[str]:
    """Each stock's use against what is on hand, and what one more unit would save."""
    if not formula.stocks:
        return []
    blend = formula.blend
    money = blend.settings.currency or "cost"
    rows = [
        [
            line.ingredient,
            stock_unit(blend, line.ingredient),
            f"{line.used:,.2f}",
            f"{line.available:,.2f}",
            "yes" if line.binding else "no",
            _fixed(-line.shadow_price, decimals([line.shadow_price], least=2)),
        ]
        for line in formula.stocks
    ]
    headers = ["Stock", "Unit", "Used", "Available", "Binding", f"Value of one more unit {money}"]
    return _table(headers, rows, left=2)


def _binding_limits(formula: Formula) -> list[str]:
    """Binding limits and what one step of each bound changes the cost by (the step as on
    the Result sheet's first page), the largest first; with several products, the product
    each belongs to (blank for stocks)."""
    binding = binding_in_order(formula)
    if not binding:
        return ["No limit is binding."]
    # Bounds as in the tables above: a nutrient's own decimals, inclusions to 0.001 %.
    places = nutrient_decimals(formula)
    blend = formula.blend
    rows = []
    for limit in binding:
        if limit.kind in ("ingredient", "group"):
            bound_places = INCLUSION_DECIMALS
        elif limit.kind == "stock":
            bound_places = AMOUNT_DECIMALS
        else:
            bound_places = places.get(limit_key(limit), decimals([limit.bound]))
        step = limit_step(blend, limit)
        worth = 0.0 if abs(limit.shadow_price) <= NO_COST else limit.shadow_price * step
        row = [_limit_label(limit), _fixed(limit.bound, bound_places), _step_text(blend, limit, step),
               signed(worth), cost_part(blend, limit)]
        if formula.several:
            row.insert(1, limit.product or "")
        rows.append(row)
    headers = ["Binding limit", "Bound", "Step", "Cost of a step", "Cost unit"]
    if formula.several:
        headers.insert(1, "Product")
    lines = _table(headers, rows, left=2 if formula.several else 1, last_left=True)
    return ["Cost of a step: change in cost when the bound is raised by one step, largest first.", *lines]


def _step_text(blend: Blend, limit: Limit, step: float) -> str:
    """A limit's step with its unit: "0.01 %", "0.1 MJ/kg", "70 kg"; a diet food's "0.1 of
    slice"."""
    unit = limit_unit(blend, limit)
    if blend.diet and limit.kind in ("ingredient", "stock") and unit:
        return f"{step:g} of {unit}"
    return f"{step:g} {unit}".rstrip()


def _limit_label(limit: Limit) -> str:
    """A limit in words: "Crude protein min", "Crude protein (dry matter) min",
    "Cereals (group) max", "Soybean meal (stock) max"."""
    name = limit.name
    if limit.kind == "nutrient" and limit.basis == DRY_MATTER:
        name += " (dry matter)"
    elif limit.kind in ("group", "stock"):
        name += f" ({limit.kind})"
    return f"{name} {limit.side}"


def _table(
    headers: list[str],
    rows: list[list[str]],
    left: int,
    last_left: bool = False,
    text: tuple[int, ...] = (),
) -> list[str]:
    """Fixed-width columns: the first `left` columns, the columns in `text` (and optionally
    the last) left-aligned, the rest right-aligned, with a rule under the header."""
    widths = [max(len(row[i]) for row in [headers, *rows]) for i in range(len(headers))]
    last = len(headers) - 1

    def fit(cells: list[str]) -> str:
        parts = []
        for i, (cell, width) in enumerate(zip(cells, widths)):
            flush_left = i < left or i in text or (last_left and i == last)
            parts.append(cell.ljust(width) if flush_left else cell.rjust(width))
        return _GAP.join(parts).rstrip()

    rule = _GAP.join("-" * width for width in widths)
    return [fit(headers), rule, *(fit(row) for row in rows)]


def _fixed(value: float | None, decimals: int) -> str:
    """A number with `decimals` places, or "-" for an open bound."""
    if value is None or not math.isfinite(value):
        return "-"
    return f"{round(value, decimals) + 0.0:,.{decimals}f}"  # never "-0.00"


def _signed(value: float, decimals: int) -> str:
    """A number with its sign, "+0.00" (never "-0.00") for one that rounds to zero."""
    return f"{round(value, decimals) + 0.0:+,.{decimals}f}"

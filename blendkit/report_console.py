"""Render a short plain-text summary of a `Formula` for the terminal.

Fixed-width columns, no colours and no dependencies, so the text reads the same in a
terminal, a log file or an e-mail. The caution is always the last line.
"""

from __future__ import annotations

import math

from blendkit import CAUTION
from blendkit.formula import Formula, cost_unit, shadow_price_unit

# Gap between columns, in spaces.
_GAP = "  "
# Inclusions (and inclusion limits) are shown to 0.001 % of the blend.
_INCLUSION_DECIMALS = 3


def render_summary(formula: Formula) -> str:
    """A few short blocks: title, status, cost, ingredients used, nutrients, binding limits,
    notes, then the caution as the last line. For a blend that was not solved to optimality
    only the status, the message and any notes are shown (and the caution)."""
    blend = formula.blend
    settings = blend.settings
    title = settings.name or (blend.source.stem if blend.source else "Blend")
    blocks: list[list[str]] = [[title, "=" * len(title)]]

    status = [f"Status: {formula.status}"]
    if formula.message:
        status.append(f"Message: {formula.message}")
    if formula.solved and formula.cost is not None:
        status.append(f"Cost: {formula.cost:,.2f} {cost_unit(blend.settings)}")
        status.append(f"Batch: {settings.batch_size:g} {settings.mass_unit}")
    blocks.append(status)

    if formula.solved:
        blocks.append(_ingredients(formula))
        blocks.append(_nutrients(formula))
        blocks.append(_binding_limits(formula))
    if formula.notes:
        blocks.append(["Notes:", *(f"- {note}" for note in formula.notes)])
    blocks.append([CAUTION])
    return "\n\n".join("\n".join(block) for block in blocks if block)


def _ingredients(formula: Formula) -> list[str]:
    """The ingredients in the blend (inclusion above 0), with inclusion and batch amount."""
    unit = formula.blend.settings.mass_unit
    used = [line for line in formula.ingredients if line.inclusion > 0]
    if not used:
        return ["No ingredient is in the blend."]
    rows = [
        [line.name, _fixed(line.inclusion, _INCLUSION_DECIMALS), f"{line.amount:,.2f}"]
        for line in used
    ]
    return _table(["Ingredient", "Inclusion %", f"Amount {unit}"], rows, left=1)


def _nutrients(formula: Formula) -> list[str]:
    """Every nutrient with its spec (- where open) and its level in the blend."""
    if not formula.nutrients:
        return []
    rows = []
    for line in formula.nutrients:
        decimals = _decimals([line.minimum, line.maximum, line.level])
        rows.append(
            [
                line.name,
                line.unit,
                _fixed(line.minimum, decimals),
                _fixed(line.maximum, decimals),
                _fixed(line.level, decimals),
                line.position,
            ]
        )
    headers = ["Nutrient", "Unit", "Min", "Max", "Level", "Position"]
    return _table(headers, rows, left=2, last_left=True)


def _binding_limits(formula: Formula) -> list[str]:
    """Binding limits and what one more unit of each bound would change in cost."""
    binding = [limit for limit in formula.limits if limit.binding]
    if not binding:
        return ["No limit is binding."]
    # Bounds as in the tables above: a nutrient's own decimals, inclusions to 0.001 %.
    places = {line.name: _decimals([line.minimum, line.maximum, line.level])
              for line in formula.nutrients}
    rows = [
        [
            f"{limit.name} {limit.side}",
            _fixed(limit.bound, _INCLUSION_DECIMALS if limit.kind == "ingredient"
                   else places.get(limit.name, _decimals([limit.bound]))),
            f"{limit.shadow_price:+.{_decimals([limit.shadow_price], least=2)}f}",
            shadow_price_unit(limit, formula.blend),
        ]
        for limit in binding
    ]
    lines = _table(["Binding limit", "Bound", "Shadow price", "Unit"], rows, left=1, last_left=True)
    return ["Shadow price: change in cost when the bound is raised by 1 unit.", *lines]


def _table(
    headers: list[str], rows: list[list[str]], left: int, last_left: bool = False
) -> list[str]:
    """Fixed-width columns: the first `left` columns (and optionally the last) left-aligned,
    the rest right-aligned, with a rule under the header."""
    widths = [max(len(row[i]) for row in [headers, *rows]) for i in range(len(headers))]
    last = len(headers) - 1

    def fit(cells: list[str]) -> str:
        parts = []
        for i, (text, width) in enumerate(zip(cells, widths)):
            flush_left = i < left or (last_left and i == last)
            parts.append(text.ljust(width) if flush_left else text.rjust(width))
        return _GAP.join(parts).rstrip()

    rule = _GAP.join("-" * width for width in widths)
    return [fit(headers), rule, *(fit(row) for row in rows)]


def _fixed(value: float | None, decimals: int) -> str:
    """A number with `decimals` places, or "-" for an open bound."""
    if value is None or not math.isfinite(value):
        return "-"
    return f"{value + 0.0:,.{decimals}f}"


def _decimals(values: list[float | None], least: int = 1) -> int:
    """Decimal places that show about four significant digits of the largest value."""
    sizes = [abs(v) for v in values if v is not None and math.isfinite(v) and v != 0]
    if not sizes:
        return least
    return min(6, max(least, 3 - math.floor(math.log10(max(sizes)))))





"""A limit's shadow price in a buyer's words: per step of its bound, its one-sided values,
and a note where the optimum is degenerate. One home for the Shadow prices sheet, the
console and the JSON notes, so they say the same thing.

A step is `blendkit.model.steps.limit_step` (the Specs sheet's Step, else the default by
unit). A shadow price per step is shadow price x step: "+0.34 EUR/tonne per +0.01 %
Sodium, holds from 0.142 to 0.224 %".
"""

from __future__ import annotations

from blendkit.model.blend import DRY_MATTER, Blend
from blendkit.model.formula import Limit
from blendkit.model.steps import limit_step, limit_unit
from blendkit.write.numbers import decimals

# A binding limit whose shadow price is within this of 0 costs nothing: it binds only
# because the optimum is degenerate.
NO_COST = 1e-9
# Rates up and down within this of each other (relative to 1 + the larger) are the same.
SAME_RATE = 1e-7

NO_COST_NOTE = "binding, no cost (degenerate)"
UNEVEN_NOTE = "degenerate optimum: raising and lowering the bound change the cost at different rates"


def rates_differ(limit: Limit) -> bool:
    """True when raising and lowering the bound change the cost at different rates."""
    up, down = limit.shadow_price_up, limit.shadow_price_down
    if up is None or down is None:
        return False
    return abs(up - down) > SAME_RATE * (1 + max(abs(up), abs(down)))


def limit_note(limit: Limit, limits: tuple[Limit, ...] | list[Limit] = ()) -> str:
    """What a buyer should know about a binding limit's price: "binding, no cost
    (degenerate)" for a zero shadow price (or why it costs nothing, where the reason is
    plain: a min equal to the max in `limits`, a max of 0 the formula would keep anyway),
    and a word where the rates up and down differ; "" otherwise."""
    if not limit.binding:
        return ""
    if abs(limit.shadow_price) <= NO_COST:
        if _pinned(limit, limits):
            return "binding, no cost: its min equals its max, and the cost is on the other side"
        if limit.side == "max" and limit.bound == 0 and limit.kind in ("ingredient", "group"):
            return "binding, no cost: at 0, where the formula would keep it anyway"
        if rates_differ(limit):
            return f"{NO_COST_NOTE}; raising and lowering it change the cost at different rates"
        return NO_COST_NOTE
    return UNEVEN_NOTE if rates_differ(limit) else ""


def _pinned(limit: Limit, limits) -> bool:
    """True when the same item has a binding bound of the other side at the same value."""
    other = "min" if limit.side == "max" else "max"
    return any(each.binding and each.side == other and each.bound == limit.bound
               for each in _same_item(limits).get(_item(limit), ()))


def _item(limit: Limit) -> tuple:
    """What a limit bounds: its kind, name, product and basis."""
    return (limit.kind, limit.name, limit.product, limit.basis)


# The last `limits` tuple and its limits by the item they bound (one pair, replaced as a
# whole): the Shadow prices sheet asks `limit_note` of each of a plant's 6,000 limits with
# the same tuple.
_LAST_BY_ITEM: tuple = ((), {})


def _same_item(limits) -> dict[tuple, list[Limit]]:
    """`limits` by `_item`, in order; remembered for the last tuple (a tuple cannot change)."""
    global _LAST_BY_ITEM
    last, by_item = _LAST_BY_ITEM
    if type(limits) is tuple and limits is last:
        return by_item
    by_item = {}
    for each in limits:
        by_item.setdefault(_item(each), []).append(each)
    if type(limits) is tuple:
        _LAST_BY_ITEM = (limits, by_item)
    return by_item


def step_changes(blend: Blend, limit: Limit) -> tuple[float, float | None, float | None]:
    """(step, cost change when the bound is raised a step, when it is lowered a step); a
    side None where its rate is not known. Each change is the rate that side times the
    step (exact while the rate holds over the whole step)."""
    step = limit_step(blend, limit)
    up, down = limit.shadow_price_up, limit.shadow_price_down
    return (step, None if up is None else up * step, None if down is None else -down * step)


def cost_part(blend: Blend, limit: Limit) -> str:
    """The cost a shadow price moves: "EUR/tonne" for a blend's (product's) own limits,
    the currency for a stock (the run's total) and for a diet."""
    settings = blend.settings
    money = settings.currency or "cost"
    if limit.kind == "stock" or blend.diet:
        return money
    return f"{money}/{settings.cost_per}"


def moved_part(blend: Blend, limit: Limit, step: float) -> str:
    """What one step moves, with its sign: "+0.01 % Sodium", "+0.1 % inclusion of Salt",
    "+0.1 unit (100 g) of Rolled oats" in a diet."""
    unit = limit_unit(blend, limit)
    amount = f"+{step:g}"
    if limit.kind == "ratio":
        return f"{amount} in the ratio {limit.name}"
    if blend.diet and limit.kind in ("ingredient", "stock"):
        measure = f"unit ({unit})" if unit else "unit"
        return f"{amount} {measure} of {limit.name}" + (" stock" if limit.kind == "stock" else "")
    if limit.kind == "stock":
        return f"{amount} {unit} of {limit.name} stock"
    if limit.kind == "group":
        return f"{amount} {unit} in the group {limit.name}".replace("  ", " ")
    if limit.kind == "ingredient":
        return f"{amount} % inclusion of {limit.name}"
    text = f"{amount} {unit} {limit.name}".replace("  ", " ")
    return text + " in dry matter" if limit.basis == DRY_MATTER else text


def per_step_text(blend: Blend, limit: Limit) -> str:
    """The shadow price per step in words: "+0.34 EUR/tonne per +0.01 % Sodium, holds from
    0.142 to 0.224 %" ("" for a limit that does not bind)."""
    if not limit.binding:
        return ""
    step = limit_step(blend, limit)
    worth = 0.0 if abs(limit.shadow_price) <= NO_COST else limit.shadow_price * step
    text = f"{signed(worth)} {cost_part(blend, limit)} per {moved_part(blend, limit, step)}"
    holds = holds_text(blend, limit)
    return f"{text}, {holds}" if holds else text


def holds_text(blend: Blend, limit: Limit) -> str:
    """Where the shadow price holds, in the bound's unit: "holds from 0.142 to 0.224 %",
    "holds from 12 up", "holds up to 4.5"; "" when neither end is known."""
    low, high = limit.holds_from, limit.holds_to
    places = decimals([low, high, limit.bound], 1)
    unit = limit_unit(blend, limit)
    suffix = f" {unit}" if unit else ""
    if blend.diet and limit.kind in ("ingredient", "stock"):
        suffix = f" units ({unit})" if unit else " units"
    if low is not None and high is not None:
        return f"holds from {low:,.{places}f} to {high:,.{places}f}{suffix}"
    if low is not None:
        return f"holds from {low:,.{places}f}{suffix} up"
    if high is not None:
        return f"holds up to {high:,.{places}f}{suffix}"
    return ""


def signed(value: float) -> str:
    """A cost change with its sign and about four significant digits (at least two
    decimals), "+0.00" never "-0.00"."""
    places = decimals([value], 2) if value else 2
    return f"{round(value, places) + 0.0:+,.{places}f}"

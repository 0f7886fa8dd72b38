"""The outcome of formulating one blend: what the writers render.

Built by `blendkit.lp.analyse` from the domain model and the engine's result. Writers
(workbook, JSON, console) read these objects and compute nothing of their own; the
units printed beside the numbers are worded in `blendkit.model.units`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

from blendkit.model.blend import Blend
from blendkit.model.changes import Changes

if TYPE_CHECKING:
    import pandas as pd

# How the analysis starts a note about a broken soft spec; writers that show such specs
# in a block of their own leave these notes out of the notes list.
SOFT_LIMIT_NOTE = "Soft spec not met:"
# The heading of that block, followed by the count ("Soft specs not met: 2"): the console,
# the Result and the Overview sheets word it the same way.
SOFT_SPECS_NOT_MET = "Soft specs not met"
# What an infeasible run's suggested bound moves are called, wherever they are shown.
WAY_OUT = "Least-cost way out"
# Said beside the conflicts when the search's time limits stopped it (`lp.diagnose`).
CUT_SHORT = ("The search for conflicts stopped at its time limit: a conflict may list limits that "
             "take no part in it, and limits marked \"not worked out\" were not examined. The "
             "least-cost way out does not depend on this search.")

# Statuses a formula can have; the engine's statuses pass through unchanged.
OPTIMAL = "optimal"
INFEASIBLE = "infeasible"
UNBOUNDED = "unbounded"


@dataclass(frozen=True)
class IngredientLine:
    """One ingredient in the result.

    `inclusion` is in % of the blend, `amount` in the batch's mass unit, `batch_cost` in
    currency per batch. `reduced_cost` is d(blend cost)/d(inclusion %) at the optimum:
    for an unused ingredient it says how much its price must fall (per cost unit of mass,
    `entry_price` gives the price itself) before it would come into the blend.
    `more_below` / `less_above` bound the price range over which this formula stays the
    cheapest (cost ranging): below `more_below` the ingredient would be used more (or come
    in), above `less_above` it would be used less (or drop out); None where no price
    change in that direction alters the formula.
    """

    name: str
    inclusion: float
    amount: float
    batch_cost: float
    cost: float
    used: bool  # the Use column: False means held at 0
    reduced_cost: float
    entry_price: float | None  # price at which an unused ingredient would come in
    more_below: float | None = None
    less_above: float | None = None
    # Why an end is missing when only a negative price would reach it ("" otherwise).
    price_note: str = ""


@dataclass(frozen=True)
class NutrientLine:
    """One nutrient's level in the blend against its spec (if any).

    `position` is "at min", "at max", "within", "below min" or "above max";
    "no spec" where the nutrient has no spec row. `kind` is "nutrient" or "ratio" (the
    level is then level(A) / level(B)); `basis` is "as fed" or "dry matter" (the level
    per unit of dry matter). Every nutrient column has an as-fed line; a dry-matter or
    ratio spec adds a line of its own. `minimum` / `maximum` are the spec as written;
    with a Margin the formula is made to `target_minimum` / `target_maximum` (min +
    margin, max - margin; None: no margin on that side) and `position` is against them.
    """

    name: str
    unit: str
    minimum: float | None
    maximum: float | None
    level: float | None
    position: str
    kind: str = "nutrient"
    basis: str = "as fed"
    target_minimum: float | None = None
    target_maximum: float | None = None

    @property
    def has_margin(self) -> bool:
        """True when a Margin moves either bound inward."""
        return self.target_minimum is not None or self.target_maximum is not None


@dataclass(frozen=True)
class Limit:
    """One bound the user wrote: a spec, group, stock or ingredient inclusion limit.

    `shadow_price` is d(cost)/d(bound): the change in cost per unit increase of the
    bound; 0 where the bound does not bind. For one blend the cost is the blend's cost
    per `Cost per` unit; with several products, a product's own limits are priced per
    `Cost per` unit of that product and stocks in the run's total cost per unit of
    stock. `cell` is where the bound was read. `kind` is "nutrient", "ratio", "group",
    "stock" or "ingredient"; `side` is "min" or "max"; `product` the product's name
    (None for one blend, and for stocks, which all products share); `basis` "as fed"
    or "dry matter" for nutrient limits.
    """

    kind: str
    name: str
    side: str
    bound: float
    level: float
    binding: bool
    shadow_price: float
    cell: str
    product: str | None = None
    basis: str = "as fed"
    violation: float = 0.0  # a soft limit's shortfall (min) or excess (max); 0 when met
    penalty: float | None = None  # a soft limit's cost per unit of violation
    # The bound values between which `shadow_price` holds unchanged (None: no end, or
    # not known, as for ratio and dry-matter bounds).
    holds_from: float | None = None
    holds_to: float | None = None
    # d(cost)/d(bound) just above and just below the bound: they differ from each other
    # at a degenerate optimum (None: not known, as for ratio and dry-matter bounds).
    shadow_price_up: float | None = None
    shadow_price_down: float | None = None
    # A spec's Margin: `bound` is the spec as written (as are `holds_from` / `holds_to`),
    # and the formula is made to `target` (min + margin, max - margin).
    margin: float = 0.0

    @property
    def target(self) -> float:
        """The bound the formula is made to: the spec moved inward by its margin."""
        return self.bound + self.margin if self.side == "min" else self.bound - self.margin

    @property
    def broken(self) -> bool:
        """True when a soft limit is not met."""
        return self.violation > 0


@dataclass(frozen=True)
class Practical:
    """What the rules a mill can weigh (Min if used, Pack size, Scale step, Max
    ingredients) cost in one product (`blendkit.lp.practical`).

    `lp_cost` is the product's cost in the LP without those rules and `cost` its cost
    under them (per `Cost per` unit; None when no formula meets them). `lp_penalty` and
    `penalty` are the penalties of the soft specs each breaks (per `Cost per` unit; 0
    without soft specs): both searches minimise cost plus penalties, so `rise` counts them. `status` is the
    search's: "optimal", "time_limit" (the best formula found within the time limit,
    `gap` its proven relative gap to the cheapest possible), "infeasible" or another
    engine status. `nodes` counts the search's nodes (one search for the products solved
    together). `binding` says in words which rules bind; `blocking`, when the rules leave
    no formula though the LP has one, names the rule families whose removal alone
    restores one.
    """

    status: str
    lp_cost: float | None
    cost: float | None
    gap: float | None
    nodes: int
    binding: tuple[str, ...] = ()
    blocking: tuple[str, ...] = ()
    lp_penalty: float = 0.0
    penalty: float = 0.0

    @property
    def rise(self) -> float | None:
        """What the rules add to the cost plus the penalties of broken soft specs: `cost`
        + `penalty` less `lp_cost` + `lp_penalty` (None without both costs)."""
        if self.cost is None or self.lp_cost is None:
            return None
        return (self.cost + self.penalty) - (self.lp_cost + self.lp_penalty)

    def lines(self, unit: str = "") -> tuple[str, ...]:
        """The record in words, one line each, as the console and the Result sheet show it:
        the costs with and without the rules, how the search ended, the rules that bind."""
        unit = f" {unit}" if unit else ""
        head = f"{WEIGHING_RULES}: LP cost {_money(self.lp_cost)}{unit}"
        rise = self.rise
        if rise is not None:
            share = f", {100 * rise / abs(self.lp_cost):+.2f} %" if self.lp_cost else ""
            head += f", cost under the rules {_money(self.cost)}{unit} ({rise:+,.2f}{share})"
        ends = {"optimal": f"proven cheapest ({self.nodes} nodes)",
                "time_limit": (f"best found within the time limit, proven gap {_percent(self.gap)} ({self.nodes} nodes)"
                               if self.cost is not None else "the time limit ran out before any formula was found"),
                "infeasible": "no formula meets the rules"}
        lines = [f"{head}; {ends.get(self.status, self.status)}"]
        if self.lp_penalty or self.penalty:
            lines.append(f"  with the penalties of soft specs not met: {_money(self.lp_penalty)}{unit} in the LP, "
                         f"{_money(self.penalty if self.cost is not None else None)}{unit} under the rules "
                         "(counted in the change)")
        lines += [f"  {line}" for line in self.binding]
        if self.blocking:
            lines.append("  a formula exists without: " + ", ".join(self.blocking))
        return tuple(lines)


# The heading of the rules a mill can weigh, wherever they are shown.
WEIGHING_RULES = "Weighing rules"


def _money(value: float | None) -> str:
    """A cost for the weighing lines ("-" for none)."""
    return "-" if value is None else f"{value:,.2f}"


def _percent(gap: float | None) -> str:
    """A relative gap as a percentage ("-" for none)."""
    return "-" if gap is None or gap != gap or gap == float("inf") else f"{100 * gap:.3g} %"


@dataclass(frozen=True)
class ProductFormula:
    """One product's formula: its cost per `Cost per` unit, lines and limits.

    `amount` is the mass to make (the batch size for one blend, or for a product without
    an amount; unused in diet mode). `status` and `message` are those of the LP the
    product was solved in (its own, or the joint LP of products linked by stocks); when
    the status is not "optimal", `cost` is None and the lines are empty.
    """

    name: str | None
    amount: float
    cost: float | None
    ingredients: tuple[IngredientLine, ...]
    nutrients: tuple[NutrientLine, ...]
    limits: tuple[Limit, ...]
    status: str = OPTIMAL
    message: str = ""
    practical: Practical | None = None  # under the rules a mill can weigh (None: no such rules)

    @property
    def solved(self) -> bool:
        """True when this product's formula was found."""
        return self.status == OPTIMAL


@dataclass(frozen=True)
class StockLine:
    """Use of one ingredient's stock by all products together (mass unit).

    `shadow_price` is d(total cost)/d(stock): negative where more stock would lower the
    run's cost; minus it is what one more unit of that ingredient is worth to the plant.
    """

    ingredient: str
    used: float
    available: float
    binding: bool
    shadow_price: float
    cell: str


@dataclass(frozen=True)
class SharedPrice:
    """One ingredient's price range for the whole run: the one price a buyer pays, moving
    in every product at once (`blendkit.lp.shared_prices`). Below `more_below` the plan
    would use more of it, above `less_above` less; None for no end (`note` says why when
    only a negative price would reach it)."""

    name: str
    price: float
    more_below: float | None
    less_above: float | None
    note: str = ""


# The scope of a price range: the one price for the whole run, a product's own range when
# its price moves there alone (a product linked to others by a stock), or a product that
# is a formula of its own.
EVERY_PRODUCT = "one price for every product"
THIS_PRODUCT_ALONE = "this product alone"
THIS_PRODUCT = "this product"


@dataclass(frozen=True)
class CrossCheck:
    """The run's LP re-solved by another solver (`blendkit.lp.cross_check`): its status
    and objective (in the formula's cost units), ours less its (None unless both are
    optimal), and whether the two agree within the cross-check tolerance."""

    solver: str
    status: str
    cost: float | None
    difference: float | None
    agrees: bool


@dataclass(frozen=True)
class Formula:
    """The full outcome of one run.

    `status` is "optimal", "infeasible", "unbounded", "iteration_limit" or
    "numerical_trouble". Numbers are only meaningful when status is "optimal":
    otherwise `cost` is None and the line tuples are empty. `notes` are advisory
    remarks for the user (such as blank nutrient cells in used ingredients).

    `products` holds one ProductFormula per product (one, named None, for a single
    blend). For a single blend `cost`, `ingredients`, `nutrients` and `limits` are that
    product's; with a Products sheet `cost` is the run's total cost (currency),
    `ingredients` and `nutrients` are empty, and `limits` holds every product's limits
    and the stocks.
    """

    blend: Blend
    status: str
    message: str
    cost: float | None
    ingredients: tuple[IngredientLine, ...]
    nutrients: tuple[NutrientLine, ...]
    limits: tuple[Limit, ...]
    iterations: int
    notes: tuple[str, ...] = ()
    products: tuple[ProductFormula, ...] = ()
    stocks: tuple[StockLine, ...] = ()
    conflicts: tuple[ConflictLine, ...] = ()  # when infeasible: the conflicting limits
    conflicts_complete: bool = True  # False when more conflicts may remain unreported
    conflicts_cut_short: bool = False  # the search's time limit stopped a set's filter or the moves
    relaxation: Relaxation | None = None  # when infeasible: the least-cost way out
    # When the products were solved as several LPs (see `blendkit.lp.split`): each LP's
    # own Formula, in Products-sheet order of their first product. Empty otherwise.
    parts: tuple[Formula, ...] = ()
    cross_check: CrossCheck | None = None  # the same LP re-solved with HiGHS (None when off)
    # With several products: each ingredient's one price range for the whole run.
    shared_prices: tuple[SharedPrice, ...] = ()
    changes: Changes | None = None  # against an earlier result, when one was compared
    # The LP's optimal basis in the workbook's words (`blendkit.lp.start`), which the record
    # keeps for the next run to start from; empty without an optimum, and for several LPs
    # (each part holds its own).
    basis: tuple[tuple[tuple[str, ...], int], ...] = field(default=(), repr=False)

    @property
    def practical_totals(self) -> tuple[float, float | None] | None:
        """With products, some under the rules a mill can weigh: the run's total cost
        without those rules and under them (currency; each product's cost per `Cost per`
        unit times its amount, as `cost`; a product under the rules adds the penalties of
        the soft specs it breaks, `lp_penalty` and `penalty`, as its `rise` does). A product
        without rules counts its own cost in both; the cost under the rules is None unless
        every product has a formula. None for one blend (its `practical` says it all) and
        without such rules."""
        if not self.several or all(product.practical is None for product in self.products):
            return None
        per = self.blend.settings.cost_unit_in_mass_units
        before, after = 0.0, 0.0
        for product in self.products:
            record = product.practical
            lp_cost = product.cost if record is None else record.lp_cost
            if lp_cost is None:
                return None
            lp_penalty, penalty = (0.0, 0.0) if record is None else (record.lp_penalty, record.penalty)
            before += (lp_cost + lp_penalty) * product.amount / per
            after = (None if after is None or product.cost is None
                     else after + (product.cost + penalty) * product.amount / per)
        return before, after

    def linked(self, name: str | None) -> bool:
        """True when product `name` was solved jointly with other products (linked by a
        stock): its own price ranges then hold only for a price change in it alone."""
        if not self.several:
            return False
        if not self.parts:
            return len(self.products) > 1
        return any(len(part.blend.products) > 1 and any(p.name == name for p in part.blend.products)
                   for part in self.parts)

    @property
    def several(self) -> bool:
        """True when the run made several products (a Products sheet)."""
        return bool(self.blend.products)

    @property
    def solved(self) -> bool:
        """True when the blend was solved to optimality."""
        return self.status == OPTIMAL

    @property
    def broken_limits(self) -> tuple[Limit, ...]:
        """The soft limits the formula breaks, each once (a product's limits are also the
        run's)."""
        every = [*self.limits, *(limit for product in self.products for limit in product.limits)]
        return tuple(limit for limit in dict.fromkeys(every) if limit.broken)

    @property
    def notes_besides_broken_limits(self) -> tuple[str, ...]:
        """The notes, less those about broken soft limits when there are any: writers show
        those limits in a block of their own."""
        if not self.broken_limits:
            return self.notes
        return tuple(note for note in self.notes if not note.startswith(SOFT_LIMIT_NOTE))

    def to_frames(self) -> dict[str, pd.DataFrame]:
        """The formula as pandas DataFrames: "inclusions", "nutrients", "limits" (with
        shadow prices and the ranges they hold over), "prices" (each ingredient's price
        range) and "stocks"; see `blendkit.write.frames` for their columns."""
        from blendkit.write.frames import formula_frames  # pandas only when used

        return formula_frames(self)

    @property
    def conflict_sets(self) -> dict[int, tuple[ConflictLine, ...]]:
        """The conflicting sets by number, in order; in each, the sum-to-100 rows come
        last, so the limits the user can change come first."""
        numbers = sorted({line.conflict for line in self.conflicts})
        return {
            number: tuple(sorted((line for line in self.conflicts if line.conflict == number),
                                 key=lambda line: line.kind == "total"))
            for number in numbers
        }


@dataclass(frozen=True)
class RunInfo:
    """Facts about one run, recorded in the output for the reviewer."""

    tool_version: str
    started_utc: str  # ISO 8601, e.g. "2026-12-01T21:41:45Z"
    input_name: str
    input_sha256: str
    price_list_name: str = ""  # `--prices`: the price list's file name and SHA-256
    price_list_sha256: str = ""


def basis_label(kind: str, basis: str) -> str:
    """The word for a line's or a limit's basis: "ratio" for a ratio, else the nutrient's
    basis ("as fed", "dry matter"); blank for limits that have none (ingredients, groups,
    stocks)."""
    if kind == "ratio":
        return "ratio"
    return basis if kind == "nutrient" else ""


@dataclass(frozen=True)
class ConflictLine:
    """One member of a conflicting set of limits, in the workbook's words.

    `conflict` numbers the set (1, 2, ... for independent conflicts); `kind` is
    "nutrient", "ratio", "ingredient", "use", "group", "stock" or "total" (a product's
    sum-to-100 row); `relax_to` is the value this bound alone would have to move to for
    the workbook to become feasible (None where no move of it alone is enough).
    `text` reads like "Specs!C5  Crude protein  min 24". `fixes_alone` is True when
    dropping this limit alone makes the whole workbook feasible (every conflicting set
    contains it). `worked_out` is False when the search's time limit came before this
    limit's move and fixes-alone check were worked out (`relax_to` and `fixes_alone` then
    say nothing).
    """

    conflict: int
    kind: str
    name: str
    product: str | None
    side: str
    bound: float
    cell: str | None
    relax_to: float | None
    text: str
    fixes_alone: bool = False
    worked_out: bool = True


@dataclass(frozen=True)
class Relaxation:
    """The least-cost way out: bounds to move, and the formula that then results."""

    changes: tuple[ConflictLine, ...]  # `conflict` is 0; relax_to is the new bound
    formula: Formula | None

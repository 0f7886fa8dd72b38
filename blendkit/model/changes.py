"""What changed since an earlier result of the same workbook, and why.

Built by `blendkit.lp.changes` from two run records (`blendkit.model.record`): the one an
earlier output holds and the one of this run. Writers (the Changes sheet, JSON
`changes`, the console) render these objects and compute nothing of their own.

The cost change of each formula is split into its two causes:

- `price_effect` = sum over ingredients of old inclusion x (new price - old price) / 100
  (in diet mode: old amount x price change): how much more (or less) the old formula
  costs at the new prices;
- `formula_effect` = new cost - old cost - price_effect: what reformulating saved (a
  negative number) or cost.

So `price_effect + formula_effect == cost_after - cost_before`. An ingredient that is no
longer in the workbook has no new price: it adds nothing to the price effect, and its
leaving shows in the formula effect.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class ValueChange:
    """One value before and after: an inclusion (or diet amount) or a nutrient level.

    `before` is None where the earlier result had no such line (a nutrient added since),
    `after` None where this run has none.
    """

    name: str
    before: float | None
    after: float | None


@dataclass(frozen=True)
class FormulaChanges:
    """How one formula changed: the product's, or the single blend's.

    `key` names the formula: the product's name, or for a single blend the workbook's
    Name setting (or "blend"). Costs are per `Cost per` unit of the product (a diet's:
    for the whole diet). `came_in` / `went_out` are the ingredients whose inclusion rose
    from 0 / fell to 0; `inclusions` and `nutrients` hold every line whose value changed
    (ingredients that came in or went out included); `started_binding` /
    `stopped_binding` name limits as "kind name side" (e.g. "nutrient Calcium min").
    """

    key: str
    cost_before: float
    cost_after: float
    price_effect: float
    formula_effect: float
    came_in: tuple[str, ...]
    went_out: tuple[str, ...]
    inclusions: tuple[ValueChange, ...]
    nutrients: tuple[ValueChange, ...]
    started_binding: tuple[str, ...]
    stopped_binding: tuple[str, ...]

    @property
    def cost_change(self) -> float:
        """New cost less old cost (price_effect + formula_effect)."""
        return self.cost_after - self.cost_before


@dataclass(frozen=True)
class Changes:
    """The comparison of this run with an earlier result.

    `earlier_output` is the file name of the output workbook compared with,
    `earlier_input` the input file name recorded there and `earlier_run_utc` when that
    run was; `formulas` holds one entry per formula found in both runs.
    """

    earlier_output: str
    earlier_input: str
    earlier_run_utc: str
    formulas: tuple[FormulaChanges, ...]

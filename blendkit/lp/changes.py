"""Compare this run with an earlier result: what changed in each formula, and why.

A pure function of two run records (`blendkit.model.record`): the earlier one, read
back from its output workbook, and this run's. Formulas are matched by key (the product's
name); a single blend is matched with the earlier single blend whatever its Name. The
cost change is split into the price effect and the formula effect as
`blendkit.model.changes` defines them.
"""

from __future__ import annotations

from blendkit.lp.build import TOTAL
from blendkit.lp.tolerances import UNCHANGED
from blendkit.model.changes import Changes, FormulaChanges, ValueChange
from blendkit.model.record import RecordedFormula, RunRecord


def compare_runs(before: RunRecord, after: RunRecord) -> tuple[Changes | None, tuple[str, ...]]:
    """The changes from `before` to `after`, and notes for the user; no changes (None)
    when the two runs cannot be compared, with a note saying why."""
    where = before.output or "the earlier output"
    if before.mode != after.mode:
        return None, (f"No changes shown: {where} holds a {before.mode} result, this run is a {after.mode} run.",)
    if before.status != "optimal":
        return None, (f"No changes shown: the earlier result in {where} has no formula (status {before.status}).",)
    if after.status != "optimal":
        return None, (f"No changes shown against {where}: this run found no formula (status {after.status}).",)
    pairs, notes = _pairs(before, after)
    formulas = []
    for old, new in pairs:
        formulas.append(formula_changes(old, new, per_unit(after.mode)))
        notes.extend(_vanished_notes(old, new))
    changes = Changes(
        earlier_output=before.output,
        earlier_input=before.input_name,
        earlier_run_utc=before.started_utc,
        formulas=tuple(formulas),
    )
    return changes, tuple(notes)


def _pairs(before: RunRecord, after: RunRecord) -> tuple[list[tuple[RecordedFormula, RecordedFormula]], list[str]]:
    """The formulas to compare, earlier with new; notes for products only one run has."""
    if after.mode != "products":
        return list(zip(before.formulas[:1], after.formulas[:1])), []
    old = {formula.key: formula for formula in before.formulas}
    new = {formula.key: formula for formula in after.formulas}
    notes = [f"{key}: a new product since the earlier result; nothing to compare." for key in new if key not in old]
    notes += [f"{key}: made in the earlier result, not in this run." for key in old if key not in new]
    return [(old[key], formula) for key, formula in new.items() if key in old], notes


def formula_changes(old: RecordedFormula, new: RecordedFormula, per: float) -> FormulaChanges:
    """How one formula changed from `old` to `new`, keyed as `new` (`per` as in
    `price_effect_of`)."""
    price_effect = price_effect_of(old, new, per)
    names = list(dict.fromkeys([*new.inclusions, *old.inclusions]))
    inclusions = _changed(names, old.inclusions, new.inclusions)
    return FormulaChanges(
        key=new.key,
        cost_before=old.cost,
        cost_after=new.cost,
        price_effect=price_effect,
        formula_effect=new.cost - old.cost - price_effect,
        came_in=tuple(n for n in names if old.inclusions.get(n, 0.0) == 0 and new.inclusions.get(n, 0.0) > 0),
        went_out=tuple(n for n in names if old.inclusions.get(n, 0.0) > 0 and new.inclusions.get(n, 0.0) == 0),
        inclusions=tuple(_with_zeros(change) for change in inclusions),
        nutrients=tuple(_changed(list(dict.fromkeys([*new.nutrients, *old.nutrients])), old.nutrients, new.nutrients)),
        started_binding=tuple(label for label in new.binding if label not in old.binding),
        stopped_binding=tuple(label for label in old.binding if label not in new.binding),
    )


def price_effect_of(old: RecordedFormula, new: RecordedFormula, per: float) -> float:
    """How much more the old formula costs at the new prices: the sum of old inclusion x
    (new price - old price) x `per` (1/100 for inclusions in %, 1 for diet amounts).

    An ingredient without a new price (no longer in the workbook) adds nothing.
    """
    return per * sum(
        x * (new.prices[name] - old.prices.get(name, 0.0))
        for name, x in old.inclusions.items()
        if name in new.prices
    )


def per_unit(mode: str) -> float:
    """What an inclusion is multiplied by in a cost: 1/100 for %, 1 for diet amounts."""
    return 1.0 if mode == "diet" else 1.0 / TOTAL


def _changed(names: list[str], old: dict, new: dict) -> list[ValueChange]:
    """A ValueChange for each name whose value differs (or is only on one side)."""
    changes = []
    for name in names:
        before, after = old.get(name), new.get(name)
        if not _same(before, after):
            changes.append(ValueChange(name, before, after))
    return changes


def _same(before: float | None, after: float | None) -> bool:
    """True when both are missing, or both are within UNCHANGED of each other."""
    if before is None or after is None:
        return before is None and after is None
    return abs(after - before) <= UNCHANGED * (1 + max(abs(before), abs(after)))


def _with_zeros(change: ValueChange) -> ValueChange:
    """An inclusion change with 0 for an ingredient missing on one side (it was not in
    that workbook, so it was not in that formula)."""
    return ValueChange(change.name, change.before or 0.0, change.after or 0.0)


def _vanished_notes(old: RecordedFormula, new: RecordedFormula) -> list[str]:
    """A note for each ingredient of the old formula that is no longer in the workbook."""
    return [
        f"{new.key}: {name} was in the earlier formula but is no longer in the workbook; with "
        "no new price, its leaving counts in the formula effect."
        for name, x in old.inclusions.items()
        if x > 0 and name not in new.prices
    ]

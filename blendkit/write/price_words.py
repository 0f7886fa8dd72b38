"""A price range's missing ends in words, one wording for the workbook and the console.

A range end is None when no price change that way alters the plan, or when only a
negative price would reach it (the line's own note then says so).
"""

from __future__ import annotations

from blendkit.model.formula import SharedPrice

NO_LOWER_END = "no lower price changes the plan"
NO_UPPER_END = "no higher price changes the plan"
NO_END = "no price changes the plan"


def shared_price_note(line: SharedPrice) -> str:
    """Why an end of one ingredient's one-price range is blank ("" with both ends)."""
    if line.more_below is None and line.less_above is None and not line.note:
        return NO_END
    words = []
    if line.more_below is None:
        words.append(line.note or NO_LOWER_END)
    if line.less_above is None:
        words.append(NO_UPPER_END)
    return "; ".join(words)

"""Clean numbers for the Result sheet: no float noise a reviewer would have to read past.

A value within the engine's tolerance of zero or of its bound is written as exactly zero
or the bound (`blendkit.lp.tolerances`), and every other value is cut to `DIGITS`
significant digits, so 0.9500000000000001 is written 0.95 and 8.88e-16 is written 0.
Cutting moves a value by less than 1e-12 of itself: the live formulas still agree with
the written values to 1e-9.
"""

from __future__ import annotations

import math

from blendkit.lp.tolerances import AT_BOUND, ZERO_INCLUSION

# Significant digits kept of a written value.
DIGITS = 12
# A value smaller than this (in its own unit) beside values of ordinary size is noise.
NOISE = 1e-12


def tidy(value: float | None) -> float | None:
    """`value` cut to `DIGITS` significant digits; noise-sized values become 0."""
    if value is None or not math.isfinite(value):
        return value
    if abs(value) < NOISE:
        return 0.0
    return float(f"{value:.{DIGITS}g}") + 0.0


def tidy_inclusion(value: float) -> float:
    """An inclusion (or diet amount): 0 below `ZERO_INCLUSION`, otherwise `tidy`."""
    return 0.0 if abs(value) < ZERO_INCLUSION else tidy(value)


def tidy_level(level: float | None, minimum: float | None, maximum: float | None) -> float | None:
    """A level within `AT_BOUND` (relative to 1 + |bound|) of its min or max is the bound."""
    if level is None:
        return None
    for bound in (minimum, maximum):
        if bound is not None and abs(level - bound) <= AT_BOUND * (1 + abs(bound)):
            return float(bound)
    return tidy(level)

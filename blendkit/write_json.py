"""Render a `Formula` as JSON for other programs.

The shape is fixed (keys in this order)::

    {"status": str, "message": str, "cost": float | null,
     "ingredients": {name: inclusion %}, "nutrients": {name: level},
     "limits": [{"kind", "name", "side", "bound", "level", "binding", "shadow_price", "cell"}],
     "notes": [str]}

`cost` is null unless the status is "optimal". Numbers are plain floats; a value that
is not finite becomes null, so the output is always strict JSON (NaN is never emitted).
"""

from __future__ import annotations

import json
import math
from typing import Any

from blendkit.formula import Formula, Limit


def formula_to_dict(formula: Formula) -> dict[str, Any]:
    """The formula as plain Python data: str, float, bool, None, dict and list only."""
    return {
        "status": str(formula.status),
        "message": str(formula.message),
        "cost": _number(formula.cost) if formula.solved else None,
        "ingredients": {str(line.name): _number(line.inclusion) for line in formula.ingredients},
        "nutrients": {str(line.name): _number(line.level) for line in formula.nutrients},
        "limits": [_limit(limit) for limit in formula.limits],
        "notes": [str(note) for note in formula.notes],
    }


def formula_to_json(formula: Formula) -> str:
    """The formula as indented, strict JSON text (no trailing newline)."""
    return json.dumps(formula_to_dict(formula), indent=2, ensure_ascii=False, allow_nan=False)


def _limit(limit: Limit) -> dict[str, Any]:
    """One limit, keys in the documented order."""
    return {
        "kind": str(limit.kind),
        "name": str(limit.name),
        "side": str(limit.side),
        "bound": _number(limit.bound),
        "level": _number(limit.level),
        "binding": bool(limit.binding),
        "shadow_price": _number(limit.shadow_price),
        "cell": str(limit.cell),
    }


def _number(value: float | None) -> float | None:
    """A plain float (numpy scalars converted, -0.0 made 0.0); None if missing or not finite."""
    if value is None:
        return None
    number = float(value)
    return number + 0.0 if math.isfinite(number) else None

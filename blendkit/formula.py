"""The outcome of formulating one blend: what the writers render.

Built by `blendkit.analyse` from the domain model and the engine's result. Writers
(workbook, JSON, console) read these objects and compute nothing of their own.
"""

from __future__ import annotations

from dataclasses import dataclass

from blendkit.model import Blend, Settings

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
    """

    name: str
    inclusion: float
    amount: float
    batch_cost: float
    cost: float
    used: bool  # the Use column: False means held at 0
    reduced_cost: float
    entry_price: float | None  # price at which an unused ingredient would come in


@dataclass(frozen=True)
class NutrientLine:
    """One nutrient's level in the blend against its spec (if any).

    `position` is "at min", "at max", "within", "below min" or "above max";
    "no spec" where the nutrient has no spec row.
    """

    name: str
    unit: str
    minimum: float | None
    maximum: float | None
    level: float
    position: str


@dataclass(frozen=True)
class Limit:
    """One bound the user wrote: a spec min/max or an ingredient inclusion limit.

    `shadow_price` is d(blend cost)/d(bound): the change in cost per unit increase of
    the bound; 0 where the bound does not bind. `cell` is where the bound was read.
    `kind` is "nutrient" or "ingredient"; `side` is "min" or "max".
    """

    kind: str
    name: str
    side: str
    bound: float
    level: float
    binding: bool
    shadow_price: float
    cell: str


@dataclass(frozen=True)
class Formula:
    """The full outcome for one blend.

    `status` is "optimal", "infeasible", "unbounded", "iteration_limit" or
    "numerical_trouble". Numbers are only meaningful when status is "optimal":
    otherwise `cost` is None and the line tuples are empty. `notes` are advisory
    remarks for the user (such as blank nutrient cells in used ingredients).
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

    @property
    def solved(self) -> bool:
        """True when the blend was solved to optimality."""
        return self.status == OPTIMAL


@dataclass(frozen=True)
class RunInfo:
    """Facts about one run, recorded in the output for the reviewer."""

    tool_version: str
    started_utc: str  # ISO 8601, e.g. "2026-12-01T21:41:45Z"
    input_name: str
    input_sha256: str


def cost_unit(settings: Settings) -> str:
    """The blend cost's unit, e.g. "EUR per tonne"; "per tonne" when no currency is given."""
    return f"{settings.currency} per {settings.cost_per}".strip()


def shadow_price_unit(limit: Limit, blend: Blend) -> str:
    """E.g. "EUR/tonne per 1 unit of Crude protein (%)" or "EUR/tonne per 1 % inclusion"."""
    settings = blend.settings
    per = f"{settings.currency or 'cost'}/{settings.cost_per}"
    if limit.kind == "ingredient":
        return f"{per} per 1 % inclusion"
    unit = blend.nutrient_units.get(limit.name, "")
    label = f"{limit.name} ({unit})" if unit else limit.name
    return f"{per} per 1 unit of {label}"

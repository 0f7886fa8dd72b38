"""When the limits cannot all be met: which of them conflict, and the cheapest way out.

Every bound the user wrote is a *member* that can be switched on or off: a spec side
(nutrient, ratio, dry matter), a group side, a stock, an ingredient's Min or Max, a
`Use = no`, and each product's sum-to-100 row (`total`, tied to the product's amount).
Non-negativity of inclusions is physics, not a member, and stays on.

1. **A minimal conflicting set.** The engine's phase-one certificate (Farkas duals)
   names a set of members that is infeasible on its own. A deletion filter (Chinneck &
   Dravnieks, 1991) then drops each member in turn and keeps it only when the rest
   becomes feasible without it; what remains is irreducible: dropping any one member
   leaves the others feasible. With that conflict set aside the check repeats, so every
   independent conflict is reported, each as its own set.
2. **Ways out, one bound at a time.** For each member, the least move of that bound alone
   that makes the workbook feasible (other conflicts set aside): the best level the
   other limits allow, by one LP (for ratio and dry-matter bounds, by Dinkelbach's
   method for ratios, a few LPs).
3. **The least-cost relaxation.** An elastic LP lets every member except the totals give
   way at a penalty per unit of violation, relative to the size of its bound, weighted
   by kind (see DEFAULT_PRIORITY) and the user's `Priority`: each step of priority makes
   giving way ten times dearer. Among the least-penalty relaxations the cheapest blend is
   then found, and the changes are reported as new bounds.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blendkit.engine import solve_form
from blendkit.lp.build import (
    BlendLP,
)
from blendkit.lp.members import (
    Member,
    feasible,
    form_with,
    members_of,
)
from blendkit.lp.relax import (
    Change,
    best_level,
    least_cost_relaxation,
    outward,
    relaxed_blend,
)
from blendkit.model.blend import Blend
from blendkit.model.formula import ConflictLine

# How many independent conflicts to look for before saying more may remain.
MOST_CONFLICTS = 8


@dataclass(frozen=True)
class Conflict:
    """One irreducible set of conflicting members, with each one's least move alone.

    `relax_to[k]` is the value member k's bound would have to move to (None where no
    move of that bound alone is enough, as for a total).
    """

    members: tuple[Member, ...]
    relax_to: tuple[float | None, ...]


@dataclass(frozen=True)
class Diagnosis:
    """Everything found about an infeasible workbook.

    `complete` is False when the search stopped at MOST_CONFLICTS with conflicts left.
    `relaxed_blend` is the blend with the least-cost relaxation's new bounds (None when
    no relaxation could be found), ready to formulate.
    """

    conflicts: tuple[Conflict, ...]
    changes: tuple[Change, ...]
    complete: bool
    relaxed_blend: Blend | None


# ----- the conflicting sets ---------------------------------------------------------------


def _seed(lp: BlendLP, members: list[Member], active: np.ndarray) -> np.ndarray:
    """Members named by the phase-one certificate of the LP with `active` members on."""
    result = solve_form(form_with(lp, members, active), algorithm="primal")
    seed = np.zeros(len(members), dtype=bool)
    if result.certificate is None:
        return active.copy()
    for part in result.certificate.parts:
        for k, member in enumerate(members):
            if not active[k]:
                continue
            if part.kind == "row" and member.place == "row" and member.index == part.index:
                if part.side == "eq" or member.lp_side == "both" or member.lp_side == part.side:
                    seed[k] = True
            elif part.kind == "bound" and member.place == "column" and member.index == part.index:
                if part.side == "eq" or member.kind == "use" or member.lp_side == part.side:
                    seed[k] = True
    if not seed.any() or feasible(form_with(lp, members, seed)):
        return active.copy()  # the certificate did not isolate it: start from everything on
    return seed


def _deletion_filter(lp: BlendLP, members: list[Member], candidates: np.ndarray) -> np.ndarray:
    """An irreducible infeasible subset of `candidates` (Chinneck & Dravnieks, 1991)."""
    keep = candidates.copy()
    # Try to drop the members most likely to be incidental first: the sum-to-100 rows
    # and stocks last, so conflicts are told in specs and limits where possible.
    order = sorted(np.flatnonzero(candidates), key=lambda k: members[k].kind in ("total", "stock"))
    for k in order:
        keep[k] = False
        if feasible(form_with(lp, members, keep)):
            keep[k] = True
    return keep


# ----- the whole diagnosis -----------------------------------------------------------------


def diagnose(blend: Blend, lp: BlendLP) -> Diagnosis:
    """Conflicting sets, single-bound moves and the least-cost relaxation of an infeasible LP."""
    members = members_of(blend, lp)
    everything = np.ones(len(members), dtype=bool)
    totals = np.array([member.kind == "total" for member in members])
    set_aside = np.zeros(len(members), dtype=bool)
    found = []
    complete = True
    while True:
        active = everything & ~set_aside
        if feasible(form_with(lp, members, active)):
            break
        if len(found) == MOST_CONFLICTS:
            complete = False
            break
        conflict = _deletion_filter(lp, members, _seed(lp, members, active))
        found.append(conflict)
        # Sum-to-100 rows can be part of several conflicts; they stay on.
        set_aside |= conflict & ~totals
    conflicts = []
    for conflict in found:
        # Each member's least move alone, with the other conflicts set aside.
        others = np.zeros(len(members), dtype=bool)
        for other in found:
            if other is not conflict:
                others |= other & ~totals
        moves = []
        for k in np.flatnonzero(conflict):
            active = everything & ~others
            active[k] = False
            moves.append(outward(best_level(lp, members, active, members[k]), members[k].side))
        conflicts.append(Conflict(tuple(members[k] for k in np.flatnonzero(conflict)), tuple(moves)))
    changes = least_cost_relaxation(blend, lp, members)
    return Diagnosis(
        conflicts=tuple(conflicts),
        changes=changes,
        complete=complete,
        relaxed_blend=relaxed_blend(blend, changes) if changes else None,
    )


def conflict_lines(diagnosis: Diagnosis) -> tuple[ConflictLine, ...]:
    """The conflicting sets as report lines, numbered from 1."""
    lines = []
    for number, conflict in enumerate(diagnosis.conflicts, start=1):
        for member, relax_to in zip(conflict.members, conflict.relax_to):
            lines.append(_line(number, member, relax_to))
    return tuple(lines)


def change_lines(diagnosis: Diagnosis) -> tuple[ConflictLine, ...]:
    """The least-cost relaxation's changes as report lines (conflict number 0)."""
    return tuple(_line(0, change.member, change.relax_to) for change in diagnosis.changes)


def _line(number: int, member: Member, relax_to: float | None) -> ConflictLine:
    """One report line for a member."""
    return ConflictLine(number, member.kind, member.name, member.product, member.side, member.bound,
                        member.cell, relax_to, member.describe())

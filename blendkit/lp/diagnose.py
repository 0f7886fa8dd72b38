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

import time
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

# The search for conflicting sets stops after this many sets, or after this many seconds
# (then the report says that more conflicts may remain); a set whose deletion filter is
# still running then is reported as found so far (it conflicts, but may hold members that
# take no part). Each member's move alone and its fixes-alone check then get MOVES_SECONDS
# more; members not reached by then are reported as not worked out. (An infeasible plant
# of 20 products took 24 minutes before these limits: each check is a phase one of seconds.)
MOST_CONFLICTS = 8
SEARCH_SECONDS = 10.0
# A deletion filter over more than GROUP_FROM members tries them in GROUPS blocks first.
GROUP_FROM = 40
GROUPS = 8
MOVES_SECONDS = 10.0


@dataclass(frozen=True)
class Conflict:
    """One irreducible set of conflicting members, with each one's least move alone.

    `relax_to[k]` is the value member k's bound would have to move to (None where no
    move of that bound alone is enough, as for a total); `fixes_alone[k]` is True when
    dropping member k alone makes the whole workbook feasible; `worked_out[k]` is False
    when the time limit came before both were worked out (both then say nothing).
    """

    members: tuple[Member, ...]
    relax_to: tuple[float | None, ...]
    fixes_alone: tuple[bool, ...] = ()
    worked_out: tuple[bool, ...] = ()


@dataclass(frozen=True)
class Diagnosis:
    """Everything found about an infeasible workbook.

    `complete` is True only when the conflicts are proven to be all there are: one set,
    every member of which makes the whole workbook feasible when dropped alone (then every
    conflicting set contains each of them, so it is that set). Otherwise more conflicts
    may remain once these are fixed.
    `relaxed_blend` is the blend with the least-cost relaxation's new bounds (None when
    no relaxation could be found), ready to formulate.
    """

    conflicts: tuple[Conflict, ...]
    changes: tuple[Change, ...]
    complete: bool
    relaxed_blend: Blend | None
    cut_short: bool = False  # the time limits stopped a set's filter or the members' moves


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


def _deletion_filter(lp: BlendLP, members: list[Member], candidates: np.ndarray,
                     deadline: float) -> tuple[np.ndarray, bool]:
    """An irreducible infeasible subset of `candidates` (Chinneck & Dravnieks, 1991), and
    True; or, once past `deadline`, the infeasible subset reached so far and False.

    Members are tried for dropping in blocks: a block whose dropping leaves the rest
    infeasible goes at once, one that does not is halved and its halves tried, down to
    single members (a seed of hundreds of members of which a few dozen conflict, as on a
    plant, is thinned in few checks). Seeds of up to GROUP_FROM members are tried one by
    one, as blocks would only add checks when most members take part."""
    keep = candidates.copy()
    # Try to drop the members most likely to be incidental first: the sum-to-100 rows
    # and stocks last, so conflicts are told in specs and limits where possible.
    order = sorted(np.flatnonzero(candidates), key=lambda k: members[k].kind in ("total", "stock"))
    size = 1 if len(order) <= GROUP_FROM else max(1, len(order) // GROUPS)
    blocks = [order[start : start + size] for start in range(0, len(order), size)]
    while blocks:
        if time.monotonic() > deadline:
            return keep, False
        block = blocks.pop(0)
        keep[block] = False
        if feasible(form_with(lp, members, keep)):
            keep[block] = True
            if len(block) > 1:  # some member of it takes part: try each half
                blocks[:0] = [block[: len(block) // 2], block[len(block) // 2 :]]
    return keep, True


# ----- the whole diagnosis -----------------------------------------------------------------


def diagnose(blend: Blend, lp: BlendLP) -> Diagnosis:
    """Conflicting sets, single-bound moves and the least-cost relaxation of an infeasible LP."""
    members = members_of(blend, lp)
    totals = np.array([member.kind == "total" for member in members])
    deadline = time.monotonic() + SEARCH_SECONDS
    found, stopped, whole = _disjoint_conflicts(lp, members, totals, deadline)
    if whole:
        found, stopped_again = _overlapping_conflicts(lp, members, totals, found, deadline)
        stopped = stopped or stopped_again
    deadline = time.monotonic() + MOVES_SECONDS
    fixes = _fixes_alone(lp, members, found, deadline)
    conflicts = [_with_moves(lp, members, totals, found, conflict, fixes, deadline) for conflict in found]
    proven = len(found) == 1 and all(fixes[k] for k in np.flatnonzero(found[0]) if not totals[k])
    changes = least_cost_relaxation(blend, lp, members)
    return Diagnosis(
        conflicts=tuple(conflicts),
        changes=changes,
        complete=whole and proven and not stopped,
        relaxed_blend=relaxed_blend(blend, changes) if changes else None,
        cut_short=not whole or not all(all(conflict.worked_out) for conflict in conflicts),
    )


def _disjoint_conflicts(lp, members, totals, deadline) -> tuple[list[np.ndarray], bool, bool]:
    """Conflicting sets found by setting each one aside and looking again, until the rest
    is feasible; True when the search stopped at its limits first; and False when the
    last set's filter was stopped by the deadline (that set is not minimal)."""
    everything = np.ones(len(members), dtype=bool)
    set_aside = np.zeros(len(members), dtype=bool)
    found: list[np.ndarray] = []
    while True:
        active = everything & ~set_aside
        if feasible(form_with(lp, members, active)):
            return found, False, True
        if len(found) == MOST_CONFLICTS or time.monotonic() > deadline:
            return found, True, True
        conflict, whole = _deletion_filter(lp, members, _seed(lp, members, active), deadline)
        found.append(conflict)
        if not whole:
            return found, True, False
        # Sum-to-100 rows can be part of several conflicts; they stay on.
        set_aside |= conflict & ~totals


def _overlapping_conflicts(lp, members, totals, found, deadline) -> tuple[list[np.ndarray], bool]:
    """More conflicting sets that share members with those found: with each member of a
    found set dropped alone, the workbook may still hold a conflict not yet found."""
    tried = set()
    queue = [k for conflict in found for k in np.flatnonzero(conflict) if not totals[k]]
    while queue:
        k = queue.pop(0)
        if k in tried:
            continue
        tried.add(k)
        if len(found) >= MOST_CONFLICTS or time.monotonic() > deadline:
            return found, True
        active = np.ones(len(members), dtype=bool)
        active[k] = False
        if feasible(form_with(lp, members, active)):
            continue
        conflict, whole = _deletion_filter(lp, members, _seed(lp, members, active), deadline)
        if not whole:
            return found, True  # a set not yet minimal is not reported beside minimal ones
        if not any((conflict == other).all() for other in found):
            found.append(conflict)
            queue.extend(j for j in np.flatnonzero(conflict) if not totals[j])
    return found, False


def _fixes_alone(lp, members, found, deadline: float) -> dict[int, bool | None]:
    """For each member of a conflicting set: does dropping it alone make the whole
    workbook feasible? None for the members the deadline came before."""
    fixes = {}
    for k in sorted({int(k) for conflict in found for k in np.flatnonzero(conflict)}):
        if members[k].kind == "total" or time.monotonic() > deadline:
            fixes[k] = False if members[k].kind == "total" else None
            continue
        active = np.ones(len(members), dtype=bool)
        active[k] = False
        fixes[k] = feasible(form_with(lp, members, active))
    return fixes


def _with_moves(lp, members, totals, found, conflict, fixes, deadline: float) -> Conflict:
    """A conflicting set with each member's least move alone (the other sets set aside,
    except for members this set shares with them) and whether dropping it alone fixes
    the whole workbook; a member the deadline came before is not worked out."""
    others = np.zeros(len(members), dtype=bool)
    for other in found:
        if other is not conflict:
            others |= other & ~totals & ~conflict
    indices = np.flatnonzero(conflict)
    moves, worked_out = [], []
    for k in indices:
        done = fixes[int(k)] is not None and (totals[k] or time.monotonic() <= deadline)
        if done and not others.any() and fixes[int(k)] is False:
            # The LP of this move is the one `fixes` found infeasible (no other set is
            # set aside): no move of this bound alone is enough, without solving it again.
            moves.append(None)
        else:
            active = ~others
            active[k] = False
            moves.append(outward(best_level(lp, members, active, members[k]), members[k].side) if done else None)
        worked_out.append(bool(done))
    fixes_alone = tuple(bool(fixes[int(k)]) and done for k, done in zip(indices, worked_out))
    return Conflict(tuple(members[k] for k in indices), tuple(moves), fixes_alone, tuple(worked_out))


def conflict_lines(diagnosis: Diagnosis) -> tuple[ConflictLine, ...]:
    """The conflicting sets as report lines, numbered from 1."""
    lines = []
    for number, conflict in enumerate(diagnosis.conflicts, start=1):
        for member, relax_to, fixes, done in zip(conflict.members, conflict.relax_to, conflict.fixes_alone,
                                                 conflict.worked_out):
            lines.append(_line(number, member, relax_to, fixes, done))
    return tuple(lines)


def change_lines(diagnosis: Diagnosis) -> tuple[ConflictLine, ...]:
    """The least-cost relaxation's changes as report lines (conflict number 0)."""
    return tuple(_line(0, change.member, change.relax_to) for change in diagnosis.changes)


def _line(number: int, member: Member, relax_to: float | None, fixes_alone: bool = False,
          worked_out: bool = True) -> ConflictLine:
    """One report line for a member: its bound and the value it would have to move to as
    written in its cell (a spec with a Margin: the target less or plus the margin)."""
    return ConflictLine(conflict=number, kind=member.kind, name=member.name, product=member.product,
                        side=member.side, bound=member.written(member.bound), cell=member.cell,
                        relax_to=member.written(relax_to),
                        text=member.describe(), fixes_alone=fixes_alone, worked_out=worked_out)

"""The diagnosis family: the whole conflict diagnosis of infeasible blends beside one plain solve.

The blends come from `blendkit.bench.blends.infeasible_blend` (one spec out of reach); the
diagnosis is `blendkit.lp.diagnose.diagnose` (conflicting sets, each bound's least move,
least-cost relaxation).
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence

from blendkit.bench.blends import infeasible_blend
from blendkit.bench.options import Options
from blendkit.bench.timing import timed
from blendkit.engine import solve_form
from blendkit.lp.build import build_lp
from blendkit.lp.diagnose import diagnose

DIAGNOSIS_REPEATS = 3


def diagnosis_lines(sizes: Sequence[tuple[int, int]], seed: int, repeat: int) -> list[str]:
    """Time one plain solve and the full conflict diagnosis of infeasible blends."""
    lines = [f"{'blend':<14}{'plain solve ms':>16}{'diagnosis ms':>14}{'conflicts':>11}{'members':>9}"]
    for n_ing, n_nut in sizes:
        blend = infeasible_blend(n_ing, n_nut, seed)
        lp = build_lp(blend)
        plain, plain_time = timed(lambda: solve_form(lp.form), repeat)
        found, diagnosis_time = timed(lambda: diagnose(blend, lp), repeat)
        members = sum(len(conflict.members) for conflict in found.conflicts)
        lines.append(f"{n_ing}x{n_nut:<10}{plain_time * 1e3:>16.1f}{diagnosis_time * 1e3:>14.1f}"
                     f"{len(found.conflicts):>11}{members:>9}   ({plain.status})")
    return lines


def section(options: Options) -> Iterator[str]:
    """The diagnosis family's part of the report."""
    yield "Conflict diagnosis of infeasible blends (one spec out of reach): the whole diagnosis"
    yield "(conflicting sets, each bound's least move, least-cost relaxation) beside one plain solve"
    yield from diagnosis_lines(options.sizes, options.seed, 1 if options.quick else DIAGNOSIS_REPEATS)

"""The whole benchmark: the machine, then each family's section in turn, and the command line.

A family is a module with ``section(options) -> Iterator[str]`` listed in `FAMILIES`; `run`
prints the machine lines, then each family's lines as they are measured, a blank line
between families.
"""

from __future__ import annotations

import argparse
import sys
import time
from collections.abc import Callable, Iterator, Sequence

from blendkit.bench import blends, diagnosis, formula_set, mip, plant
from blendkit.bench import netlib as netlib_problems
from blendkit.bench.highs import MissingHighspy, highspy_module
from blendkit.bench.machine import load_average, machine_lines
from blendkit.bench.options import Options
from blendkit.bench.timing import OBJECTIVE_RTOL

DEFAULT_SIZES = ((20, 10), (60, 30), (150, 60), (300, 120))
DEFAULT_SEED = 20240611


def _books_section(options: Options) -> Iterator[str]:
    """The workbook family (`blendkit.bench.books`), imported when it runs, so that
    ``python -m blendkit.bench.books`` can run it alone; one round per size here (its own
    command takes --repeat), since a round of the largest workbook takes about a minute."""
    from dataclasses import replace

    from blendkit.bench import books

    yield from books.section(replace(options, repeat=None))


# The families, in the order the report shows them.
FAMILIES: tuple[Callable[[Options], Iterator[str]], ...] = (
    blends.section, plant.section, diagnosis.section, formula_set.section, netlib_problems.section,
    mip.section, _books_section,
)


def run(sizes: Sequence[tuple[int, int]], seed: int, repeat: int | None, quick: bool, netlib: str | None,
        out=print) -> None:
    """The whole benchmark, printing as it goes."""
    options = Options(sizes=tuple(sizes), seed=seed, repeat=repeat, quick=quick, netlib=netlib)
    started = time.perf_counter()
    for line in machine_lines():
        out(line)
    out(f"seed {seed}; objective agreement within {OBJECTIVE_RTOL:g} relative; times are medians")
    for section in FAMILIES:
        out("")
        for line in section(options):
            out(line)
            sys.stdout.flush()
    out("")
    out(f"total benchmark time {time.perf_counter() - started:.1f} s; load average at end {load_average()}")


def parse_sizes(text: str) -> list[tuple[int, int]]:
    """'20x10,60x30' -> [(20, 10), (60, 30)]."""
    sizes = []
    for part in text.split(","):
        try:
            a, b = part.lower().strip().split("x")
            sizes.append((int(a), int(b)))
        except ValueError:
            raise argparse.ArgumentTypeError(f"size {part!r} is not INGREDIENTSxNUTRIENTS, e.g. 60x30") from None
        if sizes[-1][0] < 10 or sizes[-1][1] < 6:
            raise argparse.ArgumentTypeError(f"size {part!r}: use at least 10 ingredients and 6 nutrients")
    return sizes


def _parser() -> argparse.ArgumentParser:
    """The command line's options, with their help text."""
    parser = argparse.ArgumentParser(
        prog="python -m blendkit.bench",
        description="Time blendkit's engine beside scipy's HiGHS on blend-shaped LPs and NETLIB problems.",
    )
    parser.add_argument("--sizes", type=parse_sizes, default=list(DEFAULT_SIZES),
                        help="comma-separated INGREDIENTSxNUTRIENTS (default 20x10,60x30,150x60,300x120)")
    parser.add_argument("--repeat", type=int, default=None,
                        help="timed repeats of each solve (default: by size, fewer for large LPs)")
    parser.add_argument("--seed", type=int, default=DEFAULT_SEED, help=f"seed of the LP generator (default {DEFAULT_SEED})")
    parser.add_argument("--netlib", default=None, metavar="DIR",
                        help="folder of NETLIB .mps files (default ../shared/reference/netlib beside the repository)")
    parser.add_argument("--quick", action="store_true", help="3 LPs per size, one repeat: a fast look")
    return parser


def main(argv: list[str] | None = None) -> None:
    """`python -m blendkit.bench`: parse the options and run the benchmark.

    Exits 2 with a one-line message when highspy is not installed.
    """
    parser = _parser()
    args = parser.parse_args(argv)
    if args.repeat is not None and args.repeat < 1:
        parser.error("--repeat must be at least 1")
    try:
        highspy_module()  # checked first, so a missing highspy does not cost the blend tables' minute
        run(args.sizes, args.seed, args.repeat, args.quick, args.netlib)
    except MissingHighspy as error:
        print(error, file=sys.stderr)
        raise SystemExit(2) from None

"""The workbook family: how long a big workbook takes to check and solve, beside the time
openpyxl alone takes to load and save the same file, and the sample workbooks end to end.

Every figure is measured in a fresh child process, so that one measurement's memory and
warm caches never flatter the next: the child runs the step and prints its own timings
as JSON; the parent reads the child's peak resident memory from the operating system
(``os.wait4``). Measured per size (ingredients x nutrients, workbooks made by
`books_workbook` from the blend generator):

* openpyxl: ``load_workbook`` and ``Workbook.save`` of the input (in the child, after
  its imports), the yardstick;
* check: `blendkit.read.read_workbook` (what ``blendkit check`` does);
* solve: `blendkit.pipeline.prepare` (read), `formulate` (the LP, its analysis and the
  HiGHS cross-check) and `finish` (the output workbook), each timed;
* the ratio solve / openpyxl load+save, and each child's peak memory.

Plant workbooks (`plant.plant_workbook`: the plant family's numbers as Ingredients with
stocks, Specs per product and Products) are timed part by part in one child: read, the
engine's solve (with ranging), the rest of the LP step and the write, with the part that
took longest named, so that a plant run shows where a user's time goes.

For each sample workbook, ``blendkit solve`` as a user runs it (a new process: start,
imports, read, solve, write) beside a child process that imports openpyxl, loads and saves
the same file, with blendkit's bytecode written first as installing it does
(`blendkit.bench.start_up.compile_blendkit`); then where the start-up goes, import by
import (`blendkit.bench.start_up`). Run alone with ``python -m blendkit.bench.books``
(``--sizes 500x60``).
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path

from blendkit.bench.machine import load_average, machine_lines
from blendkit.bench.options import Options
from blendkit.bench.start_up import compile_blendkit, start_up_lines

# The sizes measured by default, and in a quick run.
BOOK_SIZES = ((500, 60), (2000, 200))
QUICK_BOOK_SIZES = ((500, 60),)
# Plant workbooks (products, ingredients, nutrients; `plant.plant_workbook`) timed part by part.
PLANT_BOOKS = ((20, 60, 30), (40, 80, 40))
QUICK_PLANT_BOOKS = ((5, 60, 30),)
SAMPLES = Path(__file__).resolve().parents[2] / "sample_workbooks"
SEED = 20240611

# What a child process runs, by kind: one step on the file {path} (output {out}), printing
# its timings as JSON. Each is a script of its own, importing only what the step needs:
# openpyxl's load and save, blendkit's check (the reader) and blendkit's solve (read, LP,
# analysis and cross-check, write; the same calls as `blendkit solve`).
# `blendkit` as its console script runs it, with the arguments {argv}.
_CLI = """
import sys
sys.argv = {argv!r}
from blendkit.start import main
main()
"""

# Put before every child's script: at exit the child writes its own peak resident memory
# (VmHWM, Linux) to stderr. The kernel's rusage of a child also counts the memory of the
# parent it was started from, so it would show the benchmark's own size, not the child's.
PEAK_PREAMBLE = """
import atexit as _atexit, sys as _sys
def _peak():
    try:
        with open("/proc/self/status") as status:
            line = next(line for line in status if line.startswith("VmHWM:"))
        _sys.stderr.write("\\npeak-kb " + line.split()[1] + "\\n")
    except (OSError, StopIteration):
        pass
_atexit.register(_peak)
"""

CHILDREN = {
    "openpyxl": """
import json, time
started = time.perf_counter()
import openpyxl
imported = time.perf_counter()
book = openpyxl.load_workbook({path!r})
loaded = time.perf_counter()
book.save({out!r})
print(json.dumps({{"import": imported - started, "load": loaded - imported, "save": time.perf_counter() - loaded}}))
""",
    "check": """
import json, time
from blendkit.read.workbook import read_workbook
started = time.perf_counter()
read_workbook({path!r})
print(json.dumps({{"read": time.perf_counter() - started}}))
""",
    "solve": """
import json, time
from blendkit.pipeline import finish, formulate, prepare
started = time.perf_counter()
prepared = prepare({path!r}, {out!r})
read = time.perf_counter()
formula = formulate(prepared.blend)
solved = time.perf_counter()
finish(prepared, formula)
print(json.dumps({{"read": read - started, "lp": solved - read, "write": time.perf_counter() - solved}}))
""",
    "plant": """
import json, time
from blendkit.engine import solve_form
from blendkit.lp.build import build_lp
from blendkit.pipeline import finish, formulate, prepare
started = time.perf_counter()
prepared = prepare({path!r}, {out!r})
read = time.perf_counter()
form = build_lp(prepared.blend).form
built = time.perf_counter()
solve_form(form, ranging=True)
engine = time.perf_counter()
formula = formulate(prepared.blend)
solved = time.perf_counter()
finish(prepared, formula)
print(json.dumps({{"read": read - started, "engine": engine - built, "lp": solved - engine,
                  "write": time.perf_counter() - solved}}))
""",
}


def books_workbook(path: Path, ingredients: int, nutrients: int, seed: int = SEED) -> Path:
    """Write a feasible blend workbook of the given size at `path`: an Ingredients sheet
    (name, cost, min, max, one column per nutrient, zeros written) and a Specs sheet set
    around a known feasible mixture, from the blend family's generator."""
    import numpy as np
    import openpyxl

    from blendkit.bench.blends import TOTAL, _bounds_and_prices, _contents, _feasible_mixture, _kinds, _nutrient_classes

    rng = np.random.default_rng([seed, ingredients, nutrients])
    kinds = _kinds(ingredients, rng)
    classes, units = _nutrient_classes(nutrients)
    contents = _contents(kinds, classes, rng)
    lower, upper, prices = _bounds_and_prices(kinds, rng)
    levels = contents @ _feasible_mixture(lower, upper, kinds, rng) / TOTAL
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Ingredients"
    sheet.append(["Ingredient", "Cost", "Min", "Max", *(f"N{i + 1} ({unit})" for i, unit in enumerate(units))])
    for j in range(ingredients):
        sheet.append([f"Ingredient {j + 1}", round(float(prices[j]), 2), float(lower[j]) or None,
                      None if np.isinf(upper[j]) else float(upper[j]),
                      *(round(float(value), 4) for value in contents[:, j])])
    specs = book.create_sheet("Specs")
    specs.append(["Nutrient", "Min", "Max"])
    for i, level in enumerate(levels):
        if level > 0 and rng.random() < 0.9:
            low = level * (1 - rng.uniform(0.0, 0.1)) if rng.random() < 0.8 else None
            high = level * (1 + rng.uniform(0.0, 0.2)) if low is None or rng.random() < 0.4 else None
            specs.append([f"N{i + 1}", low, high])
    book.save(path)
    return path


@dataclass(frozen=True)
class Run:
    """One child process: its wall time, its peak memory and what it printed."""

    seconds: float
    peak_mb: float
    times: dict[str, float]


def measured(kind: str, path: Path, out: Path, *, again: bool = False) -> Run:
    """One step in a fresh child process (see `CHILDREN`), with the child's peak memory.
    The output `out` is removed first, so that every run is a workbook's first (a run
    with an earlier result starts from its basis), unless `again` asks for the re-run."""
    if not again:
        out.unlink(missing_ok=True)
    code = CHILDREN[kind].format(path=str(path), out=str(out))
    return _run_with_peak([sys.executable, "-c", PEAK_PREAMBLE + code])


def _run_with_peak(command: Sequence[str]) -> Run:
    """`command` as a child process: its wall time, its peak resident memory (as it wrote
    it, see `PEAK_PREAMBLE`; else the kernel's figure from os.wait4, which may include
    this process's) and the JSON timings it printed last."""
    started = time.perf_counter()
    with tempfile.TemporaryFile("w+") as stdout, tempfile.TemporaryFile("w+") as stderr:
        process = subprocess.Popen(command, stdout=stdout, stderr=stderr, text=True)
        _, status, usage = os.wait4(process.pid, 0)
        seconds = time.perf_counter() - started
        process.returncode = os.waitstatus_to_exitcode(status)
        stdout.seek(0)
        stderr.seek(0)
        output, errors = stdout.read(), stderr.read()
    if process.returncode not in (0, 3):  # 3: solved, but infeasible
        raise RuntimeError(f"{command[0]} {command[1]} failed ({process.returncode}): {errors.strip()[-400:]}")
    lines = output.strip().splitlines()
    times = json.loads(lines[-1]) if lines and lines[-1].startswith("{") else {}
    reported = [line.split()[1] for line in errors.splitlines() if line.startswith("peak-kb ")]
    peak_kb = float(reported[-1]) if reported else usage.ru_maxrss
    return Run(seconds=seconds, peak_mb=peak_kb / 1024, times=times)


def _median_run(runs: list[Run]) -> Run:
    """Each figure of several runs of one step: its median."""
    return Run(seconds=statistics.median(run.seconds for run in runs),
               peak_mb=statistics.median(run.peak_mb for run in runs),
               times={key: statistics.median(run.times[key] for run in runs) for key in runs[0].times})


def _book_lines(folder: Path, ingredients: int, nutrients: int, repeat: int) -> Iterator[str]:
    """One size: the workbook made, then openpyxl, check and solve in child processes,
    `repeat` rounds of the three in turn (so that a change of the machine's load falls on
    all three alike), each figure the median of its rounds."""
    book = books_workbook(folder / f"book_{ingredients}x{nutrients}.xlsx", ingredients, nutrients)
    rounds = [[measured(kind, book, folder / f"{kind}.xlsx") for kind in ("openpyxl", "check", "solve")]
              for _ in range(repeat)]
    yardstick, check, solve = (_median_run(list(runs)) for runs in zip(*rounds))
    base = yardstick.times["load"] + yardstick.times["save"]
    lp = solve.times
    total = lp["read"] + lp["lp"] + lp["write"]
    yield (f"{ingredients:>6} x {nutrients:<5}{book.stat().st_size / 1e6:>7.1f}"
           f"{yardstick.times['load']:>8.2f}{yardstick.times['save']:>8.2f}{base:>8.2f}"
           f"{check.times['read']:>8.2f}{lp['read']:>8.2f}{lp['lp']:>7.2f}{lp['write']:>8.2f}{total:>8.2f}"
           f"{total / base:>7.2f}x{yardstick.peak_mb:>9.0f}{check.peak_mb:>8.0f}{solve.peak_mb:>8.0f}")


BOOK_HEAD = (f"{'size':<14}{'MB':>7}{'o.load':>8}{'o.save':>8}{'o.both':>8}{'check':>8}{'read':>8}"
             f"{'LP':>7}{'write':>8}{'solve':>8}{'ratio':>8}{'o.peak':>9}{'c.peak':>8}{'s.peak':>8}")


PLANT_HEAD = (f"{'plant':<14}{'MB':>6}{'o.both':>8}{'read':>7}{'engine':>8}{'rest':>7}{'write':>7}{'solve':>8}"
              f"{'again':>7}{'s.peak':>8}  largest part")


def _plant_book_lines(folder: Path, plants: Sequence[tuple[int, int, int]], repeat: int) -> Iterator[str]:
    """Each plant workbook: openpyxl's load and save beside `blendkit solve`'s parts in one
    child (read; the engine's solve with ranging; the rest of the LP step, measured as the
    whole step less the engine's time: building the LP, the analysis and the HiGHS
    cross-check; write), medians of `repeat` rounds, and which part took longest; `again`:
    the same workbook solved again over that output, from its optimal basis (read, LP and
    write, seconds)."""
    from blendkit.bench.plant import plant_workbook

    yield PLANT_HEAD
    yield "-" * len(PLANT_HEAD)
    for products, ingredients, nutrients in plants:
        book = plant_workbook(folder / f"plant_{products}x{ingredients}x{nutrients}.xlsx", products, ingredients,
                              nutrients, SEED)
        rounds = [[measured(kind, book, folder / f"{kind}.xlsx") for kind in ("openpyxl", "plant")]
                  + [measured("solve", book, folder / "plant.xlsx", again=True)] for _ in range(repeat)]
        yardstick, solve, again = (_median_run(list(runs)) for runs in zip(*rounds))
        base = yardstick.times["load"] + yardstick.times["save"]
        t = solve.times
        parts = {"read": t["read"], "engine": t["engine"], "rest": t["lp"] - t["engine"], "write": t["write"]}
        total = t["read"] + t["lp"] + t["write"]
        yield (f"{f'{products}x{ingredients}x{nutrients}':<14}{book.stat().st_size / 1e6:>6.2f}{base:>8.2f}"
               f"{parts['read']:>7.2f}{parts['engine']:>8.2f}{parts['rest']:>7.2f}{parts['write']:>7.2f}{total:>8.2f}"
               f"{sum(again.times.values()):>7.2f}{solve.peak_mb:>8.0f}  {max(parts, key=parts.get)}")


def _sample_lines(folder: Path, repeat: int = 1) -> Iterator[str]:
    """Each sample: `blendkit solve` end to end (with the default HiGHS cross-check, and
    with --no-cross-check) beside openpyxl's load and save, each a whole child process
    (start, imports, work); `repeat` rounds of the three in turn, medians."""
    head = (f"{'sample':<20}{'openpyxl s':>11}{'solve s':>9}{'ratio':>8}{'no-check s':>12}{'ratio':>8}"
            f"{'o.peak':>8}{'s.peak':>8}")
    yield head
    yield "-" * len(head)
    for sample in sorted(SAMPLES.glob("*.xlsx")):
        rounds = [_sample_round(folder, sample) for _ in range(repeat)]
        yardstick, solve, unchecked = (_median_run(list(runs)) for runs in zip(*rounds))
        yield (f"{sample.stem:<20}{yardstick.seconds:>11.2f}{solve.seconds:>9.2f}"
               f"{solve.seconds / yardstick.seconds:>7.2f}x{unchecked.seconds:>12.2f}"
               f"{unchecked.seconds / yardstick.seconds:>7.2f}x{yardstick.peak_mb:>8.0f}{solve.peak_mb:>8.0f}")


def _sample_round(folder: Path, sample: Path) -> tuple[Run, Run, Run]:
    """One round of a sample: openpyxl's load and save, then the solve with and without
    the cross-check, each a new output (nothing to compare with)."""
    yardstick = measured("openpyxl", sample, folder / "copy.xlsx")
    runs = []
    for extra in ([], ["--no-cross-check"]):
        output = folder / f"{sample.stem}{len(extra)}.result.xlsx"
        output.unlink(missing_ok=True)
        argv = ["blendkit", "solve", str(sample), "-o", str(output), *extra]
        runs.append(_run_with_peak([sys.executable, "-c", PEAK_PREAMBLE + _CLI.format(argv=argv)]))
    return yardstick, *runs


def section(options: Options, sizes: Sequence[tuple[int, int]] | None = None) -> Iterator[str]:
    """The workbook family's part of the report (`options.repeat` rounds per size, default
    one; medians)."""
    repeat = options.repeat or 1
    sizes = sizes or (QUICK_BOOK_SIZES if options.quick else BOOK_SIZES)
    yield "Workbooks: openpyxl load+save (o.) beside blendkit check and solve (read, LP, write), seconds;"
    yield (f"each step in a fresh child process, medians of {repeat} round(s); peak resident memory in MB; "
           "ratio = solve / o.both")
    yield BOOK_HEAD
    yield "-" * len(BOOK_HEAD)
    with tempfile.TemporaryDirectory() as name:
        folder = Path(name)
        for ingredients, nutrients in sizes:
            yield from _book_lines(folder, ingredients, nutrients, repeat)
        yield ""
        yield ("Plant workbooks (products x ingredients x nutrients): `blendkit solve`'s parts, seconds; engine = "
               "the LP solve with ranging, rest = building the LP, analysis, HiGHS cross-check; again = the whole "
               "solve once more over its own output, from that result's basis")
        yield from _plant_book_lines(folder, QUICK_PLANT_BOOKS if options.quick else PLANT_BOOKS, repeat)
        yield ""
        yield "Samples: `blendkit solve` end to end beside a process that imports openpyxl, loads and saves"
        compile_blendkit()  # as installed: see compile_blendkit
        yield from _sample_lines(folder, repeat)
    yield ""
    yield "Start-up: the imports of a plain `blendkit solve`, each in CPU seconds (blendkit.bench.start_up)"
    yield from start_up_lines()


def main(argv: list[str] | None = None) -> None:
    """`python -m blendkit.bench.books`: the workbook family alone."""
    from blendkit.bench.report import parse_sizes

    parser = argparse.ArgumentParser(prog="python -m blendkit.bench.books",
                                     description="Time blendkit's check and solve of big workbooks beside openpyxl.")
    parser.add_argument("--sizes", type=parse_sizes, default=list(BOOK_SIZES),
                        help="comma-separated INGREDIENTSxNUTRIENTS (default 500x60,2000x200)")
    parser.add_argument("--repeat", type=int, default=1, help="rounds per size, figures their medians (default 1)")
    args = parser.parse_args(argv)
    if args.repeat < 1:
        parser.error("--repeat must be at least 1")
    for line in machine_lines():
        print(line)
    options = Options(sizes=tuple(args.sizes), seed=SEED, repeat=args.repeat, quick=False, netlib=None)
    for line in section(options, args.sizes):
        print(line, flush=True)
    print(f"load average at end {load_average()}")


if __name__ == "__main__":
    main()

"""The weekly job: many workbooks, one price list, every formula solved in parallel.

Each workbook is prepared in turn (read once, price list applied, every output path
checked); then the LPs of all of them (one per formula, or per group of products linked
by stocks) are solved in a pool of worker processes; then each workbook's formulas are
assembled, compared with its earlier result and written beside it. The outputs are the
same for any number of workers: every LP is solved by the same code on the same data,
and results are put back in their original order.
"""

from __future__ import annotations

import dataclasses
import os
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from blendkit.errors import OutputError, WorkbookError
from blendkit.model.blend import Blend
from blendkit.model.formula import Formula
from blendkit.model.prices import PriceList
from blendkit.read.package import ReadLimits
from blendkit.pipeline import Outcome, Prepared, assemble, finish, formulate_lp, lp_blends, prepare

# progress(done, total): called after each LP is solved.
Progress = Callable[[int, int], None]


@dataclass(frozen=True)
class BookResult:
    """One workbook of a batch: its outcome, or the error that stopped it."""

    book: Path
    outcome: Outcome | None = None
    error: WorkbookError | OutputError | None = None


def solve_books(
    books: list[str | Path],
    *,
    output: str | Path | None = None,
    mps_file: str | Path | None = None,
    in_place: bool = False,
    compare: str | Path | None = None,
    price_list: PriceList | None = None,
    jobs: int | None = None,
    progress: Progress | None = None,
    check: bool = True,
    limits: ReadLimits = ReadLimits(),
    start: bool = True,
) -> list[BookResult]:
    """Solve every workbook in `books` (see the module docstring), in the order given.

    A workbook with problems gets its WorkbookError and does not stop the others. Output
    paths are checked for every workbook before anything is solved: an OutputError for
    any of them is raised at once. `output`, `mps_file` and `compare` apply to a single
    workbook only. `jobs` is the number of worker processes (default: one per CPU).
    `check` re-solves every LP with HiGHS as a cross-check. `limits` bound each
    workbook's cells and unpacked size. With `start`, each workbook's LPs start from the
    optimal basis of its earlier result (`blendkit.lp.start`).
    """
    if len(books) > 1 and (output is not None or mps_file is not None or compare is not None):
        raise OutputError("-o, --export-mps and --compare name one file, so they take one workbook only")
    prepared: list[Prepared | WorkbookError] = []
    for book in books:
        try:
            prepared.append(prepare(book, output, mps_file=mps_file, in_place=in_place, price_list=price_list,
                                    limits=limits, keep_loaded=len(books) == 1, compare=compare, start=start))
        except WorkbookError as error:
            prepared.append(error)
    prepared = [_without_loaded(item, jobs) for item in prepared]
    ready = [item for item in prepared if isinstance(item, Prepared)]
    formulas = iter(_formulate_all([item.blend for item in ready], jobs, progress, check))
    results = []
    for book, item in zip(books, prepared):
        if isinstance(item, WorkbookError):
            results.append(BookResult(Path(book), error=item))
            continue
        try:
            results.append(BookResult(Path(book), outcome=finish(item, next(formulas), compare=compare)))
        except OutputError as error:
            results.append(BookResult(Path(book), error=error))
    return results


def _without_loaded(item: Prepared | WorkbookError, jobs: int | None) -> Prepared | WorkbookError:
    """`item` without its loaded workbook when its LPs go to worker processes: a forked
    worker would otherwise come to hold a copy of it (its collector touches every object),
    and the writer can load the file again at the cost of one load."""
    if not isinstance(item, Prepared) or item.loaded is None:
        return item
    parts = len(lp_blends(item.blend))
    pooled = parts > 1 and min(jobs or os.cpu_count() or 1, parts) > 1
    return dataclasses.replace(item, loaded=None) if pooled else item


def _formulate_all(blends: list[Blend], jobs: int | None, progress: Progress | None,
                   check: bool) -> list[Formula]:
    """The formula of each blend, its LPs solved in a pool of `jobs` worker processes."""
    tasks = [lp_blends(blend) for blend in blends]
    flat = [part for parts in tasks for part in parts]
    solved = solve_lps(flat, jobs, progress, check)
    formulas, at = [], 0
    for blend, parts in zip(blends, tasks):
        formulas.append(assemble(blend, solved[at : at + len(parts)]))
        at += len(parts)
    return formulas


def solve_lps(blends: list[Blend], jobs: int | None = None, progress: Progress | None = None,
              check: bool = True) -> list[Formula]:
    """`formulate_lp` of each blend (with the HiGHS cross-check when `check`), in order, in
    `jobs` worker processes (default: one per CPU; never more than there are blends; 1 runs
    them in this process)."""
    if jobs is not None and jobs < 1:
        raise ValueError(f"jobs must be 1 or more, not {jobs}")
    jobs = min(jobs or os.cpu_count() or 1, max(len(blends), 1))
    results: list[Formula | None] = [None] * len(blends)
    if jobs == 1:
        for k, blend in enumerate(blends):
            results[k] = formulate_lp(blend, check=check)
            _report(progress, k + 1, len(blends))
        return results
    # Each worker gets the blends once; tasks are runs of indices, and a formula comes
    # back without its blend (this process has it), to keep what crosses processes small.
    from concurrent.futures import ProcessPoolExecutor, as_completed  # only with workers: it costs a start-up

    size = max(1, min(_MOST_PER_TASK, len(blends) // (jobs * 4)))
    chunks = [range(start, min(start + size, len(blends))) for start in range(0, len(blends), size)]
    with ProcessPoolExecutor(max_workers=jobs, initializer=_receive, initargs=(blends, check)) as pool:
        futures = {pool.submit(_formulate_chunk, chunk): chunk for chunk in chunks}
        done = 0
        for future in as_completed(futures):
            for k, formula in zip(futures[future], future.result()):
                results[k] = dataclasses.replace(formula, blend=blends[k])
            done += len(futures[future])
            _report(progress, done, len(blends))
    return results


# At most this many LPs per task sent to a worker.
_MOST_PER_TASK = 16
# A worker's copy of the blends of the batch and of the cross-check switch (set once by
# `_receive`).
_BLENDS: list[Blend] = []
_CHECK = [True]


def _receive(blends: list[Blend], check: bool) -> None:
    """Worker start-up: keep the batch's blends and whether to cross-check."""
    _BLENDS[:] = blends
    _CHECK[0] = check


def _formulate_chunk(indices: range) -> list[Formula]:
    """In a worker: the formulas of some blends of the batch, each without its blend."""
    return [dataclasses.replace(formulate_lp(_BLENDS[k], check=_CHECK[0]), blend=None) for k in indices]


def _report(progress: Progress | None, done: int, total: int) -> None:
    """Tell the caller how far the batch is."""
    if progress is not None:
        progress(done, total)

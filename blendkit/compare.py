"""What changed since the last run: find the earlier result, compare, attach.

The earlier result is the `--compare` file when one is named, else the output workbook
about to be replaced when it holds an earlier result of the same workbook (the weekly
case: edit `feed.xlsx`, solve it again; with `--in-place`, the input itself). Its record
is read back (`blendkit.read.previous`), compared with this run's (`blendkit.lp.changes`),
and the formula gains `changes` and notes for the writers to render.
"""

from __future__ import annotations

import dataclasses
import re
from pathlib import Path

from blendkit.errors import OutputError
from blendkit.model.formula import Formula, RunInfo
from blendkit.model.record import RunRecord, run_record

# `blendkit.lp.changes` and `blendkit.read.previous` are imported where an earlier result
# is read or compared: the first run of a workbook needs neither.

# The suffixes an output or a backup adds to its input's name ("feed.result.xlsx").
_DERIVED = re.compile(r"(\.(result|backup))+$", re.IGNORECASE)


class CompareError(OutputError):
    """The `--compare` file is missing or not a blendkit output workbook."""


def base_name(name: str) -> str:
    """A workbook's name without ".xlsx" and any ".result" / ".backup" after it, in
    lower case: "Feed.result.xlsx" and "feed.xlsx" share the base "feed"."""
    stem = name[: -len(".xlsx")] if name.lower().endswith(".xlsx") else name
    return _DERIVED.sub("", stem).casefold()


def check_earlier_output(path: Path) -> None:
    """Refuse a `--compare` file that is missing, unreadable or not an output workbook
    (raises CompareError). An output of an older version, without a record, passes: the
    run then notes why nothing is compared."""
    _read_compared(Path(path))


def _read_compared(path: Path) -> tuple[RunRecord | None, tuple[str, ...]]:
    """The record of the `--compare` file, or None with a note for an output without a
    usable one; CompareError when the file is missing or no output workbook."""
    from blendkit.read.previous import NoRecord, read_run_record

    if path.is_dir():
        raise CompareError(f"{path}: is a folder; --compare names an earlier output workbook")
    if not path.is_file():
        raise CompareError(f"{path}: no such file (--compare names an earlier output workbook)")
    try:
        return read_run_record(path), ()
    except NoRecord as reason:
        if not reason.output:
            raise CompareError(f"{reason}; --compare names an earlier output workbook") from None
        return None, (f"No changes shown: {reason}.",)


def compare_with_earlier(
    formula: Formula,
    run: RunInfo,
    output: Path,
    *,
    compare: Path | None = None,
    output_data: bytes | None = None,
    earlier: tuple[RunRecord | None, tuple[str, ...]] | None = None,
) -> Formula:
    """`formula` with `changes` against the earlier result, and notes on the comparison.

    With `compare`, that output workbook is compared with whatever input it came from
    (a note says so when the input names differ); raises CompareError when it is missing
    or not an output workbook. Otherwise the existing `output` workbook (or its bytes,
    `output_data`, when it is the input solved in place) is compared when it holds an
    earlier result of the same input; a missing output is the first run, with no note.
    `earlier`: what `earlier_result` gave for these arguments, when already read.
    """
    earlier, notes = earlier if earlier is not None else earlier_result(run, Path(output), compare, output_data)
    if earlier is None:
        return _with_notes(formula, notes)
    from blendkit.lp.changes import compare_runs

    changes, compared = compare_runs(earlier, run_record(formula, run))
    return dataclasses.replace(_with_notes(formula, notes + compared), changes=changes)


def earlier_result(
    run: RunInfo, output: Path, compare: Path | None, output_data: bytes | None
) -> tuple[RunRecord | None, tuple[str, ...]]:
    """The earlier run to compare with and to start from (None when there is none to
    use), and notes; the arguments as `compare_with_earlier` takes them."""
    if compare is not None:
        earlier, notes = _read_compared(Path(compare))
        if earlier is not None and base_name(earlier.input_name) != base_name(run.input_name):
            notes += (f"Compared with {earlier.output}, a result of {earlier.input_name}, not of "
                      f"{run.input_name}, as --compare asked.",)
        return earlier, notes
    if output_data is None and not output.is_file():
        return None, ()
    earlier, notes = _read(output, output_data)
    if earlier is not None and base_name(earlier.input_name) != base_name(run.input_name):
        return None, (f"No changes shown: {output.name} held a result of {earlier.input_name}, not "
                      f"of {run.input_name}; use --compare to compare with it anyway.",)
    return earlier, notes


def _read(path: Path, data: bytes | None) -> tuple[RunRecord | None, tuple[str, ...]]:
    """The record at `path`, or None with a note when it is an output without a usable
    record (a file that is no output at all gets no note: it is simply replaced)."""
    from blendkit.read.previous import NoRecord, read_run_record

    try:
        return read_run_record(path, data), ()
    except NoRecord as reason:
        return None, ((f"No changes shown: {reason}.",) if reason.output else ())


def _with_notes(formula: Formula, notes: tuple[str, ...]) -> Formula:
    """`formula` with `notes` after its own."""
    return dataclasses.replace(formula, notes=formula.notes + notes) if notes else formula

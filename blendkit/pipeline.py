"""The whole job as library calls: read, build, solve, analyse, write.

The command line is a thin layer over these functions, so the Python API and the CLI
behave the same.
"""

from __future__ import annotations

import dataclasses
import hashlib
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from blendkit import __version__
from blendkit.lp.analyse import analyse
from blendkit.lp.build import build_lp
from blendkit.lp.diagnose import change_lines, conflict_lines, diagnose
from blendkit.engine import solve_form
from blendkit.errors import OutputError
from blendkit.model.formula import Formula, Relaxation, RunInfo
from blendkit.model.blend import Blend
from blendkit.read.package import ReadLimits
from blendkit.read.workbook import read_workbook
from blendkit.write.mps import export_mps
from blendkit.write.workbook import write_workbook
from blendkit.write.workbook.save import same_file, save_atomically


@dataclass(frozen=True)
class Outcome:
    """One solved workbook: the formula, the run facts and where the output went."""

    formula: Formula
    run: RunInfo
    output: Path


def check_workbook(book: str | Path, *, limits: ReadLimits = ReadLimits()) -> Blend:
    """Read and validate `book` without solving; raises WorkbookError on any problem
    (also when the workbook is larger than `limits` allow)."""
    return read_workbook(book, limits=limits)


def formulate(blend: Blend, *, explain: bool = True) -> Formula:
    """The least-cost formula for a validated blend.

    When the limits cannot all be met (and `explain` is on), the formula carries the
    conflicting sets of limits and the least-cost relaxation with its formula.
    """
    lp = build_lp(blend)
    formula = analyse(blend, lp, solve_form(lp.form, ranging=True))
    if formula.status != "infeasible" or not explain:
        return formula
    diagnosis = diagnose(blend, lp)
    relaxed = None
    if diagnosis.relaxed_blend is not None:
        relaxed = formulate(diagnosis.relaxed_blend, explain=False)
        if not relaxed.solved:
            relaxed = None
    return dataclasses.replace(
        formula,
        conflicts=conflict_lines(diagnosis),
        conflicts_complete=diagnosis.complete,
        relaxation=Relaxation(change_lines(diagnosis), relaxed) if diagnosis.changes else None,
    )


def default_output(book: Path) -> Path:
    """`<name>.result.xlsx` beside the input (an output solved again keeps its name)."""
    stem = book.name[: -len(".xlsx")] if book.name.lower().endswith(".xlsx") else book.stem
    if stem.lower().endswith(".result"):
        stem = stem[: -len(".result")]
    return book.with_name(f"{stem}.result.xlsx")


def _check_writable(path: Path, what: str) -> None:
    """Refuse an output path whose folder is missing or that names a folder."""
    if not path.parent.is_dir():
        raise OutputError(f"{path}: folder {path.parent} does not exist")
    if path.is_dir():
        raise OutputError(f"{path}: is a folder, not a file name for the {what}")


def check_outputs(book: Path, output: Path, mps_file: Path | None = None) -> None:
    """Refuse, before anything is solved or written, outputs that would overwrite the
    input (under any spelling or link), that name one file twice, or cannot be written."""
    if output.suffix.lower() != ".xlsx":
        raise OutputError(f"{output}: the output must be an .xlsx file")
    if same_file(output, book):
        raise OutputError(f"{output}: the output would overwrite the input workbook; choose another name with -o")
    _check_writable(output, "output workbook")
    if mps_file is None:
        return
    if same_file(mps_file, book):
        raise OutputError(f"{mps_file}: the MPS file would overwrite the input workbook; choose another name")
    if same_file(mps_file, output):
        raise OutputError(f"{mps_file}: the MPS file and the output workbook are the same file; choose two names")
    _check_writable(mps_file, "MPS file")


def backup_path(book: Path) -> Path:
    """Where `--in-place` keeps the previous file: `<name>.backup.xlsx` beside it."""
    stem = book.name[: -len(book.suffix)] if book.suffix else book.name
    return book.with_name(f"{stem}.backup{book.suffix or '.xlsx'}")


def _input_bytes(book: Path) -> bytes | None:
    """The input's bytes, read once: what is parsed, hashed and copied (None when the
    file cannot be read; the reader then reports why, with the file name)."""
    try:
        return book.read_bytes()
    except OSError:
        return None


def solve_workbook(
    book: str | Path,
    output: str | Path | None = None,
    *,
    mps_file: str | Path | None = None,
    in_place: bool = False,
    limits: ReadLimits = ReadLimits(),
) -> Outcome:
    """Read `book`, find the least-cost blend and write the output workbook.

    With `mps_file`, the blend's LP is also written there as an MPS file. With
    `in_place` (and no `output`), the output replaces `book` itself, after the previous
    file was kept as `backup_path(book)`. `limits` bound the workbook's cells and
    unpacked size (see `ReadLimits`).

    Raises WorkbookError for problems in the workbook and OutputError when the output
    cannot be written; an infeasible blend is a status of the returned formula, and
    its output workbook is still written so the reviewer sees what was tried.
    """
    book = Path(book)
    started = datetime.now(UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
    data = _input_bytes(book)
    blend = read_workbook(book, data=data, limits=limits)
    target = _target(book, output, in_place)
    check_outputs(book, target if not in_place else backup_path(book), None if mps_file is None else Path(mps_file))
    formula = formulate(blend)
    run = RunInfo(
        tool_version=__version__,
        started_utc=started,
        input_name=book.name,
        input_sha256=hashlib.sha256(data).hexdigest(),
    )
    try:
        if in_place:
            save_atomically(data, backup_path(book))
        written = write_workbook(formula, run, book, target, data=data)
    except OSError as error:
        raise OutputError(f"{target}: could not write the output workbook ({error.strerror or error})") from None
    if mps_file is not None:
        export_mps(blend, mps_file)
    return Outcome(formula=formula, run=run, output=Path(written))


def _target(book: Path, output: str | Path | None, in_place: bool) -> Path:
    """The output workbook's path: `output`, the input itself (in place) or the default."""
    if in_place and output is not None:
        raise OutputError("--in-place writes over the input workbook; it cannot be used with -o")
    if in_place:
        return book
    target = Path(output) if output is not None else default_output(book)
    if output is None and same_file(target, book):
        raise OutputError(
            f"{book}: is already an output workbook, and solving it writes over it; add --in-place "
            f"to replace it (the previous file is kept as {backup_path(book).name}), or choose "
            "another name with -o"
        )
    return target

"""The whole job as library calls: read, build, solve, analyse, write.

The command line is a thin layer over these functions, so the Python API and the CLI
behave the same.
"""

from __future__ import annotations

import dataclasses
import hashlib
import os
from collections.abc import Iterable
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path

from blendkit import __version__
from blendkit.compare import compare_with_earlier, earlier_result
from blendkit.lp.analyse import analyse
from blendkit.lp.build import build_lp
from blendkit.lp.cross_check import cross_check, cross_check_mip
from blendkit.lp.cross_check import warning as cross_check_warning
from blendkit.lp.start import basis_labels, start_basis
from blendkit.engine import solve_form
from blendkit.errors import OutputError
from blendkit.model.formula import Formula, Relaxation, RunInfo
from blendkit.model.blend import Blend
from blendkit.model.weighing import has_weigh_rules
from blendkit.model.prices import PriceList, apply_price_list
from blendkit.read.package import ReadLimits
from blendkit.read.values import name_key
from blendkit.read.workbook import read_with_workbook, read_workbook
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


def formulate(blend: Blend, *, explain: bool = True, check: bool = True) -> Formula:
    """The least-cost formula for a validated blend.

    Products that no stock links are formulated as separate LPs (see
    `blendkit.lp.split`), and the run's Formula combines them. When the limits cannot
    all be met (and `explain` is on), the formula of that LP carries the conflicting
    sets of limits and the least-cost relaxation with its formula.
    """
    return assemble(blend, [formulate_lp(part, explain=explain, check=check) for part in lp_blends(blend)])


def lp_blends(blend: Blend) -> list[Blend]:
    """The blends of the LPs that formulate `blend`: itself, or one per part of its
    products (`blendkit.lp.split`); `assemble` puts their formulas together."""
    groups = _split(blend)
    if groups is None:
        return [blend]
    from blendkit.lp.split import part_blend  # only with products: a plain blend is one LP

    return [part_blend(blend, group) for group in groups]


def assemble(blend: Blend, formulas: list[Formula]) -> Formula:
    """The run's formula from the formulas of `lp_blends(blend)`, in the same order."""
    if _split(blend) is None:
        return formulas[0]
    from blendkit.lp.combine import combine  # only with products, as in `lp_blends`
    from blendkit.lp.split import unapplied_stocks

    return combine(blend, formulas, unapplied_stocks(blend))


def _split(blend: Blend):
    """The parts to solve separately, or None when the blend is one LP as it stands."""
    if not blend.products:
        return None
    from blendkit.lp.split import parts  # only with products, as in `lp_blends`

    groups = parts(blend)
    if len(groups) <= 1 and all(product.amount is not None for product in blend.products):
        return None
    return groups


def formulate_lp(blend: Blend, *, explain: bool = True, check: bool = True) -> Formula:
    """One LP's formula, with conflicts and the least-cost relaxation when infeasible, and
    (with `check`) the same LP re-solved with HiGHS as a cross-check."""
    lp = build_lp(blend)
    start = start_basis(blend, lp, blend.start) if blend.start else None
    result = solve_form(lp.form, basis=start, ranging=True)
    if has_weigh_rules(blend) and result.status == "optimal":
        return _with_basis(formulate_weighed(blend, lp, result, check=check), blend, lp, result)
    formula = _with_basis(analyse(blend, lp, result), blend, lp, result)
    if check:
        formula = _with_cross_check(formula, cross_check(lp.form, result), result)
    if formula.status != "infeasible" or not explain:
        return formula
    from blendkit.lp.diagnose import change_lines, conflict_lines, diagnose  # only when infeasible

    diagnosis = diagnose(blend, lp)
    relaxed = None
    if diagnosis.relaxed_blend is not None:
        relaxed = formulate_lp(dataclasses.replace(diagnosis.relaxed_blend, start=()), explain=False, check=False)
        if not relaxed.solved:
            relaxed = None
    return dataclasses.replace(
        formula,
        conflicts=conflict_lines(diagnosis),
        conflicts_complete=diagnosis.complete,
        conflicts_cut_short=diagnosis.cut_short,
        relaxation=Relaxation(change_lines(diagnosis), relaxed) if diagnosis.changes else None,
    )


def _with_basis(formula: Formula, blend: Blend, lp, result) -> Formula:
    """`formula` with the LP's optimal basis for the next run to start from, and a note
    saying whether this run started from the earlier result's (`blendkit.lp.start`)."""
    notes = formula.notes
    if blend.start:
        notes += (("Started from the earlier result's optimal basis (see the engine's iterations in Run info).",)
                  if result.warm_start else
                  ("The earlier result's optimal basis did not fit this LP; it was solved from scratch.",))
    return dataclasses.replace(formula, basis=basis_labels(blend, lp, result), notes=notes)


def formulate_weighed(blend: Blend, lp, lp_result, *, check: bool = True) -> Formula:
    """The formula under the rules a mill can weigh (`blendkit.lp.practical`), for a blend
    whose LP `lp` is solved optimally as `lp_result`; with `check`, the integer program
    re-solved with HiGHS's MIP solver as a cross-check."""
    from blendkit.lp.practical import practical_formula, time_limit  # only with weighing rules

    formula, mip, result = practical_formula(blend, lp, lp_result)
    if not check or mip is None:
        return formula
    return _with_cross_check(formula, cross_check_mip(mip.form, mip.integrality, mip.semicontinuous, result,
                                                      time_limit(blend)), result)


def _with_cross_check(formula: Formula, check, result) -> Formula:
    """`formula` with its cross-check, and a warning note when the solvers disagree."""
    note = cross_check_warning(check, result.objective)
    notes = formula.notes if note is None else (note, *formula.notes)
    return dataclasses.replace(formula, cross_check=check, notes=notes)


def formulate_many(blends: Iterable[Blend], jobs: int | None = None) -> list[Formula]:
    """The formula of each blend, in the order given, as `formulate` finds it.

    The blends are formulated in `jobs` worker processes at once (default: one per CPU,
    `os.cpu_count()`; never more than there are blends); `jobs=1` formulates them one
    after another in this process. The results are the same for any `jobs`. Where worker
    processes start afresh (Windows, macOS) they import the calling script again, so a
    script calls it under ``if __name__ == "__main__":``.
    """
    blends = list(blends)
    if jobs is None:
        jobs = os.cpu_count() or 1
    if jobs < 1:
        raise ValueError(f"jobs must be 1 or more, not {jobs}")
    jobs = min(jobs, len(blends))
    if jobs <= 1:
        return [formulate(blend) for blend in blends]
    from concurrent.futures import ProcessPoolExecutor  # only with workers: it costs a start-up

    with ProcessPoolExecutor(max_workers=jobs) as pool:
        return list(pool.map(formulate, blends))


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


@dataclass(frozen=True)
class Prepared:
    """A workbook read and checked, ready to formulate: its bytes (read once), its blend
    (with any price list applied), where its outputs go and the run's facts. `loaded` is
    the workbook as the reader loaded it, for the writer to copy (so the file is parsed
    once); None when it was not kept, and the writer loads the bytes again."""

    book: Path
    data: bytes
    blend: Blend
    target: Path
    run: RunInfo
    mps_file: Path | None = None
    in_place: bool = False
    loaded: object = field(default=None, repr=False, compare=False)
    # The earlier result and notes on it (`compare.earlier_result`), read before solving so
    # that the run can start from its basis; None when not read yet.
    earlier: tuple | None = field(default=None, repr=False, compare=False)
    compared: str | Path | None = None  # the `compare` file `earlier` was read for


def prepare(
    book: str | Path,
    output: str | Path | None = None,
    *,
    mps_file: str | Path | None = None,
    in_place: bool = False,
    price_list: PriceList | None = None,
    limits: ReadLimits = ReadLimits(),
    keep_loaded: bool = True,
    compare: str | Path | None = None,
    start: bool = True,
) -> Prepared:
    """Read `book` once (within `limits`), apply `price_list`, and check every output path
    before anything is solved; raises WorkbookError or OutputError. With `keep_loaded`,
    the loaded workbook is kept for the writer (`Prepared.loaded`); a batch of many
    workbooks turns it off, so that it does not hold them all in memory at once. The
    earlier result (`compare`, else the output about to be replaced) is read now; with
    `start` its LPs start from that result's optimal basis (`blendkit.lp.start`)."""
    book = Path(book)
    started = datetime.now(UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
    data = _input_bytes(book)
    blend, loaded = read_with_workbook(book, data=data, limits=limits)
    target = _target(book, output, in_place)
    mps_path = None if mps_file is None else Path(mps_file)
    check_outputs(book, target if not in_place else backup_path(book), mps_path)
    if price_list is not None:
        blend, replaced, notes = apply_price_list(blend, price_list, name_key)
        blend = dataclasses.replace(blend, replaced=replaced, notes=(*blend.notes, *notes))
    run = RunInfo(
        tool_version=__version__,
        started_utc=started,
        input_name=book.name,
        input_sha256=hashlib.sha256(data).hexdigest(),
        price_list_name=price_list.file_name if price_list else "",
        price_list_sha256=price_list.sha256 if price_list else "",
    )
    earlier = earlier_result(run, target, None if compare is None else Path(compare), data if in_place else None)
    if start and earlier[0] is not None and earlier[0].basis:
        blend = dataclasses.replace(blend, start=earlier[0].basis)
    return Prepared(book=book, data=data, blend=blend, target=target, run=run, mps_file=mps_path,
                    in_place=in_place, loaded=loaded if keep_loaded else None, earlier=earlier, compared=compare)


def finish(prepared: Prepared, formula: Formula, *, compare: str | Path | None = None) -> Outcome:
    """Compare with the earlier result, write the output workbook (and the MPS file)."""
    target, data = prepared.target, prepared.data
    formula = compare_with_earlier(formula, prepared.run, target, compare=compare,
                                   output_data=data if prepared.in_place else None,
                                   earlier=prepared.earlier if compare == prepared.compared else None)
    try:
        if prepared.in_place:
            save_atomically(data, backup_path(prepared.book))
        written = write_workbook(formula, prepared.run, prepared.book, target, data=data,
                                 loaded=prepared.loaded)
    except OSError as error:
        raise OutputError(f"{target}: could not write the output workbook ({error.strerror or error})") from None
    if prepared.mps_file is not None:
        from blendkit.write.mps import export_mps  # only when asked: the MPS modules cost a start-up

        export_mps(prepared.blend, prepared.mps_file)
    return Outcome(formula=formula, run=prepared.run, output=Path(written))


def solve_workbook(
    book: str | Path,
    output: str | Path | None = None,
    *,
    mps_file: str | Path | None = None,
    in_place: bool = False,
    compare: str | Path | None = None,
    price_list: PriceList | None = None,
    check: bool = True,
    limits: ReadLimits = ReadLimits(),
    start: bool = True,
) -> Outcome:
    """Read `book`, find the least-cost blend and write the output workbook.

    With `mps_file`, the blend's LP is also written there as an MPS file. With
    `in_place` (and no `output`), the output replaces `book` itself, after the previous
    file was kept as `backup_path(book)`. The formula carries what changed since the
    earlier result (`blendkit.compare`): the `compare` output workbook, else the output
    about to be replaced when it holds a result of the same workbook. With `price_list`,
    its values replace the workbook's before solving (the file is never modified). With
    `check` (the default) every LP is also re-solved with HiGHS as a cross-check.
    `limits` bound the workbook's cells and unpacked size (see `ReadLimits`). With `start`
    (the default) its LPs start from the earlier result's optimal basis, when there is one.

    Raises WorkbookError for problems in the workbook and OutputError when the output
    cannot be written; an infeasible blend is a status of the returned formula, and
    its output workbook is still written so the reviewer sees what was tried.
    """
    prepared = prepare(book, output, mps_file=mps_file, in_place=in_place, price_list=price_list,
                       limits=limits, compare=compare, start=start)
    return finish(prepared, formulate(prepared.blend, check=check), compare=compare)


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

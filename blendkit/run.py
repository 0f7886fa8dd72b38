"""What `blendkit solve` does, as one library call: read the price list, check the
overview's path, solve every workbook (`blendkit.batch`), write the overview workbook."""

from __future__ import annotations

from pathlib import Path

from blendkit.batch import BookResult, Progress, solve_books
from blendkit.errors import OutputError
from blendkit.pipeline import same_file
from blendkit.read.package import ReadLimits
from blendkit.read.prices import read_price_list
from blendkit.write.overview_book import write_overview


def solve_run(
    books: list[str | Path],
    *,
    output: str | Path | None = None,
    mps_file: str | Path | None = None,
    in_place: bool = False,
    compare: str | Path | None = None,
    prices: str | Path | None = None,
    overview: str | Path | None = None,
    jobs: int | None = None,
    progress: Progress | None = None,
    check: bool = True,
    limits: ReadLimits = ReadLimits(),
) -> list[BookResult]:
    """Solve `books` with the price list `prices` (if any) and write the `overview`
    workbook (if asked), cross-checking every LP with HiGHS unless `check` is off; raises WorkbookError for a bad price list and OutputError for
    an output path that cannot be used. `limits` bound each workbook's cells and unpacked
    size (and the price list's)."""
    books = [Path(book) for book in books]
    if overview is not None:
        _check_overview(Path(overview), books, prices)
    price_list = read_price_list(prices, limits=limits) if prices is not None else None
    results = solve_books(books, output=output, mps_file=mps_file, in_place=in_place, compare=compare,
                          price_list=price_list, jobs=jobs, progress=progress, check=check, limits=limits)
    if overview is not None:
        try:
            write_overview(results, Path(overview))
        except OSError as error:
            raise OutputError(f"{overview}: could not write the overview ({error.strerror or error})") from None
    return results


def _check_overview(path: Path, books: list[Path], prices: str | Path | None) -> None:
    """Refuse an overview path that is not an .xlsx file, names an input, or cannot be
    written."""
    if path.suffix.lower() != ".xlsx":
        raise OutputError(f"{path}: the overview must be an .xlsx file")
    for other in [*books, *([Path(prices)] if prices is not None else [])]:
        if same_file(path, other):
            raise OutputError(f"{path}: the overview would overwrite the input {other}; choose another name")
    if not path.parent.is_dir():
        raise OutputError(f"{path}: folder {path.parent} does not exist")
    if path.is_dir():
        raise OutputError(f"{path}: is a folder, not a file name for the overview")

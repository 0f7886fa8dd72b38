"""What `blendkit solve` does, as one library call: read the price list, check the
overview's path, solve every workbook (`blendkit.batch`), write the overview workbook."""

from __future__ import annotations

from pathlib import Path

from blendkit.batch import BookResult, Progress, solve_books
from blendkit.errors import OutputError, UsageError
from blendkit.pipeline import same_file
from blendkit.read.package import ReadLimits


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
    start: bool = True,
) -> list[BookResult]:
    """Solve `books` with the price list `prices` (if any) and write the `overview`
    workbook (if asked), cross-checking every LP with HiGHS unless `check` is off; raises WorkbookError for a bad price list and OutputError for
    an output path that cannot be used. `limits` bound each workbook's cells and unpacked
    size (and the price list's). With `start` each LP starts from the optimal basis of
    its workbook's earlier result."""
    books = [Path(book) for book in books]
    if overview is not None:
        _check_overview(Path(overview), books, prices)
    price_list = None
    if prices is not None:
        from blendkit.read.prices import read_price_list  # only when asked: each module costs a start-up

        price_list = read_price_list(prices, limits=limits)
    results = solve_books(books, output=output, mps_file=mps_file, in_place=in_place, compare=compare,
                          price_list=price_list, jobs=jobs, progress=progress, check=check, limits=limits,
                          start=start)
    if overview is not None:
        from blendkit.write.overview_book import write_overview  # only when asked

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


def sweep_run(
    book: str | Path,
    *,
    ingredient: str | None = None,
    spec: str | None = None,
    start: float | None = None,
    end: float | None = None,
    product: str | None = None,
    output: str | Path | None = None,
):
    """`blendkit sweep`: sweep an ingredient's price (default range 0 to twice today's) or
    a spec bound ("NUTRIENT min|max", range required) and write `<name>.sweep.xlsx`.

    Returns the Sweep and the output path; raises WorkbookError, OutputError, or
    UsageError for a name the workbook lacks or a range that is not a range."""
    from blendkit.lp.sweep import sweep_bound, sweep_price
    from blendkit.model.weighing import has_weigh_rules
    from blendkit.pipeline import check_outputs, read_workbook
    from blendkit.write.sweep_book import write_sweep_book

    book = Path(book)
    data = book.read_bytes() if book.is_file() else None
    blend = read_workbook(book, data=data)
    target = Path(output) if output is not None else book.with_name(f"{_stem(book)}.sweep.xlsx")
    check_outputs(book, target)
    if has_weigh_rules(blend):
        raise UsageError("a sweep follows the LP from breakpoint to breakpoint and cannot apply the weighing rules "
                         "(Min if used, Pack size, Scale step, Max ingredients) this workbook has; solve it with "
                         "different prices instead, or sweep a copy without those rules")
    if (ingredient is None) == (spec is None):
        raise UsageError("name one thing to sweep: --ingredient NAME or --spec \"NUTRIENT min|max\"")
    if product is not None and product not in [p.name for p in blend.products]:
        raise UsageError(f"no product {product!r} on the Products sheet")
    if ingredient is not None:
        item = _ingredient(blend, ingredient)
        low, high = (0.0 if start is None else start), (2 * max(item.cost, 1.0) if end is None else end)
        _check_range(low, high)
        sweep = sweep_price(blend, item.name, low, high, product)
    else:
        nutrient, side = _spec(blend, spec)
        if start is None or end is None:
            raise UsageError("a spec sweep needs --from and --to")
        _check_range(start, end)
        try:
            sweep = sweep_bound(blend, nutrient, side, start, end, product)
        except ValueError as error:
            raise UsageError(str(error)) from None
    title = blend.settings.name or book.stem
    return sweep, write_sweep_book(sweep, data, target, title)


def _stem(book: Path) -> str:
    """The workbook's name without .xlsx (and without .result)."""
    stem = book.name[: -len(".xlsx")] if book.name.lower().endswith(".xlsx") else book.stem
    return stem[: -len(".result")] if stem.lower().endswith(".result") else stem


def _ingredient(blend, name: str):
    """The ingredient called `name` (ignoring case and spaces), or UsageError."""
    key = " ".join(name.split()).casefold()
    for item in blend.ingredients:
        if " ".join(item.name.split()).casefold() == key:
            return item
    raise UsageError(f"no ingredient {name!r} in the workbook")


def _spec(blend, text: str) -> tuple[str, str]:
    """("Crude protein", "min") from "Crude protein min", checked against the specs."""
    words = text.split()
    if len(words) < 2 or words[-1].lower() not in ("min", "max"):
        raise UsageError(f'--spec takes "NUTRIENT min" or "NUTRIENT max", not {text!r}')
    name, side = " ".join(words[:-1]), words[-1].lower()
    key = name.casefold()
    for nutrient in blend.nutrients:
        if " ".join(nutrient.split()).casefold() == key:
            return nutrient, side
    raise UsageError(f"no nutrient column {name!r} in the workbook")


def _check_range(low: float, high: float) -> None:
    """A sweep runs from a lower value to a higher one."""
    if not low < high:
        raise UsageError(f"--from {low:g} must be below --to {high:g}")

"""The command line: parse arguments, call one library function, render the result.

Exit codes: 0 solved (or, for `check`, valid); 1 problems in the workbook;
2 bad command-line use or an output that cannot be written; 3 the blend is infeasible
or unbounded; 4 the engine stopped without an answer (iteration limit, numerical trouble).
"""

from __future__ import annotations

import json
from contextlib import contextmanager
from pathlib import Path

import typer

from blendkit import __version__
from blendkit.start import imported
from blendkit.authoring import EXAMPLE_NAMES
from blendkit.errors import OutputError, UsageError, WorkbookError
from blendkit.read.package import DEFAULT_MAX_CELLS, DEFAULT_MAX_UNPACKED_MB, ReadLimits

# Each command imports the library it needs when it runs, so that `blendkit --help` and
# start-up stay fast (numpy, scipy and openpyxl are loaded only to do work).

EXIT_SOLVED = 0
EXIT_WORKBOOK = 1
EXIT_USAGE = 2
EXIT_NO_BLEND = 3
EXIT_ENGINE = 4
# The reader's limits, shared by solve and check.
MAX_CELLS = typer.Option(
    DEFAULT_MAX_CELLS, "--max-cells", metavar="N", min=1,
    help="Refuse a workbook with more than N cells in all its sheets, formatted empty cells included.",
)
MAX_UNPACKED_MB = typer.Option(
    DEFAULT_MAX_UNPACKED_MB, "--max-unpacked-mb", metavar="MB", min=0.001,
    help="Refuse a workbook whose parts unpack to more than MB megabytes.",
)
STATUS_EXIT = {"optimal": EXIT_SOLVED, "infeasible": EXIT_NO_BLEND, "unbounded": EXIT_NO_BLEND}

class _Command(typer.core.TyperCommand):
    """Usage lines and help in plain words: arguments by their names ("BOOK..."), without
    braces or type labels such as "<list[Path]>"."""

    def get_params(self, ctx) -> list:
        """The parameters, each argument told to show no type label in the help."""
        params = super().get_params(ctx)
        for param in params:
            if param.param_type_name == "argument":
                param.display_type_rich = lambda ctx: ""
        return params

    def collect_usage_pieces(self, ctx) -> list[str]:
        """[OPTIONS] then each argument's metavar as written."""
        pieces = [self.options_metavar] if self.options_metavar else []
        for param in self.get_params(ctx):
            if param.param_type_name == "argument":
                pieces.append(param.metavar or param.name.upper())
        return pieces


app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
    help="Least-cost blends from a spreadsheet. Caution: formulations must be checked by a "
    "qualified nutritionist (or, for fertilizer, an agronomist) and against local regulations "
    "before use.",
)


def _version(value: bool) -> None:
    """Print the version for --version."""
    if value:
        typer.echo(f"blendkit {__version__}")
        raise typer.Exit()


@app.callback()
def _main(
    version: bool = typer.Option(False, "--version", callback=_version, is_eager=True, help="Show the version and exit."),
) -> None:
    """Least-cost blends from a spreadsheet."""


@contextmanager
def _reporting(as_json: bool):
    """Turn input and output errors into a message and an exit code, never a traceback."""
    try:
        yield
    except WorkbookError as error:
        if as_json:
            problems = [{"where": p.where, "message": p.message} for p in error.problems]
            typer.echo(json.dumps({"status": "workbook_error", "problems": problems}, indent=2))
        else:
            typer.echo(error.describe(), err=True)
        raise typer.Exit(EXIT_WORKBOOK) from None
    except OutputError as error:
        if as_json:
            typer.echo(json.dumps({"status": "output_error", "message": str(error)}, indent=2))
        else:
            typer.echo(f"cannot write the output: {error}", err=True)
        raise typer.Exit(EXIT_USAGE) from None
    except UsageError as error:
        if as_json:
            typer.echo(json.dumps({"status": "usage_error", "message": str(error)}, indent=2))
        else:
            typer.echo(str(error), err=True)
        raise typer.Exit(EXIT_USAGE) from None


def _earlier_output(path: Path | None) -> Path | None:
    """Refuse a --compare file that is missing or not an output workbook (exit 2)."""
    if path is not None:
        from blendkit.compare import check_earlier_output

        try:
            check_earlier_output(path)
        except OutputError as error:
            raise typer.BadParameter(str(error)) from None
    return path


@app.command(cls=_Command)
def solve(
    books: list[Path] = typer.Argument(..., metavar="BOOK...", help="The input workbooks (.xlsx); they are never modified (unless --in-place)."),
    output: Path = typer.Option(None, "-o", "--output", metavar="OUT", help="Where to write the output workbook, with one BOOK (default: BOOK.result.xlsx beside each input)."),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON document on stdout instead of the summary."),
    export_mps: Path = typer.Option(None, "--export-mps", metavar="FILE", help="Also write the blend's LP to this MPS file, for re-solving with any LP solver (one BOOK)."),
    in_place: bool = typer.Option(False, "--in-place", help="Write the output over BOOK itself (to solve an output workbook again), keeping the previous file as BOOK.backup.xlsx."),
    compare: Path = typer.Option(None, "--compare", metavar="OLD", callback=_earlier_output, help="Show what changed since the earlier output workbook OLD (default: the output being replaced, when it holds a result of the same workbook)."),
    prices: Path = typer.Option(None, "--prices", metavar="PRICES", help="A workbook whose Ingredients sheet (Ingredient, Cost, nutrients, Stock) replaces those values in every BOOK before solving."),
    overview: Path = typer.Option(None, "--overview", metavar="FILE", help="Also write one workbook summarising every book and formula of the run."),
    jobs: int = typer.Option(None, "--jobs", min=1, metavar="N", help="Solve in N worker processes (default: one per CPU); the results are the same for any N."),
    cross_check: bool = typer.Option(True, "--cross-check/--no-cross-check", help="Re-solve every LP with HiGHS (through highspy) and record the difference (default: on)."),
    from_scratch: bool = typer.Option(False, "--from-scratch", help="Solve from scratch, not from the optimal basis of the earlier result (the output being replaced, or --compare OLD)."),
    max_cells: int = MAX_CELLS,
    max_unpacked_mb: float = MAX_UNPACKED_MB,
) -> None:
    """Find the least-cost formulas of one or more workbooks and write an output beside each."""
    from blendkit.run import solve_run
    from blendkit.write.progress import progress_bar

    imported()

    with _reporting(as_json):
        results = solve_run(books, output=output, mps_file=export_mps, in_place=in_place, compare=compare,
                            prices=prices, overview=overview, jobs=jobs, progress=progress_bar(as_json),
                            check=cross_check, start=not from_scratch,
                            limits=ReadLimits(max_cells=max_cells, max_unpacked_mb=max_unpacked_mb))
    if len(results) == 1 and results[0].error is not None:
        with _reporting(as_json):
            raise results[0].error
    _render(results, as_json)
    if not as_json and len(results) == 1:
        typer.echo(f"\nOutput workbook: {results[0].outcome.output}")
    raise typer.Exit(max(_exit_code(result) for result in results))


def _render(results, as_json: bool) -> None:
    """Print the run: one JSON document, or the summary of one book, or a line per book
    (each renderer imported only when it is the one used)."""
    if as_json:
        if len(results) > 1:
            from blendkit.write.books import books_to_dict

            document = books_to_dict(results)
        else:
            from blendkit.write.json import formula_to_dict

            document = formula_to_dict(results[0].outcome.formula)
        typer.echo(json.dumps(document, indent=2))
    elif len(results) > 1:
        from blendkit.write.books import books_to_text

        typer.echo(books_to_text(results))
    else:
        from blendkit.write.console import render_summary

        typer.echo(render_summary(results[0].outcome.formula))


def _exit_code(result) -> int:
    """One book's exit code: 1 workbook problems, 2 output error, else by status."""
    if result.error is not None:
        return EXIT_WORKBOOK if isinstance(result.error, WorkbookError) else EXIT_USAGE
    return STATUS_EXIT.get(result.outcome.formula.status, EXIT_ENGINE)


@app.command(cls=_Command)
def check(
    book: Path = typer.Argument(..., metavar="BOOK", help="The workbook (.xlsx) to validate."),
    max_cells: int = MAX_CELLS,
    max_unpacked_mb: float = MAX_UNPACKED_MB,
) -> None:
    """Validate a workbook without solving it."""
    from blendkit.pipeline import check_workbook

    imported()

    with _reporting(False):
        blend = check_workbook(book, limits=ReadLimits(max_cells=max_cells, max_unpacked_mb=max_unpacked_mb))
    typer.echo(
        f"{book.name}: no problems found: {_count(blend.ingredients, 'ingredient')}, "
        f"{_count(blend.nutrients, 'nutrient')}, {_count(blend.specs, 'spec')}."
    )
    for note in blend.notes:
        typer.echo(f"  {note}")
    for item in blend.ingredients:
        if item.use and item.blanks:
            cells = "cell" if len(item.blanks) == 1 else "cells"
            typer.echo(f"  {item.name}: {len(item.blanks)} blank nutrient {cells} counted as 0 ({', '.join(item.blanks)})")


@app.command(cls=_Command)
def sweep(
    book: Path = typer.Argument(..., metavar="BOOK", help="The input workbook (.xlsx); it is never modified."),
    ingredient: str = typer.Option(None, "--ingredient", metavar="NAME", help="Sweep this ingredient's price (in every product, or in --product)."),
    spec: str = typer.Option(None, "--spec", metavar='"NUTRIENT min|max"', help="Sweep this bound of an as-fed spec."),
    start: float = typer.Option(None, "--from", metavar="V1", help="Where the sweep starts (a price: default 0)."),
    end: float = typer.Option(None, "--to", metavar="V2", help="Where the sweep ends (a price: default twice today's)."),
    product: str = typer.Option(None, "--product", metavar="NAME", help="With products: sweep in this product alone."),
    output: Path = typer.Option(None, "-o", "--output", metavar="OUT", help="Where to write the workbook (default: BOOK.sweep.xlsx beside the input)."),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON document on stdout instead of the table."),
) -> None:
    """Find every breakpoint as one price or one spec bound moves over a range."""
    from blendkit.run import sweep_run
    from blendkit.write.sweep_book import sweep_text, sweep_to_dict

    imported()

    with _reporting(as_json):
        found, written = sweep_run(book, ingredient=ingredient, spec=spec, start=start, end=end,
                                   product=product, output=output)
    if as_json:
        typer.echo(json.dumps(sweep_to_dict(found), indent=2))
    else:
        typer.echo(sweep_text(found))
        typer.echo(f"\nOutput workbook: {written}")


def _count(items, word: str) -> str:
    """ "1 spec", "2 specs"."""
    return f"{len(items)} {word}{'' if len(items) == 1 else 's'}"


@app.command(cls=_Command)
def new(
    path: Path = typer.Argument(..., metavar="PATH", help="Where to write the new workbook (.xlsx); an existing file is never replaced."),
    example: str = typer.Option(None, "--example", metavar="NAME", help=f"Write a worked example instead of the blank template: {', '.join(EXAMPLE_NAMES)}."),
) -> None:
    """Write a blank workbook template, or a worked example, to start from."""
    from blendkit.authoring.template import write_new

    imported()

    if path.suffix.lower() != ".xlsx":
        typer.echo(f"{path}: the new workbook must be an .xlsx file", err=True)
        raise typer.Exit(EXIT_USAGE)
    try:
        written = write_new(path, example)
    except KeyError:
        typer.echo(f"no example called {example!r}; the examples are: {', '.join(EXAMPLE_NAMES)}", err=True)
        raise typer.Exit(EXIT_USAGE) from None
    except FileExistsError:
        typer.echo(f"{path}: already exists; blendkit new never replaces a file, choose another name", err=True)
        raise typer.Exit(EXIT_USAGE) from None
    except OSError as error:
        typer.echo(f"{path}: could not write the workbook ({error.strerror or error})", err=True)
        raise typer.Exit(EXIT_USAGE) from None
    if example:
        typer.echo(f"Wrote the {example} example to {written}. Solve it with: blendkit solve {written}")
    else:
        typer.echo(f"Wrote a blank template to {written}. Fill it in, then run: blendkit solve {written}")


def main() -> None:
    """Entry point kept for callers of `blendkit.cli:main`; see `blendkit.start.main`."""
    from blendkit.start import main as start

    start()

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
from blendkit.errors import OutputError, WorkbookError
from blendkit.authoring.examples import EXAMPLES
from blendkit.authoring.template import write_new
from blendkit.pipeline import check_workbook, solve_workbook
from blendkit.read.package import DEFAULT_MAX_CELLS, DEFAULT_MAX_UNPACKED_MB, ReadLimits
from blendkit.write.console import render_summary
from blendkit.write.json import formula_to_dict

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

app = typer.Typer(
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
    help="Least-cost blends from a spreadsheet. Caution: formulations must be checked by a "
    "qualified nutritionist and against local regulations before use.",
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


@app.command()
def solve(
    book: Path = typer.Argument(..., metavar="BOOK", help="The input workbook (.xlsx); it is never modified (unless --in-place)."),
    output: Path = typer.Option(None, "-o", "--output", metavar="OUT", help="Where to write the output workbook (default: BOOK.result.xlsx beside the input)."),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON document on stdout instead of the summary."),
    export_mps: Path = typer.Option(None, "--export-mps", metavar="FILE", help="Also write the blend's LP to this MPS file, for re-solving with any LP solver."),
    in_place: bool = typer.Option(False, "--in-place", help="Write the output over BOOK itself (to solve an output workbook again), keeping the previous file as BOOK.backup.xlsx."),
    max_cells: int = MAX_CELLS,
    max_unpacked_mb: float = MAX_UNPACKED_MB,
) -> None:
    """Find the least-cost blend and write the output workbook."""
    limits = ReadLimits(max_cells=max_cells, max_unpacked_mb=max_unpacked_mb)
    with _reporting(as_json):
        outcome = solve_workbook(book, output, mps_file=export_mps, in_place=in_place, limits=limits)
    if as_json:
        typer.echo(json.dumps(formula_to_dict(outcome.formula), indent=2))
    else:
        typer.echo(render_summary(outcome.formula))
        typer.echo(f"\nOutput workbook: {outcome.output}")
    raise typer.Exit(STATUS_EXIT.get(outcome.formula.status, EXIT_ENGINE))


@app.command()
def check(
    book: Path = typer.Argument(..., metavar="BOOK", help="The workbook (.xlsx) to validate."),
    max_cells: int = MAX_CELLS,
    max_unpacked_mb: float = MAX_UNPACKED_MB,
) -> None:
    """Validate a workbook without solving it."""
    with _reporting(False):
        blend = check_workbook(book, limits=ReadLimits(max_cells=max_cells, max_unpacked_mb=max_unpacked_mb))
    typer.echo(
        f"{book.name}: no problems found: {len(blend.ingredients)} ingredients, "
        f"{len(blend.nutrients)} nutrients, {len(blend.specs)} specs."
    )
    for note in blend.notes:
        typer.echo(f"  {note}")
    for item in blend.ingredients:
        if item.use and item.blanks:
            typer.echo(f"  {item.name}: {len(item.blanks)} blank nutrient cells counted as 0 ({', '.join(item.blanks)})")


@app.command()
def new(
    path: Path = typer.Argument(..., metavar="PATH", help="Where to write the new workbook (.xlsx); an existing file is never replaced."),
    example: str = typer.Option(None, "--example", help=f"Write a worked example instead of the blank template: {', '.join(EXAMPLES)}."),
) -> None:
    """Write a blank workbook template, or a worked example, to start from."""
    if path.suffix.lower() != ".xlsx":
        typer.echo(f"{path}: the new workbook must be an .xlsx file", err=True)
        raise typer.Exit(EXIT_USAGE)
    try:
        written = write_new(path, example)
    except KeyError:
        typer.echo(f"no example called {example!r}; the examples are: {', '.join(EXAMPLES)}", err=True)
        raise typer.Exit(EXIT_USAGE) from None
    except FileExistsError:
        typer.echo(f"{path}: already exists; blendkit new never replaces a file, choose another name", err=True)
        raise typer.Exit(EXIT_USAGE) from None
    except OSError as error:
        typer.echo(f"{path}: could not write the workbook ({error.strerror or error})", err=True)
        raise typer.Exit(EXIT_USAGE) from None
    what = f"the {example} example" if example else "a blank template"
    typer.echo(f"Wrote {what} to {written}. Fill it in, then run: blendkit solve {written}")


def main() -> None:
    """Entry point kept for callers of `blendkit.cli:main`; see `blendkit.start.main`."""
    from blendkit.start import main as start

    start()

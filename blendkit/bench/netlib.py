"""The NETLIB family: the classic LP test problems, read from MPS files, by both solvers.

The problems are solved when the reference folder and the MPS reader are both there;
otherwise a line says why they were skipped. Reading the file is left out of the times
on both sides: ours times `solve_form` on the parsed model, HiGHS (through highspy, see
`blendkit.bench.highs`) times passing its own parse of the file to a fresh solver plus
`run()`.
"""

from __future__ import annotations

import statistics
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path

from blendkit.bench.highs import highspy_module, model_status, silent_highs
from blendkit.bench.options import Options
from blendkit.bench.timing import agreement, timed
from blendkit.engine import solve_form

NETLIB_REPEATS = 5


@dataclass(frozen=True)
class NetlibRow:
    """Both solvers on one NETLIB problem."""

    name: str
    rows: int
    cols: int
    status: str
    objective: float | None
    highs_status: str
    highs_objective: float | None
    ours_seconds: float
    highs_seconds: float
    iterations: int
    agrees: str  # empty when the answers agree, else what differs
    message: str = ""  # our engine's message

    @property
    def ratio(self) -> float:
        """Our time over HiGHS's."""
        return self.ours_seconds / self.highs_seconds if self.highs_seconds > 0 else float("inf")


def netlib_folder(explicit: str | None) -> Path:
    """`--netlib DIR`, or ../shared/reference/netlib beside the repository."""
    if explicit:
        return Path(explicit)
    # This file is <repository>/blendkit/bench/netlib.py.
    return Path(__file__).resolve().parents[3] / "shared" / "reference" / "netlib"


def solve_netlib(path: Path, repeat: int, mps) -> NetlibRow:
    """Read one MPS file with each solver's reader, then time the solves alone."""
    highspy = highspy_module()
    model = mps.read(path)
    result, t_ours = timed(lambda: solve_form(model.form), repeat)
    objective = None if result.objective is None else result.objective + model.objective_constant
    reader = silent_highs()
    reader.readModel(str(path))
    lp = reader.getLp()

    def highs_run():
        h = highspy.Highs()
        h.setOptionValue("output_flag", False)
        h.passModel(lp)
        h.run()
        return h

    h, t_highs = timed(highs_run, repeat)
    h_status = model_status(h)
    h_objective = h.getInfo().objective_function_value if h_status == "optimal" else None
    m, n = model.form.shape
    return NetlibRow(
        name=getattr(model, "name", "") or path.stem.upper(),
        rows=m,
        cols=n,
        status=result.status,
        objective=objective,
        highs_status=h_status,
        highs_objective=h_objective,
        ours_seconds=t_ours,
        highs_seconds=t_highs,
        iterations=result.iterations,
        agrees=agreement(result.status, objective, h_status, h_objective),
        message=result.message,
    )


def run_netlib(folder: Path, repeat: int) -> tuple[list[NetlibRow], list[str]]:
    """Every *.mps in `folder`, by both solvers; and lines saying what was skipped and why.

    Raises MissingHighspy, before solving anything, when highspy is not installed.
    """
    if not folder.is_dir():
        return [], [f"NETLIB skipped: no folder {folder}"]
    try:
        from blendkit.engine import mps
    except Exception as error:  # should the MPS reader fail to import, say why
        return [], [f"NETLIB skipped: blendkit.engine.mps is not importable ({type(error).__name__}: {error})"]
    highspy_module()  # a missing highspy ends the run with its message, not one failure per file
    rows, notes = [], []
    paths = sorted(p for p in folder.iterdir() if p.suffix.lower() == ".mps")
    for path in paths:
        try:
            rows.append(solve_netlib(path, repeat, mps))
        except Exception as error:  # one bad file must not end the benchmark
            notes.append(f"{path.name}: failed: {type(error).__name__}: {error}")
    if not paths:
        notes.append(f"NETLIB skipped: no .mps files in {folder}")
    return rows, notes


def _number(value: float | None) -> str:
    """An objective for the table: ten significant digits, or '-' when there is none."""
    return "-" if value is None else f"{value:.10g}"


def netlib_lines(rows: Sequence[NetlibRow]) -> list[str]:
    """The NETLIB table: one line per problem, times in milliseconds."""
    head = (f"{'problem':<10}{'rows':>6}{'cols':>6}  {'status':<12}{'objective':>18}{'HiGHS objective':>18}"
            f"{'ours ms':>10}{'HiGHS ms':>10}{'ours/HiGHS':>12}{'iters':>7}  agree")
    lines = [head, "-" * len(head)]
    for r in rows:
        lines.append(
            f"{r.name:<10}{r.rows:>6}{r.cols:>6}  {r.status:<12}{_number(r.objective):>18}{_number(r.highs_objective):>18}"
            f"{r.ours_seconds * 1e3:>10.2f}{r.highs_seconds * 1e3:>10.2f}{r.ratio:>11.2f}x{r.iterations:>7}  "
            + ("yes" if not r.agrees else f"NO: {r.agrees}")
        )
        if r.agrees:
            lines.append(f"    ours said: {r.message}")
    if rows:
        ratios = [r.ratio for r in rows]
        lines.append(f"median ratio ours/HiGHS {statistics.median(ratios):.2f}x; "
                     f"mismatches {sum(1 for r in rows if r.agrees)} of {len(rows)}")
    return lines


def section(options: Options) -> Iterator[str]:
    """The NETLIB family's part of the report: the table, then any skipped or failed files."""
    yield "NETLIB: ours = solve_form on the parsed model; HiGHS = passModel + run on its own parse"
    repeat = 1 if options.quick else (options.repeat if options.repeat is not None else NETLIB_REPEATS)
    problems, notes = run_netlib(netlib_folder(options.netlib), repeat)
    if problems:
        yield from netlib_lines(problems)
    yield from notes

"""Benchmark: our engine beside HiGHS on blend-shaped LPs and on NETLIB problems.

Run ``python -m blendkit.bench`` (``--quick`` for a fast look). This measures, it does not
test: it prints the machine, then one section per benchmark family, each timing our
`blendkit.engine` beside HiGHS on the same LPs and counting the answers that disagree.
It needs highspy (a dependency of blendkit, for its cross-check); an installation without
it makes the command say so on one line and exit 2. Importing this package does not need it.

One module per concern:

    blends.py     the blend family: the random blend LP generator (make_blend,
                  price_sweep, bound_sweep, infeasible_blend) and its table (cold solves,
                  price sweeps cold, warm-started and re-solved, limit changes re-solved)
    resolves.py   re-solves of one LP after each change of a series: our Resolver beside
                  highspy keeping its model, both told only what changed
    plant.py      the plant family: one joint LP of several products sharing ingredient
                  stocks (make_plant), 5 to 60 products, beside linprog and highspy
    diagnosis.py  the diagnosis family: conflict diagnosis of infeasible blends
    netlib.py     the NETLIB family: MPS files read and solved by both solvers
    mip.py        the MIP family: blends with a minimum if used and at most 10 ingredients, and
                  the broiler starter on a 0.5 kg scale step, beside scipy.optimize.milp
    books.py      the workbook family: big generated workbooks checked and solved beside
                  openpyxl's load and save of the same file, and the samples end to end, each
                  step in a child process (peak memory from os.wait4); alone with
                  python -m blendkit.bench.books
    start_up.py   where the start-up of `blendkit solve` goes, import by import (CPU
                  seconds, each step in child processes), printed after the samples
    timing.py     shared by the families: timed, agreement, measure and its table
    highs.py      highspy, imported only when needed, with the missing-highspy message, and
                  linprog's arguments as a HighsLp for timing highspy directly
    machine.py    the machine lines: processor, cores, versions, load average
    options.py    Options, the settings of one run
    report.py     run (the machine, then the families in order) and main (the command line)

A new benchmark family is one more module with ``section(options)`` yielding its lines,
listed in `blendkit.bench.report.FAMILIES`.
"""

from blendkit.bench.blends import BlendInstance, bound_sweep, infeasible_blend, make_blend, price_sweep
from blendkit.bench.diagnosis import diagnosis_lines
from blendkit.bench.highs import MissingHighspy
from blendkit.bench.machine import machine_lines
from blendkit.bench.netlib import NetlibRow, netlib_folder, netlib_lines, run_netlib, solve_netlib
from blendkit.bench.options import Options
from blendkit.bench.report import DEFAULT_SEED, DEFAULT_SIZES, FAMILIES, main, parse_sizes, run
from blendkit.bench.timing import OBJECTIVE_RTOL, Measurement, agreement, measure, measurement_lines, timed

__all__ = [
    "DEFAULT_SEED",
    "DEFAULT_SIZES",
    "FAMILIES",
    "OBJECTIVE_RTOL",
    "BlendInstance",
    "Measurement",
    "MissingHighspy",
    "NetlibRow",
    "Options",
    "agreement",
    "bound_sweep",
    "diagnosis_lines",
    "infeasible_blend",
    "machine_lines",
    "main",
    "make_blend",
    "measure",
    "measurement_lines",
    "netlib_folder",
    "netlib_lines",
    "parse_sizes",
    "price_sweep",
    "run",
    "run_netlib",
    "solve_netlib",
    "timed",
]

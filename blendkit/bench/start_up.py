"""Where the start-up of `blendkit solve` goes: the libraries a plain solve imports, each
timed in a fresh child process after the ones before it (what they share is counted once,
at its first import), in CPU seconds (less disturbed by other processes than wall time),
medians of several rounds. The last lines measure the alternative to scipy.optimize for
the HiGHS cross-check, highspy (a test dependency only, not a runtime one), after the
same steps without scipy.optimize.

This measures imports alone, not the work: the samples lines of `blendkit.bench.books`
time the whole command. Python itself (the interpreter starting, no import) is the first
line; numpy and openpyxl are what the openpyxl yardstick imports as well (openpyxl loads
numpy when it is installed).
"""

from __future__ import annotations

import compileall
import json
import statistics
import subprocess
import sys
from collections.abc import Iterator
from pathlib import Path

# (what, the import statement), in the order a plain `blendkit solve` first needs them.
STEPS = (
    ("typer (the command line)", "import typer"),
    ("pydantic, through typer's argument checks", "import typer._adapters"),
    ("numpy and openpyxl (the yardstick imports both)", "import numpy, openpyxl"),
    ("scipy.sparse and scipy.linalg (the engine)", "import scipy.sparse, scipy.linalg, scipy.sparse.linalg"),
    ("blendkit's own modules", "import blendkit.cli, blendkit.run, blendkit.write.console, blendkit.write.progress"),
    ("scipy.optimize (the HiGHS cross-check)", "import scipy.optimize"),
)
# Instead of the last step: the HiGHS solver through its own Python package.
ALTERNATIVE = ("highspy instead of scipy.optimize (not a runtime dependency)", "import highspy")

# A child: the given steps in turn, printing each one's CPU seconds as JSON.
_CHILD = """
import json, time
times = []
for statement in {statements!r}:
    started = time.process_time()
    exec(statement)
    times.append(time.process_time() - started)
print(json.dumps(times))
"""
_ROUNDS = 5
BLENDKIT = Path(__file__).resolve().parents[1]


def compile_blendkit() -> None:
    """Write blendkit's bytecode (into its __pycache__ folders), as installing it does: where
    PYTHONDONTWRITEBYTECODE is set, every run would otherwise compile every module anew,
    which an installed blendkit never does."""
    compileall.compile_dir(str(BLENDKIT), quiet=1)


def _child_times(statements: list[str]) -> list[float]:
    """The CPU seconds of each statement in one fresh child process."""
    code = _CHILD.format(statements=statements)
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def _python_itself() -> float:
    """CPU seconds of a child that imports nothing (start and exit of the interpreter)."""
    code = "import os; print(sum(os.times()[:2]))"
    return float(subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout)


def start_up_lines(rounds: int = _ROUNDS) -> Iterator[str]:
    """One line per import step with its CPU seconds (median of `rounds` children), the
    total, and the highspy alternative."""
    statements = [statement for _, statement in STEPS]
    alternative = [*statements[:-1], ALTERNATIVE[1]]
    runs = [_child_times(statements) for _ in range(rounds)]
    other = [_child_times(alternative)[-1] for _ in range(rounds)]
    python = statistics.median(_python_itself() for _ in range(rounds))
    medians = [statistics.median(run[k] for run in runs) for k in range(len(STEPS))]
    yield f"{'start-up step (CPU s, median of ' + str(rounds) + ')':<66}{'CPU s':>7}"
    yield f"{'python itself (user + system time of an empty process)':<66}{python:>7.3f}"
    for (what, _), seconds in zip(STEPS, medians):
        yield f"{what:<66}{seconds:>7.3f}"
    yield f"{'all the imports':<66}{sum(medians):>7.3f}"
    yield f"{ALTERNATIVE[0]:<66}{statistics.median(other):>7.3f}"

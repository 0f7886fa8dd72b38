"""Where the start-up of `blendkit solve` goes: the libraries a plain solve imports, each
timed in a fresh child process after the ones before it (what they share is counted once,
at its first import), in CPU seconds (less disturbed by other processes than wall time),
medians of several rounds. The engine's step is `blendkit.engine.lapack` run on its own:
it loads scipy's compiled LAPACK and BLAS wrappers without importing scipy itself. The
last step is highspy, which the HiGHS cross-check imports when it first runs (not with
--no-cross-check). The closing lines measure, after the same steps, what a plain solve no
longer imports: scipy.sparse, scipy.linalg and scipy.sparse.linalg (the engine imported
them at start-up; now only a sparse matrix does, `blendkit.engine.sparse`), scipy.optimize
(the cross-check went through its linprog and milp before it called highspy directly) and
pydantic (typer 0.27 and later load it for their argument checks; blendkit keeps typer
below 0.27), each only when installed.

Each child's environment is the command's: OpenBLAS loads with one thread unless a thread
count is set (`blendkit.start.one_blas_thread_at_load`), else its spinning workers would
add about 0.05 s of CPU to whichever step comes after numpy's or scipy's OpenBLAS loads
(the openpyxl yardstick's process, which leaves OpenBLAS a thread per core, pays that with
numpy).

This measures imports alone, not the work: the samples lines of `blendkit.bench.books`
time the whole command. Python itself (the interpreter starting, no import) is the first
line; numpy and openpyxl are what the openpyxl yardstick imports as well (openpyxl loads
numpy when it is installed). Run alone with ``python -m blendkit.bench.start_up``.
"""

from __future__ import annotations

import compileall
import importlib.util
import json
import os
import statistics
import subprocess
import sys
from collections.abc import Iterator
from pathlib import Path

from blendkit.start import BLAS_THREAD_VARIABLES

BLENDKIT = Path(__file__).resolve().parents[1]
# blendkit.engine.lapack run alone (not through blendkit.engine, which imports the engine).
_LAPACK = (
    "import importlib.util as u; s = u.spec_from_file_location('lapack_step', {path!r}); "
    "s.loader.exec_module(u.module_from_spec(s))"
).format(path=str(BLENDKIT / "engine" / "lapack.py"))
# (what, the import statement), in the order a plain `blendkit solve` first needs them.
STEPS = (
    ("typer (the command line)", "import typer"),
    ("numpy and openpyxl (the yardstick imports both)", "import numpy, openpyxl"),
    ("scipy's LAPACK and BLAS wrappers alone (the engine; no scipy package)", _LAPACK),
    ("blendkit's own modules", "import blendkit.cli, blendkit.run, blendkit.write.console, blendkit.write.progress"),
    ("highspy (the HiGHS cross-check)", "import highspy"),
)
# What a plain solve no longer imports, each timed after all of STEPS: (what, module, statement).
NOT_IMPORTED = (
    ("scipy.sparse and scipy.linalg (now only for a sparse matrix), not imported", "scipy",
     "import scipy.sparse, scipy.linalg, scipy.sparse.linalg"),
    ("scipy.optimize (the cross-check's former way to HiGHS), not imported", "scipy.optimize", "import scipy.optimize"),
    ("pydantic (typer >= 0.27 loads it; typer < 0.27 kept), not imported", "pydantic", "import pydantic"),
)

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


def compile_blendkit() -> None:
    """Write blendkit's bytecode (into its __pycache__ folders), as installing it does: where
    PYTHONDONTWRITEBYTECODE is set, every run would otherwise compile every module anew,
    which an installed blendkit never does."""
    compileall.compile_dir(str(BLENDKIT), quiet=1)


def _child_times(statements: list[str]) -> list[float]:
    """The CPU seconds of each statement in one fresh child process."""
    code = _CHILD.format(statements=statements)
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, env=_command_env())
    return json.loads(done.stdout.strip().splitlines()[-1])


def _command_env() -> dict[str, str]:
    """This process's environment as `blendkit.start.main` leaves it: OPENBLAS_NUM_THREADS=1
    unless a BLAS thread count is set."""
    env = dict(os.environ)
    if not any(name in env for name in BLAS_THREAD_VARIABLES):
        env["OPENBLAS_NUM_THREADS"] = "1"
    return env


def _python_itself() -> float:
    """CPU seconds of a child that imports nothing but `resource` (start and exit of the
    interpreter; getrusage counts microseconds where os.times counts clock ticks)."""
    code = "import resource; r = resource.getrusage(resource.RUSAGE_SELF); print(r.ru_utime + r.ru_stime)"
    return float(subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout)


def start_up_lines(rounds: int = _ROUNDS) -> Iterator[str]:
    """One line per import step with its CPU seconds (median of `rounds` children), the
    total, and what a plain solve no longer imports (when installed)."""
    statements = [statement for _, statement in STEPS]
    runs = [_child_times(statements) for _ in range(rounds)]
    python = statistics.median(_python_itself() for _ in range(rounds))
    medians = [statistics.median(run[k] for run in runs) for k in range(len(STEPS))]
    yield f"{'start-up step (CPU s, median of ' + str(rounds) + ')':<70}{'CPU s':>7}"
    yield f"{'python itself (user + system time of an empty process)':<70}{python:>7.3f}"
    for (what, _), seconds in zip(STEPS, medians):
        yield f"{what:<70}{seconds:>7.3f}"
    yield f"{'all the imports':<70}{sum(medians):>7.3f}"
    for what, module, statement in NOT_IMPORTED:
        if importlib.util.find_spec(module) is None:
            yield f"{what:<70}{'-':>7}  (not installed)"
            continue
        other = [_child_times([*statements, statement])[-1] for _ in range(rounds)]
        yield f"{what:<70}{statistics.median(other):>7.3f}"


if __name__ == "__main__":
    compile_blendkit()
    for line in start_up_lines():
        print(line)

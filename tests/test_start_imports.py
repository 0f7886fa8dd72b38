"""A plain `blendkit solve` of each sample workbook imports no scipy at all (issue 14, fast
start): the engine loads only scipy's compiled LAPACK and BLAS wrappers
(blendkit.engine.lapack) and imports scipy.sparse only for a sparse matrix
(blendkit.engine.sparse). A behaviour test, not a timed one: each solve runs in a fresh
child process, as the console script does, and reports its modules and its JSON answer.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from blendkit.start import BLAS_THREAD_VARIABLES
from tests.test_examples import OPTIMUM

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_workbooks"
# Each sample by the example name test_examples pins its HiGHS optimum under.
SAMPLE_EXAMPLE = {
    "broiler_starter": "broiler",
    "layer_feed": "layer",
    "day_menu": "diet",
    "npk_15_15_15": "fertilizer",
    "pig_feed_plant": "plant",
}
# The console script's entry point, then the scipy modules (and numpy.ma, 15 ms of
# imports that np.unique and np.setdiff1d pull in) the process holds and each
# BLAS library's thread count (threadpoolctl, after the solve), on stderr.
_SOLVE = """
import json, sys
sys.argv = ["blendkit", "solve", *{args!r}]
from blendkit.start import main
try:
    main()
finally:
    held = sorted(name for name in sys.modules
                  if name.split(".")[0] == "scipy" or name.split(".")[:2] == ["numpy", "ma"])
    from threadpoolctl import threadpool_info
    threads = [info["num_threads"] for info in threadpool_info() if info["user_api"] == "blas"]
    print(json.dumps([held, threads]), file=sys.stderr)
"""


def _solve(book: Path, output: Path, *extra: str, env: dict | None = None) -> tuple[dict, list[str], list[int]]:
    """`blendkit solve BOOK -o OUTPUT --json` in a fresh child (`env` added to this process's
    environment, without any BLAS thread variable): its JSON, its scipy modules and its BLAS
    libraries' thread counts."""
    args = [str(book), "-o", str(output), "--json", *extra]
    child_env = {name: value for name, value in os.environ.items() if name not in BLAS_THREAD_VARIABLES}
    done = subprocess.run([sys.executable, "-c", _SOLVE.format(args=args)], capture_output=True, text=True,
                          cwd=ROOT, env={**child_env, **(env or {})})
    assert done.returncode == 0, done.stderr
    held, threads = json.loads(done.stderr.strip().splitlines()[-1])
    return json.loads(done.stdout), held, threads


@pytest.mark.parametrize("sample", sorted(SAMPLE_EXAMPLE))
def test_a_sample_solve_imports_no_scipy_and_finds_the_highs_optimum(sample, tmp_path):
    answer, held, _ = _solve(SAMPLES / f"{sample}.xlsx", tmp_path / "out.xlsx")
    assert "scipy" not in held  # the scipy package never ran
    assert "numpy.ma" not in held  # numpy's masked arrays are not needed for a solve
    assert set(held) <= {"scipy.linalg._flapack", "scipy.linalg._fblas"}  # the compiled wrappers only
    assert answer["status"] == "optimal"
    cost = answer.get("cost", answer.get("total_cost"))
    # Reference: each sample's optimum by scipy.optimize.linprog (HiGHS), pinned in test_examples.
    assert cost == pytest.approx(OPTIMUM[SAMPLE_EXAMPLE[sample]], rel=1e-6)
    assert answer["cross_check"]  # the HiGHS cross-check ran (through highspy, no scipy)


def test_a_solve_without_cross_check_imports_no_scipy(tmp_path):
    answer, held, threads = _solve(SAMPLES / "layer_feed.xlsx", tmp_path / "out.xlsx", "--no-cross-check")
    assert "scipy" not in held
    assert answer["cost"] == pytest.approx(OPTIMUM["layer"], rel=1e-6)  # Reference: as above
    assert len(threads) == 2 and set(threads) == {1}  # numpy's and scipy's OpenBLAS, loaded with one thread


@pytest.mark.skipif((os.cpu_count() or 1) < 2, reason="OpenBLAS caps its threads at the cores: 1 either way")
def test_a_blas_thread_count_chosen_by_the_user_is_kept(tmp_path):
    answer, _, threads = _solve(SAMPLES / "layer_feed.xlsx", tmp_path / "out.xlsx", env={"OMP_NUM_THREADS": "2"})
    assert answer["cost"] == pytest.approx(OPTIMUM["layer"], rel=1e-6)  # Reference: as above
    assert len(threads) == 2 and set(threads) == {2}  # OpenBLAS reads OMP_NUM_THREADS when no other is set

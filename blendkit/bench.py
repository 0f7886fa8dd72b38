"""Benchmark: our engine beside scipy's HiGHS on blend-shaped LPs and on NETLIB problems.

Run ``python -m blendkit.bench``. This measures, it does not test: it prints the machine,
then for each size the median time per solve of `blendkit.engine.solve` and of
``scipy.optimize.linprog(method="highs")`` on the same LPs, the ratio ours/HiGHS, our mean
simplex iterations and how many answers disagree (status, or objective beyond
`OBJECTIVE_RTOL`). Disagreements are counted, never raised.

The blend LPs are made up, deterministically from a seed, to look like real least-cost
formulation (see `make_blend`): inclusions in %, one row fixing the total at 100, nutrient
specs as level rows, contents on mixed scales (%, MJ/kg, mg/kg, ppm) with many zeros, and
specs set around the levels of a known feasible mixture, some of them tight, so that the
LPs are feasible by construction and many limits bind at the optimum. A price sweep (the
same LP with prices nudged step by step) is measured twice: every step solved cold, and
every step started from the previous step's basis (a warm start; HiGHS stays cold).

NETLIB problems are solved when the reference folder and the MPS reader are both there;
otherwise a line says why they were skipped.

Timing, for fairness: `linprog` is timed as a whole call, as a user would call it, and so
is our `solve` (argument checks included). For NETLIB, reading the file is left out on
both sides: ours times `solve_form` on the parsed model, HiGHS times passing the parsed
model to a fresh solver plus `run()`.
"""

from __future__ import annotations

import argparse
import ctypes
import os
import platform
import statistics
import sys
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from importlib import metadata
from pathlib import Path

import numpy as np
from scipy.optimize import linprog

from blendkit.engine import solve, solve_form
from blendkit.engine.result import Basis

TOTAL = 100.0  # inclusions are in % of the blend, as in build_lp

# Two answers agree when their statuses match and their objectives differ by at most
# this, relative to max(1, |HiGHS objective|).
OBJECTIVE_RTOL = 1e-7

DEFAULT_SIZES = ((20, 10), (60, 30), (150, 60), (300, 120))
DEFAULT_SEED = 20240611

# Per size (ingredients): LPs generated and timed repeats of each solve. Chosen so the
# default run stays within about two minutes on a 2-core machine; `--repeat` overrides.
INSTANCES = {20: 10, 60: 10, 150: 8, 300: 6}
REPEATS = {20: 15, 60: 11, 150: 7, 300: 5}
SWEEP_STEPS = 8
NETLIB_REPEATS = 5

# scipy's linprog status codes, in the engine's vocabulary.
LINPROG_STATUS = {0: "optimal", 1: "iteration_limit", 2: "infeasible", 3: "unbounded", 4: "numerical_trouble"}


# ----- blend-shaped LPs ---------------------------------------------------------------

# Ingredient kinds and their share of an ingredient list.
KIND_SHARES = (("feedstuff", 0.55), ("fat", 0.05), ("mineral", 0.2), ("additive", 0.2))
# The most of the blend (in %) that minimum and fixed inclusions may take together.
MINIMUM_SHARE = 40.0
# Nutrient classes, their unit and their share of a nutrient list; "energy" comes first.
NUTRIENT_CLASSES = (
    ("energy", "MJ/kg", 0.05),
    ("proximate", "%", 0.15),
    ("amino acid", "%", 0.25),
    ("macro mineral", "%", 0.15),
    ("trace mineral", "mg/kg", 0.2),
    ("vitamin", "ppm", 0.2),
)


@dataclass(frozen=True)
class BlendInstance:
    """One least-cost blend LP in linprog's arguments, as `build_lp` would make it.

    `contents[n, j]` is nutrient n in ingredient j (units per `nutrient_units`);
    `prices` are per tonne, `c = prices / 100` (cost of one tonne of blend per % of
    inclusion). Rows of A_ub are spec sides, a min stored negated; `x0` is the mixture
    the specs were set around, feasible by construction.
    """

    name: str
    c: np.ndarray
    A_ub: np.ndarray
    b_ub: np.ndarray
    A_eq: np.ndarray
    b_eq: np.ndarray
    bounds: list[tuple[float, float | None]]
    contents: np.ndarray
    nutrient_units: tuple[str, ...]
    prices: np.ndarray
    x0: np.ndarray

    @property
    def shape(self) -> tuple[int, int]:
        """(ingredients, nutrients)."""
        return self.contents.shape[1], self.contents.shape[0]


def _split(count: int, shares: Sequence[float]) -> np.ndarray:
    """A class index for each of `count` items in about the given shares, at least one
    of each class; the largest class takes what rounding leaves over."""
    sizes = np.maximum(1, np.floor(np.array(shares) * count).astype(int))
    sizes[int(np.argmax(shares))] += count - sizes.sum()
    return np.repeat(np.arange(len(shares)), sizes)


def _contents(kinds: list[str], classes: list[str], rng: np.random.Generator) -> np.ndarray:
    """A nutrient x ingredient table on realistic scales, with the zeros real tables have."""
    m, n = len(classes), len(kinds)
    table = np.zeros((m, n))
    cls = np.array(classes)
    for j, kind in enumerate(kinds):
        if kind == "feedstuff":
            richness = rng.uniform(0.5, 2.0)  # grains at the low end, protein meals at the top
            for i, c in enumerate(cls):
                if c == "energy":
                    table[i, j] = rng.uniform(8, 16)
                elif c == "proximate" and rng.random() < 0.95:
                    table[i, j] = rng.uniform(1, 25) * richness
                elif c == "amino acid" and rng.random() < 0.9:
                    table[i, j] = rng.uniform(0.05, 1.5) * richness
                elif c == "macro mineral" and rng.random() < 0.8:
                    table[i, j] = rng.uniform(0.01, 1.0)
                elif c == "trace mineral" and rng.random() < 0.5:
                    table[i, j] = rng.uniform(5, 200)
                elif c == "vitamin" and rng.random() < 0.3:
                    table[i, j] = rng.uniform(0.1, 50)
        elif kind == "fat":
            table[cls == "energy", j] = rng.uniform(30, 37)
            fat_rows = np.flatnonzero(cls == "proximate")
            if fat_rows.size:
                table[rng.choice(fat_rows), j] = rng.uniform(90, 99.5)
            vit = np.flatnonzero(cls == "vitamin")
            if vit.size:
                table[rng.choice(vit), j] = rng.uniform(5, 100)
        elif kind == "mineral":
            macro = np.flatnonzero(cls == "macro mineral")
            for i in rng.choice(macro, size=min(macro.size, rng.integers(1, 3)), replace=False):
                table[i, j] = rng.uniform(10, 38)
            trace = np.flatnonzero(cls == "trace mineral")
            if trace.size and rng.random() < 0.3:
                table[rng.choice(trace), j] = rng.uniform(10, 5000)
        else:  # additive: a premix, a pure amino acid or a vitamin source
            what = rng.choice(["trace mineral", "amino acid", "vitamin"])
            rows = np.flatnonzero(cls == what)
            if rows.size == 0:
                rows = np.flatnonzero(cls == "amino acid")
            take = min(rows.size, 1 if what == "amino acid" else int(rng.integers(1, 4)))
            for i in rng.choice(rows, size=take, replace=False):
                if what == "amino acid":
                    table[i, j] = rng.uniform(50, 99)  # % of the additive
                elif what == "trace mineral":
                    table[i, j] = rng.uniform(1000, 5000)
                else:
                    table[i, j] = rng.uniform(100, 5000)
    return table


def _bounds_and_prices(kinds: list[str], rng: np.random.Generator):
    """Inclusion limits (lower, upper; inf for none) and prices per tonne by kind."""
    n = len(kinds)
    lower, upper, prices = np.zeros(n), np.zeros(n), np.zeros(n)
    for j, kind in enumerate(kinds):
        if kind == "feedstuff":
            upper[j] = rng.uniform(5, 60)
            prices[j] = rng.uniform(150, 900)
            if rng.random() < 0.15:
                lower[j] = rng.uniform(0.5, 4)
        elif kind == "fat":
            upper[j] = rng.uniform(2, 6)
            prices[j] = rng.uniform(700, 1500)
        elif kind == "mineral":
            upper[j] = rng.uniform(0.5, 3)
            prices[j] = rng.uniform(50, 400)
            if rng.random() < 0.2:
                lower[j] = rng.uniform(0.05, 0.3)
        else:
            upper[j] = rng.uniform(0.05, 1)
            prices[j] = rng.uniform(1000, 3000)
    feed = [j for j, k in enumerate(kinds) if k == "feedstuff"]
    additives = [j for j, k in enumerate(kinds) if k == "additive"]
    # A few feedstuffs with no maximum at all.
    for j in rng.choice(feed, size=max(1, len(feed) // 15), replace=False):
        upper[j] = np.inf
    # A few additives fixed, as a premix at a set rate is.
    for j in rng.choice(additives, size=max(1, len(additives) // 8), replace=False):
        lower[j] = upper[j] = round(float(rng.uniform(0.1, 0.5)), 2)
    # Minimums and fixed rates take at most MINIMUM_SHARE % of the blend at any size.
    if lower.sum() > MINIMUM_SHARE:
        fixed = lower == upper
        lower *= MINIMUM_SHARE / lower.sum()
        upper[fixed] = lower[fixed]
    return lower, upper, prices


def _feasible_mixture(lower, upper, kinds, rng) -> np.ndarray:
    """A mixture within the inclusion limits that sums to 100: the lower limits, then
    the rest spread over a random few ingredients by weight, filling each to its limit."""
    x = lower.copy()
    weight = np.array([rng.uniform(1, 10) if k in ("feedstuff", "fat") else rng.uniform(0.01, 0.1)
                       for k in kinds])
    candidates = np.flatnonzero(upper > lower)
    chosen = candidates[rng.random(candidates.size) < 0.5]
    for pool in (chosen, candidates):
        free = pool.copy()
        while free.size and TOTAL - x.sum() > 1e-12:
            remaining = TOTAL - x.sum()
            share = remaining * weight[free] / weight[free].sum()
            room = upper[free] - x[free]
            x[free] += np.minimum(share, room)
            free = free[room > share]
    if abs(x.sum() - TOTAL) > 1e-9:
        raise RuntimeError("the generated inclusion limits cannot make 100%")
    return x


def make_blend(n_ingredients: int, n_nutrients: int, seed: int, index: int = 0) -> BlendInstance:
    """A feasible least-cost blend LP of the given size, the same for the same arguments.

    Ingredients are feedstuffs, fats, minerals and additives with kind-typical contents,
    inclusion limits (some minimums, a few fixed rates, a few without a maximum) and
    prices per tonne (50 to 3000). Specs are set around the levels of a random feasible
    mixture: a min, a max or both, a quarter of the sides exactly at that level, so the
    LP is feasible and degenerate the way real formulations are.
    """
    rng = np.random.default_rng([seed, n_ingredients, n_nutrients, index])
    kind_names = [k for k, _ in KIND_SHARES]
    kinds = [kind_names[i] for i in _split(n_ingredients, [s for _, s in KIND_SHARES])]
    kinds = [kinds[i] for i in rng.permutation(n_ingredients)]
    class_names = [c for c, _, _ in NUTRIENT_CLASSES]
    labels = _split(n_nutrients, [s for _, _, s in NUTRIENT_CLASSES])
    classes = [class_names[i] for i in labels]
    units = tuple(NUTRIENT_CLASSES[i][1] for i in labels)
    contents = _contents(kinds, classes, rng)
    lower, upper, prices = _bounds_and_prices(kinds, rng)
    x0 = _feasible_mixture(lower, upper, kinds, rng)
    levels = contents @ x0 / TOTAL
    rows, rhs = [], []
    for i, level in enumerate(levels):
        if level <= 0 or rng.random() < 0.1:
            continue  # nothing in the mixture carries it, or no spec on it
        sides = rng.choice(["min", "max", "both"], p=[0.45, 0.15, 0.4])
        if sides in ("min", "both"):
            tight = rng.random() < 0.25
            rows.append(-contents[i] / TOTAL)
            rhs.append(-(level if tight else level * (1 - rng.uniform(0.01, 0.15))))
        if sides in ("max", "both"):
            tight = rng.random() < 0.25
            rows.append(contents[i] / TOTAL)
            rhs.append(level if tight else level * (1 + rng.uniform(0.01, 0.3)))
    bounds = [(float(lo), None if np.isinf(hi) else float(hi)) for lo, hi in zip(lower, upper)]
    return BlendInstance(
        name=f"blend {n_ingredients}x{n_nutrients} #{index}",
        c=prices / TOTAL,
        A_ub=np.array(rows).reshape(len(rows), n_ingredients),
        b_ub=np.array(rhs),
        A_eq=np.ones((1, n_ingredients)),
        b_eq=np.array([TOTAL]),
        bounds=bounds,
        contents=contents,
        nutrient_units=units,
        prices=prices,
        x0=x0,
    )


def price_sweep(instance: BlendInstance, steps: int, seed: int) -> list[BlendInstance]:
    """The same LP `steps` times with prices changed step by step, as a weekly price
    update does: each step moves a third of the prices by a few percent."""
    rng = np.random.default_rng([seed, *instance.shape, 7919])  # a stream apart from make_blend's
    prices = instance.prices.copy()
    out = []
    for step in range(steps):
        moved = rng.random(prices.size) < 1 / 3
        prices = np.where(moved, prices * np.exp(rng.normal(0, 0.05, prices.size)), prices)
        out.append(replace(instance, name=f"{instance.name} price step {step + 1}",
                           c=prices / TOTAL, prices=prices.copy()))
    return out


# ----- timing ---------------------------------------------------------------------------


@dataclass(frozen=True)
class Measurement:
    """One row of the report: a group of LPs solved by both solvers."""

    label: str
    lps: int
    solves: int  # timed solves per solver (LPs x repeats)
    ours_seconds: float  # median over LPs of each LP's median time
    highs_seconds: float
    mean_iterations: float
    mismatches: int
    statuses: str  # e.g. "optimal 10"
    first_mismatch: str = ""

    @property
    def ratio(self) -> float:
        """Our median time over HiGHS's."""
        return self.ours_seconds / self.highs_seconds if self.highs_seconds > 0 else float("inf")


def _timed(call: Callable[[], object], repeat: int) -> tuple[object, float]:
    """The call's last answer and the median wall time of `repeat` calls."""
    times, answer = [], None
    for _ in range(repeat):
        start = time.perf_counter()
        answer = call()
        times.append(time.perf_counter() - start)
    return answer, statistics.median(times)


def _agree(status: str, objective, ref_status: str, ref_objective) -> str:
    """Empty when the answers agree, else what differs."""
    if status != ref_status:
        return f"status {status} vs HiGHS {ref_status}"
    if status == "optimal" and abs(objective - ref_objective) > OBJECTIVE_RTOL * max(1.0, abs(ref_objective)):
        return f"objective {objective:.10g} vs HiGHS {ref_objective:.10g}"
    return ""


def measure(label: str, instances: Sequence[BlendInstance], repeat: int, warm_from: Basis | None = None) -> Measurement:
    """Solve every instance `repeat` times with each solver and compare the answers.

    With `warm_from`, our engine starts each LP from the basis of the one before it (the
    first from `warm_from`), as re-solving a price sweep would; HiGHS solves each cold.
    """
    ours_times, highs_times, iterations, statuses = [], [], [], {}
    mismatches, first, warm = 0, "", 0
    basis = warm_from
    for lp in instances:
        args = (lp.c, lp.A_ub, lp.b_ub, lp.A_eq, lp.b_eq, lp.bounds)
        ours, t_ours = _timed(lambda: solve(*args, basis=basis), repeat)
        ref, t_highs = _timed(lambda: linprog(*args, method="highs"), repeat)
        if warm_from is not None:
            basis = ours.basis or basis
            warm += bool(ours.warm_start)
        ours_times.append(t_ours)
        highs_times.append(t_highs)
        iterations.append(ours.iterations)
        statuses[ours.status] = statuses.get(ours.status, 0) + 1
        differs = _agree(ours.status, ours.objective, LINPROG_STATUS.get(ref.status, str(ref.status)), ref.fun)
        if differs:
            mismatches += 1
            first = first or f"{lp.name}: {differs} (ours said: {ours.message})"
    return Measurement(
        label=label,
        lps=len(instances),
        solves=len(instances) * repeat,
        ours_seconds=statistics.median(ours_times),
        highs_seconds=statistics.median(highs_times),
        mean_iterations=float(np.mean(iterations)),
        mismatches=mismatches,
        statuses=", ".join(f"{s} {k}" for s, k in sorted(statuses.items()))
        + (f"; started warm {warm} of {len(instances)}" if warm_from is not None else ""),
        first_mismatch=first,
    )


MEASUREMENT_HEAD = (f"{'LPs':<26}{'count':>6}{'solves':>8}{'ours ms':>11}{'HiGHS ms':>11}"
                    f"{'ours/HiGHS':>12}{'iters':>9}{'mismatch':>10}  statuses")


def measurement_lines(rows: Sequence[Measurement], head: bool = True) -> list[str]:
    """The blend table (with or without its heading): a line per measurement, in milliseconds."""
    lines = [MEASUREMENT_HEAD, "-" * len(MEASUREMENT_HEAD)] if head else []
    for r in rows:
        lines.append(
            f"{r.label:<26}{r.lps:>6}{r.solves:>8}{r.ours_seconds * 1e3:>11.2f}{r.highs_seconds * 1e3:>11.2f}"
            f"{r.ratio:>11.2f}x{r.mean_iterations:>9.1f}{r.mismatches:>10}  {r.statuses}"
        )
        if r.first_mismatch:
            lines.append(f"    first mismatch: {r.first_mismatch}")
    return lines


# ----- NETLIB ---------------------------------------------------------------------------


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
    return Path(__file__).resolve().parents[1].parent / "shared" / "reference" / "netlib"


def _highs_status(h) -> str:
    """HiGHS's model status in the engine's vocabulary."""
    import highspy

    status = h.getModelStatus()
    names = {
        highspy.HighsModelStatus.kOptimal: "optimal",
        highspy.HighsModelStatus.kInfeasible: "infeasible",
        highspy.HighsModelStatus.kUnbounded: "unbounded",
        highspy.HighsModelStatus.kIterationLimit: "iteration_limit",
    }
    return names.get(status, h.modelStatusToString(status))


def _silent_highs():
    """A HiGHS instance that prints nothing; the first one made in a process prints a
    banner from C, so that one is made with the process's stdout sent to /dev/null."""
    import highspy

    sys.stdout.flush()
    saved = os.dup(1)
    try:
        with open(os.devnull, "w") as devnull:
            os.dup2(devnull.fileno(), 1)
            h = highspy.Highs()
            try:
                ctypes.CDLL(None).fflush(None)  # push the banner out while stdout is /dev/null
            except (OSError, AttributeError):
                pass
    finally:
        os.dup2(saved, 1)
        os.close(saved)
    h.setOptionValue("output_flag", False)
    return h


def solve_netlib(path: Path, repeat: int, mps) -> NetlibRow:
    """Read one MPS file with each solver's reader, then time the solves alone."""
    import highspy

    model = mps.read(path)
    result, t_ours = _timed(lambda: solve_form(model.form), repeat)
    objective = None if result.objective is None else result.objective + model.objective_constant
    reader = _silent_highs()
    reader.readModel(str(path))
    lp = reader.getLp()

    def highs_run():
        h = highspy.Highs()
        h.setOptionValue("output_flag", False)
        h.passModel(lp)
        h.run()
        return h

    h, t_highs = _timed(highs_run, repeat)
    h_status = _highs_status(h)
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
        agrees=_agree(result.status, objective, h_status, h_objective),
        message=result.message,
    )


def run_netlib(folder: Path, repeat: int) -> tuple[list[NetlibRow], list[str]]:
    """Every *.mps in `folder`, by both solvers; and lines saying what was skipped and why."""
    if not folder.is_dir():
        return [], [f"NETLIB skipped: no folder {folder}"]
    try:
        from blendkit.engine import mps
    except Exception as error:  # the reader is being written; say why it is missing
        return [], [f"NETLIB skipped: blendkit.engine.mps is not importable ({type(error).__name__}: {error})"]
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


# ----- the run --------------------------------------------------------------------------


def _version(package: str) -> str:
    try:
        return metadata.version(package)
    except metadata.PackageNotFoundError:
        return "not installed"


def _load() -> str:
    """The one-minute load average, or '?' where the system does not tell."""
    try:
        return f"{os.getloadavg()[0]:.2f}"
    except (OSError, AttributeError):
        return "?"


def machine_lines() -> list[str]:
    """What the numbers were measured on, for copying into the README."""
    cpu = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    usable = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    return [
        f"machine: {cpu}, {usable} cores usable ({os.cpu_count()} online), {platform.system()} {platform.release()}",
        f"python {platform.python_version()}, numpy {_version('numpy')}, scipy {_version('scipy')}, "
        f"highspy {_version('highspy')}",
        f"load average at start {_load()} (other work on the machine slows every figure)",
    ]


def parse_sizes(text: str) -> list[tuple[int, int]]:
    """'20x10,60x30' -> [(20, 10), (60, 30)]."""
    sizes = []
    for part in text.split(","):
        try:
            a, b = part.lower().strip().split("x")
            sizes.append((int(a), int(b)))
        except ValueError:
            raise argparse.ArgumentTypeError(f"size {part!r} is not INGREDIENTSxNUTRIENTS, e.g. 60x30") from None
        if sizes[-1][0] < 10 or sizes[-1][1] < 6:
            raise argparse.ArgumentTypeError(f"size {part!r}: use at least 10 ingredients and 6 nutrients")
    return sizes


def _plan(n_ingredients: int, repeat: int | None, quick: bool) -> tuple[int, int]:
    """(LPs, repeats) for one size: the table above for the nearest size, or the options."""
    nearest = min(INSTANCES, key=lambda k: abs(k - n_ingredients))
    count, reps = INSTANCES[nearest], REPEATS[nearest]
    if quick:
        count, reps = 3, 1
    return count, repeat if repeat is not None else reps


def infeasible_blend(n_ingredients: int, n_nutrients: int, seed: int):
    """A workbook-level blend (domain model) of the given size whose specs conflict.

    Ingredients and contents come from `make_blend`; specs sit around a feasible
    mixture's levels, then the first spec's minimum is set above every ingredient's
    content of that nutrient, which no blend can reach.
    """
    from blendkit.model.blend import Blend, Ingredient, Settings, Spec

    instance = make_blend(n_ingredients, n_nutrients, seed)
    names = [f"N{i + 1}" for i in range(n_nutrients)]
    ingredients = []
    for j, (low, high) in enumerate(instance.bounds):
        contents = {name: float(instance.contents[i, j]) for i, name in enumerate(names)}
        cells = {"name": f"Ingredients!A{j + 2}", "cost": f"Ingredients!B{j + 2}",
                 "min": f"Ingredients!C{j + 2}", "max": f"Ingredients!D{j + 2}"}
        ingredients.append(Ingredient(f"Feed {j + 1}", float(instance.prices[j]), low or None, high, True,
                                      contents, (), cells))
    levels = instance.contents @ instance.x0 / TOTAL
    specs = []
    for i, name in enumerate(names):
        if levels[i] <= 0:
            continue
        low = float(levels[i] * 0.95)
        high = float(levels[i] * 1.25) if i % 3 == 0 else None
        if not specs:
            low, high = float(instance.contents[i].max() * 1.01), None  # out of reach
        cells = {"nutrient": f"Specs!A{len(specs) + 2}", "min": f"Specs!B{len(specs) + 2}",
                 "max": f"Specs!C{len(specs) + 2}"}
        specs.append(Spec(name, low, high, cells))
    return Blend(tuple(ingredients), tuple(names), tuple(specs), Settings())


def diagnosis_lines(sizes, seed: int, repeat: int) -> list[str]:
    """Time one plain solve and the full conflict diagnosis of infeasible blends."""
    from blendkit.lp.build import build_lp
    from blendkit.lp.diagnose import diagnose
    from blendkit.engine import solve_form

    lines = [f"{'blend':<14}{'plain solve ms':>16}{'diagnosis ms':>14}{'conflicts':>11}{'members':>9}"]
    for n_ing, n_nut in sizes:
        blend = infeasible_blend(n_ing, n_nut, seed)
        lp = build_lp(blend)
        plain, plain_time = _timed(lambda: solve_form(lp.form), repeat)
        found, diagnosis_time = _timed(lambda: diagnose(blend, lp), repeat)
        members = sum(len(conflict.members) for conflict in found.conflicts)
        lines.append(f"{n_ing}x{n_nut:<10}{plain_time * 1e3:>16.1f}{diagnosis_time * 1e3:>14.1f}"
                     f"{len(found.conflicts):>11}{members:>9}   ({plain.status})")
    return lines


def run(sizes, seed: int, repeat: int | None, quick: bool, netlib: str | None, out=print) -> None:
    """The whole benchmark, printing as it goes."""
    started = time.perf_counter()
    for line in machine_lines():
        out(line)
    out(f"seed {seed}; objective agreement within {OBJECTIVE_RTOL:g} relative; times are medians")
    out("")
    out("Blend LPs (ingredients x nutrients): ours = blendkit.engine.solve, HiGHS = linprog(method='highs')")
    for line in measurement_lines([]):
        out(line)
    for n_ing, n_nut in sizes:
        count, reps = _plan(n_ing, repeat, quick)
        instances = [make_blend(n_ing, n_nut, seed, k) for k in range(count)]
        sweep = price_sweep(instances[0], 3 if quick else SWEEP_STEPS, seed)
        size = f"{n_ing}x{n_nut}"
        first = instances[0]
        start = solve(first.c, first.A_ub, first.b_ub, first.A_eq, first.b_eq, first.bounds).basis
        for row in (
            lambda: measure(size, instances, reps),
            lambda: measure(f"{size} sweep, cold", sweep, reps),
            lambda: measure(f"{size} sweep, warm", sweep, reps, warm_from=start),
        ):
            for line in measurement_lines([row()], head=False):
                out(line)
            sys.stdout.flush()
    out("(sweep: the first LP of the size after each of a series of price changes; cold solves")
    out(" each from scratch, warm starts each from the previous solve's basis; HiGHS is cold)")
    out("")
    out("Conflict diagnosis of infeasible blends (one spec out of reach): the whole diagnosis")
    out("(conflicting sets, each bound's least move, least-cost relaxation) beside one plain solve")
    for line in diagnosis_lines(sizes, seed, 1 if quick else 3):
        out(line)
    out("")
    out("NETLIB: ours = solve_form on the parsed model; HiGHS = passModel + run on its own parse")
    netlib_repeat = 1 if quick else (repeat if repeat is not None else NETLIB_REPEATS)
    problems, notes = run_netlib(netlib_folder(netlib), netlib_repeat)
    if problems:
        for line in netlib_lines(problems):
            out(line)
    for note in notes:
        out(note)
    out("")
    out(f"total benchmark time {time.perf_counter() - started:.1f} s; load average at end {_load()}")


def main(argv: list[str] | None = None) -> None:
    """`python -m blendkit.bench`: parse the options and run the benchmark."""
    parser = argparse.ArgumentParser(
        prog="python -m blendkit.bench",
        description="Time blendkit's engine beside scipy's HiGHS on blend-shaped LPs and NETLIB problems.",
    )
    parser.add_argument("--sizes", type=parse_sizes, default=list(DEFAULT_SIZES),
                        help="comma-separated INGREDIENTSxNUTRIENTS (default 20x10,60x30,150x60,300x120)")
    parser.add_argument("--repeat", type=int, default=None,
                        help="timed repeats of each solve (default: by size, fewer for large LPs)")
    parser.add_argument("--seed", type=int, default=DEFAULT_SEED, help=f"seed of the LP generator (default {DEFAULT_SEED})")
    parser.add_argument("--netlib", default=None, metavar="DIR",
                        help="folder of NETLIB .mps files (default ../shared/reference/netlib beside the repository)")
    parser.add_argument("--quick", action="store_true", help="3 LPs per size, one repeat: a fast look")
    args = parser.parse_args(argv)
    if args.repeat is not None and args.repeat < 1:
        parser.error("--repeat must be at least 1")
    run(args.sizes, args.seed, args.repeat, args.quick, args.netlib)


if __name__ == "__main__":
    main()

"""The MIP family: blends with whole-number choices, ours beside scipy.optimize.milp (HiGHS).

Two kinds of problem, each solved by `blendkit.engine.solve_mip_form` and by
`scipy.optimize.milp` (HiGHS's branch and cut) to the same relative gap, timed as a whole
call (median of the repeats), with the ratio ours / HiGHS, both node counts and whether
the answers agree (status, and optimum within MIP_OBJECTIVE_RTOL):

- `min_if_used_blend`: a 40 x 25 blend (ingredients and contents from
  `blends.make_blend`) with a minimum inclusion if used on every ingredient
  (semi-continuous) and at most 10 ingredients in the formula (a binary z_j per
  ingredient with x_j <= max_j z_j, and sum z <= 10, as the LP builder models it). The
  specs sit around the levels of a mixture of 8 ingredients that meets every minimum,
  so each problem has a solution, while the LP optimum uses more than 10 ingredients.
- `scale_step_blend`: the broiler starter of `sample_workbooks/broiler_starter.xlsx`
  (read by `blendkit.read.read_workbook`, built by `blendkit.lp.build.build_lp`) weighed
  on a 0.5 kg scale: a whole number n_j per ingredient, the weight 0.5 n_j kg and the
  inclusion x_j = 0.5 n_j / batch * 100.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from scipy.optimize import Bounds, LinearConstraint, milp

from blendkit.bench.blends import TOTAL, make_blend
from blendkit.bench.options import Options
from blendkit.bench.timing import timed
from blendkit.engine import StandardForm, Tolerances, solve_mip_form

# Answers agree when their statuses match and their optima differ by at most this,
# relative to max(1, |HiGHS optimum|): both solve to the default relative gap 1e-6.
MIP_OBJECTIVE_RTOL = 1e-6
INGREDIENTS, NUTRIENTS, MOST_INGREDIENTS, INSTANCES, REPEATS = 40, 25, 10, 3, 3
MIXTURE_LARGE, MIXTURE_SMALL = 5, 3  # ingredients of the mixture the specs are set around
SCALE_STEP = 0.5  # kg
WHOLE_STEPS = 1e-9  # a maximum within this many steps of a whole number of steps is that number
BROILER = Path(__file__).resolve().parents[2] / "sample_workbooks" / "broiler_starter.xlsx"
HEAD = (f"{'MIP':<38}{'ours ms':>10}{'HiGHS ms':>10}{'ours/HiGHS':>12}{'nodes':>7}{'HiGHS nodes':>12}"
        f"{'gap LP-MIP':>11}  agreement")


@dataclass(frozen=True)
class MIPInstance:
    """A MIP in the engine's general form: 0/1 integrality and semi-continuous thresholds."""

    name: str
    form: StandardForm
    integrality: np.ndarray
    semicontinuous: np.ndarray


def _thresholds(lower: np.ndarray, upper: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """A minimum inclusion if used for every ingredient, by the size of its maximum:
    1-4 % for feedstuffs, 0.1-0.3 % for minerals, 0.01-0.04 % for additives; a fixed rate
    becomes "that rate or nothing", and a minimum stays as the minimum if used."""
    n = upper.size
    s = np.where(upper >= 5, rng.uniform(1, 4, n), np.where(upper >= 0.5, rng.uniform(0.1, 0.3, n),
                                                             rng.uniform(0.01, 0.04, n)))
    s = np.maximum(s, lower)
    return np.minimum(s, upper)


def _small_mixture(s: np.ndarray, upper: np.ndarray, fixed: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """A mixture of MIXTURE_LARGE feedstuffs (one without a maximum) and MIXTURE_SMALL
    others, each at least at its threshold, summing to 100: the feedstuffs are filled up
    to their maximum in turn, the one without a maximum last."""
    unlimited = rng.choice(np.flatnonzero(upper >= TOTAL))
    large = rng.choice(np.setdiff1d(np.flatnonzero(upper >= 5), [unlimited]), size=MIXTURE_LARGE - 1, replace=False)
    small = rng.choice(np.flatnonzero((upper < 5) & ~fixed), size=MIXTURE_SMALL, replace=False)
    x = np.zeros(upper.size)
    chosen = [*large, unlimited, *small]
    x[chosen] = s[chosen]
    for j in [*large, unlimited]:
        x[j] += min(upper[j] - x[j], TOTAL - x.sum())
    return x


def _spec_bounds(contents: np.ndarray, levels: np.ndarray, rng: np.random.Generator):
    """Row bounds of the spec rows around the mixture's levels: a min, a max or both, at
    most one side exactly at the level (so no spec is an equality)."""
    low, high = np.full(levels.size, -np.inf), np.full(levels.size, np.inf)
    for i, level in enumerate(levels):
        if level <= 0:
            continue
        sides = rng.choice(["min", "max", "both"], p=[0.45, 0.15, 0.4])
        tight = rng.random() < 0.25
        if sides in ("min", "both"):
            low[i] = level if tight else level * (1 - rng.uniform(0.01, 0.1))
        if sides in ("max", "both"):
            high[i] = level if tight and sides == "max" else level * (1 + rng.uniform(0.01, 0.2))
    return low, high


def min_if_used_blend(n_ingredients: int, n_nutrients: int, most: int, seed: int, index: int = 0) -> MIPInstance:
    """A blend MIP with a minimum if used on every ingredient and at most `most` ingredients;
    the same for the same arguments (see the module docstring)."""
    inst = make_blend(n_ingredients, n_nutrients, seed, index)
    rng = np.random.default_rng([seed, n_ingredients, n_nutrients, index, 104729])
    n = n_ingredients
    lower = np.array([low for low, _ in inst.bounds])
    upper = np.array([TOTAL if high is None else min(high, TOTAL) for _, high in inst.bounds])
    s = _thresholds(lower, upper, rng)
    x0 = _small_mixture(s, upper, lower == upper, rng)
    low, high = _spec_bounds(inst.contents, inst.contents @ x0 / TOTAL, rng)
    A = np.block([
        [inst.contents / TOTAL, np.zeros((n_nutrients, n))],
        [np.ones((1, n)), np.zeros((1, n))],
        [np.eye(n), -np.diag(upper)],
        [np.zeros((1, n)), np.ones((1, n))],
    ])
    form = StandardForm(
        c=np.concatenate([inst.c, np.zeros(n)]),
        A=A,
        row_lower=np.concatenate([low, [TOTAL], np.full(n, -np.inf), [-np.inf]]),
        row_upper=np.concatenate([high, [TOTAL], np.zeros(n), [most]]),
        col_lower=np.zeros(2 * n),
        col_upper=np.concatenate([upper, np.ones(n)]),
    )
    return MIPInstance(name=f"{n}x{n_nutrients} min if used, max {most} #{index}", form=form,
                       integrality=np.concatenate([np.zeros(n), np.ones(n)]),
                       semicontinuous=np.concatenate([s, np.zeros(n)]))


def scale_step_blend(path: Path = BROILER, step: float = SCALE_STEP) -> MIPInstance:
    """The workbook's blend with every ingredient weighed on a scale of `step` kg."""
    from blendkit.lp.build import build_lp
    from blendkit.read import read_workbook

    blend = read_workbook(path)
    form = build_lp(blend).form
    m, n = form.shape
    unit = step / blend.settings.batch_size * TOTAL  # % of the batch one step weighs
    most = np.where(np.isfinite(form.col_upper), np.floor(form.col_upper / unit + WHOLE_STEPS), np.floor(TOTAL / unit))
    A = np.block([[form.A, np.zeros((m, n))], [np.eye(n), -unit * np.eye(n)]])
    mip = StandardForm(
        c=np.concatenate([form.c, np.zeros(n)]),
        A=A,
        row_lower=np.concatenate([form.row_lower, np.zeros(n)]),
        row_upper=np.concatenate([form.row_upper, np.zeros(n)]),
        col_lower=np.concatenate([form.col_lower, np.zeros(n)]),
        col_upper=np.concatenate([form.col_upper, most]),
    )
    return MIPInstance(name=f"{Path(path).stem}, {step:g} kg scale step", form=mip,
                       integrality=np.concatenate([np.zeros(n), np.ones(n)]), semicontinuous=np.zeros(2 * n))


def highs_milp(instance: MIPInstance, relative_gap: float):
    """scipy.optimize.milp on the instance (semi-continuous columns as HiGHS's kind 2)."""
    form = instance.form
    semi = instance.semicontinuous > 0
    integrality = np.where(semi, 2, instance.integrality)
    lower = np.where(semi, instance.semicontinuous, form.col_lower)
    return milp(form.c, constraints=LinearConstraint(form.A, form.row_lower, form.row_upper),
                bounds=Bounds(lower, form.col_upper), integrality=integrality,
                options={"mip_rel_gap": relative_gap})


def mip_line(instance: MIPInstance, repeat: int) -> str:
    """Both solvers on one instance, as one line of the table."""
    gap = Tolerances().relative_gap
    ours, t_ours = timed(lambda: solve_mip_form(instance.form, instance.integrality, instance.semicontinuous),
                         repeat)
    ref, t_highs = timed(lambda: highs_milp(instance, gap), repeat)
    ref_status = {0: "optimal", 2: "infeasible"}.get(ref.status, f"milp status {ref.status}")
    agrees = "agree" if ours.status == ref_status else f"status {ours.status} vs HiGHS {ref_status}"
    if agrees == "agree" and ours.status == "optimal":
        if abs(ours.objective - ref.fun) > MIP_OBJECTIVE_RTOL * max(1.0, abs(ref.fun)):
            agrees = f"optimum {ours.objective:.8g} vs HiGHS {ref.fun:.8g}"
        else:
            agrees = f"agree ({ours.objective:.2f})"
    lp_gap = (ours.objective - ours.lp_objective) if ours.objective is not None else float("nan")
    return (f"{instance.name:<38}{t_ours * 1e3:>10.1f}{t_highs * 1e3:>10.1f}{t_ours / t_highs:>11.2f}x"
            f"{ours.nodes:>7}{ref.get('mip_node_count') or 0:>12}{lp_gap:>11.3f}  {agrees}")


def section(options: Options) -> Iterator[str]:
    """The MIP family's part of the report, a line at a time as each is measured."""
    count, repeat = (1, 1) if options.quick else (INSTANCES, options.repeat or REPEATS)
    yield (f"MIPs: ours = blendkit.engine.solve_mip, HiGHS = scipy.optimize.milp, both to a "
           f"{Tolerances().relative_gap:g} relative gap; median of {repeat} solves")
    yield HEAD
    yield "-" * len(HEAD)
    for index in range(count):
        yield mip_line(min_if_used_blend(INGREDIENTS, NUTRIENTS, MOST_INGREDIENTS, options.seed, index), repeat)
    if BROILER.exists():
        yield mip_line(scale_step_blend(), repeat)
    else:
        yield f"scale step skipped: {BROILER} is absent"
    yield "(gap LP-MIP: the optimum's rise over the root LP relaxation, in the objective's units)"

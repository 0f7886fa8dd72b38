"""The formulation's own tolerances, named in one place (the engine's are in
`blendkit.engine.tolerances`). Each is relative where a scale is given."""

# A level within this distance (relative to 1 + |bound|) of a bound sits at it.
AT_BOUND = 1e-7
# Inclusions below this (in % or diet units) are reported as 0: they are rounding noise.
ZERO_INCLUSION = 1e-9
# A violation below this (relative to 1 + |bound|) is rounding, not a change.
CHANGED = 1e-6
# An inclusion or level before and after within this (relative to 1 + |value|) of each
# other is unchanged when a run is compared with an earlier one: the difference is noise.
UNCHANGED = 1e-7
# Dinkelbach's iteration for a ratio bound's least move stops when the ratio changes by
# less than this (relative to 1 + |ratio|), or after RATIO_ROUNDS rounds.
RATIO_STEADY = 1e-12
RATIO_ROUNDS = 50
# The least-cost relaxation may exceed the least total penalty by this much (relative,
# plus the absolute slack) while it looks for the cheapest blend among them.
PENALTY_SLACK_REL = 1e-9
PENALTY_SLACK_ABS = 1e-12
# The size of a bound when it weighs a unit of violation: never below these, so a bound
# of 0 (or a ratio row of tiny coefficients) does not make giving way free of scale.
LEAST_ROW_SIZE = 1e-9
LEAST_BOUND_SIZE = 1e-3
# A reported move that differs from a round number by less than this (relative) is
# solver noise and is reported as the round number.
ROUND_NOISE = 1e-7
# A matrix entry smaller than this, relative to the largest entry of its row or of its
# column, is treated as 0 (as LP solvers do): a content of 1e-20 beside contents of 1 to
# 100 means nothing for the blend but wrecks the scaling. A content cell so treated is
# named in the run's notes.
DROP_RELATIVE = 1e-10
# The cross-check with HiGHS warns when the two costs differ by more than this, relative
# to max(1, |cost|).
CROSS_CHECK_RTOL = 1e-6
# A bound moved by this much (relative to 1 + |bound|) to find the rate at which the cost
# changes on a side where the optimal basis cannot move it (one-sided shadow prices).
ONE_SIDED_STEP = 1e-6
# A change of a reduced cost smaller than this along a price direction is no change (one
# price per ingredient, `blendkit.lp.shared_prices`).
DUAL_SIGN = 1e-12
# A sweep steps this far past a breakpoint (relative to 1 + |value|) to find the next
# piece's basis.
SWEEP_NUDGE = 1e-9
# Rules a mill can weigh (`blendkit.lp.weigh`): a bound within this many steps (or packs)
# of a whole number of them is that whole number.
WHOLE_STEPS = 1e-9
# The seconds the search under those rules may take when Settings gives no Time limit;
# then the best formula found is reported with its proven gap.
WEIGH_TIME_LIMIT = 60.0

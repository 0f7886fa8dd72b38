"""From a validated blend to a formula: build the LP, read the engine's answer, and
explain an infeasible one (conflicts and the least-cost relaxation)."""

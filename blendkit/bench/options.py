"""The settings of one benchmark run, as the command line gives them to every family."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Options:
    """What one run measures; each family reads the fields it needs."""

    sizes: tuple[tuple[int, int], ...]  # (ingredients, nutrients) of the blend-shaped LPs
    seed: int  # seed of the LP generator
    repeat: int | None  # timed repeats of each solve; None: each family's own default
    quick: bool  # a fast look: few LPs, one repeat
    netlib: str | None  # folder of NETLIB .mps files; None: the default beside the repository

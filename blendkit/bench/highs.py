"""HiGHS through highspy, its own Python interface: the one home of every highspy import.

highspy is installed by the test extra only (``pip install '.[test]'``), not by blendkit
itself, so it is imported here when a part of the benchmark that needs it runs, never
when `blendkit.bench` is imported. scipy's ``linprog(method="highs")``, used for the
blend LPs, comes with scipy and needs no extra.
"""

from __future__ import annotations

import ctypes
import os
import sys

# What to print, on one line, when highspy is missing.
MISSING_HIGHSPY = ("blendkit.bench needs highspy, which only the test extra installs: "
                   "pip install '.[test]'")


class MissingTestExtra(ImportError):
    """A package that only the test extra installs is missing; the message says what to do."""


def highspy_module():
    """The highspy module, imported now; MissingTestExtra when it is not installed."""
    try:
        import highspy
    except ImportError as error:
        raise MissingTestExtra(MISSING_HIGHSPY) from error
    return highspy


def model_status(h) -> str:
    """HiGHS's model status in the engine's vocabulary."""
    highspy = highspy_module()
    status = h.getModelStatus()
    names = {
        highspy.HighsModelStatus.kOptimal: "optimal",
        highspy.HighsModelStatus.kInfeasible: "infeasible",
        highspy.HighsModelStatus.kUnbounded: "unbounded",
        highspy.HighsModelStatus.kIterationLimit: "iteration_limit",
    }
    return names.get(status, h.modelStatusToString(status))


def silent_highs():
    """A HiGHS instance that prints nothing; the first one made in a process prints a
    banner from C, so that one is made with the process's stdout sent to /dev/null."""
    highspy = highspy_module()
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


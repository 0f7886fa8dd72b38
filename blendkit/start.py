"""Start-up of the `blendkit` command: signals first, then the command line.

Kept tiny so that an interrupt at any point after the first line ends in a message and
an exit code, never a traceback: SIGINT (Ctrl-C) prints "interrupted" and exits 130,
SIGTERM prints "terminated" and exits 143, and on either, a half-written output is
removed (the writers clean up on any exception).
"""

import gc
import os
import signal
import sys

EXIT_INTERNAL = 70
EXIT_INTERRUPTED = 130
EXIT_TERMINATED = 143


# OpenBLAS (numpy's and scipy's own copies) starts one worker thread per core as it loads,
# and the workers spin waiting for work: about 0.05 s of CPU per process, and 0.07 s of wall
# time for a sample solve on the busy 2-core development machine. The engine holds BLAS to
# one thread for every solve anyway (`blendkit.engine.solve.one_blas_thread`), and nothing
# else in a command does BLAS work worth threads, so the command loads OpenBLAS with one
# thread, unless the user has chosen a thread count with any of these variables.
BLAS_THREAD_VARIABLES = ("OPENBLAS_NUM_THREADS", "GOTO_NUM_THREADS", "OMP_NUM_THREADS")


def one_blas_thread_at_load() -> None:
    """OPENBLAS_NUM_THREADS=1 in this process's environment (read by OpenBLAS as it loads,
    so before numpy is imported), unless a thread count is set already."""
    if not any(name in os.environ for name in BLAS_THREAD_VARIABLES):
        os.environ["OPENBLAS_NUM_THREADS"] = "1"


class Interrupted(BaseException):
    """Raised by the SIGINT handler. Not a KeyboardInterrupt, which the command-line
    library would turn into its own message and exit code."""


class Terminated(BaseException):
    """Raised by the SIGTERM handler, so that clean-up code runs as for Ctrl-C."""


def _interrupt(signum, frame) -> None:
    """Turn SIGINT into an exception that unwinds (and cleans up) to `main`."""
    raise Interrupted()


def _terminate(signum, frame) -> None:
    """Turn SIGTERM into an exception that unwinds (and cleans up) to `main`."""
    raise Terminated()


def main() -> None:
    """Entry point of the `blendkit` console script and of `python -m blendkit`."""
    signal.signal(signal.SIGINT, _interrupt)
    signal.signal(signal.SIGTERM, _terminate)
    # The imports make a few hundred thousand objects and no garbage worth collecting, and
    # the collector's passes over them cost about 8% of the imports' time: it is off
    # until the command has its modules (`imported`), and on again however main ends.
    gc.disable()
    try:
        one_blas_thread_at_load()
        from blendkit.cli import app

        app()
    except (KeyboardInterrupt, Interrupted):
        _exit(EXIT_INTERRUPTED, "interrupted")
    except Terminated:
        _exit(EXIT_TERMINATED, "terminated")
    except Exception as error:  # a bug of ours: say so plainly, without a traceback
        _exit(EXIT_INTERNAL, f"blendkit: internal error ({type(error).__name__}: {error}); please report it")
    finally:
        gc.enable()
        # The process ends next: its objects go with it, and the collector's last passes
        # over them at exit (0.06-0.09 s after a plain solve) are saved.
        gc.freeze()


def imported() -> None:
    """Called by each command once its modules are imported: the garbage collector on
    again, for the work (a big workbook's objects refer to each other).

    The imports' objects (modules, classes, functions: a few hundred thousand, all kept
    to the end) are frozen first (`gc.freeze`), so that the collector's passes during
    the work look at the work's objects only: unfrozen, the first full pass over them
    came in the middle of writing a sample's output sheets, 0.014 s of a 0.37 s solve."""
    gc.freeze()
    gc.enable()


def _exit(code: int, message: str) -> None:
    """Print `message` on stderr and leave with `code`, ignoring further signals."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_IGN)
    print(message, file=sys.stderr, flush=True)
    raise SystemExit(code) from None

"""Start-up of the `blendkit` command: signals first, then the command line.

Kept tiny so that an interrupt at any point after the first line ends in a message and
an exit code, never a traceback: SIGINT (Ctrl-C) prints "interrupted" and exits 130,
SIGTERM prints "terminated" and exits 143, and on either, a half-written output is
removed (the writers clean up on any exception).
"""

import signal
import sys

EXIT_INTERNAL = 70
EXIT_INTERRUPTED = 130
EXIT_TERMINATED = 143


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
    try:
        from blendkit.cli import app

        app()
    except (KeyboardInterrupt, Interrupted):
        _exit(EXIT_INTERRUPTED, "interrupted")
    except Terminated:
        _exit(EXIT_TERMINATED, "terminated")
    except Exception as error:  # a bug of ours: say so plainly, without a traceback
        _exit(EXIT_INTERNAL, f"blendkit: internal error ({type(error).__name__}: {error}); please report it")


def _exit(code: int, message: str) -> None:
    """Print `message` on stderr and leave with `code`, ignoring further signals."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_IGN)
    print(message, file=sys.stderr, flush=True)
    raise SystemExit(code) from None

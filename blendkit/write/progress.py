"""A progress bar on stderr while many formulas are solved (never on stdout).

Shown only when stderr is a terminal and more than one LP is solved, so that pipes,
files and JSON output get nothing but their document.
"""

from __future__ import annotations

import sys


def stderr_is_terminal() -> bool:
    """True when stderr is an interactive terminal."""
    return sys.stderr.isatty()


class ProgressBar:
    """A callback progress(done, total) that draws a bar on stderr (rich, which typer
    already installs), started on the first call and closed at the last."""

    def __init__(self) -> None:
        self._bar = None
        self._task = None

    def __call__(self, done: int, total: int) -> None:
        """Show that `done` of `total` LPs are solved."""
        if total < 2:
            return
        if self._bar is None:
            from rich.console import Console
            from rich.progress import Progress

            self._bar = Progress(console=Console(file=sys.stderr, force_terminal=True), transient=True)
            self._bar.start()
            self._task = self._bar.add_task("Solving formulas", total=total)
        self._bar.update(self._task, completed=done)
        if done >= total:
            self._bar.stop()


def progress_bar(quiet: bool = False) -> ProgressBar | None:
    """A progress bar for the command line, or None when stderr is no terminal."""
    return ProgressBar() if stderr_is_terminal() else None

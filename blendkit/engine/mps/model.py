"""What an MPS file holds (`MPSModel`), the error for a file that is not MPS (`MPSError`),
and the fixed layout's constants, which the reader and the writer share."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blendkit.engine.standard_form import StandardForm

# Values of this magnitude or more in RHS, RANGES and BOUNDS mean infinity.
INFINITY = 1e30
# The six fields of fixed MPS as 0-based slices: columns 2-3, 5-12, 15-22, 25-36, 40-47, 50-61.
FIXED_FIELDS = ((1, 3), (4, 12), (14, 22), (24, 36), (39, 47), (49, 61))
FIXED_WIDTH = 61
FIXED_NAME_WIDTH = 8
FIXED_NUMBER_WIDTH = 12


class MPSError(ValueError):
    """A file that is not valid MPS (as `read` reads it), with the line at fault."""

    def __init__(self, message: str, *, path: str | None = None, line: int | None = None):
        self.message = message
        self.path = path
        self.line = line
        where = ", ".join(part for part in (path, f"line {line}" if line else None) if part)
        super().__init__(f"{where}: {message}" if where else message)


@dataclass(frozen=True)
class MPSModel:
    """An LP read from an MPS file.

    `form` is the model as the engine solves it, always a minimisation (n_ub = 0):
    a maximising file (`maximise` True) has its objective negated in `form.c`.
    `row_names` and `column_names` name the rows and columns of `form.A`; the objective
    row's name is `objective_name` ("" when the file has no N row). The file's objective
    is `objective(x)` = ±(form.c·x) + `objective_constant`. `integrality` gives per
    column 1 for an integer column and 0 for a continuous one (scipy.optimize.milp's
    codes, as `blendkit.engine.solve_mip_form` takes them); the reader always sets it,
    None (a model made by hand) means every column is continuous.
    """

    name: str
    form: StandardForm
    row_names: tuple[str, ...]
    column_names: tuple[str, ...]
    objective_name: str
    objective_constant: float
    maximise: bool = False
    integrality: np.ndarray | None = None

    @property
    def is_mip(self) -> bool:
        """True when some column is an integer column."""
        return self.integrality is not None and bool(np.any(self.integrality))

    def objective(self, x) -> float:
        """The file's objective at x, in its own sense, with the constant."""
        value = float(self.form.c @ np.asarray(x, dtype=float))
        return (-value if self.maximise else value) + self.objective_constant

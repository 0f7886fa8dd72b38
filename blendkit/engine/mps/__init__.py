"""Read and write MPS files, the open standard text format for LP models.

`read(path)` returns an `MPSModel` whose `form` the engine solves with `solve_form`;
`write(path, form_or_model)` writes a `StandardForm` (or a model read earlier) so that
reading it back gives the same form, bit for bit, within the limits of the format listed
under "What the writer produces" in `writer`. Malformed files raise `MPSError` (a
ValueError) naming the file and line; what the reader accepts is listed in `reader`.

Modules: `model` (MPSModel, MPSError and the fixed layout both sides share), `reader`
(lines and sections to records), `assemble` (records to the model's arrays), `writer`.
"""

from blendkit.engine.mps.model import INFINITY, MPSError, MPSModel
from blendkit.engine.mps.reader import read
from blendkit.engine.mps.writer import write

__all__ = ["INFINITY", "MPSError", "MPSModel", "read", "write"]

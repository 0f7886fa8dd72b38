"""blendkit: least-cost blends from a spreadsheet.

The pipeline, one folder per stage:
read/ (xlsx -> model.blend.Blend) -> lp/ (Blend -> LP, engine result -> model.formula.Formula,
conflicts) with engine/ (our simplex) -> write/ (workbook, JSON, console, MPS).
`pipeline` strings them together; `cli` is a thin layer over it.

The main library calls are re-exported here and imported only when first used, so that
`import blendkit` stays cheap.
"""

from importlib import import_module

__version__ = "0.1.0"

CAUTION = (
    "Caution: formulations must be checked by a qualified nutritionist (or, for "
    "fertilizer, an agronomist) and against "
    "local regulations before use. blendkit finds the cheapest mix that meets the "
    "limits you enter; it cannot tell whether those limits are right for the animals "
    "or people who will eat it, or for the crop and soil it is spread on."
)

# Public name -> the module that defines it.
_EXPORTS = {
    "Blend": "blendkit.model.blend",
    "Formula": "blendkit.model.formula",
    "WorkbookError": "blendkit.errors",
    "OutputError": "blendkit.errors",
    "read_workbook": "blendkit.read",
    "check_workbook": "blendkit.pipeline",
    "formulate": "blendkit.pipeline",
    "formulate_many": "blendkit.pipeline",
    "solve_workbook": "blendkit.pipeline",
    "export_mps": "blendkit.write.mps",
}

__all__ = ["CAUTION", "__version__", *_EXPORTS]


def __getattr__(name: str):
    """Import a re-exported name on first use (keeps `blendkit --help` fast)."""
    if name not in _EXPORTS:
        raise AttributeError(f"module 'blendkit' has no attribute {name!r}")
    return getattr(import_module(_EXPORTS[name]), name)

"""blendkit: least-cost blends from a spreadsheet.

The pipeline, one module per stage:
read_workbook -> model -> build_lp -> engine -> analyse -> write_workbook / write_json / report_console.
"""

__version__ = "0.1.0"

CAUTION = (
    "Caution: formulations must be checked by a qualified nutritionist and against "
    "local regulations before use. blendkit finds the cheapest mix that meets the "
    "limits you enter; it cannot tell whether those limits are right for the animals "
    "or people who will eat it, or for the crop and soil it is spread on."
)

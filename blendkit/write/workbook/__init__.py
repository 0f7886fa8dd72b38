"""The output workbook: a copy of the input with result sheets added.

`book` copies the input and calls one module per output sheet (`result`, `conflicts`,
`changes`, `shadow_prices`, `run_info`, `result_data`); the rest are their shared parts.
"""

from blendkit.write.workbook.book import OUTPUT_SHEETS, write_workbook

__all__ = ["OUTPUT_SHEETS", "write_workbook"]

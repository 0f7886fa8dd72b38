"""The output workbook: a copy of the input with result sheets added."""

from blendkit.write.workbook.book import OUTPUT_SHEETS, write_workbook

__all__ = ["OUTPUT_SHEETS", "write_workbook"]

"""Workbook reader: an .xlsx file in, a validated Blend out, every problem with its cell."""

from blendkit.read.workbook import read_workbook

__all__ = ["read_workbook"]

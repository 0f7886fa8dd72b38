"""Writers: a Formula rendered as the output workbook, JSON, the console summary or MPS."""

"""Workbooks we write for the user to start from: the blank template and worked examples."""

# The worked examples' names (the keys of `examples.EXAMPLES`), here so that the command
# line can list them without loading the examples (a test keeps the two in step).
EXAMPLE_NAMES = ("broiler", "layer", "diet", "fertilizer", "plant")

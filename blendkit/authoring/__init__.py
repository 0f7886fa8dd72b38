"""Workbooks we write for the user to start from: the blank template and worked examples."""

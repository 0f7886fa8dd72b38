"""`python -m blendkit` runs the command line."""

from blendkit.cli import main

main()

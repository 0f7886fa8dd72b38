"""`python -m blendkit` runs the command line."""

from blendkit.start import main

main()

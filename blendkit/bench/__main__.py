"""`python -m blendkit.bench`: run the benchmark (see `blendkit.bench.report.main`)."""

from blendkit.bench.report import main

if __name__ == "__main__":
    main()

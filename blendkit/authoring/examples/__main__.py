"""`python -m blendkit.authoring.examples OUT_DIR`: write every worked example into OUT_DIR."""

from blendkit.authoring.examples import main

if __name__ == "__main__":
    main()

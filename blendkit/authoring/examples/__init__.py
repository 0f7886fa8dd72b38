"""Worked examples: ready-made workbooks to try blendkit on and to test it against.

Each example is plain data (an `Example`, see `record`) in a module of its own and kept
in `EXAMPLES` under a short name; `write_example` turns one into a workbook in the format
the reader expects (the sheets are written by `writer`, shared by every example). Add a
new example by writing another module with its `Example` and listing it in `EXAMPLES`.

    name        module         the example
    broiler     broiler.py     a broiler starter feed (one blend)
    layer       layer.py       a laying-hen feed with a ratio spec and ingredient groups
    diet        diet.py        a day's menu for one adult (diet mode: amounts of foods per 100 g)
    fertilizer  fertilizer.py  an N-P-K 15-15-15 bulk blend with sulphur, from straight materials
    plant       plant.py       a pig feed plant making three feeds from shared, limited stocks

Run ``python -m blendkit.authoring.examples OUT_DIR`` to write every example into OUT_DIR.

The scenarios, places, people and prices are invented. Composition values are from
memory of published feed, food and fertilizer tables; for demonstration only, not for
feeding, eating or spreading.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from openpyxl import Workbook

from blendkit.authoring.examples.broiler import BROILER_STARTER
from blendkit.authoring.examples.diet import DAY_MENU
from blendkit.authoring.examples.fertilizer import NPK_BLEND
from blendkit.authoring.examples.layer import LAYER_FEED
from blendkit.authoring.examples.plant import PIG_PLANT
from blendkit.authoring.examples.record import Example
from blendkit.authoring.examples.writer import AMOUNT_FORMAT, workbook_of

__all__ = [
    "AMOUNT_FORMAT",
    "BROILER_STARTER",
    "DAY_MENU",
    "EXAMPLES",
    "LAYER_FEED",
    "NPK_BLEND",
    "PIG_PLANT",
    "Example",
    "example_workbook",
    "main",
    "write_example",
]

# Every example, by the name `write_example` takes.
EXAMPLES: dict[str, Example] = {
    "broiler": BROILER_STARTER,
    "layer": LAYER_FEED,
    "diet": DAY_MENU,
    "fertilizer": NPK_BLEND,
    "plant": PIG_PLANT,
}


def write_example(path: str | Path, name: str = "broiler") -> Path:
    """Write the example called `name` as a workbook and return where it went.

    `path` is the file to write (an existing file is replaced); if it is an existing
    directory, the workbook goes inside it as ``<file_stem>.xlsx``. Raises KeyError for
    an unknown name.
    """
    example = EXAMPLES[name]
    target = Path(path)
    if target.is_dir():
        target = target / f"{example.file_stem}.xlsx"
    example_workbook(name).save(target)
    return target


def example_workbook(name: str) -> Workbook:
    """The example called `name` as an openpyxl Workbook, not yet saved (KeyError if unknown)."""
    return workbook_of(EXAMPLES[name])


def main(argv: list[str] | None = None) -> None:
    """Write every example workbook into the directory given on the command line."""
    parser = argparse.ArgumentParser(
        prog="python -m blendkit.authoring.examples",
        description="Write every worked example workbook into OUT_DIR.",
    )
    parser.add_argument(
        "out_dir", metavar="OUT_DIR", type=Path, help="directory to write into (created if missing)"
    )
    args = parser.parse_args(argv)
    args.out_dir.mkdir(parents=True, exist_ok=True)
    for name in EXAMPLES:
        print(write_example(args.out_dir, name))

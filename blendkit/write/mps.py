"""The blend's LP as an MPS file (the open LP model format), for re-solving elsewhere."""

from __future__ import annotations

from pathlib import Path

from blendkit.engine import mps
from blendkit.errors import OutputError
from blendkit.lp.build import build_lp
from blendkit.model.blend import Blend


def _row_name(blend: Blend, lp, i: int) -> str:
    """An MPS row name from a row's meaning, e.g. "Grower: min Lysine / ME"."""
    row = lp.rows[i]
    product = lp.products[row.product][0] if row.product is not None else None
    text = row.name if row.kind != "stock" else f"stock {row.name}"
    if row.kind == "total":
        text = "TOTAL"
    elif len(row.sides) == 1 and row.kind != "stock":
        text = f"{row.sides[0].side} {text}"
    if row.basis == "dry matter":
        text += " DM"
    return f"{product}: {text}" if product else text


def export_mps(blend: Blend, path: str | Path) -> Path:
    """Write the blend's LP as an MPS file, so any LP solver can re-solve it.

    Columns are the ingredients (inclusion in %, or diet amounts, with their limits as
    bounds; prefixed by the product with several products); rows are the spec, group and
    stock rows as the engine solves them (a ranged row where a spec has both a min and a
    max) and `TOTAL` (inclusions sum to 100). The objective `COST` is the blend cost per
    `Cost per` unit, or the run's total cost with several products. Names that the fixed
    format cannot hold (such as the workbook's Name when longer than 8 characters) make the
    file free MPS, with blanks turned into underscores.
    """
    lp = build_lp(blend)
    names = [item.name for item in blend.ingredients]
    if lp.multi:
        columns = [f"{product}: {name}" for product, _ in lp.products for name in names]
    else:
        columns = names
    target = Path(path)
    try:
        mps.write(
            target,
            lp.form,
            name=(blend.settings.name or "").strip() or "BLEND",  # a long one makes the file free MPS
            row_names=[_row_name(blend, lp, i) for i in range(len(lp.rows))],
            column_names=columns,
        )
    except OSError as error:
        raise OutputError(f"{target}: could not write the MPS file ({error.strerror or error})") from None
    return target

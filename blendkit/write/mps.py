"""The blend's LP as an MPS file (the open LP model format), for re-solving elsewhere."""

from __future__ import annotations

from pathlib import Path

from blendkit.engine import mps
from blendkit.errors import OutputError
from blendkit.lp.build import build_lp
from blendkit.lp.weigh import build_mip, with_binaries
from blendkit.model.blend import Blend
from blendkit.model.weighing import has_weigh_rules


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


def _with_rules(blend: Blend, lp, rows: list[str], columns: list[str]):
    """The integer program of the weighing rules (`blendkit.lp.weigh`), each Min if used
    as a 0/1 column, with names for the added rows and columns."""
    mip = build_mip(blend, lp)
    form, integrality, switched = with_binaries(mip)
    added = {whole.count: f"{whole.family} {columns[whole.column]}" for whole in mip.wholes}
    added.update({z: f"used {columns[k]}" for k, z in mip.indicators})
    columns = columns + [added[k] for k in range(mip.lp_columns, mip.form.c.size)]
    columns += [f"on {columns[k]}" for k in switched]
    rows = rows + [f"weigh {i + 1}" for i in range(mip.form.A.shape[0] - mip.lp_rows)]
    rows += [f"{side} if used {columns[k]}" for k in switched for side in ("min", "max")]
    return form, integrality, rows, columns


def export_mps(blend: Blend, path: str | Path) -> Path:
    """Write the blend's LP as an MPS file, so any LP solver can re-solve it.

    Columns are the ingredients (inclusion in %, or diet amounts, with their limits as
    bounds; prefixed by the product with several products); rows are the spec, group and
    stock rows as the engine solves them (a ranged row where a spec has both a min and a
    max) and `TOTAL` (inclusions sum to 100). The objective `COST` is the blend cost per
    `Cost per` unit, or the run's total cost with several products. Names that the fixed
    format cannot hold (such as the workbook's Name when longer than 8 characters) make the
    file free MPS, with blanks turned into underscores. Under the weighing rules (Min if
    used, Pack size, Scale step, Max ingredients) the file is their integer program
    (`blendkit.lp.weigh`), whole-number columns between integer markers and each Min if
    used as a 0/1 column.
    """
    lp = build_lp(blend)
    names = [item.name for item in blend.ingredients]
    if lp.multi:
        columns = [f"{product}: {name}" for product, _ in lp.products for name in names]
    else:
        columns = names
    rows = [_row_name(blend, lp, i) for i in range(len(lp.rows))]
    columns += [f"{side} short {rows[i]}" for i, side, _ in lp.elastic]  # soft specs' elastic columns
    form, integrality = lp.form, None
    if has_weigh_rules(blend):
        form, integrality, rows, columns = _with_rules(blend, lp, rows, columns)
    target = Path(path)
    try:
        mps.write(
            target,
            form,
            name=(blend.settings.name or "").strip() or "BLEND",  # a long one makes the file free MPS
            row_names=rows,
            column_names=columns,
            integrality=integrality,
        )
    except OSError as error:
        raise OutputError(f"{target}: could not write the MPS file ({error.strerror or error})") from None
    return target

"""Live formulas on the Result sheet that recompute the cost and the nutrient levels from
the input sheets, so a reviewer can check the numbers in any spreadsheet program.

An as-fed level (or a cost) is the sum of (inclusion cell on Result x input cell) / 100,
or in a diet the sum of (amount cell x input cell); a ratio divides the two recomputed
levels it names, and a dry-matter level divides the recomputed level by the recomputed
dry matter (in %). A combined nutrient's level is the same sum of numbers times the
recomputed levels of its parts as its Sum on the Combined sheet:
``=434.8*H30+255.8*H31-282.1*H32``.

The Result sheet writes its ingredient table in the order the reader gives, which is the
Ingredients sheet's row order. So when the input cells of a level are one unbroken column
of that sheet, in the same order as the inclusion cells, and share one percent format
(or none), the sum is one SUMPRODUCT of the two aligned ranges, scaled once:
``=SUMPRODUCT(B24:B41,Ingredients!F2:F19)/100``. Otherwise (blank rows between
ingredients, cells on several sheets, a percent format on some cells only) it falls back
to the plain sum of products, each operand scaled on its own.
"""

from __future__ import annotations

import functools
import re
import weakref
from typing import Callable

from openpyxl.utils import get_column_letter
from openpyxl.utils.cell import coordinate_to_tuple
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from blendkit.model.blend import AS_FED, DRY_MATTER, Blend, Ingredient
from blendkit.model.combined import Combined
from blendkit.model.formula import IngredientLine, NutrientLine
from blendkit.write.workbook.cells import cell_at, live, nutrient_format

# The sheet a bare cell reference from the reader (no "Sheet!" part) belongs to.
INGREDIENTS_SHEET = "Ingredients"
# Longest formula the common spreadsheet programs accept (Excel's limit, in characters).
MAX_FORMULA_LENGTH = 8192
# The nutrient table's column of live formulas; ratio and dry-matter lines divide its cells.
LIVE_COLUMN = 8

# A reference as the reader writes it, one per line: "Sheet!F12", "'My sheet'!$F$12" or a
# bare "F12" (on Ingredients); the sheet part, the column letters and the row.
_REFERENCE = re.compile(r"^(?:(.*)!)?\$?([A-Za-z]{1,3})\$?([0-9]+)$", re.MULTILINE)

# What one write has found already (operands, sheets, percent formats), per workbook being
# written (forgotten with the workbook): a Batch sheet asks for 60,000 input cells.
_OPERANDS: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()

# Parts of a number format that never make it a percentage: quoted text, escaped
# characters and [bracketed] sections. The same rule as the reader's.
_LITERAL_FORMAT_PARTS = re.compile(r'"[^"]*"|\\.|\[[^\]]*\]')


def recompute_formula(
    blend: Blend,
    lines: tuple[IngredientLine, ...],
    inclusion_rows: dict[str, int],
    workbook: Workbook,
    input_cell: Callable[[Ingredient], str | None],
    column: str = "B",
) -> str | None:
    """A live formula: sum of (inclusion cell on Result x input cell) / 100; in diet mode
    the sum of (amount cell x input cell).

    `input_cell(ingredient)` gives the reader's reference for the value to weigh; the
    inclusion cells are in `column` (B on Result) at `inclusion_rows`. Every
    ingredient is included, so editing any inclusion cell updates the result; if that
    would pass the spreadsheet formula length limit, only the ingredients in the blend
    are kept. Returns None when an input cell is unknown.
    """
    references = []
    for line in lines:
        try:
            references.append(input_cell(blend.ingredient(line.name)))
        except KeyError:
            return None
    rows = [inclusion_rows[line.name] for line in lines]
    aligned = _sumproduct(workbook, references, rows, percent=not blend.diet, column=column)
    if aligned is not None:
        return aligned
    terms: list[tuple[float, str]] = []
    for line, reference in zip(lines, references):
        operand = _input_operand(workbook, reference)
        if operand is None:
            return None
        terms.append((line.inclusion, f"{column}{inclusion_rows[line.name]}*{operand}"))
    if not terms:
        return None
    percent = not blend.diet
    text = _sum_formula([term for _, term in terms], percent)
    if len(text) > MAX_FORMULA_LENGTH:
        text = _sum_formula([term for inclusion, term in terms if inclusion != 0] or ["0"], percent)
    return text if len(text) <= MAX_FORMULA_LENGTH else None


def write_level_checks(
    sheet: Worksheet,
    workbook: Workbook,
    blend: Blend,
    lines: tuple[IngredientLine, ...],
    nutrients: tuple[NutrientLine, ...],
    header_row: int,
    inclusion_rows: dict[str, int],
) -> dict[str, int]:
    """A live formula beside each as-fed nutrient line of the table under `header_row`,
    from the input contents; returns each nutrient's row of its first such formula."""
    live_rows: dict[str, int] = {}
    combined = {item.name: item for item in blend.combined}
    for offset, line in enumerate(nutrients, start=1):
        if line.kind == "nutrient" and line.basis == AS_FED:
            if line.name in combined:
                check = _combined_formula(combined[line.name], live_rows)
            else:
                check = recompute_formula(
                    blend, lines, inclusion_rows, workbook,
                    lambda item, nutrient=line.name: item.content_cells.get(nutrient),
                )
            if check is not None:
                live(cell_at(sheet, header_row + offset, LIVE_COLUMN), check, nutrient_format(line))
                live_rows.setdefault(line.name, header_row + offset)
    return live_rows


def _combined_formula(combined: Combined, live_rows: dict[str, int]) -> str | None:
    """A combined nutrient's live formula: its numbers times the live levels of its parts
    (written above it, as the reader orders them); None when a part has none."""
    if any(part not in live_rows for _number, part in combined.terms):
        return None
    column = get_column_letter(LIVE_COLUMN)
    text = "="
    for index, (number, part) in enumerate(combined.terms):
        sign = "-" if number < 0 else ("+" if index else "")
        shown = repr(abs(number)).removesuffix(".0")
        text += f"{sign}{shown}*{column}{live_rows[part]}"
    return text


def write_derived_check(
    sheet: Worksheet, row: int, blend: Blend, line: NutrientLine, live_rows: dict[str, int]
) -> None:
    """A ratio's or a dry-matter level's live formula on `row`, dividing the as-fed checks
    in `live_rows`; nothing when one of those is missing or the level is undefined."""
    if line.level is None:
        return  # an undefined ratio (a zero level below the line) has nothing to check
    live_column = get_column_letter(LIVE_COLUMN)
    if line.kind == "ratio":
        parts = _ratio_parts(blend, line.name)
        if parts and parts[0] in live_rows and parts[1] in live_rows:
            top, bottom = (live_rows[part] for part in parts)
            text = f"={live_column}{top}/{live_column}{bottom}"
            live(cell_at(sheet, row, LIVE_COLUMN), text, nutrient_format(line))
    elif line.basis == DRY_MATTER:
        dry = blend.settings.dry_matter
        if line.name in live_rows and dry in live_rows:
            text = f"={live_column}{live_rows[line.name]}/{live_column}{live_rows[dry]}*100"
            live(cell_at(sheet, row, LIVE_COLUMN), text, nutrient_format(line))


def quote_sheet(name: str) -> str:
    """Quote a sheet name only when a formula needs it (spaces, symbols, cell-like)."""
    plain = re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", name)
    cell_like = re.fullmatch(r"[A-Za-z]{1,3}[0-9]+|[Rr][0-9]*([Cc][0-9]*)?", name)
    if plain and not cell_like:
        return name
    return "'" + name.replace("'", "''") + "'"


def _ratio_parts(blend: Blend, name: str) -> tuple[str, str] | None:
    """The two nutrient columns of the ratio spec written as `name`, if there is one."""
    for spec in blend.specs:
        if spec.ratio is not None and spec.nutrient == name:
            return spec.ratio
    return None


def _sumproduct(
    workbook: Workbook, references: list[str | None], rows: list[int], percent: bool, column: str = "B"
) -> str | None:
    """One SUMPRODUCT of the inclusion cells (`rows` of `column`) and the input cells
    `references`, when both are unbroken ranges in the same order and the input cells
    share their percent format; None otherwise."""
    if not references or rows != list(range(rows[0], rows[0] + len(rows))):
        return None
    run = _known_run(workbook, references)
    if run is None:
        return None
    sheet, first, input_column, scaled = run
    if len(scaled) != 1:
        return None
    letter = get_column_letter(input_column)
    text = (f"=SUMPRODUCT({column}{rows[0]}:{column}{rows[-1]},"
            f"{quote_sheet(sheet.title)}!{letter}{first}:{letter}{first + len(references) - 1})")
    factor = (100 if next(iter(scaled)) else 1) / (100 if percent else 1)
    return text + {1: "", 100: "*100", 0.01: "/100"}[factor]


def _known_run(workbook: Workbook, references: list[str | None]) -> tuple | None:
    """`_column_run`, remembered per workbook: every product of a plant, and its Batch
    sheet, asks it for the same input cells of each nutrient."""
    known = _known(workbook)
    key = tuple(references)
    if key not in known.runs:
        known.runs[key] = _column_run(workbook, references)
    return known.runs[key]


def _column_run(workbook: Workbook, references: list[str | None]) -> tuple[Worksheet, int, int, set[bool]] | None:
    """When `references` are one unbroken run down one column of one sheet, in order: the
    sheet, the first row, the column, and whether the cells are shown as percentages (the
    set of the answers, one per cell; see `_place`); None otherwise.

    A Result sheet of 2,000 ingredients and 200 nutrients asks this for 400,000 cells, so
    the references are split by one regular expression over them all, and a cell is
    looked up only once they are known to line up.
    """
    if not all(references):
        return None
    parts = _REFERENCE.findall("\n".join(references))
    names = {name for name, _, _ in parts}
    letters = {letter.upper() for _, letter, _ in parts}
    if len(parts) != len(references) or len(names) != 1 or len(letters) != 1:
        return None
    rows = [int(row) for _, _, row in parts]
    if rows != list(range(rows[0], rows[0] + len(rows))):
        return None
    known = _Known()
    first = _place(workbook, references[0], known)
    if first is None:
        return None
    sheet, _, column, _ = first
    cells = sheet._cells  # never sheet[...]: that would add a cell
    # Cells of one style share one style record (blendkit.read.workbook._share_styles), so
    # a handful of records answer for the whole column; a cell's text is checked first.
    by_style: dict[int, bool] = {}
    scaled: set[bool] = set()
    for row in rows:
        cell = cells.get((row, column))
        if cell is None:
            scaled.add(False)
            continue
        value = cell._value
        if isinstance(value, str) and not value.startswith("="):
            scaled.add(False)  # text that looks like a number is read as written
            continue
        style = id(cell._style)
        if style not in by_style:
            by_style[style] = known.scaled(cell)
        scaled.add(by_style[style])
    return sheet, rows[0], column, scaled


class _Known:
    """What one search of many input cells has found already: sheets by the name a
    reference gives, and whether a number format (by its id) shows a percentage. A
    Result sheet of 2,000 ingredients and 200 nutrients looks up 400,000 cells."""

    def __init__(self):
        self.sheets: dict[str, Worksheet | None] = {}
        self.formats: dict[int, bool] = {}
        self.operands: dict[str | None, str | None] = {}  # `_input_operand`'s answers
        self.runs: dict[tuple, tuple | None] = {}  # `_known_run`'s answers

    def sheet(self, workbook: Workbook, name: str) -> Worksheet | None:
        """`_sheet_named`, remembered."""
        if name not in self.sheets:
            self.sheets[name] = _sheet_named(workbook, name)
        return self.sheets[name]

    def scaled(self, cell) -> bool:
        """`_scaled_as_percent` of a stored cell, its format's answer remembered."""
        value = cell.value
        if isinstance(value, str) and not value.startswith("="):
            return False  # text that looks like a number is read as written
        key = cell._style.numFmtId  # the format's id: the number_format property is slow
        if key not in self.formats:
            self.formats[key] = _scaled_as_percent(value, cell.number_format)
        return self.formats[key]


def _place(workbook: Workbook, reference: str | None, known: _Known | None = None
           ) -> tuple[Worksheet, int, int, bool] | None:
    """The reader's "Sheet!A1" as (sheet, row, column, shown as a percentage)."""
    if not reference:
        return None
    known = known or _Known()
    sheet_name, bang, coordinate = reference.rpartition("!")
    if not bang:
        sheet_name = INGREDIENTS_SHEET
    if len(sheet_name) > 1 and sheet_name[0] == sheet_name[-1] == "'":
        sheet_name = sheet_name[1:-1].replace("''", "'")
    sheet = known.sheet(workbook, sheet_name)
    if sheet is None:
        return None
    position = _position(coordinate)
    if position is None:
        return None
    cell = sheet._cells.get(position)  # never sheet[...]: that would add a cell
    scaled = cell is not None and known.scaled(cell)
    return sheet, position[0], position[1], scaled


def _position(coordinate: str) -> tuple[int, int] | None:
    """A cell reference ("F12", "$F$12") as (row, column); None when it is not one."""
    try:
        return coordinate_to_tuple(coordinate.replace("$", ""))
    except (ValueError, TypeError):
        return None


def _sum_formula(terms: list[str], percent: bool = True) -> str:
    """Plain + and * only, so every spreadsheet program evaluates it the same way."""
    return "=(" + "+".join(terms) + (")/100" if percent else ")")


def input_operand(workbook: Workbook, reference: str | None) -> str | None:
    """The reader's reference to an input cell as a formula operand, scaled *100 when the
    cell is shown as a percentage; None when it cannot be found."""
    return _input_operand(workbook, reference)


def _input_operand(workbook: Workbook, reference: str | None) -> str | None:
    """`_find_operand`, remembered per workbook: a Result sheet asks for each input cell
    once per product and nutrient."""
    known = _known(workbook)
    if reference not in known.operands:
        known.operands[reference] = _find_operand(workbook, reference, known)
    return known.operands[reference]


def _known(workbook: Workbook) -> _Known:
    """What this write of `workbook` has found already (see `_OPERANDS`)."""
    known = _OPERANDS.get(workbook)
    if known is None:
        known = _OPERANDS[workbook] = _Known()
    return known


def _find_operand(workbook: Workbook, reference: str | None, known: _Known | None = None) -> str | None:
    """The reader's "Sheet!A1" (or bare "A1", on Ingredients) as a formula operand.

    A number shown as a percentage (0.05 shown as 5%) was read as the number shown, so
    the operand is scaled the same way: ``Ingredients!F2*100``. None when the sheet is
    not in the workbook.
    """
    place = _place(workbook, reference, known)
    if place is None:
        return None
    sheet, _, _, scaled = place
    coordinate = reference.rpartition("!")[2]
    operand = f"{quote_sheet(sheet.title)}!{coordinate}"
    return operand + "*100" if scaled else operand


def _sheet_named(workbook: Workbook, name: str) -> Worksheet | None:
    """The worksheet called `name`, ignoring case as spreadsheet programs do."""
    wanted = name.casefold()
    for sheet in workbook._sheets:
        if sheet.title.casefold() == wanted and isinstance(sheet, Worksheet):
            return sheet
    return None


def _scaled_as_percent(value: object, number_format: str) -> bool:
    """The reader's rule: a number (typed or computed) in a format with an unquoted,
    unescaped % outside [brackets] is read as the percentage shown. Keep in step with
    `blendkit.read.values.is_percent_format` (a test checks)."""
    if isinstance(value, str) and not value.startswith("="):
        return False  # text that looks like a number is read as written
    return _percent_format(number_format or "")


@functools.lru_cache(maxsize=1024)
def _percent_format(number_format: str) -> bool:
    """True when the format shows a % outside quotes, escapes and [brackets]."""
    return "%" in _LITERAL_FORMAT_PARTS.sub("", number_format)

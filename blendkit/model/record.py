"""The machine-readable record of one run, kept in its output workbook.

Each output workbook holds a hidden sheet, `SHEET` ("Result data"), with this record as
a flat table (Formula, What, Name, Value): what a later run of the same workbook reads
back to say what changed (`blendkit.lp.changes`). The visible sheets are for people and
may change their layout; this table keeps its form, marked by `FORMAT`.

Rows with a blank Formula describe the run (`RUN_ROWS`); the others belong to one
formula, named by its key (the product's name, or for a single blend the workbook's Name
setting, else "blend"):

    cost       (blank)                  the formula's cost (per Cost per unit; a diet's
                                        for the whole diet)
    inclusion  ingredient               inclusion % (a diet: amount), every ingredient
    price      ingredient               the price used (Cost column), every ingredient
    nutrient   nutrient key             level (blank when undefined); the key as in JSON:
                                        "Crude fibre (dry matter)", "Calcium / Phosphorus"
    binding    "kind name side"         the bound, for each limit that binds

With several products, stocks (shared by all products) are not in any formula's rows.

The run's optimal basis follows, for the next run to start from (`blendkit.lp.start`):
rows with a blank Formula, What "basis", the variable's label as JSON text in Name (e.g.
["ingredient", "Grower", "Maize"]) and its state in Value (1 basic, 2 at its upper
bound). Versions that do not know these rows pass over them, as over any run row they do
not know.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from blendkit.model.formula import Formula, Limit, NutrientLine, RunInfo

# The hidden sheet's title, its header row and the version of its form.
SHEET = "Result data"
HEADER = ("Formula", "What", "Name", "Value")
FORMAT = 1
# The first row after the header: (blank, "record", RECORD_NAME, FORMAT).
RECORD_NAME = "blendkit result data"
# The run rows, by What: the RunRecord field each fills.
RUN_ROWS = {
    "input": "input_name",
    "input sha256": "input_sha256",
    "run at": "started_utc",
    "tool version": "tool_version",
    "mode": "mode",
    "status": "status",
}
# The formula rows' What words.
COST, INCLUSION, PRICE, NUTRIENT, BINDING = "cost", "inclusion", "price", "nutrient", "binding"
# The What word of the basis rows (blank Formula).
BASIS = "basis"
# A single blend's formula key when the workbook has no Name.
SINGLE_KEY = "blend"


@dataclass(frozen=True)
class RecordedFormula:
    """One formula as recorded: cost, each ingredient's inclusion and price, each
    nutrient's level (None when undefined) and the bound of each binding limit, by its
    label ("kind name side")."""

    key: str
    cost: float
    inclusions: dict[str, float]
    prices: dict[str, float]
    nutrients: dict[str, float | None]
    binding: dict[str, float | None]


@dataclass(frozen=True)
class RunRecord:
    """One run as recorded: its input, mode ("blend", "diet" or "products"), status and
    formulas (none unless the status is "optimal"). `output` is the file name of the
    output workbook it was read from (blank for this run's own record)."""

    input_name: str
    input_sha256: str
    started_utc: str
    tool_version: str
    mode: str
    status: str
    formulas: tuple[RecordedFormula, ...]
    output: str = ""
    # The optimal basis of the run's LPs: (label, state) pairs (`blendkit.lp.start`).
    basis: tuple[tuple[tuple[str, ...], int], ...] = field(default=(), repr=False)


def formula_key(formula: Formula, product_name: str | None) -> str:
    """The key of one formula: the product's name, or for a single blend the workbook's
    Name (else "blend")."""
    if product_name is not None:
        return product_name
    return formula.blend.settings.name or SINGLE_KEY


def nutrient_key(line: NutrientLine) -> str:
    """A nutrient line's key: its name, with " (dry matter)" for a dry-matter level (a
    ratio is keyed by its text)."""
    if line.basis == "dry matter" and line.kind == "nutrient":
        return f"{line.name} (dry matter)"
    return str(line.name)


def limit_label(limit: Limit) -> str:
    """A limit as "kind name side", e.g. "nutrient Crude fibre (dry matter) max"."""
    name = limit.name
    if limit.kind == "nutrient" and limit.basis == "dry matter":
        name += " (dry matter)"
    return f"{limit.kind} {name} {limit.side}"


def run_mode(formula: Formula) -> str:
    """"products" with a Products sheet, else "diet" or "blend"."""
    if formula.several:
        return "products"
    return "diet" if formula.blend.diet else "blend"


def run_record(formula: Formula, run: RunInfo) -> RunRecord:
    """The record of this run: what its output's Result data sheet holds."""
    formulas = ()
    if formula.solved:
        formulas = tuple(_recorded(formula, product) for product in formula.products)
    return RunRecord(
        input_name=run.input_name,
        input_sha256=run.input_sha256,
        started_utc=run.started_utc,
        tool_version=run.tool_version,
        mode=run_mode(formula),
        status=formula.status,
        formulas=formulas,
        basis=tuple(pair for part in (formula.parts or (formula,)) for pair in part.basis),
    )


def _recorded(formula: Formula, product) -> RecordedFormula:
    """One product's record; a single blend's limits include the stocks (the run's)."""
    limits = product.limits if formula.several else formula.limits
    return RecordedFormula(
        key=formula_key(formula, product.name),
        cost=float(product.cost),
        inclusions={line.name: float(line.inclusion) for line in product.ingredients},
        prices={line.name: float(line.cost) for line in product.ingredients},
        nutrients={nutrient_key(line): line.level for line in product.nutrients},
        binding={limit_label(limit): float(limit.bound) for limit in limits if limit.binding},
    )

"""Whatever a workbook holds, the command line answers with a message and an exit code.

Random small workbooks go through `blendkit solve --json`: most are well formed (they
solve, or are infeasible and get diagnosed, over every optional sheet), some carry a few
junk cells (text, error values, unsaved formulas, negative numbers). Every run must end
with one of the documented exit codes (0 solved, 1 workbook problems, 3 no blend, 4
engine trouble) and a JSON document, never with a Python traceback. The data are random
by design and mean nothing.
"""

from __future__ import annotations

import json

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from typer.testing import CliRunner

from blendkit.cli import app
from tests.workbooks import make_workbook

runner = CliRunner()

NUTRIENTS = ["Protein (%)", "Energy (MJ/kg)", "Calcium (%)", "Dry matter (%)"]
JUNK = ["", "n/a", "yes", "12,5", " 7 ", "#DIV/0!", "=1+1", -3]
# Values for the cells of the rules a mill can weigh, Margin and Step: good, odd and wrong.
RULE_VALUES = [None, None, None, 0.5, 2, 25, 1e-300, 0, -1, 2.5, "ten", 1e11]
# Sums for a Combined row: good ones and the usual slips.
SUMS = ["2 * Protein + Calcium", "Protein \u2212 0.5 * Energy", "Protein + Protein / Energy", "1e3 * Calcium",
        "Combo", "3", "Calcium +", "Protein * Energy"]
number = st.floats(min_value=0, max_value=60, allow_nan=False).map(lambda v: round(v, 2))


@st.composite
def workbooks(draw):
    """Rows for Ingredients, Specs and Settings, and the optional sheets."""
    junk_left = draw(st.sampled_from([0, 0, 0, 1, 2]))

    def value(good):
        """A sensible value, or now and then (while junk is allowed) a junk one."""
        nonlocal junk_left
        if junk_left and draw(st.integers(0, 9)) == 0:
            junk_left -= 1
            return draw(st.sampled_from(JUNK))
        return draw(good)

    n = draw(st.integers(1, 5))
    names = [f"Feed {k}" for k in range(n)]
    rules = draw(st.booleans())  # today's columns, settings and sheets, with odd values too
    rule = st.sampled_from(RULE_VALUES)
    ingredients = [["Ingredient", "Cost", "Min", "Max", "Use", "Stock", *NUTRIENTS]
                   + (["Min if used", "Pack size", "Scale step"] if rules else [])]
    for name in names:
        low = draw(st.one_of(st.none(), st.floats(0, 30).map(lambda v: round(v, 1))))
        high = draw(st.one_of(st.none(), st.floats(30, 100).map(lambda v: round(v, 1))))
        ingredients.append([
            value(st.just(name)), value(number), value(st.just(low)), value(st.just(high)),
            value(st.sampled_from([None, None, "yes", "no"])),
            value(st.sampled_from([None, None, None, 50, 5000])),
            *[value(number) for _ in NUTRIENTS],
            *([draw(rule) for _ in range(3)] if rules else []),
        ])
    specs = [["Nutrient", "Min", "Max", "Basis", "Penalty", "Priority"] + (["Margin", "Step"] if rules else [])]
    chosen = draw(st.lists(st.sampled_from(["Protein", "Energy", "Calcium", "Protein / Energy"]), max_size=3, unique=True))
    for nutrient in chosen:
        low = draw(st.one_of(st.none(), number))
        high = None if low is None else draw(st.one_of(st.none(), number.map(lambda v, low=low: low + v)))
        if low is None:
            high = draw(number)
        basis = draw(st.sampled_from([None, "as fed", "dry matter"])) if "/" not in nutrient else None
        penalty = draw(st.sampled_from([None, None, 5.0])) if basis != "dry matter" and "/" not in nutrient else None
        specs.append([value(st.just(nutrient)), low, high, basis, penalty, value(st.sampled_from([None, 2, 7])),
                      *([draw(rule), draw(rule)] if rules else [])])
    settings_rows = [["Setting", "Value"]]
    for setting in draw(st.lists(st.sampled_from(["Batch size", "Currency", "Mode", "Mass unit"]), max_size=2, unique=True)):
        good = {"Batch size": 500, "Currency": "EUR", "Mode": "diet", "Mass unit": "lb"}[setting]
        settings_rows.append([setting, value(st.just(good))])
    if rules:  # a short Time limit keeps a hard search short: it then ends as documented (exit 4)
        settings_rows.append(["Time limit", draw(st.sampled_from([0.5, 0.001, "soon"]))])
        for setting in draw(st.lists(st.sampled_from(["Max ingredients", "Scale step", "Hand-add below"]),
                                     max_size=2, unique=True)):
            settings_rows.append([setting, draw(st.sampled_from([1, 3, 5, 0.5, 2.5, 0, "ten", 1e-300]))])
    sheets = {}
    if rules and draw(st.booleans()):
        sheets["Combined"] = [["Nutrient", "Sum"], ["Combo", draw(st.sampled_from(SUMS))]]
    if draw(st.booleans()):
        members = ", ".join(names[: draw(st.integers(1, n))])
        sheets["Groups"] = [["Group", "Ingredients", "Min", "Max"], ["G", members, None, value(st.just(60.0))]]
    diet = any(row[0] == "Mode" for row in settings_rows[1:])
    if not diet and draw(st.booleans()):
        sheets["Products"] = [["Product", "Amount", "Max ingredients"], ["P1", value(st.just(2000)), None],
                              ["P2", 1000, draw(st.sampled_from([None, 2, 0, 2.5, "ten"])) if rules else None]]
        if draw(st.booleans()):
            sheets["Limits"] = [["Product", "Ingredient", "Min", "Max", "Min if used", "Pack size"],
                                ["P1", names[0], None, value(st.just(40.0)), *([draw(rule), draw(rule)] if rules
                                                                              else [None, None])]]
    return ingredients, specs, settings_rows, sheets


def run(tmp_path_factory, book):
    """Write the workbook and run `solve --json` on it; returns the click result."""
    ingredients, specs, settings_rows, sheets = book
    path = make_workbook(tmp_path_factory.mktemp("fuzz"), ingredients, specs, settings_rows, sheets=sheets)
    return runner.invoke(app, ["solve", str(path), "--json"])


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(workbooks())
def test_every_workbook_gets_an_exit_code_and_no_traceback(tmp_path_factory, book):
    result = run(tmp_path_factory, book)
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    assert result.exit_code in (0, 1, 3, 4), result.output
    assert "Traceback" not in result.output
    doc = json.loads(result.stdout)
    expected = {"optimal": 0, "workbook_error": 1, "infeasible": 3, "unbounded": 3}
    assert result.exit_code == expected.get(doc["status"], 4)
    if doc["status"] == "infeasible":
        # Explained: by its conflicts, or (the LP feasible) by what the weighing rules cost.
        explained = doc.get("conflicts") or any(
            "practical" in entry for entry in [doc, *(doc.get("products") or {}).values()])
        assert explained, "an infeasible workbook is always explained"

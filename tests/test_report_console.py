"""The terminal summary: the key facts in plain, fixed-width text, the caution last."""

from __future__ import annotations

import dataclasses

from blendkit import CAUTION
from blendkit.write.console import render_summary
from tests import formulas


def block(text: str, heading: str) -> list[str]:
    """The lines of the block that starts with `heading`, up to the next blank line."""
    lines = text.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith(heading))
    end = next((i for i in range(start, len(lines)) if not lines[i].strip()), len(lines))
    return lines[start:end]


def test_optimal_summary_has_the_key_facts():
    text = render_summary(formulas.optimal_formula())
    lines = text.splitlines()
    assert lines[0] == "Meadowbank goat ration"
    assert "Status: optimal" in lines
    assert "Message: Found the least-cost blend." in lines
    assert "Cost: 232.00 EUR per tonne" in lines
    assert "Batch: 2000 kg" in lines
    assert lines[-1] == CAUTION


def test_only_ingredients_in_the_blend_are_listed():
    ingredients = block(render_summary(formulas.optimal_formula()), "Ingredient")
    assert ingredients[0].split() == ["Ingredient", "Inclusion", "%", "Amount", "kg"]
    rows = {line.split("  ")[0].strip(): line.split()[-2:] for line in ingredients[2:]}
    assert rows == {
        "Barley": ["60.000", "1,200.00"],
        "Pea meal": ["20.000", "400.00"],
        "Rapeseed meal": ["18.000", "360.00"],
        "Limestone": ["2.000", "40.00"],
    }


def test_nutrients_with_spec_and_level():
    nutrients = block(render_summary(formulas.optimal_formula()), "Nutrient")
    assert nutrients[0].split() == ["Nutrient", "Basis", "Unit", "Min", "Max", "Level", "Position"]
    by_name = {line[:13].strip(): line[13:].split() for line in nutrients[2:]}
    assert by_name["Crude protein"] == ["as", "fed", "%", "17.12", "-", "17.12", "at", "min"]
    assert by_name["Energy"] == ["as", "fed", "MJ/kg", "11.50", "12.50", "11.99", "within"]
    assert by_name["Calcium"] == ["as", "fed", "%", "0.800", "1.200", "0.916", "within"]
    assert by_name["Fibre"] == ["as", "fed", "%", "-", "-", "6.360", "no", "spec"]


def test_fixed_width_columns_line_up():
    nutrients = block(render_summary(formulas.optimal_formula()), "Nutrient")
    rule = nutrients[1]
    # Right-aligned number columns all end where the rule's dashes end.
    ends = [i for i, ch in enumerate(rule) if ch == "-" and rule[i + 1 : i + 2] in ("", " ")]
    level_end = ends[5]
    for line in nutrients[2:]:
        assert line[level_end] != " " and line[level_end + 1] == " "


def test_binding_limits_per_step():
    # A step fits the bound's unit (blendkit.model.steps: 0.01 % for a % content, 0.1 % for
    # an inclusion, common practice); its cost is the fixture's shadow price times it.
    text = render_summary(formulas.optimal_formula())
    assert "Cost of a step: change in cost when the bound is raised by one step, largest first." in text
    limits = block(text, "Binding limit")
    assert limits[0].split() == ["Binding", "limit", "Bound", "Step", "Cost", "of", "a", "step", "Cost", "unit"]
    assert len(limits) == 2 + 2  # header, rule, two binding limits
    # -1.25 x 0.1 = -0.125 per 0.1 % of rapeseed meal; +4.5 x 0.01 = +0.045 per 0.01 % protein
    assert limits[2].split() == ["Rapeseed", "meal", "max", "18.000", "0.1", "%", "-0.1250", "EUR/tonne"]
    assert limits[3].split() == ["Crude", "protein", "min", "17.12", "0.01", "%", "+0.04500", "EUR/tonne"]


def test_notes_are_listed():
    text = render_summary(formulas.optimal_formula())
    assert block(text, "Notes:") == ["Notes:", f"- {formulas.NOTES[0]}"]


def test_not_optimal_shows_status_message_and_caution_only():
    formula = formulas.infeasible_formula()
    text = render_summary(formula)
    lines = text.splitlines()
    assert "Status: infeasible" in lines
    assert f"Message: {formula.message}" in lines
    assert f"- {formula.notes[0]}" in lines
    assert "Cost:" not in text and "Ingredient" not in text and "Nutrient" not in text
    assert lines[-1] == CAUTION


def test_title_falls_back_to_the_file_name():
    formula = formulas.optimal_formula()
    settings = dataclasses.replace(formula.blend.settings, name="")
    blend = dataclasses.replace(formula.blend, settings=settings, source=None)
    assert render_summary(dataclasses.replace(formula, blend=blend)).startswith("Blend\n")
    from pathlib import Path

    blend = dataclasses.replace(blend, source=Path("farm/hill_ration.xlsx"))
    assert render_summary(dataclasses.replace(formula, blend=blend)).startswith("hill_ration\n")


def test_plain_ascii_text():
    text = render_summary(formulas.optimal_formula())
    assert text.isascii()
    assert "\x1b" not in text  # no terminal colour codes


# --- the full model ----------------------------------------------------------------------


def test_ratio_and_dry_matter_lines_show_their_basis():
    nutrients = block(render_summary(formulas.ration_formula()), "Nutrient")
    width = len("Calcium / Available phosphorus")
    by_line = [(line[:width].strip(), line[width:].split()) for line in nutrients[2:]]
    assert by_line[1] == ("Crude protein", ["as", "fed", "%", "16.00", "-", "18.32", "within"])
    assert by_line[5] == ("Crude protein", ["dry", "matter", "%", "21.74", "-", "21.74", "at", "min"])
    assert by_line[6] == ("Fibre", ["dry", "matter", "%", "-", "5.000", "4.237", "within"])
    assert by_line[7] == ("Calcium / Available phosphorus",
                          ["ratio", "1.800", "2.547", "2.547", "at", "max"])


def test_binding_ratio_group_and_stock_limits():
    limits = block(render_summary(formulas.ration_formula()), "Binding limit")
    assert limits[0].split() == ["Binding", "limit", "Bound", "Step", "Cost", "of", "a", "step", "Cost", "unit"]
    rows = {row[:34].rstrip(): row[34:].split() for row in limits[2:]}
    assert set(rows) == {"Crude protein (dry matter) min", "Calcium / Available phosphorus max",
                         "Cereals (group) max", "Wet brewers' grains max", "Soybean meal (stock) max"}
    # The fixture's shadow prices times each step: 0.01 % (content), 0.01 (ratio), 0.1 %
    # (inclusion, group), 1 % of a stock of 440 kg (common practice, blendkit.model.steps).
    assert rows["Crude protein (dry matter) min"] == ["21.74", "0.01", "%", "+0.03850", "EUR/tonne"]
    assert rows["Calcium / Available phosphorus max"] == ["2.547", "0.01", "-0.06200", "EUR/tonne"]
    assert rows["Cereals (group) max"] == ["70.000", "0.1", "%", "-0.05500", "EUR/tonne"]
    assert rows["Wet brewers' grains max"] == ["5.000", "0.1", "%", "-0.1400", "EUR/tonne"]
    assert rows["Soybean meal (stock) max"] == ["440.00", "4.4", "kg", "-0.1650", "EUR"]


def test_stocks_of_one_blend():
    stocks = block(render_summary(formulas.ration_formula()), "Stock ")
    assert stocks[0].split() == ["Stock", "Unit", "Used", "Available", "Binding", "Value", "of",
                                 "one", "more", "unit", "EUR"]
    assert [line.split() for line in stocks[2:]] == [
        ["Barley", "kg", "300.00", "5,000.00", "no", "0.00"],
        ["Soybean", "meal", "kg", "440.00", "440.00", "yes", "0.03750"],
    ]


def test_no_stocks_block_without_stocks():
    assert "Stock " not in render_summary(formulas.optimal_formula())


def test_diet_summary():
    text = render_summary(formulas.diet_formula())
    lines = text.splitlines()
    assert lines[0] == "Wrenhill hostel day menu"
    assert "Cost: 3.08 EUR per day" in lines  # 3.075, as stored in binary, rounds up here
    assert not any(line.startswith("Batch:") for line in lines)
    foods = block(text, "Food")
    assert foods[0].split() == ["Food", "Amount", "Unit", "Cost", "EUR"]
    assert foods[2] == "Porridge oats       2.000  40 g portion        0.16"
    assert foods[4] == "Semi-skimmed milk   2.500  glass (200 ml)      0.40"
    assert len(foods) == 2 + 7  # Cheddar and peanut butter are not in the diet
    nutrients = block(text, "Nutrient")
    assert nutrients[0].split() == ["Nutrient", "Basis", "Unit", "Min", "Max", "Total", "Position"]
    assert nutrients[2].split() == ["Energy", "as", "fed", "kcal", "1,900.0", "2,400.0", "1,995.0",
                                    "within"]
    limits = block(text, "Binding limit")
    rows = {line[:19].rstrip(): line[19:].split() for line in limits[2:]}
    # -0.035 and -0.012 per unit, times a step of 0.1 unit of each food
    assert rows["Porridge oats max"] == ["2.000", "0.1", "of", "40", "g", "portion", "-0.003500", "EUR"]
    assert rows["Wholemeal bread max"] == ["6.000", "0.1", "of", "slice", "-0.001200", "EUR"]
    assert lines[-1] == CAUTION


def test_several_products_summary():
    formula = formulas.mill_formula()
    text = render_summary(formula)
    lines = text.splitlines()
    assert "Total cost: 11,889.80 EUR" in lines
    assert not any(line.startswith(("Cost:", "Batch:")) for line in lines)
    assert [line for line in lines if line.startswith("Product:")] == [
        "Product: Starter crumb, 8,000 kg at 318.50 EUR per tonne",
        "Product: Grower pellet, 20,000 kg at 300.95 EUR per tonne",
        "Product: Finisher pellet, 12,000 kg at 276.90 EUR per tonne",
    ]
    # One ingredient table and one nutrient table per product, in product order.
    tables = text.split("\n\n")
    starts = [i for i, part in enumerate(tables) if part.startswith("Product:")]
    for start, product in zip(starts, formula.products):
        ingredients = tables[start + 1].splitlines()
        used = [line.name for line in product.ingredients if line.inclusion > 0]
        assert [line[:13].strip() for line in ingredients[2:]] == used
        nutrients = tables[start + 2].splitlines()
        assert nutrients[0].startswith("Nutrient")
        assert len(nutrients) == 2 + len(product.nutrients)
    starter = tables[starts[0] + 1].splitlines()
    assert starter[2].split() == ["Wheat", "59.500", "4,760.00"]
    assert lines[-1] == CAUTION


def test_several_products_stocks_and_binding_limits():
    text = render_summary(formulas.mill_formula())
    stocks = block(text, "Stock ")
    assert [line.split() for line in stocks[2:]] == [
        ["Soybean", "meal", "kg", "7,000.00", "7,000.00", "yes", "0.09500"],
        ["Rapeseed", "meal", "kg", "3,820.00", "4,000.00", "no", "0.00"],
    ]
    limits = block(text, "Binding limit")
    assert limits[0].split()[:3] == ["Binding", "limit", "Product"]
    product_column = limits[0].index("Product")
    rows = [(line[:product_column].rstrip(), line[product_column:product_column + 15].strip(),
             line[product_column + 15:].split()) for line in limits[2:]]
    assert sorted(name for name, product, _ in rows if not product) == ["Soybean meal (stock) max"]
    assert len(rows) == 6  # a stock belongs to no one product
    by_key = {(name, product): rest for name, product, rest in rows}
    # -0.095 per kg of stock times 1 % of 7,000 kg; +21.5 per MJ/kg times 0.1 MJ/kg
    assert by_key[("Soybean meal (stock) max", "")] == ["7,000.00", "70", "kg", "-6.650", "EUR"]
    assert by_key[("Energy min", "Starter crumb")] == ["12.60", "0.1", "MJ/kg", "+2.150", "EUR/tonne"]
    assert by_key[("Vegetable oil max", "Finisher pellet")] == ["6.000", "0.1", "%", "-0.2400", "EUR/tonne"]


# --- conflicts of an infeasible blend, and broken soft limits ---------------------------------


def test_infeasible_summary_explains_the_conflicts_and_the_way_out():
    text = render_summary(formulas.conflicted_formula())
    lines = text.splitlines()
    assert lines.index("Status: infeasible") < lines.index("These limits cannot all hold together:")
    assert block(text, "These limits cannot all hold together:") == [
        "These limits cannot all hold together:",
        "Conflict 1 of 2:",
        "  Specs!B2  Crude protein  min 26        -> alone: move to 21.5",
        "  Ingredients!D4  Rapeseed meal  max 18  -> alone: move to 44.25",
        "  total  inclusions sum to 100 %         -> cannot move",
        "Conflict 2 of 2:",
        "  Specs!B4  Calcium  min 0.8             -> alone: move to 0.1326",
        "  Ingredients!E5  Limestone  Use = no    -> alone: set Use to yes, max 1.75",
        "  total  inclusions sum to 100 %         -> cannot move",
        "Dropping or moving any one limit of a conflict resolves that conflict.",
        "More conflicts may remain after these are fixed: solve again to see them.",
    ]
    assert block(text, "Least-cost way out:") == [
        "Least-cost way out:",
        "  Specs!B2  Crude protein  min 26      -> 21.5",
        "  Ingredients!E5  Limestone  Use = no  -> Use = yes, max 1.75",
        "Cost once all of them are moved: 232.00 EUR per tonne",
    ]
    assert "- Pea meal: 1 blank nutrient cell counted as 0 (Calcium)" in lines
    assert lines[-1] == CAUTION
    assert all(len(line) <= 80 for line in lines if line != CAUTION and not line.startswith("Message"))
    assert text.isascii()


def test_one_complete_conflict_is_not_numbered():
    formula = formulas.conflicted_formula(complete=True)
    formula = dataclasses.replace(formula, conflicts=formula.conflicts[:3])
    lines = block(render_summary(formula), "These limits cannot all hold together:")
    assert lines[1] == "  Specs!B2  Crude protein  min 26        -> alone: move to 21.5"
    assert lines[-1] == "Dropping or moving any one limit of a conflict resolves the conflict."
    assert not any(line.startswith("Conflict ") for line in lines)


def test_no_single_move_and_no_way_out():
    formula = formulas.conflicted_formula()
    conflicts = (dataclasses.replace(formula.conflicts[1], relax_to=None), *formula.conflicts[2:])
    formula = dataclasses.replace(formula, conflicts=conflicts, relaxation=None)
    text = render_summary(formula)
    assert "  Specs!B2  Crude protein  min 26        -> no single move" in text.splitlines()
    assert block(text, "Least-cost way out:") == [
        "Least-cost way out: none found; change the limits above by hand."]


def test_a_way_out_whose_blend_did_not_solve():
    formula = formulas.conflicted_formula()
    relaxation = dataclasses.replace(formula.relaxation, formula=None)
    text = render_summary(dataclasses.replace(formula, relaxation=relaxation))
    assert block(text, "Least-cost way out:")[-1] == (
        "Cost once all of them are moved: unknown (the moved workbook did not solve).")


def test_long_names_wrap_the_move_onto_its_own_line():
    formula = formulas.conflicted_formula()
    long = "Extruded full-fat soybean meal from the northern cooperative"
    first = dataclasses.replace(formula.conflicts[2], name=long,
                                text=f"Ingredients!D4  {long}  max 18")
    formula = dataclasses.replace(formula, conflicts=(first,))
    lines = block(render_summary(formula), "These limits cannot all hold together:")
    assert lines[1:3] == [f"  Ingredients!D4  {long}  max 18", "      -> alone: move to 44.25"]


def test_broken_soft_limits_come_right_after_the_cost():
    text = render_summary(formulas.soft_formula())
    lines = text.splitlines()
    start = lines.index("Soft specs not met: 1. Meeting it would cost more than its penalty.")
    assert lines[start - 2:start] == ["Batch: 2000 kg", ""]
    assert block(text, "Soft specs not met") == [
        "Soft specs not met: 1. Meeting it would cost more than its penalty.",
        "Penalty: EUR per tonne for each unit of violation (shortfall or excess).",
        "Soft limit         Bound  Level  Violation  Penalty  Cell",
        "-----------------  -----  -----  ---------  -------  --------",
        "Crude protein min  18.50  17.12       1.38    6.000  Specs!B2",
    ]
    assert start < lines.index(block(text, "Ingredient")[0])
    # Shown once: the formula's note saying the same is left out of the notes.
    assert formulas.SOFT_NOTE in formulas.soft_formula().notes
    assert formulas.SOFT_NOTE.startswith("Soft spec not met:")
    assert "Soft spec not met:" not in text
    assert block(text, "Notes:") == ["Notes:", f"- {formulas.NOTES[0]}"]


def test_broken_soft_limits_of_products_name_the_product():
    text = render_summary(formulas.soft_mill_formula())
    lines = block(text, "Soft specs not met")
    assert lines[0] == "Soft specs not met: 1. Meeting it would cost more than its penalty."
    assert lines[2].split() == ["Soft", "limit", "Product", "Bound", "Level", "Violation", "Penalty", "Cell"]
    assert lines[4:] == ["Energy min  Grower pellet  12.70  12.50       0.20    3.500  Specs!B6"]
    assert text.index("Soft specs not met") < text.index("Product: Starter crumb")


def test_no_soft_limits_block_when_every_limit_is_met():
    assert "Soft specs" not in render_summary(formulas.optimal_formula())


def test_several_broken_soft_limits_fit_in_80_columns():
    formula = formulas.soft_formula()
    calcium = next(limit for limit in formula.limits if (limit.name, limit.side) == ("Calcium", "min"))
    broken = dataclasses.replace(calcium, bound=0.95, violation=0.95 - calcium.level, penalty=40.0)
    formula = dataclasses.replace(formula, limits=tuple(broken if limit is calcium else limit
                                                        for limit in formula.limits))
    lines = block(render_summary(formula), "Soft specs not met")
    assert lines[0] == "Soft specs not met: 2. Meeting them would cost more than their penalties."
    assert [line.split()[:2] for line in lines[4:]] == [["Crude", "protein"], ["Calcium", "min"]]
    assert all(len(line) <= 80 for line in lines)


def test_a_rounding_remnant_never_shows_as_negative_zero():
    formula = formulas.optimal_formula()
    limits = tuple(dataclasses.replace(limit, shadow_price=-1e-12) if limit.binding else limit
                   for limit in formula.limits)
    text = render_summary(dataclasses.replace(formula, limits=limits))
    assert "-0.00" not in text and "+0.00" in text

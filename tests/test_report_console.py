"""The terminal summary: the key facts in plain, fixed-width text, the caution last."""

from __future__ import annotations

import dataclasses

from blendkit import CAUTION
from blendkit.report_console import render_summary
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


def test_binding_limits_with_shadow_prices():
    text = render_summary(formulas.optimal_formula())
    assert "Shadow price: change in cost when the bound is raised by 1 unit." in text
    limits = block(text, "Binding limit")
    assert len(limits) == 2 + 2  # header, rule, two binding limits
    assert limits[2].split()[:5] == ["Crude", "protein", "min", "17.12", "+4.500"]
    assert limits[2].endswith("EUR/tonne per 1 unit of Crude protein (%)")
    assert limits[3].split()[:5] == ["Rapeseed", "meal", "max", "18.000", "-1.250"]
    assert limits[3].endswith("EUR/tonne per 1 % inclusion")


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

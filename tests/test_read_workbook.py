"""The workbook reader: good workbooks become a Blend, bad ones one WorkbookError with every problem."""

from __future__ import annotations

import hashlib
import zipfile
from pathlib import Path

import pytest

from blendkit.errors import Problem, WorkbookError
from blendkit.model.blend import Settings
from blendkit.read.workbook import read_workbook
from tests.workbooks import (
    GROUPS,
    INGREDIENTS,
    LIMITS,
    NO_SPECS,
    PRODUCTS,
    SPECS,
    Styled,
    make_workbook,
    percent,
    store_saved_values,
)

HEADER = ["Ingredient", "Cost", "Min", "Max", "Use", "Protein"]


def problems_of(path: Path) -> list[str]:
    """Every problem the reader reports for `path`, as "where: message" lines."""
    with pytest.raises(WorkbookError) as caught:
        read_workbook(path)
    return [str(problem) for problem in caught.value.problems]


def only_problem(path: Path) -> Problem:
    """The single problem reported for `path`."""
    with pytest.raises(WorkbookError) as caught:
        read_workbook(path)
    assert len(caught.value.problems) == 1, caught.value.describe()
    return caught.value.problems[0]


def with_row(*rows: list, header: list = HEADER) -> list[list]:
    """An Ingredients sheet with `header` and the given rows."""
    return [header, *rows]


# --- Good workbooks ---------------------------------------------------------------------


def test_reads_the_demo_workbook(tmp_path):
    path = make_workbook(tmp_path, INGREDIENTS, SPECS)
    blend = read_workbook(path)

    assert blend.source == path
    assert blend.nutrients == ("Crude protein", "Energy", "Calcium")
    assert blend.nutrient_units == {"Crude protein": "%", "Energy": "MJ/kg", "Calcium": "%"}
    assert [item.name for item in blend.ingredients] == ["Maize", "Soybean meal", "Wheat bran", "Limestone"]
    soy = blend.ingredient("Soybean meal")
    assert (soy.cost, soy.minimum, soy.maximum, soy.use) == (425.0, None, 30.0, True)
    assert soy.contents == {"Crude protein": 45.5, "Energy": 9.9, "Calcium": 0.3}
    assert soy.blanks == ()
    assert soy.cells == {
        "name": "Ingredients!A3", "cost": "Ingredients!B3", "min": "Ingredients!C3",
        "max": "Ingredients!D3", "use": "Ingredients!E3",
    }
    assert soy.content_cells == {
        "Crude protein": "Ingredients!F3", "Energy": "Ingredients!G3", "Calcium": "Ingredients!H3",
    }
    assert [(s.nutrient, s.minimum, s.maximum) for s in blend.specs] == [
        ("Crude protein", 16.5, None), ("Energy", 11.2, 12.0), ("Calcium", 3.6, 4.1),
    ]
    assert blend.specs[1].cells == {"nutrient": "Specs!A3", "min": "Specs!B3", "max": "Specs!C3"}
    assert blend.settings == Settings()


def test_blank_contents_count_as_zero_and_are_recorded(tmp_path):
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, NO_SPECS))
    limestone = blend.ingredient("Limestone")
    assert limestone.contents == {"Crude protein": 0.0, "Energy": 0.0, "Calcium": 37.5}
    assert limestone.blanks == ("Crude protein", "Energy")
    assert limestone.content_cells["Energy"] == "Ingredients!G5"


def test_headers_ignore_case_spaces_and_units(tmp_path):
    ingredients = [
        ["  INGREDIENT ", "cost (USD/short ton)", " min ( % ) ", "MAX", "use",
         " Crude   protein (%) ", "Ash"],
        ["Oat hulls", " 12.5", None, 40, None, 4, -1.5],
    ]
    specs = [["nutrient (name)", "MIN", " Max "], ["CRUDE PROTEIN", 3, None], ["ash (g)", None, 2]]
    blend = read_workbook(make_workbook(tmp_path, ingredients, specs))

    oats = blend.ingredient("Oat hulls")
    assert (oats.cost, oats.minimum, oats.maximum, oats.use) == (12.5, None, 40.0, True)
    # The display name keeps inner spaces as written; matching ignores them.
    assert blend.nutrients == ("Crude   protein", "Ash")
    assert oats.contents == {"Crude   protein": 4.0, "Ash": -1.5}
    assert blend.nutrient_units == {"Crude   protein": "%"}  # Ash has no unit
    assert [s.nutrient for s in blend.specs] == ["Crude   protein", "Ash"]


def test_a_food_column_is_read_as_the_ingredient_column(tmp_path):
    ingredients = [["Food", "Cost", "Max", "Unit", "Protein"], ["Oats", 0.2, 2, "100 g", 13]]
    blend = read_workbook(make_workbook(tmp_path, ingredients, [["Nutrient", "Min", "Max"], ["Protein", 5, None]]))
    assert [item.name for item in blend.ingredients] == ["Oats"]
    assert blend.ingredient("Oats").cells["name"] == "Ingredients!A2"
    assert blend.nutrients == ("Protein",)


def test_beside_an_ingredient_column_food_is_a_nutrient(tmp_path):
    ingredients = [["Ingredient", "Cost", "Food"], ["Oats", 0.2, 1]]
    blend = read_workbook(make_workbook(tmp_path, ingredients, [["Nutrient", "Min", "Max"], ["Food", 0.5, None]]))
    assert blend.nutrients == ("Food",)


def test_table_may_start_below_and_right_and_blank_rows_are_skipped(tmp_path):
    ingredients = [
        [],
        [],
        [None, "Ingredient", "Cost", None, "Protein"],  # column D has no header: ignored
        [None, "Barley", 180, "a note", 11],
        [],
        [None, "Peas", 260, None, 22],
        [None, None, None, "note under no header"],  # blank in every headed column
    ]
    blend = read_workbook(make_workbook(tmp_path, ingredients, NO_SPECS))
    assert [item.name for item in blend.ingredients] == ["Barley", "Peas"]
    peas = blend.ingredient("Peas")
    assert peas.cells == {"name": "Ingredients!B6", "cost": "Ingredients!C6"}  # no Min/Max/Use columns
    assert (peas.minimum, peas.maximum, peas.use) == (None, None, True)
    assert peas.content_cells == {"Protein": "Ingredients!E6"}


def test_sheets_are_found_ignoring_case_and_spaces(tmp_path):
    path = make_workbook(tmp_path, sheets={
        "Notes": [["anything"]],
        " INGREDIENTS ": [["Ingredient", "Cost", "Fibre"], ["Straw", "oops", 40]],
        "specs": NO_SPECS,
    })
    # References use the title as written in the file.
    assert problems_of(path) == [' INGREDIENTS !B2: cost "oops" is not a number']


def test_no_nutrient_columns_and_no_specs(tmp_path):
    blend = read_workbook(make_workbook(tmp_path, [["Ingredient", "Cost"], ["Water", 0]], NO_SPECS))
    assert blend.nutrients == ()
    assert blend.specs == ()
    assert blend.ingredient("Water").contents == {}


def test_percent_formatted_cells_read_as_the_percentage_shown(tmp_path):
    ingredients = with_row(
        ["Fish meal", 900, percent(0.05), percent(0.125, "0.0%"), None, percent(0.62, "0.00%")],
        ["Salt", 90, Styled(0.3, '0.0" %"'), Styled(0.5, "0.0\\%"), None, 0],  # literal % signs do not scale
        ["Premix", 2000, Styled(0.07, "[Red]0%"), " 50 ", None, 0],
    )
    specs = [["Nutrient", "Min", "Max"], ["Protein", percent(0.17), None]]
    blend = read_workbook(make_workbook(tmp_path, ingredients, specs))

    fish = blend.ingredient("Fish meal")
    assert (fish.minimum, fish.maximum) == (5.0, 12.5)
    assert fish.contents == {"Protein": 62.0}
    salt = blend.ingredient("Salt")
    assert (salt.minimum, salt.maximum) == (0.3, 0.5)
    premix = blend.ingredient("Premix")
    assert premix.minimum == 7.0  # exactly, not 7.000000000000001
    assert premix.maximum == 50.0  # text is never scaled
    assert blend.specs[0].minimum == 17.0


@pytest.mark.parametrize(
    ("written", "use"),
    [
        ("yes", True), ("Y", True), ("TRUE", True), ("1", True), (" Yes ", True), (1, True), (True, True),
        (None, True),
        ("no", False), ("N", False), ("false", False), ("0", False), (0, False), (False, False),
    ],
)
def test_use_values(tmp_path, written, use):
    blend = read_workbook(make_workbook(tmp_path, with_row(["Rye", 170, None, None, written, 9]), NO_SPECS))
    assert blend.ingredient("Rye").use is use


def test_numbers_as_text_and_other_number_shapes(tmp_path):
    ingredients = with_row(
        ["A", "-3", None, None, None, "+1e2"],
        ["B", " .5 ", "0", "100", None, "7."],
        ["C", 10**3, 0, 0, None, -0.0],
    )
    blend = read_workbook(make_workbook(tmp_path, ingredients, NO_SPECS))
    assert [(i.cost, i.minimum, i.maximum, i.contents["Protein"]) for i in blend.ingredients] == [
        (-3.0, None, None, 100.0), (0.5, 0.0, 100.0, 7.0), (1000.0, 0.0, 0.0, 0.0),
    ]


def test_settings_defaults_without_a_settings_sheet(tmp_path):
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, SPECS))
    assert blend.settings == Settings(
        batch_size=1000.0, mass_unit="kg", cost_per="tonne", currency="", name=""
    )


def test_settings_overrides(tmp_path):
    settings = [
        ["Setting", "Value", "Notes"],
        [" BATCH SIZE (lb) ", "2000", "one mixer load"],
        ["mass unit", "LB"],
        ["Cost per", " Short  Ton "],
        ["currency", "USD"],
        ["Name", "Hilltop Hens layer mash"],
    ]
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, SPECS, settings))
    assert blend.settings == Settings(
        batch_size=2000.0, mass_unit="lb", cost_per="short ton", currency="USD",
        name="Hilltop Hens layer mash",
        cells={"batch size": "Settings!B2", "mass unit": "Settings!B3", "cost per": "Settings!B4",
               "currency": "Settings!B5", "name": "Settings!B6"},
    )
    assert blend.settings.cost_unit_in_mass_units == pytest.approx(2000.0)


def test_blank_setting_values_keep_the_defaults(tmp_path):
    settings = [["Setting", "Value"], ["Batch size", None], ["Mass unit", " "], ["Currency", "EUR"]]
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, SPECS, settings))
    assert blend.settings == Settings(currency="EUR", cells={"currency": "Settings!B4"})


def test_empty_settings_sheet_means_defaults(tmp_path):
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, SPECS, []))
    assert blend.settings == Settings()


def test_formula_results_are_read_like_typed_values(tmp_path):
    ingredients = with_row(
        ["Maize", 200, None, None, None, 8],
        ["Maize screenings", "=B2*0.8", None, None, None, "=F2"],
    )
    path = make_workbook(tmp_path, ingredients, NO_SPECS)
    store_saved_values(path, "Ingredients", {"B3": 160, "F3": 8})
    screenings = read_workbook(path).ingredient("Maize screenings")
    assert (screenings.cost, screenings.contents["Protein"]) == (160.0, 8.0)


def test_formula_whose_saved_result_is_empty_text_is_blank(tmp_path):
    ingredients = with_row(["Maize", 200, None, None, None, '=IF(1>2,1,"")'])
    path = make_workbook(tmp_path, ingredients, NO_SPECS)
    store_saved_values(path, "Ingredients", {"F2": ""})
    maize = read_workbook(path).ingredient("Maize")
    assert maize.contents == {"Protein": 0.0}
    assert maize.blanks == ("Protein",)


def test_the_input_file_is_not_changed(tmp_path):
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, [["Setting", "Value"], ["Name", "Hilltop"]])
    before = (hashlib.sha256(path.read_bytes()).hexdigest(), path.stat().st_mtime_ns)
    read_workbook(path)
    with pytest.raises(WorkbookError):
        bad = [["Ingredient", "Cost"], ["x", "bad"]]
        read_workbook(make_workbook(tmp_path, bad, NO_SPECS, name="bad.xlsx"))
    assert (hashlib.sha256(path.read_bytes()).hexdigest(), path.stat().st_mtime_ns) == before


def test_accepts_a_string_path(tmp_path):
    path = make_workbook(tmp_path, INGREDIENTS, SPECS)
    assert read_workbook(str(path)).source == path


# --- Problems in cells ------------------------------------------------------------------


def test_not_a_number_message_is_exact(tmp_path):
    ingredients = [["Ingredient", "Protein", "Fat", "Cost"]] + [[f"I{n}", 1, 1, 10] for n in range(5)]
    ingredients.append(["Lupins", 30, 6, "n/a"])  # row 7, Cost in column D
    assert str(only_problem(make_workbook(tmp_path, ingredients, NO_SPECS))) == (
        'Ingredients!D7: cost "n/a" is not a number'
    )


@pytest.mark.parametrize(
    ("written", "message"),
    [
        ("n/a", 'cost "n/a" is not a number'),
        ("nan", 'cost "nan" is not a number'),
        ("inf", 'cost "inf" is not a number'),
        ("-Infinity", 'cost "-Infinity" is not a number'),
        ("1e999", 'cost "1e999" is not a number'),
        ("0x10", 'cost "0x10" is not a number'),
        (True, 'cost "TRUE" is not a number'),
        ("1,250.5", 'cost "1,250.5" is not a number (write it with no commas or spaces, with a point '
                    "for decimals, as in 1250.5)"),
        ("12 %", 'cost "12 %" is not a number (type the number alone; put a unit in the column header, '
                 'as in "Min (%)")'),
        (Styled(12, "yyyy-mm-dd"), 'cost "1900-01-12 00:00:00" is not a number (the cell is formatted as a '
                                   "date or time; format it as a number)"),
    ],
)
def test_values_that_are_not_numbers(tmp_path, written, message):
    path = make_workbook(tmp_path, with_row(["Oats", written, None, None, None, 11]), NO_SPECS)
    assert only_problem(path) == Problem("Ingredients!B2", message)


def test_nutrient_cells_must_be_numbers(tmp_path):
    path = make_workbook(tmp_path, with_row(["Oats", 190, None, None, None, "high"]), NO_SPECS)
    assert only_problem(path) == Problem("Ingredients!F2", 'Protein "high" is not a number')


def test_blank_cost(tmp_path):
    path = make_workbook(tmp_path, with_row(["Oats", None, None, None, None, 11]), NO_SPECS)
    assert only_problem(path) == Problem(
        "Ingredients!B2", "cost is blank; type the price of this ingredient (per tonne)"
    )


def test_blank_cost_message_names_the_currency_and_cost_unit(tmp_path):
    settings = [["Setting", "Value"], ["Currency", "NZD"], ["Cost per", "kg"]]
    path = make_workbook(tmp_path, with_row(["Oats", None, None, None, None, 11]), NO_SPECS, settings)
    assert only_problem(path).message == "cost is blank; type the price of this ingredient (NZD per kg)"


@pytest.mark.parametrize(
    ("minimum", "maximum", "expected"),
    [
        (-1, None, ["Ingredients!C2: min -1 is outside 0 to 100; inclusion limits are % of the blend"]),
        (None, 101, ["Ingredients!D2: max 101 is outside 0 to 100; inclusion limits are % of the blend"]),
        (None, percent(1.5), ["Ingredients!D2: max 150 is outside 0 to 100; inclusion limits are % of "
                              "the blend"]),
        (20, 10, ["Ingredients!D2: max 10 is below min 20 in Ingredients!C2; make max at least min"]),
        ("some", "lots", ['Ingredients!C2: min "some" is not a number',
                          'Ingredients!D2: max "lots" is not a number']),
    ],
)
def test_inclusion_limits(tmp_path, minimum, maximum, expected):
    path = make_workbook(tmp_path, with_row(["Oats", 190, minimum, maximum, None, 11]), NO_SPECS)
    assert problems_of(path) == expected


def test_use_must_be_yes_or_no(tmp_path):
    path = make_workbook(tmp_path, with_row(["Oats", 190, None, None, "maybe", 11]), NO_SPECS)
    assert only_problem(path) == Problem(
        "Ingredients!E2", 'use "maybe" is not yes or no; write yes or no (blank means yes)'
    )


def test_use_number_other_than_0_or_1(tmp_path):
    path = make_workbook(tmp_path, with_row(["Oats", 190, None, None, 2, 11]), NO_SPECS)
    assert only_problem(path).message == 'use "2" is not yes or no; write yes or no (blank means yes)'


def test_duplicate_ingredient_names(tmp_path):
    ingredients = with_row(
        ["Soybean meal", 400, None, None, None, 46],
        [" SOYBEAN  meal ", 410, None, None, None, 44],
    )
    assert only_problem(make_workbook(tmp_path, ingredients, NO_SPECS)) == Problem(
        "Ingredients!A3",
        'ingredient "SOYBEAN  meal" is already listed in Ingredients!A2 (names are compared ignoring '
        "case and spaces); give each ingredient its own name, or delete one row",
    )


def test_row_without_a_name(tmp_path):
    ingredients = with_row(["Oats", 190, None, None, None, 11], [None, 150, None, None, None, 9])
    assert only_problem(make_workbook(tmp_path, ingredients, NO_SPECS)) == Problem(
        "Ingredients!A3", "this row has values but no ingredient name; type a name, or clear the row"
    )


def test_no_ingredient_rows(tmp_path):
    assert only_problem(make_workbook(tmp_path, [HEADER], NO_SPECS)) == Problem(
        "Ingredients!1:1", "there are no ingredients under the header row; add at least one ingredient row"
    )


def test_duplicate_headers_are_reported_on_the_second(tmp_path):
    ingredients = [
        ["Ingredient", "Cost", "Crude protein (%)", "crude PROTEIN (g/kg)", "cost (EUR/t)"],
        ["Oats", 190, 11, 110, 190],
    ]
    assert problems_of(make_workbook(tmp_path, ingredients, NO_SPECS)) == [
        'Ingredients!D1: the column "crude PROTEIN (g/kg)" repeats the column "Crude protein" in '
        "Ingredients!C1 (headers are compared ignoring case, spaces and a trailing unit in "
        "parentheses); rename or delete one of them",
        'Ingredients!E1: the column "cost (EUR/t)" repeats the column "Cost" in Ingredients!B1 '
        "(headers are compared ignoring case, spaces and a trailing unit in parentheses); rename "
        "or delete one of them",
    ]


def test_header_with_a_unit_but_no_name(tmp_path):
    ingredients = [["Ingredient", "Cost", "(%)"], ["Oats", 190, 11]]
    assert only_problem(make_workbook(tmp_path, ingredients, NO_SPECS)) == Problem(
        "Ingredients!C1",
        'header "(%)" has a unit but no name; write the name before the unit, as in "Crude protein (%)"',
    )


# --- Specs ------------------------------------------------------------------------------


def specs_problems(tmp_path: Path, *rows: list, header: list | None = None) -> list[str]:
    """Problems for a Specs sheet with these rows, against the demo Ingredients sheet."""
    specs = [header or ["Nutrient", "Min", "Max"], *rows]
    return problems_of(make_workbook(tmp_path, INGREDIENTS, specs))


def test_spec_for_an_unknown_nutrient_lists_the_columns(tmp_path):
    assert specs_problems(tmp_path, ["Lysine", 0.7, None]) == [
        'Specs!A2: no nutrient column "Lysine" in Ingredients; a spec must name one of its nutrient '
        'columns; the nutrient columns are: "Crude protein", "Energy", "Calcium"'
    ]


def test_spec_for_a_misspelt_nutrient_suggests_the_closest(tmp_path):
    assert specs_problems(tmp_path, ["Calcum (%)", 3.6, None]) == [
        'Specs!A2: no nutrient column "Calcum" in Ingredients; a spec must name one of its nutrient '
        'columns; did you mean "Calcium"?; the nutrient columns are: "Crude protein", "Energy", "Calcium"'
    ]


def test_spec_with_many_nutrient_columns_only_suggests(tmp_path):
    names = ["Lysine", "Methionine", "Threonine", "Tryptophan", "Arginine", "Valine", "Leucine",
             "Isoleucine", "Histidine"]
    ingredients = [["Ingredient", "Cost", *names], ["Peas", 260, *range(len(names))]]
    specs = [["Nutrient", "Min", "Max"], ["Methionin", 0.3, None], ["Ash", 0.1, None]]
    assert problems_of(make_workbook(tmp_path, ingredients, specs)) == [
        'Specs!A2: no nutrient column "Methionin" in Ingredients; a spec must name one of its nutrient '
        'columns; did you mean "Methionine"?',
        'Specs!A3: no nutrient column "Ash" in Ingredients; a spec must name one of its nutrient '
        "columns; check the spelling against the headers of Ingredients",
    ]


def test_spec_when_ingredients_has_no_nutrient_columns(tmp_path):
    specs = [["Nutrient", "Min", "Max"], ["Salt", 1, 2]]
    path = make_workbook(tmp_path, [["Ingredient", "Cost"], ["Water", 0]], specs)
    assert only_problem(path) == Problem(
        "Specs!A2",
        'no nutrient column "Salt" in Ingredients, which has no nutrient columns; add a column headed '
        '"Salt" to Ingredients, or delete this row',
    )


def test_spec_unit_must_agree_with_the_column(tmp_path):
    assert specs_problems(tmp_path, ["Crude protein (g/kg)", 165, None]) == [
        'Specs!A2: the unit "g/kg" differs from the unit "%" of the column "Crude protein" in '
        'Ingredients!F1; give the bounds in "%" and write that unit, or leave the unit out'
    ]


def test_spec_with_neither_min_nor_max(tmp_path):
    assert specs_problems(tmp_path, ["Energy", None, None]) == [
        'Specs!A2: the spec for "Energy" has neither a min nor a max; give at least one, or delete the row'
    ]


def test_spec_min_above_max(tmp_path):
    assert specs_problems(tmp_path, ["Energy", 12.5, 11]) == [
        "Specs!C2: max 11 is below min 12.5 in Specs!B2; make max at least min"
    ]


def test_spec_bounds_must_be_numbers(tmp_path):
    assert specs_problems(tmp_path, ["Energy", "low", "#N/A"]) == [
        'Specs!B2: min "low" is not a number',
        'Specs!C2: max "#N/A" is not a number',
    ]


def test_spec_repeated(tmp_path):
    assert specs_problems(tmp_path, ["Calcium", 3.6, None], ["calcium (%)", None, 4.1]) == [
        'Specs!A3: "calcium" already has a spec in Specs!A2; put both bounds in one row and delete the other'
    ]


def test_spec_row_without_a_nutrient(tmp_path):
    assert specs_problems(tmp_path, [None, 1, 2]) == [
        "Specs!A2: this row has values but no nutrient; type the nutrient's name as in the "
        "Ingredients header, or clear the row"
    ]


def test_specs_notes_column_is_ignored(tmp_path):
    specs = [["Nutrient", "Min", "Max", "Why"], ["Calcium", 3.6, 4.1, "shell strength"]]
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, specs))
    assert [s.nutrient for s in blend.specs] == ["Calcium"]


# --- Settings ---------------------------------------------------------------------------


def settings_problems(tmp_path: Path, *rows: list) -> list[str]:
    """Problems for a Settings sheet with these rows, alongside the demo sheets."""
    return problems_of(make_workbook(tmp_path, INGREDIENTS, SPECS, [["Setting", "Value"], *rows]))


def test_unknown_setting(tmp_path):
    assert settings_problems(tmp_path, ["Batch", 500], ["Colour", "red"]) == [
        'Settings!A2: unknown setting "Batch"; the settings are: Batch size, Mass unit, Cost per, '
        'Currency, Name, Mode, Dry matter, Max ingredients, Scale step, Hand-add below, Time limit; '
        'did you mean "Batch size"?',
        'Settings!A3: unknown setting "Colour"; the settings are: Batch size, Mass unit, Cost per, '
        "Currency, Name, Mode, Dry matter, Max ingredients, Scale step, Hand-add below, Time limit",
    ]


def test_repeated_setting(tmp_path):
    assert settings_problems(tmp_path, ["Currency", "EUR"], ["CURRENCY", "USD"]) == [
        'Settings!A3: "Currency" is already set in Settings!A2; keep one of the two rows'
    ]


@pytest.mark.parametrize(
    ("size", "message"),
    [
        (0, "batch size 0 must be more than 0; it is the mass of one batch in the mass unit"),
        (-5, "batch size -5 must be more than 0; it is the mass of one batch in the mass unit"),
        ("big", 'batch size "big" is not a number'),
    ],
)
def test_batch_size_must_be_positive(tmp_path, size, message):
    assert settings_problems(tmp_path, ["Batch size", size]) == [f"Settings!B2: {message}"]


def test_mass_units_must_be_known(tmp_path):
    known = "g, kg, t, tonne, metric ton, lb, cwt, ton, short ton"
    assert settings_problems(tmp_path, ["Mass unit", "stone"], ["Cost per", 5]) == [
        f'Settings!B2: mass unit "stone" is not a unit blendkit knows; use one of: {known}',
        f'Settings!B3: cost per "5" is not a unit blendkit knows; use one of: {known}',
    ]


def test_setting_value_without_a_name(tmp_path):
    assert settings_problems(tmp_path, [None, 5]) == [
        "Settings!A2: this row has a value but no setting name; type one of Batch size, Mass unit, "
        "Cost per, Currency, Name, Mode, Dry matter, Max ingredients, Scale step, Hand-add below, "
        "Time limit, or clear the row"
    ]


# --- Units and stock --------------------------------------------------------------------


def test_unit_and_stock_columns(tmp_path):
    ingredients = [
        ["Ingredient", "Cost", "Unit", "Stock (kg)", "Protein"],
        ["Peas", 260, "sack of 25 kg", 750, 22],
        ["Barley", 180, None, None, 11],
        ["Oats", 190, 100, 0, 11],  # a number as the unit is read as its text
    ]
    blend = read_workbook(make_workbook(tmp_path, ingredients, NO_SPECS))
    peas = blend.ingredient("Peas")
    assert (peas.unit, peas.stock) == ("sack of 25 kg", 750.0)
    assert peas.cells == {
        "name": "Ingredients!A2", "cost": "Ingredients!B2",
        "unit": "Ingredients!C2", "stock": "Ingredients!D2",
    }
    assert (blend.ingredient("Barley").unit, blend.ingredient("Barley").stock) == ("", None)
    assert (blend.ingredient("Oats").unit, blend.ingredient("Oats").stock) == ("100", 0.0)
    assert blend.nutrients == ("Protein",)  # Unit and Stock are not nutrients


@pytest.mark.parametrize(
    ("stock", "message"),
    [
        (-5, "stock -5 is below 0; it is the quantity on hand in kg (blank means no limit)"),
        ("plenty", 'stock "plenty" is not a number'),
    ],
)
def test_stock_must_be_a_number_at_least_0(tmp_path, stock, message):
    ingredients = [["Ingredient", "Cost", "Stock"], ["Peas", 260, stock]]
    assert problems_of(make_workbook(tmp_path, ingredients, NO_SPECS)) == [f"Ingredients!C2: {message}"]


# --- Diet mode --------------------------------------------------------------------------

DIET = [["Setting", "Value"], ["Mode", "Diet"]]
FOODS = [
    ["Ingredient", "Cost (EUR)", "Unit", "Min", "Max", "Energy (kJ)", "Protein (g)"],
    ["Oat porridge", 0.35, "bowl", 1, 2, 620, 5.2],
    ["Lentil soup", 0.9, "serving", None, 250, 830, 9],
    ["Rye bread", 0.3, "100 g", 0, None, 1000, 8.5],
]


def test_diet_mode_reads_amounts_without_the_100_cap(tmp_path):
    blend = read_workbook(make_workbook(tmp_path, FOODS, NO_SPECS, DIET))
    assert blend.diet
    assert blend.settings.mode == "diet"
    assert blend.settings.cells == {"mode": "Settings!B2"}
    soup = blend.ingredient("Lentil soup")
    assert (soup.unit, soup.minimum, soup.maximum) == ("serving", None, 250.0)


def test_diet_mode_limits_are_at_least_0_and_min_is_at_most_max(tmp_path):
    foods = [
        FOODS[0],
        ["Oat porridge", 0.35, "bowl", -1, 2, 620, 5.2],
        ["Rye bread", 0.3, "100 g", 3, 2, 1000, 8],
    ]
    assert problems_of(make_workbook(tmp_path, foods, NO_SPECS, DIET)) == [
        "Ingredients!D2: min -1 is below 0; in diet mode inclusion limits are amounts in each food's unit, "
        "0 or more",
        "Ingredients!E3: max 2 is below min 3 in Ingredients!D3; make max at least min",
    ]


def test_diet_mode_blank_cost_names_the_unit(tmp_path):
    foods = [
        FOODS[0],
        ["Oat porridge", None, "bowl", None, None, 620, 5.2],
        ["Tea", None, None, None, None, 0, 0],
    ]
    settings = [*DIET, ["Currency", "EUR"]]
    assert problems_of(make_workbook(tmp_path, foods, NO_SPECS, settings)) == [
        "Ingredients!B2: cost is blank; type the price of this ingredient (EUR per bowl)",
        "Ingredients!B3: cost is blank; type the price of this ingredient (EUR per unit written in the "
        "Unit column)",
    ]


@pytest.mark.parametrize("written", ["blend", " BLEND ", None])
def test_blend_mode_is_the_default(tmp_path, written):
    settings = [["Setting", "Value"], ["Mode", written]]
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, SPECS, settings))
    assert blend.settings.mode == "blend"
    assert not blend.diet


def test_unknown_mode(tmp_path):
    assert settings_problems(tmp_path, ["Mode", "menu"]) == [
        'Settings!B2: mode "menu" is not blend or diet; write blend (inclusions in % of the blend, the '
        "default) or diet (amounts of each ingredient in its unit)"
    ]


# --- Ratio specs ------------------------------------------------------------------------

RATIO_INGREDIENTS = [
    ["Ingredient", "Cost", "Calcium (%)", "Phosphorus (%)", "Ca/P", "Energy (MJ/kg)"],
    ["Limestone", 48, 37.5, 0.02, 1875, 0],
    ["Monocalcium phosphate", 610, 16, 21, 0.76, 0],
    ["Wheat", 190, 0.05, 0.3, 0.17, 12.8],  # some energy: a ratio by Energy must be able to have a value
]


def ratio_problems(tmp_path: Path, *rows: list) -> list[str]:
    """Problems for Specs rows against RATIO_INGREDIENTS."""
    return problems_of(make_workbook(tmp_path, RATIO_INGREDIENTS, [["Nutrient", "Min", "Max"], *rows]))


def test_ratio_specs(tmp_path):
    specs = [
        ["Nutrient", "Min", "Max"],
        [" calcium /  phosphorus ", 1.8, 2.2],
        ["Calcium (%) / Energy (MJ/kg)", None, 0.4],  # each side with its unit; the "/" in MJ/kg is no split
        ["Ca/P", 1.5, None],  # a column of its own, not a ratio
        ["Phosphorus/Calcium", None, 0.6],
    ]
    blend = read_workbook(make_workbook(tmp_path, RATIO_INGREDIENTS, specs))
    assert [(s.nutrient, s.ratio, s.minimum, s.maximum) for s in blend.specs] == [
        ("calcium /  phosphorus", ("Calcium", "Phosphorus"), 1.8, 2.2),
        ("Calcium (%) / Energy (MJ/kg)", ("Calcium", "Energy"), None, 0.4),
        ("Ca/P", None, 1.5, None),
        ("Phosphorus/Calcium", ("Phosphorus", "Calcium"), None, 0.6),
    ]
    assert blend.specs[0].cells == {"nutrient": "Specs!A2", "min": "Specs!B2", "max": "Specs!C2"}
    assert {s.basis for s in blend.specs} == {"as fed"}


def test_ratio_with_an_unknown_side(tmp_path):
    columns = '"Calcium", "Phosphorus", "Ca/P", "Energy"'
    assert ratio_problems(tmp_path, ["Calcum / Phosphorus", 1.8, None], ["Calcium / Lysine", None, 3]) == [
        'Specs!A2: the ratio "Calcum / Phosphorus" names "Calcum" before the "/", which is not a nutrient '
        'column of Ingredients; a ratio divides one nutrient column by another; did you mean "Calcium"?; '
        f"the nutrient columns are: {columns}",
        'Specs!A3: the ratio "Calcium / Lysine" names "Lysine" after the "/", which is not a nutrient '
        f"column of Ingredients; a ratio divides one nutrient column by another; the nutrient columns are: "
        f"{columns}",
    ]


def test_ratio_with_both_sides_unknown_or_missing(tmp_path):
    problems = ratio_problems(tmp_path, ["Zinc / Copper", 8, None], ["Calcium /", 1, None])
    assert [problem.split(": ", 1)[0] for problem in problems] == ["Specs!A2", "Specs!A2", "Specs!A3"]
    assert problems[0].startswith('Specs!A2: the ratio "Zinc / Copper" names "Zinc" before the "/"')
    assert problems[1].startswith('Specs!A2: the ratio "Zinc / Copper" names "Copper" after the "/"')
    assert problems[2] == (
        'Specs!A3: the ratio "Calcium /" has no nutrient after the "/"; write a ratio as two nutrient '
        'columns around one "/", as in "Calcium / Phosphorus"'
    )


def test_ratio_with_two_slashes(tmp_path):
    assert ratio_problems(tmp_path, ["Calcium / Phosphorus / Energy", 1, None]) == [
        'Specs!A2: "Calcium / Phosphorus / Energy" is neither a nutrient column of Ingredients nor a ratio '
        'of two of them; write a ratio as two nutrient columns around one "/", as in "Calcium / Phosphorus"'
    ]


def test_ratio_of_a_column_named_with_a_slash(tmp_path):
    blend = read_workbook(make_workbook(tmp_path, RATIO_INGREDIENTS, [
        ["Nutrient", "Min", "Max"], ["Ca/P / Calcium", None, 50],
    ]))
    assert blend.specs[0].ratio == ("Ca/P", "Calcium")


def test_ratio_of_a_nutrient_to_itself(tmp_path):
    assert ratio_problems(tmp_path, ["Calcium / CALCIUM (%)", 1, None]) == [
        'Specs!A2: the ratio "Calcium / CALCIUM (%)" divides "Calcium" by itself; name two different '
        "nutrient columns"
    ]


def test_ratio_side_unit_must_agree(tmp_path):
    assert ratio_problems(tmp_path, ["Calcium (g/kg) / Phosphorus", 1, None]) == [
        'Specs!A2: the unit "g/kg" differs from the unit "%" of the column "Calcium" in Ingredients!C1; '
        'give the bounds in "%" and write that unit, or leave the unit out'
    ]


def test_ratio_repeated(tmp_path):
    rows = [["Calcium / Phosphorus", 1.8, None], ["calcium/phosphorus", None, 2.2]]
    assert ratio_problems(tmp_path, *rows) == [
        'Specs!A3: "calcium/phosphorus" already has a spec in Specs!A2; put both bounds in one row and '
        "delete the other"
    ]


# --- Basis ------------------------------------------------------------------------------

DM_INGREDIENTS = [
    ["Ingredient", "Cost", "Dry matter (%)", "Crude protein (%)", "NDF (%)"],
    ["Grass silage", 45, 32, 4.5, 16],
    ["Barley", 180, 87, 10, 17],
]


def basis_specs(*rows: list) -> list[list]:
    """A Specs sheet with a Basis column."""
    return [["Nutrient", "Min", "Max", "Basis"], *rows]


def test_basis_column(tmp_path):
    specs = basis_specs(
        ["Crude protein", 9, None, None],
        ["Crude protein", 14, None, " DRY  Matter "],
        ["NDF", None, 30, "As-Fed"],
        ["NDF", None, 40, "dry-matter"],
    )
    blend = read_workbook(make_workbook(tmp_path, DM_INGREDIENTS, specs))
    assert [(s.nutrient, s.basis, s.minimum, s.maximum) for s in blend.specs] == [
        ("Crude protein", "as fed", 9.0, None),
        ("Crude protein", "dry matter", 14.0, None),
        ("NDF", "as fed", None, 30.0),
        ("NDF", "dry matter", None, 40.0),
    ]
    assert blend.specs[1].cells == {
        "nutrient": "Specs!A3", "min": "Specs!B3", "max": "Specs!C3", "basis": "Specs!D3",
    }
    assert blend.settings.dry_matter == "Dry matter"


def test_unknown_basis(tmp_path):
    path = make_workbook(tmp_path, DM_INGREDIENTS, basis_specs(["NDF", None, 30, "fresh"]))
    assert only_problem(path) == Problem(
        "Specs!D2",
        'basis "fresh" is not as fed or dry matter; write as fed or dry matter (blank means as fed)',
    )


def test_dry_matter_spec_needs_the_dry_matter_column(tmp_path):
    path = make_workbook(tmp_path, INGREDIENTS, basis_specs(["Calcium", 4, None, "dry matter"]))
    assert only_problem(path) == Problem(
        "Specs!D2",
        'a dry-matter spec needs the dry-matter column, and Ingredients has no nutrient column "Dry matter"; '
        "add a column \"Dry matter (%)\" with each ingredient's dry matter in % as fed, or name the column "
        "that holds it with the Dry matter setting in Settings",
    )


def test_ratio_on_a_dry_matter_basis_needs_no_dry_matter_column(tmp_path):
    specs = basis_specs(["Calcium / Crude protein", None, 0.3, "dry matter"])
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, specs))
    assert (blend.specs[0].ratio, blend.specs[0].basis) == (("Calcium", "Crude protein"), "dry matter")


def test_dry_matter_setting_names_the_column(tmp_path):
    ingredients = [
        ["Ingredient", "Cost", "DM", "Crude protein (%)"],
        ["Grass silage", 45, 32, 4.5],
    ]
    settings = [["Setting", "Value"], ["Dry matter", " dm "]]
    blend = read_workbook(make_workbook(
        tmp_path, ingredients, basis_specs(["Crude protein", 14, None, "dry matter"]), settings
    ))
    assert blend.settings.dry_matter == "DM"  # as in the header
    assert blend.settings.cells == {"dry matter": "Settings!B2"}


def test_default_dry_matter_is_stored_as_the_header_writes_it(tmp_path):
    ingredients = [["Ingredient", "Cost", "DRY  MATTER"], ["Hay", 120, 86]]
    blend = read_workbook(make_workbook(tmp_path, ingredients, NO_SPECS))
    assert blend.settings.dry_matter == "DRY  MATTER"


def test_dry_matter_setting_must_name_a_nutrient_column(tmp_path):
    settings = [["Setting", "Value"], ["Dry matter", "Dry mater"]]
    # The dry-matter spec is not reported again: the setting is the one thing to fix.
    path = make_workbook(tmp_path, DM_INGREDIENTS, basis_specs(["NDF", None, 40, "dry matter"]), settings)
    assert only_problem(path) == Problem(
        "Settings!B2",
        'dry matter "Dry mater" is not a nutrient column of Ingredients; name the column that holds dry '
        'matter in % as fed; did you mean "Dry matter"?; the nutrient columns are: "Dry matter", '
        '"Crude protein", "NDF"',
    )


def test_dry_matter_column_must_be_in_percent_for_dry_matter_specs(tmp_path):
    ingredients = [["Ingredient", "Cost", "Dry matter (g/kg)", "NDF (%)"], ["Barley", 180, 870, 17]]
    specs = basis_specs(["NDF", None, 30, None], ["NDF", None, 40, "dry matter"])
    assert read_workbook(make_workbook(tmp_path, ingredients, specs[:2]))  # unused: no problem
    assert only_problem(make_workbook(tmp_path, ingredients, specs, name="dm.xlsx")) == Problem(
        "Ingredients!C1",
        'the dry-matter column "Dry matter" is in "g/kg", but dry-matter specs (as in Specs!D3) need dry '
        'matter in % as fed; give the column in % and head it "Dry matter (%)"',
    )


def test_dry_matter_contents_must_be_0_to_100_for_dry_matter_specs(tmp_path):
    ingredients = [
        ["Ingredient", "Cost", "Dry matter", "NDF (%)"],
        ["Barley", 180, 870, 17],
        ["Water", 0, None, 0],  # blank: 0, fine
        ["Straw", 60, "lots", 70],  # reported once, as not a number
    ]
    specs = basis_specs(["NDF", None, 40, "dry matter"])
    assert problems_of(make_workbook(tmp_path, ingredients, specs)) == [
        "Ingredients!C2: Dry matter 870 is outside 0 to 100; dry-matter specs (as in Specs!D2) need dry "
        "matter in % as fed",
        'Ingredients!C4: Dry matter "lots" is not a number',
    ]


def test_same_nutrient_on_both_bases_is_no_repeat_but_the_same_basis_is(tmp_path):
    specs = basis_specs(
        ["NDF", None, 30, None], ["NDF", None, 40, "dry matter"], ["ndf", 20, None, "Dry matter"]
    )
    assert problems_of(make_workbook(tmp_path, DM_INGREDIENTS, specs)) == [
        'Specs!A4: "ndf" on a dry-matter basis already has a spec in Specs!A3; put both bounds in one row '
        "and delete the other"
    ]


# --- Products ---------------------------------------------------------------------------


def test_products_groups_and_limits(tmp_path):
    specs = [
        ["Nutrient", "Min", "Max", "Product"],
        ["Calcium", 3.6, 4.1, "layer MASH"],
        ["Calcium", 0.9, 1.2, "Pullet grower"],
        ["Crude protein", 16, None, None],
    ]
    path = make_workbook(tmp_path, INGREDIENTS, specs, sheets={
        "Products": PRODUCTS, "Groups": GROUPS, "Limits": LIMITS,
    })
    blend = read_workbook(path)

    assert [(p.name, p.amount) for p in blend.products] == [("Layer mash", 6000.0), ("Pullet grower", 2500.0)]
    assert blend.products[1].cells == {"product": "Products!A3", "amount": "Products!B3"}
    assert [(s.nutrient, s.product) for s in blend.specs] == [
        ("Calcium", "Layer mash"), ("Calcium", "Pullet grower"), ("Crude protein", None),
    ]
    assert blend.specs[0].cells["product"] == "Specs!D2"
    assert [(g.name, g.ingredients, g.minimum, g.maximum, g.product) for g in blend.groups] == [
        ("Cereals", ("Maize", "Wheat bran"), 40.0, None, None),
        ("Protein feeds", ("Soybean meal",), None, 25.0, "Pullet grower"),
    ]
    assert blend.groups[1].cells == {
        "group": "Groups!A3", "ingredients": "Groups!B3", "min": "Groups!C3", "max": "Groups!D3",
        "product": "Groups!E3",
    }
    assert [(lim.product, lim.ingredient, lim.minimum, lim.maximum) for lim in blend.limits] == [
        ("Pullet grower", "Limestone", 1.0, 2.0), ("Layer mash", "Wheat bran", None, 10.0),
    ]
    assert blend.limits[0].cells == {
        "product": "Limits!A2", "ingredient": "Limits!B2", "min": "Limits!C2", "max": "Limits!D2",
    }


@pytest.mark.parametrize("products", [[["Product", "Amount"]], []])
def test_products_sheet_without_rows_is_one_blend(tmp_path, products):
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, SPECS, sheets={"Products": products}))
    assert blend.products == ()


def test_without_optional_sheets_there_are_no_groups_products_or_limits(tmp_path):
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, SPECS))
    assert (blend.groups, blend.products, blend.limits) == ((), (), ())


def product_problems(tmp_path: Path, *rows: list) -> list[str]:
    """Problems for a Products sheet with these rows, alongside the demo sheets."""
    products = [["Product", "Amount"], *rows]
    return problems_of(make_workbook(tmp_path, INGREDIENTS, SPECS, sheets={"Products": products}))


def test_product_rows_are_checked(tmp_path):
    assert product_problems(
        tmp_path,
        ["Layer mash", 6000],
        [" LAYER mash", 100],
        ["Grower", None],
        ["Starter", 0],
        ["Finisher", "a lot"],
        [None, 50],
    ) == [
        'Products!A3: product "LAYER mash" is already listed in Products!A2 (names are compared ignoring '
        "case and spaces); give each product its own name, or delete one row",
        "Products!B5: amount 0 must be more than 0; it is how much of this product to make, in kg",
        'Products!B6: amount "a lot" is not a number',
        "Products!A7: this row has values but no product name; type a name, or clear the row",
    ]


def test_products_are_not_allowed_in_diet_mode(tmp_path):
    products = [[], ["Product", "Amount"], ["Week 1", 7]]
    path = make_workbook(tmp_path, FOODS, NO_SPECS, DIET, sheets={"Products": products})
    assert only_problem(path) == Problem(
        "Products!A3",
        'products are for blend mode, and the Mode setting in Settings!B2 is "diet"; a diet is planned on '
        "its own: clear the rows of Products, or set Mode to blend",
    )


def test_amount_is_optional(tmp_path):
    # Without an Amount column, or with a blank amount, a product is a formula of its own.
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, sheets={"Products": [["Product"], ["A"]]})
    assert [(p.name, p.amount) for p in read_workbook(path).products] == [("A", None)]
    products = [["Product", "Amount"], ["A", None], ["B", 500]]
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, sheets={"Products": products}, name="b.xlsx")
    blend = read_workbook(path)
    assert [(p.name, p.amount) for p in blend.products] == [("A", None), ("B", 500.0)]
    assert blend.products[0].cells == {"product": "Products!A2", "amount": "Products!B2"}


def test_spec_for_an_unknown_product(tmp_path):
    specs = [["Nutrient", "Min", "Max", "Product"], ["Calcium", 3.6, None, "Layer mesh"]]
    path = make_workbook(tmp_path, INGREDIENTS, specs, sheets={"Products": PRODUCTS})
    assert only_problem(path) == Problem(
        "Specs!D2",
        'no product "Layer mesh" in Products; name one listed there, or clear the cell (blank means every '
        'product); did you mean "Layer mash"?; the products are: "Layer mash", "Pullet grower"',
    )


def test_spec_for_a_product_without_a_products_sheet(tmp_path):
    specs = [["Nutrient", "Min", "Max", "Product"], ["Calcium", 3.6, None, "Layer mash"]]
    assert only_problem(make_workbook(tmp_path, INGREDIENTS, specs)) == Problem(
        "Specs!D2",
        'no product "Layer mash": the workbook has no Products sheet; add a sheet named "Products" with the '
        "columns Product and Amount listing it, or clear the cell (blank means every product)",
    )


def test_spec_for_a_product_when_products_has_no_rows(tmp_path):
    specs = [["Nutrient", "Min", "Max", "Product"], ["Calcium", 3.6, None, "Layer mash"]]
    path = make_workbook(tmp_path, INGREDIENTS, specs, sheets={"Products": [["Product", "Amount"]]})
    assert only_problem(path) == Problem(
        "Specs!D2",
        'no product "Layer mash" in Products, which lists none; add it there, or clear the cell (blank '
        "means every product)",
    )


def test_spec_repeated_only_within_the_same_product_and_basis(tmp_path):
    specs = [
        ["Nutrient", "Min", "Max", "Product", "Basis"],
        ["Calcium", 3.6, None, None, None],
        ["Calcium", 3.8, None, "Layer mash", None],
        ["Calcium", 0.9, None, "Pullet grower", None],
        ["calcium", None, 4.1, " layer mash ", "as fed"],
    ]
    path = make_workbook(tmp_path, INGREDIENTS, specs, sheets={"Products": PRODUCTS})
    assert only_problem(path) == Problem(
        "Specs!A5",
        '"calcium" for product "Layer mash" already has a spec in Specs!A3; put both bounds in one row and '
        "delete the other",
    )


# --- Groups -----------------------------------------------------------------------------


def group_problems(tmp_path: Path, *rows: list, products: bool = False) -> list[str]:
    """Problems for a Groups sheet with these rows, alongside the demo sheets."""
    sheets = {"Groups": [["Group", "Ingredients", "Min", "Max", "Product"], *rows]}
    if products:
        sheets["Products"] = PRODUCTS
    return problems_of(make_workbook(tmp_path, INGREDIENTS, SPECS, sheets=sheets))


def test_group_ingredient_lists(tmp_path):
    ingredients = [
        ["Ingredient", "Cost", "Protein"],
        ["Maize", 212, 8.6],
        ["Fat, animal", 900, 0],
        ["Fat, animal; refined", 1100, 0],
        ["Wheat", 190, 11],
    ]
    groups = [
        ["Group", "Ingredients", "Min", "Max"],
        ["Energy", "maize;  FAT, ANIMAL , wheat,", 50, 90],
        ["Fats", "Fat, animal; refined; Fat, animal", None, 5],  # the longest match wins
        ["Just maize", "Maize", 10, None],
    ]
    blend = read_workbook(make_workbook(tmp_path, ingredients, NO_SPECS, sheets={"Groups": groups}))
    assert [(g.name, g.ingredients, g.product) for g in blend.groups] == [
        ("Energy", ("Maize", "Fat, animal", "Wheat"), None),
        ("Fats", ("Fat, animal; refined", "Fat, animal"), None),
        ("Just maize", ("Maize",), None),
    ]
    # No Product column, so no product cell.
    assert blend.groups[0].cells == {
        "group": "Groups!A2", "ingredients": "Groups!B2", "min": "Groups!C2", "max": "Groups!D2",
    }


def test_group_rows_are_checked(tmp_path):
    assert group_problems(
        tmp_path,
        ["Cereals", "Maize, Oats", 40, None, None],
        ["cereals", "Maize; maize", None, 80, None],
        ["Minerals", None, 1, 5, None],
        ["Protein", "Soybean meal", None, None, None],
        ["Fibre", "Wheat bran", 20, 10, None],
        ["Extra", "Limestone", -1, 101, None],
        [None, "Maize", 1, 2, None],
    ) == [
        'Groups!B2: no ingredient "Oats" in Ingredients; name one listed there; the ingredients are: '
        '"Maize", "Soybean meal", "Wheat bran", "Limestone"',
        'Groups!A3: group "cereals" is already listed in Groups!A2 (names are compared ignoring case and '
        "spaces); give each group its own name, or delete one row",
        'Groups!B3: the ingredient "Maize" is listed twice in this group; list each ingredient once',
        'Groups!B4: the group "Minerals" lists no ingredients; list them separated by commas or semicolons, '
        'as in "Maize, Wheat"',
        'Groups!A5: the group "Protein" has neither a min nor a max; give at least one, or delete the row',
        "Groups!D6: max 10 is below min 20 in Groups!C6; make max at least min",
        "Groups!C7: min -1 is outside 0 to 100; group limits are % of the blend",
        "Groups!D7: max 101 is outside 0 to 100; group limits are % of the blend",
        "Groups!A8: this row has values but no group name; type a name, or clear the row",
    ]


def test_group_for_a_product(tmp_path):
    assert group_problems(tmp_path, ["Cereals", "Maize", 40, None, "Starter"], products=True) == [
        'Groups!E2: no product "Starter" in Products; name one listed there, or clear the cell (blank means '
        'every product); the products are: "Layer mash", "Pullet grower"'
    ]


def test_group_limits_in_diet_mode(tmp_path):
    groups = [["Group", "Ingredients", "Min", "Max"], ["Grains", "Oat porridge, Rye bread", 2, 400]]
    blend = read_workbook(make_workbook(tmp_path, FOODS, NO_SPECS, DIET, sheets={"Groups": groups}))
    assert (blend.groups[0].minimum, blend.groups[0].maximum) == (2.0, 400.0)
    groups.append(["Soups", "Lentil soup", -1, None])
    path = make_workbook(tmp_path, FOODS, NO_SPECS, DIET, sheets={"Groups": groups}, name="b.xlsx")
    assert problems_of(path) == [
        "Groups!C3: min -1 is below 0; in diet mode group limits are amounts in each food's unit, 0 or more"
    ]


def test_groups_sheet_missing_columns(tmp_path):
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, sheets={"Groups": [["Group", "Ingredients", "Max"]]})
    assert problems_of(path) == [
        'Groups!1:1: no column "Min" (the least total inclusion of the group) in the header row; add a '
        'column headed "Min"'
    ]


# --- Limits -----------------------------------------------------------------------------


def limit_problems(tmp_path: Path, *rows: list, products: list | None = PRODUCTS) -> list[str]:
    """Problems for a Limits sheet with these rows, alongside the demo sheets and PRODUCTS."""
    sheets = {"Limits": [["Product", "Ingredient", "Min", "Max"], *rows]}
    if products is not None:
        sheets["Products"] = products
    return problems_of(make_workbook(tmp_path, INGREDIENTS, SPECS, sheets=sheets))


def test_limit_rows_are_checked(tmp_path):
    assert limit_problems(
        tmp_path,
        ["Layer mash", "Limestone", 8, None],
        ["layer mash", " LIMESTONE ", None, 10],
        ["Starter", "Maize", None, 60],
        ["Pullet grower", "Maise", None, 60],
        ["Pullet grower", "Maize", None, None],
        ["Pullet grower", "Soybean meal", 30, 20],
        ["Pullet grower", "Wheat bran", None, 120],
        [None, "Wheat bran", None, 1],
        ["Layer mash", None, 1, None],
    ) == [
        'Limits!B3: "Limestone" already has a limit for product "Layer mash" in Limits!B2; put both bounds '
        "in one row and delete the other",
        'Limits!A4: no product "Starter" in Products; name one listed there; the products are: '
        '"Layer mash", "Pullet grower"',
        'Limits!B5: no ingredient "Maise" in Ingredients; name one listed there; did you mean "Maize"?; '
        'the ingredients are: "Maize", "Soybean meal", "Wheat bran", "Limestone"',
        'Limits!B6: the limit for "Maize" in "Pullet grower" has neither a min nor a max; give at least '
        "one, or delete the row",
        "Limits!D7: max 20 is below min 30 in Limits!C7; make max at least min",
        "Limits!D8: max 120 is outside 0 to 100; inclusion limits are % of the blend",
        "Limits!A9: this row has no product; type the product the limit applies to, or clear the row",
        "Limits!B10: this row has no ingredient; type the ingredient to limit, or clear the row",
    ]


def test_limits_need_a_products_sheet(tmp_path):
    assert limit_problems(tmp_path, ["Layer mash", "Limestone", 8, None], products=None) == [
        'Limits!A2: no product "Layer mash": the workbook has no Products sheet; add a sheet named '
        '"Products" with the columns Product and Amount listing it'
    ]


def test_limits_sheet_missing_columns(tmp_path):
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, sheets={
        "Limits": [["Product", "Min", "Max"], ["Layer mash", 1, 2]], "Products": PRODUCTS,
    })
    assert problems_of(path) == [
        'Limits!1:1: no column "Ingredient" (the ingredient the row limits) in the header row; add a column '
        'headed "Ingredient"'
    ]


def test_a_problem_in_a_referenced_row_is_not_reported_again(tmp_path):
    # A product or ingredient whose own row has a problem still counts as listed.
    ingredients = with_row(["Oats", "cheap", None, None, None, 11])
    products = [["Product", "Amount"], ["Layer mash", -1]]
    limits = [["Product", "Ingredient", "Min", "Max"], ["Layer mash", "oats", None, 5]]
    path = make_workbook(tmp_path, ingredients, NO_SPECS, sheets={"Products": products, "Limits": limits})
    assert [problem.split(":")[0] for problem in problems_of(path)] == ["Ingredients!B2", "Products!B2"]


# --- Settings cells ---------------------------------------------------------------------


def test_settings_cells_name_each_value_read(tmp_path):
    settings = [
        [],
        [None, "Setting", "Value"],
        [None, "Name", "Hilltop Hens"],
        [None, "Mode", "blend"],
        [None, "Batch size", None],  # blank: the default, read from nowhere
        [None, "Dry matter", "Calcium"],
    ]
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, SPECS, settings))
    assert blend.settings.cells == {"name": "Settings!C3", "mode": "Settings!C4", "dry matter": "Settings!C6"}
    assert blend.settings.dry_matter == "Calcium"


# --- Missing sheets and columns ---------------------------------------------------------


def test_missing_sheets(tmp_path):
    path = make_workbook(tmp_path, sheets={"Sheet1": [["a"]], "Prices": [["b"]]}, name="feeds.xlsx")
    assert problems_of(path) == [
        'feeds.xlsx: no sheet named "Ingredients"; add a sheet named "Ingredients" with the columns '
        "Ingredient and Cost (Min, Max, Use, Unit and Stock are optional) and one column per nutrient; "
        "sheets "
        'present: "Sheet1", "Prices"',
        'feeds.xlsx: no sheet named "Specs"; add a sheet named "Specs" with the columns Nutrient, Min '
        'and Max (it may have no rows); sheets present: "Sheet1", "Prices"',
    ]


def test_missing_specs_sheet_still_checks_ingredients(tmp_path):
    path = make_workbook(tmp_path, with_row(["Oats", "cheap", None, None, None, 11]), name="x.xlsx")
    assert problems_of(path) == [
        'x.xlsx: no sheet named "Specs"; add a sheet named "Specs" with the columns Nutrient, Min and '
        'Max (it may have no rows); sheets present: "Ingredients"',
        'Ingredients!B2: cost "cheap" is not a number',
    ]


def test_two_sheets_with_the_same_name(tmp_path):
    path = make_workbook(tmp_path, INGREDIENTS, SPECS, sheets={" specs": NO_SPECS}, name="x.xlsx")
    assert problems_of(path) == [
        'x.xlsx: two sheets are named "Specs": "Specs" and " specs" (sheet names are compared '
        "ignoring case and spaces); rename or delete one"
    ]


def test_empty_required_sheets(tmp_path):
    assert problems_of(make_workbook(tmp_path, [], [[], [None]])) == [
        "Ingredients: the sheet is empty; put the column headers in its first row: Ingredient, Cost",
        "Specs: the sheet is empty; put the column headers in its first row: Nutrient, Min, Max",
    ]


def test_missing_required_columns(tmp_path):
    ingredients = [[], ["Name", "Price", "Protein"], ["Oats", 190, 11]]
    specs = [["Nutrient", "Minimum", "Max"], ["Protein", 10, None]]
    settings = [["Setting", "Amount"], ["Currency", "EUR"]]
    assert problems_of(make_workbook(tmp_path, ingredients, specs, settings)) == [
        'Ingredients!2:2: no column "Ingredient" (the name of each ingredient) in the header row; '
        'add a column headed "Ingredient"',
        'Ingredients!2:2: no column "Cost" (the price of each ingredient per Cost per unit of mass) in '
        'the header row; add a column headed "Cost"',
        'Specs!1:1: no column "Min" (the least level of the nutrient in the blend) in the header row; '
        'add a column headed "Min"; is "Minimum" meant to be "Min"?',
        'Settings!1:1: no column "Value" (the value of each setting) in the header row; add a column '
        'headed "Value"',
    ]


def test_missing_column_suggests_a_near_header(tmp_path):
    ingredients = [["Ingredients", "Cost"], ["Oats", 190]]
    assert only_problem(make_workbook(tmp_path, ingredients, NO_SPECS)).message == (
        'no column "Ingredient" (the name of each ingredient) in the header row; add a column headed '
        '"Ingredient"; is "Ingredients" meant to be "Ingredient"?'
    )


def test_missing_cost_column_still_checks_the_rows(tmp_path):
    ingredients = [["Ingredient", "Protein"], ["Oats", "lots"]]
    assert problems_of(make_workbook(tmp_path, ingredients, NO_SPECS)) == [
        'Ingredients!1:1: no column "Cost" (the price of each ingredient per Cost per unit of mass) in '
        'the header row; add a column headed "Cost"',
        'Ingredients!B2: Protein "lots" is not a number',
    ]


# --- Formulas ---------------------------------------------------------------------------


def test_formula_without_a_saved_value(tmp_path):
    ingredients = with_row(
        ["Maize", 200, None, None, None, 8],
        ["Maize screenings", "=B2*2", None, None, None, 8],
    )
    assert only_problem(make_workbook(tmp_path, ingredients, NO_SPECS)) == Problem(
        "Ingredients!B3",
        'formula "=B2*2" has no saved value; open the workbook in a spreadsheet program and save it '
        "so the result is stored",
    )


def test_formula_without_a_saved_value_in_a_header(tmp_path):
    ingredients = [["Ingredient", "Cost", '="Pro"&"tein"'], ["Maize", 200, 8]]
    assert only_problem(make_workbook(tmp_path, ingredients, NO_SPECS)).where == "Ingredients!C1"


def test_saved_error_values_are_not_numbers(tmp_path):
    ingredients = with_row(["Maize", "=1/0", None, None, None, "=NA()"])
    path = make_workbook(tmp_path, ingredients, NO_SPECS)
    store_saved_values(path, "Ingredients", {"B2": "#DIV/0!", "F2": "#N/A"})
    assert problems_of(path) == [
        'Ingredients!B2: cost "#DIV/0!" is not a number',
        'Ingredients!F2: Protein "#N/A" is not a number',
    ]


def test_saved_error_value_as_a_name(tmp_path):
    ingredients = with_row(["=Z99", 200, None, None, None, 8])
    path = make_workbook(tmp_path, ingredients, NO_SPECS)
    store_saved_values(path, "Ingredients", {"A2": "#REF!"})
    assert only_problem(path) == Problem(
        "Ingredients!A2",
        'ingredient name "#REF!" is an error value from a formula; fix the formula or type the '
        "ingredient name",
    )


# --- Many problems at once --------------------------------------------------------------


def test_every_problem_in_the_workbook_is_reported_together(tmp_path):
    ingredients = with_row(
        ["Maize", "n/a", None, None, "yes", 8],
        ["maize", 200, 30, 20, "perhaps", "=F2+1"],
        [None, 100, None, None, None, 5],
    )
    specs = [["Nutrient", "Min", "Max"], ["Lysine", 0.7, None], ["Protein", None, None]]
    settings = [["Setting", "Value"], ["Batch size", -1], ["Mass unit", "stone"]]
    path = make_workbook(tmp_path, ingredients, specs, settings, name="mill.xlsx")
    with pytest.raises(WorkbookError) as caught:
        read_workbook(path)
    assert [problem.where for problem in caught.value.problems] == [
        "Ingredients!B2",
        "Ingredients!A3", "Ingredients!D3", "Ingredients!E3", "Ingredients!F3",
        "Ingredients!A4",
        "Specs!A2", "Specs!A3",
        "Settings!B2", "Settings!B3",
    ]
    assert str(caught.value).startswith(
        '10 problems in the workbook:\n  Ingredients!B2: cost "n/a" is not a number\n'
    )


def test_problems_of_every_sheet_are_reported_together_in_sheet_order(tmp_path):
    ingredients = [
        ["Ingredient", "Cost", "Stock", "Calcium (%)", "Phosphorus (%)"],
        ["Limestone", 48, -10, 37.5, 0.02],
        ["Wheat bran", 158, None, 0.12, 1.1],
    ]
    specs = [
        ["Nutrient", "Min", "Max", "Basis", "Product"],
        ["Calcium / Phosphorous", 1.5, None, None, None],
        ["Calcium", 3.6, None, "wet", "Layer mash"],
    ]
    sheets = {
        # Sheet order in the file does not change the order of the report.
        "Limits": [["Product", "Ingredient", "Min", "Max"], ["Grower", "Limestone", None, 3]],
        "Products": [["Product", "Amount"], ["Layer mash", 6000], ["layer mash", 100]],
        "Groups": [["Group", "Ingredients", "Min", "Max"], ["Minerals", "Limestone, Salt", None, 4]],
    }
    settings = [["Setting", "Value"], ["Mode", "mixer"], ["Dry matter", "DM"]]
    path = make_workbook(tmp_path, ingredients, specs, settings, sheets=sheets)
    with pytest.raises(WorkbookError) as caught:
        read_workbook(path)
    assert [problem.where for problem in caught.value.problems] == [
        "Ingredients!C2",
        "Specs!A2", "Specs!D3",
        "Groups!B2",
        "Products!A3",
        "Limits!A2",
        "Settings!B2", "Settings!B3",
    ]
    assert str(caught.value).startswith("8 problems in the workbook:\n  Ingredients!C2: stock -10 is below 0")


# --- Files that are not workbooks -------------------------------------------------------


def test_missing_file(tmp_path):
    problem = only_problem(tmp_path / "nowhere.xlsx")
    assert problem.where == "nowhere.xlsx"
    assert problem.message == (
        f'cannot find the file "{tmp_path / "nowhere.xlsx"}"; check the file name and folder'
    )


def test_a_folder(tmp_path):
    folder = tmp_path / "blends.xlsx"
    folder.mkdir()
    assert only_problem(folder) == Problem(
        "blends.xlsx", f'"{folder}" is a folder, not a workbook; give the path of an .xlsx file'
    )


@pytest.mark.parametrize(
    ("name", "data", "message"),
    [
        (
            "empty.xlsx", b"",
            "the file is empty; give an .xlsx workbook with the Ingredients and Specs sheets",
        ),
        (
            "prices.csv", b"Ingredient,Cost\nMaize,200\n",
            "the file is not an .xlsx workbook (it is a text file, perhaps CSV); open it in a spreadsheet "
            "program and save it as an Excel workbook (.xlsx)",
        ),
        (
            "old.xls", bytes.fromhex("D0CF11E0A1B11AE1") + bytes(504),  # the OLE2 signature (from memory)
            "the file is an old binary Excel workbook (.xls) or a password-protected one; blendkit reads "
            ".xlsx workbooks: open it in a spreadsheet program and save it as an Excel workbook (.xlsx) "
            "without a password",
        ),
        (
            "noise.xlsx", bytes(range(256)) * 4,
            "the file is not an .xlsx workbook (it is not a zip archive, as .xlsx files are); open it in a "
            "spreadsheet program and save it as an Excel workbook (.xlsx)",
        ),
    ],
)
def test_files_that_are_not_xlsx(tmp_path, name, data, message):
    path = tmp_path / name
    path.write_bytes(data)
    assert only_problem(path) == Problem(name, message)


def test_a_zip_that_is_not_a_workbook(tmp_path):
    path = tmp_path / "notes.xlsx"
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("readme.txt", "not a workbook")
    problem = only_problem(path)
    assert problem.where == "notes.xlsx"
    assert problem.message.startswith("the file is a zip archive but not a readable .xlsx workbook (")
    assert problem.message.endswith(
        "it may be damaged or another kind of file: open it in a spreadsheet program and save it as an "
        "Excel workbook (.xlsx)"
    )


@pytest.mark.parametrize("keep", [0.3, 0.6, 0.9])
def test_a_truncated_workbook(tmp_path, keep):
    good = make_workbook(tmp_path, INGREDIENTS, SPECS).read_bytes()
    path = tmp_path / "cut.xlsx"
    path.write_bytes(good[: int(len(good) * keep)])
    assert only_problem(path).where == "cut.xlsx"


def test_damaged_sheet_xml(tmp_path):
    path = make_workbook(tmp_path, INGREDIENTS, SPECS)
    with zipfile.ZipFile(path) as archive:
        members = {info.filename: archive.read(info) for info in archive.infolist()}
    members["xl/worksheets/sheet1.xml"] = members["xl/worksheets/sheet1.xml"][:200]
    with zipfile.ZipFile(path, "w") as archive:
        for member, data in members.items():
            archive.writestr(member, data)
    assert only_problem(path).where == "blend.xlsx"


def test_penalty_and_priority_are_read(tmp_path):
    specs = [
        ["Nutrient", "Min", "Max", "Penalty", "Priority"],
        ["Crude protein", 16.5, None, 4.5, 2],
        ["Energy", 11.2, 12.0, None, None],
    ]
    groups = [["Group", "Ingredients", "Min", "Max", "Priority"], ["Cereals", "Maize, Wheat bran", 40, None, 7]]
    blend = read_workbook(make_workbook(tmp_path, INGREDIENTS, specs, sheets={"Groups": groups}))
    assert blend.specs[0].penalty == 4.5 and blend.specs[0].priority == 2
    assert blend.specs[1].penalty is None and blend.specs[1].priority is None
    assert blend.groups[0].priority == 7


def test_bad_penalty_and_priority_name_their_cells(tmp_path):
    specs = [
        ["Nutrient", "Min", "Max", "Penalty", "Priority"],
        ["Crude protein", 16.5, None, -1, None],
        ["Energy", 11.2, 12.0, None, 12],
        ["Crude protein / Energy", 1.0, None, 3, None],
    ]
    with pytest.raises(WorkbookError) as caught:
        read_workbook(make_workbook(tmp_path, INGREDIENTS, specs))
    text = str(caught.value)
    assert "Specs!D2: penalty -1 must be above 0" in text
    assert "Specs!E3: priority 12 must be from 1 to 9" in text
    assert "Specs!D4: a penalty makes only an as-fed nutrient spec soft" in text


# --- Names with parentheses that are not units ------------------------------------------------

PAREN_INGREDIENTS = [
    ["Ingredient", "Cost", "Crude protein (N x 6.25) (%)", "Energy (MJ/kg)", "Dry matter (oven) (%)"],
    ["Barley", 180, 10.5, 12.8, 87],
    ["Peas", 260, 21.0, 13.4, 88],
]


def test_a_spec_names_a_nutrient_whose_name_has_parentheses(tmp_path):
    specs = [
        ["Nutrient", "Min", "Max", "Basis"],
        ["Crude protein (N x 6.25)", 14, None, None],  # the name as the header has it, less "(%)"
        ["crude protein (n x 6.25) (%)", None, 30, "dry matter"],  # with the unit too
        ["Crude protein (N x 6.25) / Energy (MJ/kg)", 0.9, None, None],
    ]
    settings = [["Setting", "Value"], ["Dry matter", "Dry matter (oven)"]]
    blend = read_workbook(make_workbook(tmp_path, PAREN_INGREDIENTS, specs, settings))
    assert [(s.nutrient, s.ratio) for s in blend.specs] == [
        ("Crude protein (N x 6.25)", None),
        ("Crude protein (N x 6.25)", None),
        ("Crude protein (N x 6.25) / Energy (MJ/kg)", ("Crude protein (N x 6.25)", "Energy")),
    ]
    assert blend.settings.dry_matter == "Dry matter (oven)"


def test_a_spec_naming_such_a_nutrient_twice_is_one_spec_repeated(tmp_path):
    specs = [["Nutrient", "Min", "Max"], ["Crude protein (N x 6.25)", 14, None], ["Crude protein (N x 6.25) (%)", None, 30]]
    assert problems_of(make_workbook(tmp_path, PAREN_INGREDIENTS, specs)) == [
        'Specs!A3: "Crude protein (N x 6.25)" already has a spec in Specs!A2; put both bounds in one row '
        "and delete the other"
    ]


def test_a_misspelt_nutrient_with_parentheses_gets_the_column_as_written(tmp_path):
    specs = [["Nutrient", "Min", "Max"], ["Crude protien (N x 6.25)", 14, None]]
    [problem] = problems_of(make_workbook(tmp_path, PAREN_INGREDIENTS, specs))
    assert problem.startswith(
        'Specs!A2: no nutrient column "Crude protien (N x 6.25)" in Ingredients; a spec must name one of its '
        'nutrient columns; did you mean "Crude protein (N x 6.25)"?'
    )


# --- saved formula results read from the package ----------------------------------------


def _formula_book(path: Path) -> Path:
    """A workbook whose formula cells carry saved results of every kind a spreadsheet
    program stores: number, text (inline and shared), empty text, true/false, error, a
    date shown as a date, and one formula with no saved result."""
    import datetime

    import openpyxl

    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Data"
    for row, formula in enumerate(["=1+1", '="a"&"b"', '=""', "=TRUE()", "=1/0", "=DATE(2024,3,1)", "=2*2",
                                   "=0.5"], start=1):
        sheet.cell(row, 1).value = formula
    sheet["A6"].number_format = "yyyy-mm-dd"
    sheet["A8"].number_format = "0%"
    book.save(path)
    serial = (datetime.date(2024, 3, 1) - datetime.date(1899, 12, 30)).days
    store_saved_values(path, "Data", {"A1": 2, "A2": "ab", "A3": "", "A4": True, "A5": "#DIV/0!",
                                      "A6": serial, "A8": 0.5})
    # One result as a shared string, as some programs store it.
    with zipfile.ZipFile(path) as archive:
        members = {info.filename: archive.read(info) for info in archive.infolist()}
    part = "xl/worksheets/sheet1.xml"
    members[part] = members[part].replace(b't="str"><f>"a"&amp;"b"</f><v>ab</v>',
                                          b't="s"><f>"a"&amp;"b"</f><v>0</v>')
    members["xl/sharedStrings.xml"] = (
        b'<?xml version="1.0" encoding="UTF-8"?><sst xmlns="http://schemas.openxmlformats.org/'
        b'spreadsheetml/2006/main" count="1" uniqueCount="1"><si><t>ab</t></si></sst>')
    types = members["[Content_Types].xml"]
    if b"sharedStrings" not in types:
        members["[Content_Types].xml"] = types.replace(b"</Types>", (
            b'<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-'
            b'officedocument.spreadsheetml.sharedStrings+xml"/></Types>'))
    rels = members["xl/_rels/workbook.xml.rels"]
    if b"sharedStrings" not in rels:
        members["xl/_rels/workbook.xml.rels"] = rels.replace(b"</Relationships>", (
            b'<Relationship Id="rIdSS" Type="http://schemas.openxmlformats.org/officeDocument/2006/'
            b'relationships/sharedStrings" Target="sharedStrings.xml"/></Relationships>'))
    with zipfile.ZipFile(path, "w") as archive:
        for name, data in members.items():
            archive.writestr(name, data)
    return path


def test_saved_results_read_from_the_package_match_a_results_load(tmp_path):
    # Outside reference: openpyxl's own load of the saved results (data_only=True), the
    # second load the reader no longer makes.
    import openpyxl

    from blendkit.read.saved_values import saved_values, shown_value

    path = _formula_book(tmp_path / "formulas.xlsx")
    data = path.read_bytes()
    formulas = openpyxl.load_workbook(path)["Data"]
    results = openpyxl.load_workbook(path, data_only=True)
    found = saved_values(data)["Data"]
    assert set(found) == {(row, 1) for row in range(1, 9)}  # every formula cell, no other
    for (row, column), stored in found.items():
        cell = formulas.cell(row, column)
        shown = shown_value(stored, cell.number_format, cell.coordinate, results.epoch)
        expected = results["Data"].cell(row, column)
        assert (shown.value, shown.data_type) == (expected.value, expected.data_type), cell.coordinate
    assert found[(2, 1)] == ("s", "ab")  # the shared string looked up


def test_a_workbook_without_formulas_has_no_saved_results(tmp_path):
    from blendkit.read.saved_values import saved_values

    path = make_workbook(tmp_path, INGREDIENTS, SPECS)
    assert saved_values(path.read_bytes()) == {}


def test_stored_cells_read_each_sample_cell_as_openpyxl_shows_it():
    # Outside reference: openpyxl's own load of each sample (formulas, and saved results
    # with data_only=True): every stored cell's value, number format and place, whether
    # the reader took its quick path for numbers or the general one.
    import openpyxl

    from blendkit.read.saved_values import saved_values
    from blendkit.read.tables import stored_cells

    samples = sorted((Path(__file__).resolve().parents[1] / "sample_workbooks").glob("*.xlsx"))
    assert samples
    for sample in samples:
        book = openpyxl.load_workbook(sample)
        shown = openpyxl.load_workbook(sample, data_only=True)
        saved = saved_values(sample.read_bytes())
        for sheet in book.worksheets:
            grid = stored_cells(sheet, saved.get(sheet.title, {}))
            for (row, column), cell in sheet._cells.items():
                read = grid[row][column]
                value = shown[sheet.title].cell(row, column).value
                assert read.ref == f"{sheet.title}!{cell.coordinate}"
                assert read.number_format == (cell.number_format or "General")
                if read.kind == "value":
                    assert read.value == value, read.ref
                else:
                    assert value is None or (isinstance(value, str) and not value.strip()) or read.kind == "error"
                assert read.formula == (cell.value if cell.data_type == "f" else None), read.ref

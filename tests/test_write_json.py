"""The JSON rendering: exact shape, plain types, strict JSON."""

from __future__ import annotations

import dataclasses
import json

import numpy as np
import pytest

from blendkit.write.json import formula_to_dict, formula_to_json
from tests import formulas

KEYS = ["status", "message", "cost", "ingredients", "prices", "nutrients", "limits", "batch", "stocks", "violations", "notes", "cross_check"]
LIMIT_KEYS = ["kind", "name", "product", "side", "bound", "level", "binding", "shadow_price", "shadow_price_up",
              "shadow_price_down", "cell", "holds_from", "holds_to", "step", "per_step", "note",
              "margin", "target"]


def test_exact_shape_of_an_optimal_formula():
    formula = formulas.optimal_formula()
    data = formula_to_dict(formula)
    assert list(data) == KEYS
    assert data["status"] == "optimal"
    assert data["message"] == formula.message
    assert data["cost"] == pytest.approx(formulas.blend_cost())
    assert data["ingredients"] == {
        "Barley": 60.0, "Pea meal": 20.0, "Rapeseed meal": 18.0, "Limestone": 2.0,
        "Wheat feed": 0.0, "Oat hulls": 0.0,
    }
    assert data["nutrients"] == pytest.approx(formulas.levels())
    assert list(data["nutrients"]) == list(formulas.NUTRIENTS)
    assert data["limits"][0] == {
        "kind": "nutrient", "name": "Crude protein", "product": None, "side": "min", "bound": 17.12,
        "level": pytest.approx(17.12), "binding": True, "shadow_price": 4.5, "cell": "Specs!B2",
        "holds_from": None, "holds_to": None, "shadow_price_up": None, "shadow_price_down": None,
        # The default step of a % content is 0.01 (blendkit.model.steps); 4.5 x 0.01.
        "step": 0.01, "per_step": pytest.approx(0.045), "note": None,
        "margin": 0.0, "target": 17.12,  # no Margin: the formula is made to the bound itself
    }
    assert data["limits"][5] == {
        "kind": "ingredient", "name": "Rapeseed meal", "product": None, "side": "max", "bound": 18.0,
        "level": 18.0, "binding": True, "shadow_price": -1.25, "cell": "Ingredients!D4",
        "holds_from": None, "holds_to": None, "shadow_price_up": None, "shadow_price_down": None,
        "step": 0.1, "per_step": pytest.approx(-0.125), "note": None,  # an inclusion moves by 0.1 %
        "margin": 0.0, "target": 18.0,
    }
    assert all(list(limit) == LIMIT_KEYS for limit in data["limits"])
    assert len(data["limits"]) == len(formula.limits)
    assert data["notes"] == list(formulas.NOTES)


def test_types_are_plain():
    data = formula_to_dict(formulas.optimal_formula())
    assert type(data["cost"]) is float
    assert all(type(v) is float for v in data["ingredients"].values())
    assert all(type(v) is float for v in data["nutrients"].values())
    for limit in data["limits"]:
        assert type(limit["binding"]) is bool
        assert all(type(limit[k]) is float for k in ("bound", "level", "shadow_price"))
        assert all(type(limit[k]) is str for k in ("kind", "name", "side", "cell"))


def test_text_round_trips_to_the_dict():
    formula = formulas.optimal_formula()
    assert json.loads(formula_to_json(formula)) == formula_to_dict(formula)


def test_numpy_numbers_become_plain_floats():
    formula = formulas.optimal_formula()
    lines = tuple(
        dataclasses.replace(line, inclusion=np.float64(line.inclusion))
        for line in formula.ingredients
    )
    limits = tuple(
        dataclasses.replace(limit, shadow_price=np.float32(limit.shadow_price),
                            binding=np.bool_(limit.binding))
        for limit in formula.limits
    )
    formula = dataclasses.replace(formula, cost=np.float64(232.0), ingredients=lines,
                                  limits=limits)
    data = formula_to_dict(formula)
    assert type(data["cost"]) is float
    assert all(type(v) is float for v in data["ingredients"].values())
    assert all(type(limit["shadow_price"]) is float for limit in data["limits"])
    assert all(type(limit["binding"]) is bool for limit in data["limits"])
    json.loads(formula_to_json(formula))


def test_nan_and_infinity_are_never_emitted():
    formula = formulas.optimal_formula()
    nutrients = (dataclasses.replace(formula.nutrients[0], level=float("nan")),
                 *formula.nutrients[1:])
    limits = (dataclasses.replace(formula.limits[0], shadow_price=float("inf")),
              *formula.limits[1:])
    formula = dataclasses.replace(formula, nutrients=nutrients, limits=limits)
    text = formula_to_json(formula)
    assert "NaN" not in text and "Infinity" not in text
    data = json.loads(text)
    assert data["nutrients"]["Crude protein"] is None
    assert data["limits"][0]["shadow_price"] is None


def test_negative_zero_is_written_as_zero():
    formula = formulas.optimal_formula()
    limits = (dataclasses.replace(formula.limits[1], shadow_price=-0.0),)
    text = formula_to_json(dataclasses.replace(formula, limits=limits))
    assert '"shadow_price": 0.0' in text


def test_not_optimal_has_null_cost_and_empty_tables():
    formula = formulas.infeasible_formula()
    data = formula_to_dict(formula)
    assert data == {
        "status": "infeasible",
        "message": formula.message,
        "cost": None,
        "ingredients": {},
        "prices": {},
        "nutrients": {},
        "limits": [],
        "batch": None,
        "stocks": {},
        "violations": [],
        "notes": list(formula.notes),
        "cross_check": None,
        "conflicts": [],
        "conflicts_complete": True,
        "conflicts_cut_short": False,
        "relaxation": None,
    }
    # Even if a cost were left on the formula, it means nothing unless optimal.
    assert formula_to_dict(dataclasses.replace(formula, cost=12.5))["cost"] is None
    assert json.loads(formula_to_json(formula))["cost"] is None

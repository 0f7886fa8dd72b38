"""Conflict diagnosis on constructed conflicts with known answers.

Irreducibility and every proposed move are checked independently: the subsets and moved
workbooks are re-solved with scipy's HiGHS (tests/reference.py). The scenarios (the
"Marram Bay" co-op) are invented and the numbers made up for the tests.
"""

from __future__ import annotations

import dataclasses
import json
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import linprog
from typer.testing import CliRunner

from blendkit.cli import app
from blendkit.lp.build import build_lp
from blendkit.lp.diagnose import diagnose
from blendkit.lp.members import form_with, members_of
from blendkit.lp.relax import relaxed_blend
from blendkit.read.workbook import read_workbook
from tests.reference import highs_form
from tests.workbooks import make_workbook

runner = CliRunner()

HEADER = ["Ingredient", "Cost", "Min", "Max", "Crude protein (%)", "Calcium (%)", "Phosphorus (%)", "Stock"]
FEEDS = [
    ["Barley", 180, None, None, 11.0, 0.05, 0.35, None],
    ["Soybean meal", 420, None, 25, 46.0, 0.30, 0.65, None],
    ["Limestone", 60, None, 3, 0.0, 38.0, 0.0, None],
    ["Wheat bran", 150, None, 20, 15.5, 0.10, 1.10, None],
]


def feasible_in_highs(form) -> bool:
    """HiGHS's verdict on the form (objective ignored)."""
    return highs_form(dataclasses.replace(form, c=np.zeros_like(form.c))).status == "optimal"


def check_irreducible(blend, diagnosis):
    """Each reported set is infeasible in HiGHS, and feasible without any one member."""
    lp = build_lp(blend)
    members = members_of(blend, lp)
    for conflict in diagnosis.conflicts:
        chosen = np.array([m in conflict.members for m in members])
        assert not feasible_in_highs(form_with(lp, members, chosen))
        for k in np.flatnonzero(chosen):
            without = chosen.copy()
            without[k] = False
            assert feasible_in_highs(form_with(lp, members, without)), members[k].describe()


def check_moves(blend, diagnosis):
    """Each single move makes the workbook feasible (HiGHS) when it is the only conflict."""
    if len(diagnosis.conflicts) != 1:
        return
    conflict = diagnosis.conflicts[0]
    for member, value in zip(conflict.members, conflict.relax_to):
        if value is None:
            continue
        from blendkit.lp.relax import Change

        moved = relaxed_blend(blend, (Change(member, value),))
        assert feasible_in_highs(build_lp(moved).form), member.describe()
        # A move a little short of it (1e-6 relative; HiGHS keeps rows to 1e-7) is not
        # enough: the move is the least one.
        short = value + 1e-6 * (1 + abs(value)) if member.side == "min" else value - 1e-6 * (1 + abs(value))
        if member.kind != "use" and (member.side == "min") == (value < member.bound):
            moved = relaxed_blend(blend, (Change(member, short),))
            assert not feasible_in_highs(build_lp(moved).form), member.describe()


def diagnosis_of(tmp_path, ingredients, specs, **sheets):
    """Read, build and diagnose a workbook."""
    blend = read_workbook(make_workbook(tmp_path, ingredients, specs, sheets=sheets or None))
    return blend, diagnose(blend, build_lp(blend))


def texts(conflict):
    return {member.describe() for member in conflict.members}


def test_a_spec_against_inclusion_limits(tmp_path):
    # 30 % protein needs more soybean meal than its 25 % cap allows: even with the rest
    # all wheat bran, 0.25*46 + 0.75*15.5 = 23.1 % at most (arithmetic on the table
    # above), so the bran cap is not part of the conflict.
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 30, None]]
    blend, diagnosis = diagnosis_of(tmp_path, [HEADER, *FEEDS], specs)
    assert len(diagnosis.conflicts) == 1 and diagnosis.complete
    conflict = diagnosis.conflicts[0]
    assert texts(conflict) == {
        "total  inclusions sum to 100 %",
        "Specs!B2  Crude protein  min 30",
        "Ingredients!D3  Soybean meal  max 25",
    }
    moves = dict(zip((m.describe() for m in conflict.members), conflict.relax_to))
    # The best protein the limits allow: 25 % soybean meal, 20 % bran, 55 % barley; HiGHS
    # maximising protein under the same limits agrees.
    best = linprog(-np.array([11.0, 46.0, 0.0, 15.5]) / 100, A_eq=[[1, 1, 1, 1]], b_eq=[100],
                   bounds=[(0, None), (0, 25), (0, 3), (0, 20)], method="highs")
    assert -best.fun == pytest.approx(0.25 * 46 + 0.20 * 15.5 + 0.55 * 11.0, rel=1e-12)
    assert moves["Specs!B2  Crude protein  min 30"] == pytest.approx(-best.fun, rel=1e-9)
    check_irreducible(blend, diagnosis)
    check_moves(blend, diagnosis)
    relaxed = diagnosis.relaxed_blend
    assert relaxed is not None and feasible_in_highs(build_lp(relaxed).form)


def test_a_ratio_against_a_spec(tmp_path):
    # Calcium / Phosphorus at most 1.0 while calcium is at least 2 %: limestone (Ca 38) is
    # capped at 3 %, so P would have to reach 2 % -- more than any feed holds.
    specs = [["Nutrient", "Min", "Max"], ["Calcium", 1.2, None], ["Calcium / Phosphorus", None, 1.0]]
    blend, diagnosis = diagnosis_of(tmp_path, [HEADER, *FEEDS], specs)
    assert len(diagnosis.conflicts) == 1
    kinds = {member.kind for member in diagnosis.conflicts[0].members}
    assert {"ratio", "nutrient"} <= kinds
    check_irreducible(blend, diagnosis)
    check_moves(blend, diagnosis)
    ratio = next(m for m in diagnosis.conflicts[0].members if m.kind == "ratio")
    move = diagnosis.conflicts[0].relax_to[diagnosis.conflicts[0].members.index(ratio)]
    assert move is not None and move > 1.0


def test_a_stock_against_product_amounts(tmp_path):
    feeds = [row[:] for row in FEEDS]
    feeds[2][7] = 500  # 500 kg of limestone for 40 t of feed needing >= 2 % of it
    specs = [["Nutrient", "Min", "Max"], ["Calcium", 0.8, None]]
    products = [["Product", "Amount"], ["Layer mash", 30000], ["Pullet mash", 10000]]
    blend, diagnosis = diagnosis_of(tmp_path, [HEADER, *feeds], specs, Products=products)
    # The stock conflicts with either product's calcium spec: sets that overlap in the stock.
    assert len(diagnosis.conflicts) >= 1
    assert not diagnosis.complete or len(diagnosis.conflicts) == 1
    members = diagnosis.conflicts[0].members
    kinds = [member.kind for member in members]
    assert "stock" in kinds
    totals = [m for m in members if m.kind == "total"]
    assert {m.cell for m in totals} <= {"Products!B2", "Products!B3"}
    check_irreducible(blend, diagnosis)
    stock = next(m for m in members if m.kind == "stock")
    move = diagnosis.conflicts[0].relax_to[members.index(stock)]
    assert move is not None and move > 500


def test_two_independent_conflicts_are_both_reported(tmp_path):
    feeds = [row[:] for row in FEEDS]
    feeds[0][5:7] = [0.05, 0.35]
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 30, None], ["Phosphorus", None, 0.1]]
    blend, diagnosis = diagnosis_of(tmp_path, [HEADER, *feeds], specs)
    assert len(diagnosis.conflicts) >= 2 and not diagnosis.complete
    every = set().union(*(texts(c) for c in diagnosis.conflicts))
    assert any("Crude protein" in t for t in every)
    assert any("Phosphorus" in t for t in every)
    check_irreducible(blend, diagnosis)


def test_use_no_takes_part(tmp_path):
    # The only calcium source is switched off.
    feeds = [row[:] for row in FEEDS]
    header = [*HEADER, "Use"]
    feeds = [[*row, "yes"] for row in feeds]
    feeds[2][-1] = "no"
    specs = [["Nutrient", "Min", "Max"], ["Calcium", 1.0, None]]
    blend, diagnosis = diagnosis_of(tmp_path, [header, *feeds], specs)
    members = diagnosis.conflicts[0].members
    use = next(m for m in members if m.kind == "use")
    assert use.cell == "Ingredients!I4"
    check_irreducible(blend, diagnosis)


def test_cli_reports_conflicts_exit_3_and_json(tmp_path):
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 30, None]]
    book = make_workbook(tmp_path, [HEADER, *FEEDS], specs)
    result = runner.invoke(app, ["solve", str(book), "--json"])
    assert result.exit_code == 3
    doc = json.loads(result.stdout)
    assert doc["status"] == "infeasible"
    entry = next(item for item in doc["conflicts"] if item["kind"] == "nutrient")
    assert entry == {
        "kind": "nutrient", "name": "Crude protein", "product": None, "side": "min", "bound": 30.0,
        "cell": "Specs!B2", "relax_to": pytest.approx(0.25 * 46 + 0.20 * 15.5 + 0.55 * 11.0), "conflict": 1,
        "fixes_alone": True, "worked_out": True,
    }
    assert doc["conflicts_cut_short"] is False
    assert doc["relaxation"]["changes"]
    assert doc["relaxation"]["cost"] > 0


def test_diagnosis_of_a_large_blend_is_quick_enough_to_run_in_tests(tmp_path):
    # Not a timing assertion: the benchmark prints times. This checks the result on a
    # 60-ingredient blend with one hidden conflict.
    rng = np.random.default_rng(5)
    header = ["Ingredient", "Cost", "Max", *[f"N{k}" for k in range(20)]]
    rows = [[f"Feed {j}", float(rng.uniform(100, 900)), 30.0, *map(float, rng.uniform(0, 10, 20))] for j in range(60)]
    specs = [["Nutrient", "Min", "Max"], *[[f"N{k}", 2.0, None] for k in range(20)], ["N3", None, None]][:-1]
    specs[4] = ["N3", 9.99, None]  # above what any mix under the caps reaches
    blend, diagnosis = diagnosis_of(tmp_path, [header, *rows], specs)
    assert diagnosis.conflicts
    check_irreducible(blend, diagnosis)


def test_soft_spec_is_broken_at_its_penalty_and_reported(tmp_path):
    # Protein min 30 cannot be met (see above); with a penalty of 5 EUR/t per unit it is
    # missed at that cost instead. Independent elastic LP in HiGHS: minimise
    # cost + 5 * e subject to level + e >= 30.
    from scipy.optimize import linprog

    specs = [["Nutrient", "Min", "Max", "Penalty"], ["Crude protein", 30, None, 5], ["Calcium", 0.5, None, None]]
    book = make_workbook(tmp_path, [HEADER, *FEEDS], specs)
    result = runner.invoke(app, ["solve", str(book), "--json"])
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    cost = np.array([row[1] for row in FEEDS], dtype=float)
    cp = np.array([row[4] for row in FEEDS], dtype=float)
    ca = np.array([row[5] for row in FEEDS], dtype=float)
    c = np.concatenate([cost / 100, [5.0]])
    A_ub = [np.concatenate([-cp / 100, [-1.0]]), np.concatenate([-ca / 100, [0.0]])]
    bounds = [(0, None), (0, 25), (0, 3), (0, 20), (0, None)]
    ref = linprog(c, A_ub=A_ub, b_ub=[-30, -0.5], A_eq=[[1, 1, 1, 1, 0]], b_eq=[100], bounds=bounds, method="highs")
    assert doc["cost"] == pytest.approx(ref.x[:4] @ cost / 100, rel=1e-9)  # the blend's own cost
    (broken,) = doc["violations"]
    assert broken["name"] == "Crude protein" and broken["cell"] == "Specs!B2"
    assert broken["violation"] == pytest.approx(ref.x[4], rel=1e-7)
    assert broken["penalty"] == 5
    assert "Soft spec not met" in doc["notes"][0]


def test_priority_decides_what_gives_way(tmp_path):
    # Protein 30 against the soybean meal cap: with the cap given priority 1 it is the cap
    # that moves in the least-cost relaxation; with priority 9 it is the protein spec.
    def changes(cap_priority):
        header = [*HEADER[:-1]]
        feeds = [row[:-1] for row in FEEDS]
        specs = [["Nutrient", "Min", "Max"], ["Crude protein", 30, None]]
        # The cap as a one-member group, so that it can carry a Priority.
        groups = [["Group", "Ingredients", "Min", "Max", "Priority"], ["Soy cap", "Soybean meal", None, 25, cap_priority]]
        feeds[1][3] = None
        book = make_workbook(tmp_path / str(cap_priority), [header, *feeds], specs, sheets={"Groups": groups})
        doc = json.loads(runner.invoke(app, ["solve", str(book), "--json"]).stdout)
        return {change["kind"] for change in doc["relaxation"]["changes"]}

    (tmp_path / "1").mkdir()
    (tmp_path / "9").mkdir()
    assert changes(1) == {"group"}
    assert changes(9) == {"nutrient"}


def test_overlapping_conflicts_and_which_limit_alone_fixes_everything(tmp_path):
    # The case a user met: the broiler sample with Limestone Use = no and crude protein held
    # to 27-30 %. More than one set conflicts, so the report must not claim completeness,
    # and each member's "dropped alone, fixes all" is checked by HiGHS on the workbook with
    # that one limit cleared (tests/test_examples.py builds the LP from the cells alone).
    import shutil

    import openpyxl

    from tests.test_examples import formulate_with_highs

    path = tmp_path / "lime.xlsx"
    shutil.copyfile(Path(__file__).resolve().parents[1] / "sample_workbooks" / "broiler_starter.xlsx", path)
    book = openpyxl.load_workbook(path)
    book["Ingredients"]["E12"] = "no"  # Limestone
    book["Specs"]["B3"], book["Specs"]["C3"] = 27, 30  # Crude protein
    book.save(path)
    result = CliRunner().invoke(app, ["solve", str(path), "--json", "--no-cross-check"])
    doc = json.loads(result.stdout)
    assert result.exit_code == 3
    assert len({item["conflict"] for item in doc["conflicts"]}) > 1
    assert doc["conflicts_complete"] is False
    checked = set()
    for item in doc["conflicts"]:
        if item["kind"] not in ("nutrient", "ingredient", "use") or item["cell"] in checked or len(checked) == 6:
            continue
        checked.add(item["cell"])
        dropped = openpyxl.load_workbook(path)
        sheet, _, cell = item["cell"].partition("!")
        dropped[sheet][cell] = "yes" if item["kind"] == "use" else None
        copy = tmp_path / f"without-{len(checked)}.xlsx"
        dropped.save(copy)
        feasible = formulate_with_highs(copy).result.status == 0
        assert feasible == item["fixes_alone"], item


class _Clock:
    """A monotonic clock that moves on one second at every reading."""

    def __init__(self):
        self.now = 0.0

    def monotonic(self) -> float:
        self.now += 1.0
        return self.now


def _stock_conflict(tmp_path):
    """The stock workbook of test_a_stock_against_product_amounts."""
    feeds = [row[:] for row in FEEDS]
    feeds[2][7] = 500
    specs = [["Nutrient", "Min", "Max"], ["Calcium", 0.8, None]]
    products = [["Product", "Amount"], ["Layer mash", 30000], ["Pullet mash", 10000]]
    return make_workbook(tmp_path, [HEADER, *feeds], specs, sheets={"Products": products})


def test_a_search_stopped_by_its_time_limit_reports_a_conflicting_set_and_says_so(tmp_path, monkeypatch):
    # An infeasible plant can take minutes per conflict (each check a phase one), so the
    # search has time limits. With a clock that runs fast, the deletion filter stops after
    # one step: the set it reports must still conflict (HiGHS: infeasible), the moves are
    # not worked out, and every output says so; the least-cost way out is still given.
    from blendkit.lp import diagnose as module

    monkeypatch.setattr(module, "time", _Clock())
    monkeypatch.setattr(module, "SEARCH_SECONDS", 2.5)
    monkeypatch.setattr(module, "MOVES_SECONDS", 0.5)
    blend = read_workbook(_stock_conflict(tmp_path))
    diagnosis = diagnose(blend, build_lp(blend))
    assert diagnosis.cut_short and not diagnosis.complete
    lp = build_lp(blend)
    members = members_of(blend, lp)
    reported = diagnosis.conflicts[0]
    chosen = np.array([m in reported.members for m in members])
    assert not feasible_in_highs(form_with(lp, members, chosen))
    # A sum-to-100 row cannot move: it needs no working out; every other member was not reached.
    assert not any(done for m, done in zip(reported.members, reported.worked_out) if m.kind != "total")
    assert not any(reported.fixes_alone)
    assert diagnosis.changes  # the least-cost way out does not depend on the search

    for folder in ("again", "text"):
        (tmp_path / folder).mkdir()
    result = runner.invoke(app, ["solve", str(_stock_conflict(tmp_path / "again")), "--json", "--jobs", "1"])
    doc = json.loads(result.stdout)
    assert doc["conflicts_cut_short"] is True
    assert {entry["worked_out"] for entry in doc["conflicts"] if entry["kind"] != "total"} == {False}
    text = runner.invoke(app, ["solve", str(_stock_conflict(tmp_path / "text")), "--jobs", "1"]).stdout
    assert "not worked out (time limit)" in text and "stopped at its time limit" in text
    import openpyxl

    sheet = openpyxl.load_workbook(tmp_path / "text" / "blend.result.xlsx")["Conflicts"]
    written = {str(cell.value) for row in sheet.iter_rows() for cell in row if cell.value is not None}
    assert "not worked out (time limit)" in written and "not checked" in written
    assert any("stopped at its time limit" in value for value in written)


def test_a_search_within_its_time_limits_is_not_cut_short(tmp_path):
    # The same workbook with the real limits: a minimal set (HiGHS), every move worked out.
    blend = read_workbook(_stock_conflict(tmp_path))
    diagnosis = diagnose(blend, build_lp(blend))
    assert not diagnosis.cut_short
    assert all(all(conflict.worked_out) for conflict in diagnosis.conflicts)
    check_irreducible(blend, diagnosis)


def test_with_one_set_found_no_single_move_is_the_workbook_still_infeasible_without_it(tmp_path, monkeypatch):
    # The stock workbook holds two sets sharing the stock. With the search stopped after
    # the first (as its time limit can), a member whose dropping leaves the other set is
    # "no single move" — told from its fixes-alone check, not solved again. Reference:
    # HiGHS on the workbook without that limit (infeasible exactly where no move is given).
    from blendkit.lp import diagnose as module

    monkeypatch.setattr(module, "_overlapping_conflicts", lambda lp, members, totals, found, deadline: (found, True))
    blend = read_workbook(_stock_conflict(tmp_path))
    diagnosis = diagnose(blend, build_lp(blend))
    assert len(diagnosis.conflicts) == 1
    lp = build_lp(blend)
    members = members_of(blend, lp)
    conflict = diagnosis.conflicts[0]
    moves = []
    for member, relax_to in zip(conflict.members, conflict.relax_to):
        if member.kind == "total":
            continue
        without = np.ones(len(members), dtype=bool)
        without[members.index(member)] = False
        assert (relax_to is None) == (not feasible_in_highs(form_with(lp, members, without))), member.describe()
        moves.append(relax_to)
    assert None in moves and any(move is not None for move in moves)


@pytest.mark.parametrize("groups", [2, 3])
def test_a_filter_in_blocks_still_finds_irreducible_sets(tmp_path, monkeypatch, groups):
    # Large seeds are thinned in blocks (GROUP_FROM, GROUPS); forced on these small
    # workbooks, every set reported must still be irreducible (HiGHS: infeasible, and
    # feasible without any one member) and hold the limits the one-by-one filter names.
    from blendkit.lp import diagnose as module

    monkeypatch.setattr(module, "GROUP_FROM", 0)
    monkeypatch.setattr(module, "GROUPS", groups)
    blend = read_workbook(_stock_conflict(tmp_path))
    diagnosis = diagnose(blend, build_lp(blend))
    assert "stock" in {member.kind for member in diagnosis.conflicts[0].members}
    check_irreducible(blend, diagnosis)
    feeds = [row[:] for row in FEEDS]
    specs = [["Nutrient", "Min", "Max"], ["Crude protein", 30, None], ["Phosphorus", None, 0.1]]
    (tmp_path / "two").mkdir()
    blend, diagnosis = diagnosis_of(tmp_path / "two", [HEADER, *feeds], specs)
    assert len(diagnosis.conflicts) >= 2
    check_irreducible(blend, diagnosis)

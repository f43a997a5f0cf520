"""Tests for sim.scenario: validation messages, SI conversion, files, round trip.

Most tests change one key of a valid scenario and check that the single
problem reported names the dotted key, the value and what is allowed. Numbers
say where they come from; values chosen only to be out of range are marked
"test value". Conversions are exact by definition, so they are compared to
1e-12 relative.
"""

from __future__ import annotations

import math
import re
import tomllib
from pathlib import Path

import pytest
from cases import only_problem, problems_of

from sim.cargo import saturation_table
from sim.scenario import (
    SCHEMA,
    Scenario,
    ScenarioError,
    default_scenario_dict,
    demo_scenarios,
    dumps_scenario,
    load_scenario,
    loads_scenario,
    parse_scenario,
    scenario_to_toml,
    set_key,
)
from sim.units import pa_to_barg

DOCS = Path(__file__).resolve().parent.parent / "docs" / "scenario-format.md"
REL = 1e-12


def full_dict() -> dict:
    """A valid scenario using every table (values: test values, common practice, no source)."""
    d = default_scenario_dict()
    d["leg"] = [
        {"name": "First", "days": 10, "air_c": 25.0, "sea_c": 20.0, "fuel_kg_h": 3600.0},
        {"days": 20.0, "air_c": 30.0, "sea_c": 25.0},
    ]
    d["reliquefaction"] = {
        "capacity_kg_h": 1800.0,
        "hold_barg": 0.12,
        "specific_power_kwh_kg": 0.5,
        "outage": [{"start_day": 5.0, "hours": 24.0}, {"start_day": 2.0, "hours": 36.0}],
    }
    d["oxidiser"] = {"capacity_kg_h": 720.0, "set_barg": 0.2,
                     "outage": [{"start_day": 1.0, "hours": 2.0}]}
    d["fuel"] = {"floor_barg": 0.05, "outage": [{"start_day": 3.0, "hours": 12.0}]}
    return d


def assert_has(text: str, *parts: str) -> None:
    for part in parts:
        assert part in text, f"{part!r} not in {text!r}"


# -- valid input and SI conversion -------------------------------------------


def test_default_scenario_is_valid():
    scenario = parse_scenario(default_scenario_dict())
    assert isinstance(scenario, Scenario)
    assert scenario.cargo == "propane"
    assert scenario.model == "equilibrium"
    assert len(scenario.legs) == 1


def test_si_conversions():
    s = parse_scenario(full_dict())
    # barg is gauge against 1.01325 bar (standard atmosphere, exact by definition)
    assert s.tank.pressure == pytest.approx(111_325.0, rel=REL)  # 0.10 barg
    assert s.tank.relief_set_pressure == pytest.approx(126_325.0, rel=REL)  # 0.25 barg
    assert s.tank.vacuum_pressure == pytest.approx(96_325.0, rel=REL)  # default -0.05 barg
    assert s.tank.fill == pytest.approx(0.97, rel=REL)
    assert s.tank.count == 1
    # 1 day = 86,400 s; degC + 273.15 = K; kg/h / 3600 = kg/s (definitions)
    assert s.legs[0].duration == pytest.approx(864_000.0, rel=REL)
    assert s.legs[0].air_temperature == pytest.approx(298.15, rel=REL)
    assert s.legs[0].sea_temperature == pytest.approx(293.15, rel=REL)
    assert s.legs[0].fuel_demand == pytest.approx(1.0, rel=REL)  # 3600 kg/h
    assert s.legs[1].fuel_demand == 0.0
    assert s.legs[0].name == "First"
    assert s.legs[1].name == "Leg 2"
    assert s.duration == pytest.approx(30 * 86_400.0, rel=REL)
    # insulation: 0.1 %/day -> 0.001 / 86400 per second; rated ambient defaults 45/32 degC
    ins = s.insulation
    assert ins.u_value is None
    assert ins.rated_bor == pytest.approx(0.001 / 86_400.0, rel=REL)
    assert ins.rated_air_temperature == pytest.approx(318.15, rel=REL)
    assert ins.rated_sea_temperature == pytest.approx(305.15, rel=REL)
    assert ins.rated_fill is None
    assert ins.air_exposed_fraction == 1.0
    # plant: 1800 kg/h = 0.5 kg/s; 0.5 kWh/kg = 1.8e6 J/kg (1 kWh = 3.6 MJ)
    rl = s.reliquefaction
    assert rl.capacity == pytest.approx(0.5, rel=REL)
    assert rl.hold_pressure == pytest.approx(113_325.0, rel=REL)  # 0.12 barg
    assert rl.specific_power == pytest.approx(1.8e6, rel=REL)
    # outages sorted by start; 2 days = 172,800 s, 36 h = 129,600 s
    assert [o.start for o in rl.outages] == [172_800.0, 432_000.0]
    assert rl.outages[0].duration == pytest.approx(129_600.0, rel=REL)
    assert s.oxidiser.capacity == pytest.approx(0.2, rel=REL)  # 720 kg/h
    assert s.oxidiser.set_pressure == pytest.approx(121_325.0, rel=REL)  # 0.20 barg
    assert s.oxidiser.outages[0].duration == pytest.approx(7_200.0, rel=REL)
    assert s.fuel_floor_pressure == pytest.approx(106_325.0, rel=REL)  # 0.05 barg
    assert s.fuel_outages[0].start == pytest.approx(259_200.0, rel=REL)


def test_u_value_and_optional_rating_keys():
    d = set_key(default_scenario_dict(), "insulation", {"u_w_m2k": 0.04, "air_exposed_pct": 60})
    ins = parse_scenario(d).insulation
    assert ins.u_value == 0.04
    assert ins.rated_bor is None
    assert ins.air_exposed_fraction == pytest.approx(0.6, rel=REL)
    d = set_key(default_scenario_dict(), "insulation",
                {"rated_bor_pct_day": 0.2, "rated_air_c": 40, "rated_sea_c": 30,
                 "rated_fill_pct": 50})
    ins = parse_scenario(d).insulation
    assert ins.rated_air_temperature == pytest.approx(313.15, rel=REL)
    assert ins.rated_sea_temperature == pytest.approx(303.15, rel=REL)
    assert ins.rated_fill == pytest.approx(0.5, rel=REL)


def test_fuel_floor_defaults_to_initial_pressure():
    s = parse_scenario(default_scenario_dict())
    assert s.fuel_floor_pressure == s.tank.pressure
    assert s.fuel_outages == ()
    assert s.reliquefaction is None and s.oxidiser is None


def test_int_accepted_for_float_and_shape_built():
    d = default_scenario_dict()
    d["tank"].update(length_m=30, width_m=25, height_m=20, fill_pct=97, pressure_barg=0)
    s = parse_scenario(d)
    # 30 x 25 x 20 m box (test value): 15,000 m3
    assert s.tank.shape.volume() == pytest.approx(15_000.0, rel=1e-9)


def test_horizontal_cylinder_heads_passed_on():
    d = default_scenario_dict()
    d["tank"] = {"shape": "horizontal-cylinder", "diameter_m": 4.0, "length_m": 20.0,
                 "heads": "flat", "fill_pct": 90.0, "pressure_barg": 0.1,
                 "relief_set_barg": 0.25}
    s = parse_scenario(d)
    # flat heads: plain cylinder pi r^2 L (test values)
    assert s.tank.shape.volume() == pytest.approx(math.pi * 4.0 * 20.0, rel=1e-9)


def test_raw_is_a_deep_copy():
    d = full_dict()
    s = parse_scenario(d)
    assert s.raw == d
    d["leg"][0]["days"] = 99
    assert s.raw["leg"][0]["days"] == 10


# -- unknown keys and tables ----------------------------------------------------


@pytest.mark.parametrize(
    "table, key, expected",
    [
        ("tank", "pressure_bar", ["unknown key tank.pressure_bar", "did you mean pressure_barg?",
                                  "gauge pressure in bar"]),
        ("tank", "relief_set_bara", ["tank.relief_set_bara", "did you mean relief_set_barg?"]),
        ("tank", "diameter", ["tank.diameter", "did you mean diameter_m?"]),
        ("leg.0", "air_k", ["unknown key leg[1].air_k", "did you mean air_c?", "degC"]),
        ("leg.0", "fuel_t_h", ["leg[1].fuel_t_h", "did you mean fuel_kg_h?", "kg/h"]),
        ("leg.0", "duration_days", ["leg[1].duration_days", "did you mean days?"]),
        ("insulation", "u_value", ["insulation.u_value", "did you mean u_w_m2k?"]),
        ("insulation", "fill_pct", ["insulation.fill_pct", "it belongs in [tank]"]),
        ("cargo", "colour", ["unknown key cargo.colour", "allowed: fluid"]),
    ],
)
def test_unknown_key_suggestions(table, key, expected):
    d = set_key(default_scenario_dict(), f"{table}.{key}", 1.0)
    assert_has(only_problem(d), *expected)


def test_unknown_top_level_tables_and_keys():
    d = default_scenario_dict()
    d["reliq"] = {"capacity_kg_h": 1.0}
    d["legs"] = [{"days": 1.0}]
    d["fluid"] = "propane"
    d["colour"] = "red"
    problems = problems_of(d)
    assert len(problems) == 4, problems
    text = "\n".join(problems)
    assert_has(text, "unknown table [reliq] (did you mean reliquefaction?",
               "unknown table [[legs]] (did you mean leg?",
               "unknown key fluid (it belongs in [cargo]",
               "unknown key colour")


# -- numbers: ranges and types ------------------------------------------------------


@pytest.mark.parametrize(
    "key, value, expected",
    [
        ("tank.fill_pct", 120,
         "tank.fill_pct = 120: must be above 0 and below 100 (percent of tank volume)"),
        ("tank.fill_pct", 0, "tank.fill_pct = 0: must be above 0 and below 100"),
        ("tank.fill_pct", 100.0, "tank.fill_pct = 100.0: must be above 0 and below 100"),
        ("tank.count", 0, "tank.count = 0: must be a whole number, at least 1"),
        ("tank.length_m", -3.0, "tank.length_m = -3.0: must be a number above 0 (metres)"),
        ("tank.pressure_barg", -1.5,
         "tank.pressure_barg = -1.5: must be a number above -1.01325 (barg"),
        ("leg.0.days", 0, "leg[1].days = 0: must be a number above 0 (days)"),
        ("leg.0.air_c", 75.0, "leg[1].air_c = 75.0: must be between -60 and 60 (degC)"),
        ("leg.0.sea_c", -5, "leg[1].sea_c = -5: must be between -2 and 40 (degC)"),
        ("leg.0.fuel_kg_h", -1, "leg[1].fuel_kg_h = -1: must be a number at or above 0 (kg/h"),
        ("insulation.rated_bor_pct_day", 0,
         "insulation.rated_bor_pct_day = 0: must be above 0 and below 100 (percent per day)"),
        ("insulation.air_exposed_pct", 101,
         "insulation.air_exposed_pct = 101: must be between 0 and 100"),
        ("insulation.rated_air_c", 61, "insulation.rated_air_c = 61: must be between -60 and 60"),
    ],
)
def test_out_of_range(key, value, expected):
    assert_has(only_problem(set_key(default_scenario_dict(), key, value)), expected)


def test_second_leg_is_named_leg_2():
    d = default_scenario_dict()
    d["leg"].append({"days": -1, "air_c": 20.0, "sea_c": 15.0})
    assert_has(only_problem(d), "leg[2].days = -1: must be a number above 0 (days)")


@pytest.mark.parametrize(
    "value, expected",
    [
        (True, ["tank.fill_pct = true", "must be a number, not true/false",
                "above 0 and below 100 (percent of tank volume)"]),
        ("98", ['tank.fill_pct = "98"', "not a string", "write 98 without quotes",
                "above 0 and below 100"]),
        ("full", ['tank.fill_pct = "full"', "not a string", "above 0 and below 100"]),
        (float("nan"), ["tank.fill_pct = nan", "must be a finite number", "above 0"]),
        (float("inf"), ["tank.fill_pct = inf", "must be a finite number"]),
        ([98.0], ["tank.fill_pct = [98.0]", "not an array"]),
        ({"v": 98}, ["tank.fill_pct = {v = 98}", "not a table"]),
        (None, ["tank.fill_pct = None", "must be a number"]),
        (10**400, ["tank.fill_pct = 1000", "must be a finite number"]),
    ],
)
def test_wrong_type_for_a_number(value, expected):
    assert_has(only_problem(set_key(default_scenario_dict(), "tank.fill_pct", value)), *expected)


@pytest.mark.parametrize(
    "value, expected",
    [
        (2.0, "tank.count = 2.0: must be a whole number, at least 1 (identical tanks), "
              "not a decimal number (write 2)"),
        (True, "tank.count = true: must be a whole number"),
        ("2", 'tank.count = "2": must be a whole number'),
    ],
)
def test_count_must_be_whole(value, expected):
    assert_has(only_problem(set_key(default_scenario_dict(), "tank.count", value)), expected)


@pytest.mark.parametrize(
    "key, value, expected",
    [
        ("title", 5, "title = 5: must be a string in quotes, not a number"),
        ("title", "  ", 'title = "  ": must not be empty'),
        ("leg.0.name", 3, "leg[1].name = 3: must be a string"),
        ("model", "foo", 'model = "foo": unknown model; allowed: equilibrium'),
        ("model", 1, "model = 1: must be a model name in quotes"),
        ("cargo.fluid", "butadiene",
         'cargo.fluid = "butadiene": unknown cargo; allowed: methane, ethane'),
        ("cargo.fluid", "Propane", 'cargo.fluid = "Propane": unknown cargo (did you mean '
                                   '"propane"?)'),
        ("tank.shape", "cube", 'tank.shape = "cube": unknown shape; allowed: sphere'),
    ],
)
def test_strings_and_names(key, value, expected):
    assert_has(only_problem(set_key(default_scenario_dict(), key, value)), expected)


# -- required keys and structure --------------------------------------------------


@pytest.mark.parametrize(
    "remove, expected",
    [
        ("title", "title is required"),
        ("cargo", "cargo: the [cargo] table is required"),
        ("tank", "tank: the [tank] table is required"),
        ("insulation", "insulation: the [insulation] table is required"),
        ("leg", "leg: at least one [[leg]] is required"),
    ],
)
def test_missing_required_top_level(remove, expected):
    d = default_scenario_dict()
    del d[remove]
    assert_has(only_problem(d), expected)


@pytest.mark.parametrize(
    "table, key, expected",
    [
        ("cargo", "fluid", "cargo.fluid is required"),
        ("tank", "shape", "tank.shape is required"),
        ("tank", "fill_pct", "tank.fill_pct is required: initial liquid volume"),
        ("tank", "pressure_barg", "tank.pressure_barg is required"),
        ("tank", "relief_set_barg", "tank.relief_set_barg is required"),
    ],
)
def test_missing_required_keys(table, key, expected):
    d = default_scenario_dict()
    del d[table][key]
    assert_has(only_problem(d), expected)


def test_missing_leg_keys():
    d = set_key(default_scenario_dict(), "leg.0", {"name": "Empty"})
    text = "\n".join(problems_of(d))
    assert_has(text, "leg[1].days is required", "leg[1].air_c is required",
               "leg[1].sea_c is required")


def test_empty_leg_list_and_leg_as_single_table():
    d = set_key(default_scenario_dict(), "leg", [])
    assert_has(only_problem(d), "leg: at least one [[leg]] is required")
    d = set_key(default_scenario_dict(), "leg", {"days": 1.0, "air_c": 1.0, "sea_c": 1.0})
    assert_has(only_problem(d), "write each one as [[leg]], not [leg]")
    d = set_key(default_scenario_dict(), "leg", [5])
    assert_has(only_problem(d), "leg[1] = 5: must be a table")


def test_list_or_value_where_a_table_is_expected():
    d = set_key(default_scenario_dict(), "tank", [1, 2])
    assert_has(only_problem(d), "tank = [1, 2]: must be a table [tank], not an array")
    d = set_key(default_scenario_dict(), "insulation", [{"u_w_m2k": 0.1}])
    assert_has(only_problem(d), "insulation must be a single [insulation] table")
    d = set_key(default_scenario_dict(), "cargo", "propane")
    assert_has(only_problem(d), 'cargo = "propane": must be a table [cargo], not a string')


def test_not_a_dict_at_all():
    with pytest.raises(ScenarioError, match="a scenario must be a table of keys, not an array"):
        parse_scenario([1, 2])


def test_all_problems_reported_at_once():
    d = default_scenario_dict()
    d["tank"]["fill_pct"] = 120
    d["tank"]["pressure_bar"] = 1
    d["leg"][0]["days"] = -1
    d["cargo"]["fluid"] = "water"
    with pytest.raises(ScenarioError) as info:
        parse_scenario(d, "mine.toml")
    err = info.value
    assert len(err.problems) == 4, err.problems
    assert err.source == "mine.toml"
    assert str(err).startswith("mine.toml: 4 problems:")


# -- insulation --------------------------------------------------------------


def test_insulation_both_or_neither():
    d = set_key(default_scenario_dict(), "insulation.u_w_m2k", 0.05)
    assert_has(only_problem(d),
               "insulation: give either u_w_m2k or rated_bor_pct_day, not both")
    d = set_key(default_scenario_dict(), "insulation", {"air_exposed_pct": 50})
    assert_has(only_problem(d), "insulation: one of u_w_m2k", "rated_bor_pct_day",
               "is required")


def test_rating_keys_rejected_with_u_value():
    d = set_key(default_scenario_dict(), "insulation", {"u_w_m2k": 0.05, "rated_sea_c": 30})
    assert_has(only_problem(d), "insulation.rated_sea_c is not used with u_w_m2k")


# -- tank shape -------------------------------------------------------------------


def test_shape_missing_and_unused_dimensions():
    d = default_scenario_dict()
    d["tank"]["shape"] = "sphere"
    problems = problems_of(d)
    text = "\n".join(problems)
    assert_has(text, 'tank: shape "sphere" needs diameter_m',
               'tank.length_m is not used by shape "sphere"',
               'tank.width_m is not used by shape "sphere"',
               'tank.height_m is not used by shape "sphere"')


def test_heads_only_for_horizontal_cylinder():
    d = set_key(default_scenario_dict(), "tank.heads", "flat")
    assert_has(only_problem(d), 'tank.heads is not used by shape "prismatic"')
    d = default_scenario_dict()
    d["tank"] = {"shape": "horizontal-cylinder", "diameter_m": 4.0, "length_m": 20.0,
                 "heads": "round", "fill_pct": 90.0, "pressure_barg": 0.1,
                 "relief_set_barg": 0.25}
    assert_has(only_problem(d), 'tank.heads = "round": unknown head shape; allowed: '
                                "hemispherical, flat")


def test_geometry_messages_passed_through():
    # hemispherical heads need length >= diameter (geometry contract)
    d = default_scenario_dict()
    d["tank"] = {"shape": "horizontal-cylinder", "diameter_m": 10.0, "length_m": 5.0,
                 "fill_pct": 90.0, "pressure_barg": 0.1, "relief_set_barg": 0.25}
    assert_has(only_problem(d), "tank.length_m", "5.0", "tank.diameter_m")
    # bilobe width must lie between the diameter and twice the diameter
    d["tank"] = {"shape": "bilobe", "diameter_m": 10.0, "length_m": 30.0, "width_m": 25.0,
                 "fill_pct": 90.0, "pressure_barg": 0.1, "relief_set_barg": 0.25}
    assert_has(only_problem(d), "tank.width_m", "25.0")


# -- pressures against the cargo and each other ----------------------------------


def test_relief_below_initial_pressure():
    d = default_scenario_dict()
    d["tank"].update(pressure_barg=0.2, relief_set_barg=0.1)
    assert_has(only_problem(d),
               "tank.relief_set_barg = 0.1 is below tank.pressure_barg = 0.2: the relief set "
               "pressure must be at or above the initial pressure")


def test_above_critical_point():
    table = saturation_table("propane")
    highest = f"{math.floor(pa_to_barg(table.pressure_max) * 100) / 100:.2f}"
    d = default_scenario_dict()
    d["tank"].update(pressure_barg=50, relief_set_barg=60)
    problems = problems_of(d)
    assert len(problems) == 2, problems
    # propane critical point 369.89 K (96.7 degC), 4.2512 MPa: NIST, from memory
    assert_has(problems[0], "tank.pressure_barg = 50: propane has no liquid above its critical "
                            "point (96.7 degC, 42.5 bar abs); the highest usable pressure is "
                            f"{highest} barg")
    assert_has(problems[1], "tank.relief_set_barg = 60: propane has no liquid above")


def test_co2_below_triple_point():
    d = default_scenario_dict()
    d["cargo"]["fluid"] = "carbon-dioxide"
    d["tank"].update(pressure_barg=3.0, relief_set_barg=9.0)
    # CO2 triple point 0.51796 MPa (5.18 bar abs = 4.17 barg), 216.59 K (-56.6 degC):
    # NIST, from memory
    assert_has(only_problem(d), "tank.pressure_barg = 3.0: carbon dioxide has no liquid below "
                                "the triple point (5.18 bar abs, -56.6 degC): solid CO2 would "
                                "form; the lowest usable pressure is 4.17 barg")


def test_below_lowest_table_pressure_deep_vacuum():
    d = set_key(default_scenario_dict(), "tank.pressure_barg", -1.0)
    d["tank"]["vacuum_barg"] = -1.01
    # -1.0 barg = 1.3 kPa abs, below the 2 kPa floor of the tables (sim.cargo)
    assert_has(only_problem(d), "tank.pressure_barg = -1.0: below the lowest pressure covered "
                                "for propane", "deep vacuum", "the lowest usable pressure is")


def test_vacuum_level_must_be_below_initial_pressure():
    d = set_key(default_scenario_dict(), "tank.vacuum_barg", 0.2)
    assert_has(only_problem(d), "tank.vacuum_barg = 0.2 must be below tank.pressure_barg = 0.1")
    d = set_key(default_scenario_dict(), "tank.pressure_barg", -0.1)
    assert_has(only_problem(d), "tank.vacuum_barg = -0.05 (the default) must be below "
                                "tank.pressure_barg = -0.1")


@pytest.mark.parametrize(
    "key, value, expected",
    [
        ("reliquefaction.hold_barg", 0.3,
         "reliquefaction.hold_barg = 0.3 must be below tank.relief_set_barg = 0.25"),
        ("reliquefaction.hold_barg", 0.25,
         "reliquefaction.hold_barg = 0.25 must be below tank.relief_set_barg = 0.25"),
        ("reliquefaction.hold_barg", 45.0,
         "reliquefaction.hold_barg = 45.0: propane has no liquid above its critical point"),
        ("oxidiser.set_barg", 0.3, "oxidiser.set_barg = 0.3 must be below "
                                   "tank.relief_set_barg = 0.25"),
        ("fuel.floor_barg", 0.26, "fuel.floor_barg = 0.26 must be below "
                                  "tank.relief_set_barg = 0.25"),
        ("reliquefaction.capacity_kg_h", -5.0,
         "reliquefaction.capacity_kg_h = -5.0: must be a number at or above 0"),
        ("reliquefaction.specific_power_kwh_kg", "0.6",
         'reliquefaction.specific_power_kwh_kg = "0.6": must be a number, not a string'),
        ("oxidiser.capacity_kg_h", False, "oxidiser.capacity_kg_h = false: must be a number"),
    ],
)
def test_control_settings(key, value, expected):
    assert_has(only_problem(set_key(full_dict(), key, value)), expected)


def test_plant_tables_need_their_keys():
    d = set_key(default_scenario_dict(), "reliquefaction", {})
    text = "\n".join(problems_of(d))
    assert_has(text, "reliquefaction.capacity_kg_h is required",
               "reliquefaction.hold_barg is required")
    d = set_key(default_scenario_dict(), "oxidiser.capacity_kg_h", 100.0)
    assert_has(only_problem(d), "oxidiser.set_barg is required")


# -- outages -------------------------------------------------------------------------


def test_outage_after_voyage_end():
    # full_dict voyage: 10 + 20 = 30 days
    d = set_key(full_dict(), "reliquefaction.outage.0.start_day", 40)
    assert_has(only_problem(d),
               "reliquefaction.outage[1].start_day = 40 is after the voyage end (30 days)")
    d = set_key(full_dict(), "fuel.outage.0.start_day", 30)
    assert_has(only_problem(d), "fuel.outage[1].start_day = 30 is at the voyage end (30 days)")


@pytest.mark.parametrize(
    "key, value, expected",
    [
        ("reliquefaction.outage.1.hours", 0, "reliquefaction.outage[2].hours = 0: must be a "
                                             "number above 0 (hours)"),
        ("reliquefaction.outage.0.start_day", -1,
         "reliquefaction.outage[1].start_day = -1: must be a number at or above 0"),
        ("reliquefaction.outage.0", 5, "reliquefaction.outage[1] = 5: must be a table"),
        ("reliquefaction.outage", {"start_day": 1.0, "hours": 1.0},
         "write each one as [[reliquefaction.outage]]"),
        ("oxidiser.outage.0.hours", "2", 'oxidiser.outage[1].hours = "2": must be a number'),
        ("reliquefaction.outage.0.start", 1.0,
         "unknown key reliquefaction.outage[1].start (did you mean start_day?"),
    ],
)
def test_outage_problems(key, value, expected):
    assert_has("\n".join(problems_of(set_key(full_dict(), key, value))), expected)


# -- robustness: bad input never raises anything but ScenarioError ---------------

_NASTY = [None, True, "x", "", [], [1], {}, {"a": 1}, float("nan"), -float("inf"), -1e300,
          1e300, 10**400, 0, -1]


def _leaf_keys(data, prefix=""):
    if isinstance(data, dict):
        for k, v in data.items():
            yield from _leaf_keys(v, f"{prefix}{k}.")
    elif isinstance(data, list):
        for i, v in enumerate(data):
            yield from _leaf_keys(v, f"{prefix}{i}.")
    yield prefix.rstrip(".")


def test_nasty_values_give_scenario_error_only():
    base = full_dict()
    keys = [k for k in _leaf_keys(base) if k]
    for key in keys:
        for value in _NASTY:
            try:
                parse_scenario(set_key(base, key, value))
            except ScenarioError as err:
                assert err.problems and all(isinstance(p, str) and p for p in err.problems)


def test_non_string_keys_reported():
    d = default_scenario_dict()
    d["tank"][7] = 1.0
    assert_has(only_problem(d), "unknown key tank.7")


# -- files and text ---------------------------------------------------------------------


def test_load_file_and_text(tmp_path):
    text = scenario_to_toml(default_scenario_dict())
    path = tmp_path / "s.toml"
    path.write_text(text, encoding="utf-8")
    assert load_scenario(path) == loads_scenario(text) == parse_scenario(default_scenario_dict())
    assert load_scenario(str(path)).title == "New scenario: refrigerated propane"


def test_file_not_found(tmp_path):
    path = tmp_path / "nowhere.toml"
    with pytest.raises(ScenarioError) as info:
        load_scenario(path)
    assert str(path) in str(info.value)
    assert "file not found" in str(info.value)


def test_folder_and_binary_file(tmp_path):
    with pytest.raises(ScenarioError, match="is a folder"):
        load_scenario(tmp_path)
    path = tmp_path / "bad.toml"
    path.write_bytes(b"title = \"\xff\xfe\"\n")
    with pytest.raises(ScenarioError, match="not UTF-8"):
        load_scenario(path)


def test_toml_syntax_error_has_line_and_column(tmp_path):
    path = tmp_path / "broken.toml"
    path.write_text('title = "x"\n[tank]\nfill_pct = = 98\n', encoding="utf-8")
    with pytest.raises(ScenarioError) as info:
        load_scenario(path)
    text = str(info.value)
    assert text.startswith(str(path))
    assert "TOML syntax error" in text
    assert re.search(r"line 3, column \d+", text), text


def test_loads_reports_validation_problems_with_source():
    text = scenario_to_toml(set_key(default_scenario_dict(), "tank.fill_pct", 120))
    with pytest.raises(ScenarioError) as info:
        loads_scenario(text, source="pasted")
    assert str(info.value).startswith("pasted: tank.fill_pct = 120")


# -- round trip, demos, helpers -------------------------------------------------------


def test_round_trip_and_header():
    for d in (default_scenario_dict(), full_dict()):
        text = scenario_to_toml(d)
        assert tomllib.loads(text) == d
        assert dumps_scenario(d) == text
        assert text.startswith("# ")
        assert "IGC Code" in text.split("\n\n")[0]
        assert parse_scenario(tomllib.loads(text)) == parse_scenario(d)


def test_toml_keys_in_document_order():
    d = default_scenario_dict()
    reordered = {"leg": d["leg"], "insulation": d["insulation"], "tank": d["tank"],
                 "cargo": d["cargo"], "model": d["model"], "title": d["title"]}
    text = scenario_to_toml(reordered)
    assert text.index("title =") < text.index("[cargo]") < text.index("[tank]") \
        < text.index("[insulation]") < text.index("[[leg]]")


def test_unwritable_value():
    with pytest.raises(ScenarioError, match="cannot write as TOML"):
        scenario_to_toml({"title": None})


EXPECTED_DEMOS = {
    "ammonia-reliquefaction", "co2-near-triple", "ethylene-bilobe", "lh2-sphere",
    "lng-membrane-fuel-reliq-trip", "lpg-refrigerated-laden", "propane-type-c-no-control",
}


def test_demo_scenarios_all_valid_and_round_trip():
    demos = demo_scenarios()
    assert EXPECTED_DEMOS <= set(demos)
    assert list(demos) == sorted(demos)
    for name, path in demos.items():
        scenario = load_scenario(path)
        assert scenario.title
        data = tomllib.loads(path.read_text(encoding="utf-8"))
        assert scenario.raw == data
        assert tomllib.loads(scenario_to_toml(data)) == data, name


def test_demo_settings():
    demos = demo_scenarios()
    lng = load_scenario(demos["lng-membrane-fuel-reliq-trip"])
    assert lng.cargo == "methane" and lng.tank.count == 4
    assert lng.reliquefaction.outages[0].start == pytest.approx(6 * 86_400.0, rel=REL)
    assert lng.reliquefaction.outages[0].duration == pytest.approx(36 * 3_600.0, rel=REL)
    assert lng.oxidiser is not None
    assert any(leg.fuel_demand > 0 for leg in lng.legs)
    co2 = load_scenario(demos["co2-near-triple"])
    # the low-pressure warning sits above the CO2 triple point (0.51796 MPa, from memory)
    assert co2.tank.vacuum_pressure > 0.51796e6
    no_control = load_scenario(demos["propane-type-c-no-control"])
    assert no_control.reliquefaction is None and no_control.oxidiser is None
    assert load_scenario(demos["lh2-sphere"]).cargo == "parahydrogen"
    assert load_scenario(demos["ethylene-bilobe"]).tank.shape.name == "bilobe"


def test_set_key():
    d = full_dict()
    out = set_key(d, "tank.fill_pct", 95.0)
    assert out["tank"]["fill_pct"] == 95.0 and d["tank"]["fill_pct"] == 97.0
    assert set_key(d, "leg.0.days", 3.0)["leg"][0]["days"] == 3.0
    assert set_key(d, "leg.-1.air_c", 33.0)["leg"][1]["air_c"] == 33.0
    assert set_key(d, "reliquefaction.outage.1.hours", 1.0)["reliquefaction"]["outage"][1] == \
        {"start_day": 2.0, "hours": 1.0}
    made = set_key(default_scenario_dict(), "oxidiser.capacity_kg_h", 10.0)
    assert made["oxidiser"] == {"capacity_kg_h": 10.0}
    assert set_key(d, "model", "equilibrium")["model"] == "equilibrium"
    assert parse_scenario(set_key(d, "leg.1.days", 5)).duration == \
        pytest.approx(15 * 86_400.0, rel=REL)
    for bad in ("leg.5.days", "leg.x.days", "tank.fill_pct.x", "", "tank..fill_pct"):
        with pytest.raises(ScenarioError):
            set_key(d, bad, 1.0)
    # an index into an array that is not there is out of range, not a table keyed "0"
    with pytest.raises(ScenarioError, match=r"no reliquefaction.outage array"):
        set_key(default_scenario_dict(), "reliquefaction.outage.0.hours", 48.0)


def test_docs_cover_every_key_and_example_parses():
    text = DOCS.read_text(encoding="utf-8")
    for table, keys in SCHEMA.items():
        for key in keys:
            assert f"`{key}`" in text, f"{table}.{key} not documented"
        if table:
            label = f"[[{table}]]" if table == "leg" or table.endswith(".outage") else f"[{table}]"
            assert label in text, label
    example = text.split("## Full example", 1)[1].split("```toml", 1)[1].split("```", 1)[0]
    scenario = loads_scenario(example, "docs example")
    assert scenario.oxidiser.outages and scenario.fuel_outages

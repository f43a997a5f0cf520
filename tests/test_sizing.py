"""Sizing tools: reliquefaction plant, holding time, IGC loading-limit table.

References are computed here independently: CoolProp (HEOS) called directly
for properties, the sphere area pi*D^2 by hand, and the voyage engine run on
scenarios built by a different route. Nothing compares against a number our
own code printed earlier.
"""

from __future__ import annotations

import copy
import json
import math

import pytest

from sim import CAUTION, sizing
from sim.cli import main
from sim.scenario import demo_scenarios, load_scenario, parse_scenario
from sim.units import P_ATM
from sim.voyage import simulate
from sim.whatif import fail_control

#: A test ship of our own (invented): two 12 m propane spheres with a plant.
SPHERES = {
    "title": "Test: two propane spheres",
    "cargo": {"fluid": "propane"},
    "tank": {"shape": "sphere", "diameter_m": 12.0, "count": 2, "fill_pct": 60.0,
             "pressure_barg": 0.1, "relief_set_barg": 2.0},
    "insulation": {"u_w_m2k": 0.4, "air_exposed_pct": 70.0},
    "leg": [
        {"name": "A", "days": 6.0, "air_c": 25.0, "sea_c": 20.0, "fuel_kg_h": 300.0},
        {"name": "B", "days": 4.0, "air_c": 30.0, "sea_c": 28.0, "fuel_kg_h": 200.0},
    ],
    "reliquefaction": {"capacity_kg_h": 500.0, "hold_barg": 0.3, "specific_power_kwh_kg": 0.5},
}


def propsi(output, name1, value1, name2, value2, fluid="Propane"):
    """CoolProp (HEOS) straight, no tables."""
    from CoolProp.CoolProp import PropsSI

    return PropsSI(output, name1, value1, name2, value2, fluid)


def independent_steady_kg_h(data, hold_barg, air_c=45.0, sea_c=32.0):
    """Q / h_fg for the SPHERES ship, whole ship [kg/h], from CoolProp and hand geometry."""
    p = hold_barg * 1e5 + P_ATM
    t_hold = propsi("T", "P", p, "Q", 0)
    h_fg = propsi("H", "P", p, "Q", 1) - propsi("H", "P", p, "Q", 0)
    area = math.pi * data["tank"]["diameter_m"] ** 2  # sphere surface, by hand
    f_air = data["insulation"]["air_exposed_pct"] / 100.0
    u = data["insulation"]["u_w_m2k"]
    heat = u * area * (f_air * (air_c + 273.15 - t_hold) + (1 - f_air) * (sea_c + 273.15 - t_hold))
    return data["tank"]["count"] * heat / h_fg * 3600.0, heat, h_fg, p


# ---------------------------------------------------------------------------
# Steady capacity: the first law
# ---------------------------------------------------------------------------


@pytest.fixture(scope="module")
def spheres_sizing():
    return sizing.size_plant(SPHERES, curves=False)


def test_steady_capacity_is_heat_over_latent_heat(spheres_sizing):
    s = spheres_sizing.summary
    expected, heat, h_fg, _ = independent_steady_kg_h(SPHERES, 0.3)
    # the engine's saturation tables stay within 0.1 % of CoolProp (tests/test_cargo.py)
    assert s["steady_boil_off_kg_h"] == pytest.approx(expected, rel=1e-3)
    assert s["min_capacity_kg_h"] == pytest.approx(expected, rel=1e-3)  # no fuel credit by default
    # refrigeration duty = capacity * h_fg = Q (whole ship), margin 0
    assert s["refrigeration_kw"] == pytest.approx(2 * heat / 1000.0, rel=1e-3)
    # power at the scenario's 0.5 kWh/kg
    assert s["power_kw"] == pytest.approx(0.5 * s["design_capacity_kg_h"], rel=1e-12)
    assert s["design_air_c"] == 45.0 and s["design_sea_c"] == 32.0  # IGC, recalled, not quoted
    assert s["caution"] == CAUTION


def test_found_capacity_holds_and_one_percent_less_does_not(spheres_sizing):
    s = spheres_sizing.summary
    capacity = s["min_capacity_kg_h"]
    expected, *_ = independent_steady_kg_h(SPHERES, 0.3)
    u = s["u_value_w_m2k"]

    def run(cap):
        d = sizing.steady_hold_dict(SPHERES, u_w_m2k=u, capacity_kg_h=cap, hold_barg=0.3,
                                    air_c=45.0, sea_c=32.0, days=10.0)
        return simulate(parse_scenario(d))

    held = run(capacity)
    ts = held.timeseries
    # the plant's throughput equals the steady boil-off (first law) within 1 %
    assert ts["reliquefied_kg_h"].iloc[1:].mean() == pytest.approx(expected, rel=0.01)
    # and the pressure stays at the hold pressure (solver noise is ~1e-9 bar)
    assert held.summary["max_pressure_barg"] == pytest.approx(0.3, abs=1e-5)
    assert held.summary["final_pressure_barg"] == pytest.approx(0.3, abs=1e-5)

    short = run(0.99 * capacity)
    # 1 % of ~27 kW missing for 10 days warms ~580 t of propane by ~0.2 K: ~0.02 bar
    # (hand estimate, cp about 2.3 kJ/(kg K) from memory); 1e-3 bar is well above noise
    assert short.summary["final_pressure_barg"] > 0.3 + 1e-3
    assert short.summary["time_to_relief_h"] is None


def test_fuel_credit_derivation_holds_in_the_engine():
    s = sizing.size_plant(SPHERES, fuel_credit=True, curves=False).summary
    p = 0.3 * 1e5 + P_ATM
    rho_v, rho_l = propsi("D", "P", p, "Q", 1), propsi("D", "P", p, "Q", 0)
    steady, *_ = independent_steady_kg_h(SPHERES, 0.3)
    lowest_fuel = 200.0  # the smaller of the two legs' fuel_kg_h
    credit = lowest_fuel / (1.0 - rho_v / rho_l)  # vented-boil-off relation, derived in sizing
    assert s["fuel_credited_kg_h"] == pytest.approx(lowest_fuel, rel=1e-12)
    assert s["min_capacity_kg_h"] == pytest.approx(steady - credit, rel=1e-3)

    # In the engine: engines at 200 kg/h plus the credited plant hold the pressure ...
    d = sizing.steady_hold_dict(SPHERES, u_w_m2k=0.4, capacity_kg_h=s["min_capacity_kg_h"],
                                hold_barg=0.3, air_c=45.0, sea_c=32.0, days=10.0)
    d["leg"][0]["fuel_kg_h"] = lowest_fuel
    held = simulate(parse_scenario(d))
    assert held.summary["max_pressure_barg"] == pytest.approx(0.3, abs=1e-5)
    # ... and 1 % less plant does not
    d["reliquefaction"]["capacity_kg_h"] *= 0.99
    assert simulate(parse_scenario(d)).summary["final_pressure_barg"] > 0.3 + 1e-3


def test_no_fuel_credit_when_engines_do_not_draw_at_the_hold_pressure():
    data = copy.deepcopy(SPHERES)
    data["fuel"] = {"floor_barg": 0.5}
    data["tank"]["relief_set_barg"] = 2.0
    s = sizing.size_plant(data, fuel_credit=True, curves=False).summary
    assert s["fuel_credit_capacity_kg_h"] == 0.0
    assert s["min_capacity_kg_h"] == pytest.approx(s["steady_boil_off_kg_h"], rel=1e-12)
    assert any("floor_barg" in n for n in s["notes"])


def test_margin_and_units():
    s = sizing.size_plant(SPHERES, margin_pct=20.0, unit_kg_h=50.0, spare_units=1,
                          curves=False).summary
    design = s["required_capacity_kg_h"] * 1.2
    assert s["design_capacity_kg_h"] == pytest.approx(design, rel=1e-12)
    assert s["units_needed"] == math.ceil(design / 50.0) + 1  # N + 1
    assert s["installed_capacity_kg_h"] == s["units_needed"] * 50.0


# ---------------------------------------------------------------------------
# Capacity through an outage (bisection on full runs)
# ---------------------------------------------------------------------------


def _with_outages(hours_list, start_days):
    data = copy.deepcopy(SPHERES)
    data["reliquefaction"]["outage"] = [{"start_day": d, "hours": h}
                                        for d, h in zip(start_days, hours_list, strict=True)]
    return data


def test_outage_capacity_is_the_smallest_that_keeps_the_valve_shut():
    # three 40 h trips at design ambient, 3 days apart: each trip eats ~half the
    # margin to a 0.6 barg relief setting, so the plant must pull the pressure
    # back between trips; that takes more than the steady capacity
    data = _with_outages([40.0, 40.0, 40.0], [1.0, 4.0, 7.0])
    data["tank"]["relief_set_barg"] = 0.6
    found = sizing.size_plant(data, curves=False)
    cap = found.summary["min_capacity_with_outage_kg_h"]
    assert cap is not None and cap > found.summary["min_capacity_kg_h"]
    u = found.summary["u_value_w_m2k"]

    def lifts(capacity):
        d = sizing.design_voyage_dict(data, u_w_m2k=u, capacity_kg_h=capacity, hold_barg=0.3,
                                      air_c=45.0, sea_c=32.0)
        return simulate(parse_scenario(d)).summary["time_to_relief_h"] is not None

    assert not lifts(cap)
    # bisection stops within 0.1 % (sizing.CAPACITY_TOLERANCE): just below must lift
    assert lifts(cap * (1.0 - sizing.CAPACITY_TOLERANCE))
    assert found.summary["required_capacity_kg_h"] == max(
        cap, found.summary["min_capacity_kg_h"])


def test_outage_longer_than_the_holding_time_has_no_plant_size():
    data = _with_outages([200.0], [0.5])
    data["tank"]["relief_set_barg"] = 0.35  # a few tens of hours from 0.3 barg
    s = sizing.size_plant(data, curves=False).summary
    assert s["min_capacity_with_outage_kg_h"] is None
    assert "outage alone" in s["outage_note"]
    assert s["holding_time_from_hold_h"] < 200.0


def test_no_outage_gives_null():
    s = sizing.size_plant(SPHERES, curves=False).summary
    assert s["min_capacity_with_outage_kg_h"] is None
    assert "no [[reliquefaction.outage]]" in s["outage_note"]


# ---------------------------------------------------------------------------
# Holding time = the voyage engine's time to relief for the same start
# ---------------------------------------------------------------------------


def _engine_time_to_relief(data, air_c, sea_c, days):
    """Same start built another way: the scenario's own dict, one leg, sim.whatif at day 0."""
    d = copy.deepcopy(data)
    d["leg"] = [{"name": "same start", "days": days, "air_c": air_c, "sea_c": sea_c}]
    d = fail_control(d, 0.0, which="all")
    return simulate(parse_scenario(d)).summary["time_to_relief_h"]


@pytest.mark.parametrize("name", ["propane-type-c-no-control", "lng-membrane-fuel-reliq-trip"])
def test_holding_time_equals_engine_time_to_relief(name):
    # one scenario with a U-value, one with a rated BOR (U calibrated from it)
    data = load_scenario(demo_scenarios()[name]).raw
    ht = sizing.holding_time(data, air_c=45.0, sea_c=32.0)
    assert ht.hours is not None
    # The scenario's own outage windows, kept by fail_control, only cut the run
    # into more integration segments: the same answer to ~1e-13 (solver rtol 1e-8)
    assert ht.hours == pytest.approx(_engine_time_to_relief(data, 45.0, 32.0, ht.run_days),
                                     rel=1e-8)
    # Without them the two runs take identical steps: equal to the last bit
    bare = copy.deepcopy(data)
    for table in ("reliquefaction", "oxidiser", "fuel"):
        if isinstance(bare.get(table), dict):
            bare[table].pop("outage", None)
    assert ht.hours == _engine_time_to_relief(bare, 45.0, 32.0, ht.run_days)


def test_holding_time_from_another_start_equals_engine():
    data = load_scenario(demo_scenarios()["propane-type-c-no-control"]).raw
    ht = sizing.holding_time(data, air_c=38.0, sea_c=30.0, fill_pct=85.0, pressure_barg=3.0)
    d = copy.deepcopy(data)
    d["tank"]["fill_pct"], d["tank"]["pressure_barg"] = 85.0, 3.0
    assert ht.hours == _engine_time_to_relief(d, 38.0, 30.0, ht.run_days)


def test_holding_time_without_a_lift_says_so():
    data = load_scenario(demo_scenarios()["propane-type-c-no-control"]).raw
    # ambient colder than the ~5 degC at which propane reaches 4.5 barg (CoolProp): never lifts
    ht = sizing.holding_time(data, air_c=-20.0, sea_c=-2.0, horizon_days=20.0)
    assert ht.hours is None and ht.run_days == 20.0
    assert "does not lift within 20 days" in ht.note
    # loaded above the IGC loading limit (~94.4 %), the tank goes liquid-full first
    full = sizing.holding_time(data, fill_pct=98.0)
    assert full.hours is None and full.status == "stopped" and "liquid-full" in full.note


def test_holding_curves_move_the_right_way():
    data = load_scenario(demo_scenarios()["propane-type-c-no-control"]).raw
    rows = sizing.holding_curves(data, values={"u_w_m2k": [0.2, 0.3, 0.6],
                                               "relief_set_barg": [3.5, 4.5, 6.0],
                                               "air_c": [20.0, 45.0]})
    by = {}
    for r in rows:
        by.setdefault(r["curve"], []).append(r["holding_time_h"])
    # more heat in -> shorter; higher setting or cooler air -> longer (monotone physics)
    assert by["u_w_m2k"][0] > by["u_w_m2k"][1] > by["u_w_m2k"][2]
    assert by["relief_set_barg"][0] < by["relief_set_barg"][1] < by["relief_set_barg"][2]
    assert by["air_c"][0] > by["air_c"][1]
    # a closed tank's holding time scales as 1/U when nothing else changes (Q = U A dT)
    assert by["u_w_m2k"][0] * 0.2 == pytest.approx(by["u_w_m2k"][2] * 0.6, rel=1e-6)


# ---------------------------------------------------------------------------
# IGC loading-limit table
# ---------------------------------------------------------------------------


def test_loading_limit_table_hand_worked_case():
    # Hand-worked (our own case): propane, relief set 4.5 barg = 5.51325 bar abs,
    # loaded at -10 degC. CoolProp 8.0.0 (HEOS), rounded by hand:
    #   reference temperature ~ 5.01 degC, rho_R ~ 521.7 kg/m3,
    #   rho_L(-10 degC) ~ 541.8 kg/m3, LL = 0.98 * 521.7 / 541.8 = 94.37 %
    relief = 4.5e5 + P_ATM
    table = sizing.loading_limit_table("propane", relief, [263.15])
    rho_r = propsi("D", "P", relief, "Q", 0)
    rho_l = propsi("D", "T", 263.15, "Q", 0)
    assert table["reference_density"] == pytest.approx(rho_r, rel=1e-9)
    assert table["loading_density"][0] == pytest.approx(rho_l, rel=1e-9)
    assert table["loading_limit"][0] == pytest.approx(0.98 * rho_r / rho_l, rel=1e-9)
    assert table["loading_limit"][0] == pytest.approx(0.98 * 521.7 / 541.8, rel=2e-4)  # by hand
    assert table["reference_temperature"] - 273.15 == pytest.approx(5.01, abs=0.01)


def test_loading_limit_table_default_grid():
    relief = 0.25e5 + P_ATM
    t = sizing.loading_limit_table("methane", relief)
    temps, ll = t["loading_temperature"], t["loading_limit"]
    assert temps[-1] == t["reference_temperature"]
    assert ll[-1] == pytest.approx(0.98, rel=1e-12)  # at the reference temperature LL = FL
    assert all(a < b for a, b in zip(temps, temps[1:], strict=False))
    assert all(a < b for a, b in zip(ll, ll[1:], strict=False))  # warmer loading: less room
    assert temps[0] == pytest.approx(propsi("T", "P", P_ATM, "Q", 0, "Methane"), abs=1e-3)


# ---------------------------------------------------------------------------
# CLI contract
# ---------------------------------------------------------------------------

SIZING_KEYS = {"design_air_c", "design_sea_c", "steady_boil_off_kg_h", "min_capacity_kg_h",
               "min_capacity_with_outage_kg_h", "refrigeration_kw", "power_kw", "holding_time_h",
               "caution"}


def test_cli_size_writes_the_contract(tmp_path, capsys):
    path = demo_scenarios()["ammonia-reliquefaction"]
    assert main(["size", str(path), "--out", str(tmp_path), "--unit-kg-h", "400"]) == 0
    out = capsys.readouterr().out
    assert CAUTION in out
    s = json.loads((tmp_path / "sizing.json").read_text())
    assert SIZING_KEYS <= set(s)
    assert s["min_capacity_with_outage_kg_h"] is None  # the demo has no outage
    assert s["hold_barg"] == 0.12 and "reliquefaction.hold_barg" in s["hold_source"]
    assert s["power_kw"] == pytest.approx(0.2 * s["design_capacity_kg_h"], rel=1e-12)
    assert (tmp_path / "holding-time.csv").read_text().startswith("curve,value,holding_time_h")
    assert (tmp_path / "loading-limit.csv").read_text().startswith("loading_temp_c,")
    assert CAUTION in (tmp_path / "sizing.html").read_text()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # no temp files left


def test_cli_size_without_a_plant_holds_the_initial_pressure(tmp_path):
    path = demo_scenarios()["propane-type-c-no-control"]
    assert main(["size", str(path), "--out", str(tmp_path), "--no-curves"]) == 0
    s = json.loads((tmp_path / "sizing.json").read_text())
    assert s["hold_barg"] == 2.5 and "initial pressure" in s["hold_source"]
    assert s["power_kw"] is None and s["min_capacity_with_outage_kg_h"] is None
    assert not (tmp_path / "holding-time.csv").exists()


@pytest.mark.parametrize("args, words", [
    (["--hold-barg", "5.0"], ["--hold-barg", "5", "relief_set_barg"]),
    (["--design-air-c", "70"], ["--design-air-c 70", "between -60 and 60"]),
    (["--margin-pct", "-5"], ["--margin-pct -5", "at or above 0"]),
    (["--unit-kg-h", "0"], ["--unit-kg-h 0", "above 0"]),
])
def test_cli_size_bad_options(tmp_path, capsys, args, words):
    path = demo_scenarios()["propane-type-c-no-control"]
    out_dir = tmp_path / "out"
    assert main(["size", str(path), "--out", str(out_dir), "--no-curves", *args]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err
    for w in words:
        assert w in err
    assert not out_dir.exists()


def test_docstring_examples_run():
    import doctest

    outcome = doctest.testmod(sizing)
    assert outcome.attempted >= 1 and outcome.failed == 0


# ---------------------------------------------------------------------------
# App page (standalone module; wiring only)
# ---------------------------------------------------------------------------


def test_app_page_sizing_shows_the_engine_numbers():
    pytest.importorskip("ui.state")  # the app package, owned and wired in separately
    from pathlib import Path

    from streamlit.testing.v1 import AppTest

    page = Path(__file__).resolve().parent.parent / "ui" / "pages" / "sizing.py"
    at = AppTest.from_file(str(page), default_timeout=60)
    at.run()
    assert not at.exception
    at.number_input(key="sizing.margin_pct").set_value(10.0)
    at.toggle(key="sizing.curves").set_value(False)
    at.get("form_submit_button")[0].click().run()
    assert not at.exception and not at.error
    # the set-up the page starts from, sized here directly: the figure shown (0 decimals)
    from ui import state

    data, _ = state.first_demo()
    expected = sizing.size_plant(data, margin_pct=10.0, curves=False).summary
    metrics = {m.label: m.value for m in at.metric}
    shown = float(metrics["Design capacity"].split()[0].replace(",", ""))
    assert shown == pytest.approx(expected["design_capacity_kg_h"], abs=0.5)
    assert expected["design_capacity_kg_h"] == pytest.approx(
        1.1 * expected["required_capacity_kg_h"], rel=1e-12)

"""Mixture cargoes in the voyage engine: tables, tank model, scenario keys, outputs.

References used below:
* CoolProp 8.0.0 HEOS (GERG-2008-type mixture model) through
  :mod:`sim.mixture`'s own bubble-point and closed-tank solvers, which call
  CoolProp directly and share no code with the fast tables under test.
* ISO 6976 component values as typed into :mod:`sim.iso6976` (from memory;
  see docs/mixtures.md) for the energy checks.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from sim.iso6976 import calorific_values
from sim.mixture import (
    bubble_point_pressure,
    closed_tank_state,
)
from sim.mixture_table import MixtureTable, loaded_mixture_tables, partial_molar
from sim.models.mixture_equilibrium import MixtureEquilibriumModel
from sim.presets import MIXTURE_PRESETS
from sim.scenario import ScenarioError, demo_scenarios, load_scenario, loads_scenario
from sim.voyage import simulate

TYPICAL = tuple(MIXTURE_PRESETS["typical LNG"].items())
NAMES = [c for c, _ in TYPICAL]


def _toml(fractions: dict, extra_cargo: str = "", legs: str = "", tank: str = "",
          model: str = "equilibrium", insulation: str = "u_w_m2k = 0.4") -> str:
    lines = "\n".join(f"{k} = {v!r}" for k, v in fractions.items())
    return f"""
title = "mixture test"
model = "{model}"
[cargo]
{extra_cargo}
[cargo.mole_fractions]
{lines}
[tank]
shape = "sphere"
diameter_m = 12.0
fill_pct = 95.0
pressure_barg = 0.1
relief_set_barg = 0.7
{tank}
[insulation]
{insulation}
{legs or '''[[leg]]
days = 5.0
air_c = 25.0
sea_c = 20.0'''}
"""


# -- property tables ------------------------------------------------------------------
def test_partial_molar_properties_sum_to_the_mixture_values():
    """Euler's theorem: sum x_i vbar_i = v and sum x_i ubar_i = u (CoolProp 8.0.0 HEOS)."""
    import CoolProp

    from sim.mixture import MIXTURE_COMPONENTS, _state

    x = np.array([f for _, f in TYPICAL])
    eq_p = bubble_point_pressure(dict(TYPICAL), 113.0)
    names = tuple(MIXTURE_COMPONENTS[c] for c in NAMES)
    vbar, ubar = partial_molar("HEOS", NAMES, "liquid", x, 113.0, eq_p.pressure)
    st = _state("HEOS", names, "liquid")
    st.set_mole_fractions(list(x))
    st.update(CoolProp.PT_INPUTS, eq_p.pressure, 113.0)
    # round-off of central differences with step 1e-6: ~1e-9 relative in v, ~1e-5 J/mol in u
    assert float(x @ vbar) == pytest.approx(1.0 / st.rhomolar(), rel=1e-7)
    assert float(x @ ubar) == pytest.approx(st.umolar(), abs=1e-3)


def test_table_bubble_point_of_a_weathered_liquid_against_coolprop():
    """K-value table built at the loaded liquid, used for a liquid that lost nitrogen.

    Reference: a direct CoolProp HEOS bubble-point (QT) call for the weathered
    liquid. The Raoult/Henry scaling leaves an error proportional to the drift:
    measured 0.08 % in bubble pressure at a 0.1 %-point nitrogen loss, where the
    model first rebuilds its table (then adapts the allowance to keep the
    rebuild's pressure jump near 0.05 %).
    """
    table, _ = loaded_mixture_tables(TYPICAL)
    x = np.array([f for _, f in TYPICAL])
    x[-1] -= 0.001  # nitrogen boiled off (the first drift allowance)
    x /= x.sum()
    for temp in (112.0, 118.0):
        v, _ = table.raw(temp)
        lnp, lnk, *_ = table.split(v)
        p_table = math.exp(lnp) * float(np.dot(np.exp(lnk), x))
        ref = bubble_point_pressure(dict(zip(NAMES, x, strict=True)), temp).pressure
        assert p_table == pytest.approx(ref, rel=1e-3)


def test_loaded_table_reproduces_coolprop_bubble_points_between_nodes():
    """The as-loaded pseudo-pure table against direct HEOS bubble points (0.1 %)."""
    _, sat = loaded_mixture_tables(TYPICAL)
    for p in (1.2e5, 5e5):
        t = sat.temperature(p)
        ref = bubble_point_pressure(dict(TYPICAL), t)
        assert p == pytest.approx(ref.pressure, rel=1e-3)
        assert sat.at(t).rho_liquid == pytest.approx(ref.liquid.density, rel=1e-3)


# -- tank model against CoolProp's own closed-tank state ---------------------------------
def test_tank_state_matches_heos_closed_tank_after_weathering():
    """Weather a tank by withdrawing equilibrium vapour (6 % of the moles), then compare
    (n, U, V) -> T, p, fill with sim.mixture.closed_tank_state (HEOS, no tables)."""
    table, _ = loaded_mixture_tables(TYPICAL)
    model = MixtureEquilibriumModel(table, 1000.0, 0.0, 0.0,
                                    limits=(table.temperature_min, table.temperature_max))
    y = model.initial_state(0.95, 1.10e5)
    total = y[:-1].sum()
    for _ in range(60):
        st = model.evaluate(y, 0.0, 0.0)
        if model.refresh_margin(st) > 0:
            model.refresh(y)
            st = model.evaluate(y, 0.0, 0.0)
        # heat that keeps dp/dt = 0 at 1 kg/s of vapour out (a0 is proportional to heat)
        st.heat_in = 1.0
        a1 = model.pressure_rate_coefficients(st)[0]
        b_out = model.pressure_rate_coefficients(st)[1]
        st._extra["coefficients"] = None
        st.heat_in = b_out / a1
        y = y + model.derivatives(st, 1.0, 0.0) * (0.001 * total * 0.018)
    st = model.evaluate(y, 0.0, 0.0)
    assert model.refreshes >= 1
    assert st.liquid_fractions[-1] < 0.003  # nitrogen went from 0.7 % to below 0.3 %
    ref = closed_tank_state(dict(zip(NAMES, y[:-1], strict=True)), 1000.0, y[-1],
                            st.liquid_temperature)
    assert st.liquid_temperature == pytest.approx(ref.temperature, abs=0.01)
    assert st.pressure == pytest.approx(ref.pressure, rel=3e-3)
    assert st.fill == pytest.approx(ref.fill, abs=1e-4)
    assert st.vapour_fractions[-1] == pytest.approx(ref.vapour.mole_fractions[-1], abs=2e-3)
    # every rebuild moved the pressure by less than the warning line (HEOS, typical LNG)
    import sim.models.mixture_equilibrium as me

    assert 0.0 < model.largest_jump < me.JUMP_WARNING
    assert not any("inaccurate" in w for w in model.warnings)


def test_a_rebuild_that_moves_the_pressure_a_lot_is_reported(monkeypatch):
    """Take 30 % of the nitrogen out of the liquid and rebuild: the jump is measured and,
    above the warning line (set to 0 here), reported with its size."""
    import sim.models.mixture_equilibrium as me

    monkeypatch.setattr(me, "JUMP_WARNING", 0.0)
    table, _ = loaded_mixture_tables(TYPICAL)
    model = MixtureEquilibriumModel(table, 1000.0, 0.0, 0.0,
                                    limits=(table.temperature_min, table.temperature_max))
    y = model.initial_state(0.95, 1.10e5)
    y[NAMES.index("nitrogen")] *= 0.7
    model.refresh(y)
    assert model.largest_jump > 0.0
    size = f"{100.0 * model.largest_jump:.1f} %"
    assert any("inaccurate" in w and size in w for w in model.warnings), model.warnings


def test_pressure_rate_coefficients_match_finite_differences():
    """Implicit-function dp/dt against a small explicit step of the same state."""
    table, _ = loaded_mixture_tables(TYPICAL)
    model = MixtureEquilibriumModel(table, 500.0, 30.0, 10.0)
    y0 = model.initial_state(0.9, 1.2e5)
    st = model.evaluate(y0, 300.0, 290.0)
    a0, b_out, b_rl = model.pressure_rate_coefficients(st)
    for out, rl, expected in ((0.0, 0.0, a0), (0.5, 0.0, a0 - 0.5 * b_out),
                              (0.0, 0.5, a0 - 0.5 * b_rl)):
        dt = 10.0
        y1 = y0 + model.derivatives(st, out, rl) * dt
        y_1 = y0 - model.derivatives(st, out, rl) * dt
        rate = (model.evaluate(y1, 300.0, 290.0).pressure
                - model.evaluate(y_1, 300.0, 290.0).pressure) / (2 * dt)
        assert rate == pytest.approx(expected, rel=1e-5, abs=1e-9)


def test_a_state_whose_pressure_falls_under_heat_is_refused():
    """Heat into a closed rigid two-phase tank raises its pressure (a0 > 0). A solved
    state that says otherwise has left what the tables describe (a year-long vented
    LNG heel that had lost most of its methane went to vacuum while heat flowed in):
    refuse it. The state here is mangled on purpose (Jacobian sign flipped)."""
    from sim.models.mixture_equilibrium import MixtureStateError

    table, _ = loaded_mixture_tables(TYPICAL)
    model = MixtureEquilibriumModel(table, 500.0, 30.0, 10.0)
    y0 = model.initial_state(0.9, 1.2e5)
    st = model.evaluate(y0, 300.0, 290.0)
    assert st.heat_in > 0.0 and model.pressure_rate_coefficients(st)[0] > 0.0
    bad = model.evaluate(y0, 300.0, 290.0)
    bad._extra["jac"] = -bad._extra["jac"]
    with pytest.raises(MixtureStateError, match="no longer physical"):
        model.pressure_rate_coefficients(bad)
    # cooling (ambient below the cargo) lowers the pressure: nothing refused
    cold = model.evaluate(y0, 50.0, 50.0)
    assert cold.heat_in < 0.0 and model.pressure_rate_coefficients(cold)[0] < 0.0


# -- whole voyages ------------------------------------------------------------------------
def test_single_component_mixture_path_equals_pure_path():
    """One-component 'mixture' through the mixture model vs the pure equilibrium model
    (the pure path is itself checked against CoolProp in test_equilibrium)."""
    sc = load_scenario(demo_scenarios()["propane-type-c-no-control"])
    sc = dataclasses.replace(sc, legs=sc.legs[:2])
    pure = simulate(sc)
    mixed = simulate(dataclasses.replace(sc, mole_fractions=(("propane", 1.0),)))
    a, b = pure.summary, mixed.summary
    assert b["final_pressure_barg"] + 1.01325 == pytest.approx(a["final_pressure_barg"] + 1.01325,
                                                              rel=1e-3)
    assert b["final_liquid_temp_c"] == pytest.approx(a["final_liquid_temp_c"], abs=0.01)
    assert b["final_fill_pct"] == pytest.approx(a["final_fill_pct"], rel=1e-3)
    assert b["final_cargo_t"] == pytest.approx(a["final_cargo_t"], rel=1e-6)


def test_single_component_fractions_take_the_pure_cargo_path():
    sc = loads_scenario(_toml({"propane": 1.0}).replace("0.1\n", "0.5\n", 1), "t")
    assert sc.mole_fractions is None and sc.cargo == "propane"


@pytest.fixture(scope="module")
def typical_run():
    """Typical LNG held at 0.1 barg by the engines, then a short closed spell."""
    legs = """
[fuel]
floor_barg = 0.1
[[leg]]
name = "held"
days = 12.0
air_c = 25.0
sea_c = 20.0
fuel_kg_h = 800.0
"""
    return simulate(loads_scenario(_toml(dict(TYPICAL), 'price_per_mmbtu = 10.0', legs), "t"))


def test_nitrogen_boils_off_first(typical_run):
    """Early boil-off is nitrogen-rich; the liquid's nitrogen falls steadily.
    (Trend from the relative volatility of nitrogen in methane, common knowledge of the
    trade, no source; magnitudes from CoolProp HEOS via the model.)"""
    ts = typical_run.timeseries
    x_n2, y_n2 = ts["x_nitrogen"].to_numpy(), ts["y_nitrogen"].to_numpy()
    assert y_n2[0] > 10 * x_n2[0]
    assert np.all(np.diff(x_n2) <= 1e-12)
    assert x_n2[-1] < 0.9 * x_n2[0]
    assert y_n2[-1] < y_n2[0]
    # the first boil-off against a direct HEOS bubble point (incipient vapour)
    first = bubble_point_pressure(dict(TYPICAL), ts["liquid_temp_c"].iloc[0] + 273.15)
    assert y_n2[0] == pytest.approx(first.vapour_fractions()["nitrogen"], abs=1e-4)


def test_mass_balance_closes(typical_run):
    s = typical_run.summary
    assert s["initial_cargo_t"] - s["final_cargo_t"] == pytest.approx(
        s["cargo_loss_t"], rel=1e-6)
    assert s["boil_off_t"] > 0


def test_energy_lost_equals_iso6976_value_of_the_boil_off(typical_run):
    """Energy lost = integral of the boil-off's ISO 6976 gross value, checked against the
    mean boil-off composition (moles) times ISO 6976 molar values; the integral and the
    time-averaged composition differ only by sampling (0.5 %)."""
    s = typical_run.summary
    bog = s["bog_composition_mean"]
    cv = calorific_values(bog, 288.15, 288.15)
    assert s["energy_lost_gj"] == pytest.approx(s["cargo_loss_t"] * 1e3 * cv.gross_mass / 1e9,
                                                rel=5e-3)
    assert s["value_lost"] == pytest.approx(10.0 * s["energy_lost_mmbtu"], rel=1e-12)
    assert s["gcv_arrival_mj_kg"] > s["gcv_start_mj_kg"]
    assert s["energy_delivered_gj"] == pytest.approx(s["energy_loaded_gj"] - s["energy_lost_gj"],
                                                     rel=1e-6)


def test_methane_falls_and_heating_value_rises_without_nitrogen():
    """Nitrogen-free LNG held at constant pressure for 20 days: methane leaves first, so the
    liquid's methane fraction falls; its heating value per volume of gas rises, per kg it
    falls (heavier hydrocarbons carry less energy per kg than methane: ISO 6976 values;
    the weathering trend is common knowledge of the trade, no source)."""
    rich = {k: v for k, v in MIXTURE_PRESETS["rich LNG"].items() if k != "nitrogen"}
    total = sum(rich.values())
    rich = {k: v / total for k, v in rich.items()}
    legs = """
[fuel]
floor_barg = 0.1
[[leg]]
days = 20.0
air_c = 30.0
sea_c = 28.0
fuel_kg_h = 2000.0
"""
    result = simulate(loads_scenario(_toml(rich, "", legs, insulation="u_w_m2k = 0.15"), "t"))
    ts = result.timeseries
    assert result.status == "completed"
    # held, apart from the table rebuilds' jumps (by design at most ~0.1 % of the
    # absolute pressure, pulled back by the holding sink)
    assert ts["pressure_barg"].max() == pytest.approx(0.1, abs=1.2e-3)
    assert ts["pressure_barg"].min() == pytest.approx(0.1, abs=1.2e-3)
    assert ts["x_methane"].iloc[-1] < ts["x_methane"].iloc[0] - 1e-3
    s = result.summary
    assert s["quality_arrival"]["gcv_mj_m3"] > s["quality_start"]["gcv_mj_m3"]
    assert s["quality_arrival"]["wobbe_mj_m3"] > s["quality_start"]["wobbe_mj_m3"]
    assert s["gcv_arrival_mj_kg"] < s["gcv_start_mj_kg"]
    assert ts["liquid_temp_c"].iloc[-1] > ts["liquid_temp_c"].iloc[0]


def test_no_heat_in_nothing_moves():
    sc = loads_scenario(_toml(dict(TYPICAL)), "t")
    sc = dataclasses.replace(sc, insulation=dataclasses.replace(sc.insulation, u_value=0.0))
    result = simulate(sc)
    ts = result.timeseries
    assert result.summary["boil_off_t"] == 0.0
    assert ts["pressure_barg"].max() - ts["pressure_barg"].min() < 1e-9
    assert abs(ts["x_nitrogen"].iloc[-1] - ts["x_nitrogen"].iloc[0]) < 1e-12


def test_sealed_mixture_tank_reaches_relief():
    """A sealed tank: pressure and temperature rise together; the relief lifts, venting the
    equilibrium vapour (rich in nitrogen)."""
    result = simulate(loads_scenario(_toml(dict(TYPICAL), insulation="u_w_m2k = 0.6"), "t"))
    s = result.summary
    assert s["time_to_relief_h"] is not None
    assert s["vented_t"] > 0
    # nitrogen is several times more volatile than methane (CoolProp HEOS K-values)
    assert s["bog_composition_mean"]["nitrogen"] > 5 * dict(TYPICAL)["nitrogen"]


# -- scenario keys ------------------------------------------------------------------------
@pytest.mark.parametrize(
    ("fractions", "words"),
    [
        ({"methane": 0.9, "ethane": 0.05}, "sum to 0.95"),
        ({"methane": 0.9, "ethan": 0.1}, "cargo.mole_fractions.ethan: unknown component"),
        ({"methane": 1.2}, "cargo.mole_fractions.methane = 1.2"),
        ({"methane": "0.9", "ethane": 0.1}, "must be a number"),
    ],
)
def test_bad_compositions_are_named(fractions, words):
    with pytest.raises(ScenarioError) as err:
        loads_scenario(_toml(fractions), "t")
    assert words in str(err.value)


def test_fluid_and_fractions_together_and_two_zone_are_refused():
    with pytest.raises(ScenarioError, match="give one"):
        loads_scenario(_toml({"methane": 1.0}, 'fluid = "methane"'), "t")
    with pytest.raises(ScenarioError, match="equilibrium model only"):
        loads_scenario(_toml(dict(TYPICAL), model="two-zone"), "t")


def test_pure_cargo_energy_uses_iso6976():
    """Pure propane: energy lost = mass lost x ISO 6976 gross mass value (same reference)."""
    sc = load_scenario(demo_scenarios()["propane-type-c-no-control"])
    s = simulate(sc).summary
    cv = calorific_values({"propane": 1.0}, 288.15, 288.15)
    # CoolProp and ISO molar masses of propane differ by ~1e-5
    assert s["energy_lost_gj"] == pytest.approx(s["cargo_loss_t"] * cv.gross_mass / 1e6,
                                                rel=1e-4)
    assert s["arrival_composition"] == {"propane": 1.0}


def test_mixture_table_refuses_missing_components():
    with pytest.raises(ValueError, match="present"):
        MixtureTable(("methane", "ethane"), (1.0, 0.0), [110, 112, 114, 116])


def test_carbon_dioxide_in_cold_lng_is_flagged():
    """CO2 triple point -56.6 degC (CoolProp 8.0.0 HEOS; NIST value from memory) lies far
    above LNG temperatures: a run with CO2 in LNG carries a freeze-out warning."""
    fractions = dict(TYPICAL)
    fractions["methane"] -= 0.001
    fractions["carbon-dioxide"] = 0.001
    result = simulate(loads_scenario(_toml(fractions), "t"))
    assert any("freeze out" in w for w in result.summary["model_warnings"])
    plain = simulate(loads_scenario(_toml(dict(TYPICAL)), "t"))
    assert plain.summary["model_warnings"] == []


def test_pressure_outside_a_mixtures_table_names_its_bubble_point():
    with pytest.raises(ScenarioError, match=r"above the highest pressure covered .* bubble point"):
        loads_scenario(_toml(dict(TYPICAL)).replace("relief_set_barg = 0.7",
                                                     "relief_set_barg = 80.0"), "t")


def test_cargo_that_does_not_burn_has_no_energy_figures():
    """Carbon dioxide: ISO 6976 gross calorific value 0, so energy figures are null, not 0."""
    s = simulate(load_scenario(demo_scenarios()["co2-near-triple"])).summary
    assert s["energy_loaded_gj"] is None and s["energy_lost_gj"] is None
    assert s["quality_start"]["gcv_mj_kg"] == 0.0


def test_a_table_rebuild_that_steps_past_the_relief_set_is_a_relief_lift(monkeypatch):
    """A rebuilt table moves the computed pressure by the old table's error. Where that
    error is large (a poor table) the step can carry the tank past the relief set: the
    valve then lifts, and the run must say so (event, time to lift). Here a rebuild is
    forced 500 Pa below the set pressure of a sealed tank and made poor on purpose: the
    table is rebuilt around a liquid with three times its nitrogen (+0.9 % in pressure;
    a stand-in for a table far off, not physics)."""
    import sim.models.mixture_equilibrium as me

    relief = 0.12e5 + 101_325.0
    skewed_at = []
    margin = me.MixtureEquilibriumModel.refresh_margin

    def forced_margin(self, state):
        if skewed_at:
            return margin(self, state)
        return (state.pressure - (relief - 500.0)) / 1000.0

    def skewed(self, y):
        before = self.evaluate(y, 300.0, 300.0).pressure
        x = np.array(self.table.reference)
        x[self.components.index("nitrogen")] *= 3.0
        self.table = MixtureTable(self.components, x / x.sum(), self.table.temperatures,
                                  backends=(self.table.backend,))
        self.drift_tolerance = 1.0  # keep the skewed table for the rest of the run
        skewed_at.append((before, self.evaluate(y, 300.0, 300.0).pressure))

    monkeypatch.setattr(me.MixtureEquilibriumModel, "refresh_margin", forced_margin)
    monkeypatch.setattr(me.MixtureEquilibriumModel, "refresh", skewed)
    text = _toml(dict(TYPICAL), legs="""[[leg]]
days = 0.5
air_c = 25.0
sea_c = 20.0""").replace("relief_set_barg = 0.7", "relief_set_barg = 0.12")
    result = simulate(loads_scenario(text))
    s = result.summary
    assert skewed_at and skewed_at[0][0] < relief < skewed_at[0][1], skewed_at
    lifts = [e for e in result.events if e.kind == "relief-lift"]
    assert s["vented_t"] > 0.0
    assert lifts and s["time_to_relief_h"] is not None
    assert s["time_to_relief_h"] == pytest.approx(lifts[0].time / 3600.0)


def _vented_per_joule_heos(fractions: dict, pressure: float, eps: float = 2e-4) -> float:
    """Reference: kg vented per joule by a liquid mixture held at ``pressure``.

    CoolProp HEOS bubble points (through :mod:`sim.mixture`, no tables): boil
    ``eps`` mol of the incipient vapour off one mole of liquid at constant
    pressure; the heat is the enthalpy change, including the warming of the
    liquid as its bubble point rises. The vapour left behind refills the freed
    volume: the usual factor (1 - rho_v/rho_l).
    """
    from sim.mixture import Mixture, bubble_point_temperature

    mixture = Mixture.from_fractions(fractions)
    x = mixture.as_array()
    first = bubble_point_temperature(mixture, pressure, backends=("HEOS",))
    y = np.array(first.vapour.mole_fractions)
    rest = dict(zip(mixture.components, (x - eps * y) / (1.0 - eps)))
    after = bubble_point_temperature(Mixture.from_fractions(rest), pressure, backends=("HEOS",))
    heat = ((1.0 - eps) * after.liquid.molar_enthalpy + eps * first.vapour.molar_enthalpy
            - first.liquid.molar_enthalpy)
    refill = 1.0 - first.vapour.density / first.liquid.density
    return eps * first.vapour.molar_mass / heat * refill


def test_rated_boil_off_of_lng_with_nitrogen_is_what_the_tank_vents():
    """A rated BOR is the vented boil-off of the tank held at its initial pressure at the
    rated ambient. LNG with nitrogen also spends heat warming the liquid as nitrogen
    leaves (its bubble point rises at constant pressure): a calibration on the heat of
    vaporisation at fixed temperature alone put 31 % too little heat into the tank."""
    from sim.facts import vented_kg_per_joule
    from sim.scenario import cargo_table

    rating = """rated_bor_pct_day = 0.10
rated_air_c = 45.0
rated_sea_c = 32.0"""
    # engines that would take far more than boils off, floor at the initial pressure
    legs = """[[leg]]
days = 1.0
air_c = 45.0
sea_c = 32.0
fuel_kg_h = 100000.0"""
    sc = loads_scenario(_toml(dict(TYPICAL), insulation=rating, legs=legs))
    per_joule = vented_kg_per_joule(sc, cargo_table(sc), sc.tank.fill)
    reference = _vented_per_joule_heos(dict(TYPICAL), sc.tank.pressure)
    # the model's K-values and partial molar properties come from tables of the
    # loaded liquid; measured 0.85 % above the direct HEOS bubble points
    assert per_joule == pytest.approx(reference, rel=0.015)
    # and the run vents the rated share at the start (engines hold 0.1 barg)
    res = simulate(sc)
    first = res.timeseries.iloc[0]
    bor = first["boil_off_kg_h"] * 24.0 / (first["liquid_t"] * 1000.0)
    assert bor == pytest.approx(0.10 / 100.0, rel=1e-4)


def test_a_blend_heos_cannot_tabulate_near_its_critical_region_keeps_heos():
    """A propane-rich blend whose HEOS bubble point fails only near 30 bar (close to
    its critical region) used to fall back to Peng-Robinson for the whole table:
    liquid density 7 % high. HEOS over a shorter range is kept instead."""
    from sim.mixture import Mixture, bubble_point_temperature

    blend = {"propane": 0.96, "ethane": 0.015, "isobutane": 0.015, "n-butane": 0.01}
    table, sat = loaded_mixture_tables(tuple(blend.items()))
    assert table.backend == "HEOS"
    # the table still reaches pressurised carriage (type C tanks, up to ~17 barg)
    assert sat.at(table.temperature_max).pressure > 18e5
    pressure = 1.1e5
    # reference: CoolProp HEOS bubble point of the blend, directly
    direct = bubble_point_temperature(Mixture.from_fractions(blend), pressure, backends=("HEOS",))
    assert sat.at(sat.temperature(pressure)).rho_liquid == pytest.approx(direct.liquid.density,
                                                                         rel=1e-4)


def test_a_blend_vented_to_the_end_of_its_heel_stops_heel_exhausted():
    """Venting a propane/n-butane heel to nothing: the integrator's trial steps reach
    past the last liquid (all vapour), where the phase split has no root in [0, 1];
    the run used to stop with "no two-phase state fits". The vapour fraction may now
    pass 1 a little (negative liquid), as it may pass 0 at liquid-full, so the
    heel-exhausted event is found."""
    text = _toml({"propane": 0.5, "n-butane": 0.5}, insulation="u_w_m2k = 5.0",
                 tank="", legs="""[[leg]]
days = 20.0
air_c = 35.0
sea_c = 30.0""").replace("diameter_m = 12.0", "diameter_m = 4.0").replace(
        "fill_pct = 95.0", "fill_pct = 5.0").replace("relief_set_barg = 0.7",
                                                       "relief_set_barg = 0.5").replace(
        "pressure_barg = 0.1", "pressure_barg = 0.5")
    res = simulate(loads_scenario(text))
    assert res.status == "stopped" and res.events[-1].kind == "heel-exhausted"
    s = res.summary
    assert s["initial_cargo_t"] - s["final_cargo_t"] == pytest.approx(s["vented_t"], rel=1e-9)
    last = res.timeseries.iloc[-1]
    # reference: CoolProp HEOS bubble point of the last liquid at the last pressure
    from sim.mixture import bubble_point_temperature

    x = {"propane": last["x_propane"], "n-butane": last["x_n-butane"]}
    ref = bubble_point_temperature(x, (last["pressure_barg"] + 1.01325) * 1e5,
                                   backends=("HEOS",))
    assert last["liquid_temp_c"] == pytest.approx(ref.temperature - 273.15, abs=0.05)

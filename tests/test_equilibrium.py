"""Equilibrium tank model and voyage orchestrator against independent physics.

References are CoolProp (HEOS) direct calls and closed-form balances, never
the spline tables the engine uses.
"""

import dataclasses
import math

import numpy as np
import pytest
from cases import closed_tank, controlled_ship

from sim.cargo import abstract_state, cargo_info, coolprop_saturation
from sim.scenario import Insulation
from sim.units import SECONDS_PER_HOUR, barg_to_pa, c_to_k
from sim.voyage import simulate


def coolprop_internal_energy(cargo, mass, volume, temp):
    """U of M kg saturated cargo in a rigid volume at T, straight from CoolProp (HEOS)."""
    sat = coolprop_saturation(cargo, temp)
    v_l, v_v = 1 / sat.rho_liquid, 1 / sat.rho_vapour
    vapour = (volume - mass * v_l) / (v_v - v_l)
    return (mass - vapour) * sat.u_liquid + vapour * sat.u_vapour


def test_closed_tank_first_law():
    """Integrated heat equals the rise in internal energy (CoolProp-evaluated end states)."""
    sc = closed_tank(relief_barg=15.0, days=20)
    res = simulate(sc)
    vol = sc.tank.shape.volume()
    mass = res.summary["initial_cargo_t"] * 1000
    u0 = coolprop_internal_energy(
        "propane", mass, vol, c_to_k(res.summary["initial_liquid_temp_c"])
    )
    u1 = coolprop_internal_energy("propane", mass, vol, c_to_k(res.summary["final_liquid_temp_c"]))
    heat = res.summary["heat_in_mwh"] * 3.6e9
    assert res.summary["boil_off_t"] == 0.0
    assert res.summary["final_cargo_t"] == pytest.approx(res.summary["initial_cargo_t"], rel=1e-12)
    # tolerance: table vs CoolProp error (~1e-6 of h_fg) over a ~40 MJ/K tank
    assert u1 - u0 == pytest.approx(heat, rel=1e-4)


def test_time_to_relief_matches_independent_quadrature():
    """Closed tank: t_relief = integral of dU / (UA (T_amb - T)) along the saturation path."""
    sc = closed_tank(
        cargo="propane",
        fill=0.6,
        pressure_barg=0.1,
        relief_barg=2.0,
        u_value=0.5,
        air_c=30,
        sea_c=30,
        days=60,
    )
    res = simulate(sc)
    vol, area = sc.tank.shape.volume(), sc.tank.shape.surface_area()
    state = abstract_state(cargo_info("propane").coolprop_name)
    import CoolProp

    state.update(CoolProp.PQ_INPUTS, barg_to_pa(0.1), 0)
    t0 = state.T()
    state.update(CoolProp.PQ_INPUTS, barg_to_pa(2.0), 0)
    t1 = state.T()
    sat0 = coolprop_saturation("propane", t0)
    mass = vol * (0.6 * sat0.rho_liquid + 0.4 * sat0.rho_vapour)
    temps = np.linspace(t0, t1, 2001)
    energies = np.array([coolprop_internal_energy("propane", mass, vol, t) for t in temps])
    mids = 0.5 * (temps[1:] + temps[:-1])
    seconds = np.sum(np.diff(energies) / (0.5 * area * (c_to_k(30) - mids)))
    assert res.time_to_relief_h == pytest.approx(seconds / 3600, rel=0.005)


def test_vented_rate_is_q_over_hfg_times_density_correction():
    """At the relief set pressure, vented = Q/h_fg (1 - rho_v/rho_l), properties from CoolProp."""
    sc = closed_tank(cargo="ammonia", pressure_barg=0.25, relief_barg=0.25, u_value=0.4, days=3)
    res = simulate(sc)
    ts = res.timeseries
    row = ts.iloc[len(ts) // 2]
    sat = coolprop_saturation("ammonia", c_to_k(row["liquid_temp_c"]))
    expected = row["heat_in_kw"] * 1000 / sat.latent_heat * (1 - sat.rho_vapour / sat.rho_liquid)
    assert row["vented_kg_h"] / 3600 == pytest.approx(expected, rel=1e-5)
    assert row["pressure_barg"] == pytest.approx(0.25, abs=1e-9)
    assert res.time_to_relief_h == 0.0


def test_mass_balance_closes_with_every_sink():
    res = simulate(controlled_ship())
    s = res.summary
    assert s["fuel_t"] > 0 and s["reliquefied_t"] > 0
    lost = s["initial_cargo_t"] - s["final_cargo_t"]
    assert lost == pytest.approx(s["fuel_t"] + s["oxidised_t"] + s["vented_t"], rel=1e-6)
    assert s["cargo_loss_t"] == pytest.approx(lost, rel=1e-6)


def test_no_heat_nothing_moves():
    sc = closed_tank(days=10)
    sc = dataclasses.replace(sc, insulation=Insulation(0.0, 1.0))
    res = simulate(sc)
    ts = res.timeseries
    assert np.ptp(ts["pressure_barg"]) < 1e-9
    assert np.ptp(ts["cargo_t"]) == 0.0
    assert res.summary["boil_off_t"] == 0.0


def test_reliquefaction_holding_takes_q_over_hfg():
    """A plant holding pressure condenses Q/h_fg (condensate returned saturated): first law."""
    res = simulate(controlled_ship(outage=False))
    ts = res.timeseries
    holding = ts[ts["control"] == "reliquefaction holding"]
    assert len(holding) > 10
    row = holding.iloc[len(holding) // 2]
    sat = coolprop_saturation("methane", c_to_k(row["liquid_temp_c"]))
    # vapour leaving to fuel at capacity also carries energy: split the heat
    vent_part = row["fuel_kg_h"] / 3600 * sat.latent_heat / (1 - sat.rho_vapour / sat.rho_liquid)
    expected = (row["heat_in_kw"] * 1000 - vent_part) / sat.latent_heat
    assert row["reliquefied_kg_h"] / 3600 == pytest.approx(expected, rel=1e-5)
    assert row["pressure_barg"] == pytest.approx(0.13, abs=1e-8)


def test_fuel_floor_holds_pressure_when_demand_exceeds_boil_off():
    sc = controlled_ship(outage=False)
    res = simulate(sc)
    first = res.timeseries[res.timeseries["time_h"] < 70]
    # leg 1 demand 2500 kg/h exceeds the natural boil-off: pressure stays at the floor
    assert np.ptp(first["pressure_barg"]) < 1e-8
    assert (first["fuel_kg_h"] < 2500).all()


def test_rated_bor_reproduced_at_rated_ambient():
    """A vented tank at the rated ambient boils off exactly the rated BOR (definition check)."""
    sc = closed_tank(
        cargo="methane", fill=0.98, pressure_barg=0.1, relief_barg=0.1, days=1, air_c=45, sea_c=32
    )
    ins = Insulation(
        None,
        0.7,
        rated_bor=0.0015 / 86400,
        rated_air_temperature=c_to_k(45),
        rated_sea_temperature=c_to_k(32),
    )
    sc = dataclasses.replace(sc, insulation=ins)
    res = simulate(sc)
    first = res.timeseries.iloc[1]
    liquid0 = res.timeseries.iloc[0]["liquid_t"] * 1000
    assert first["vented_kg_h"] * 24 / liquid0 == pytest.approx(0.0015, rel=1e-6)


def test_outage_makes_pressure_rise_and_events_are_recorded():
    res = simulate(controlled_ship())
    kinds = [e.kind for e in res.events]
    assert "plant-trip" in kinds and "plant-restore" in kinds
    trip = next(e.time for e in res.events if e.kind == "plant-trip") / SECONDS_PER_HOUR
    ts = res.timeseries
    before = ts[ts["time_h"] <= trip]["pressure_barg"].iloc[-1]
    during = ts[(ts["time_h"] > trip) & (ts["time_h"] < trip + 48)]["pressure_barg"]
    assert during.max() > before


def test_liquid_full_stops_the_run_with_an_event():
    # A nearly full tank warming a long way (propane expands ~0.3 %/K): liquid-full before relief
    sc = closed_tank(
        cargo="propane", fill=0.97, pressure_barg=0.1, relief_barg=17.0, u_value=2.0, days=200
    )
    res = simulate(sc)
    assert res.status == "stopped"
    assert [e.kind for e in res.events][-1] == "liquid-full"
    from sim.scenario import LIQUID_FULL_FILL

    # the run stops where the vapour space falls to 0.01 % of the tank
    assert LIQUID_FULL_FILL == pytest.approx(0.9999)
    assert res.timeseries["fill_pct"].iloc[-1] == pytest.approx(100.0 * LIQUID_FULL_FILL,
                                                                abs=1e-6)
    assert np.isfinite(res.timeseries.select_dtypes("number").to_numpy()).all()
    assert any(e.kind == "loading-limit-exceeded" for e in res.events)


def test_carbon_dioxide_triple_point_event():
    # Reliquefaction held below the triple-point pressure pulls the tank down to it.
    from sim.scenario import Reliquefaction

    sc = closed_tank(
        cargo="carbon-dioxide",
        fill=0.5,
        pressure_barg=6.0,
        relief_barg=9.0,
        u_value=0.1,
        air_c=20,
        sea_c=20,
        days=10,
    )
    sc = dataclasses.replace(sc, reliquefaction=Reliquefaction(5000 / 3600, barg_to_pa(3.0)))
    res = simulate(sc)
    assert res.status == "stopped"
    assert res.events[-1].kind == "triple-point"
    assert res.timeseries["pressure_barg"].iloc[-1] == pytest.approx(
        (0.51796e6 - 101325) / 1e5, abs=0.01
    )  # CO2 triple point 0.51796 MPa, NIST from memory


def test_multiple_tanks_scale_linearly():
    one = simulate(closed_tank(days=5, count=1))
    three = simulate(closed_tank(days=5, count=3))
    assert three.summary["initial_cargo_t"] == pytest.approx(3 * one.summary["initial_cargo_t"])
    assert three.summary["final_pressure_barg"] == pytest.approx(one.summary["final_pressure_barg"])
    assert not math.isnan(three.summary["heat_in_mwh"])


def test_round_voyage_port_call_delivers_cargo_and_balances_mass():
    """Discharge to a heel at a port call: delivered = mass moved; all mass accounted for."""
    sc = controlled_ship(outage=False)
    legs = list(sc.legs)
    legs[2] = dataclasses.replace(legs[2], start_fill=0.03)  # ballast leg with a 3 % heel
    res = simulate(dataclasses.replace(sc, legs=tuple(legs)))
    s = res.summary
    call = next(e for e in res.events if e.kind == "port-call")
    assert call.time == pytest.approx(sc.legs[0].duration + sc.legs[1].duration)
    ts = res.timeseries
    after = ts[ts["time_h"] > call.time / 3600]
    assert after["fill_pct"].iloc[0] == pytest.approx(3.0, abs=0.05)
    # every tonne is somewhere: on board, delivered, or lost (fuel, oxidiser, vented)
    balance = s["initial_cargo_t"] - s["delivered_t"] + s["loaded_t"] - s["cargo_loss_t"]
    assert balance == pytest.approx(s["final_cargo_t"], rel=1e-9)
    assert s["delivered_t"] > 0.9 * s["initial_cargo_t"]
    assert s["heel_remaining_t"] == pytest.approx(ts["liquid_t"].iloc[-1])


def test_heel_exhausted_stops_the_run_with_a_warning():
    # A 0.3 % heel of propane venting under a heavy heat load boils away within days.
    sc = closed_tank(cargo="propane", fill=0.003, pressure_barg=0.2, relief_barg=0.2,
                     u_value=2.0, days=60)
    res = simulate(sc)
    assert res.status == "stopped"
    last = res.events[-1]
    assert last.kind == "heel-exhausted" and "heel exhausted on day" in last.detail
    assert "relief venting" in set(res.timeseries["control"])  # the words README gives
    assert np.isfinite(res.timeseries.select_dtypes("number").to_numpy()).all()


def test_event_scipy_cannot_bracket_ends_the_run_with_a_plain_message(monkeypatch):
    # scipy raises this when an event function changed sign over a step but not
    # between the bracket it then evaluates: the model gave two answers for one
    # state. Seen for a far-out mixture; forced here, since no tested cargo does it.
    import sim.voyage

    real, calls = sim.voyage.solve_ivp, []

    def second_segment_fails(*args, **kwargs):
        calls.append(1)
        if len(calls) > 1:
            raise ValueError("f(a) and f(b) must have different signs")
        return real(*args, **kwargs)

    monkeypatch.setattr(sim.voyage, "solve_ivp", second_segment_fails)
    sc = closed_tank(days=2)
    sc = dataclasses.replace(sc, legs=sc.legs * 2)  # two 2-day legs: two segments
    res = simulate(sc)
    assert res.status == "failed"
    assert "two answers for one state" in res.summary["message"]
    assert res.timeseries["time_h"].iloc[-1] == pytest.approx(48.0)

    # failing in the first segment leaves nothing to report: an exception the
    # command line turns into exit 1 with the message
    calls.clear()
    calls.append(1)
    with pytest.raises(RuntimeError, match="two answers for one state"):
        simulate(sc)


def test_other_integrator_errors_are_not_swallowed(monkeypatch):
    import sim.voyage

    def broken(*args, **kwargs):
        raise ValueError("array must not contain infs or NaNs")

    monkeypatch.setattr(sim.voyage, "solve_ivp", broken)
    with pytest.raises(ValueError, match="infs or NaNs"):
        simulate(closed_tank(days=2))

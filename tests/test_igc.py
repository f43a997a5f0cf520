"""IGC Code loading limit LL = FL * rho_R / rho_L (IGC Code 2016 ch. 15, recalled, not quoted)."""

import pytest
from cases import closed_tank

from sim.cargo import coolprop_saturation
from sim.facts import initial_facts
from sim.igc import loading_limit
from sim.units import barg_to_pa
from sim.voyage import simulate


def _saturated_liquid_density_at_pressure(cargo, pressure):
    import CoolProp

    from sim.cargo import abstract_state, cargo_info

    state = abstract_state(cargo_info(cargo).coolprop_name)
    state.update(CoolProp.PQ_INPUTS, pressure, 0.0)
    return state.rhomass()


def test_hand_worked_case():
    # Hand-worked: propane loaded saturated at 0.5 barg into a type C tank with
    # relief set at 17.0 barg. Densities from CoolProp (HEOS) directly:
    # rho_L at 0.5 barg, rho_R at 17.0 barg (about 50 degC).
    rho_l = _saturated_liquid_density_at_pressure("propane", barg_to_pa(0.5))
    rho_r = _saturated_liquid_density_at_pressure("propane", barg_to_pa(17.0))
    assert (
        560 < rho_l < 585 and 430 < rho_r < 470
    )  # sanity: propane liquid about 570 and 450 kg/m3, from memory
    expected = 0.98 * rho_r / rho_l
    assert loading_limit(rho_r, rho_l) == pytest.approx(expected, rel=1e-12)
    sc = closed_tank(cargo="propane", fill=0.5, pressure_barg=0.5, relief_barg=17.0)
    facts = initial_facts(sc)
    # the engine's own tables agree with CoolProp to far better than 0.01 %
    assert facts["loading_limit_pct"] == pytest.approx(100 * expected, rel=1e-4)


def test_fill_above_limit_is_reported_as_event():
    fine = simulate(
        closed_tank(cargo="propane", fill=0.70, pressure_barg=0.5, relief_barg=17.0, days=0.5)
    )
    over = simulate(
        closed_tank(cargo="propane", fill=0.90, pressure_barg=0.5, relief_barg=17.0, days=0.5)
    )
    assert not any(e.kind == "loading-limit-exceeded" for e in fine.events)
    event = next(e for e in over.events if e.kind == "loading-limit-exceeded")
    assert event.time == 0.0 and "90.00 %" in event.detail


def test_same_state_at_reference_gives_98_percent():
    # By construction: at the reference temperature a tank loaded to LL holds 98 % liquid
    # if no mass leaves (liquid expansion only; vapour mass change is neglected by the Code).
    sat_l = coolprop_saturation("ammonia", 240.0)
    sat_r = coolprop_saturation("ammonia", 300.0)
    ll = loading_limit(sat_r.rho_liquid, sat_l.rho_liquid)
    assert ll * sat_l.rho_liquid / sat_r.rho_liquid == pytest.approx(0.98, rel=1e-12)

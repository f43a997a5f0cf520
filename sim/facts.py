"""Facts derived from a scenario before it runs (for the set-up screen).

Returned in trade units with unit-suffixed keys, like the run summary.
"""

from __future__ import annotations

from . import heat as heat_mod
from .igc import loading_limit
from .scenario import Scenario, cargo_table
from .units import SECONDS_PER_DAY, T_ZERO_C, pa_to_barg


def initial_facts(scenario: Scenario) -> dict:
    """Tank volume, cargo mass, boiling point, IGC loading limit, heat ingress and BOR.

    Heat ingress and the equivalent boil-off rate are for the first leg's
    ambient with the cargo at its initial temperature; the boil-off rate is
    the vented rate Q/h_fg (1 - rho_v/rho_l) over the initial liquid mass.
    """
    tank = scenario.tank
    table = cargo_table(scenario)
    volume = tank.shape.volume()
    area = tank.shape.surface_area()
    t_sat = table.temperature(tank.pressure)
    sat = table.at(t_sat)
    ins = scenario.insulation
    if ins.u_value is not None:
        u_value = ins.u_value
    else:
        u_value = heat_mod.u_value_from_rated_bor(
            ins.rated_bor,
            table,
            volume,
            area,
            ins.rated_fill if ins.rated_fill is not None else tank.fill,
            tank.pressure,
            ins.rated_air_temperature,
            ins.rated_sea_temperature,
            ins.air_exposed_fraction,
        )
    ua_air, ua_sea = heat_mod.conductances(u_value, area, ins.air_exposed_fraction)
    leg = scenario.legs[0]
    heat = ua_air * (leg.air_temperature - t_sat) + ua_sea * (leg.sea_temperature - t_sat)
    liquid = tank.fill * volume * sat.rho_liquid
    vapour = (1.0 - tank.fill) * volume * sat.rho_vapour
    vented = heat / sat.latent_heat * (1.0 - sat.rho_vapour / sat.rho_liquid)
    rho_ref = table.at(table.temperature(tank.relief_set_pressure)).rho_liquid
    return {
        "tank_volume_m3": volume,
        "total_volume_m3": volume * tank.count,
        "tank_surface_m2": area,
        "initial_cargo_t": (liquid + vapour) * tank.count / 1000.0,
        "boiling_point_c": t_sat - T_ZERO_C,
        "liquid_density_kg_m3": sat.rho_liquid,
        "vapour_density_kg_m3": sat.rho_vapour,
        "latent_heat_kj_kg": sat.latent_heat / 1000.0,
        "loading_limit_pct": 100.0 * loading_limit(rho_ref, sat.rho_liquid),
        "relief_set_barg": pa_to_barg(tank.relief_set_pressure),
        "u_value_w_m2k": u_value,
        "heat_in_kw": heat * tank.count / 1000.0,
        "equivalent_bor_pct_day": 100.0 * vented * SECONDS_PER_DAY / liquid if liquid else 0.0,
    }

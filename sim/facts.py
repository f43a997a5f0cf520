"""Facts derived from a scenario before it runs (for the set-up screen).

Returned in trade units with unit-suffixed keys, like the run summary.
"""

from __future__ import annotations

import functools

from . import heat as heat_mod
from .igc import loading_limit
from .scenario import Scenario, cargo_table
from .units import SECONDS_PER_DAY, T_ZERO_C, pa_to_barg


def vented_kg_per_joule(scenario: Scenario, table, fill: float) -> float:
    """Boil-off vented per joule of heat by a tank held at its initial pressure [kg/J].

    A pure cargo vents :math:`1/h_{fg}\\,(1 - \\rho_v/\\rho_l)` per joule (the
    vapour that stays behind refills the volume the evaporated liquid freed).
    A mixture also spends heat raising its bubble temperature as the lighter
    components leave (LNG with nitrogen: the liquid warms at constant
    pressure), so the rate is taken from the mixture tank model itself: the
    vent flow that holds dp/dt = 0 at the loaded state, per joule of heat in.

    Parameters
    ----------
    scenario : Scenario
        The cargo (pure or mixture), tank shape and initial pressure.
    table : SaturationTable
        :func:`sim.scenario.cargo_table` of the scenario.
    fill : float
        Liquid fraction of the tank volume [-].
    """
    tank = scenario.tank
    if scenario.mole_fractions is None:
        sat = table.at(table.temperature(tank.pressure))
        return (1.0 - sat.rho_vapour / sat.rho_liquid) / sat.latent_heat
    return _mixture_vented_kg_per_joule(scenario.mole_fractions, tank.shape.volume(), fill,
                                        tank.pressure)


@functools.lru_cache(maxsize=64)
def _mixture_vented_kg_per_joule(fractions, volume: float, fill: float,
                                 pressure: float) -> float:
    """:func:`vented_kg_per_joule` of a mixture (cached: the model's first state
    builds a local property table, ~0.1 s, and the set-up page asks on every edit)."""
    from .mixture_table import loaded_mixture_tables
    from .models.mixture_equilibrium import MixtureEquilibriumModel

    # any heat will do: a0 is proportional to it, b_out does not depend on it
    model = MixtureEquilibriumModel(loaded_mixture_tables(fractions)[0], volume, 1.0, 0.0)
    y0 = model.initial_state(fill, pressure)
    state = model.evaluate(y0, model.table.temperature_max + 100.0, 0.0)
    a0, b_out, _ = model.pressure_rate_coefficients(state)
    return a0 / b_out / state.heat_in


def calibrated_u_value(scenario: Scenario, table) -> float:
    """U-value the scenario runs with [W/(m^2 K)]: given, or calibrated from a rated
    boil-off rate so that the tank held at its initial pressure at the rated
    ambient and fill vents that share of its liquid per day (see
    :func:`vented_kg_per_joule`)."""
    ins, tank = scenario.insulation, scenario.tank
    if ins.u_value is not None:
        return ins.u_value
    fill = ins.rated_fill if ins.rated_fill is not None else tank.fill
    return heat_mod.u_value_from_rated_bor(
        ins.rated_bor,
        table,
        tank.shape.volume(),
        tank.shape.surface_area(),
        fill,
        tank.pressure,
        ins.rated_air_temperature,
        ins.rated_sea_temperature,
        ins.air_exposed_fraction,
        vented_per_joule=vented_kg_per_joule(scenario, table, fill),
    )


def initial_facts(scenario: Scenario) -> dict:
    """Tank volume, cargo mass, boiling point, IGC loading limit, heat ingress and BOR.

    Heat ingress and the equivalent boil-off rate are for the first leg's
    ambient with the cargo at its initial temperature; the boil-off rate is
    the vented rate of a tank held at its initial pressure
    (:func:`vented_kg_per_joule`) over the initial liquid mass.
    """
    tank = scenario.tank
    table = cargo_table(scenario)
    volume = tank.shape.volume()
    area = tank.shape.surface_area()
    t_sat = table.temperature(tank.pressure)
    sat = table.at(t_sat)
    ins = scenario.insulation
    u_value = calibrated_u_value(scenario, table)
    ua_air, ua_sea = heat_mod.conductances(u_value, area, ins.air_exposed_fraction)
    leg = scenario.legs[0]
    heat = ua_air * (leg.air_temperature - t_sat) + ua_sea * (leg.sea_temperature - t_sat)
    liquid = tank.fill * volume * sat.rho_liquid
    vapour = (1.0 - tank.fill) * volume * sat.rho_vapour
    vented = heat * vented_kg_per_joule(scenario, table, tank.fill)
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

"""Heat ingress through tank insulation.

The insulation is one overall heat-transfer coefficient U over the whole tank
surface A. A share of the surface (``air_exposed_fraction``) sees the air
temperature of the current voyage leg, the rest the sea temperature:

.. math::

    \\dot Q = U A \\left[f_{air} (T_{air} - T) + (1 - f_{air}) (T_{sea} - T)\\right]

where T is the cargo temperature on the inner surface. Alternatively U is
calibrated from a rated boil-off rate, the vented boil-off (fraction of the
liquid cargo per day) of the tank held at its initial pressure at a rated
ambient. The usual rated ambient is 45 degC air and 32 degC sea, the upper
design ambient the IGC Code sets for pressure/temperature control (recalled
from the Code, not quoted).
"""

from __future__ import annotations

from .cargo import SaturationTable


def conductances(u_value: float, area: float, air_fraction: float) -> tuple[float, float]:
    """Split U*A between the air-exposed and sea-exposed surface.

    Parameters
    ----------
    u_value : float
        Overall heat-transfer coefficient of the insulation [W/(m^2 K)].
    area : float
        Heat-transfer surface of one tank [m^2].
    air_fraction : float
        Share of the surface that follows the air temperature [-].

    Returns
    -------
    tuple of float
        ``(ua_air, ua_sea)`` [W/K].
    """
    ua = u_value * area
    return ua * air_fraction, ua * (1.0 - air_fraction)


def u_value_from_rated_bor(
    rated_bor: float,
    table: SaturationTable,
    volume: float,
    area: float,
    fill: float,
    pressure: float,
    air_temperature: float,
    sea_temperature: float,
    air_fraction: float,
    vented_per_joule: float | None = None,
) -> float:
    """U-value that reproduces a rated boil-off rate.

    Parameters
    ----------
    rated_bor : float
        Vented boil-off as a fraction of the liquid cargo mass per second
        [1/s] (0.1 %/day is 0.001/86400).
    table : SaturationTable
        Cargo saturation properties.
    volume, area : float
        Tank volume [m^3] and heat-transfer surface [m^2].
    fill : float
        Liquid fraction of tank volume at the rating [-].
    pressure : float
        Tank pressure at the rating; cargo saturated at it [Pa].
    air_temperature, sea_temperature : float
        Rated ambient [K].
    air_fraction : float
        Share of the surface that follows the air temperature [-].
    vented_per_joule : float, optional
        Boil-off vented per joule of heat at constant pressure [kg/J]; by
        default the pure-cargo value :math:`(1 - \\rho_v/\\rho_l)/h_{fg}`
        (a mixture passes its own, see :func:`sim.facts.vented_kg_per_joule`).

    Returns
    -------
    float
        U-value [W/(m^2 K)].

    Notes
    -----
    A tank held at constant pressure vents
    :math:`\\dot m = \\dot Q / h_{fg}\\,(1 - \\rho_v/\\rho_l)` (the vapour
    that stays behind fills the volume the evaporated liquid freed), so

    .. math::

        U = \\frac{BOR\\; m_{liquid}\\; h_{fg}}{(1 - \\rho_v/\\rho_l)\\,A\\,\\Delta T}

    with the area-weighted temperature difference
    :math:`\\Delta T = f_{air} (T_{air} - T) + (1 - f_{air}) (T_{sea} - T)`.
    """
    sat = table.at(table.temperature(pressure))
    liquid_mass = fill * volume * sat.rho_liquid
    if vented_per_joule is None:
        vented_per_joule = (1.0 - sat.rho_vapour / sat.rho_liquid) / sat.latent_heat
    heat = rated_bor * liquid_mass / vented_per_joule
    delta_t = air_fraction * (air_temperature - sat.temperature) + (1.0 - air_fraction) * (
        sea_temperature - sat.temperature
    )
    if delta_t <= 0.0:
        raise ValueError(
            "rated ambient is not warmer than the cargo: a boil-off rate cannot be calibrated"
        )
    return heat / (area * delta_t)

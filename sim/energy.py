"""Heating value of cargo and boil-off, at one set of reference conditions.

Every energy figure of a run (energy loaded, lost, delivered; calorific
values at start and arrival) uses the ISO 6976 method (:mod:`sim.iso6976`) at

* combustion reference temperature 15 degC,
* metering reference 15 degC and 101.325 kPa (volume basis),

the standard reference conditions of ISO 13443 (common practice, no source
beyond the standard's title; LNG contracts also use 25/0 degC: change the two
constants below for those). Energies are gross (higher) heating values.
"""

from __future__ import annotations

from collections.abc import Mapping

from .iso6976 import COMPONENTS, calorific_values, joules_to_mmbtu

#: Combustion reference temperature [K].
COMBUSTION_TEMPERATURE = 288.15
#: Metering reference temperature [K] and pressure [Pa] (volume basis).
METERING_TEMPERATURE = 288.15
METERING_PRESSURE = 101_325.0
#: Words for the reference conditions, for outputs.
REFERENCE_TEXT = "ISO 6976, gross, combustion 15 degC, metering 15 degC / 101.325 kPa"


def component_gross_molar(name: str) -> float | None:
    """Gross calorific value of one mole of a component [J/mol]; None if not tabulated."""
    data = COMPONENTS.get(name)
    if data is None:
        return None
    return data.gross_molar[round(COMBUSTION_TEMPERATURE - 273.15, 2)]


def quality(fractions: Mapping[str, float]) -> dict | None:
    """Calorific values, Wobbe index and relative density of a composition.

    Returns trade units with unit-suffixed keys, or None if a component has no
    ISO 6976 value.
    """
    if any(name not in COMPONENTS for name, x in fractions.items() if x > 0.0):
        return None
    cv = calorific_values(
        {k: v for k, v in fractions.items() if v > 0.0}, COMBUSTION_TEMPERATURE,
        METERING_TEMPERATURE, METERING_PRESSURE,
    )
    return {
        "gcv_mj_kg": cv.gross_mass / 1e6,
        "ncv_mj_kg": cv.net_mass / 1e6,
        "gcv_mj_m3": cv.gross_volume / 1e6,
        "ncv_mj_m3": cv.net_volume / 1e6,
        "wobbe_mj_m3": cv.wobbe_gross / 1e6,
        "relative_density": cv.relative_density,
        "molar_mass_kg_kmol": cv.molar_mass * 1e3,
    }


def gj(energy: float) -> float:
    """[J] -> [GJ]."""
    return energy / 1e9


def mmbtu(energy: float) -> float:
    """[J] -> [MMBtu]."""
    return joules_to_mmbtu(energy)

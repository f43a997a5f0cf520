"""Unit conversions used at the edges (files, CLI, app), and physical constants.

Everything inside :mod:`sim` is SI: K, Pa (absolute), kg, m, s, W, J.
"""

from __future__ import annotations

import numpy as np

#: Standard atmosphere [Pa]; barg in this project is gauge against it.
P_ATM = 101_325.0
#: 0 degC [K]
T_ZERO_C = 273.15
SECONDS_PER_HOUR = 3600.0
SECONDS_PER_DAY = 86_400.0
#: Joules in one kilowatt-hour [J]
J_PER_KWH = 3.6e6


def c_to_k(temp_c):
    """Celsius to kelvin."""
    return (
        np.asarray(temp_c, dtype=float) + T_ZERO_C if np.ndim(temp_c) else float(temp_c) + T_ZERO_C
    )


def k_to_c(temp_k):
    """Kelvin to Celsius."""
    return (
        np.asarray(temp_k, dtype=float) - T_ZERO_C if np.ndim(temp_k) else float(temp_k) - T_ZERO_C
    )


def barg_to_pa(barg):
    """Gauge pressure in bar (against 1.01325 bar) to absolute pressure in Pa."""
    return (
        np.asarray(barg, dtype=float) * 1e5 + P_ATM if np.ndim(barg) else float(barg) * 1e5 + P_ATM
    )


def pa_to_barg(pa):
    """Absolute pressure in Pa to gauge pressure in bar (against 1.01325 bar)."""
    return (np.asarray(pa, dtype=float) - P_ATM) / 1e5 if np.ndim(pa) else (float(pa) - P_ATM) / 1e5


def kg_h_to_kg_s(kg_h):
    """kg/h to kg/s."""
    return kg_h / SECONDS_PER_HOUR


def kg_s_to_kg_h(kg_s):
    """kg/s to kg/h."""
    return kg_s * SECONDS_PER_HOUR


def kwh_per_kg_to_j_per_kg(kwh_kg):
    """Specific energy kWh/kg to J/kg."""
    return kwh_kg * J_PER_KWH

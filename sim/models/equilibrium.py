"""Equilibrium (homogeneous) tank model.

Liquid and vapour fill a rigid tank and share one temperature, the saturation
temperature of the tank pressure. The state of one tank is its cargo mass M
and internal energy U; the temperature follows from the mean density M/V and
the specific energy U/M.

Notes
-----
For a saturated two-phase mixture at temperature T in a rigid volume V,

.. math::

    m_v = \\frac{V - M v_l}{v_v - v_l}, \\qquad
    U(M, T) = M u_l + (V - M v_l)\\,\\frac{u_v - u_l}{v_v - v_l}

with specific volumes v = 1/rho of the saturated phases. The balances are

.. math::

    \\dot M = -\\dot m_{out}, \\qquad
    \\dot U = \\dot Q - \\dot m_{out} h_v - \\dot m_{rl} (h_v - h_l)

where :math:`\\dot m_{out}` is vapour leaving (fuel, oxidiser, relief) and
:math:`\\dot m_{rl}` vapour drawn by the reliquefaction plant and returned as
saturated liquid at tank pressure. Holding the pressure (dT/dt = 0) with
vapour leaving gives the classic vented rate
:math:`\\dot m = \\dot Q / h_{fg}\\,(1 - \\rho_v/\\rho_l)`.

The model stops being valid when the tank is liquid-full (no vapour left)
or the cargo approaches its critical point; the voyage stops there with an
event.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..cargo import SaturationTable


@dataclass
class TankState:
    """Everything the orchestrator needs about one tank at one instant (SI).

    Attributes
    ----------
    pressure : float  [Pa]
    liquid_temperature : float  [K]
    vapour_temperature : float  [K]
    fill : float  liquid volume over tank volume [-]
    liquid_mass, vapour_mass : float  [kg]
    heat_in : float  heat flowing into the tank from outside [W]
    surface_temperature : float  liquid at the free surface [K]; defaults to
        ``liquid_temperature`` (models without a stratified liquid)
    bulk_liquid_temperature : float  liquid below any warm surface layer [K];
        defaults to ``liquid_temperature``
    liquid_fractions, vapour_fractions : ndarray or None
        Mole fractions of liquid and vapour in the model's component order
        (mixture cargoes only) [-]
    """

    pressure: float
    liquid_temperature: float
    vapour_temperature: float
    fill: float
    liquid_mass: float
    vapour_mass: float
    heat_in: float
    # model internals used by the rate functions
    _extra: tuple = ()
    surface_temperature: float | None = None
    bulk_liquid_temperature: float | None = None
    liquid_fractions: np.ndarray | None = None
    vapour_fractions: np.ndarray | None = None

    def __post_init__(self):
        if self.surface_temperature is None:
            self.surface_temperature = self.liquid_temperature
        if self.bulk_liquid_temperature is None:
            self.bulk_liquid_temperature = self.liquid_temperature

    @property
    def cargo_mass(self) -> float:
        """Liquid plus vapour [kg]."""
        return self.liquid_mass + self.vapour_mass


class EquilibriumModel:
    """Homogeneous saturated tank: state ``[M, U]`` per tank.

    Parameters
    ----------
    table : SaturationTable
        Saturation properties of the cargo.
    volume : float
        Internal volume of one tank [m^3].
    ua_air, ua_sea : float
        Thermal conductance of the insulation toward the air and toward the
        sea [W/K].
    """

    name = "equilibrium"
    state_names = ("cargo_mass", "internal_energy")

    def __init__(
        self, table: SaturationTable, volume: float, ua_air: float, ua_sea: float, shape=None
    ):
        self.table = table
        self.volume = volume
        self.ua_air = ua_air
        self.ua_sea = ua_sea
        self.shape = shape
        self._last_temperature = 0.5 * (table.temperature_min + table.temperature_max)

    # -- set-up ------------------------------------------------------------
    def initial_state(self, fill: float, pressure: float) -> np.ndarray:
        """State of a tank filled to ``fill`` [-] with cargo saturated at ``pressure`` [Pa]."""
        sat = self.table.at(self.table.temperature(pressure))
        liquid = fill * self.volume * sat.rho_liquid
        vapour = (1.0 - fill) * self.volume * sat.rho_vapour
        self._last_temperature = sat.temperature
        return np.array([liquid + vapour, liquid * sat.u_liquid + vapour * sat.u_vapour])

    # -- thermodynamics ----------------------------------------------------
    def _temperature(self, mass: float, energy: float) -> tuple[float, list, list]:
        """Saturation temperature of the mixture with mean density M/V and energy U/M [K].

        Newton iteration on u_mix(T) at fixed density, started from the last
        answer (consecutive calls are close), with bisection as a safeguard.
        """
        table = self.table
        v_mean = self.volume / mass
        u_target = energy / mass
        t_lo, t_hi = table.temperature_min, table.temperature_max
        temp = min(max(self._last_temperature, t_lo), t_hi)
        for _ in range(40):
            v, s = table.raw(temp)
            v_l, v_v = 1.0 / v[2], math.exp(-v[1])
            dv_l, dv_v = -s[2] * v_l * v_l, -s[1] * v_v
            dv = v_v - v_l
            x = (v_mean - v_l) / dv
            du = v[6] - v[5]
            f = v[5] + x * du - u_target
            dx = (-dv_l * dv - (v_mean - v_l) * (dv_v - dv_l)) / (dv * dv)
            df = s[5] + dx * du + x * (s[6] - s[5])
            step = f / df if df > 0.0 else math.inf
            # The residual left by a step this small is ~1e-10 of u: accept
            # this point and reuse its properties instead of evaluating again.
            if abs(step) < 1e-10 * temp:
                break
            # keep a bracket so a bad Newton step falls back to bisection
            if f > 0.0:
                t_hi = temp
            else:
                t_lo = temp
            new = temp - step
            if not (t_lo <= new <= t_hi):
                new = 0.5 * (t_lo + t_hi)
            if t_hi - t_lo < 1e-12 * temp:
                break
            temp = new
        self._last_temperature = temp
        return temp, v, s

    def _temperature_many(self, mass: np.ndarray, energy: np.ndarray):
        """Vectorised :meth:`_temperature` for many states (outputs, not the RHS)."""
        table = self.table
        v_mean = self.volume / mass
        u_target = energy / mass
        t_lo = np.full_like(mass, table.temperature_min)
        t_hi = np.full_like(mass, table.temperature_max)
        temp = 0.5 * (t_lo + t_hi)
        for _ in range(60):
            v, s = table.raw_many(temp)
            v_l, v_v = 1.0 / v[2], np.exp(-v[1])
            dv_l, dv_v = -s[2] * v_l * v_l, -s[1] * v_v
            dv = v_v - v_l
            x = (v_mean - v_l) / dv
            du = v[6] - v[5]
            f = v[5] + x * du - u_target
            dx = (-dv_l * dv - (v_mean - v_l) * (dv_v - dv_l)) / (dv * dv)
            df = s[5] + dx * du + x * (s[6] - s[5])
            step = np.where(df > 0.0, f / np.where(df > 0.0, df, 1.0), np.inf)
            if np.all(np.abs(step) < 1e-10 * temp):
                break
            t_hi = np.where(f > 0.0, temp, t_hi)
            t_lo = np.where(f > 0.0, t_lo, temp)
            new = temp - step
            outside = ~((t_lo <= new) & (new <= t_hi))
            temp = np.where(outside, 0.5 * (t_lo + t_hi), new)
        return temp, v, s

    def evaluate(self, y, air_temperature: float, sea_temperature: float) -> TankState:
        """Tank state for a state vector ``[M, U]`` and the ambient temperatures [K]."""
        mass, energy = float(y[0]), float(y[1])
        temp, v, s = self._temperature(mass, energy)
        return self._state(mass, temp, v, s, air_temperature, sea_temperature, math.exp)

    def evaluate_many(self, y, air_temperature: float, sea_temperature: float) -> TankState:
        """Like :meth:`evaluate` for a 2-D array of states (one column each); fields are arrays."""
        mass, energy = np.asarray(y[0], dtype=float), np.asarray(y[1], dtype=float)
        temp, v, s = self._temperature_many(mass, energy)
        return self._state(mass, temp, v, s, air_temperature, sea_temperature, np.exp)

    def _state(self, mass, temp, v, s, air_temperature, sea_temperature, exp) -> TankState:
        pressure = exp(v[0])
        v_l, v_v = 1.0 / v[2], exp(-v[1])
        dv = v_v - v_l
        vapour = (self.volume - mass * v_l) / dv
        liquid = mass - vapour
        heat = self.ua_air * (air_temperature - temp) + self.ua_sea * (sea_temperature - temp)
        return TankState(
            pressure,
            temp,
            temp,
            liquid * v_l / self.volume,
            liquid,
            vapour,
            heat,
            (mass, v, s, v_l, v_v, dv),
        )

    def pressure_rate_coefficients(self, state: TankState) -> tuple[float, float, float]:
        """Coefficients of dp/dt = a0 - b_out*m_out - b_rl*m_rl.

        Returns ``(a0 [Pa/s], b_out [Pa/kg], b_rl [Pa/kg])``: the pressure rate
        with no withdrawal, and the pressure drop per kg of vapour leaving and
        per kg of vapour reliquefied. Pressure control solves this affine
        relation for the rate that holds a set pressure.
        """
        mass, v, s, v_l, v_v, dv = state._extra
        dv_l, dv_v = -s[2] * v_l * v_l, -s[1] * v_v
        du = v[6] - v[5]
        g = du / dv
        dg = ((s[6] - s[5]) * dv - du * (dv_v - dv_l)) / (dv * dv)
        # dU/dM at fixed T and dU/dT at fixed M, from U(M, T) in the module notes
        du_dm = v[5] - v_l * g
        heat_capacity = mass * s[5] - mass * dv_l * g + (self.volume - mass * v_l) * dg
        dp_dtemp = state.pressure * s[0]
        scale = dp_dtemp / heat_capacity
        return state.heat_in * scale, (v[4] - du_dm) * scale, (v[4] - v[3]) * scale

    def derivatives(self, state: TankState, vapour_out: float, reliquefied: float) -> list[float]:
        """d[M, U]/dt for vapour leaving and vapour reliquefied [kg/s]."""
        v = state._extra[1]
        return [-vapour_out, state.heat_in - vapour_out * v[4] - reliquefied * (v[4] - v[3])]

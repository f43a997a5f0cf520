"""Design and sizing: reliquefaction plant size, holding time, IGC loading-limit table.

These answer the inverse questions: not "what happens on this voyage" but
"how big must the plant be", "how long can the tanks be held", "how full may
they be loaded".

Reliquefaction plant at steady state
------------------------------------
The plant draws saturated vapour from the tank at the hold pressure p_h and
returns it as saturated liquid at the same pressure. In the equilibrium tank
model (:mod:`sim.models.equilibrium`) a tank of cargo mass M and internal
energy U obeys

.. math::

    \\dot M = -\\dot m_{out}, \\qquad
    \\dot U = \\dot Q - \\dot m_{out} h_v - \\dot m_{rl} (h_v - h_l)

With nothing leaving (no fuel, no oxidiser, no relief) M is constant, so the
pressure (hence the temperature T_h) stays put exactly when U does:

.. math::

    \\dot m_{rl} = \\frac{\\dot Q(T_h)}{h_{fg}(T_h)}, \\qquad
    \\dot Q = U_{ins} A\\,[f_{air}(T_{air} - T_h) + (1 - f_{air})(T_{sea} - T_h)]

so the smallest plant that holds p_h indefinitely condenses Q/h_fg, and its
refrigeration duty is m_rl * h_fg = Q. Neither depends on the fill: the heat
ingress here is U*A over the whole tank surface.

Engines taking vapour at a rate m_f help. Vapour leaving at fixed temperature
removes h_fg / (1 - rho_v/rho_l) per kg (the vented-boil-off relation: the
vapour left behind must refill the volume the evaporated liquid freed), so
holding needs only

.. math::

    \\dot m_{rl} = \\frac{\\dot Q}{h_{fg}} - \\frac{\\dot m_f}{1 - \\rho_v/\\rho_l}.

By default no fuel is credited (conservative: engines stop, ships wait at
anchor); on request the lowest fuel demand of the voyage's legs is credited,
and only if the engines draw at the hold pressure (fuel floor at or below it).
The oxidiser is never credited: it is a disposal route, not pressure control
a designer should count on.

Plant through an outage
-----------------------
A plant that trips for some hours lets the pressure climb whatever its size;
after the trip, a bigger plant pulls it back faster, which matters when
outages repeat, and a plant below the steady capacity still gets through a
short enough voyage. The smallest capacity whose voyage (the scenario's legs
and reliquefaction outages, at design ambient, no fuel unless credited, no
oxidiser) never lifts the relief valve is found by bisection on full voyage
runs.

Holding time
------------
Time from a start (fill, pressure, ambient) to the first relief-valve lift
with all pressure control lost: the scenario is rebuilt with one leg at that
ambient and no fuel, plant or oxidiser, and the voyage engine runs it, so the
answer is the engine's own time to relief for that start.

The U-value is fixed at the scenario's own (a rated boil-off is calibrated at
the scenario's fill and pressure once), so curves against fill or pressure
show the effect of fill or pressure, not of a recalibrated insulation.

IGC loading limit
-----------------
LL = FL * rho_R / rho_L with FL = 0.98, rho_R the liquid density at the
reference temperature (vapour pressure equal to the relief set pressure) and
rho_L at the loading temperature (IGC Code chapter 15, recalled, not quoted).

The design ambient defaults to 45 degC air and 32 degC sea, the upper design
ambient the IGC Code sets for pressure/temperature control (recalled from the
Code, not quoted).
"""

from __future__ import annotations

import copy
import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from . import CAUTION
from .errors import InputError
from .units import (
    P_ATM,
    SECONDS_PER_DAY,
    SECONDS_PER_HOUR,
    T_ZERO_C,
    barg_to_pa,
    pa_to_barg,
)

#: Upper design ambient air temperature [degC] (IGC Code, recalled, not quoted).
DESIGN_AIR_C = 45.0
#: Upper design ambient sea temperature [degC] (IGC Code, recalled, not quoted).
DESIGN_SEA_C = 32.0
#: Default horizon of a holding-time run [days].
HOLDING_HORIZON_DAYS = 365.0
#: Relative width at which the outage bisection stops [-].
CAPACITY_TOLERANCE = 1e-3
#: Doublings tried before the outage search gives up (2**12 times the start).
MAX_DOUBLINGS = 12
#: Largest design margin [%] (beyond it the design capacity is no longer a plant
#: size; at 1e308 % it is infinite).
MAX_MARGIN_PCT = 1000.0
#: Most plant units, duty and stand-by together, that ``unit_kg_h`` may lead to.
MAX_UNITS = 1000


class SizingError(InputError):
    """Bad sizing input: each problem names the option, the value and what is allowed."""


# ---------------------------------------------------------------------------
# Physics (SI)
# ---------------------------------------------------------------------------


def heat_ingress(ua_air: float, ua_sea: float, temperature: float, air_temperature: float,
                 sea_temperature: float) -> float:
    """Heat flowing into one tank through its insulation.

    Parameters
    ----------
    ua_air, ua_sea : float
        Conductance toward the air and toward the sea [W/K].
    temperature : float
        Cargo temperature [K].
    air_temperature, sea_temperature : float
        Ambient [K].

    Returns
    -------
    float
        Heat in [W]; negative if the ambient is colder than the cargo.
    """
    return ua_air * (air_temperature - temperature) + ua_sea * (sea_temperature - temperature)


def steady_reliquefaction_rate(heat_in: float, latent_heat: float) -> float:
    """Vapour a plant must condense to hold a closed tank's pressure, Q / h_fg.

    Parameters
    ----------
    heat_in : float
        Heat ingress at the hold temperature [W].
    latent_heat : float
        h_v - h_l at the hold temperature [J/kg].

    Returns
    -------
    float
        Condensing rate [kg/s]; 0 if no heat flows in.

    Examples
    --------
    100 kW into propane at its normal boiling point (h_fg about 426 kJ/kg,
    CoolProp) needs about 0.235 kg/s, 845 kg/h:

    >>> round(steady_reliquefaction_rate(100e3, 426e3) * 3600, 1)
    845.1
    """
    return max(heat_in, 0.0) / latent_heat


def fuel_credit_rate(fuel_rate: float, rho_vapour: float, rho_liquid: float) -> float:
    """Plant capacity that vapour burned as fuel stands in for at fixed pressure.

    Parameters
    ----------
    fuel_rate : float
        Vapour the engines take [kg/s].
    rho_vapour, rho_liquid : float
        Saturated densities at the hold temperature [kg/m^3].

    Returns
    -------
    float
        Equivalent reliquefaction rate m_f / (1 - rho_v/rho_l) [kg/s].
    """
    return fuel_rate / (1.0 - rho_vapour / rho_liquid)


def closed_tank_time_estimate(table, volume: float, fill: float, pressure: float,
                              relief_pressure: float, ua_air: float, ua_sea: float,
                              air_temperature: float, sea_temperature: float,
                              points: int = 64) -> float:
    """Rough time for a closed equilibrium tank to warm from ``pressure`` to ``relief_pressure``.

    Integrates dt = dU / Q(T) along the saturation line at constant mass.
    Used only to choose how long a holding-time run must be; the holding
    time itself always comes from the voyage engine.

    Parameters
    ----------
    table : SaturationTable
    volume : float  [m^3]
    fill : float  [-]
    pressure, relief_pressure : float  [Pa]
    ua_air, ua_sea : float  [W/K]
    air_temperature, sea_temperature : float  [K]
    points : int  quadrature points

    Returns
    -------
    float
        Time [s]; ``inf`` if the ambient cannot warm the tank to the relief
        pressure.
    """
    t0 = table.temperature(pressure)
    t1 = table.temperature(min(relief_pressure, table.pressure_max))
    if t1 <= t0:
        return 0.0
    start = table.at(t0)
    mass = fill * volume * start.rho_liquid + (1.0 - fill) * volume * start.rho_vapour
    temps = np.linspace(t0, t1, points)
    props = table.columns(temps)
    v_l, v_v = 1.0 / props["rho_liquid"], 1.0 / props["rho_vapour"]
    energy = mass * props["u_liquid"] + (volume - mass * v_l) * (
        props["u_vapour"] - props["u_liquid"]) / (v_v - v_l)
    mid = 0.5 * (temps[1:] + temps[:-1])
    heat = ua_air * (air_temperature - mid) + ua_sea * (sea_temperature - mid)
    if np.any(heat <= 0.0):
        return math.inf
    return float(np.sum(np.diff(energy) / heat))


# ---------------------------------------------------------------------------
# Scenario dicts for the design runs (file units, like sim.whatif)
# ---------------------------------------------------------------------------


def _scenario(data: dict, what: str = ""):
    from .scenario import ScenarioError, parse_scenario

    try:
        scenario = parse_scenario(data)
    except ScenarioError as exc:
        if not what:
            raise
        raise SizingError([f"{what}: {p}" for p in exc.problems]) from None
    if scenario.mole_fractions is not None:
        raise SizingError(
            "[cargo.mole_fractions]: plant sizing works on pure cargoes; size with the main "
            'component as the cargo (e.g. fluid = "methane" for LNG, "propane" for LPG) and '
            "check the mixture with voyage runs")
    return scenario


def u_value_of(data: dict) -> float:
    """The U-value a scenario dict runs with [W/(m^2 K)] (a rated BOR calibrated once)."""
    from .facts import initial_facts

    return initial_facts(_scenario(data))["u_value_w_m2k"]


def _pin_insulation(out: dict, u_w_m2k: float) -> None:
    ins = out.get("insulation") or {}
    pinned = {"u_w_m2k": float(u_w_m2k)}
    if "air_exposed_pct" in ins:
        pinned["air_exposed_pct"] = ins["air_exposed_pct"]
    out["insulation"] = pinned


def holding_dict(data: dict, *, u_w_m2k: float, air_c: float, sea_c: float, days: float,
                 fill_pct: float | None = None, pressure_barg: float | None = None,
                 relief_set_barg: float | None = None) -> dict:
    """Scenario dict of a holding-time run: one leg, no pressure control but the relief valve.

    Parameters
    ----------
    data : dict
        Base scenario (file units); not changed.
    u_w_m2k : float
        Insulation U-value to use [W/(m2 K)] (replaces a rated boil-off).
    air_c, sea_c : float
        Ambient of the single leg [degC].
    days : float
        Length of the run [days].
    fill_pct, pressure_barg, relief_set_barg : float, optional
        Start and relief setting; the scenario's own by default.

    Returns
    -------
    dict
        Edited copy: [reliquefaction], [oxidiser] and [fuel] removed, one
        leg without fuel, [[mixing]] entries inside the run kept.
    """
    out = copy.deepcopy(data)
    for key in ("reliquefaction", "oxidiser", "fuel"):
        out.pop(key, None)
    tank = out.setdefault("tank", {})
    for key, value in (("fill_pct", fill_pct), ("pressure_barg", pressure_barg),
                       ("relief_set_barg", relief_set_barg)):
        if value is not None:
            tank[key] = value
    _pin_insulation(out, u_w_m2k)
    out["leg"] = [{"name": "Holding, no pressure control", "days": float(days),
                   "air_c": float(air_c), "sea_c": float(sea_c)}]
    mixing = [m for m in out.get("mixing", []) if isinstance(m, dict) and m.get("day", 0) < days]
    if mixing:
        out["mixing"] = mixing
    else:
        out.pop("mixing", None)
    out["title"] = f"{data.get('title', 'Scenario')} | holding time"
    return out


def design_voyage_dict(data: dict, *, u_w_m2k: float, capacity_kg_h: float, hold_barg: float,
                       air_c: float | None, sea_c: float | None, fuel_credit: bool = False,
                       outages: list | None = None) -> dict:
    """Scenario dict of the voyage a plant is sized through.

    Parameters
    ----------
    data : dict
        Base scenario (file units).
    u_w_m2k : float
        U-value [W/(m2 K)].
    capacity_kg_h, hold_barg : float
        The plant tried [kg/h, whole ship] and its hold pressure [barg].
    air_c, sea_c : float or None
        Ambient of every leg [degC]; None keeps each leg's own.
    fuel_credit : bool
        Keep the legs' fuel demand and [fuel] settings; otherwise no gas is burned.
    outages : list of dict, optional
        ``[[reliquefaction.outage]]`` entries; the scenario's own by default.

    Returns
    -------
    dict
        Edited copy with no oxidiser.
    """
    out = copy.deepcopy(data)
    out.pop("oxidiser", None)
    if not fuel_credit:
        out.pop("fuel", None)
    legs = []
    for leg in out.get("leg", []):
        leg = dict(leg)
        if air_c is not None:
            leg["air_c"] = float(air_c)
        if sea_c is not None:
            leg["sea_c"] = float(sea_c)
        if not fuel_credit:
            leg.pop("fuel_kg_h", None)
        legs.append(leg)
    out["leg"] = legs
    _pin_insulation(out, u_w_m2k)
    plant = dict(out.get("reliquefaction") or {})
    plant["capacity_kg_h"] = float(capacity_kg_h)
    plant["hold_barg"] = float(hold_barg)
    if outages is not None:
        plant["outage"] = copy.deepcopy(outages)
    if not plant.get("outage"):
        plant.pop("outage", None)
    out["reliquefaction"] = plant
    out["title"] = f"{data.get('title', 'Scenario')} | plant {capacity_kg_h:.6g} kg/h"
    return out


def steady_hold_dict(data: dict, *, u_w_m2k: float, capacity_kg_h: float, hold_barg: float,
                     air_c: float, sea_c: float, days: float) -> dict:
    """Scenario dict that starts at the hold pressure with a plant of a given size, no outage.

    One leg at the given ambient, no fuel, no oxidiser: the check that a plant
    holds the pressure (or, a little smaller, lets it rise).
    """
    out = design_voyage_dict(data, u_w_m2k=u_w_m2k, capacity_kg_h=capacity_kg_h,
                             hold_barg=hold_barg, air_c=air_c, sea_c=sea_c, outages=[])
    out["tank"]["pressure_barg"] = float(hold_barg)
    out["leg"] = [{"name": "Design ambient", "days": float(days), "air_c": float(air_c),
                   "sea_c": float(sea_c)}]
    out.pop("mixing", None)
    return out


# ---------------------------------------------------------------------------
# Holding time
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class HoldingTime:
    """Time to the first relief-valve lift with all pressure control lost.

    Attributes
    ----------
    hours : float or None
        Time to the first lift [h]; None if the valve does not lift in the run.
    horizon_days : float
        Longest run asked for [days].
    run_days : float
        Length of the run the answer comes from [days] (the run is cut short
        of the horizon when an estimate shows the lift comes well before).
    status, message : str
        The run's status and message (e.g. ``stopped``, ``tank became liquid-full``).
    """

    hours: float | None
    horizon_days: float
    run_days: float
    status: str
    message: str

    @property
    def note(self) -> str:
        """Plain words for a run without a lift ('' when the valve lifts)."""
        if self.hours is not None:
            return ""
        if self.status == "stopped":
            return f"no relief lift: {self.message} first"
        if self.status == "failed":
            return f"run failed: {self.message}"
        return f"the relief valve does not lift within {self.horizon_days:g} days"


def holding_time(data: dict, *, air_c: float = DESIGN_AIR_C, sea_c: float = DESIGN_SEA_C,
                 horizon_days: float = HOLDING_HORIZON_DAYS, fill_pct: float | None = None,
                 pressure_barg: float | None = None, relief_set_barg: float | None = None,
                 u_w_m2k: float | None = None) -> HoldingTime:
    """Holding time from a start, all pressure control lost (the voyage engine's answer).

    Parameters
    ----------
    data : dict
        Scenario (file units).
    air_c, sea_c : float
        Ambient [degC]; the IGC upper design ambient by default.
    horizon_days : float
        Longest time looked at [days].
    fill_pct, pressure_barg, relief_set_barg : float, optional
        Start fill [%], start pressure [barg] and relief setting [barg]; the
        scenario's own by default.
    u_w_m2k : float, optional
        U-value [W/(m2 K)]; by default the one the scenario runs with.

    Returns
    -------
    HoldingTime
        ``hours`` equals ``simulate(...).summary["time_to_relief_h"]`` of the
        scenario built by :func:`holding_dict` with ``days = run_days``
        (also of the scenario's own dict with that single leg and
        :func:`sim.whatif.fail_control` at day 0).

    Raises
    ------
    sim.scenario.ScenarioError
        If the start is invalid (e.g. a pressure where the cargo cannot be liquid).
    """
    from .heat import conductances
    from .voyage import simulate

    if u_w_m2k is None:
        u_w_m2k = u_value_of(data)
    start = dict(fill_pct=fill_pct, pressure_barg=pressure_barg, relief_set_barg=relief_set_barg)
    scenario = _scenario(holding_dict(data, u_w_m2k=u_w_m2k, air_c=air_c, sea_c=sea_c,
                                      days=horizon_days, **start))
    from .cargo import saturation_table

    tank = scenario.tank
    ua_air, ua_sea = conductances(u_w_m2k, tank.shape.surface_area(),
                                  scenario.insulation.air_exposed_fraction)
    leg = scenario.legs[0]
    estimate = closed_tank_time_estimate(
        saturation_table(scenario.cargo), tank.shape.volume(), tank.fill, tank.pressure,
        tank.relief_set_pressure, ua_air, ua_sea, leg.air_temperature, leg.sea_temperature)
    horizons = [float(horizon_days)]
    if math.isfinite(estimate):
        short = math.ceil(1.25 * estimate / SECONDS_PER_DAY + 1.0)
        if short < horizon_days:
            horizons.insert(0, float(short))
    for days in horizons:
        run = scenario if days == horizon_days else _scenario(holding_dict(
            data, u_w_m2k=u_w_m2k, air_c=air_c, sea_c=sea_c, days=days, **start))
        result = simulate(run)
        hours = result.summary["time_to_relief_h"]
        if hours is not None or result.status != "completed":
            break
    return HoldingTime(hours, float(horizon_days), days, result.status, result.message)


#: Holding-time curves: key -> axis label.
CURVES = {
    "fill_pct": "Start fill [% of tank volume]",
    "air_c": "Air temperature [°C] (sea at design)",
    "u_w_m2k": "Insulation U-value [W/(m² K)]",
    "relief_set_barg": "Relief set pressure [barg]",
}


def default_curve_values(data: dict, u_w_m2k: float, air_c: float) -> dict[str, list[float]]:
    """Values of each holding-time curve around a scenario's own setting.

    Fill from 50 % to 98 % plus the scenario's fill; air from 40 K below the
    design air to it in 5 K steps; U from half to twice the scenario's; relief
    setting from a quarter to three times the scenario's margin above the
    start pressure (within the cargo's range).
    """
    from .cargo import saturation_table

    tank = data["tank"]
    fill0 = float(tank["fill_pct"])
    fills = sorted({50.0, 60.0, 70.0, 80.0, 90.0, 95.0, 98.0, fill0})
    airs = [a for a in (air_c - 40.0 + 5.0 * i for i in range(9)) if -60.0 <= a <= 60.0]
    us = [u_w_m2k * f for f in (0.5, 0.75, 1.0, 1.25, 1.5, 2.0)]
    p0, r0 = float(tank["pressure_barg"]), float(tank["relief_set_barg"])
    table = saturation_table(data["cargo"]["fluid"])
    top = math.floor(pa_to_barg(table.pressure_max) * 100.0) / 100.0 - 0.01
    span = max(r0 - p0, 0.05)
    reliefs = sorted({round(min(p0 + span * f, top), 4) for f in (0.25, 0.5, 0.75, 1.5, 2.0, 3.0)}
                     | {r0})
    reliefs = [r for r in reliefs if r > p0]
    return {"fill_pct": fills, "air_c": airs, "u_w_m2k": us, "relief_set_barg": reliefs}


def holding_curves(data: dict, *, air_c: float = DESIGN_AIR_C, sea_c: float = DESIGN_SEA_C,
                   horizon_days: float = HOLDING_HORIZON_DAYS,
                   values: dict[str, list[float]] | None = None,
                   u_w_m2k: float | None = None) -> list[dict]:
    """Holding time against fill, air temperature, U-value and relief setting.

    Each curve changes one input from the scenario's start at the design
    ambient; everything else stays.

    Parameters
    ----------
    data : dict
        Scenario (file units).
    air_c, sea_c : float
        Design ambient [degC].
    horizon_days : float
        Longest run [days].
    values : dict, optional
        Curve key (``fill_pct``, ``air_c``, ``u_w_m2k``, ``relief_set_barg``)
        -> values; :func:`default_curve_values` by default.
    u_w_m2k : float, optional
        The scenario's U-value, if already known.

    Returns
    -------
    list of dict
        Rows ``{curve, value, holding_time_h, status, note}``; a start that
        fails validation gives ``status = "invalid"`` and the problem in ``note``.
    """
    from .scenario import ScenarioError

    if u_w_m2k is None:
        u_w_m2k = u_value_of(data)
    values = values or default_curve_values(data, u_w_m2k, air_c)
    rows = []
    for curve, xs in values.items():
        if curve not in CURVES:
            raise SizingError(f"holding-time curve {curve!r} unknown; allowed: "
                              + ", ".join(CURVES))
        for x in xs:
            kwargs: dict[str, Any] = dict(air_c=air_c, sea_c=sea_c, horizon_days=horizon_days,
                                          u_w_m2k=u_w_m2k)
            if curve == "air_c":
                kwargs["air_c"] = x
            elif curve == "u_w_m2k":
                kwargs["u_w_m2k"] = x
            else:
                kwargs[curve] = x
            try:
                ht = holding_time(data, **kwargs)
            except ScenarioError as exc:
                rows.append({"curve": curve, "value": x, "holding_time_h": None,
                             "status": "invalid", "note": "; ".join(exc.problems)})
                continue
            rows.append({"curve": curve, "value": x, "holding_time_h": ht.hours,
                         "status": ht.status, "note": ht.note})
    return rows


# ---------------------------------------------------------------------------
# IGC loading-limit table
# ---------------------------------------------------------------------------


def loading_limit_table(cargo: str, relief_set_pressure: float, temperatures=None,
                        filling_limit: float | None = None) -> dict:
    """IGC loading limit against loading temperature for one relief setting.

    Densities come straight from CoolProp (HEOS), not from the spline tables.

    Parameters
    ----------
    cargo : str
        Catalogue name.
    relief_set_pressure : float
        Relief-valve set pressure [Pa, absolute].
    temperatures : array-like, optional
        Loading temperatures [K]; by default from the saturation temperature at
        one atmosphere (or the lowest covered) up to the reference
        temperature, in round steps of 0.25 to 5 K (at most about 60 rows),
        with the reference temperature itself last.
    filling_limit : float, optional
        FL [-]; :data:`sim.igc.FILLING_LIMIT` (0.98) by default.

    Returns
    -------
    dict
        ``reference_temperature`` [K], ``reference_density`` [kg/m^3],
        ``filling_limit`` [-], and arrays ``loading_temperature`` [K],
        ``loading_pressure`` [Pa], ``loading_density`` [kg/m^3],
        ``loading_limit`` [-].

    Notes
    -----
    LL = FL * rho_R / rho_L; rho_R at the temperature whose vapour pressure
    equals the relief set pressure (IGC Code chapter 15, recalled, not quoted).
    """
    import CoolProp

    from .cargo import abstract_state, cargo_info, saturation_table
    from .igc import FILLING_LIMIT, loading_limit

    fl = FILLING_LIMIT if filling_limit is None else filling_limit
    table = saturation_table(cargo)
    if not table.contains_pressure(relief_set_pressure):
        raise SizingError(
            f"relief set pressure {pa_to_barg(relief_set_pressure):.3f} barg: outside the "
            f"range where {cargo} can be liquid ({pa_to_barg(table.pressure_min):.3f} to "
            f"{pa_to_barg(table.pressure_max):.3f} barg)")
    state = abstract_state(cargo_info(cargo).coolprop_name)
    state.update(CoolProp.PQ_INPUTS, relief_set_pressure, 0.0)
    t_ref, rho_ref = state.T(), state.rhomass()
    if temperatures is None:
        t_low = min(table.temperature(max(P_ATM, table.pressure_min * 1.001)), t_ref)
        span = t_ref - t_low
        # the first step giving at most 60 rows: 0.25 K for LNG's narrow range,
        # 1 K for refrigerated LPG, up to 5 K for pressurised cargoes
        step = next((s for s in (0.25, 0.5, 1.0, 2.0) if span / s <= 60.0), 5.0)
        first = math.ceil((t_low - T_ZERO_C) / step) * step + T_ZERO_C
        temps = list(np.arange(first, t_ref - 1e-6, step)) + [t_ref]
        if not temps or temps[0] > t_low + 1e-9:
            temps = [t_low] + temps
    else:
        temps = [float(t) for t in np.atleast_1d(temperatures)]
    rho, pres = [], []
    for t in temps:
        if not table.contains_temperature(t):
            raise SizingError(f"loading temperature {t - T_ZERO_C:.2f} degC: outside the range "
                              f"where {cargo} can be liquid ({table.temperature_min - T_ZERO_C:.2f}"
                              f" to {table.temperature_max - T_ZERO_C:.2f} degC)")
        state.update(CoolProp.QT_INPUTS, 0.0, float(t))
        rho.append(state.rhomass())
        pres.append(state.p())
    rho_arr = np.array(rho)
    return {
        "reference_temperature": t_ref,
        "reference_density": rho_ref,
        "filling_limit": fl,
        "loading_temperature": np.array(temps, dtype=float),
        "loading_pressure": np.array(pres),
        "loading_density": rho_arr,
        "loading_limit": np.array([loading_limit(rho_ref, r, fl) for r in rho_arr]),
    }


def loading_limit_rows(table: dict) -> list[dict]:
    """Rows of a loading-limit table in file units (for CSV)."""
    return [{
        "loading_temp_c": float(t - T_ZERO_C),
        "loading_pressure_barg": float(pa_to_barg(p)),
        "liquid_density_kg_m3": float(r),
        "loading_limit_pct": float(100.0 * ll),
    } for t, p, r, ll in zip(table["loading_temperature"], table["loading_pressure"],
                             table["loading_density"], table["loading_limit"], strict=True)]


# ---------------------------------------------------------------------------
# Plant sizing
# ---------------------------------------------------------------------------


@dataclass
class Sizing:
    """Everything ``size`` produces.

    Attributes
    ----------
    summary : dict  the ``sizing.json`` content (file units)
    curves : list[dict]  holding-time curve rows (empty if not asked for)
    loading_limits : dict  from :func:`loading_limit_table`
    outage_runs : list[tuple[float, bool]]  capacities tried [kg/h] and whether each kept
        the relief valve shut
    """

    summary: dict
    curves: list[dict] = field(default_factory=list)
    loading_limits: dict = field(default_factory=dict)
    outage_runs: list = field(default_factory=list)


def _check_options(design_air_c, design_sea_c, margin_pct, unit_kg_h, spare_units, horizon_days,
                   specific_power_kwh_kg, hold_barg) -> None:
    from .scenario import SCHEMA

    problems = []
    air, sea = SCHEMA["leg"]["air_c"], SCHEMA["leg"]["sea_c"]
    for name, value, spec in (("--design-air-c", design_air_c, air),
                              ("--design-sea-c", design_sea_c, sea)):
        if not (isinstance(value, int | float) and math.isfinite(value) and spec.in_range(value)):
            problems.append(f"{name} {value}: must be {spec.range_text()}")
    checks = (
        ("--margin-pct", margin_pct, lambda x: 0.0 <= x <= MAX_MARGIN_PCT,
         f"a number at or above 0 and at most {MAX_MARGIN_PCT:g} (percent)"),
        ("--unit-kg-h", unit_kg_h, lambda x: x > 0.0, "a number above 0 (kg/h per unit)"),
        ("--horizon-days", horizon_days, lambda x: 0.0 < x <= 3650.0,
         "above 0 and at most 3650 (days)"),
        ("--specific-power-kwh-kg", specific_power_kwh_kg, lambda x: x >= 0.0,
         "a number at or above 0 (kWh/kg)"),
        ("--hold-barg", hold_barg, lambda x: True, "a number (barg)"),
    )
    for name, value, ok, allowed in checks:
        if value is None:
            continue
        if not (isinstance(value, int | float) and math.isfinite(value) and ok(value)):
            problems.append(f"{name} {value}: must be {allowed}")
    if spare_units is not None and (isinstance(spare_units, bool) or not isinstance(
            spare_units, int) or not 0 <= spare_units < MAX_UNITS):
        problems.append(f"--spare-units {spare_units}: must be a whole number at or above 0 "
                        f"and below {MAX_UNITS}")
    if problems:
        raise SizingError(problems)


def size_plant(data: dict, *, design_air_c: float = DESIGN_AIR_C,
               design_sea_c: float = DESIGN_SEA_C, hold_barg: float | None = None,
               fuel_credit: bool = False, margin_pct: float = 0.0,
               unit_kg_h: float | None = None, spare_units: int = 1,
               specific_power_kwh_kg: float | None = None,
               horizon_days: float = HOLDING_HORIZON_DAYS, voyage_ambient: bool = False,
               curves: bool = True, tolerance: float = CAPACITY_TOLERANCE) -> Sizing:
    """Size a reliquefaction plant for a scenario and work out its holding times.

    Parameters
    ----------
    data : dict
        Scenario (file units), e.g. ``Scenario.raw``.
    design_air_c, design_sea_c : float
        Design ambient [degC]; IGC upper design ambient 45 / 32 by default.
    hold_barg : float, optional
        Pressure the plant holds [barg]; by default the scenario's
        ``reliquefaction.hold_barg``, or its initial pressure if it has no plant.
    fuel_credit : bool
        Credit the lowest leg fuel demand (see the module notes); off by default.
    margin_pct : float
        Design margin on the required capacity [%].
    unit_kg_h : float, optional
        Capacity of one plant unit [kg/h]; gives the number of units.
    spare_units : int
        Stand-by units on top of those needed (1: N+1).
    specific_power_kwh_kg : float, optional
        Electrical energy per kg condensed [kWh/kg]; by default the scenario's.
    horizon_days : float
        Longest holding-time run [days].
    voyage_ambient : bool
        Run the outage voyage at each leg's own ambient instead of the design ambient.
    curves : bool
        Also compute the holding-time curves.
    tolerance : float
        Relative width at which the outage bisection stops [-].

    Returns
    -------
    Sizing

    Raises
    ------
    SizingError
        For an option out of range or a hold pressure the scenario cannot take.
    sim.scenario.ScenarioError
        If the scenario itself is invalid.
    """
    from .cargo import saturation_table
    from .facts import initial_facts
    from .heat import conductances
    from .units import c_to_k

    _check_options(design_air_c, design_sea_c, margin_pct, unit_kg_h, spare_units, horizon_days,
                   specific_power_kwh_kg, hold_barg)
    base = _scenario(data)
    try:
        facts = initial_facts(base)
    except ValueError as exc:  # e.g. a rated boil-off that cannot be calibrated
        raise SizingError(f"insulation: {exc}") from None
    u_w_m2k = facts["u_value_w_m2k"]
    table = saturation_table(base.cargo)
    tank = base.tank
    plant_raw = data.get("reliquefaction") if isinstance(data.get("reliquefaction"), dict) else None

    if hold_barg is not None:
        hold, hold_source = float(hold_barg), "--hold-barg"
    elif base.reliquefaction is not None:
        hold, hold_source = float(plant_raw["hold_barg"]), "scenario reliquefaction.hold_barg"
    else:
        hold = float(data["tank"]["pressure_barg"])
        hold_source = ("initial pressure tank.pressure_barg (the scenario has no "
                       "[reliquefaction]; give --hold-barg to choose another)")
    # Validate the hold pressure the way a scenario file would be.
    check = design_voyage_dict(data, u_w_m2k=u_w_m2k, capacity_kg_h=0.0, hold_barg=hold,
                               air_c=design_air_c, sea_c=design_sea_c, fuel_credit=fuel_credit)
    _scenario(check, f"hold pressure {hold:g} barg ({hold_source})")

    if specific_power_kwh_kg is None and plant_raw is not None \
            and "specific_power_kwh_kg" in plant_raw:
        specific_power_kwh_kg = float(plant_raw["specific_power_kwh_kg"])

    count = tank.count
    hold_pa = barg_to_pa(hold)
    t_hold = table.temperature(hold_pa)
    sat = table.at(t_hold)
    ua_air, ua_sea = conductances(u_w_m2k, tank.shape.surface_area(),
                                  base.insulation.air_exposed_fraction)
    heat = heat_ingress(ua_air, ua_sea, t_hold, c_to_k(design_air_c), c_to_k(design_sea_c))
    steady = count * steady_reliquefaction_rate(heat, sat.latent_heat)  # kg/s, whole ship

    credit = 0.0
    credited_fuel = 0.0
    notes = []
    if fuel_credit:
        credited_fuel = min(leg.fuel_demand for leg in base.legs)
        if base.fuel_floor_pressure <= hold_pa * (1.0 + 1e-7):
            credit = fuel_credit_rate(credited_fuel, sat.rho_vapour, sat.rho_liquid)
        else:
            notes.append("no fuel credited: the engines stop drawing vapour above the hold "
                         "pressure (fuel.floor_barg is higher)")
            credited_fuel = 0.0
            fuel_credit = False  # nor in the outage voyage
    minimum = max(steady - credit, 0.0)
    if heat <= 0.0:
        notes.append("the design ambient is colder than the cargo at the hold pressure: "
                     "heat flows out of the tank (heat_in_kw is negative) and no plant is "
                     "needed to hold it")

    # (b) through the scenario's outages
    outages = list(plant_raw.get("outage", [])) if plant_raw else []
    outage_capacity = None
    outage_runs: list[tuple[float, bool]] = []
    outage_note = "the scenario has no [[reliquefaction.outage]]" if not outages else ""
    if outages:
        outage_capacity, outage_note = _outage_capacity(
            data, u_w_m2k, hold, design_air_c, design_sea_c, fuel_credit, voyage_ambient,
            start=max(minimum, steady, 1.0 / SECONDS_PER_HOUR), tolerance=tolerance,
            runs=outage_runs)

    required = max(minimum, outage_capacity or 0.0)
    design = required * (1.0 + margin_pct / 100.0)
    units = installed = None
    if unit_kg_h is not None:
        # units from kg/h on both sides: unit_kg_h / 3600 underflows to 0 for a
        # denormal unit size, and a tiny unit would need a number beyond float
        ratio = design * SECONDS_PER_HOUR / unit_kg_h if design > 0 else 0.0
        if not (math.isfinite(ratio) and math.ceil(ratio - 1e-9) + spare_units <= MAX_UNITS):
            raise SizingError(
                f"--unit-kg-h {unit_kg_h:g}: the design capacity {design * SECONDS_PER_HOUR:.1f} "
                f"kg/h would need {ratio:.3g} units of {unit_kg_h:g} kg/h plus {spare_units} "
                f"stand-by; at most {MAX_UNITS} units: give a larger unit")
        units = math.ceil(ratio - 1e-9) + spare_units
        installed = units * unit_kg_h

    holding = holding_time(data, air_c=design_air_c, sea_c=design_sea_c,
                           horizon_days=horizon_days, u_w_m2k=u_w_m2k)
    from_hold = holding_time(data, air_c=design_air_c, sea_c=design_sea_c,
                             horizon_days=horizon_days, u_w_m2k=u_w_m2k, pressure_barg=hold) \
        if abs(hold - float(data["tank"]["pressure_barg"])) > 0 else holding

    relief_pa = tank.relief_set_pressure
    limits = loading_limit_table(base.cargo, relief_pa)
    initial_t = facts["initial_cargo_t"]
    kg_h = SECONDS_PER_HOUR
    summary = {
        "title": base.title,
        "cargo": base.cargo,
        "design_air_c": float(design_air_c),
        "design_sea_c": float(design_sea_c),
        "design_ambient_source": ("IGC Code upper design ambient (recalled, not quoted)"
                                  if (design_air_c, design_sea_c) == (DESIGN_AIR_C, DESIGN_SEA_C)
                                  else "given"),
        "hold_barg": hold,
        "hold_source": hold_source,
        "hold_temp_c": t_hold - T_ZERO_C,
        "relief_set_barg": pa_to_barg(relief_pa),
        "tank_count": count,
        "u_value_w_m2k": u_w_m2k,
        "heat_in_kw": count * heat / 1000.0,
        "latent_heat_kj_kg": sat.latent_heat / 1000.0,
        "steady_boil_off_kg_h": steady * kg_h,
        "steady_boil_off_pct_day": 100.0 * steady * SECONDS_PER_DAY / (initial_t * 1000.0)
        if initial_t else None,
        "fuel_credit": bool(fuel_credit),
        "fuel_credited_kg_h": credited_fuel * kg_h,
        "fuel_credit_capacity_kg_h": credit * kg_h,
        "min_capacity_kg_h": minimum * kg_h,
        "min_capacity_with_outage_kg_h": None if outage_capacity is None
        else outage_capacity * kg_h,
        "outage_hours": [float(o.get("hours", 0.0)) for o in outages],
        "outage_ambient": "each leg's own" if voyage_ambient else "design",
        "outage_note": outage_note,
        "required_capacity_kg_h": required * kg_h,
        "margin_pct": float(margin_pct),
        "design_capacity_kg_h": design * kg_h,
        "unit_capacity_kg_h": unit_kg_h,
        "spare_units": spare_units if unit_kg_h is not None else None,
        "units_needed": units,
        "installed_capacity_kg_h": installed,
        "refrigeration_kw": design * sat.latent_heat / 1000.0,
        "specific_power_kwh_kg": specific_power_kwh_kg,
        "power_kw": None if specific_power_kwh_kg is None
        else design * kg_h * specific_power_kwh_kg,
        "holding_time_h": holding.hours,
        "holding_horizon_h": holding.horizon_days * 24.0,
        "holding_note": holding.note,
        "holding_time_from_hold_h": from_hold.hours,
        "initial_fill_pct": float(data["tank"]["fill_pct"]),
        "loading_limit_pct": 100.0 * float(loading_limit_table(
            base.cargo, relief_pa, [table.temperature(tank.pressure)])["loading_limit"][0]),
        "reference_temp_c": limits["reference_temperature"] - T_ZERO_C,
        "notes": notes + _assumptions(fuel_credit, specific_power_kwh_kg, base.model),
        "caution": CAUTION,
    }
    curve_rows = holding_curves(data, air_c=design_air_c, sea_c=design_sea_c,
                                horizon_days=horizon_days, u_w_m2k=u_w_m2k) if curves else []
    return Sizing(summary, curve_rows, limits, outage_runs)


def _assumptions(fuel_credit: bool, specific_power, model: str) -> list[str]:
    out = []
    if model != "equilibrium":
        out.append(f"steady capacity Q/h_fg is the equilibrium-model balance (saturated vapour "
                   f"and liquid); the scenario's {model} model may hold the pressure with a "
                   "somewhat different rate: check with a run at the design capacity. "
                   f"Holding times are runs of the scenario's {model} model")
    out += [
        "condensate returned as saturated liquid at the hold pressure; refrigeration duty = "
        "design capacity x latent heat at the hold temperature",
        "heat ingress U*A over the whole tank surface, U fixed at the scenario's own",
        "oxidiser not credited",
        "fuel: lowest leg fuel demand credited" if fuel_credit else
        "fuel: not credited (conservative)",
        "holding time: all pressure control lost from the scenario's start, design ambient",
    ]
    if specific_power is None:
        out.append("power_kw is null: no specific power in the scenario; give "
                   "--specific-power-kwh-kg")
    return out


def _outage_capacity(data, u_w_m2k, hold, air_c, sea_c, fuel_credit, voyage_ambient, start,
                     tolerance, runs) -> tuple[float | None, str]:
    """Smallest capacity [kg/s] whose outage voyage keeps the relief valve shut."""
    from .voyage import simulate

    ambient = (None, None) if voyage_ambient else (air_c, sea_c)

    def keeps_shut(capacity: float) -> bool:
        d = design_voyage_dict(data, u_w_m2k=u_w_m2k, capacity_kg_h=capacity * SECONDS_PER_HOUR,
                               hold_barg=hold, air_c=ambient[0], sea_c=ambient[1],
                               fuel_credit=fuel_credit)
        result = simulate(_scenario(d, "outage voyage"))
        ok = result.summary["time_to_relief_h"] is None and result.status == "completed"
        runs.append((capacity * SECONDS_PER_HOUR, ok))
        return ok

    if keeps_shut(0.0):
        return 0.0, "the relief valve stays shut through the voyage even with no plant"
    low, high = 0.0, start
    doublings = 0
    while not keeps_shut(high):
        low, high = high, 2.0 * high
        doublings += 1
        if doublings > MAX_DOUBLINGS:
            return None, (f"no plant up to {high * SECONDS_PER_HOUR:.0f} kg/h keeps the relief "
                          "valve shut: the outage alone is longer than the holding time "
                          "from the hold pressure")
    while high - low > max(tolerance * high, 1e-6):
        mid = 0.5 * (low + high)
        if keeps_shut(mid):
            high = mid
        else:
            low = mid
    return high, (f"smallest plant (to {100 * tolerance:g} %) whose voyage with the scenario's "
                  "outages keeps the relief valve shut")


# ---------------------------------------------------------------------------
# Output files and charts
# ---------------------------------------------------------------------------


def curves_csv(rows: list[dict]) -> str:
    """``holding-time.csv`` text."""
    import pandas as pd

    frame = pd.DataFrame(rows, columns=["curve", "value", "holding_time_h", "status", "note"])
    return frame.to_csv(index=False, na_rep="", lineterminator="\n")


def loading_limit_csv(limits: dict) -> str:
    """``loading-limit.csv`` text."""
    import pandas as pd

    return pd.DataFrame(loading_limit_rows(limits)).to_csv(index=False, lineterminator="\n")


def sizing_figures(sizing: Sizing) -> list:
    """Holding-time curves (one panel each) and the loading-limit curve."""
    import plotly.graph_objects as go
    from plotly.subplots import make_subplots

    figures = []
    if sizing.curves:
        fig = make_subplots(rows=2, cols=2, subplot_titles=list(CURVES.values()),
                            horizontal_spacing=0.1, vertical_spacing=0.16)
        for i, (curve, label) in enumerate(CURVES.items()):
            rows = [r for r in sizing.curves if r["curve"] == curve]
            fig.add_trace(go.Scatter(
                x=[r["value"] for r in rows], y=[r["holding_time_h"] for r in rows],
                mode="lines+markers", name=label, meta=curve, line={"color": "#1d4e6b"},
                hovertext=[r["note"] for r in rows]), row=i // 2 + 1, col=i % 2 + 1)
            missing = [r for r in rows if r["holding_time_h"] is None]
            if missing:  # mark starts with no lift (none in the horizon, or liquid-full first)
                fig.add_trace(go.Scatter(
                    x=[r["value"] for r in missing], y=[0.0] * len(missing), mode="markers",
                    marker={"symbol": "x", "size": 10, "color": "#c2593f"},
                    name="no relief lift", meta=f"{curve}:no-lift",
                    hovertext=[r["note"] for r in missing]), row=i // 2 + 1, col=i % 2 + 1)
            fig.update_xaxes(title_text=label, row=i // 2 + 1, col=i % 2 + 1)
            fig.update_yaxes(title_text="holding time [h]", row=i // 2 + 1, col=i % 2 + 1)
        s = sizing.summary
        fig.update_layout(title=f"Holding time, all pressure control lost (design ambient "
                                f"{s['design_air_c']:g} / {s['design_sea_c']:g} °C)<br><sup>"
                                "x on the axis: no lift within the horizon, or liquid-full "
                                "first (hover for which)</sup>",
                          height=720, showlegend=False, meta={"chart": "holding-time"})
        figures.append(fig)
    lim = sizing.loading_limits
    if lim:
        rows = loading_limit_rows(lim)
        fig = go.Figure(go.Scatter(x=[r["loading_temp_c"] for r in rows],
                                   y=[r["loading_limit_pct"] for r in rows],
                                   mode="lines+markers", meta="loading_limit_pct",
                                   line={"color": "#c2593f"}))
        fig.update_layout(
            title=f"IGC loading limit, relief set {sizing.summary['relief_set_barg']:.3f} barg "
                  f"(reference {lim['reference_temperature'] - T_ZERO_C:.2f} °C)",
            xaxis_title="Loading temperature [°C]",
            yaxis_title="Loading limit [% of tank volume]",
            height=420, meta={"chart": "loading-limit"})
        figures.append(fig)
    return figures


def output_files(sizing: Sizing) -> dict[str, str]:
    """Name -> text of every file ``size`` writes."""
    from .sweep import html_page, to_json

    files = {"sizing.json": to_json(sizing.summary),
             "loading-limit.csv": loading_limit_csv(sizing.loading_limits)}
    if sizing.curves:
        files["holding-time.csv"] = curves_csv(sizing.curves)
    files["sizing.html"] = html_page(sizing_figures(sizing),
                                     f"Sizing: {sizing.summary['title']}")
    return files


def summary_lines(s: dict) -> list[str]:
    """The terminal report of a sizing (file units)."""
    def f(x, unit="", digits=1):
        return "-" if x is None else f"{x:,.{digits}f}{unit}"

    lines = [
        f"{s['title']}",
        f"  design ambient {s['design_air_c']:g} degC air / {s['design_sea_c']:g} degC sea; "
        f"hold {s['hold_barg']:.3f} barg ({s['hold_temp_c']:.2f} degC; {s['hold_source']})",
        f"  heat in {f(s['heat_in_kw'], ' kW')}, steady boil-off to absorb "
        f"{f(s['steady_boil_off_kg_h'], ' kg/h')}"
        + (f" less fuel credit {f(s['fuel_credit_capacity_kg_h'], ' kg/h')}"
           if s["fuel_credit"] else " (no fuel credit)"),
        f"  min capacity to hold indefinitely {f(s['min_capacity_kg_h'], ' kg/h')}",
        f"  min capacity through the outages "
        f"{f(s['min_capacity_with_outage_kg_h'], ' kg/h')} ({s['outage_note']})",
        f"  design capacity {f(s['design_capacity_kg_h'], ' kg/h')} (margin "
        f"{s['margin_pct']:g} %): refrigeration {f(s['refrigeration_kw'], ' kW')}, "
        f"power {f(s['power_kw'], ' kW')}",
    ]
    if s["units_needed"] is not None:
        lines.append(f"  units: {s['units_needed']} x {s['unit_capacity_kg_h']:g} kg/h "
                     f"({s['spare_units']} spare) = {s['installed_capacity_kg_h']:,.0f} kg/h")
    hold = (f"{s['holding_time_h']:.1f} h ({s['holding_time_h'] / 24:.2f} days)"
            if s["holding_time_h"] is not None else f"none ({s['holding_note']})")
    lines.append(f"  holding time from the start, all control lost: {hold}")
    if s["holding_time_from_hold_h"] is not None:
        lines.append("  holding time from the hold pressure: "
                     f"{s['holding_time_from_hold_h']:.1f} h")
    if s["loading_limit_pct"] is not None:
        lines.append(f"  IGC loading limit at the loading pressure {s['loading_limit_pct']:.2f} % "
                     f"(fill {s['initial_fill_pct']:g} %)")
    lines.extend(f"  note: {n}" for n in s["notes"])
    return lines

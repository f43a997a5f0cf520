"""The voyage orchestrator: legs x pressure-control modes x events.

One tank is integrated (all tanks are identical and share the ship's plant
equally); results are scaled to the whole ship at the end.

Pressure control
----------------
Four sinks take vapour from the tank, each with a set pressure and a capacity
that may change with time (fuel demand per leg, plant outages):

====================  ==========================  ======================
sink                  set pressure                capacity
====================  ==========================  ======================
fuel (engines)        fuel floor pressure         leg fuel demand
reliquefaction        hold pressure               plant capacity (0 in an outage)
oxidiser              oxidiser set pressure       oxidiser capacity
relief valve          relief set pressure         unlimited
====================  ==========================  ======================

At any instant each sink is *off* (tank below its set pressure), *at
capacity* (tank above it), or *holding* (tank at its set pressure, the sink
taking exactly what keeps dp/dt = 0, between nothing and its capacity). At
most one sink holds at a time. Sinks are ranked by set pressure, ties in the
order above: fuel first, relief last.

Because dp/dt is affine in the withdrawal rates (see :mod:`sim.models`), the
holding rate is a closed-form function of the state, so every switch is a
continuous event function of the state: pressure crossing a set pressure,
or a holding rate reaching zero or the sink's capacity. The voyage is
integrated in segments (legs and outages cut it), each restarted at every
switch, with ``max_step`` capped so no switch is stepped over.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.integrate import solve_ivp

from . import heat as heat_mod
from .facts import calibrated_u_value
from .mixture import EquilibriumError
from .models import MODELS
from .models.mixture_equilibrium import MixtureStateError
from .results import ACCUMULATORS, SINK_KEYS, Event, build_result
from .scenario import HEEL_EMPTY_FILL, LIQUID_FULL_FILL, Scenario, cargo_table

#: Largest integration step [s]; keeps every switch and hazard resolvable.
MAX_STEP = 12 * 3600.0
#: Relative tolerance of the integration.
RTOL = 1e-8
#: Relative band around a set pressure treated as "at the set pressure".
AT_SET_TOLERANCE = 1e-7
#: Wider band used right after a mixture table rebuild, which moves the
#: computed pressure by up to ~0.1 % (see sim.models.mixture_equilibrium).
REBUILD_TOLERANCE = 3e-3
#: Time constant with which a holding sink pulls the pressure back to its set
#: pressure when it is off it [s]. Long against the integrator's largest step
#: divided by 2.8 (explicit RK stability), so it never limits the step.
HOLD_RELAXATION = 6 * 3600.0
#: Segment-count guard against a control loop that fails to settle.
MAX_SEGMENTS = 20_000

VAPOUR, RELIQUEFY = "vapour", "reliquefy"
#: Errors that mean "the cargo state left what the model can describe": the run
#: stops with the reason instead of raising.
MODEL_LIMIT_ERRORS = (MixtureStateError, EquilibriumError)


@dataclass(frozen=True)
class Sink:
    """A pressure-control sink (per tank).

    Attributes
    ----------
    key : str  ``fuel``, ``reliquefaction``, ``oxidiser`` or ``relief``
    label : str  for event texts
    kind : str  VAPOUR (vapour leaves the tank) or RELIQUEFY (returns as liquid)
    set_pressure : float  [Pa]
    """

    key: str
    label: str
    kind: str
    set_pressure: float


@dataclass(frozen=True)
class Mode:
    """Which sinks run at capacity and which one (if any) holds the pressure."""

    active: frozenset = frozenset()
    holding: int | None = None


class _Voyage:
    """Working state of one simulation (not part of the public API)."""

    def __init__(self, scenario: Scenario):
        self.scenario = scenario
        tank = scenario.tank
        self.count = tank.count
        self.table = cargo_table(scenario)
        self.shape = tank.shape
        self.volume = self.shape.volume()
        area = self.shape.surface_area()
        ins = scenario.insulation
        u_value = calibrated_u_value(scenario, self.table)
        self.u_value = u_value
        self.area = area
        ua_air, ua_sea = heat_mod.conductances(u_value, area, ins.air_exposed_fraction)
        self.gross_molar = _gross_molar_values(scenario)
        if scenario.mole_fractions is None:
            # conduction along the tank wall is a two-zone feature (off unless given)
            wall = ({"wall_thickness": tank.wall_thickness,
                     "wall_conductivity": tank.wall_conductivity}
                    if scenario.model == "two-zone" else {})
            self.model = MODELS[scenario.model](
                self.table, self.volume, ua_air, ua_sea, shape=self.shape, **wall
            )
        else:
            from .mixture_table import loaded_mixture_tables
            from .models.mixture_equilibrium import MixtureEquilibriumModel

            self.model = MixtureEquilibriumModel(
                loaded_mixture_tables(scenario.mole_fractions)[0], self.volume, ua_air, ua_sea,
                shape=self.shape, gross_molar=self.gross_molar,
                limits=(self.table.temperature_min, self.table.temperature_max),
            )
        self.n_model = len(self.model.state_names)
        # gross heating value per kg of a pure cargo's vapour [J/kg] (0: none tabulated)
        self._pure_gcv = (float(self.gross_molar[0]) / self.table.molar_mass
                          if self.gross_molar is not None else 0.0)
        self.delivered_energy = 0.0
        self.loaded_energy = 0.0

        sinks = [Sink("fuel", "fuel (engines)", VAPOUR, scenario.fuel_floor_pressure)]
        if scenario.reliquefaction is not None:
            sinks.append(
                Sink(
                    "reliquefaction",
                    "reliquefaction plant",
                    RELIQUEFY,
                    scenario.reliquefaction.hold_pressure,
                )
            )
        if scenario.oxidiser is not None:
            sinks.append(Sink("oxidiser", "oxidiser", VAPOUR, scenario.oxidiser.set_pressure))
        sinks.append(Sink("relief", "relief valve", VAPOUR, tank.relief_set_pressure))
        order = {s.key: i for i, s in enumerate(sinks)}
        self.sinks = sorted(sinks, key=lambda s: (s.set_pressure, order[s.key]))
        self.index = {s.key: i for i, s in enumerate(self.sinks)}
        self._cache_key = None
        self._cache_state = None
        self.events: list[Event] = []
        self.relief_open = False
        self.rhs_calls = 0
        self.delivered_t = 0.0
        self.loaded_t = 0.0

    # -- capacities and ambient ---------------------------------------------
    def leg_at(self, t: float):
        """The leg running at time t [s] (the last leg after the end)."""
        start = 0.0
        for leg in self.scenario.legs:
            if t < start + leg.duration:
                return leg
            start += leg.duration
        return self.scenario.legs[-1]

    def outages(self, key: str) -> tuple:
        """Outage windows of a sink."""
        sc = self.scenario
        if key == "fuel":
            return sc.fuel_outages
        if key == "reliquefaction" and sc.reliquefaction is not None:
            return sc.reliquefaction.outages
        if key == "oxidiser" and sc.oxidiser is not None:
            return sc.oxidiser.outages
        return ()

    def down(self, key: str, t: float) -> bool:
        """True if a sink is out of service at time t [s]."""
        return any(o.start <= t < o.end for o in self.outages(key))

    def capacities(self, t: float) -> list[float]:
        """Capacity of each sink per tank during the segment starting at t [kg/s]."""
        leg = self.leg_at(t)
        caps = []
        for sink in self.sinks:
            if self.down(sink.key, t):
                caps.append(0.0)
            elif sink.key == "fuel":
                caps.append(leg.fuel_demand / self.count)
            elif sink.key == "reliquefaction":
                caps.append(self.scenario.reliquefaction.capacity / self.count)
            elif sink.key == "oxidiser":
                caps.append(self.scenario.oxidiser.capacity / self.count)
            else:
                caps.append(math.inf)
        return caps

    def breakpoints(self) -> list[float]:
        """Times at which capacities or ambient change [s]."""
        end = self.scenario.duration
        points = {0.0, end}
        t = 0.0
        for leg in self.scenario.legs:
            t += leg.duration
            points.add(min(t, end))
        for key in ("fuel", "reliquefaction", "oxidiser"):
            for o in self.outages(key):
                points.update(p for p in (o.start, o.end) if 0.0 <= p <= end)
        points.update(self.mixing_times())
        return sorted(points)

    def mixing_times(self) -> list[float]:
        """Times at which the tank contents are mixed (heavy weather, cargo pump) [s].

        Read from ``scenario.mixing_times`` when the scenario has it; times
        outside the voyage are ignored.
        """
        end = self.scenario.duration
        return sorted(
            {float(m) for m in getattr(self.scenario, "mixing_times", ()) if 0.0 <= float(m) < end}
        )

    def port_call(self, t: float, y, leg):
        """Discharge (or load) to the leg's start fill at the current pressure, and note it.

        The cargo left on board is saturated at the tank pressure at the new
        fill (for a stratified model, mixed). Discharged cargo counts as
        delivered, loaded cargo as loaded; neither is boil-off.
        """
        from .units import pa_to_barg

        n = self.n_model
        state = self.evaluate(y, leg)
        y = np.array(y, dtype=float)
        before = state.cargo_mass
        energy_before = self.cargo_energy(y, state)
        if state.liquid_fractions is not None:
            # a mixture keeps its weathered composition; cargo loaded is taken alike
            y[:n] = self.model.initial_state(leg.start_fill, state.pressure,
                                             liquid=state.liquid_fractions)
        else:
            y[:n] = self.model.initial_state(leg.start_fill, state.pressure)
        self._cache_key = None
        state_after = self.evaluate(y, leg)
        after = float(state_after.cargo_mass)
        moved = (before - after) * self.count / 1000.0
        moved_energy = (energy_before - self.cargo_energy(y, state_after)) * self.count
        if moved >= 0.0:
            self.delivered_t += moved
            self.delivered_energy += moved_energy
            words = f"discharged {moved:.1f} t"
        else:
            self.loaded_t -= moved
            self.loaded_energy -= moved_energy
            words = f"loaded {-moved:.1f} t"
        self.note(
            t,
            "port-call",
            f"port call: {words} to fill {100 * leg.start_fill:.2f} % at "
            f"{pa_to_barg(state.pressure):.3f} barg",
        )
        return y

    def apply_mixing(self, t: float, y, leg):
        """Mix the tank contents at time t [s]: the model's ``mix`` hook, and an event.

        Models without a ``mix`` method (the equilibrium model, uniform by
        construction) are left unchanged; the event is recorded either way.
        """
        from .units import pa_to_barg

        n = self.n_model
        before = self.evaluate(y, leg).pressure
        mix = getattr(self.model, "mix", None)
        if mix is None:
            self.note(
                t,
                "mixing",
                "tank contents mixed (heavy weather or cargo pump); "
                f"no effect on the {self.scenario.model} model",
            )
            return y
        y = np.array(y, dtype=float)
        y[:n] = mix(y[:n])
        after = self.evaluate(y, leg).pressure
        self.note(
            t,
            "mixing",
            "tank contents mixed (heavy weather or cargo pump): pressure "
            f"{pa_to_barg(before):.3f} -> {pa_to_barg(after):.3f} barg",
        )
        return y

    # -- heating value ------------------------------------------------------------
    def model_molar_mass(self, name: str) -> float:
        """Molar mass of a cargo component (CoolProp) [kg/mol]."""
        if self.scenario.mole_fractions is None:
            return self.table.molar_mass
        from .mixture import _pure_molar_mass

        return _pure_molar_mass(name)

    def cargo_energy(self, y, state) -> float:
        """Gross heating value of one tank's contents [J] (0 without component values)."""
        if self.gross_molar is None:
            return 0.0
        if state.liquid_fractions is not None:
            return float(np.dot(y[: self.n_model - 1], self.gross_molar))
        return state.cargo_mass * self._pure_gcv

    def vapour_heating_value(self, state) -> float:
        """Gross heating value of the vapour drawn off [J/kg] (0 without values)."""
        if state.liquid_fractions is not None and self.gross_molar is not None:
            return self.model.vapour_heating_value(state)
        return self._pure_gcv

    # -- state evaluation -----------------------------------------------------
    def evaluate(self, y, leg):
        key = (
            (y[0], y[1], leg.air_temperature, leg.sea_temperature)
            if self.n_model == 2
            else (tuple(y[: self.n_model]), leg.air_temperature, leg.sea_temperature)
        )
        if key != self._cache_key:
            self._cache_state = self.model.evaluate(
                y[: self.n_model], leg.air_temperature, leg.sea_temperature
            )
            self._cache_key = key
        return self._cache_state

    def rates(self, state, mode: Mode, caps) -> list[float]:
        """Withdrawal rate of each sink in a mode [kg/s]."""
        rates = [0.0] * len(self.sinks)
        for k in mode.active:
            rates[k] = caps[k]
        if mode.holding is not None:
            rates[mode.holding] = self.holding_rate(state, mode, caps)
        return rates

    def holding_rate(self, state, mode: Mode, caps) -> float:
        """Rate of the holding sink that keeps the pressure at its set pressure [kg/s].

        dp/dt = 0 at the set pressure; off it (by a few pascals after a mixture
        table rebuild) the sink draws so that dp/dt = -(p - p_set)/HOLD_RELAXATION,
        so the pressure returns to the set pressure instead of sitting beside it.
        """
        a0, b_out, b_rl = self.model.pressure_rate_coefficients(state)
        p_set = self.sinks[mode.holding].set_pressure
        rest = a0 + (state.pressure - p_set) / HOLD_RELAXATION
        for k in mode.active:
            rest -= (b_rl if self.sinks[k].kind == RELIQUEFY else b_out) * caps[k]
        k = mode.holding
        return rest / (b_rl if self.sinks[k].kind == RELIQUEFY else b_out)

    def flows(self, rates) -> tuple[float, float]:
        vapour = sum(r for r, s in zip(rates, self.sinks) if s.kind == VAPOUR)
        reliq = sum(r for r, s in zip(rates, self.sinks) if s.kind == RELIQUEFY)
        return vapour, reliq

    # -- mode selection -----------------------------------------------------
    def choose_mode(self, state, caps, force_active=(), force_inactive=(),
                    band=AT_SET_TOLERANCE) -> Mode:
        """Mode for a state, walking the sinks upward in set pressure.

        ``band`` is the relative distance from a set pressure that counts as at it.
        """
        pressure = state.pressure
        active: set[int] = set()
        for k, sink in enumerate(self.sinks):
            if caps[k] <= 0.0 or k in force_inactive:
                continue
            if k in force_active or pressure > sink.set_pressure * (1.0 + band):
                if not math.isfinite(caps[k]):
                    # A sink without a capacity limit (the relief valve) cannot run "at
                    # capacity": above its set pressure (a mixture's table rebuild can
                    # nudge the pressure a few pascals past it) it holds where it is.
                    trial = Mode(frozenset(active), k)
                    if self.holding_rate(state, trial, caps) > 0.0:
                        return trial
                    break
                active.add(k)
                continue
            if pressure >= sink.set_pressure * (1.0 - band):
                trial = Mode(frozenset(active), k)
                needed = self.holding_rate(state, trial, caps)
                if needed <= 0.0:
                    break
                if needed <= caps[k]:
                    return trial
                active.add(k)
                continue
            break
        return Mode(frozenset(active), None)

    # -- events ---------------------------------------------------------------
    def event_functions(self, mode: Mode, caps, leg, watch_vacuum: bool):
        """Continuous event functions for a mode: list of (function, tag)."""
        funcs = []
        table = self.table

        def make(fn, tag, direction):
            fn.terminal = True
            fn.direction = direction
            funcs.append((fn, tag))

        # not at exactly 100 %: the two-zone model's vapour, squeezed towards zero
        # volume, would make the integrator crawl there without ever reaching it
        make(lambda t, y: self.evaluate(y, leg).fill - LIQUID_FULL_FILL, ("liquid-full",), 1)
        make(lambda t, y: self.evaluate(y, leg).fill - HEEL_EMPTY_FILL, ("heel-exhausted",), -1)
        low = table.temperature_min * (1.0 + 1e-9)
        high = table.temperature_max * (1.0 - 1e-9)
        make(lambda t, y: self.evaluate(y, leg).liquid_temperature - low, ("low-limit",), -1)
        make(lambda t, y: self.evaluate(y, leg).liquid_temperature - high, ("high-limit",), 1)
        margin = getattr(self.model, "refresh_margin", None)
        if margin is not None:
            make(lambda t, y: margin(self.evaluate(y, leg)), ("refresh",), 1)
        if watch_vacuum:
            vac = self.scenario.tank.vacuum_pressure
            make(lambda t, y: self.evaluate(y, leg).pressure - vac, ("vacuum",), -1)
        if mode.holding is None:
            for k, sink in enumerate(self.sinks):
                if caps[k] <= 0.0:
                    continue
                p_set = sink.set_pressure
                direction = -1 if k in mode.active else 1
                make(
                    lambda t, y, p_set=p_set: self.evaluate(y, leg).pressure - p_set,
                    ("cross", k, direction),
                    direction,
                )
        else:
            k = mode.holding
            make(
                lambda t, y: self.holding_rate(self.evaluate(y, leg), mode, caps),
                ("stop-draw", k),
                -1,
            )
            if math.isfinite(caps[k]):
                make(
                    lambda t, y: self.holding_rate(self.evaluate(y, leg), mode, caps) - caps[k],
                    ("over-capacity", k),
                    1,
                )
        return funcs

    def describe(self, mode: Mode) -> str:
        """Plain words for what is controlling the pressure."""
        if mode.holding is not None:
            key = self.sinks[mode.holding].key
            return "relief venting" if key == "relief" else f"{key} holding"
        if any(self.sinks[k].key == "relief" for k in mode.active):
            return "relief venting"
        if not mode.active:
            return "no draw"
        return "+".join(self.sinks[k].key for k in sorted(mode.active)) + " at capacity"

    # -- bookkeeping of control events ---------------------------------------
    def note(self, t: float, kind: str, detail: str) -> None:
        self.events.append(Event(t, kind, detail))

    def relief_venting(self, mode: Mode) -> bool:
        """Whether the relief valves vent in a control mode."""
        relief = self.index["relief"]
        return relief in mode.active or mode.holding == relief

    def note_mode_change(self, t: float, old: Mode | None, new: Mode, state) -> None:
        venting = self.relief_venting(new)
        from .units import pa_to_barg

        p_txt = f"{pa_to_barg(state.pressure):.3f} barg"
        if venting and not self.relief_open:
            self.note(t, "relief-lift", f"relief valve lifts at {p_txt}")
        elif self.relief_open and not venting:
            self.note(t, "relief-reseat", f"relief valve reseats at {p_txt}")
        self.relief_open = venting
        old = old if old is not None else Mode()
        for k, sink in enumerate(self.sinks):
            if sink.key == "relief":
                continue
            was = "hold" if old.holding == k else ("full" if k in old.active else "off")
            now = "hold" if new.holding == k else ("full" if k in new.active else "off")
            if was == now:
                continue
            if now == "hold":
                self.note(t, "holding", f"{sink.label} holding {p_txt}")
            elif now == "full" and was == "hold":
                self.note(
                    t,
                    "at-capacity",
                    f"{sink.label} at full capacity, cannot hold {p_txt}; pressure rising",
                )
            elif now == "full":
                self.note(
                    t,
                    "at-capacity",
                    f"{sink.label} starts at {p_txt} at full capacity (pressure above its "
                    "set point)",
                )
            elif t > 0.0:
                self.note(t, "stopped-drawing", f"{sink.label} stops drawing at {p_txt}")


def simulate(scenario: Scenario, progress=None):
    """Run a voyage and return a :class:`sim.results.VoyageResult`.

    Parameters
    ----------
    scenario : Scenario
        A validated scenario (see :func:`sim.scenario.load_scenario`).
    progress : callable, optional
        Called as ``progress(fraction_done)`` after each segment.

    Returns
    -------
    VoyageResult
        Time series, events and summary for the whole ship. A run stopped by a
        hazard (liquid-full, triple point, critical point) ends early with
        ``status = "stopped"`` and the reason in ``message``; nothing raises.
    """
    from .igc import loading_limit
    from .units import pa_to_barg

    voyage = _Voyage(scenario)
    model, table = voyage.model, voyage.table
    tank = scenario.tank

    # IGC loading limit at the start (LL = FL * rho_R / rho_L).
    t_load = table.temperature(tank.pressure)
    rho_load = table.at(t_load).rho_liquid
    rho_ref = table.at(table.temperature(tank.relief_set_pressure)).rho_liquid
    limit = loading_limit(rho_ref, rho_load)
    if tank.fill > limit + 1e-12:
        voyage.note(
            0.0,
            "loading-limit-exceeded",
            f"initial fill {100 * tank.fill:.2f} % is above the IGC loading limit "
            f"{100 * limit:.2f} % for relief set {pa_to_barg(tank.relief_set_pressure):.3f} barg",
        )

    y = np.concatenate([model.initial_state(tank.fill, tank.pressure), np.zeros(ACCUMULATORS)])
    n = voyage.n_model
    scale = np.abs(y).copy()
    if hasattr(model, "state_scale"):
        scale[:n] = model.state_scale(y[:n])
    first = voyage.evaluate(y, scenario.legs[0])
    mass0 = first.cargo_mass
    heat_scale = abs(voyage.u_value * voyage.area * 50.0 * scenario.duration) + 1.0
    energy_scale = mass0 * max(voyage.vapour_heating_value(first), 1.0)
    scale[n:] = [heat_scale] + [mass0] * len(SINK_KEYS) + [energy_scale] * len(SINK_KEYS)
    atol = np.maximum(scale, 1.0) * 1e-10
    voyage.energy_loaded_start = voyage.cargo_energy(y, first) * voyage.count

    end = scenario.duration
    breaks = voyage.breakpoints()
    segments = []  # (t0, t1, OdeSolution or None, mode, caps, leg)
    status, message = "completed", "voyage completed"
    t = 0.0
    mode = None
    announced = None  # the control mode last reported in the events
    quiet = False
    mode_caps = None
    watch_vacuum = True
    count = 0
    stop = False
    bi = 0
    leg_started = None
    mix_times = voyage.mixing_times()
    mi = 0
    while t < end and not stop:
        while bi + 1 < len(breaks) and breaks[bi + 1] <= t * (1 + 1e-15) + 1e-9:
            bi += 1
        t_next = breaks[bi + 1]
        leg = voyage.leg_at(t)
        if leg is not leg_started:
            voyage.note(
                t,
                "leg",
                f"leg '{leg.name}' starts: air {leg.air_temperature - 273.15:.1f} degC, "
                f"sea {leg.sea_temperature - 273.15:.1f} degC",
            )
            leg_started = leg
            if leg.start_fill is not None and t > 0.0:
                y = voyage.port_call(t, y, leg)
                mode = None  # a new cargo state: choose the control mode afresh
        mixed = False
        while mi < len(mix_times) and mix_times[mi] <= t * (1 + 1e-15) + 1e-9:
            y = voyage.apply_mixing(t, y, leg)
            mi += 1
            mixed = True
        caps = voyage.capacities(t)
        state = voyage.evaluate(y, leg)
        _note_plant(voyage, t)
        if mode is None or mode_caps != caps or mixed:
            mode = voyage.choose_mode(state, caps)
            voyage.note_mode_change(t, announced, mode, state)
            announced, quiet = mode, False
        mode_caps = caps

        funcs = voyage.event_functions(mode, caps, leg, watch_vacuum)

        # accumulated mass per sink, after the heat: fuel, reliquefied, oxidised,
        # vented; then the gross heating value each carried away
        slots = [(n + 1 + SINK_KEYS.index(sink.key), k) for k, sink in enumerate(voyage.sinks)]
        def rhs(t_, y_, mode=mode, caps=caps, leg=leg, slots=slots):
            voyage.rhs_calls += 1
            st = voyage.evaluate(y_, leg)
            r = voyage.rates(st, mode, caps)
            vapour, reliq = voyage.flows(r)
            d = model.derivatives(st, vapour, reliq)
            out = np.empty(len(y_))
            out[:n] = d
            out[n] = st.heat_in
            out[n + 1 :] = 0.0
            gcv = voyage.vapour_heating_value(st)
            for slot, k in slots:
                out[slot] = r[k]
                out[slot + len(SINK_KEYS)] = r[k] * gcv
            return out

        context = model.context() if hasattr(model, "context") else None
        try:
            sol = solve_ivp(
                rhs,
                (t, t_next),
                y,
                method="RK45",
                rtol=RTOL,
                atol=atol,
                max_step=MAX_STEP,
                dense_output=True,
                events=[f for f, _ in funcs],
            )
        except MODEL_LIMIT_ERRORS as exc:  # the state left the model's tables or two phases
            status, message = "stopped", f"stopped at {t / 3600:.2f} h: {exc}"
            voyage.note(t, "model-limit", message)
            break
        except ValueError as exc:
            if "different signs" not in str(exc):
                raise
            # scipy could not bracket an event it had seen change sign: the model's
            # answer for one state was not unique (a property solve that found another
            # root), far outside where the model has been tested
            status = "failed"
            message = (f"stopped at {t / 3600:.2f} h: the tank model gave two answers for one "
                       "state (its property solution is not unique here), so the switch of "
                       "pressure control or hazard could not be located; the cargo is far "
                       "outside the tested range of the model")
            break
        if sol.status == -1:
            status, message = "failed", f"integration failed at {t / 3600:.2f} h: {sol.message}"
            break
        t_end = float(sol.t[-1])
        segments.append((t, t_end, sol.sol, mode, caps, leg, context))
        y = sol.y[:, -1].copy()
        if sol.status == 1:
            fired = [i for i, te in enumerate(sol.t_events) if len(te)]
            i = fired[0]
            tag = funcs[i][1]
            y = sol.y_events[i][-1].copy()
            t_end = float(sol.t_events[i][-1])
            state = voyage.evaluate(y, leg)
            kind = tag[0]
            if kind == "heel-exhausted":
                voyage.note(
                    t_end,
                    "heel-exhausted",
                    f"heel exhausted on day {t_end / 86400:.2f}: no liquid left to keep the "
                    "tank cold; run stopped",
                )
                status, message, stop = "stopped", "heel exhausted", True
            elif kind == "liquid-full":
                voyage.note(t_end, "liquid-full", "tank liquid-full: no vapour space left "
                            "(hydraulic overpressure hazard); run stopped")
                status, message, stop = "stopped", "tank became liquid-full", True
            elif kind == "low-limit":
                if table.temperature_min <= table.temperature_triple * (1 + 1e-6):
                    voyage.note(
                        t_end,
                        "triple-point",
                        f"pressure fell to the triple-point pressure "
                        f"({pa_to_barg(table.pressure_triple):.2f} barg): solid cargo "
                        "would form; run stopped",
                    )
                    message = "pressure fell to the triple point"
                else:
                    voyage.note(
                        t_end,
                        "low-pressure-limit",
                        f"pressure fell to {pa_to_barg(table.pressure_min):.3f} barg, "
                        "the lowest the property tables cover; run stopped",
                    )
                    message = "pressure fell below the modelled range"
                status, stop = "stopped", True
            elif kind == "high-limit":
                if math.isfinite(table.temperature_critical):
                    words = "cargo within 0.4 % of its critical temperature; run stopped"
                    message = "cargo approached its critical point"
                else:
                    words = (f"cargo reached {pa_to_barg(table.pressure_max):.1f} barg, the top "
                             "of the mixture's property table; run stopped")
                    message = "cargo left the modelled pressure range"
                voyage.note(t_end, "near-critical", words)
                status, stop = "stopped", True
            elif kind == "vacuum":
                voyage.note(
                    t_end,
                    "vacuum",
                    f"pressure below the vacuum limit {pa_to_barg(tank.vacuum_pressure):.3f} barg",
                )
                watch_vacuum = False
            elif kind == "refresh":
                try:
                    model.refresh(y)
                except MODEL_LIMIT_ERRORS as exc:
                    status, message = "stopped", f"stopped at {t_end / 3600:.2f} h: {exc}"
                    voyage.note(t_end, "model-limit", message)
                    t = t_end
                    break
                voyage._cache_key = None
                state = voyage.evaluate(y, leg)
                mode = voyage.choose_mode(state, caps, band=REBUILD_TOLERANCE)
                # A rebuilt table moves the pressure by a few tens of pascals; a
                # sink that was holding may run off or at capacity for seconds to
                # regain its set pressure. Not news: stay quiet until the mode
                # returns, or something else happens -- unless the relief valve
                # opens or closes (a poor table can step the pressure past it).
                quiet = True
                if voyage.relief_open != voyage.relief_venting(mode):
                    voyage.note_mode_change(t_end, announced, mode, state)
                    announced, quiet = mode, False
            elif kind == "cross":
                mode = voyage.choose_mode(state, caps)
            elif kind == "stop-draw":
                mode = voyage.choose_mode(state, caps, force_inactive={tag[1]})
            elif kind == "over-capacity":
                mode = voyage.choose_mode(state, caps, force_active={tag[1]})
            if not stop and kind != "refresh" and mode != announced:
                voyage.note_mode_change(t_end, announced, mode, state)
                announced, quiet = mode, False
            elif quiet and mode == announced:
                quiet = False
        if t_end <= t:
            count += 1
        t = t_end
        count += 1
        if count > MAX_SEGMENTS:
            status, message = "failed", "pressure control did not settle (too many switches)"
            break
        if progress is not None:
            progress(min(t / end, 1.0))

    if not segments:
        raise RuntimeError(message)
    result = build_result(voyage, segments, status, message, t)
    result.stats = {"rhs_calls": voyage.rhs_calls, "segments": len(segments),
                    "table_refreshes": getattr(model, "refreshes", 0)}
    return result


def _gross_molar_values(scenario: Scenario):
    """Gross calorific value per mole of each cargo component [J/mol], or None.

    ISO 6976 values at the combustion reference temperature of
    :data:`sim.energy.COMBUSTION_TEMPERATURE`; None when a component has no
    tabulated value (e.g. ethylene).
    """
    from .energy import component_gross_molar

    names = ([c for c, _ in scenario.mole_fractions] if scenario.mole_fractions is not None
             else [scenario.cargo])
    values = [component_gross_molar(c) for c in names]
    # a cargo that does not burn (CO2, nitrogen) has no heating value to report
    if any(v is None for v in values) or not any(values):
        return None
    return np.array(values)


_OUTAGE_WORDS = {
    "fuel": ("fuel-stop", "engines stop taking gas", "fuel-resume", "engines take gas again"),
    "reliquefaction": (
        "plant-trip",
        "reliquefaction plant trips",
        "plant-restore",
        "reliquefaction plant back in service",
    ),
    "oxidiser": (
        "oxidiser-trip",
        "oxidiser out of service",
        "oxidiser-restore",
        "oxidiser back in service",
    ),
}


def _note_plant(voyage: _Voyage, t: float) -> None:
    """Record outage starts and ends falling at time t [s]."""
    for key, (k_start, w_start, k_end, w_end) in _OUTAGE_WORDS.items():
        for o in voyage.outages(key):
            if abs(o.start - t) < 1e-6:
                voyage.note(t, k_start, f"{w_start} for {o.duration / 3600:.1f} h")
            if abs(o.end - t) < 1e-6 and o.end < voyage.scenario.duration:
                voyage.note(t, k_end, w_end)

"""Result of a voyage run: time series, events, summary; CSV/JSON export.

Every quantity is for the whole ship (all tanks). Column and key names carry
their unit (``pressure_barg``, ``boil_off_kg_h``, ``cargo_t``).
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from . import CAUTION
from .units import J_PER_KWH, SECONDS_PER_DAY, SECONDS_PER_HOUR, T_ZERO_C, pa_to_barg

#: Pressure-control sinks in the order of their accumulators in the state vector.
SINK_KEYS = ("fuel", "reliquefaction", "oxidiser", "relief")
#: Accumulators after the model state: heat in [J], mass per sink [kg] (in
#: SINK_KEYS order), gross heating value carried by each sink's vapour [J].
ACCUMULATORS = 1 + 2 * len(SINK_KEYS)

#: Time-series columns always present, in order, with their meaning.
TIMESERIES_COLUMNS = {
    "time_h": "time from voyage start [h]",
    "leg": "voyage leg",
    "control": "what is setting the pressure",
    "pressure_barg": "tank pressure [barg]",
    "liquid_temp_c": "liquid temperature [degC]",
    "vapour_temp_c": "vapour temperature [degC]",
    "surface_temp_c": "liquid temperature at the free surface [degC]",
    "bulk_liquid_temp_c": "liquid temperature below any warm surface layer [degC]",
    "fill_pct": "liquid volume / tank volume [%]",
    "liquid_level_m": "liquid level above the tank bottom [m]",
    "cargo_t": "cargo on board, liquid + vapour, all tanks [t]",
    "liquid_t": "liquid on board, all tanks [t]",
    "heat_in_kw": "heat flowing in through the insulation, all tanks [kW]",
    "boil_off_kg_h": "vapour drawn off by all sinks [kg/h]",
    "fuel_kg_h": "vapour burned as fuel [kg/h]",
    "reliquefied_kg_h": "vapour reliquefied and returned [kg/h]",
    "oxidised_kg_h": "vapour burned in the oxidiser [kg/h]",
    "vented_kg_h": "vapour released by the relief valves [kg/h]",
    "reliquefaction_power_kw": "electrical power of the reliquefaction plant [kW]",
    "cargo_loss_t": "cargo lost since the start (fuel + oxidiser + vented) [t]",
    "liquid_density_kg_m3": "density of the liquid [kg/m3]",
    "energy_lost_gj": "gross heating value of the cargo lost since the start [GJ]",
}
#: Composition columns follow, one pair per cargo component ``c``:
#: ``x_<c>`` liquid mole fraction [-] and ``y_<c>`` boil-off (equilibrium
#: vapour) mole fraction [-].


@dataclass(frozen=True)
class Event:
    """Something that happened on the voyage.

    Attributes
    ----------
    time : float  from voyage start [s]
    kind : str  e.g. ``relief-lift``, ``liquid-full``, ``plant-trip``
    detail : str  plain words
    """

    time: float
    kind: str
    detail: str

    def as_dict(self) -> dict:
        """``{time_h, kind, detail}`` as in ``summary.json``."""
        return {
            "time_h": round(self.time / SECONDS_PER_HOUR, 6),
            "kind": self.kind,
            "detail": self.detail,
        }


@dataclass
class VoyageResult:
    """Everything a run produced.

    Attributes
    ----------
    title : str
    model : str
    cargo : str
    status : str  ``completed``, ``stopped`` (a hazard ended the run) or ``failed``
    message : str
    timeseries : pandas.DataFrame  columns of :data:`TIMESERIES_COLUMNS`
    events : list[Event]
    summary : dict  the ``summary.json`` content
    stats : dict  solver counters: ``rhs_calls``, ``segments``
    """

    title: str
    model: str
    cargo: str
    status: str
    message: str
    timeseries: pd.DataFrame
    events: list[Event] = field(default_factory=list)
    summary: dict = field(default_factory=dict)
    stats: dict = field(default_factory=dict)

    @property
    def time_to_relief_h(self) -> float | None:
        """Time of the first relief-valve lift [h], or None."""
        return self.summary.get("time_to_relief_h")

    def events_frame(self) -> pd.DataFrame:
        """Events as a table with ``time_h, kind, detail``."""
        return pd.DataFrame(
            [e.as_dict() for e in self.events], columns=["time_h", "kind", "detail"]
        )


def _sample_times(segments, t_final: float) -> list[float]:
    """Hourly grid (finer for short runs) plus every segment end."""
    step = SECONDS_PER_HOUR
    if t_final < 2 * SECONDS_PER_DAY:
        step = max(t_final / 96.0, 60.0)
    if t_final > 400 * SECONDS_PER_DAY:
        step = math.ceil(t_final / 9600.0 / SECONDS_PER_HOUR) * SECONDS_PER_HOUR
    grid = np.arange(0.0, t_final, step).tolist()
    times = sorted(set(grid) | {seg[1] for seg in segments} | {t_final})
    return times


def build_result(voyage, segments, status: str, message: str, t_final: float) -> VoyageResult:
    """Sample the segments and assemble a :class:`VoyageResult` (whole ship)."""
    scenario = voyage.scenario
    n = voyage.n_model
    spec = scenario.reliquefaction
    specific_power = spec.specific_power if spec is not None else 0.0
    times = np.array(_sample_times(segments, t_final))
    blocks = []
    final_y = None
    # Each sample belongs to the segment that ends at or after it.
    ends = np.array([seg[1] for seg in segments])
    owner = np.minimum(np.searchsorted(ends, times, side="left"), len(segments) - 1)
    use = getattr(voyage.model, "use", None)
    for si, (t0, t1, sol, mode, caps, leg, context) in enumerate(segments):
        ts = times[owner == si]
        if ts.size == 0:
            continue
        if use is not None:
            use(context)
        y = np.atleast_2d(sol(np.clip(ts, t0, t1)))
        if y.shape[0] != n + ACCUMULATORS:
            y = y.T
        blocks.append(_columns(voyage, ts, y, mode, caps, leg, specific_power))
        final_y = y[:, -1]
    frame = pd.DataFrame({k: np.concatenate([b[k] for b in blocks]) for k in blocks[0]})
    if use is not None:
        use(segments[-1][6])
    events = sorted(voyage.events, key=lambda e: e.time)
    summary = _summary(voyage, frame, events, final_y, status, message, t_final, specific_power)
    return VoyageResult(
        scenario.title, scenario.model, scenario.cargo, status, message, frame, events, summary
    )


def _columns(voyage, ts, y, mode, caps, leg, specific_power) -> dict:
    """Time-series columns (whole ship) for the samples of one segment."""
    count, n = voyage.count, voyage.n_model
    state = voyage.model.evaluate_many(y[:n], leg.air_temperature, leg.sea_temperature)
    rates = [
        np.broadcast_to(np.asarray(r, dtype=float), ts.shape)
        for r in voyage.rates(state, mode, caps)
    ]
    idx = voyage.index
    zero = np.zeros_like(ts)

    def per_hour(key):
        return rates[idx[key]] * count * SECONDS_PER_HOUR if key in idx else zero

    reliq = per_hour("reliquefaction")
    fill = np.asarray(state.fill, dtype=float)
    return {
        "time_h": ts / SECONDS_PER_HOUR,
        "leg": np.full(ts.shape, leg.name, dtype=object),
        "control": np.full(ts.shape, voyage.describe(mode), dtype=object),
        "pressure_barg": pa_to_barg(state.pressure),
        "liquid_temp_c": state.liquid_temperature - T_ZERO_C,
        "vapour_temp_c": state.vapour_temperature - T_ZERO_C,
        "surface_temp_c": np.asarray(state.surface_temperature, dtype=float) - T_ZERO_C,
        "bulk_liquid_temp_c": np.asarray(state.bulk_liquid_temperature, dtype=float) - T_ZERO_C,
        "fill_pct": 100.0 * fill,
        "liquid_level_m": np.asarray(voyage.shape.level(np.clip(fill, 0.0, 1.0) * voyage.volume)),
        "cargo_t": (state.liquid_mass + state.vapour_mass) * count / 1000.0,
        "liquid_t": state.liquid_mass * count / 1000.0,
        "heat_in_kw": state.heat_in * count / 1000.0,
        "boil_off_kg_h": sum(rates) * count * SECONDS_PER_HOUR,
        "fuel_kg_h": per_hour("fuel"),
        "reliquefied_kg_h": reliq,
        "oxidised_kg_h": per_hour("oxidiser"),
        "vented_kg_h": per_hour("relief"),
        "reliquefaction_power_kw": reliq / SECONDS_PER_HOUR * specific_power / 1000.0,
        "cargo_loss_t": (y[n + 1] + y[n + 3] + y[n + 4]) * count / 1000.0,
        "liquid_density_kg_m3": np.divide(
            state.liquid_mass, fill * voyage.volume,
            out=np.full(ts.shape, np.nan), where=fill * voyage.volume > 0),
        "energy_lost_gj": _energy_lost(y, n) * count / 1e9,
        **_composition_columns(voyage, state, ts.shape),
    }


def _energy_lost(y, n):
    """Gross heating value lost per tank: fuel + oxidiser + relief accumulators [J]."""
    e = n + 1 + len(SINK_KEYS)
    return y[e] + y[e + 2] + y[e + 3]


def _components(voyage) -> list[str]:
    sc = voyage.scenario
    return [c for c, _ in sc.mole_fractions] if sc.mole_fractions is not None else [sc.cargo]


def _composition_columns(voyage, state, shape) -> dict:
    names = _components(voyage)
    if state.liquid_fractions is None:
        ones = np.ones(shape)
        return {f"x_{names[0]}": ones, f"y_{names[0]}": ones}
    x = np.atleast_2d(state.liquid_fractions)
    yv = np.atleast_2d(state.vapour_fractions)
    out = {f"x_{c}": x[i] for i, c in enumerate(names)}
    out.update({f"y_{c}": yv[i] for i, c in enumerate(names)})
    return out


def _summary(voyage, frame, events, final_y, status, message, t_final, specific_power) -> dict:
    scenario = voyage.scenario
    count = voyage.count
    n = voyage.n_model
    first = frame.iloc[0]
    last = frame.iloc[-1]
    kg_to_t = count / 1000.0
    heat_j, fuel, reliq, oxid, vent = (float(v) for v in final_y[n : n + 5])
    initial_t = float(first["cargo_t"])
    final_t = float(last["cargo_t"])
    boil_off = (fuel + reliq + oxid + vent) * kg_to_t
    days = t_final / SECONDS_PER_DAY
    relief = [e.time for e in events if e.kind == "relief-lift"]
    time_to_relief = relief[0] / SECONDS_PER_HOUR if relief else None
    relief_barg = pa_to_barg(scenario.tank.relief_set_pressure)
    return {
        "title": scenario.title,
        "model": scenario.model,
        "cargo": scenario.cargo,
        "status": status,
        "message": message,
        "voyage_days": scenario.duration / SECONDS_PER_DAY,
        "simulated_days": days,
        "tank_count": count,
        "tank_volume_m3": voyage.volume,
        "u_value_w_m2k": voyage.u_value,
        "time_to_relief_h": time_to_relief,
        "relief_set_barg": relief_barg,
        "initial_pressure_barg": float(first["pressure_barg"]),
        "max_pressure_barg": float(frame["pressure_barg"].max()),
        "final_pressure_barg": float(last["pressure_barg"]),
        "margin_to_relief_bar": relief_barg - float(frame["pressure_barg"].max()),
        "initial_liquid_temp_c": float(first["liquid_temp_c"]),
        "final_liquid_temp_c": float(last["liquid_temp_c"]),
        "final_vapour_temp_c": float(last["vapour_temp_c"]),
        "final_surface_temp_c": float(last["surface_temp_c"]),
        "final_bulk_liquid_temp_c": float(last["bulk_liquid_temp_c"]),
        "initial_fill_pct": float(first["fill_pct"]),
        "final_fill_pct": float(last["fill_pct"]),
        "max_fill_pct": float(frame["fill_pct"].max()),
        "initial_cargo_t": initial_t,
        "final_cargo_t": final_t,
        "boil_off_t": boil_off,
        "vented_t": vent * kg_to_t,
        "reliquefied_t": reliq * kg_to_t,
        "fuel_t": fuel * kg_to_t,
        "oxidised_t": oxid * kg_to_t,
        "cargo_loss_t": (fuel + oxid + vent) * kg_to_t,
        "delivered_t": voyage.delivered_t,
        "loaded_t": voyage.loaded_t,
        "heel_remaining_t": float(last["liquid_t"]),
        "cargo_loss_pct": 100.0 * (fuel + oxid + vent) * kg_to_t / initial_t if initial_t else 0.0,
        "mean_bor_pct_day": 100.0 * boil_off / initial_t / days if days > 0 and initial_t else 0.0,
        "heat_in_mwh": heat_j * count / J_PER_KWH / 1000.0,
        "mean_heat_in_kw": heat_j * count / t_final / 1000.0 if t_final > 0 else 0.0,
        "reliquefaction_energy_kwh": reliq * count * specific_power / J_PER_KWH,
        "legs": _legs(scenario),
        "events": [e.as_dict() for e in events],
        "model_warnings": list(getattr(voyage.model, "warnings", [])),
        **_commercial(voyage, frame, final_y, fuel + oxid + vent),
        "caution": CAUTION,
    }


def _commercial(voyage, frame, final_y, lost_kg) -> dict:
    """Composition, quality, energy and value figures of the summary."""
    from .energy import REFERENCE_TEXT, mmbtu, quality

    scenario = voyage.scenario
    count, n = voyage.count, voyage.n_model
    names = _components(voyage)
    first, last = frame.iloc[0], frame.iloc[-1]
    start = {c: float(first[f"x_{c}"]) for c in names}
    arrival = {c: float(last[f"x_{c}"]) for c in names}
    # boil-off composition, mean over the voyage weighted by moles drawn off
    masses = np.array([voyage.model_molar_mass(c) for c in names])
    ys = np.array([frame[f"y_{c}"].to_numpy(dtype=float) for c in names])
    molar_rate = frame["boil_off_kg_h"].to_numpy(dtype=float) / (masses @ ys)
    hours = frame["time_h"].to_numpy(dtype=float)
    weights = (np.trapezoid(ys * molar_rate, hours, axis=1) if hours.size > 1
               else np.zeros(len(names)))
    bog_mean = ({c: float(w / weights.sum()) for c, w in zip(names, weights, strict=True)}
                if weights.sum() > 0 else None)
    q_start, q_arrival = quality(start), quality(arrival)
    has_energy = voyage.gross_molar is not None
    e = n + 1 + len(SINK_KEYS)
    by_sink = {k: float(final_y[e + i]) * count for i, k in enumerate(SINK_KEYS)}
    lost = by_sink["fuel"] + by_sink["oxidiser"] + by_sink["relief"]
    on_board_end = voyage.cargo_energy(final_y, voyage.evaluate(final_y, scenario.legs[-1])) * count
    loaded = voyage.energy_loaded_start + voyage.loaded_energy
    delivered = voyage.delivered_energy if voyage.delivered_t > 0 else on_board_end

    def energy(value):
        return value / 1e9 if has_energy else None

    value_lost, basis = None, None
    if scenario.price_per_mmbtu is not None and has_energy:
        value_lost, basis = scenario.price_per_mmbtu * mmbtu(lost), "price per MMBtu, gross"
    elif scenario.price_per_tonne is not None:
        value_lost, basis = scenario.price_per_tonne * lost_kg * count / 1000.0, "price per tonne"
    return {
        "initial_composition": start,
        "arrival_composition": arrival,
        "bog_composition_mean": bog_mean,
        "quality_start": q_start,
        "quality_arrival": q_arrival,
        "gcv_start_mj_kg": q_start["gcv_mj_kg"] if q_start else None,
        "gcv_arrival_mj_kg": q_arrival["gcv_mj_kg"] if q_arrival else None,
        "energy_loaded_gj": energy(loaded),
        "energy_lost_gj": energy(lost),
        "energy_lost_by_sink_gj": ({"fuel": by_sink["fuel"] / 1e9,
                                    "oxidiser": by_sink["oxidiser"] / 1e9,
                                    "vented": by_sink["relief"] / 1e9} if has_energy else None),
        "energy_reliquefied_gj": energy(by_sink["reliquefaction"]),
        "energy_delivered_gj": energy(delivered),
        "energy_on_board_end_gj": energy(on_board_end),
        "energy_loaded_mmbtu": mmbtu(loaded) if has_energy else None,
        "energy_lost_mmbtu": mmbtu(lost) if has_energy else None,
        "energy_delivered_mmbtu": mmbtu(delivered) if has_energy else None,
        "energy_reference": REFERENCE_TEXT if has_energy else None,
        "value_lost": value_lost,
        "value_lost_basis": basis,
    }


def _legs(scenario) -> list[dict]:
    """The voyage legs as data: name, start and end [h], ambient [degC], fuel [kg/h]."""
    out, start = [], 0.0
    for leg in scenario.legs:
        out.append({
            "name": leg.name,
            "start_h": start / SECONDS_PER_HOUR,
            "end_h": (start + leg.duration) / SECONDS_PER_HOUR,
            "air_c": leg.air_temperature - T_ZERO_C,
            "sea_c": leg.sea_temperature - T_ZERO_C,
            "fuel_kg_h": leg.fuel_demand * SECONDS_PER_HOUR,
        })
        start += leg.duration
    return out


def json_safe(value):
    """JSON-safe copy: NaN/inf become None, numpy scalars Python numbers, keys strings."""
    if isinstance(value, dict):
        return {str(k): json_safe(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [json_safe(v) for v in value]
    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def summary_json(result: VoyageResult) -> str:
    """The ``summary.json`` text."""
    return json.dumps(json_safe(result.summary), indent=2)


def timeseries_csv(result: VoyageResult) -> str:
    """The ``timeseries.csv`` text."""
    return result.timeseries.to_csv(index=False, float_format="%.6g")


def write_outputs(result: VoyageResult, out_dir: str | os.PathLike) -> list[Path]:
    """Write ``summary.json`` and ``timeseries.csv`` into ``out_dir``.

    Both files are written to temporary names first and renamed into place,
    so a failure never leaves a half-written file behind.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    payloads = {"summary.json": summary_json(result), "timeseries.csv": timeseries_csv(result)}
    written = []
    temps = []
    try:
        for name, text in payloads.items():
            fd, tmp = tempfile.mkstemp(dir=out, prefix=f".{name}.", suffix=".tmp")
            temps.append((tmp, out / name))  # before writing: a failed write is removed too
            with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
                fh.write(text)
        umask = os.umask(0)
        os.umask(umask)
        for tmp, final in temps:
            os.chmod(tmp, 0o666 & ~umask)  # mkstemp makes 0600; give the usual mode
            os.replace(tmp, final)
            written.append(final)
    finally:
        for tmp, _ in temps:
            if os.path.exists(tmp):
                os.unlink(tmp)
    return written

"""Headline figures of a run and the side-by-side comparison table. Pure, no Streamlit.

Everything here reads the engine's own ``VoyageResult.summary`` (whole ship,
trade units); nothing is recomputed.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import pandas as pd


@dataclass(frozen=True)
class Headline:
    """One headline figure: short label, value with unit, a line of context, help."""

    key: str
    label: str
    value: str
    note: str
    help: str


def _num(x) -> float | None:
    if x is None:
        return None
    x = float(x)
    return None if math.isnan(x) else x


def relief_text(summary: dict) -> tuple[str, str]:
    """(value, note) for the relief valve: first lift time, or holds with the margin left."""
    hours = _num(summary.get("time_to_relief_h"))
    if hours is None:
        margin = _num(summary.get("margin_to_relief_bar")) or 0.0
        whole = summary.get("status") == "completed"
        value = "Holds all voyage" if whole else "Does not lift"
        return value, f"{margin:.3f} bar margin left at the peak"
    return f"Lifts after {hours:.1f} h", f"day {hours / 24.0:.2f} of the voyage"


def headlines(summary: dict) -> list[Headline]:
    """The figures an engineer reads first, in reading order."""
    stopped = summary.get("status") != "completed"
    end = "at stop" if stopped else "on arrival"
    relief_value, relief_note = relief_text(summary)
    loss_t = _num(summary.get("cargo_loss_t")) or 0.0
    energy = _num(summary.get("reliquefaction_energy_kwh")) or 0.0
    reliq_t = _num(summary.get("reliquefied_t")) or 0.0
    return [
        Headline("relief", "Relief valve", relief_value, relief_note,
                 "First time the tank pressure reaches the relief valve set pressure (MARVS)."),
        Headline("cargo_loss", "Cargo lost", f"{loss_t:,.1f} t",
                 f"{summary.get('cargo_loss_pct', 0.0):.3f} % of "
                 f"{summary.get('initial_cargo_t', 0.0):,.0f} t loaded",
                 "Burned as fuel, oxidised and vented; reliquefied vapour is not lost."),
        Headline("bor", "Mean BOR", f"{summary.get('mean_bor_pct_day', 0.0):.4f} %/day",
                 f"{summary.get('boil_off_t', 0.0):,.1f} t boiled off in "
                 f"{summary.get('simulated_days', 0.0):.1f} days",
                 "All vapour drawn off (every sink) over the cargo loaded, per day."),
        Headline("pressure", f"Pressure {end}",
                 f"{summary.get('final_pressure_barg', 0.0):.3f} barg",
                 f"peak {summary.get('max_pressure_barg', 0.0):.3f} barg",
                 "Tank pressure at the end of the run."),
        Headline("liquid_temp", f"Liquid {end}",
                 f"{summary.get('final_liquid_temp_c', 0.0):.2f} °C",
                 f"departure {summary.get('initial_liquid_temp_c', 0.0):.2f} °C",
                 "Cargo liquid temperature at the end of the run."),
        Headline("reliquefaction_energy", "Reliquefaction energy",
                 f"{energy / 1000.0:,.2f} MWh",
                 f"{reliq_t:,.1f} t reliquefied" if reliq_t > 0 else "plant not used",
                 "Electrical energy of the reliquefaction plant over the run."),
    ]


def no_energy_reason(summary: dict) -> str:
    """Why a run has no energy figures: the components without an ISO 6976 heating value."""
    from sim.cargo import CATALOGUE
    from sim.energy import component_gross_molar

    def words(name: str) -> str:
        return CATALOGUE[name].label if name in CATALOGUE else name

    composition = summary.get("initial_composition") or {}
    names = [words(c) for c in composition if component_gross_molar(c) is None]
    cargo = words(str(summary.get("cargo", "the cargo")))
    if not names and composition and not any(component_gross_molar(c) for c in composition):
        return f"{cargo} does not burn: no heating value"
    return f"no ISO 6976 heating value for {', '.join(names) or cargo}"


def energy_headlines(summary: dict) -> list[Headline]:
    """Energy loaded, lost and delivered (GJ and MMBtu) and the value of the cargo lost.

    Values the engine leaves as None read "—", with the reason in the note.
    """
    stopped = summary.get("status") != "completed"
    loaded, lost = _num(summary.get("energy_loaded_gj")), _num(summary.get("energy_lost_gj"))
    delivered = _num(summary.get("energy_delivered_gj"))
    reason = no_energy_reason(summary)
    def card(key, label, gj, detail, help_text):
        if gj is None:
            return Headline(key, label, "—", reason, help_text)
        return Headline(key, label, f"{gj:,.0f} GJ", detail, help_text)

    items = [card("energy_loaded", "Energy loaded", loaded,
                  f"{summary.get('energy_loaded_mmbtu') or 0:,.0f} MMBtu",
                  "Gross heating value of the cargo on board at departure "
                  "(and loaded at port calls).")]
    share = f", {100.0 * lost / loaded:.3f} % of loaded" if loaded and lost is not None else ""
    sinks = summary.get("energy_lost_by_sink_gj") or {}
    split = ", ".join(f"{k} {v:,.0f} GJ" for k, v in sinks.items())
    items.append(card("energy_lost", "Energy lost", lost,
                      f"{summary.get('energy_lost_mmbtu') or 0:,.0f} MMBtu{share}",
                      "Gross heating value of the cargo burned as fuel, oxidised and vented"
                      + (f" ({split})" if split else "") + ". Reliquefied vapour is not lost."))
    discharged = (_num(summary.get("delivered_t")) or 0.0) > 0.0
    where = ("discharged at port calls" if discharged else
             "left on board at stop" if stopped else "on board on arrival")
    items.append(card("energy_delivered", "Energy delivered", delivered,
                      f"{summary.get('energy_delivered_mmbtu') or 0:,.0f} MMBtu, {where}",
                      "Gross heating value of the cargo discharged, or on board at the "
                      "end when the voyage has no port call."))
    value = _num(summary.get("value_lost"))
    if value is None:
        note = ("no price set (Set-up, cargo prices)" if loaded is not None
                else "no price per tonne set (Set-up, cargo prices)")
        items.append(Headline("value_lost", "Value of cargo lost", "—", note,
                              "Cargo lost priced per MMBtu (gross) or, failing that, per "
                              "tonne; in the currency of the price."))
    else:
        items.append(Headline("value_lost", "Value of cargo lost", f"{value:,.0f}",
                              f"at the {summary['value_lost_basis']}"
                              if summary.get("value_lost_basis") else "",
                              "Cargo lost priced per MMBtu (gross) or, failing that, per "
                              "tonne; in the currency of the price."))
    return items


#: Rows of the quality table: (row label with unit, quality key, number format).
QUALITY_ROWS: tuple[tuple[str, str, str], ...] = (
    ("GCV, mass basis (MJ/kg)", "gcv_mj_kg", "{:.3f}"),
    ("NCV, mass basis (MJ/kg)", "ncv_mj_kg", "{:.3f}"),
    ("GCV, volume basis (MJ/m³)", "gcv_mj_m3", "{:.3f}"),
    ("NCV, volume basis (MJ/m³)", "ncv_mj_m3", "{:.3f}"),
    ("Wobbe index (MJ/m³)", "wobbe_mj_m3", "{:.3f}"),
    ("Relative density (–)", "relative_density", "{:.4f}"),
    ("Molar mass (kg/kmol)", "molar_mass_kg_kmol", "{:.3f}"),
)


def end_words(summary: dict) -> str:
    """Heading of the end-of-run column: on arrival, at a stop, or the heel after a discharge."""
    if summary.get("status") != "completed":
        return "At stop"
    if (_num(summary.get("delivered_t")) or 0.0) > 0.0:
        return "End (heel)"
    return "On arrival"


def _signed(fmt: str, x: float) -> str:
    """A change with its sign; one that rounds to nothing reads as an unsigned zero."""
    text = fmt.replace("{:", "{:+", 1).format(x)
    return text[1:] if float(text.replace(",", "")) == 0.0 else text


def quality_table(summary: dict, timeseries: pd.DataFrame) -> pd.DataFrame:
    """Cargo quality as loaded and at the end, as text: heating values, Wobbe index,
    relative density, molar mass (summary's ``quality_start`` / ``quality_arrival``),
    liquid density and bubble temperature (first and last time-series rows).
    """
    end = end_words(summary)
    q0, q1 = summary.get("quality_start"), summary.get("quality_arrival")
    rows = []
    for label, key, fmt in QUALITY_ROWS:
        if q0 is None or q1 is None:
            rows.append((label, "—", "—", "—"))
            continue
        a, b = float(q0[key]), float(q1[key])
        rows.append((label, fmt.format(a), fmt.format(b), _signed(fmt, b - a)))
    for label, column, fmt in (("Liquid density (kg/m³)", "liquid_density_kg_m3", "{:.2f}"),
                               ("Bubble temperature (°C)", "liquid_temp_c", "{:.2f}")):
        if column not in timeseries:
            continue
        a, b = float(timeseries[column].iloc[0]), float(timeseries[column].iloc[-1])
        rows.append((label, fmt.format(a), fmt.format(b), _signed(fmt, b - a)))
    frame = pd.DataFrame(rows, columns=["Quality", "Loaded", end, "Change"]).set_index("Quality")
    return frame


def composition_table(summary: dict) -> pd.DataFrame:
    """Liquid composition loaded and at the end, and the voyage-mean boil-off, in mol % (text)."""
    end = end_words(summary)
    start = summary.get("initial_composition") or {}
    arrival = summary.get("arrival_composition") or {}
    bog = summary.get("bog_composition_mean")
    from sim.cargo import CATALOGUE

    rows = []
    for name in start:
        a, b = 100.0 * start[name], 100.0 * arrival.get(name, float("nan"))
        mean = "—" if bog is None else f"{100.0 * bog.get(name, 0.0):.4f}"
        words = CATALOGUE[name].label if name in CATALOGUE else name
        rows.append((words, f"{a:.4f}", f"{b:.4f}", _signed("{:.4f}", b - a), mean))
    return pd.DataFrame(rows, columns=[COMPOSITION_INDEX, "Loaded", end, "Change",
                                       "Boil-off, mean"]).set_index(COMPOSITION_INDEX)


#: Index heading of the composition table (its values are mole percent).
COMPOSITION_INDEX = "Component, mol %"


#: Rows of the comparison table: (row label with unit, summary key, number format).
COMPARE_ROWS: tuple[tuple[str, str, str], ...] = (
    ("Relief valve first lifts (h)", "time_to_relief_h", "{:.1f}"),
    ("Peak pressure (barg)", "max_pressure_barg", "{:.3f}"),
    ("Margin to relief at peak (bar)", "margin_to_relief_bar", "{:.3f}"),
    ("Final pressure (barg)", "final_pressure_barg", "{:.3f}"),
    ("Final liquid temperature (°C)", "final_liquid_temp_c", "{:.2f}"),
    ("Final fill (%)", "final_fill_pct", "{:.2f}"),
    ("Cargo loaded (t)", "initial_cargo_t", "{:,.0f}"),
    ("Cargo lost (t)", "cargo_loss_t", "{:,.1f}"),
    ("Cargo lost (%)", "cargo_loss_pct", "{:.3f}"),
    ("Burned as fuel (t)", "fuel_t", "{:,.1f}"),
    ("Reliquefied (t)", "reliquefied_t", "{:,.1f}"),
    ("Oxidised (t)", "oxidised_t", "{:,.1f}"),
    ("Vented (t)", "vented_t", "{:,.1f}"),
    ("Mean BOR (%/day)", "mean_bor_pct_day", "{:.4f}"),
    ("Reliquefaction energy (kWh)", "reliquefaction_energy_kwh", "{:,.0f}"),
    ("Energy loaded (GJ)", "energy_loaded_gj", "{:,.0f}"),
    ("Energy lost (GJ)", "energy_lost_gj", "{:,.0f}"),
    ("Energy lost (MMBtu)", "energy_lost_mmbtu", "{:,.0f}"),
    ("Value of cargo lost", "value_lost", "{:,.0f}"),
    ("GCV on arrival (MJ/kg)", "gcv_arrival_mj_kg", "{:.3f}"),
    ("Days simulated", "simulated_days", "{:.2f}"),
)


def compare_frame(runs: Sequence[tuple[str, dict]]) -> pd.DataFrame:
    """Headline numbers side by side: one row per figure, one column per run.

    Values are the summaries' own numbers (float); a relief valve that never
    lifts is NaN.
    """
    data = {}
    for label, summary in runs:
        data[label] = [_num(summary.get(key)) for _, key, _ in COMPARE_ROWS]
    frame = pd.DataFrame(data, index=[row for row, _, _ in COMPARE_ROWS], dtype=float)
    frame.index.name = "Figure"
    return frame


def compare_display(frame: pd.DataFrame) -> pd.DataFrame:
    """The comparison table as text, each row in its own format; no relief lift reads so."""
    formats = {row: fmt for row, _, fmt in COMPARE_ROWS}
    out = frame.astype(object).copy()
    for row in frame.index:
        for col in frame.columns:
            x = frame.loc[row, col]
            if pd.isna(x):
                out.loc[row, col] = "does not lift" if row.startswith("Relief") else "—"
            else:
                out.loc[row, col] = formats.get(row, "{:.4g}").format(x)
    return out.astype(str)


#: Plain words for the engine's event kinds (the events table).
EVENT_WORDS = {
    "leg": "Leg starts",
    "relief-lift": "Relief valve lifts",
    "relief-reseat": "Relief valve reseats",
    "plant-trip": "Reliquefaction plant trips",
    "plant-restore": "Reliquefaction plant back",
    "fuel-stop": "Engines stop taking gas",
    "fuel-resume": "Engines take gas again",
    "oxidiser-trip": "Oxidiser out of service",
    "oxidiser-restore": "Oxidiser back",
    "holding": "Pressure held",
    "at-capacity": "At full capacity",
    "stopped-drawing": "Stops drawing vapour",
    "liquid-full": "Tank liquid-full",
    "vacuum": "Below vacuum level",
    "triple-point": "Triple point reached",
    "low-pressure-limit": "Below modelled range",
    "near-critical": "Near critical point",
    "loading-limit-exceeded": "Above IGC loading limit",
    "port-call": "Port call",
    "mixing": "Liquid stirred",
    "heel-exhausted": "Heel used up",
}


def plain_detail(text: str) -> str:
    """An engine event detail for the screen: °C for ``degC``, an arrow for ``->``."""
    return str(text).replace("degC", "°C").replace(" -> ", " → ")


def events_table(events: pd.DataFrame) -> pd.DataFrame:
    """The engine's events frame (time_h, kind, detail) with days and plain words added."""
    out = pd.DataFrame({
        "Day": events["time_h"].astype(float) / 24.0,
        "Hour": events["time_h"].astype(float),
        "Event": [EVENT_WORDS.get(k, str(k).replace("-", " ").capitalize())
                  for k in events["kind"]],
        "Detail": [plain_detail(d) for d in events["detail"]],
        "kind": events["kind"].astype(str),
    })
    return out.reset_index(drop=True)


def model_pair(label_a: str, summary_a: dict, label_b: str, summary_b: dict) -> list[Headline]:
    """Relief-valve headline for the same voyage under two tank models, and the difference."""
    items = []
    for label, summary in ((label_a, summary_a), (label_b, summary_b)):
        value, note = relief_text(summary)
        items.append(Headline(f"relief:{label}", f"Relief valve, {label}", value, note,
                              f"First relief-valve lift with the {label} tank model."))
    ha, hb = _num(summary_a.get("time_to_relief_h")), _num(summary_b.get("time_to_relief_h"))
    if ha is not None and hb is not None:
        value = f"{hb - ha:+.1f} h"
        note = f"{label_b} minus {label_a}"
        if ha > 0:
            note += f"; ratio {hb / ha:.2f}"
    elif ha is None and hb is None:
        value, note = "—", "the relief valves lift in neither run"
    else:
        lifts, hours, holds, summary = ((label_a, ha, label_b, summary_b) if hb is None
                                        else (label_b, hb, label_a, summary_a))
        end_h = 24.0 * (_num(summary.get("simulated_days")) or 0.0)
        if end_h > hours:
            value = f"Over {end_h - hours:.1f} h"
            note = (f"the {lifts} model lifts at least that much earlier; the {holds} model "
                    "holds to the end of the run")
        else:
            value, note = "—", f"only the {lifts} model lifts the valves (after {hours:.1f} h)"
    items.append(Headline("relief:difference", "Difference in time to lift", value, note,
                          "How much the choice of tank model moves the relief-valve lift."))
    return items


"""Plotly figures built from voyage results. Pure functions, no Streamlit.

Every figure plots against days from departure and carries ``layout.meta =
{"chart": <name>}``; every curve carries ``meta`` naming what it shows
(``"pressure"``, ``"liquid_temp_c"``, ``"event:relief-lift"``, ...) so that tests
and downloads can find them without relying on trace order.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from sim.results import VoyageResult

#: One colour per run when runs are overlaid (calm, distinct, print-safe).
RUN_COLOURS = ("#1d4e6b", "#c2593f", "#3b8c6e", "#8a6fb0", "#b58b24", "#5d6d7e")
#: Colour of the single-run pressure curve.
PRESSURE_COLOUR = "#1d4e6b"
#: Colours of the boil-off sinks (stacked areas).
SINK_COLOURS = {
    "fuel_kg_h": "#7a8fa6",
    "reliquefied_kg_h": "#3b8c6e",
    "oxidised_kg_h": "#d9a441",
    "vented_kg_h": "#b5413a",
}
SINK_WORDS = {
    "fuel_kg_h": "Burned as fuel",
    "reliquefied_kg_h": "Reliquefied",
    "oxidised_kg_h": "Oxidised",
    "vented_kg_h": "Vented by relief valves",
}

#: Events marked on the pressure chart: kind -> (words, marker symbol, colour).
MARKED_EVENTS = {
    "relief-lift": ("Relief valve lifts", "triangle-up", "#b5413a"),
    "relief-reseat": ("Relief valve reseats", "triangle-down-open", "#b5413a"),
    "plant-trip": ("Plant trips", "x", "#2f3b45"),
    "plant-restore": ("Plant back", "circle-open", "#2f3b45"),
    "oxidiser-trip": ("Oxidiser out", "x-thin-open", "#9a7a1f"),
    "oxidiser-restore": ("Oxidiser back", "circle-open", "#9a7a1f"),
    "fuel-stop": ("Engines stop gas", "diamond-open", "#5f7185"),
    "fuel-resume": ("Engines back on gas", "diamond", "#5f7185"),
    "liquid-full": ("Liquid-full", "square", "#111111"),
    "vacuum": ("Below vacuum level", "star-open", "#6b4c9a"),
    "mixing": ("Liquid stirred", "hourglass-open", "#3f86a8"),
    "port-call": ("Port call", "square-open", "#5d6d7e"),
}
#: Outage windows shaded on the single-run pressure chart: start kind -> (end kind, words).
OUTAGE_BANDS = {
    "plant-trip": ("plant-restore", "plant down"),
    "oxidiser-trip": ("oxidiser-restore", "oxidiser down"),
    "fuel-stop": ("fuel-resume", "no gas burning"),
}

FONT = "Source Sans Pro, Helvetica, Arial, sans-serif"

#: One colour per mixture component (light ends cool, heavier ends warm, inerts grey).
COMPONENT_COLOURS = {
    "methane": "#1d4e6b",
    "ethane": "#3f86a8",
    "propane": "#3b8c6e",
    "n-butane": "#b58b24",
    "isobutane": "#d9a441",
    "n-pentane": "#c2593f",
    "isopentane": "#e08a6d",
    "nitrogen": "#6b4c9a",
    "carbon-dioxide": "#5d6d7e",
    "ethylene": "#2a9d8f",
    "propylene": "#8a6fb0",
}
#: Lowest mole percent drawn on the (log) boil-off composition chart; components that
#: never reach it start hidden (their legend entry shows them).
VAPOUR_FLOOR_PCT = 1e-3


@dataclass(frozen=True)
class Level:
    """A horizontal reference line: words, value, colour, dash, unit (barg for set pressures)."""

    label: str
    barg: float
    colour: str
    dash: str
    unit: str = "barg"


def control_levels(data: dict) -> list[Level]:
    """Set pressures of a scenario dict (file units): relief, plant hold, oxidiser start."""
    levels = []
    tank = data.get("tank", {}) if isinstance(data.get("tank"), dict) else {}
    if isinstance(tank.get("relief_set_barg"), (int, float)):
        levels.append(Level("Relief set", float(tank["relief_set_barg"]), "#b5413a", "dash"))
    rl = data.get("reliquefaction")
    if isinstance(rl, dict) and isinstance(rl.get("hold_barg"), (int, float)):
        levels.append(Level("Plant hold", float(rl["hold_barg"]), "#3b8c6e", "dot"))
    ox = data.get("oxidiser")
    if isinstance(ox, dict) and isinstance(ox.get("set_barg"), (int, float)):
        levels.append(Level("Oxidiser start", float(ox["set_barg"]), "#b58b24", "dashdot"))
    return levels


def _days(result: VoyageResult) -> np.ndarray:
    return result.timeseries["time_h"].to_numpy(dtype=float) / 24.0


def _style(fig: go.Figure, chart: str, title: str, ytitle: str, height: int,
           legend: bool | None = None) -> go.Figure:
    # The legend sits under the title, left-aligned, clear of the chart's toolbar (top right).
    if legend is None:
        legend = sum(1 for tr in fig.data if tr.showlegend is not False) > 1
    fig.update_layout(
        meta={"chart": chart},
        title={"text": title, "x": 0.0, "xanchor": "left", "y": 1.0, "yref": "container",
               "yanchor": "top", "pad": {"t": 10}, "font": {"size": 16}},
        template="plotly_white",
        height=height + (28 if legend else 0),
        margin={"l": 64, "r": 24, "t": 78 if legend else 48, "b": 44},
        font={"family": FONT, "size": 13, "color": "#23313b"},
        showlegend=legend,
        legend={"orientation": "h", "yanchor": "bottom", "y": 1.02, "xanchor": "left",
                "x": 0.0, "font": {"size": 12}},
        hovermode="x unified",
        paper_bgcolor="white",
        plot_bgcolor="white",
    )
    fig.update_xaxes(title_text="Days from departure", showline=True, linecolor="#9aa5ad",
                     gridcolor="#e8ecee", zeroline=False, rangemode="tozero")
    fig.update_yaxes(title_text=ytitle, showline=True, linecolor="#9aa5ad",
                     gridcolor="#e8ecee", zeroline=False)
    return fig


def _colour(index: int, single: bool, single_colour: str) -> str:
    return single_colour if single else RUN_COLOURS[index % len(RUN_COLOURS)]


def _width(index: int, single: bool) -> float:
    """Line width: overlaid runs get thinner in turn, so a curve lying on another shows."""
    return 2.2 if single else max(3.6 - 1.0 * index, 1.6)


def _event_times(result: VoyageResult, kind: str) -> list[float]:
    return [e.time / 3600.0 for e in result.events if e.kind == kind]


def _event_points(result: VoyageResult, kind: str, column: str):
    """Days and values of a column at each event of a kind (interpolated in time)."""
    hours = _event_times(result, kind)
    if not hours:
        return [], [], []
    ts = result.timeseries
    t = ts["time_h"].to_numpy(dtype=float)
    y = np.interp(hours, t, ts[column].to_numpy(dtype=float))
    from .headline import plain_detail

    details = [plain_detail(e.detail) for e in result.events if e.kind == kind]
    return [h / 24.0 for h in hours], list(y), details


def _add_levels(fig: go.Figure, levels: Sequence[Level]) -> None:
    seen = set()
    for level in levels:
        key = (level.label, round(level.barg, 9))
        if key in seen:
            continue
        seen.add(key)
        fig.add_hline(y=level.barg, line={"color": level.colour, "dash": level.dash, "width": 1.5},
                      annotation_text=f"{level.label} {level.barg:.3g} {level.unit}",
                      annotation_position="top left",
                      annotation_font={"size": 11, "color": level.colour})


def _add_bands(fig: go.Figure, result: VoyageResult) -> None:
    end_h = float(result.timeseries["time_h"].iloc[-1])
    for start_kind, (end_kind, words) in OUTAGE_BANDS.items():
        starts = sorted(_event_times(result, start_kind))
        ends = sorted(_event_times(result, end_kind))
        for t0 in starts:
            t1 = next((t for t in ends if t > t0), end_h)
            add_window(fig, t0 / 24.0, t1 / 24.0, words)


def add_window(fig: go.Figure, start_day: float, end_day: float, words: str) -> go.Figure:
    """Shade a window of days (an outage, a what-if failure), labelled at its top left."""
    fig.add_vrect(x0=start_day, x1=end_day, fillcolor="#7d8b96", opacity=0.13, line_width=0,
                  layer="below", annotation_text=words, annotation_position="top left",
                  annotation_font={"size": 11, "color": "#4a5963"})
    return fig


def _add_leg_marks(fig: go.Figure, result: VoyageResult) -> None:
    """Dotted lines at leg changes, leg names along the bottom (from the summary's legs)."""
    legs = [leg for leg in result.summary.get("legs", [])
            if leg["start_h"] <= result.summary.get("simulated_days", 0.0) * 24.0]
    if len(legs) < 2:
        return
    for i, leg in enumerate(legs):
        day = leg["start_h"] / 24.0
        if i:
            fig.add_vline(x=day, line={"color": "#b8c2c9", "width": 1, "dash": "dot"})
        fig.add_annotation(x=day, y=0.0, xref="x", yref="paper",
                           text=leg["name"], showarrow=False, xanchor="left", yanchor="bottom",
                           xshift=3, font={"size": 10, "color": "#7d8b96"})


def pressure_figure(runs: Sequence[tuple[str, VoyageResult]], levels: Sequence[Level] = (),
                    height: int = 400) -> go.Figure:
    """Tank pressure over the voyage, set-pressure lines and events marked.

    Parameters
    ----------
    runs : sequence of (label, VoyageResult)
        One run: full detail (events by kind, outage windows shaded, leg
        changes). Several: one curve per run with its relief lifts and plant
        trips in the run's colour.
    levels : sequence of Level
        Set-pressure lines (relief set, plant hold, oxidiser start) [barg].
    """
    fig = go.Figure()
    single = len(runs) == 1
    for i, (label, result) in enumerate(runs):
        colour = _colour(i, single, PRESSURE_COLOUR)
        fig.add_trace(go.Scatter(
            x=_days(result), y=result.timeseries["pressure_barg"].to_numpy(dtype=float),
            mode="lines", name="Tank pressure" if single else label, meta="pressure",
            line={"color": colour, "width": _width(i, single)},
            hovertemplate="%{y:.4f} barg<extra>%{fullData.name}</extra>",
        ))
        kinds = MARKED_EVENTS if single else ("relief-lift", "plant-trip", "liquid-full")
        for kind in kinds:
            x, y, details = _event_points(result, kind, "pressure_barg")
            if not x:
                continue
            words, symbol, kind_colour = MARKED_EVENTS[kind]
            fig.add_trace(go.Scatter(
                x=x, y=y, mode="markers", meta=f"event:{kind}",
                name=words if single else f"{label}: {words.lower()}",
                legendgroup=label, showlegend=single,
                marker={"symbol": symbol, "size": 12 if kind == "relief-lift" else 10,
                        "color": kind_colour if single else colour,
                        "line": {"width": 1.5, "color": kind_colour if single else colour}},
                text=details, hovertemplate="%{text}<extra></extra>",
            ))
    _add_levels(fig, levels)
    if single and runs:
        _add_bands(fig, runs[0][1])
        _add_leg_marks(fig, runs[0][1])
    fig = _style(fig, "pressure", "Tank pressure", "Pressure (barg)", height)
    _pad_pressure_axis(fig, runs, levels)
    return fig


def _pad_pressure_axis(fig: go.Figure, runs, levels: Sequence[Level]) -> None:
    """Leave room below the lowest curve or set line (the leg names sit there) and above the
    highest (the set-line labels sit there), so neither is drawn over a curve."""
    values = [float(v) for _, result in runs
              for v in (np.nanmin(result.timeseries["pressure_barg"].to_numpy(dtype=float)),
                        np.nanmax(result.timeseries["pressure_barg"].to_numpy(dtype=float)))]
    values += [level.barg for level in levels]
    values = [v for v in values if math.isfinite(v)]
    if not values:
        return
    low, high = min(values), max(values)
    span = high - low if high > low else max(abs(high) * 0.1, 0.01)
    fig.update_yaxes(range=[low - 0.12 * span, high + 0.08 * span])


def line_figure(runs: Sequence[tuple[str, VoyageResult]], column: str, title: str, ytitle: str,
                unit: str, digits: int = 2, height: int = 320,
                hlines: Sequence[Level] = ()) -> go.Figure:
    """One time-series column over the voyage, one curve per run."""
    fig = go.Figure()
    single = len(runs) == 1
    for i, (label, result) in enumerate(runs):
        fig.add_trace(go.Scatter(
            x=_days(result), y=result.timeseries[column].to_numpy(dtype=float), mode="lines",
            name=title if single else label, meta=column, showlegend=not single,
            line={"color": _colour(i, single, PRESSURE_COLOUR), "width": _width(i, single)},
            hovertemplate=f"%{{y:.{digits}f}} {unit}<extra>%{{fullData.name}}</extra>",
        ))
    _add_levels(fig, hlines)
    return _style(fig, column, title, ytitle, height)


def temperature_figure(runs, height: int = 320) -> go.Figure:
    """Liquid temperature over the voyage."""
    return line_figure(runs, "liquid_temp_c", "Liquid temperature", "Temperature (°C)", "°C",
                       digits=2, height=height)


def fill_figure(runs, height: int = 320) -> go.Figure:
    """Liquid fill over the voyage, with the IGC filling limit (98 %) for reference."""
    limit = Level("Filling limit", 98.0, "#7d8b96", "dot", "%")
    top = max(float(r.timeseries["fill_pct"].max()) for _, r in runs) if runs else 0.0
    fig = line_figure(runs, "fill_pct", "Liquid fill", "Fill (% of tank volume)", "%", digits=3,
                      height=height, hlines=[limit] if top > 90.0 else [])
    return fig


def boil_off_figure(result: VoyageResult, height: int = 340) -> go.Figure:
    """Where the boil-off goes (whole ship, kg/h), stacked by sink."""
    fig = go.Figure()
    ts = result.timeseries
    x = _days(result)
    shown = 0
    for column, words in SINK_WORDS.items():
        values = ts[column].to_numpy(dtype=float)
        if not np.any(np.abs(values) > 1e-9):
            continue
        shown += 1
        fig.add_trace(go.Scatter(
            x=x, y=values, mode="lines", name=words, meta=column, stackgroup="sinks",
            line={"color": SINK_COLOURS[column], "width": 0.8},
            fillcolor=SINK_COLOURS[column],
            hovertemplate="%{y:.0f} kg/h<extra>%{fullData.name}</extra>",
        ))
    if not shown:
        fig.add_annotation(text="No vapour drawn off: the tanks stay closed and the pressure rises",
                           xref="paper", yref="paper", x=0.5, y=0.5, showarrow=False,
                           font={"size": 13, "color": "#4a5963"})
    fig = _style(fig, "boil_off", "Where the boil-off goes (whole ship)", "Boil-off (kg/h)",
                 height, legend=shown > 0)
    fig.update_yaxes(rangemode="tozero")
    return fig


def total_boil_off_figure(runs, height: int = 320) -> go.Figure:
    """Total boil-off drawn off (all sinks, whole ship) per run."""
    fig = line_figure(runs, "boil_off_kg_h", "Boil-off drawn off (all sinks)", "Boil-off (kg/h)",
                      "kg/h", digits=0, height=height)
    fig.update_yaxes(rangemode="tozero")
    return fig


def cargo_loss_figure(runs, height: int = 320) -> go.Figure:
    """Cargo lost since departure (fuel + oxidiser + vented), per run."""
    fig = line_figure(runs, "cargo_loss_t", "Cargo lost since departure", "Cargo lost (t)", "t",
                      digits=1, height=height)
    fig.update_yaxes(rangemode="tozero")
    return fig


def components(result: VoyageResult) -> list[str]:
    """Components of a run's cargo, from its ``x_<component>`` columns (one for a pure cargo)."""
    return [c[2:] for c in result.timeseries.columns if c.startswith("x_")]


def is_mixture(result: VoyageResult) -> bool:
    """True when the cargo has more than one component."""
    return len(components(result)) > 1


def _component_words(name: str) -> str:
    from sim.cargo import CATALOGUE

    info = CATALOGUE.get(name)
    return info.label if info else name


def composition_figure(result: VoyageResult, height_per_row: int = 220) -> go.Figure:
    """Liquid composition over the voyage, one small panel per component (mol %).

    Each panel has its own y range, so a tenth of a percent of nitrogen boiling
    off shows as clearly as the methane share rising.
    """
    names = components(result)
    cols = min(4, len(names))
    rows = math.ceil(len(names) / cols)
    x = _days(result)
    ts = result.timeseries
    titles = []
    for name in names:
        a, b = 100.0 * float(ts[f"x_{name}"].iloc[0]), 100.0 * float(ts[f"x_{name}"].iloc[-1])
        digits = 4  # enough significant digits to show the change, up to 7
        while digits < 7 and f"{a:.{digits}g}" == f"{b:.{digits}g}" and a != b:
            digits += 1
        titles.append(f"{_component_words(name)}: {a:.{digits}g} → {b:.{digits}g} %")
    fig = make_subplots(rows=rows, cols=cols, subplot_titles=titles, horizontal_spacing=0.07,
                        vertical_spacing=min(0.5 / rows, 0.24) if rows > 1 else 0.0)
    for i, name in enumerate(names):
        fig.add_trace(go.Scatter(
            x=x, y=100.0 * ts[f"x_{name}"].to_numpy(dtype=float), mode="lines",
            name=_component_words(name), meta=f"x_{name}",
            line={"color": COMPONENT_COLOURS.get(name, PRESSURE_COLOUR), "width": 2.0},
            hovertemplate="%{y:.4f} mol %<extra>%{fullData.name}</extra>",
        ), row=i // cols + 1, col=i % cols + 1)
    fig = _style(fig, "composition", "Liquid composition (each panel its own scale)", "",
                 height_per_row * rows, legend=False)
    fig.update_xaxes(title_text="")
    fig.update_yaxes(exponentformat="none", nticks=5)
    for c in range(1, cols + 1):
        fig.update_xaxes(title_text="Days", row=rows, col=c)
    for r in range(1, rows + 1):
        fig.update_yaxes(title_text="mol %", row=r, col=1)
    fig.update_annotations(font={"size": 12, "color": "#23313b"})
    fig.update_layout(hovermode="closest", margin={"t": 72})
    return fig


def vapour_composition_figure(result: VoyageResult, height: int = 360) -> go.Figure:
    """Vapour composition over the voyage (the boil-off when vapour is drawn), mol %, log axis.

    The vapour is the one in equilibrium with the liquid; components that never reach
    :data:`VAPOUR_FLOOR_PCT` start hidden (click their legend entry to show them).
    """
    fig = go.Figure()
    ts = result.timeseries
    x = _days(result)
    for name in components(result):
        y = 100.0 * ts[f"y_{name}"].to_numpy(dtype=float)
        fig.add_trace(go.Scatter(
            x=x, y=y, mode="lines", name=_component_words(name), meta=f"y_{name}",
            visible=True if np.nanmax(y) >= VAPOUR_FLOOR_PCT else "legendonly",
            line={"color": COMPONENT_COLOURS.get(name, PRESSURE_COLOUR), "width": 2.0},
            hovertemplate="%{y:.4g} mol %<extra>%{fullData.name}</extra>",
        ))
    fig = _style(fig, "vapour_composition", "Vapour composition (what boils off)",
                 "mol % (log scale)", height,
                 legend=True)
    fig.update_yaxes(type="log", range=[math.log10(VAPOUR_FLOOR_PCT), math.log10(150.0)],
                     exponentformat="none", tickformat="~g")
    return fig


def density_figure(runs, height: int = 360) -> go.Figure:
    """Liquid density over the voyage (rises as the light ends boil off)."""
    return line_figure(runs, "liquid_density_kg_m3", "Liquid density", "Density (kg/m³)",
                       "kg/m³", digits=2, height=height)


def result_figures(label: str, result: VoyageResult,
                   levels: Sequence[Level]) -> dict[str, go.Figure]:
    """The charts of one run, by name: four for every cargo, three more for a mixture."""
    runs = [(label, result)]
    figures = {
        "pressure": pressure_figure(runs, levels),
        "liquid_temp_c": temperature_figure(runs),
        "fill_pct": fill_figure(runs),
        "boil_off": boil_off_figure(result),
    }
    if is_mixture(result):
        figures["liquid_temp_c"].update_layout(
            title={"text": "Liquid temperature (bubble point)"})
        figures["composition"] = composition_figure(result)
        figures["vapour_composition"] = vapour_composition_figure(result)
        figures["liquid_density_kg_m3"] = density_figure(runs)
    return figures


def overlay_figures(runs: Sequence[tuple[str, VoyageResult]],
                    levels: Sequence[Level] = ()) -> dict[str, go.Figure]:
    """Charts with several runs overlaid, by name."""
    return {
        "pressure": pressure_figure(runs, levels),
        "liquid_temp_c": temperature_figure(runs),
        "fill_pct": fill_figure(runs),
        "boil_off_kg_h": total_boil_off_figure(runs),
        "cargo_loss_t": cargo_loss_figure(runs),
    }


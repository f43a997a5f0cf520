"""Sizing page: reliquefaction plant size, holding time and IGC loading limits for the set-up.

A page module (``render()``), listed in ``app.py`` like the other
pages in ``ui/pages/``. All the work is :func:`sim.sizing.size_plant`; this
page collects its options in a form, calls it once per submitted set of
inputs (cached), and draws the result.
"""

from __future__ import annotations

import streamlit as st

from sim import sizing
from sim.scenario import ScenarioError
from ui import exports, runner, state, widgets

RESULT = "sizing.result"


@st.cache_data(show_spinner=False, max_entries=20)
def size_cached(toml_text: str, options: tuple) -> sizing.Sizing:
    """``size_plant`` on a set-up given as TOML text, cached on the text and the options."""
    from sim.scenario import loads_scenario

    return sizing.size_plant(loads_scenario(toml_text, "set-up").raw, **dict(options))


def _form(data: dict) -> tuple[dict, bool]:
    plant = data.get("reliquefaction") if isinstance(data.get("reliquefaction"), dict) else {}
    default_hold = plant.get("hold_barg", data["tank"]["pressure_barg"])
    with st.form("sizing.form", border=True):
        a, b, c = st.columns(3)
        air = a.number_input("Design air (°C)", key="sizing.design_air_c",
                             value=sizing.DESIGN_AIR_C, step=1.0, min_value=-60.0,
                             max_value=60.0, help="IGC upper design ambient: 45 °C air "
                             "(recalled from the Code, not quoted).")
        sea = b.number_input("Design sea (°C)", key="sizing.design_sea_c",
                             value=sizing.DESIGN_SEA_C, step=1.0, min_value=-2.0,
                             max_value=40.0, help="IGC upper design ambient: 32 °C sea.")
        hold = c.number_input("Hold pressure (barg)", key="sizing.hold_barg", value=None,
                              step=0.01, format="%.3f", placeholder=f"{default_hold:g} (set-up)",
                              help="Empty: the set-up's plant hold pressure, or its initial "
                                   "pressure if it has no plant.")
        a, b, c, d = st.columns(4)
        margin = a.number_input("Margin (%)", key="sizing.margin_pct", value=0.0, min_value=0.0,
                                step=5.0)
        unit = b.number_input("Unit size (kg/h)", key="sizing.unit_kg_h", value=None,
                              min_value=0.0, step=100.0, placeholder="optional",
                              help="Capacity of one plant unit: the page then counts units.")
        spare = c.number_input("Spare units", key="sizing.spare_units", value=1, min_value=0,
                               step=1, help="1 = N+1 redundancy.")
        power = d.number_input("Specific power (kWh/kg)", key="sizing.specific_power_kwh_kg",
                               value=None, min_value=0.0, step=0.05, placeholder="set-up",
                               help="Empty: the set-up's plant value.")
        a, b, c = st.columns(3)
        fuel = a.toggle("Credit the engines' fuel", key="sizing.fuel_credit", value=False,
                        help="Count the lowest leg fuel demand against the plant. Off: "
                             "conservative (engines stop, ship at anchor).")
        voyage = b.toggle("Outage voyage at leg ambients", key="sizing.voyage_ambient",
                          value=False, help="Off: every leg at the design ambient.")
        curves = c.toggle("Holding-time curves", key="sizing.curves", value=True)
        submitted = st.form_submit_button("Size the plant", type="primary",
                                          icon=":material/calculate:")
    options = dict(design_air_c=float(air), design_sea_c=float(sea),
                   hold_barg=None if hold is None else float(hold),
                   fuel_credit=bool(fuel), margin_pct=float(margin),
                   unit_kg_h=None if not unit else float(unit), spare_units=int(spare),
                   specific_power_kwh_kg=None if power is None else float(power),
                   voyage_ambient=bool(voyage), curves=bool(curves))
    return options, submitted


def _metric(col, label: str, value, unit: str, help_text: str, digits: int = 0) -> None:
    text = "—" if value is None else f"{value:,.{digits}f} {unit}"
    with col.container(border=True):
        st.metric(label, text, help=help_text)


def _show(result: sizing.Sizing) -> None:
    s = result.summary
    a, b, c, d = st.columns(4)
    _metric(a, "Boil-off to absorb", s["steady_boil_off_kg_h"], "kg/h",
            "Q / h_fg at the hold temperature and the design ambient (whole ship).")
    _metric(b, "Holds indefinitely", s["min_capacity_kg_h"], "kg/h",
            "Smallest plant that holds the hold pressure at the design ambient.")
    _metric(c, "Through the outages", s["min_capacity_with_outage_kg_h"], "kg/h",
            s["outage_note"] or "Smallest plant whose voyage with the outages keeps the "
            "relief valve shut.")
    _metric(d, "Design capacity", s["design_capacity_kg_h"], "kg/h",
            f"Required capacity plus {s['margin_pct']:g} % margin.")
    a, b, c, d = st.columns(4)
    _metric(a, "Refrigeration", s["refrigeration_kw"], "kW",
            "Design capacity × latent heat at the hold temperature.")
    _metric(b, "Power", s["power_kw"], "kW",
            "Design capacity × specific power; empty without a specific power.")
    hours = s["holding_time_h"]
    _metric(c, "Holding time", hours, "h",
            s["holding_note"] or "To relief-valve lift with all pressure control lost, from "
            "the set-up's start at the design ambient.", 1)
    _metric(d, "Units", s["units_needed"], "", "Units of the given size, spares included.")
    if s["holding_note"]:
        st.info(f"Holding time: {s['holding_note']}.", icon=":material/info:")
    with st.expander("Assumptions", expanded=False):
        st.markdown("\n".join(f"- {n}" for n in s["notes"]))
        st.caption(f"Hold {s['hold_barg']:.3f} barg ({s['hold_source']}); design ambient "
                   f"{s['design_air_c']:g} / {s['design_sea_c']:g} °C "
                   f"({s['design_ambient_source']}).")
    for i, fig in enumerate(sizing.sizing_figures(result)):
        widgets.plot(fig, f"sizing.chart.{i}")
    files = sizing.output_files(result)
    stem = exports.file_stem(s["title"])
    cols = st.columns(len(files))
    for col, (name, text) in zip(cols, files.items(), strict=True):
        mime = {"json": "application/json", "csv": "text/csv", "html": "text/html"}[
            name.rsplit(".", 1)[1]]
        col.download_button(name, data=text, file_name=f"{stem}-{name}", mime=mime,
                            key=f"sizing.dl.{name}", width="stretch",
                            icon=":material/download:")


def render() -> None:
    state.init()
    st.title("Plant sizing and holding time")
    st.caption("The smallest reliquefaction plant for the set-up at the design ambient, the "
               "time to relief-valve lift with all pressure control lost, and the IGC "
               "loading limit against loading temperature.")
    data, form_problems = state.setup_dict()
    check = runner.check(data, form_problems)
    if not check.ok:
        widgets.problem_list(check.problems, "The set-up has problems; fix them on Set-up first:")
        return
    options, submitted = _form(data)
    text = exports.setup_toml(data)
    if submitted:
        try:
            with st.spinner("Sizing: steady balance, outage voyages, holding times…",
                            show_time=True):
                result = size_cached(text, tuple(sorted(options.items())))
        except (sizing.SizingError, ScenarioError) as exc:
            widgets.problem_list(exc.problems, "Check the sizing inputs:")
            return
        except Exception as exc:  # an engine bug must not show a traceback
            widgets.problem_list([f"{type(exc).__name__}: {exc}"], "Sizing failed:")
            return
        st.session_state[RESULT] = (text, result)
    kept = st.session_state.get(RESULT)
    if kept is None:
        st.info("Set the design inputs, then press **Size the plant**.", icon=":material/info:")
        return
    if kept[0] != text:
        st.warning("The set-up changed since this sizing; press **Size the plant** again.",
                   icon=":material/update:")
    _show(kept[1])


if __name__ == "__main__":
    render()

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
from ui import exports, form, runner, state, widgets

RESULT = "sizing.result"
#: Options of ``python -m sim size`` named in the engine's messages -> this page's labels.
OPTION_WORDS = {
    "--design-air-c": "Design air (°C)",
    "--design-sea-c": "Design sea (°C)",
    "--hold-barg": "Hold pressure (barg)",
    "--margin-pct": "Margin (%)",
    "--unit-kg-h": "Unit size (kg/h)",
    "--spare-units": "Spare units",
    "--specific-power-kwh-kg": "Specific power (kWh/kg)",
}


def _words(text: str) -> str:
    """An engine message with the command line's option names replaced by the page's labels."""
    for option, label in OPTION_WORDS.items():
        text = text.replace(option, label)
    return text


@st.cache_data(show_spinner=False, max_entries=20)
def size_cached(toml_text: str, options: tuple) -> sizing.Sizing:
    """``size_plant`` on a set-up given as TOML text, cached on the text and the options."""
    from sim.scenario import loads_scenario

    return sizing.size_plant(loads_scenario(toml_text, "set-up").raw, **dict(options))


def _form(data: dict, main: str | None = None) -> tuple[dict, bool, bool]:
    """The sizing options; for a mixture (``main``: its main component) also a toggle to
    size that component in its place. Returns (options, submitted, stand_in)."""
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
        stand_in = main is not None and st.toggle(
            f"Size with {form.component_words(main)} as the cargo", key="sizing.stand_in",
            value=False, help="Plant sizing works on pure cargoes: size the same ship with the "
                              "mixture's main component, then check the mixture with voyage "
                              "runs.")
        submitted = st.form_submit_button("Size the plant", type="primary",
                                          icon=":material/calculate:")
    options = dict(design_air_c=float(air), design_sea_c=float(sea),
                   hold_barg=None if hold is None else float(hold),
                   fuel_credit=bool(fuel), margin_pct=float(margin),
                   unit_kg_h=None if not unit else float(unit), spare_units=int(spare),
                   specific_power_kwh_kg=None if power is None else float(power),
                   voyage_ambient=bool(voyage), curves=bool(curves))
    return options, submitted, bool(stand_in)


def _metric(col, label: str, value, unit: str, help_text: str, digits: int = 0,
            note: str = "") -> None:
    text = "—" if value is None else f"{value:,.{digits}f} {unit}".rstrip()
    with col.container(border=True):
        st.metric(label, text, help=help_text)
        if note:
            st.caption(note)


def _show(result: sizing.Sizing) -> None:
    s = result.summary
    a, b, c, d = st.columns(4)
    ambient = f"{s['design_air_c']:g} °C air / {s['design_sea_c']:g} °C sea"
    bor = s.get("steady_boil_off_pct_day")
    _metric(a, "Boil-off to absorb", s["steady_boil_off_kg_h"], "kg/h",
            "Q / h_fg at the hold temperature and the design ambient (whole ship).",
            note=(f"{bor:.3f} %/day at " if bor is not None else "at ") + ambient)
    _metric(b, "Holds indefinitely", s["min_capacity_kg_h"], "kg/h",
            "Smallest plant that holds the hold pressure at the design ambient.",
            note="with the fuel credit" if s.get("fuel_credit") else "no fuel credited")
    no_outages = not s.get("outage_hours")
    _metric(c, "Through the outages", s["min_capacity_with_outage_kg_h"], "kg/h",
            s["outage_note"] or "Smallest plant whose voyage with the outages keeps the "
            "relief valve shut.",
            note="no plant outages in the set-up" if no_outages else
            "with the set-up's plant outages")
    _metric(d, "Design capacity", s["design_capacity_kg_h"], "kg/h",
            f"Required capacity plus {s['margin_pct']:g} % margin.",
            note=f"{s['margin_pct']:g} % margin")
    a, b, c, d = st.columns(4)
    latent = s.get("latent_heat_kj_kg")
    _metric(a, "Refrigeration", s["refrigeration_kw"], "kW",
            "Design capacity × latent heat at the hold temperature.",
            note=f"latent heat {latent:,.0f} kJ/kg" if latent is not None else "")
    power = s.get("specific_power_kwh_kg")
    _metric(b, "Power", s["power_kw"], "kW",
            "Design capacity × specific power; empty without a specific power.",
            note=f"at {power:g} kWh/kg" if s["power_kw"] is not None and power is not None
            else "give a specific power")
    hours = s["holding_time_h"]
    from_hold = s.get("holding_time_from_hold_h")
    _metric(c, "Holding time", hours, "h",
            s["holding_note"] or "To relief-valve lift with all pressure control lost, from "
            "the set-up's start at the design ambient.", 1,
            note=(f"{hours / 24.0:.1f} days" if hours is not None else "")
            + (f"; {from_hold:,.1f} h from the hold pressure" if from_hold is not None else ""))
    units = s["units_needed"]
    _metric(d, "Units", units, "", "Units of the given size, spares included.",
            note=("give a unit size to count units" if units is None else
                  f"{s['unit_capacity_kg_h']:,.0f} kg/h each, {s['spare_units']} spare"))
    if s["holding_note"]:
        st.info(f"Holding time: {s['holding_note']}.", icon=":material/info:")
    with st.expander("Assumptions", expanded=False):
        st.markdown("\n".join(f"- {_words(n)}" for n in s["notes"]))
        st.caption(f"Hold {s['hold_barg']:.3f} barg ({_words(s['hold_source'])}); design ambient "
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


def _main_component(data: dict) -> str | None:
    """The largest component of a mixture cargo; None for a pure cargo."""
    cargo = data.get("cargo") if isinstance(data.get("cargo"), dict) else {}
    fractions = cargo.get("mole_fractions")
    if not isinstance(fractions, dict) or not fractions:
        return None
    return max(fractions, key=lambda k: float(fractions[k]))


def _pure_stand_in(data: dict, main: str) -> dict:
    """The same set-up with the mixture's main component as a pure cargo (prices kept)."""
    pure = {k: v for k, v in data["cargo"].items() if k.startswith("price_per")}
    pure["fluid"] = main
    return dict(data, cargo=pure)


def render() -> None:
    state.init()
    st.title("Plant sizing and holding time")
    st.caption("The smallest reliquefaction plant for the set-up at the design ambient, the "
               "time to relief-valve lift with all pressure control lost, and the IGC "
               "loading limit against loading temperature.")
    data, form_problems = state.setup_dict()
    check = runner.check(data, form_problems)
    if not check.ok:
        widgets.problem_list(check.problems, "The set-up has problems; fix them on Set-up first:",
                             setup=True)
        return
    main = _main_component(data)
    if main is not None:
        share = 100.0 * float(data["cargo"]["mole_fractions"][main])
        st.info(f"The set-up carries {data['cargo'].get('label') or 'a mixture'}; plant sizing "
                f"works on pure cargoes. Switch on **Size with {form.component_words(main)} as "
                f"the cargo** (its main component, {share:.1f} mol %) to size the same ship, "
                "then check the mixture itself with voyage runs (Results, What-if).",
                icon=":material/info:")
    options, submitted, stand_in = _form(data, main)
    if stand_in:
        data = _pure_stand_in(data, main)
    text = exports.setup_toml(data)
    if submitted:
        try:
            with st.spinner("Sizing: steady balance, outage voyages, holding times…",
                            show_time=True):
                result = size_cached(text, tuple(sorted(options.items())))
        except (sizing.SizingError, ScenarioError) as exc:
            widgets.problem_list([_words(p) for p in exc.problems], "Check the sizing inputs:")
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

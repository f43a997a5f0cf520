"""Compare page: any runs of this session overlaid, and their headline figures side by side."""

from __future__ import annotations

import functools

import streamlit as st

from ui import charts, exports, headline, state, widgets

PICK = "compare.runs"


def _forget() -> None:
    state.forget_runs(st.session_state.get(PICK) or [])
    st.session_state[PICK] = []


def render() -> None:
    state.init()
    st.title("Compare runs")
    kept = state.runs()
    if not kept:
        st.info("No runs yet. Every run you make (Results, What-if) is kept here for the "
                "session.", icon=":material/info:")
        return
    ids = list(kept)
    chosen = [rid for rid in st.session_state.get(PICK, ids[-2:]) if rid in kept]
    st.session_state[PICK] = chosen
    pick, forget = st.columns([6, 1], vertical_alignment="bottom")
    chosen = pick.multiselect("Runs to compare", ids, key=PICK,
                              format_func=lambda i: kept[i].label if i in kept else i,
                              help="Pick two or more; they are overlaid on every chart.")
    forget.button("Forget", key="compare.forget", on_click=_forget, disabled=not chosen,
                  icon=":material/delete:", width="stretch",
                  help="Remove the picked runs from this session.")
    if not chosen:
        st.info("Pick runs to compare.", icon=":material/info:")
        return
    runs = [kept[rid] for rid in chosen]

    frame = headline.compare_frame([(r.label, r.result.summary) for r in runs])
    st.dataframe(headline.compare_display(frame), key="compare.table", width="stretch",
                 height=38 + 35 * len(frame),
                 column_config={label: st.column_config.TextColumn(alignment="right")
                                for label in frame.columns})
    stopped = [r.label for r in runs if r.result.status != "completed"]
    if stopped:
        st.warning("Ended before the end of the voyage: " + "; ".join(
            f"{r.label} ({r.result.message})" for r in runs if r.label in stopped),
            icon=":material/report:")

    pairs = [(r.label, r.result) for r in runs]
    levels = [lv for r in runs for lv in charts.control_levels(r.data)
              if lv.label == "Relief set"]
    figures = charts.overlay_figures(pairs, levels)
    widgets.plot(figures["pressure"], "compare.pressure")
    a, b = st.columns(2)
    with a:
        widgets.plot(figures["liquid_temp_c"], "compare.liquid_temp_c")
        widgets.plot(figures["boil_off_kg_h"], "compare.boil_off_kg_h")
    with b:
        widgets.plot(figures["fill_pct"], "compare.fill_pct")
        widgets.plot(figures["cargo_loss_t"], "compare.cargo_loss_t")

    a, b, _ = st.columns([1, 1, 2])
    a.download_button("Table (.csv)", data=exports.comparison_csv(frame),
                      file_name="comparison.csv", mime="text/csv", key="compare.dl.csv",
                      icon=":material/table:", width="stretch")
    b.download_button("Charts (.html)",
                      data=functools.partial(exports.charts_html, figures, "Comparison of runs"),
                      file_name="comparison-charts.html", mime="text/html",
                      key="compare.dl.html", icon=":material/monitoring:", width="stretch")


if __name__ == "__main__":
    render()

"""Results page: headline figures, charts over the voyage, events, downloads."""

from __future__ import annotations

import functools

import streamlit as st

from ui import charts, exports, headline, runner, state, widgets


def _run_current() -> None:
    """Run the set-up as it stands and show it (drawn before the run picker)."""
    data, form_problems = state.setup_dict()
    check = runner.check(data, form_problems)
    if not check.ok:
        widgets.problem_list(check.problems, "The set-up has problems; fix them on Set-up:",
                             setup=True)
        return
    text = exports.setup_toml(data)
    outcome = runner.run(text)
    if outcome.result is None:
        widgets.problem_list(outcome.problems, "The run did not complete:")
        return
    kept = state.keep_run(text, data, outcome.result, "set-up")
    st.session_state["results.run"] = kept.id


def _downloads(run: state.Run, figures: dict) -> None:
    stem = exports.file_stem(run.title)
    result = run.result
    a, b, c, d = st.columns(4)
    a.download_button("Time series (.csv)", data=exports.result_csv(result),
                      file_name=f"{stem}-timeseries.csv", mime="text/csv", key="dl.csv",
                      icon=":material/table:", width="stretch",
                      help="Every column of the run, hour by hour (as the command line writes it).")
    b.download_button("Summary (.json)", data=exports.result_json(result),
                      file_name=f"{stem}-summary.json", mime="application/json", key="dl.json",
                      icon=":material/data_object:", width="stretch",
                      help="Headline figures and events (as the command line writes it).")
    c.download_button("Charts (.html)",
                      data=functools.partial(exports.charts_html, figures, run.title),
                      file_name=f"{stem}-charts.html", mime="text/html", key="dl.html",
                      icon=":material/monitoring:", width="stretch",
                      help="All the charts in one page that works offline, still interactive.")
    if exports.png_available():
        d.download_button("Pressure chart (.png)",
                          data=functools.partial(exports.chart_png, figures["pressure"]),
                          file_name=f"{stem}-pressure.png", mime="image/png", key="dl.png",
                          icon=":material/image:", width="stretch",
                          help="Rendered by a headless browser; takes a few seconds.")
    st.caption("Each chart's camera button (top right of the chart) also saves it as PNG.")


def _model_comparison(run: state.Run) -> None:
    """The same voyage under the other tank model, overlaid (equilibrium vs two-zone)."""
    from sim.models import MODELS

    this = run.data.get("model", "equilibrium")
    other = "equilibrium" if this != "equilibrium" else "two-zone"
    if other not in MODELS:
        return
    if charts.is_mixture(run.result):
        st.caption("Tank model comparison: the two-zone model takes pure cargoes only, so a "
                   "mixture has no second model to compare with.")
        return
    st.markdown("##### Tank model comparison")
    if not st.toggle(f"Overlay the same voyage with the {other} model", key="results.model_overlay",
                     value=this != "equilibrium",
                     help="The equilibrium model keeps liquid and vapour at one temperature; "
                          "the two-zone model lets a warm layer gather at the liquid surface "
                          "and the vapour superheat, so pressure usually rises faster. "
                          "See Methods."):
        return
    data = dict(run.data, model=other)
    outcome = runner.run(exports.setup_toml(data))
    if outcome.result is None:
        widgets.problem_list(outcome.problems, f"The {other} run did not complete:")
        return
    pair = [(this, run.result), (other, outcome.result)]
    if this != "equilibrium":
        pair.reverse()  # equilibrium first: the reference
    cols = st.columns(3)
    for col, item in zip(cols, headline.model_pair(pair[0][0], pair[0][1].summary,
                                                   pair[1][0], pair[1][1].summary)):
        with col.container(border=True):
            st.metric(item.label, item.value, help=item.help)
            st.caption(item.note)
    fig = charts.pressure_figure(pair, charts.control_levels(run.data))
    fig.update_layout(title={"text": "Tank pressure: equilibrium vs two-zone"})
    widgets.plot(fig, "chart.model_pair")


def _mixture(run: state.Run, figures: dict) -> None:
    """Composition over the voyage, boil-off composition, density, quality loaded vs arrival."""
    result = run.result
    st.markdown(f"##### Cargo composition and quality: {result.summary.get('cargo', '')}")
    st.caption("The lightest components (nitrogen, methane; propane in LPG) boil off first, "
               "so the liquid left behind weathers: its bubble temperature climbs and its "
               "heating value per cubic metre and Wobbe index rise. See Methods.")
    widgets.plot(figures["composition"], "chart.composition")
    widgets.plot_side_by_side(figures, "vapour_composition", "liquid_density_kg_m3")
    st.markdown("**Cargo quality, as loaded and at the end of the run**")
    a, b = st.columns([1, 1], gap="medium")
    quality = headline.quality_table(result.summary, result.timeseries)
    a.dataframe(quality, key="results.quality", width="stretch",
                height=38 + 35 * len(quality),
                column_config={c: st.column_config.TextColumn(alignment="right")
                               for c in quality.columns})
    if result.summary.get("quality_start") is None:
        a.caption(f"Heating values: none, {headline.no_energy_reason(result.summary)}.")
    composition = headline.composition_table(result.summary)
    b.dataframe(composition, key="results.composition", width="stretch",
                height=38 + 35 * len(composition),
                column_config={c: st.column_config.TextColumn(alignment="right")
                               for c in composition.columns})


def render() -> None:
    state.init()
    st.title("Results")
    kept = state.runs()
    pick, go = st.columns([5, 2], vertical_alignment="bottom")
    if go.button("Run the current set-up", key="results.run_now", type="primary",
                 icon=":material/play_arrow:", width="stretch"):
        with st.container():
            _run_current()
    if not kept:
        st.info("No runs yet. Set up a voyage on the Set-up page, or press "
                "**Run the current set-up**.", icon=":material/info:")
        return
    ids = list(kept)
    if st.session_state.get("results.run") not in kept:
        st.session_state["results.run"] = ids[-1]
    rid = pick.selectbox("Run shown", ids[::-1], key="results.run",
                         format_func=lambda i: kept[i].label if i in kept else i,
                         help="Every run of this session is kept; compare them on Compare.")
    run = kept[rid]
    result = run.result

    data, _ = state.setup_dict()
    try:
        edited = exports.setup_toml(data) != run.toml
    except Exception:  # a half-typed set-up that cannot be written yet
        edited = True
    if run.kind == "set-up" and edited:
        st.caption(":material/edit_note: The set-up has been edited since this run; "
                   "press **Run the current set-up** to see the change.")
    widgets.status_banner(result)
    widgets.headline_grid(result.summary)
    widgets.energy_grid(result.summary)

    figures = charts.result_figures(run.label, result, charts.control_levels(run.data))
    widgets.plot(figures["pressure"], "chart.pressure")
    widgets.plot_side_by_side(figures, "liquid_temp_c", "fill_pct")
    widgets.plot(figures["boil_off"], "chart.boil_off")
    if charts.is_mixture(result):
        _mixture(run, figures)
    _model_comparison(run)

    st.markdown("##### Events")
    events = headline.events_table(result.events_frame())
    st.dataframe(events.drop(columns="kind"), key="results.events", hide_index=True,
                 width="stretch",
                 column_config={"Day": st.column_config.NumberColumn(format="%.3f"),
                                "Hour": st.column_config.NumberColumn(format="%.2f"),
                                "Detail": st.column_config.TextColumn(width="large")})
    st.markdown("##### Downloads")
    _downloads(run, figures)


if __name__ == "__main__":
    render()

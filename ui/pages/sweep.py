"""Sweep page: the set-up over a grid of values, or a Monte Carlo over uncertain inputs.

A page module (``render()``), listed in ``app.py`` like the other
pages in ``ui/pages/``. Inputs use the command line's syntax, one per line
(``tank.fill_pct=90:98:2``; ``insulation.rated_bor_pct_day=normal:0.1:0.01``)
and go through the same parsers, so the messages are the same. Cases run in
the app's process, one after another, up to :data:`MAX_APP_CASES`; larger
sweeps belong on the command line (all cores, or a Dask cluster).
"""

from __future__ import annotations

import streamlit as st

from sim import sweep
from ui import exports, runner, state, widgets

RESULT = "sweep.result"
#: Largest sweep the app runs (serially, in the server process).
MAX_APP_CASES = 300
GRID, SAMPLE = "Grid of values", "Monte Carlo"


def _lines(text: str | None) -> list[str]:
    return [line.strip() for line in (text or "").splitlines() if line.strip()
            and not line.strip().startswith("#")]


def _defaults(data: dict) -> tuple[str, str]:
    """Starting grid and sample for a set-up: the insulation as the set-up gives it
    (a rated boil-off or a U-value) and the air temperature of every leg. Fill is
    left out: with a rated boil-off and no rated fill it would move the U-value too."""
    ins = data.get("insulation") or {}
    if "u_w_m2k" in ins:
        u = float(ins["u_w_m2k"])
        grid_ins = "insulation.u_w_m2k=" + ",".join(f"{f * u:.4g}" for f in (0.8, 1.0, 1.2))
        sample_ins = f"insulation.u_w_m2k=normal:{u:.4g}:{0.1 * u:.3g}"
    else:
        bor = float(ins.get("rated_bor_pct_day", 0.1))
        grid_ins = "insulation.rated_bor_pct_day=" + ",".join(
            f"{f * bor:.4g}" for f in (0.8, 1.0, 1.2))
        sample_ins = f"insulation.rated_bor_pct_day=normal:{bor:.4g}:{0.1 * bor:.3g}"
    return (f"leg.*.air_c=25:45:5\n{grid_ins}",
            f"{sample_ins}\nleg.*.air_c=triangular:25:32:40")


def _inputs(data: dict) -> tuple[str, list[str], int, int | None, bool]:
    grid, sample = _defaults(data)
    with st.form("sweep.form", border=True):
        mode = st.radio("Kind", [GRID, SAMPLE], key="sweep.mode", horizontal=True)
        left, right = st.columns(2)
        vary = left.text_area(
            "Vary (grid): one KEY=VALUES per line", key="sweep.vary", height=120,
            value=grid,
            help="Keys as in the scenario file: tank.fill_pct, leg.0.air_c (first leg), "
                 "leg.*.air_c (every leg). Values: a list 0.02,0.03 or a range start:stop:step "
                 "(the stop is included when it lands on the grid). Every combination runs.")
        sample = right.text_area(
            "Sample (Monte Carlo): one KEY=DIST per line", key="sweep.sample", height=120,
            value=sample,
            help="normal:MEAN:SD, uniform:LOW:HIGH or triangular:LOW:MODE:HIGH.")
        a, b, _ = st.columns([1, 1, 2])
        cases = a.number_input("Cases (Monte Carlo)", key="sweep.cases", value=100,
                               min_value=1, max_value=MAX_APP_CASES, step=10)
        seed = b.number_input("Seed", key="sweep.seed", value=1, min_value=0, step=1,
                              help="The same seed gives the same cases.")
        submitted = st.form_submit_button("Run the cases", type="primary",
                                          icon=":material/grid_on:")
    lines = _lines(vary) if mode == GRID else _lines(sample)
    return mode, lines, int(cases), None if seed is None else int(seed), submitted


def _parse(data: dict, mode: str, lines: list[str], cases: int):
    problems, items = [], []
    parse = sweep.parse_vary if mode == GRID else sweep.parse_sample
    if not lines:
        problems.append("nothing to vary: give at least one line")
    for line in lines:
        try:
            items.append(parse(line, data))
        except sweep.SweepError as exc:
            problems.extend(exc.problems)
    total = cases
    if not problems and mode == GRID:
        try:
            total = len(sweep.grid_cases(items))
        except sweep.SweepError as exc:
            problems.extend(exc.problems)
    if not problems and total > MAX_APP_CASES:
        problems.append(f"{total} cases: the app runs at most {MAX_APP_CASES}; use the command "
                        "line for more (python -m sim sweep, on all cores or a Dask cluster)")
    return items, total, problems


def _run(data: dict, mode: str, items, total: int, cases: int, seed: int | None):
    bar = st.progress(0.0, text=f"0 of {total} cases")
    done = [0]

    def tick(n: int) -> None:
        done[0] += n
        bar.progress(min(done[0] / total, 1.0), text=f"{done[0]} of {total} cases")

    if mode == GRID:
        result = sweep.run_sweep(data, items, workers=1, progress=tick)
    else:
        result = sweep.run_uncertainty(data, items, cases, seed=seed, workers=1, progress=tick)
    bar.empty()
    return result


def _nothing_to_draw(result: sweep.SweepResult, fig) -> str:
    """Why a Monte Carlo histogram would be empty or a single bar; "" when it is worth drawing.

    With no case lifting the relief valves the time-to-lift histogram has no data, and
    when every case gives the same cargo lost its three percentile labels sit on top of
    one another; the percentile card above says all there is to say.
    """
    key = (fig.layout.meta or {}).get("chart") if isinstance(fig.layout.meta, dict) else None
    if key not in ("time_to_relief_h", "cargo_loss_t"):
        return ""
    values = [float(r[key]) for r in result.rows
              if not r.get("error") and r.get(key) is not None]
    if key == "time_to_relief_h" and not values:
        return "No histogram of the time to relief-valve lift: the valves lift in no case."
    if key == "cargo_loss_t" and values and max(values) - min(values) < 0.05:
        return (f"No histogram of the cargo lost: every case loses {values[0]:,.1f} t "
                "(to the tenth of a tonne).")
    return ""


def _stagger_percentiles(fig):
    """Put the P10 / P50 / P90 labels of a histogram on three heights, on a light ground,
    so close ones stay readable instead of printing over one another or over the bars."""
    notes = [a for a in fig.layout.annotations or () if str(a.text or "")[:3] in
             ("P10", "P50", "P90")]
    for i, note in enumerate(notes):
        note.yshift = -18 * i
        note.bgcolor = "rgba(255, 255, 255, 0.85)"
    return fig


def _show(result: sweep.SweepResult) -> None:
    n, bad = len(result.rows), len(result.invalid)
    st.success(f"{n} cases, {bad} invalid, {result.info.seconds:.1f} s.",
               icon=":material/check_circle:")
    for warning in result.info.warnings:
        st.warning(warning[:1].upper() + warning[1:], icon=":material/report:")
    if bad:
        first = result.rows[result.invalid[0]]["error"]
        st.warning(f"{bad} cases failed validation and have no results (see the error "
                   f"column). First: {first}", icon=":material/report:")
    if result.distributions:
        stats = sweep.percentiles(result)
        cols = st.columns(2)
        for col, (key, label, unit) in zip(cols, (
                ("time_to_relief_h", "Time to relief-valve lift", "h"),
                ("cargo_loss_t", "Cargo lost", "t")), strict=True):
            entry = stats[key]
            cells = " · ".join(
                f"{p.upper()} {'beyond voyage' if entry[p] is None else f'{entry[p]:,.1f} {unit}'}"
                for p in ("p10", "p50", "p90"))
            with col.container(border=True):
                st.markdown(f"**{label}**  \n{cells}")
                if key == "time_to_relief_h":
                    st.caption(f"relief lifts in {entry['lifted_cases']} of "
                               f"{entry['valid_cases']} valid cases")
        figures = sweep.uncertainty_figures(result)
    else:
        figures = [sweep.sweep_figure(result)]
    for i, fig in enumerate(figures):
        empty = _nothing_to_draw(result, fig)
        if empty:
            st.caption(f":material/bar_chart_off: {empty}")
            continue
        widgets.plot(_stagger_percentiles(fig), f"sweep.chart.{i}")
    st.dataframe(result.frame(), key="sweep.table", width="stretch", hide_index=True,
                 placeholder="—")
    st.caption("One row per case, columns as in sweep.csv; time_to_relief_h reads — where the "
               "relief valves do not lift.")
    files = sweep.output_files(result, "set-up")
    stem = exports.file_stem(result.title)
    cols = st.columns(len(files))
    for col, (name, text) in zip(cols, files.items(), strict=True):
        mime = {"json": "application/json", "csv": "text/csv", "html": "text/html"}[
            name.rsplit(".", 1)[1]]
        col.download_button(name, data=text, file_name=f"{stem}-{name}", mime=mime,
                            key=f"sweep.dl.{name}", width="stretch", icon=":material/download:")


def render() -> None:
    state.init()
    st.title("Sweeps and uncertainty")
    st.caption("Run the set-up over many values of its inputs, or draw uncertain inputs from "
               "distributions: one summary row per case.")
    data, form_problems = state.setup_dict()
    check = runner.check(data, form_problems)
    if not check.ok:
        widgets.problem_list(check.problems, "The set-up has problems; fix them on Set-up first:",
                             setup=True)
        return
    mode, lines, cases, seed, submitted = _inputs(data)
    if submitted:
        items, total, problems = _parse(data, mode, lines, cases)
        if problems:
            widgets.problem_list(problems, "Check the sweep inputs:")
            return
        try:
            result = _run(data, mode, items, total, cases, seed)
        except sweep.SweepError as exc:
            widgets.problem_list(exc.problems, "Check the sweep inputs:")
            return
        st.session_state[RESULT] = (exports.setup_toml(data), result)
    kept = st.session_state.get(RESULT)
    if kept is None:
        st.info("Write the keys to vary, then press **Run the cases**.", icon=":material/info:")
        return
    if kept[0] != exports.setup_toml(data):
        st.warning("The set-up changed since these cases ran; run them again to update.",
                   icon=":material/update:")
    _show(kept[1])


if __name__ == "__main__":
    render()

"""What-if page (for trainers): a plant failure at a chosen time, run beside the set-up."""

from __future__ import annotations

import streamlit as st

from sim.whatif import FAILURES, fail_control, voyage_days
from ui import charts, exports, runner, state, widgets

WHICH_WORDS = {
    "reliquefaction": "Reliquefaction plant trips",
    "all": "All pressure control fails (engines, plant, oxidiser)",
}
#: Words on the shaded failure window of the pressure chart.
WINDOW_WORDS = {"reliquefaction": "plant down", "all": "all pressure control lost"}
PAIR = "whatif.pair"
MEMORY = "_whatif"


def _seed(key: str, default) -> None:
    memory = st.session_state.setdefault(MEMORY, {})
    if key not in st.session_state:
        st.session_state[key] = memory.get(key, default)


def _remember(key: str) -> None:
    st.session_state.setdefault(MEMORY, {})[key] = st.session_state.get(key)


def _controls(data: dict) -> tuple[str, float | None, float | None, bool]:
    total = voyage_days(data)
    has_plant = isinstance(data.get("reliquefaction"), dict)
    with st.container(border=True):
        a, b, c, d = st.columns([5, 2, 2, 2], vertical_alignment="bottom", gap="medium")
        _seed("whatif.which", "reliquefaction" if has_plant else "all")
        which = a.radio("What fails", list(FAILURES), key="whatif.which",
                        format_func=lambda k: WHICH_WORDS.get(k, k),
                        help="The failure is added to a copy of the set-up as outage windows; "
                             "the set-up itself is not changed.")
        _remember("whatif.which")
        _seed("whatif.start_day", round(total / 4.0, 1))
        start = b.number_input("Fails on day", key="whatif.start_day", value=None, step=0.5,
                               format="%.2f", placeholder="day",
                               help="Days from departure; the voyage lasts "
                                    f"{round(total, 2):g} days.")
        _remember("whatif.start_day")
        _seed("whatif.hours", None)
        hours = c.number_input("For how long (h)", key="whatif.hours", value=None, step=6.0,
                               format="%.1f", placeholder="until arrival",
                               help="Leave empty for a failure lasting to the end of the voyage.")
        _remember("whatif.hours")
        controlled = has_plant or isinstance(data.get("oxidiser"), dict) or any(
            float(leg.get("fuel_kg_h", 0.0)) > 0.0 for leg in data.get("leg", []))
        blocked = not controlled or (which == "reliquefaction" and not has_plant)
        clicked = d.button("Run both", key="whatif.run", type="primary", width="stretch",
                           icon=":material/compare_arrows:", disabled=blocked)
    if not controlled:
        st.warning("This set-up has no pressure control to fail (no fuel gas, plant or "
                   "oxidiser): only the relief valves act, with or without a failure.",
                   icon=":material/info:")
    elif blocked:
        st.warning("This set-up has no reliquefaction plant; choose 'All pressure control "
                   "fails', or fit a plant on the Set-up page.", icon=":material/info:")
    return which, start, hours, clicked


def _problems_of_inputs(start, hours, total) -> list[str]:
    problems = []
    if start is None:
        problems.append(f"Fails on day is empty: give a day from 0 to below {round(total, 2):g}")
    elif not 0.0 <= start < total:
        problems.append(f"Fails on day = {start:g}: must be from 0 to below {round(total, 2):g} "
                        "(the voyage length in days)")
    if hours is not None and not hours > 0.0:
        problems.append(f"For how long = {hours:g} h: must be above 0 hours, or empty for "
                        "'until arrival'")
    return problems


def _run_pair(data: dict, which: str, start: float, hours: float | None) -> None:
    failed = fail_control(data, start, which=which, hours=hours)
    check = runner.check(failed)
    if not check.ok:
        widgets.problem_list(check.problems, "The what-if set-up has problems:")
        return
    outcomes = []
    for kind, scenario in (("set-up", data), ("what-if", failed)):
        text = exports.setup_toml(scenario)
        outcome = runner.run(text)
        if outcome.result is None:
            widgets.problem_list(outcome.problems, f"The {kind} run did not complete:")
            return
        outcomes.append(state.keep_run(text, scenario, outcome.result, kind))
    st.session_state[PAIR] = (outcomes[0].id, outcomes[1].id, start, which, hours)


def _relief_hours(run) -> float | None:
    return run.result.summary.get("time_to_relief_h")


def _crew_time(base: state.Run, what: state.Run, failure_day: float) -> None:
    """The card a trainer reads first: hours from the failure to the first relief lift."""
    h0, h1 = _relief_hours(base), _relief_hours(what)
    fail_h = failure_day * 24.0
    if h1 is None:
        end_h = 24.0 * float(what.result.summary.get("simulated_days", failure_day))
        margin = what.result.summary.get("margin_to_relief_bar") or 0.0
        st.metric("Time from failure to relief lift", f"Over {end_h - fail_h:,.0f} h",
                  help="The relief valves do not lift between the failure and the end of "
                       "the run.")
        st.caption(f"no lift before the end of the run (day {end_h / 24.0:g}); "
                   f"{margin:.3f} bar margin left at the peak")
    elif h1 <= fail_h:
        st.metric("Time from failure to relief lift", "Lifted before",
                  help="The relief valves already lift before the failure.")
        st.caption(f"the valves first lift on day {h1 / 24.0:.2f}, before the failure on "
                   f"day {failure_day:g}")
    else:
        st.metric("Time from failure to relief lift", f"{h1 - fail_h:,.1f} h",
                  help="Hours between the failure and the first relief-valve lift.")
        if h0 is None:
            st.caption("as set up, the relief valves do not lift at all")
        else:
            st.caption(f"{h0 - h1:+.1f} h earlier than as set up" if h0 > h1
                       else "the same first lift as set up")


def _show_pair(base: state.Run, what: state.Run, failure_day: float, which: str | None = None,
               hours: float | None = None) -> None:
    from ui.headline import relief_text

    a, b, c = st.columns(3)
    for col, run, words in ((a, base, "As set up"), (b, what, "With the failure")):
        value, note = relief_text(run.result.summary)
        with col.container(border=True):
            st.metric(f"Relief valve: {words.lower()}", value,
                      help="First lift of the relief valves in this run.")
            st.caption(f"{note} · {run.label}")
    with c.container(border=True):
        _crew_time(base, what, failure_day)

    runs = [("As set up", base.result), ("With the failure", what.result)]
    levels = charts.control_levels(base.data)
    fig = charts.pressure_figure(runs, levels)
    end_day = float(what.result.summary.get("simulated_days", failure_day))
    charts.add_window(fig, failure_day,
                      end_day if hours is None else min(failure_day + hours / 24.0, end_day),
                      WINDOW_WORDS.get(which, "failure"))
    widgets.plot(fig, "whatif.pressure")
    left, right = st.columns(2)
    with left:
        widgets.plot(charts.total_boil_off_figure(runs), "whatif.boil_off")
    with right:
        widgets.plot(charts.cargo_loss_figure(runs), "whatif.cargo_loss")
    st.caption("Both runs are kept on the Compare page.")


def render() -> None:
    state.init()
    st.title("What-if: a plant failure")
    st.caption("Take the current set-up, make the reliquefaction plant, or all pressure "
               "control, fail at a chosen time, and see both runs together.")
    data, form_problems = state.setup_dict()
    check = runner.check(data, form_problems)
    if not check.ok:
        widgets.problem_list(check.problems, "The set-up has problems; fix them on Set-up first:",
                             setup=True)
        return
    which, start, hours, clicked = _controls(data)
    if clicked:
        problems = _problems_of_inputs(start, hours, voyage_days(data))
        if problems:
            widgets.problem_list(problems, "Check the what-if inputs:")
        else:
            _run_pair(data, which, float(start), None if hours is None else float(hours))
    pair = st.session_state.get(PAIR)
    kept = state.runs()
    if pair and all(rid in kept for rid in pair[:2]):
        if kept[pair[0]].toml != exports.setup_toml(data):
            st.warning(f"These runs are of an earlier set-up ({kept[pair[0]].label}); press "
                       "**Run both** to run the current one.", icon=":material/update:")
        _show_pair(kept[pair[0]], kept[pair[1]], *pair[2:])
    elif not clicked:
        st.info("Choose what fails and when, then press **Run both**.", icon=":material/info:")


if __name__ == "__main__":
    render()

"""Defects found walking through the app as a first-time user, one test each.

Wiring tests (Streamlit's AppTest and the pure helpers behind the pages). Every
expected number comes from the engine's own result or message for the same input,
never typed in; widgets are found by key.
"""

from __future__ import annotations

import io
import json
import tomllib
from pathlib import Path

import pandas as pd
import pytest
from cases import figure, metric, run_whatif
from streamlit.testing.v1 import AppTest

from sim import CAUTION
from sim.scenario import ScenarioError, demo_scenarios, parse_scenario, set_key
from sim.voyage import simulate
from sim.whatif import fail_control
from ui import charts, exports, form, headline

APP = str(Path(__file__).resolve().parent.parent / "app.py")
AMMONIA = "ammonia-reliquefaction"  # pure cargo, reliquefaction plant, no relief lift
TWO_ZONE = "propane-type-c-stratified-mixing"  # two-zone model with mixing days
LNG_MIX = "lng-typical-mixture-weathering"  # seven-component LNG


def demo_data(stem: str) -> dict:
    return tomllib.loads(demo_scenarios()[stem].read_text(encoding="utf-8"))


def start(stem: str) -> AppTest:
    at = AppTest.from_file(APP, default_timeout=60)
    at.run()
    at.selectbox(key="demo").set_value(stem)
    at.button(key="load_demo").click().run()
    assert not at.exception, at.exception
    return at


def engine_problems(data: dict) -> list[str]:
    with pytest.raises(ScenarioError) as caught:
        parse_scenario(data)
    return caught.value.problems


def errors(at: AppTest) -> list[str]:
    return [e.value for e in at.error]


# ---------------------------------------------------------------------------
# set-up: problems in the form's words (was: only the file key, fractions for a
# table typed in mol %)
# ---------------------------------------------------------------------------


def test_set_up_problems_lead_with_the_fields_label_and_keep_the_engines_message():
    at = start(AMMONIA)
    at.number_input(key="tank.fill_pct").set_value(120.0).run()
    assert not at.exception, at.exception
    (message,) = [p for p in engine_problems(set_key(demo_data(AMMONIA), "tank.fill_pct", 120.0))
                  if p.startswith("tank.fill_pct")]
    label = form.FIELDS["tank.fill_pct"].label.split(" (")[0]
    shown = [e for e in errors(at) if message in e]
    # next to the field and in the list beside the run button, led by the label
    assert len(shown) == 2 and all(f"**{label}** — {message}" in e for e in shown), errors(at)


def test_leg_outage_and_composition_problems_name_the_table_row_and_mol_percent():
    data = set_key(demo_data(AMMONIA), "leg.0.days", -5.0)
    data["reliquefaction"]["outage"] = [{"start_day": 1.0, "hours": -3.0}]
    for problem in engine_problems(data):
        text = form.explain(problem)
        assert problem in text  # the engine's words are kept for the scenario file
        if problem.startswith("leg[1].days"):
            assert text.startswith("**Voyage legs, row 1, Days**"), text
        if problem.startswith("reliquefaction.outage[1].hours"):
            assert text.startswith("**Plant outages, reliquefaction plant outage 1, Hours**")

    lng = demo_data(LNG_MIX)
    lng["cargo"]["mole_fractions"]["methane"] -= 0.10  # the table now sums to 90 mol %
    total = 100.0 * sum(lng["cargo"]["mole_fractions"].values())
    (problem,) = [p for p in engine_problems(lng) if "mole_fractions" in p]
    assert f"sums to {total:.9g} mol %" in form.explain(problem), form.explain(problem)
    assert form.explain("leg[2].air_c = 500: must be between -60 and 60 (degC)").endswith("(°C)")


# ---------------------------------------------------------------------------
# results: events in plain units, mixing marked, tank-model difference worded
# ---------------------------------------------------------------------------


def test_events_read_degrees_and_arrows_and_mixing_is_marked_on_the_pressure_chart():
    result = simulate(parse_scenario(demo_data(TWO_ZONE)))
    details = " ".join(headline.events_table(result.events_frame())["Detail"])
    assert "degC" not in details and "->" not in details
    assert "°C" in details and "→" in details
    mixing = [e for e in result.events if e.kind == "mixing"]
    fig = charts.result_figures("run", result, charts.control_levels(demo_data(TWO_ZONE)))
    marks = [t for t in fig["pressure"].data if t.meta == "event:mixing"]
    assert mixing and len(marks) == 1 and len(marks[0].x) == len(mixing)


def test_tank_model_difference_says_how_much_earlier_when_only_one_model_lifts():
    holds = {"time_to_relief_h": None, "simulated_days": 14.0}
    lifts = {"time_to_relief_h": 203.0, "simulated_days": 14.0}
    *_, item = headline.model_pair("equilibrium", holds, "two-zone", lifts)
    assert item.value == f"Over {14.0 * 24.0 - 203.0:.1f} h"
    assert "two-zone model lifts at least" in item.note
    *_, item = headline.model_pair("equilibrium", holds, "two-zone", holds)
    assert item.value == "—" and "neither" in item.note


# ---------------------------------------------------------------------------
# what-if: no "whole voyage" when the failure starts mid-voyage; failure shaded;
# an earlier set-up's runs flagged
# ---------------------------------------------------------------------------


def test_whatif_without_a_lift_counts_hours_from_the_failure_and_shades_it():
    at = start(AMMONIA)
    day = 4.0
    run_whatif(at, "reliquefaction", day)
    assert not at.exception, at.exception

    failed = simulate(parse_scenario(fail_control(demo_data(AMMONIA), day, "reliquefaction")))
    if failed.summary["time_to_relief_h"] is not None:
        pytest.skip("the demo's plant failure now lifts the valves; this test needs one that holds")
    left = 24.0 * failed.summary["simulated_days"] - 24.0 * day
    assert metric(at, "Time from failure to relief lift") == f"Over {left:,.0f} h"
    shapes = figure(at, "whatif.pressure")["layout"].get("shapes", [])
    assert any(s.get("type") == "rect" and s.get("x0") == pytest.approx(day) for s in shapes)
    assert not at.warning

    at.switch_page("ui/pages/setup.py").run()
    at.number_input(key="tank.fill_pct").set_value(95.0).run()
    at.switch_page("ui/pages/whatif.py").run()
    assert any("earlier set-up" in w.value for w in at.warning), [w.value for w in at.warning]


# ---------------------------------------------------------------------------
# compare, sizing, sweeps
# ---------------------------------------------------------------------------


def test_comparison_csv_carries_the_caution_and_reads_back():
    frame = headline.compare_frame([("#1 a", {"max_pressure_barg": 0.2}),
                                    ("#2 b", {"max_pressure_barg": 0.25})])
    text = exports.comparison_csv(frame)
    assert text.splitlines()[0] == f'"Caution: {CAUTION}"'
    back = pd.read_csv(io.StringIO(text), skiprows=1, index_col=0)
    assert list(back.columns) == ["#1 a", "#2 b"]
    assert back.loc["Peak pressure (barg)", "#2 b"] == pytest.approx(0.25)


def test_sizing_a_mixture_offers_its_main_component_with_units_as_on_other_pages():
    at = start(LNG_MIX)
    at.switch_page("ui/pages/sizing.py").run()
    fractions = demo_data(LNG_MIX)["cargo"]["mole_fractions"]
    main = form.component_words(max(fractions, key=fractions.get))
    assert any(main in i.value for i in at.info), [i.value for i in at.info]
    at.toggle(key="sizing.curves").set_value(False)
    at.button(key="FormSubmitter:sizing.form-Size the plant").click().run()
    assert any("mole_fractions" in e for e in errors(at))  # as set up: the engine's refusal
    at.toggle(key="sizing.stand_in").set_value(True)
    at.button(key="FormSubmitter:sizing.form-Size the plant").click().run()
    assert not at.exception, at.exception
    assert not errors(at), errors(at)
    assert metric(at, "Design capacity").endswith("kg/h")
    specs = [json.dumps(json.loads(e.proto.spec)["layout"]) for e in at.get("plotly_chart")]
    assert specs and not any("degC" in s for s in specs)


def test_monte_carlo_without_lifts_or_spread_says_so_instead_of_empty_histograms():
    at = start(AMMONIA)  # the plant holds every case: no lift, no cargo lost
    at.switch_page("ui/pages/sweep.py").run()
    at.radio(key="sweep.mode").set_value("Monte Carlo")
    at.text_area(key="sweep.sample").set_value("insulation.rated_bor_pct_day=normal:0.08:0.005")
    at.number_input(key="sweep.cases").set_value(3)
    at.button(key="FormSubmitter:sweep.form-Run the cases").click().run()
    assert not at.exception, at.exception
    rows = at.session_state["sweep.result"][1].rows
    if any(r.get("time_to_relief_h") is not None or r.get("cargo_loss_t") for r in rows):
        pytest.skip("the demo now lifts or loses cargo; this test needs one that does not")
    notes = " ".join(c.value for c in at.caption)
    assert "the valves lift in no case" in notes and "every case loses" in notes
    assert not [e for e in at.get("plotly_chart") if e.key and e.key.startswith("sweep.chart")]

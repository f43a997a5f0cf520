"""App tests: every user flow through Streamlit's AppTest, plus the pure helpers behind them.

These are wiring tests. No expected number is typed in: each one comes from the
engine's own result for the same scenario (``simulate`` run here, in the test),
and a displayed figure is compared with it within half a unit of its last shown
digit. Widgets are found by key (the parameter name), never by position.
"""

from __future__ import annotations

import base64
import re
import tomllib
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from cases import figure, metric, run_whatif
from streamlit.testing.v1 import AppTest

from sim import CAUTION
from sim.scenario import (
    ScenarioError,
    default_scenario_dict,
    demo_scenarios,
    load_scenario,
    loads_scenario,
    parse_scenario,
    scenario_to_toml,
    set_key,
)
from sim.voyage import simulate
from sim.whatif import fail_control
from ui import exports, form

APP = str(Path(__file__).resolve().parent.parent / "app.py")


# ---------------------------------------------------------------------------
# helpers
# ---------------------------------------------------------------------------


def demo_data(stem: str) -> dict:
    return tomllib.loads(demo_scenarios()[stem].read_text(encoding="utf-8"))


def pick_demo(wanted) -> str:
    """First demo whose scenario dict satisfies ``wanted`` (demos are picked by content)."""
    for stem in demo_scenarios():
        if wanted(demo_data(stem)):
            return stem
    pytest.skip("no demo scenario of the kind this test needs")


def start(stem: str | None = None) -> AppTest:
    at = AppTest.from_file(APP, default_timeout=30)
    at.run()
    assert not at.exception, at.exception
    if stem is not None:
        at.selectbox(key="demo").set_value(stem)
        at.button(key="load_demo").click().run()
        assert not at.exception, at.exception
    return at


def shown_number(text: str) -> float:
    """The first number in a displayed text ('1,234.5 t' -> 1234.5)."""
    match = re.search(r"-?\d[\d,]*(?:\.\d+)?", text)
    assert match, f"no number in {text!r}"
    return float(match.group().replace(",", ""))


def decimals(text: str) -> int:
    match = re.search(r"-?\d[\d,]*(?:\.(\d+))?", text)
    return len(match.group(1) or "") if match else 0


def assert_shown(text: str, engine_value: float) -> None:
    """A displayed number equals the engine's to within half its last digit."""
    tol = 0.5 * 10.0 ** -decimals(text) + 1e-9
    assert shown_number(text) == pytest.approx(engine_value, abs=tol), text


def array(value) -> np.ndarray:
    """A plotly array from a chart spec (plotly 6+ sends numbers base64-packed)."""
    if isinstance(value, dict) and "bdata" in value:
        return np.frombuffer(base64.b64decode(value["bdata"]), dtype=np.dtype(value["dtype"]))
    return np.asarray(value, dtype=float)


def curves(spec: dict, meta: str) -> list[dict]:
    return [trace for trace in spec["data"] if trace.get("meta") == meta]


def table(at: AppTest, column: str) -> pd.DataFrame:
    """The displayed table with a given column (st.dataframe keeps no key without selections)."""
    for element in at.dataframe:
        frame = element.value
        if column in frame.columns or column == frame.index.name:
            return frame
    raise AssertionError(f"no table with column {column!r}")


def errors(at: AppTest) -> list[str]:
    return [e.value for e in at.error]


def caution_shown(at: AppTest) -> bool:
    return any(CAUTION in c.value for c in at.caption)


# ---------------------------------------------------------------------------
# flows
# ---------------------------------------------------------------------------


def test_every_page_opens_with_the_caution():
    at = start()
    for page in ("ui/pages/setup.py", "ui/pages/results.py", "ui/pages/whatif.py",
                 "ui/pages/compare.py", "ui/pages/methods.py"):
        at.switch_page(page).run()
        assert not at.exception, (page, at.exception)
        assert caution_shown(at), page
        assert at.title, page


def test_demo_edit_run_headlines_match_the_engine():
    # A closed tank (no plant, no oxidiser) so the relief-valve figure is a lift time.
    stem = pick_demo(lambda d: "reliquefaction" not in d and "oxidiser" not in d)
    at = start(stem)
    data = demo_data(stem)
    assert at.text_input(key="title").value == data["title"]
    fill = float(data["tank"]["fill_pct"]) - 3.0
    at.number_input(key="tank.fill_pct").set_value(fill).run()
    assert not errors(at)
    at.button(key="run").click().run()
    assert not at.exception, at.exception

    # Expected figures: the engine's own run of the same edited scenario.
    expected = simulate(parse_scenario(set_key(data, "tank.fill_pct", fill)))
    s = expected.summary
    relief = metric(at, "Relief valve")
    if s["time_to_relief_h"] is None:
        assert relief == "Holds all voyage"
    else:
        assert relief.startswith("Lifts after")
        assert_shown(relief, s["time_to_relief_h"])
    assert_shown(metric(at, "Cargo lost"), s["cargo_loss_t"])
    assert_shown(metric(at, "Mean BOR"), s["mean_bor_pct_day"])
    assert_shown(metric(at, "Pressure on arrival"), s["final_pressure_barg"])
    assert_shown(metric(at, "Liquid on arrival"), s["final_liquid_temp_c"])
    assert_shown(metric(at, "Reliquefaction energy"), s["reliquefaction_energy_kwh"] / 1000.0)

    spec = figure(at, "chart.pressure")
    (pressure,) = curves(spec, "pressure")
    np.testing.assert_allclose(array(pressure["y"]), expected.timeseries["pressure_barg"],
                               rtol=1e-12)
    lifts = curves(spec, "event:relief-lift")
    n_lifts = sum(e.kind == "relief-lift" for e in expected.events)
    assert (len(array(lifts[0]["x"])) if lifts else 0) == n_lifts
    for key in ("chart.liquid_temp_c", "chart.fill_pct", "chart.boil_off"):
        assert figure(at, key)["data"], key
    events = table(at, "Event")
    assert len(events) == len(expected.events)
    assert caution_shown(at)


def test_bad_input_shows_the_engines_message_and_blocks_the_run():
    stem = next(iter(demo_scenarios()))
    at = start(stem)
    at.number_input(key="tank.fill_pct").set_value(120.0).run()
    assert not at.exception
    with pytest.raises(ScenarioError) as caught:
        parse_scenario(set_key(demo_data(stem), "tank.fill_pct", 120.0))
    (message,) = [p for p in caught.value.problems if p.startswith("tank.fill_pct")]
    shown = errors(at)
    # Once next to the field, once in the list above the run button.
    assert sum(message in text for text in shown) == 2, shown
    assert at.button(key="run").disabled
    at.number_input(key="tank.fill_pct").set_value(95.0).run()
    assert not errors(at)
    assert not at.button(key="run").disabled


def test_uploaded_file_is_checked_before_it_replaces_the_set_up():
    stem = next(iter(demo_scenarios()))
    at = start(stem)
    other = pick_demo(lambda d: d["title"] != demo_data(stem)["title"])
    bad = set_key(demo_data(other), "tank.fill_pct", 120.0)
    at.file_uploader(key="upload").set_value(
        ("bad.toml", scenario_to_toml(bad).encode(), "application/toml")).run()
    assert not at.exception
    with pytest.raises(ScenarioError) as caught:
        parse_scenario(bad)
    text = " ".join(errors(at))
    assert "bad.toml" in text and caught.value.problems[0] in text
    assert at.text_input(key="title").value == demo_data(stem)["title"]  # unchanged

    good = demo_data(other)
    at.file_uploader(key="upload-1").set_value(  # a fresh, empty uploader for each file
        ("good.toml", scenario_to_toml(good).encode(), "application/toml")).run()
    assert not at.exception
    assert at.text_input(key="title").value == good["title"]
    assert at.number_input(key="tank.fill_pct").value == pytest.approx(good["tank"]["fill_pct"])


def test_blank_start_loads_the_engines_default():
    at = start()
    at.button(key="blank").click().run()
    default = default_scenario_dict()
    assert at.text_input(key="title").value == default["title"]
    assert at.selectbox(key="cargo.fluid").value == default["cargo"]["fluid"]
    assert not errors(at)


def test_whatif_overlays_both_runs_with_both_relief_times():
    stem = pick_demo(lambda d: "reliquefaction" in d)
    at = start(stem)
    day = 2.0
    run_whatif(at, "reliquefaction", day)
    assert not at.exception, at.exception

    data = demo_data(stem)
    base = simulate(parse_scenario(data))
    failed = simulate(parse_scenario(fail_control(data, day, "reliquefaction")))
    spec = figure(at, "whatif.pressure")
    traces = curves(spec, "pressure")
    assert [t["name"] for t in traces] == ["As set up", "With the failure"]
    np.testing.assert_allclose(array(traces[0]["y"]), base.timeseries["pressure_barg"],
                               rtol=1e-12)
    np.testing.assert_allclose(array(traces[1]["y"]), failed.timeseries["pressure_barg"],
                               rtol=1e-12)
    for label, result in (("Relief valve: as set up", base),
                          ("Relief valve: with the failure", failed)):
        shown = metric(at, label)
        hours = result.summary["time_to_relief_h"]
        if hours is None:
            assert shown in ("Holds all voyage", "Does not lift"), shown
        else:
            assert_shown(shown, hours)


def test_compare_two_runs_side_by_side():
    stem = next(iter(demo_scenarios()))
    at = start(stem)
    at.button(key="run").click().run()
    at.switch_page("ui/pages/setup.py").run()
    data = demo_data(stem)
    fill = float(data["tank"]["fill_pct"]) - 5.0
    at.number_input(key="tank.fill_pct").set_value(fill).run()
    at.button(key="run").click().run()
    assert not at.exception, at.exception
    at.switch_page("ui/pages/compare.py").run()
    assert not at.exception, at.exception

    shown = table(at, "Figure")
    assert sorted(c.split(" ", 1)[0] for c in shown.columns) == ["#1", "#2"]
    runs = {"#1": simulate(parse_scenario(data)),
            "#2": simulate(parse_scenario(set_key(data, "tank.fill_pct", fill)))}
    for column in shown.columns:
        summary = runs[column.split(" ", 1)[0]].summary
        assert_shown(shown.loc["Cargo loaded (t)", column], summary["initial_cargo_t"])
        assert_shown(shown.loc["Final pressure (barg)", column], summary["final_pressure_barg"])
        assert_shown(shown.loc["Mean BOR (%/day)", column], summary["mean_bor_pct_day"])
    assert len(curves(figure(at, "compare.pressure"), "pressure")) == 2


# ---------------------------------------------------------------------------
# pure helpers behind the page: the downloaded set-up and the form
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("stem", [*demo_scenarios(), None])
def test_saved_set_up_loads_back_identically(stem):
    data = demo_data(stem) if stem else default_scenario_dict()
    original = load_scenario(demo_scenarios()[stem]) if stem else parse_scenario(data)
    setup, problems = form.dict_from_form(*form.flat_from_dict(data))
    assert problems == []
    text = exports.setup_toml(setup)
    assert tomllib.loads(text) == setup
    assert loads_scenario(text, "saved") == original
    again, _ = form.dict_from_form(*form.flat_from_dict(tomllib.loads(text)))
    assert again == setup  # saving a loaded save changes nothing


def test_wall_keys_survive_the_form():
    data = demo_data("propane-type-c-stratified-mixing")
    data["tank"].update(wall_thickness_mm=12.0, wall_conductivity_w_mk=40.0)
    setup, problems = form.dict_from_form(*form.flat_from_dict(data))
    assert problems == []
    assert setup["tank"]["wall_thickness_mm"] == 12.0
    assert setup["tank"]["wall_conductivity_w_mk"] == 40.0
    assert parse_scenario(setup).tank.wall_thickness == pytest.approx(0.012)


def test_form_leaves_out_what_the_set_up_does_not_use():
    data = default_scenario_dict()
    flat, legs, outages = form.flat_from_dict(data)
    flat = {**flat, "tank.shape": "sphere", "tank.diameter_m": 30.0}
    setup, _ = form.dict_from_form(flat, legs, outages)
    assert set(setup["tank"]) & {"length_m", "width_m", "height_m"} == set()
    assert setup["tank"]["diameter_m"] == 30.0

    flat = {**flat, "insulation.basis": "u_w_m2k", "insulation.u_w_m2k": 0.05}
    setup, _ = form.dict_from_form(flat, legs, outages)
    assert "rated_bor_pct_day" not in setup["insulation"]
    assert setup["insulation"]["u_w_m2k"] == 0.05

    blank_row = pd.DataFrame([{c: None for c in form.OUTAGE_COLUMNS}])
    stray = pd.DataFrame([{"equipment": "oxidiser", "start_day": 1.0, "hours": 5.0}])
    setup, problems = form.dict_from_form(flat, legs, pd.concat([blank_row, stray]))
    assert "oxidiser" not in setup
    assert len(problems) == 1 and "Oxidiser" in problems[0] and "delete the row" in problems[0]


def test_problems_are_placed_next_to_their_field():
    data = set_key(default_scenario_dict(), "tank.fill_pct", 120.0)
    data = set_key(data, "leg.0.days", -1.0)
    with pytest.raises(ScenarioError) as caught:
        parse_scenario(data)
    placed = {form.field_of_problem(p) for p in caught.value.problems}
    assert placed == {"tank.fill_pct", "leg"}


def test_two_zone_run_overlays_the_equilibrium_model_with_both_relief_times():
    # A closed tank with a relief lift inside the voyage; pick the model on Set-up. A pure
    # cargo: the two-zone model takes no mixtures.
    stem = pick_demo(lambda d: "reliquefaction" not in d and "oxidiser" not in d
                     and "mole_fractions" not in d.get("cargo", {}))
    at = start(stem)
    at.selectbox(key="model").set_value("two-zone").run()
    assert not errors(at)
    at.button(key="run").click().run()
    assert not at.exception, at.exception

    # Expected: the engine's own runs of the same scenario under both models.
    data = demo_data(stem)
    runs = {m: simulate(parse_scenario(set_key(data, "model", m)))
            for m in ("equilibrium", "two-zone")}
    for model, result in runs.items():
        shown = metric(at, f"Relief valve, {model}")
        hours = result.summary["time_to_relief_h"]
        if hours is None:
            assert shown in ("Holds all voyage", "Does not lift")
        else:
            assert_shown(shown, hours)
    spec = figure(at, "chart.model_pair")
    pair = curves(spec, "pressure")
    assert len(pair) == 2
    np.testing.assert_allclose(array(pair[0]["y"]), runs["equilibrium"].timeseries["pressure_barg"],
                               rtol=1e-12)
    np.testing.assert_allclose(array(pair[1]["y"]), runs["two-zone"].timeseries["pressure_barg"],
                               rtol=1e-12)


def test_mixing_days_text_becomes_mixing_tables_and_bad_entries_are_named():
    from ui import form

    problems: list[str] = []
    assert form._mixing_from_text("4, 9.5", problems) == [{"day": 4}, {"day": 9.5}]
    assert problems == []
    assert form._mixing_from_text("4, soon", problems) == [{"day": 4}]
    assert len(problems) == 1 and "'soon'" in problems[0]
    assert form.field_of_problem(problems[0]) == "mixing.days"
    assert form.field_of_problem("mixing[1].day = 300.0 is at or after the voyage end") == \
        "mixing.days"

"""App tests for mixture cargoes: composition editor, energy headlines, quality and charts.

Wiring tests, as in tests/test_app.py: no expected number is typed in. Each one
comes from the engine's own run of the same scenario (``simulate`` here, in the
test) or from the engine's own validation message, and a displayed figure is
compared with it within half a unit of its last shown digit.

The mixture scenario below is invented (a small two-tank ship, three days);
its composition is the engine's own "typical LNG" preset, read from
``sim.presets`` rather than typed in.
"""

from __future__ import annotations

import tomllib

import numpy as np
import pytest
from test_app import (
    array,
    assert_shown,
    caution_shown,
    curves,
    errors,
    figure,
    metric,
    start,
    table,
)

from sim.presets import MIXTURE_PRESETS
from sim.scenario import ScenarioError, default_scenario_dict, loads_scenario, parse_scenario
from sim.voyage import simulate
from ui import charts, exports, form, headline

PRESET = "typical LNG"


def mixture_toml(fractions: dict, price: float | None = 9.0) -> str:
    """A small invented LNG ship (two tanks, three days) carrying a mixture."""
    lines = "\n".join(f"{k} = {v!r}" for k, v in fractions.items())
    price_line = f"price_per_mmbtu = {price!r}\n" if price is not None else ""
    return f"""
title = "Invented two-tank LNG mixture check"
[cargo]
label = "{PRESET}"
{price_line}
[cargo.mole_fractions]
{lines}

[tank]
shape = "prismatic"
length_m = 20.0
width_m = 18.0
height_m = 15.0
count = 2
fill_pct = 95.0
pressure_barg = 0.10
relief_set_barg = 0.25

[insulation]
rated_bor_pct_day = 0.12

[[leg]]
name = "Laden, warm"
days = 2
air_c = 30
sea_c = 27
fuel_kg_h = 300

[[leg]]
name = "Laden, slow"
days = 1
air_c = 28
sea_c = 26

[oxidiser]
capacity_kg_h = 500
set_barg = 0.18
"""


def upload(at, name: str, text: str):
    at.file_uploader(key="upload").set_value((name, text.encode(), "application/toml")).run()
    assert not at.exception, at.exception
    return at


def editor_table(at):
    (editor,) = [d for d in at.data_editor if d.key == "cargo.mole_fractions"]
    return editor.value


@pytest.fixture(scope="module")
def lng():
    """The mixture scenario as TOML, and the engine's own run of it."""
    text = mixture_toml(MIXTURE_PRESETS[PRESET])
    return text, simulate(loads_scenario(text, "test"))


# ---------------------------------------------------------------------------
# flows
# ---------------------------------------------------------------------------


def test_mixture_file_fills_the_editor_and_its_run_matches_the_engine(lng):
    text, expected = lng
    s = expected.summary
    at = upload(start(), "lng.toml", text)
    assert at.radio(key="cargo.kind").value == "mixture"
    assert at.text_input(key="cargo.label").value == PRESET
    shown = editor_table(at)
    for name, x in MIXTURE_PRESETS[PRESET].items():
        assert shown.loc[name, "mol_pct"] == pytest.approx(100.0 * x, rel=1e-12)
    assert set(shown.index) == set(form.COMPONENTS)

    at.button(key="run").click().run()
    assert not at.exception, at.exception
    assert caution_shown(at)

    # Energy headlines: the engine's summary for the same TOML.
    assert_shown(metric(at, "Energy loaded"), s["energy_loaded_gj"])
    assert_shown(metric(at, "Energy lost"), s["energy_lost_gj"])
    assert_shown(metric(at, "Energy delivered"), s["energy_delivered_gj"])
    assert s["value_lost"] is not None  # a price is set in the file
    assert_shown(metric(at, "Value of cargo lost"), s["value_lost"])
    assert_shown(metric(at, "Cargo lost"), s["cargo_loss_t"])

    # Quality table: start and arrival GCV are the summary's.
    quality = table(at, "Quality")
    assert_shown(quality.loc["GCV, mass basis (MJ/kg)", "Loaded"], s["gcv_start_mj_kg"])
    assert_shown(quality.loc["GCV, mass basis (MJ/kg)", "On arrival"], s["gcv_arrival_mj_kg"])
    assert_shown(quality.loc["Wobbe index (MJ/m³)", "On arrival"],
                 s["quality_arrival"]["wobbe_mj_m3"])
    assert_shown(quality.loc["Bubble temperature (°C)", "On arrival"], s["final_liquid_temp_c"])
    composition = table(at, headline.COMPOSITION_INDEX)
    assert len(composition) == len(s["initial_composition"])
    assert_shown(composition.loc["Nitrogen", "On arrival"],
                 100.0 * s["arrival_composition"]["nitrogen"])

    # Composition charts: one liquid curve per x_ column, one vapour curve per y_ column.
    ts = expected.timeseries
    liquid = figure(at, "chart.composition")
    vapour = figure(at, "chart.vapour_composition")
    names = [c[2:] for c in ts.columns if c.startswith("x_")]
    assert len(names) == len(MIXTURE_PRESETS[PRESET])
    for name in names:
        (x_curve,) = curves(liquid, f"x_{name}")
        np.testing.assert_allclose(array(x_curve["y"]), 100.0 * ts[f"x_{name}"], rtol=1e-12)
        (y_curve,) = curves(vapour, f"y_{name}")
        np.testing.assert_allclose(array(y_curve["y"]), 100.0 * ts[f"y_{name}"], rtol=1e-12)
    (density,) = curves(figure(at, "chart.liquid_density_kg_m3"), "liquid_density_kg_m3")
    np.testing.assert_allclose(array(density["y"]), ts["liquid_density_kg_m3"], rtol=1e-12)


def test_preset_through_the_editor_and_the_saved_file_round_trips():
    at = start()
    at.button(key="blank").click().run()
    at.radio(key="cargo.kind").set_value("mixture").run()
    at.selectbox(key="cargo.preset").set_value("commercial propane").run()
    at.button(key="cargo.fill_preset").click().run()
    assert not at.exception, at.exception
    preset = MIXTURE_PRESETS["commercial propane"]
    shown = editor_table(at)
    for name in form.COMPONENTS:
        assert shown.loc[name, "mol_pct"] == pytest.approx(100.0 * preset.get(name, 0.0),
                                                           rel=1e-12, abs=0.0)
    assert at.text_input(key="cargo.label").value == "commercial propane"
    assert not errors(at)

    at.button(key="run").click().run()
    assert not at.exception, at.exception
    (run,) = at.session_state["runs"].values()
    saved = tomllib.loads(run.toml)
    assert saved["cargo"]["mole_fractions"] == preset  # the file keeps the fractions exactly
    assert "fluid" not in saved["cargo"]
    again, problems = form.dict_from_form(*form.flat_from_dict(saved))
    assert problems == [] and again == saved

    # The run shown is the engine's run of that file; the mixture section is drawn.
    expected = simulate(loads_scenario(run.toml, "saved")).summary
    assert_shown(metric(at, "Energy loaded"), expected["energy_loaded_gj"])
    assert metric(at, "Value of cargo lost") == "—"  # no price in the blank start
    assert figure(at, "chart.composition")["data"]


def test_bad_sum_shows_the_engines_message_and_scaling_fixes_it():
    at = start()
    at.button(key="blank").click().run()
    at.radio(key="cargo.kind").set_value("mixture").run()
    at.selectbox(key="cargo.preset").set_value("LPG 50/50 blend").run()
    at.button(key="cargo.fill_preset").click().run()
    # Type 2 % ethane into the table (row of ethane in the editor's order): sum 102 %.
    row = form.COMPONENTS.index("ethane")
    at.session_state["cargo.mole_fractions"] = {
        "edited_rows": {row: {"mol_pct": 2.0}}, "added_rows": [], "deleted_rows": []}
    at.run()
    assert not at.exception, at.exception

    bad = dict(MIXTURE_PRESETS["LPG 50/50 blend"], ethane=0.02)
    data = default_scenario_dict()
    data["cargo"] = {"label": "LPG 50/50 blend", "mole_fractions": bad}
    with pytest.raises(ScenarioError) as caught:
        parse_scenario(data)
    (message,) = [p for p in caught.value.problems if "mole_fractions" in p]
    shown = errors(at)
    # Once under the composition table, once in the list above the run button.
    assert sum(message in text for text in shown) == 2, shown
    assert at.button(key="run").disabled
    assert not at.button(key="cargo.normalise").disabled

    at.button(key="cargo.normalise").click().run()
    assert not at.exception, at.exception
    assert not errors(at)
    assert not at.button(key="run").disabled
    fractions = at.session_state["_form"]["cargo.mole_fractions"]
    assert sum(fractions.values()) == pytest.approx(1.0, abs=1e-9)
    assert fractions["ethane"] / fractions["propane"] == pytest.approx(0.02 / 0.5, rel=1e-8)


def test_uploaded_bad_sum_is_refused_with_the_engines_message():
    fractions = dict(MIXTURE_PRESETS[PRESET], methane=0.9)  # sums below 1
    text = mixture_toml(fractions)
    with pytest.raises(ScenarioError) as caught:
        loads_scenario(text, "bad.toml")
    (message,) = [p for p in caught.value.problems if "mole_fractions" in p]
    at = upload(start(), "bad.toml", text)
    assert any(message in e for e in errors(at)), errors(at)
    assert at.radio(key="cargo.kind").value == "pure"  # the set-up is unchanged


def test_other_pages_take_a_mixture_run(lng):
    text, expected = lng
    at = upload(start(), "lng.toml", text)
    at.button(key="run").click().run()
    for page in ("ui/pages/whatif.py", "ui/pages/sweep.py", "ui/pages/methods.py",
                 "ui/pages/sizing.py"):
        at.switch_page(page).run()
        assert not at.exception, (page, at.exception)
        assert caution_shown(at), page
    # Sizing takes pure cargoes: the engine's refusal is shown as a message, not a traceback.
    (size,) = [b for b in at.button if b.label == "Size the plant"]
    size.click().run()
    assert not at.exception, at.exception
    assert any("mole_fractions" in e for e in errors(at)), errors(at)

    # The same ship with pure methane, for a comparison of the two.
    at.switch_page("ui/pages/setup.py").run()
    at.radio(key="cargo.kind").set_value("pure").run()
    at.selectbox(key="cargo.fluid").set_value("methane").run()
    assert not errors(at)
    at.button(key="run").click().run()
    assert not at.exception, at.exception
    pure = simulate(parse_scenario(
        {**tomllib.loads(text), "cargo": {"fluid": "methane", "price_per_mmbtu": 9.0}})).summary
    # Energy figures of a pure cargo are shown too; no mixture section.
    assert_shown(metric(at, "Energy loaded"), pure["energy_loaded_gj"])
    assert not [e for e in at.get("plotly_chart") if e.key == "chart.composition"]

    at.switch_page("ui/pages/compare.py").run()
    assert not at.exception, at.exception
    shown = table(at, "Figure")
    by_run = {"#1": expected.summary, "#2": pure}
    assert sorted(c.split(" ", 1)[0] for c in shown.columns) == ["#1", "#2"]
    for column in shown.columns:
        summary = by_run[column.split(" ", 1)[0]]
        assert_shown(shown.loc["Energy lost (GJ)", column], summary["energy_lost_gj"])


# ---------------------------------------------------------------------------
# pure helpers
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("name", list(MIXTURE_PRESETS))
def test_composition_table_gives_back_the_files_fractions(name):
    fractions = MIXTURE_PRESETS[name]
    assert form.fractions_from_frame(form.composition_frame(fractions)) == fractions
    data = default_scenario_dict()
    data["cargo"] = {"label": name, "price_per_tonne": 500.0, "mole_fractions": fractions}
    setup, problems = form.dict_from_form(*form.flat_from_dict(data))
    assert problems == [] and setup["cargo"] == data["cargo"]
    assert tomllib.loads(exports.setup_toml(setup)) == setup


def test_normalised_scales_to_one_and_keeps_the_ratios():
    fractions = {"propane": 0.6, "n-butane": 0.45}
    scaled = form.normalised(fractions)
    assert sum(scaled.values()) == pytest.approx(1.0, abs=1e-12)
    assert scaled["propane"] / scaled["n-butane"] == pytest.approx(0.6 / 0.45, rel=1e-9)
    with pytest.raises(ValueError):
        form.normalised({"propane": 0.0})


def test_mixture_problems_are_placed_at_the_composition_table():
    for fractions in ({"methane": 0.5, "ethane": 0.4}, {"methane": 1.2},
                      {"metane": 1.0}):
        data = default_scenario_dict()
        data["cargo"] = {"mole_fractions": fractions}
        with pytest.raises(ScenarioError) as caught:
            parse_scenario(data)
        assert {form.field_of_problem(p) for p in caught.value.problems} == \
            {"cargo.mole_fractions"}, caught.value.problems


def test_pure_cargo_has_no_mixture_charts_and_energy_reads_a_dash_without_iso_values():
    data = default_scenario_dict()
    data["cargo"] = {"fluid": "ethylene", "price_per_tonne": 800.0}
    data["tank"] = {**data["tank"], "pressure_barg": 0.1, "relief_set_barg": 0.3}
    result = simulate(parse_scenario(data))
    s = result.summary
    figures = charts.result_figures("r", result, [])
    assert not charts.is_mixture(result) and "composition" not in figures
    items = {h.key: h for h in headline.energy_headlines(s)}
    assert s["energy_loaded_gj"] is None  # ethylene has no ISO 6976 heating value
    assert items["energy_loaded"].value == "—" and "ISO 6976" in items["energy_loaded"].note
    assert s["value_lost"] is not None  # priced per tonne instead
    assert items["value_lost"].value == f"{s['value_lost']:,.0f}"


def test_fractions_with_more_digits_than_the_table_shows_are_kept_exactly():
    # Two components whose fractions carry 17 significant digits (invented values).
    propane = 0.61234567890123456
    fractions = {"propane": propane, "n-butane": 1.0 - propane}
    data = default_scenario_dict()
    data["cargo"] = {"mole_fractions": fractions}
    at = upload(start(), "digits.toml", exports.setup_toml(data))
    assert at.radio(key="cargo.kind").value == "mixture"
    assert at.session_state["_form"]["cargo.mole_fractions"] == fractions

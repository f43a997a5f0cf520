"""Chart, headline and export helpers: wiring tests against the engine's own results.

Each expected value is read from the engine's result for the same scenario
(``simulate`` run here); the tests check that the right columns, events and
set pressures reach the figures and tables, and nothing is lost or invented.
"""

from __future__ import annotations

import json
import math
import tomllib

import numpy as np
import pandas as pd
import pytest

from sim import CAUTION
from sim.results import summary_json, timeseries_csv
from sim.scenario import demo_scenarios, parse_scenario
from sim.voyage import simulate
from sim.whatif import fail_control
from ui import charts, exports, headline


def _data(wanted) -> dict:
    for path in demo_scenarios().values():
        data = tomllib.loads(path.read_text(encoding="utf-8"))
        if wanted(data):
            return data
    pytest.skip("no demo scenario of the kind this test needs")


@pytest.fixture(scope="module")
def closed():
    """A demo without plant or oxidiser, run by the engine (its relief valves lift)."""
    data = _data(lambda d: "reliquefaction" not in d and "oxidiser" not in d)
    return data, simulate(parse_scenario(data))


@pytest.fixture(scope="module")
def with_plant():
    """A demo with a reliquefaction plant, as set up and with the plant failing on day 2."""
    data = _data(lambda d: "reliquefaction" in d)
    failed = fail_control(data, 2.0, "reliquefaction")
    return data, simulate(parse_scenario(data)), failed, simulate(parse_scenario(failed))


def _traces(fig, meta):
    return [t for t in fig.data if t.meta == meta]


def test_pressure_chart_of_one_run(closed):
    data, result = closed
    fig = charts.pressure_figure([("run", result)], charts.control_levels(data))
    assert fig.layout.meta == {"chart": "pressure"}
    (curve,) = _traces(fig, "pressure")
    np.testing.assert_array_equal(np.asarray(curve.y), result.timeseries["pressure_barg"])
    np.testing.assert_allclose(np.asarray(curve.x) * 24.0, result.timeseries["time_h"],
                               rtol=1e-12)
    lifts = [e.time / 86400.0 for e in result.events if e.kind == "relief-lift"]
    marked = _traces(fig, "event:relief-lift")
    assert (list(marked[0].x) if marked else []) == pytest.approx(lifts)
    relief = [s for s in fig.layout.shapes if s.y0 == s.y1]
    assert [s.y0 for s in relief] == [data["tank"]["relief_set_barg"]]


def test_set_pressure_lines_follow_the_scenario(with_plant):
    data = with_plant[0]
    levels = {lv.label: lv.barg for lv in charts.control_levels(data)}
    assert levels["Relief set"] == data["tank"]["relief_set_barg"]
    assert levels["Plant hold"] == data["reliquefaction"]["hold_barg"]
    assert ("Oxidiser start" in levels) == ("oxidiser" in data)


def test_overlay_has_one_curve_per_run_and_shades_no_outage(with_plant):
    data, base, _, failed = with_plant
    fig = charts.pressure_figure([("as set up", base), ("failed", failed)],
                                 charts.control_levels(data))
    curves = _traces(fig, "pressure")
    assert [c.name for c in curves] == ["as set up", "failed"]
    np.testing.assert_array_equal(np.asarray(curves[1].y), failed.timeseries["pressure_barg"])
    trips = [t for t in fig.data if t.meta == "event:plant-trip"]
    n_trips = sum(e.kind == "plant-trip" for e in failed.events)
    assert sum(len(t.x) for t in trips) >= n_trips > 0
    assert not [s for s in fig.layout.shapes if s.type == "rect"]


def test_outage_is_shaded_on_a_single_run(with_plant):
    _, _, failed_data, failed = with_plant
    fig = charts.pressure_figure([("failed", failed)])
    bands = [s for s in fig.layout.shapes if s.type == "rect"]
    trip = next(e for e in failed.events if e.kind == "plant-trip")
    assert bands and bands[0].x0 == pytest.approx(trip.time / 86400.0)


def test_boil_off_stack_adds_up_to_the_total(with_plant):
    result = with_plant[1]
    fig = charts.boil_off_figure(result)
    stacked = [t for t in fig.data if t.stackgroup == "sinks"]
    assert stacked, "a plant that holds pressure draws vapour off"
    total = sum(np.asarray(t.y, dtype=float) for t in stacked)
    np.testing.assert_allclose(total, result.timeseries["boil_off_kg_h"], rtol=1e-9, atol=1e-9)
    for trace in stacked:
        assert np.any(np.asarray(trace.y) != 0.0), trace.name  # silent sinks are left out


def test_line_charts_show_their_column(closed):
    _, result = closed
    for fig, column in ((charts.temperature_figure([("r", result)]), "liquid_temp_c"),
                        (charts.fill_figure([("r", result)]), "fill_pct"),
                        (charts.cargo_loss_figure([("r", result)]), "cargo_loss_t")):
        (curve,) = _traces(fig, column)
        np.testing.assert_array_equal(np.asarray(curve.y), result.timeseries[column])


def test_headlines_read_the_summary(closed, with_plant):
    for result in (closed[1], with_plant[1]):
        s = result.summary
        items = {h.key: h for h in headline.headlines(s)}
        if s["time_to_relief_h"] is None:
            assert items["relief"].value == "Holds all voyage"
            assert f"{s['margin_to_relief_bar']:.3f} bar" in items["relief"].note
        else:
            assert items["relief"].value == f"Lifts after {s['time_to_relief_h']:.1f} h"
        assert items["cargo_loss"].value == f"{s['cargo_loss_t']:,.1f} t"
        assert items["bor"].value == f"{s['mean_bor_pct_day']:.4f} %/day"
        assert items["pressure"].value == f"{s['final_pressure_barg']:.3f} barg"


def test_compare_frame_is_the_summaries_side_by_side(closed, with_plant):
    runs = [("a", closed[1].summary), ("b", with_plant[1].summary)]
    frame = headline.compare_frame(runs)
    assert list(frame.columns) == ["a", "b"]
    for row, key, _ in headline.COMPARE_ROWS:
        for label, summary in runs:
            value = summary[key]
            if value is None:
                assert math.isnan(frame.loc[row, label])
            else:
                assert frame.loc[row, label] == pytest.approx(value, rel=1e-15)
    shown = headline.compare_display(frame)
    never = [lab for lab, s in runs if s["time_to_relief_h"] is None]
    for label in never:
        assert shown.loc["Relief valve first lifts (h)", label] == "does not lift"


def test_events_table_keeps_every_event(with_plant):
    result = with_plant[3]
    table = headline.events_table(result.events_frame())
    assert len(table) == len(result.events)
    np.testing.assert_allclose(table["Hour"], [e.time / 3600.0 for e in result.events],
                               atol=1e-6)
    assert list(table["kind"]) == [e.kind for e in result.events]


def test_downloads_are_the_engines_own_files(closed):
    _, result = closed
    assert exports.result_csv(result) == timeseries_csv(result)
    assert exports.result_json(result) == summary_json(result)
    frame = pd.read_csv(__import__("io").StringIO(exports.result_csv(result)))
    assert len(frame) == len(result.timeseries)
    assert json.loads(exports.result_json(result))["cargo_loss_t"] == pytest.approx(
        result.summary["cargo_loss_t"])


def test_charts_html_is_one_offline_page(closed):
    data, result = closed
    figures = charts.result_figures("run", result, charts.control_levels(data))
    page = exports.charts_html(figures, "A <title>")
    assert page.count('class="plotly-graph-div"') == len(figures)
    assert page.count("plotly.js v") == 1  # the library is embedded once, not fetched
    assert CAUTION in page and "A &lt;title&gt;" in page


def test_file_stem_is_safe():
    assert exports.file_stem("LNG carrier: 4 tanks / trip #2") == "lng-carrier-4-tanks-trip-2"
    assert exports.file_stem("***") == "scenario"


@pytest.mark.slow
def test_png_export_where_kaleido_and_chromium_exist(closed):
    if not exports.png_available():
        pytest.skip("PNG export needs the kaleido package and a Chromium; the app then offers "
                    "HTML and the chart's own camera button")
    data, result = closed
    fig = charts.pressure_figure([("run", result)], charts.control_levels(data))
    png = exports.chart_png(fig, width=600, height=300)
    assert png[:8] == b"\x89PNG\r\n\x1a\n"


def test_leg_names_come_from_the_summary_legs(closed):
    data, result = closed
    legs = result.summary["legs"]
    # the summary's legs are the scenario's, in order, end to end
    assert [leg["name"] for leg in legs] == [leg.name for leg in parse_scenario(data).legs]
    assert legs[0]["start_h"] == 0.0
    assert legs[-1]["end_h"] == pytest.approx(sum(leg["days"] for leg in data["leg"]) * 24.0)
    for a, b in zip(legs, legs[1:]):
        assert a["end_h"] == pytest.approx(b["start_h"])
    fig = charts.pressure_figure([("run", result)])
    names = {a.text for a in fig.layout.annotations}
    assert {leg["name"] for leg in legs} <= names

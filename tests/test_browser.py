"""End to end in a real browser: serve the app, load a demo, run it, read the result.

Needs Debian's Chromium at /usr/bin/chromium and the playwright package (never
a browser that playwright downloads); skipped with the reason if either is missing.
"""

from __future__ import annotations

import re
import tomllib

import pytest

from sim import CAUTION
from sim.scenario import demo_scenarios, parse_scenario
from sim.voyage import simulate

pytestmark = pytest.mark.browser


def test_demo_run_in_a_real_browser(app_url, browser, tmp_path):
    stem, path = next(iter(demo_scenarios().items()))
    # Expected headline: the engine's own run of the same demo.
    expected = simulate(parse_scenario(tomllib.loads(path.read_text(encoding="utf-8"))))

    page = browser.new_page(viewport={"width": 1280, "height": 1600})
    page.set_default_timeout(60_000)
    page.goto(app_url)
    page.get_by_role("heading", name="Voyage set-up").wait_for()
    assert CAUTION[:40] in page.inner_text("body")

    page.get_by_role("combobox", name="Start from a demo").click()
    page.get_by_role("option", name=stem, exact=True).click()
    page.get_by_role("button", name="Load", exact=True).click()
    page.get_by_text(f"Loaded demo '{stem}'").wait_for()

    page.get_by_role("button", name="Run the voyage").click()
    page.get_by_role("heading", name="Results").wait_for()
    relief = page.get_by_test_id("stMetric").filter(has_text="Relief valve")
    relief.wait_for()
    # The pressure chart has drawn its curve (plotly's SVG line path).
    page.wait_for_function(
        "() => [...document.querySelectorAll('.js-plotly-plot')].some("
        "p => p.textContent.includes('Tank pressure') && p.querySelector('path.js-line'))")

    value = relief.get_by_test_id("stMetricValue").inner_text()
    hours = expected.summary["time_to_relief_h"]
    if hours is None:
        assert value == "Holds all voyage"
    else:
        shown = float(re.search(r"[\d.]+", value.replace(",", "")).group())
        assert shown == pytest.approx(hours, abs=0.05)
    page.screenshot(path=str(tmp_path / "results.png"), full_page=True)
    assert (tmp_path / "results.png").stat().st_size > 10_000


def test_consecutive_file_uploads_each_load_in_a_real_browser(app_url, browser, tmp_path):
    # A newcomer fixes a typo and uploads again: every file must be read. The
    # single-file uploader used to report the file after a held one as a removal.
    from sim.scenario import scenario_to_toml, set_key

    stems = list(demo_scenarios())
    first = tomllib.loads(demo_scenarios()[stems[0]].read_text(encoding="utf-8"))
    files = {
        "bad.toml": scenario_to_toml(set_key(first, "tank.fill_pct", 120.0)),
        "one.toml": scenario_to_toml(set_key(first, "title", "Upload one")),
        "two.toml": scenario_to_toml(set_key(first, "title", "Upload two")),
    }
    for name, text in files.items():
        (tmp_path / name).write_text(text, encoding="utf-8")

    page = browser.new_page(viewport={"width": 1280, "height": 1600})
    page.set_default_timeout(60_000)
    page.goto(app_url)
    page.get_by_role("heading", name="Voyage set-up").wait_for()
    for name, expect in (("bad.toml", "Not loaded: file 'bad.toml'"),
                         ("one.toml", "Loaded file 'one.toml'"),
                         ("two.toml", "Loaded file 'two.toml'")):
        page.locator('input[type="file"]').set_input_files(str(tmp_path / name))
        page.get_by_text(expect).wait_for()
    page.get_by_text("Editing: file 'two.toml'").wait_for()

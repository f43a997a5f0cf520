"""Sweeps and Monte Carlo: --vary/--sample parsing, executors, outputs, errors.

Expected grids and percentiles are worked by hand in each test; run results
are compared between executors (serial, local processes, Dask), never with
numbers stored from an earlier run.
"""

from __future__ import annotations

import copy
import json
import math

import numpy as np
import pytest

from sim import CAUTION, sweep
from sim.cli import main
from sim.scenario import demo_scenarios, load_scenario
from sim.sweep import SweepError


@pytest.fixture(scope="module")
def short_propane():
    """The type-C propane demo cut to 2-day legs (6 days): cheap runs."""
    data = load_scenario(demo_scenarios()["propane-type-c-no-control"]).raw
    return sweep.apply_edits(data, [("leg.*.days", 2.0)])


# ---------------------------------------------------------------------------
# Ranges and lists
# ---------------------------------------------------------------------------


def test_range_includes_the_stop_when_it_lands_on_the_grid():
    # 80, 82, ..., 98: (98 - 80) / 2 + 1 = 10 values, by hand
    assert sweep.expand_range("80:98:2") == list(range(80, 99, 2))
    assert sweep.expand_range("80:97:2")[-1] == 96  # 97 is off the grid
    assert sweep.expand_range("5:5:1") == [5]
    assert sweep.expand_range("1:0:-0.25") == [1.0, 0.75, 0.5, 0.25, 0.0]


def test_range_values_are_exact_decimals():
    # 0.02 + 0.01 in binary floats is 0.030000000000000002; the range must give 0.03
    assert sweep.expand_range("0.02:0.04:0.01") == [0.02, 0.03, 0.04]
    assert all(isinstance(v, int) for v in sweep.expand_range("80:98:2"))
    assert all(isinstance(v, float) for v in sweep.expand_range("80:98.0:2"))


@pytest.mark.parametrize("text, words", [
    ("80:90", "start:stop:step"),
    ("80:90:0", "must not be 0"),
    ("98:80:2", "negative step"),
    ("80:x:2", "'x' in a range is not a number"),
    ("1:2:3:4", "start:stop:step"),
])
def test_bad_ranges(text, words):
    with pytest.raises(SweepError, match=words.replace("(", r"\(")):
        sweep.expand_range(text, "tank.fill_pct")


def test_values_mix_lists_and_ranges(short_propane):
    v = sweep.parse_vary("tank.fill_pct=70,80:84:2,90.5", short_propane)
    assert v.key == "tank.fill_pct" and v.values == (70, 80, 82, 84, 90.5)


# ---------------------------------------------------------------------------
# Keys and values: clear errors
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("text, words", [
    ("tank.fill_pct", ["write KEY=VALUES"]),
    ("=80", ["key before '=' is missing"]),
    ("tank.fil_pct=80", ["tank.fil_pct", "unknown key 'fil_pct'", "did you mean fill_pct",
                         "pressure_barg"]),
    ("tanks.fill_pct=80", ["unknown key 'tanks'", "did you mean tank"]),
    ("leg.air_c=30", ["leg is an array of tables", "leg.0.air_c", "leg.*.air_c"]),
    ("leg.7.air_c=30", ["3 [[leg]] entries", "index 7 is out of range"]),
    ("tank=3", ["[tank] is a table", "fill_pct"]),
    ("tank.fill_pct=80,abc", ["tank.fill_pct=abc", "must be a number",
                              "above 0 and below 100"]),
    ("tank.fill_pct=90:100:5", ["tank.fill_pct=100", "above 0 and below 100"]),
    ("tank.count=1.5", ["tank.count=1.5", "whole number"]),
    ("cargo.fluid=lng", ["cargo.fluid=lng", "allowed", "methane"]),
    ("tank.fill_pct=", ["no values"]),
    ("tank.fill_pct=80,,90", ["empty item"]),
])
def test_bad_vary_names_key_value_and_what_is_allowed(short_propane, text, words):
    with pytest.raises(SweepError) as info:
        sweep.parse_vary(text, short_propane)
    message = str(info.value)
    for w in words:
        assert w in message


def test_grid_is_full_factorial_first_key_slowest(short_propane):
    a = sweep.parse_vary("tank.fill_pct=80,90", short_propane)
    b = sweep.parse_vary("insulation.u_w_m2k=0.2,0.3,0.4", short_propane)
    cases = sweep.grid_cases([a, b])
    assert len(cases) == 2 * 3
    assert cases[0] == (("tank.fill_pct", 80), ("insulation.u_w_m2k", 0.2))
    assert cases[3] == (("tank.fill_pct", 90), ("insulation.u_w_m2k", 0.2))
    with pytest.raises(SweepError, match="more than once"):
        sweep.grid_cases([a, a])


def test_star_sets_every_leg(short_propane):
    out = sweep.apply_edits(short_propane, [("leg.*.air_c", 41.0), ("leg.0.sea_c", 3.0)])
    assert [leg["air_c"] for leg in out["leg"]] == [41.0] * 3
    assert out["leg"][0]["sea_c"] == 3.0 and out["leg"][1]["sea_c"] != 3.0
    assert [leg["air_c"] for leg in short_propane["leg"]] != [41.0] * 3  # input untouched


# ---------------------------------------------------------------------------
# Executors: identical rows
# ---------------------------------------------------------------------------


@pytest.fixture(scope="module")
def grid(short_propane):
    # 2 x 2 x 2 = 8 cases; pressure 5 barg is above the 4.5 barg relief setting:
    # those 4 cases fail validation and must come back as rows with an error
    return [sweep.parse_vary("tank.fill_pct=80,90", short_propane),
            sweep.parse_vary("insulation.u_w_m2k=0.3,1.5", short_propane),
            sweep.parse_vary("tank.pressure_barg=2.5,5", short_propane)]


@pytest.fixture(scope="module")
def serial_result(short_propane, grid):
    return sweep.run_sweep(short_propane, grid, workers=1)


def _bits(rows):
    """Rows with every float as its exact bit pattern (float.hex)."""
    return [{k: (v.hex() if isinstance(v, float) else v) for k, v in r.items()} for r in rows]


def test_invalid_cases_become_rows(serial_result):
    rows = serial_result.rows
    assert len(rows) == 8
    bad = [r for r in rows if r["tank.pressure_barg"] == 5]
    good = [r for r in rows if r["tank.pressure_barg"] == 2.5]
    assert all(r["status"] == "invalid" and "tank.relief_set_barg" in r["error"] for r in bad)
    assert all(r["error"] == "" and r["status"] == "completed" for r in good)
    assert all(r["max_pressure_barg"] is None for r in bad)
    assert serial_result.invalid == [i for i, r in enumerate(rows) if r["error"]]


def test_columns_are_keys_then_numeric_summary(serial_result):
    cols = serial_result.columns
    assert cols[:3] == ["tank.fill_pct", "insulation.u_w_m2k", "tank.pressure_barg"]
    assert cols[-3:] == ["status", "message", "error"]
    assert {"time_to_relief_h", "max_pressure_barg", "cargo_loss_t", "boil_off_t"} <= set(cols)
    assert "events" not in cols and "title" not in cols


def test_process_pool_gives_identical_rows(short_propane, grid, serial_result):
    pooled = sweep.run_sweep(short_propane, grid, workers=2)
    assert pooled.info.executor == "processes"
    assert _bits(pooled.rows) == _bits(serial_result.rows)
    assert sweep.sweep_csv(pooled) == sweep.sweep_csv(serial_result)


def test_dask_local_cluster_gives_identical_rows(short_propane, grid, serial_result):
    distributed = pytest.importorskip("distributed")
    # in-process workers keep the test cheap (no 3-4 s CoolProp import per worker);
    # two threads exercise the lock around table building
    with distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=2,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        result = sweep.run_sweep(short_propane, grid, scheduler=client)
    assert result.info.executor == "dask"
    assert _bits(result.rows) == _bits(serial_result.rows)
    assert sweep.sweep_csv(result) == sweep.sweep_csv(serial_result)


def test_cli_sweep_on_a_dask_scheduler_address(short_propane, tmp_path, capsys):
    distributed = pytest.importorskip("distributed")
    path = tmp_path / "s.toml"
    from sim.scenario import scenario_to_toml

    path.write_text(scenario_to_toml(short_propane))
    with distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=1,
                                  protocol="tcp://", host="127.0.0.1",
                                  dashboard_address=None) as cluster:
        code = main(["sweep", str(path), "--vary", "insulation.u_w_m2k=0.3,0.6",
                     "--scheduler", cluster.scheduler_address, "--no-progress",
                     "--out", str(tmp_path / "dask")])
    assert code == 0
    assert "Dask cluster at tcp://127.0.0.1" in capsys.readouterr().out
    assert main(["sweep", str(path), "--vary", "insulation.u_w_m2k=0.3,0.6", "--workers", "1",
                 "--no-progress", "--out", str(tmp_path / "serial")]) == 0
    assert (tmp_path / "dask" / "sweep.csv").read_text() == \
        (tmp_path / "serial" / "sweep.csv").read_text()


def test_cluster_without_sim_is_a_clear_error(short_propane, tmp_path, capsys, monkeypatch):
    distributed = pytest.importorskip("distributed")
    path = tmp_path / "s.toml"
    from sim.scenario import scenario_to_toml

    path.write_text(scenario_to_toml(short_propane))

    def missing(*args):  # what a worker without the sim package reports
        raise ModuleNotFoundError("No module named 'sim'")

    monkeypatch.setattr(sweep, "run_chunk", missing)
    with distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=1,
                                  protocol="tcp://", host="127.0.0.1",
                                  dashboard_address=None) as cluster:
        code = main(["sweep", str(path), "--vary", "insulation.u_w_m2k=0.3,0.6",
                     "--scheduler", cluster.scheduler_address, "--no-progress",
                     "--out", str(tmp_path / "out")])
    err = capsys.readouterr().err
    assert code == 1 and "Traceback" not in err
    assert "No module named 'sim'" in err and "same Python environment" in err
    assert not (tmp_path / "out").exists()


def test_unreachable_scheduler_is_a_clear_error(short_propane):
    pytest.importorskip("distributed")
    with pytest.raises(SweepError, match="cannot connect to a Dask scheduler"):
        sweep.run_cases(short_propane, [(("tank.fill_pct", 80),)],
                        scheduler="tcp://127.0.0.1:9", connect_timeout="1s")


# ---------------------------------------------------------------------------
# Command line
# ---------------------------------------------------------------------------


def test_cli_sweep_writes_csv_json_and_chart(short_propane, tmp_path, capsys):
    path = tmp_path / "s.toml"
    from sim.scenario import scenario_to_toml

    path.write_text(scenario_to_toml(short_propane))
    out = tmp_path / "out"
    assert main(["sweep", str(path), "--vary", "tank.fill_pct=80:90:10",
                 "--vary", "insulation.u_w_m2k=0.3,3.0", "--workers", "2", "--no-progress",
                 "--out", str(out)]) == 0
    stdout = capsys.readouterr().out
    assert CAUTION in stdout and "4 cases, 0 invalid" in stdout
    lines = (out / "sweep.csv").read_text().splitlines()
    assert lines[0].startswith("tank.fill_pct,insulation.u_w_m2k,")
    assert len(lines) == 1 + 4
    payload = json.loads((out / "sweep.json").read_text())
    assert payload["caution"] == CAUTION
    assert payload["vary"] == {"tank.fill_pct": [80, 90], "insulation.u_w_m2k": [0.3, 3.0]}
    assert [r["case"] for r in payload["rows"]] == [0, 1, 2, 3]
    # with ten times the U-value the relief valve lifts within the 6 days; with 0.3 not
    by_u = {r["insulation.u_w_m2k"]: r["time_to_relief_h"] for r in payload["rows"]}
    assert by_u[0.3] is None and by_u[3.0] is not None
    html = (out / "sweep.html").read_text()
    assert CAUTION in html and "time_to_relief_h" in html
    assert not [p for p in out.iterdir() if p.name.startswith(".")]


@pytest.mark.parametrize("args, words", [
    (["--vary", "tank.fil_pct=80"], ["tank.fil_pct", "fill_pct"]),
    (["--vary", "tank.fill_pct:80"], ["write KEY=VALUES"]),
    ([], ["nothing to do"]),
    (["--vary", "tank.fill_pct=80", "--sample", "insulation.u_w_m2k=normal:0.3:0.01"],
     ["not both"]),
    (["--vary", "tank.fill_pct=80", "--seed", "3"], ["--cases and --seed go with --sample"]),
    (["--vary", "tank.fill_pct=80", "--workers", "0"], ["--workers 0"]),
    (["--vary", "tank.pressure_barg=5,6"], ["every case is invalid"]),
])
def test_cli_sweep_bad_input(tmp_path, capsys, args, words):
    path = demo_scenarios()["propane-type-c-no-control"]
    out = tmp_path / "out"
    workers = [] if "--workers" in args else ["--workers", "1"]
    assert main(["sweep", str(path), *args, *workers, "--no-progress", "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err
    for w in words:
        assert w in err
    assert not out.exists()


# ---------------------------------------------------------------------------
# Monte Carlo
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("text, words", [
    ("insulation.u_w_m2k=gauss:1:2", ["unknown distribution 'gauss'", "normal:MEAN:SD"]),
    ("insulation.u_w_m2k=normal:1", ["normal takes 2 numbers"]),
    ("insulation.u_w_m2k=normal:1:-2", ["out of order", "SD >= 0"]),
    ("insulation.u_w_m2k=uniform:2:1", ["out of order", "LOW < HIGH"]),
    ("insulation.u_w_m2k=triangular:1:3:2", ["out of order"]),
    ("insulation.u_w_m2k=normal:a:1", ["mean = 'a' is not a finite number"]),
    ("tank.count=normal:2:1", ["only keys that take decimal numbers"]),
    ("tank.volume=normal:2:1", ["unknown key 'volume'"]),
])
def test_bad_sample(short_propane, text, words):
    with pytest.raises(SweepError) as info:
        sweep.parse_sample(text, short_propane)
    for w in words:
        assert w in str(info.value)


def test_sampling_is_seeded_and_follows_the_distribution(short_propane):
    dists = [sweep.parse_sample("insulation.u_w_m2k=normal:0.3:0.03", short_propane),
             sweep.parse_sample("leg.*.air_c=triangular:20:30:40", short_propane)]
    a = sweep.sample_cases(dists, 2000, seed=7)
    assert a == sweep.sample_cases(dists, 2000, seed=7)
    assert a != sweep.sample_cases(dists, 2000, seed=8)
    u = np.array([c[0][1] for c in a])
    air = np.array([c[1][1] for c in a])
    # sample mean within 4 standard errors: normal mean 0.3, sd 0.03 -> se 0.03/sqrt(2000)
    assert abs(u.mean() - 0.3) < 4 * 0.03 / math.sqrt(2000)
    # triangular(20, 30, 40): mean 30, sd = sqrt((a2+b2+c2-ab-ac-bc)/18) = 4.08 (by hand)
    assert abs(air.mean() - 30.0) < 4 * 4.08 / math.sqrt(2000)
    assert air.min() >= 20.0 and air.max() <= 40.0


def test_quantile_matches_numpy_and_handles_no_lift():
    values = [5.0, 1.0, 4.0, 2.0, 3.0, 9.0]
    for q in (0.1, 0.5, 0.9):
        assert sweep.quantile(values, q) == pytest.approx(np.quantile(values, q), rel=1e-15)
    # 10 cases, 3 never lift (inf): rank h = 9 q; P10 (h = 0.9) and P50 (h = 4.5)
    # interpolate between finite values, P90 (h = 8.1) falls among the no-lift cases
    v = [float(i) for i in range(1, 8)] + [math.inf] * 3
    assert sweep.quantile(v, 0.1) == pytest.approx(1.9)
    assert sweep.quantile(v, 0.5) == pytest.approx(5.5)
    assert sweep.quantile(v, 0.9) == math.inf


def test_cli_monte_carlo(short_propane, tmp_path, capsys):
    path = tmp_path / "s.toml"
    from sim.scenario import scenario_to_toml

    data = copy.deepcopy(short_propane)
    path.write_text(scenario_to_toml(data))
    args = ["sweep", str(path), "--sample", "insulation.u_w_m2k=uniform:0.3:4",
            "--sample", "leg.*.air_c=normal:35:3", "--cases", "12", "--seed", "11",
            "--workers", "2", "--no-progress"]
    assert main([*args, "--out", str(tmp_path / "a")]) == 0
    stdout = capsys.readouterr().out
    assert "seed 11" in stdout and "time_to_relief_h: P10" in stdout
    payload = json.loads((tmp_path / "a" / "sweep.json").read_text())
    assert payload["kind"] == "uncertainty" and payload["seed"] == 11
    assert payload["sample"]["insulation.u_w_m2k"] == {"distribution": "uniform", "low": 0.3,
                                                        "high": 4.0}
    stats = payload["percentiles"]
    lifted = [r["time_to_relief_h"] for r in payload["rows"] if r["time_to_relief_h"] is not None]
    assert stats["time_to_relief_h"]["lifted_cases"] == len(lifted)
    losses = [r["cargo_loss_t"] for r in payload["rows"]]
    assert stats["cargo_loss_t"]["p50"] == pytest.approx(np.quantile(losses, 0.5), rel=1e-12)
    assert CAUTION in (tmp_path / "a" / "uncertainty.html").read_text()
    # the same seed gives the same file, bit for bit
    assert main([*args, "--out", str(tmp_path / "b")]) == 0
    assert (tmp_path / "a" / "sweep.csv").read_text() == (tmp_path / "b" / "sweep.csv").read_text()


def test_percentiles_report_beyond_voyage():
    rows = [{"time_to_relief_h": t, "cargo_loss_t": 1.0, "error": ""}
            for t in [10.0, 20.0, None, None, None]]
    result = sweep.SweepResult("t", ["k"], [()] * 5, rows, [])
    stats = sweep.percentiles(result)["time_to_relief_h"]
    # 5 cases, 2 lift: rank h = 4 q; P10 (h = 0.4) -> 14; P50 (h = 2) and P90 are no-lift
    assert stats["p10"] == pytest.approx(14.0)
    assert stats["p50"] is None and stats["p90"] is None
    assert stats["beyond_voyage"] == ["p50", "p90"] and stats["lifted_cases"] == 2


# ---------------------------------------------------------------------------
# App page (standalone module; wiring only)
# ---------------------------------------------------------------------------


def _page():
    pytest.importorskip("ui.state")  # the app package, owned and wired in separately
    from pathlib import Path

    from streamlit.testing.v1 import AppTest

    page = Path(__file__).resolve().parent.parent / "ui" / "pages" / "sweep.py"
    at = AppTest.from_file(str(page), default_timeout=60)
    at.run()
    assert not at.exception
    return at


def test_app_page_sweep_grid_and_bad_input():
    at = _page()
    at.text_area(key="sweep.vary").set_value("tank.fill_pct=90,95\nleg.*.air_c=20,30")
    at.get("form_submit_button")[0].click().run()
    assert not at.exception and not at.error
    result = at.session_state["sweep.result"][1]
    assert len(result.rows) == 4 and result.keys == ["tank.fill_pct", "leg.*.air_c"]
    at.text_area(key="sweep.vary").set_value("tank.fil_pct=90")
    at.get("form_submit_button")[0].click().run()
    assert not at.exception
    assert "did you mean fill_pct" in at.error[0].value


def test_app_page_monte_carlo_is_seeded():
    at = _page()
    at.radio(key="sweep.mode").set_value("Monte Carlo")
    at.text_area(key="sweep.sample").set_value("insulation.rated_bor_pct_day=normal:0.1:0.01")
    at.number_input(key="sweep.cases").set_value(6)
    at.number_input(key="sweep.seed").set_value(5)
    at.get("form_submit_button")[0].click().run()
    assert not at.exception and not at.error
    result = at.session_state["sweep.result"][1]
    assert result.seed == 5
    drawn = [c[0][1] for c in result.cases]
    again = [c[0][1] for c in sweep.sample_cases(result.distributions, 6, seed=5)]
    assert drawn == again


def test_docstring_examples_run():
    import doctest

    outcome = doctest.testmod(sweep)
    assert outcome.attempted >= 6 and outcome.failed == 0


def test_sweeping_fill_under_a_rated_boil_off_warns_that_the_insulation_moves():
    from sim.sweep import rating_notes

    rated = {"insulation": {"rated_bor_pct_day": 0.1}}
    assert "tank.fill_pct" in rating_notes(rated, ["tank.fill_pct"])[0]
    assert "tank.pressure_barg" in rating_notes(rated, ["tank.pressure_barg"])[0]
    # a fixed rated fill or a U-value keeps the insulation: nothing to say
    fixed = {"insulation": {"rated_bor_pct_day": 0.1, "rated_fill_pct": 97.0}}
    assert rating_notes(fixed, ["tank.fill_pct"]) == []
    assert rating_notes({"insulation": {"u_w_m2k": 0.1}}, ["tank.fill_pct"]) == []
    # varying the rating itself is what the user asked for
    assert rating_notes(rated, ["insulation.rated_bor_pct_day"]) == []


def test_the_rating_note_reaches_the_sweep_result(short_propane):
    data = dict(short_propane, insulation={"rated_bor_pct_day": 0.3})
    result = sweep.run_sweep(data, [sweep.parse_vary("tank.fill_pct=80,90", data)], workers=1)
    assert any("rated_bor_pct_day" in w for w in result.info.warnings)


def test_cluster_failures_are_told_whole_with_their_cause():
    from sim.sweep import _exception_words

    try:
        try:
            raise ModuleNotFoundError("No module named 'sim'")
        except ImportError as inner:
            raise RuntimeError("Error during deserialization of the task graph. This "
                               "frequently\noccurs if the environments differ.") from inner
    except RuntimeError as exc:
        words = _exception_words(exc)
    # one line, the whole sentence (it used to stop at "This frequently"), and the cause
    assert "\n" not in words and "frequently occurs if" in words
    assert words.endswith("(caused by ModuleNotFoundError: No module named 'sim')")


def test_app_page_default_grid_keeps_the_insulation_fixed():
    # the page's starting grid must not fall into the rated-boil-off / fill trap
    at = _page()
    at.get("form_submit_button")[0].click().run()
    assert not at.exception and not at.error
    result = at.session_state["sweep.result"][1]
    assert len(result.rows) == 15 and "tank.fill_pct" not in result.keys
    assert result.info.warnings == []

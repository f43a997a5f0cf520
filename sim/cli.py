"""Command line: ``python -m sim cargoes | validate | run | size | sweep``.

Exit codes: 0 success (a run stopped by a hazard such as liquid-full is still
a result), 2 bad input (the message names the key, value and what is
allowed), 1 the simulation itself failed.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from . import CAUTION, __version__

EXIT_OK, EXIT_FAILED, EXIT_BAD_INPUT = 0, 1, 2


def _fmt(value, digits=2, unit=""):
    if value is None:
        return "-"
    return f"{value:.{digits}f}{unit}"


def cmd_cargoes(args) -> int:
    """Print the cargo catalogue."""
    from .cargo import catalogue_rows
    from .units import T_ZERO_C

    rows = catalogue_rows()
    header = (
        f"{'name':15s} {'formula':7s} {'NBP degC':>9s} {'Tc degC':>8s} {'pc bar':>7s} "
        f"{'Ttriple degC':>12s} {'ptriple bar':>11s} {'rho_l kg/m3':>11s}  note"
    )
    print(header)
    print("-" * len(header))
    for r in rows:
        nbp = r["normal_boiling_point"]
        nbp_txt = f"{nbp - T_ZERO_C:9.2f}" if nbp is not None else f"{'sublimes':>9s}"
        tc = r["critical_temperature"] - T_ZERO_C
        tt = r["triple_temperature"] - T_ZERO_C
        rho = _fmt(r["liquid_density_at_nbp"], 1)
        print(
            f"{r['name']:15s} {r['formula']:7s} {nbp_txt} {tc:8.2f} "
            f"{r['critical_pressure'] / 1e5:7.2f} {tt:12.2f} "
            f"{r['triple_pressure'] / 1e5:11.4g} {rho:>11s}  {r['note']}"
        )
    print(
        "\nProperties: CoolProp (HEOS). NBP and liquid density at 1.01325 bar; pressures absolute."
    )
    return EXIT_OK


def _load(path: str):
    from .scenario import ScenarioError, load_scenario

    try:
        return load_scenario(path)
    except ScenarioError as err:
        print(f"error: {err}", file=sys.stderr)
        return None


def _out_problem(out) -> str | None:
    """Why ``--out`` cannot be an output folder, or None; checked before any run.

    An empty name would write into the current folder; a file (or a file on
    the way to the folder) would only fail after the whole run.
    """
    text = str(out)
    if not text.strip():
        return f"--out {text!r}: give the name of an output folder (created if missing)"
    path = Path(text)
    for place in (path, *path.parents):
        if place.exists():
            if not place.is_dir():
                what = "is a file" if place == path else f"lies inside {place}, a file"
                return (f"--out {text}: {what}, not a folder; give an output folder "
                        "(created if missing)")
            break
    return None


def _check_out(out) -> bool:
    """Print the ``--out`` problem, if any; True if the folder can be used."""
    problem = _out_problem(out)
    if problem is not None:
        print(f"error: {problem}", file=sys.stderr)
    return problem is None


def cmd_validate(args) -> int:
    """Check a scenario file and print the derived facts."""
    scenario = _load(args.scenario)
    if scenario is None:
        return EXIT_BAD_INPUT
    from .facts import initial_facts

    facts = initial_facts(scenario)
    print(f"{args.scenario}: valid - {scenario.title}")
    print(
        f"  cargo {scenario.cargo}, {scenario.tank.count} x {facts['tank_volume_m3']:.0f} m3 "
        f"{scenario.raw['tank']['shape']}, {len(scenario.legs)} "
        f"leg{'s' if len(scenario.legs) != 1 else ''}, "
        f"{scenario.duration / 86400:.1f} days, model {scenario.model}"
    )
    print(
        f"  initial cargo {facts['initial_cargo_t']:.1f} t "
        f"at {facts['boiling_point_c']:.2f} degC; "
        f"IGC loading limit {facts['loading_limit_pct']:.2f} %; "
        f"heat in {facts['heat_in_kw']:.1f} kW "
        f"(BOR {facts['equivalent_bor_pct_day']:.3f} %/day on leg 1)"
    )
    fill_pct = 100.0 * scenario.tank.fill
    if fill_pct < 2.0:
        # a heel is a real loading case, but 0.97 is also 97 % typed as a fraction
        print(f"  note: tank.fill_pct = {fill_pct:g} % is a heel; a laden tank is written "
              f"as a percentage (e.g. 97, not 0.97)")
    return EXIT_OK


def cmd_run(args) -> int:
    """Run a scenario and write summary.json and timeseries.csv."""
    scenario = _load(args.scenario)
    if scenario is None:
        return EXIT_BAD_INPUT
    if not _check_out(args.out):
        return EXIT_BAD_INPUT
    from .results import write_outputs
    from .voyage import simulate

    try:
        result = simulate(scenario)
    except Exception as exc:  # noqa: BLE001 - a failed run is exit 1, never a traceback
        print(f"error: the simulation failed: {type(exc).__name__}: {exc}; nothing written",
              file=sys.stderr)
        return EXIT_FAILED
    try:
        written = write_outputs(result, args.out)
    except OSError as err:
        print(f"error: cannot write to --out {args.out}: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    s = result.summary
    print(f"{scenario.title}  [{result.status}: {result.message}]")
    if s["time_to_relief_h"] is None:
        print(
            f"  relief valves do not lift; highest pressure {_fmt(s['max_pressure_barg'], 3)} barg "
            f"({_fmt(s['margin_to_relief_bar'], 3)} bar below the set pressure)"
        )
    else:
        print(
            f"  relief valves lift after {s['time_to_relief_h']:.1f} h "
            f"(day {s['time_to_relief_h'] / 24:.2f})"
        )
    print(
        f"  arrival: {s['final_pressure_barg']:.3f} barg, {s['final_liquid_temp_c']:.2f} degC, "
        f"fill {s['final_fill_pct']:.2f} %"
    )
    print(
        f"  cargo lost {s['cargo_loss_t']:.1f} t ({s['cargo_loss_pct']:.3f} %): "
        f"fuel {s['fuel_t']:.1f} t, "
        f"oxidiser {s['oxidised_t']:.1f} t, vented {s['vented_t']:.1f} t; "
        f"reliquefied {s['reliquefied_t']:.1f} t ({s['reliquefaction_energy_kwh']:.0f} kWh)"
    )
    print(f"  mean boil-off {s['mean_bor_pct_day']:.4f} %/day")
    if s["energy_loaded_gj"] is not None:
        value = ""
        if s["value_lost"] is not None:
            value = f"; value lost {s['value_lost']:,.0f} ({s['value_lost_basis']})"
        print(
            f"  energy loaded {s['energy_loaded_gj']:,.0f} GJ, lost {s['energy_lost_gj']:,.0f} GJ "
            f"({s['energy_lost_mmbtu']:,.0f} MMBtu), delivered {s['energy_delivered_gj']:,.0f} GJ"
            f"{value}"
        )
    elif s["value_lost"] is not None:
        print(f"  value lost {s['value_lost']:,.0f} ({s['value_lost_basis']})")
    if scenario.mole_fractions is not None:
        arrival = s["arrival_composition"]
        bog = s["bog_composition_mean"] or {}
        print("  composition, mol %   loaded   arrival   boil-off (mean)")
        for name, x0 in s["initial_composition"].items():
            y = f"{100 * bog[name]:9.4f}" if name in bog else "        -"
            print(f"    {name:16s} {100 * x0:8.4f}  {100 * arrival[name]:8.4f}  {y}")
        if s["gcv_start_mj_kg"] is not None:
            print(f"  gross heating value {s['gcv_start_mj_kg']:.3f} -> "
                  f"{s['gcv_arrival_mj_kg']:.3f} MJ/kg ({s['energy_reference']})")
    for e in result.events:
        if e.kind not in ("leg",):
            print(f"  {e.time / 3600:9.2f} h  {e.kind:22s} {e.detail}")
    for warning in s.get("model_warnings") or ():
        print(f"  warning: {warning}")
    print("  wrote " + ", ".join(str(p) for p in written))
    print(f"  {CAUTION}")
    return EXIT_FAILED if result.status == "failed" else EXIT_OK


def _problems(head: str, problems: list[str]) -> None:
    """Print input problems to stderr, one per line."""
    if len(problems) == 1:
        print(f"error: {head}{problems[0]}", file=sys.stderr)
        return
    print(f"error: {head}{len(problems)} problems:", file=sys.stderr)
    for p in problems:
        print(f"  - {p}", file=sys.stderr)


def cmd_size(args) -> int:
    """Size a reliquefaction plant; write sizing.json, holding-time and loading-limit tables."""
    scenario = _load(args.scenario)
    if scenario is None:
        return EXIT_BAD_INPUT
    if not _check_out(args.out):
        return EXIT_BAD_INPUT
    from .scenario import ScenarioError
    from .sizing import SizingError, output_files, size_plant, summary_lines
    from .sweep import write_files

    try:
        sizing = size_plant(
            scenario.raw,
            design_air_c=args.design_air_c,
            design_sea_c=args.design_sea_c,
            hold_barg=args.hold_barg,
            fuel_credit=args.fuel_credit,
            margin_pct=args.margin_pct,
            unit_kg_h=args.unit_kg_h,
            spare_units=args.spare_units,
            specific_power_kwh_kg=args.specific_power_kwh_kg,
            horizon_days=args.horizon_days,
            voyage_ambient=args.voyage_ambient,
            curves=not args.no_curves,
        )
    except (SizingError, ScenarioError) as err:
        _problems("", err.problems)
        return EXIT_BAD_INPUT
    try:
        written = write_files(args.out, output_files(sizing))
    except OSError as err:
        print(f"error: cannot write to --out {args.out}: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    for line in summary_lines(sizing.summary):
        print(line)
    print("  wrote " + ", ".join(str(p) for p in written))
    print(f"  {CAUTION}")
    return EXIT_OK


def _flat(groups) -> list[str]:
    return [item for group in (groups or []) for item in group]


def cmd_sweep(args) -> int:
    """Run a scenario over a grid of values or a Monte Carlo sample; write sweep.csv/.json/.html."""
    scenario = _load(args.scenario)
    if scenario is None:
        return EXIT_BAD_INPUT
    from .sweep import (
        ClusterError,
        SweepError,
        grid_cases,
        output_files,
        parse_sample,
        parse_vary,
        percentiles,
        run_sweep,
        run_uncertainty,
        write_files,
    )

    data = scenario.raw
    varies, samples = _flat(args.vary), _flat(args.sample)
    problems = []
    if varies and samples:
        problems.append("give either --vary (a grid) or --sample (Monte Carlo), not both")
    if not varies and not samples:
        problems.append(
            "nothing to do: give --vary KEY=VALUES (e.g. tank.fill_pct=80:98:2) or "
            "--sample KEY=KIND:PARAMS (e.g. insulation.rated_bor_pct_day="
            "normal:0.1:0.01)"
        )
    if not samples and (args.cases is not None or args.seed is not None):
        problems.append("--cases and --seed go with --sample (Monte Carlo)")
    if args.workers is not None and args.workers < 1:
        problems.append(f"--workers {args.workers}: must be 1 or more")
    if args.seed is not None and args.seed < 0:
        problems.append(f"--seed {args.seed}: must be a whole number at or above 0")
    out_problem = _out_problem(args.out)
    if out_problem is not None:
        problems.append(out_problem)
    variations, distributions = [], []
    for text in varies:
        try:
            variations.append(parse_vary(text, data))
        except SweepError as err:
            problems.extend(err.problems)
    for text in samples:
        try:
            distributions.append(parse_sample(text, data))
        except SweepError as err:
            problems.extend(err.problems)
    cases = args.cases if args.cases is not None else 200
    if samples and not 1 <= cases <= 200_000:
        problems.append(f"--cases {cases}: must be a whole number from 1 to 200000")
    if not problems and variations:
        try:
            total = len(grid_cases(variations))
        except SweepError as err:
            problems.extend(err.problems)
    if problems:
        _problems("", problems)
        return EXIT_BAD_INPUT
    total = cases if distributions else total

    import tqdm

    tqdm.tqdm.monitor_interval = 0  # no monitor thread alive when worker processes fork
    bar = tqdm.tqdm(
        total=total,
        unit="case",
        file=sys.stderr,
        dynamic_ncols=True,
        disable=True if args.no_progress else None,
        desc="sweep",
    )
    try:
        if distributions:
            result = run_uncertainty(
                data,
                distributions,
                cases,
                seed=args.seed,
                workers=args.workers,
                scheduler=args.scheduler,
                progress=bar.update,
            )
        else:
            result = run_sweep(
                data,
                variations,
                workers=args.workers,
                scheduler=args.scheduler,
                progress=bar.update,
            )
    except SweepError as err:
        bar.close()
        _problems("", err.problems)
        return EXIT_BAD_INPUT
    except ClusterError as err:
        bar.close()
        print(f"error: {err}", file=sys.stderr)
        return EXIT_FAILED
    bar.close()

    invalid = result.invalid
    info = result.info
    where = {
        "serial": "in this process",
        "processes": f"on {info.workers} local processes",
        "dask": f"on the Dask cluster at {info.address} ({info.workers} worker "
                f"thread{'s' if info.workers != 1 else ''} in all)",
    }
    print(
        f"{result.title}: {len(result.rows)} cases, {len(invalid)} invalid, "
        f"{info.seconds:.1f} s {where[info.executor]}"
    )
    for i in invalid[:5]:
        edits = ", ".join(
            f"{k}={v:g}" if isinstance(v, float) else f"{k}={v}" for k, v in result.cases[i]
        )
        print(f"  invalid case {i} ({edits}): {result.rows[i]['error']}")
    if len(invalid) > 5:
        print(f"  ... and {len(invalid) - 5} more invalid cases (see the error column)")
    if args.scheduler and args.workers is not None:
        print("  note: --workers is ignored with --scheduler (the cluster's workers run the cases)")
    for warning in info.warnings:
        print(f"  warning: {warning}")
    if len(invalid) == len(result.rows):
        print("error: every case is invalid; nothing written", file=sys.stderr)
        return EXIT_BAD_INPUT
    if distributions:
        print(f"  seed {result.seed}")
        for key, stats in percentiles(result).items():
            cells = ", ".join(f"{n.upper()} {_fmt(stats[n], 1)}" for n in ("p10", "p50", "p90"))
            extra = ""
            if key == "time_to_relief_h":
                extra = (
                    f" (relief lifts in {stats['lifted_cases']} of {stats['valid_cases']} "
                    "cases; '-' = beyond the voyage)"
                )
            print(f"  {key}: {cells}{extra}")
    try:
        written = write_files(args.out, output_files(result, str(args.scenario)))
    except OSError as err:
        print(f"error: cannot write to --out {args.out}: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    print("  wrote " + ", ".join(str(p) for p in written))
    print(f"  {CAUTION}")
    return EXIT_OK


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="python -m sim",
        description="Voyage boil-off and pressure-rise simulator for liquefied-gas cargo tanks.",
        epilog=CAUTION,
    )
    parser.add_argument("--version", action="version", version=f"%(prog)s {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)
    p = sub.add_parser("cargoes", help="list the cargoes with boiling, critical and triple points")
    p.set_defaults(func=cmd_cargoes)
    p = sub.add_parser("validate", help="check a scenario file and show derived facts")
    p.add_argument("scenario", help="scenario TOML file")
    p.set_defaults(func=cmd_validate)
    p = sub.add_parser("run", help="run a scenario; write summary.json and timeseries.csv")
    p.add_argument("scenario", help="scenario TOML file")
    p.add_argument("--out", required=True, help="output directory (created if missing)")
    p.set_defaults(func=cmd_run)

    p = sub.add_parser(
        "size",
        help="size a reliquefaction plant; holding times; IGC loading-limit table",
        description="Smallest reliquefaction plant that holds the hold pressure at the design "
        "ambient indefinitely and through the scenario's plant outages; holding "
        "time with all pressure control lost; IGC loading limit against loading "
        "temperature. Writes sizing.json, holding-time.csv, loading-limit.csv and "
        "sizing.html into --out.",
        epilog=CAUTION,
    )
    p.add_argument("scenario", help="scenario TOML file")
    p.add_argument("--out", required=True, help="output directory (created if missing)")
    p.add_argument(
        "--design-air-c",
        type=float,
        default=45.0,
        metavar="DEGC",
        help="design air temperature (default 45, the IGC upper design ambient)",
    )
    p.add_argument(
        "--design-sea-c",
        type=float,
        default=32.0,
        metavar="DEGC",
        help="design sea temperature (default 32, the IGC upper design ambient)",
    )
    p.add_argument(
        "--hold-barg",
        type=float,
        metavar="BARG",
        help="pressure the plant holds (default: reliquefaction.hold_barg, or the "
        "initial pressure if the scenario has no plant)",
    )
    p.add_argument(
        "--fuel-credit",
        action="store_true",
        help="credit the lowest leg fuel demand (default: no credit, conservative)",
    )
    p.add_argument(
        "--margin-pct",
        type=float,
        default=0.0,
        metavar="PCT",
        help="design margin on the required capacity (default 0)",
    )
    p.add_argument(
        "--unit-kg-h",
        type=float,
        metavar="KG_H",
        help="capacity of one plant unit: report the units needed",
    )
    p.add_argument(
        "--spare-units",
        type=int,
        default=1,
        metavar="N",
        help="stand-by units on top of those needed (default 1: N+1)",
    )
    p.add_argument(
        "--specific-power-kwh-kg",
        type=float,
        metavar="KWH_KG",
        help="electrical energy per kg condensed (default: the scenario's)",
    )
    p.add_argument(
        "--horizon-days",
        type=float,
        default=365.0,
        metavar="DAYS",
        help="longest holding-time run (default 365)",
    )
    p.add_argument(
        "--voyage-ambient",
        action="store_true",
        help="run the outage voyage at each leg's own ambient, not the design ambient",
    )
    p.add_argument("--no-curves", action="store_true", help="skip the holding-time curves")
    p.set_defaults(func=cmd_size)

    p = sub.add_parser(
        "sweep",
        help="run a scenario over a grid of values or a Monte Carlo sample",
        description="Vary scenario keys over lists or ranges (full factorial), or draw "
        "uncertain keys from distributions; one summary row per case in "
        "sweep.csv and sweep.json, with a chart (sweep.html or uncertainty.html).",
        epilog="KEY is a dotted scenario key: tank.fill_pct, insulation.u_w_m2k, leg.0.air_c "
        "(first leg), leg.*.air_c (every leg). VALUES: 0.02,0.03,0.04 or a range "
        "start:stop:step (80:98:2; the stop is included when it lands on the grid). "
        "Distributions: normal:MEAN:SD, uniform:LOW:HIGH, triangular:LOW:MODE:HIGH. " + CAUTION,
    )
    p.add_argument("scenario", help="scenario TOML file")
    p.add_argument(
        "--vary",
        action="append",
        nargs="+",
        metavar="KEY=VALUES",
        help="a key and its values; repeat for a full-factorial grid",
    )
    p.add_argument(
        "--sample",
        action="append",
        nargs="+",
        metavar="KEY=DIST",
        help="an uncertain key and its distribution (Monte Carlo)",
    )
    p.add_argument("--cases", type=int, metavar="N", help="Monte Carlo cases (default 200)")
    p.add_argument(
        "--seed",
        type=int,
        metavar="S",
        help="Monte Carlo seed (default: a fresh one, recorded in sweep.json)",
    )
    p.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="run on a Dask distributed cluster, e.g. tcp://10.0.0.5:8786",
    )
    p.add_argument(
        "--workers",
        type=int,
        metavar="N",
        help="local worker processes (default: all cores; 1 runs in this process)",
    )
    p.add_argument("--no-progress", action="store_true", help="no progress bar")
    p.add_argument("--out", required=True, help="output directory (created if missing)")
    p.set_defaults(func=cmd_sweep)
    return parser


def main(argv: list[str] | None = None) -> int:
    from .errors import InputError

    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return args.func(args)
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # output piped into `head` and the like
        sys.stderr.close()
        return EXIT_OK
    except InputError as err:  # bad input found past the usual checks
        _problems("", err.problems)
        return EXIT_BAD_INPUT
    except Exception as exc:  # noqa: BLE001 - the last guard: a message, never a traceback
        print(f"error: {args.command} failed: {type(exc).__name__}: {exc}", file=sys.stderr)
        return EXIT_FAILED


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

"""Command line: ``python -m sim cargoes | validate | run``.

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
    header = (f"{'name':15s} {'formula':7s} {'NBP degC':>9s} {'Tc degC':>8s} {'pc bar':>7s} "
              f"{'Ttriple degC':>12s} {'ptriple bar':>11s} {'rho_l kg/m3':>11s}  note")
    print(header)
    print("-" * len(header))
    for r in rows:
        nbp = r["normal_boiling_point"]
        nbp_txt = f"{nbp - T_ZERO_C:9.2f}" if nbp is not None else f"{'sublimes':>9s}"
        print(f"{r['name']:15s} {r['formula']:7s} {nbp_txt} {r['critical_temperature'] - T_ZERO_C:8.2f} "
              f"{r['critical_pressure'] / 1e5:7.2f} {r['triple_temperature'] - T_ZERO_C:12.2f} "
              f"{r['triple_pressure'] / 1e5:11.4g} {_fmt(r['liquid_density_at_nbp'], 1):>11s}  {r['note']}")
    print("\nProperties: CoolProp (HEOS). NBP and liquid density at 1.01325 bar; pressures absolute.")
    return EXIT_OK


def _load(path: str):
    from .scenario import ScenarioError, load_scenario

    try:
        return load_scenario(path)
    except ScenarioError as err:
        print(f"error: {err}", file=sys.stderr)
        return None


def cmd_validate(args) -> int:
    """Check a scenario file and print the derived facts."""
    scenario = _load(args.scenario)
    if scenario is None:
        return EXIT_BAD_INPUT
    from .facts import initial_facts

    facts = initial_facts(scenario)
    print(f"{args.scenario}: valid - {scenario.title}")
    print(f"  cargo {scenario.cargo}, {scenario.tank.count} x {facts['tank_volume_m3']:.0f} m3 "
          f"{scenario.raw['tank']['shape']}, {len(scenario.legs)} legs, "
          f"{scenario.duration / 86400:.1f} days, model {scenario.model}")
    print(f"  initial cargo {facts['initial_cargo_t']:.1f} t at {facts['boiling_point_c']:.2f} degC; "
          f"IGC loading limit {facts['loading_limit_pct']:.2f} %; heat in {facts['heat_in_kw']:.1f} kW "
          f"(BOR {facts['equivalent_bor_pct_day']:.3f} %/day on leg 1)")
    return EXIT_OK


def cmd_run(args) -> int:
    """Run a scenario and write summary.json and timeseries.csv."""
    scenario = _load(args.scenario)
    if scenario is None:
        return EXIT_BAD_INPUT
    from .results import write_outputs
    from .voyage import simulate

    result = simulate(scenario)
    try:
        written = write_outputs(result, args.out)
    except OSError as err:
        print(f"error: cannot write to --out {args.out}: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    s = result.summary
    print(f"{scenario.title}  [{result.status}: {result.message}]")
    if s["time_to_relief_h"] is None:
        print(f"  relief valves do not lift; highest pressure {_fmt(s['max_pressure_barg'], 3)} barg "
              f"({_fmt(s['margin_to_relief_bar'], 3)} bar below the set pressure)")
    else:
        print(f"  relief valves lift after {s['time_to_relief_h']:.1f} h "
              f"(day {s['time_to_relief_h'] / 24:.2f})")
    print(f"  arrival: {s['final_pressure_barg']:.3f} barg, {s['final_liquid_temp_c']:.2f} degC, "
          f"fill {s['final_fill_pct']:.2f} %")
    print(f"  cargo lost {s['cargo_loss_t']:.1f} t ({s['cargo_loss_pct']:.3f} %): fuel {s['fuel_t']:.1f} t, "
          f"oxidiser {s['oxidised_t']:.1f} t, vented {s['vented_t']:.1f} t; "
          f"reliquefied {s['reliquefied_t']:.1f} t ({s['reliquefaction_energy_kwh']:.0f} kWh)")
    print(f"  mean boil-off {s['mean_bor_pct_day']:.4f} %/day")
    for e in result.events:
        if e.kind not in ("leg",):
            print(f"  {e.time / 3600:9.2f} h  {e.kind:22s} {e.detail}")
    print("  wrote " + ", ".join(str(p) for p in written))
    print(f"  {CAUTION}")
    return EXIT_FAILED if result.status == "failed" else EXIT_OK


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
    return parser


def main(argv: list[str] | None = None) -> int:
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


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

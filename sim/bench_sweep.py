"""Benchmark of sweeps: ``python -m sim.bench_sweep [--cases N] [--no-dask] [--no-cli]``.

A 100-case sweep (10 rated boil-off rates x 10 air temperatures) of a 30-day
LNG voyage with fuel gas, reliquefaction, a plant trip and an oxidiser,
methane standing in for LNG. Measured on this machine:

1. serially in this process;
2. on a pool of local worker processes (all cores), the default of
   ``python -m sim sweep``;
3. on a Dask ``LocalCluster`` of worker processes (one per core), cluster
   start-up and worker warm-up (CoolProp import, table build) timed apart
   from the sweep itself;
4. end to end from the command line (a fresh Python process: interpreter,
   imports and output files included).

The rows of 1-3 are checked to be identical bit for bit. The target is a
100-case sweep in 10 s or less on 2 cores.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time

#: Target for a 100-case sweep on 2 cores [s].
TARGET_SECONDS = 10.0


def bench_scenario() -> dict:
    """The LNG demo stretched to a 30-day voyage (legs 7.5, 11.25 and 11.25 days)."""
    from .scenario import demo_scenarios, load_scenario
    from .sweep import apply_edits

    data = load_scenario(demo_scenarios()["lng-membrane-fuel-reliq-trip"]).raw
    data = apply_edits(data, [("leg.0.days", 7.5), ("leg.1.days", 11.25), ("leg.2.days", 11.25)])
    data["title"] = "bench: 30-day LNG voyage"
    return data


def bench_variations(data: dict, cases: int):
    """About ``cases`` cases: rated BOR x air temperature of every leg."""
    import math

    from .sweep import Variation

    n = max(int(math.isqrt(cases)), 1)
    m = max(cases // n, 1)
    bors = tuple(round(0.06 + 0.01 * i, 4) for i in range(n))
    airs = tuple(round(10.0 + 30.0 * j / max(m - 1, 1), 4) for j in range(m))
    return [Variation("insulation.rated_bor_pct_day", bors), Variation("leg.*.air_c", airs)]


def _bits(rows):
    return [{k: (v.hex() if isinstance(v, float) else v) for k, v in r.items()} for r in rows]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m sim.bench_sweep", description=__doc__.split(
        "\n")[0])
    parser.add_argument("--cases", type=int, default=100, help="cases in the sweep (default 100)")
    parser.add_argument("--no-dask", action="store_true", help="skip the Dask LocalCluster")
    parser.add_argument("--no-cli", action="store_true", help="skip the command-line run")
    args = parser.parse_args(argv)

    from . import CAUTION
    from .scenario import scenario_to_toml
    from .sweep import default_workers, grid_cases, run_sweep

    started = time.perf_counter()
    import CoolProp  # noqa: F401

    import_s = time.perf_counter() - started
    data = bench_scenario()
    variations = bench_variations(data, args.cases)
    n = len(grid_cases(variations))
    cores = default_workers()
    print(f"sweep benchmark: {n} cases of a 30-day LNG voyage, {cores} cores "
          f"(Python {sys.version.split()[0]}, CoolProp import {import_s:.1f} s)")

    t = time.perf_counter()
    serial = run_sweep(data, variations, workers=1)
    serial_s = time.perf_counter() - t
    print(f"  serial, this process        {serial_s:7.2f} s   {1000 * serial_s / n:6.1f} ms/case")

    t = time.perf_counter()
    pooled = run_sweep(data, variations, workers=cores)
    pool_s = time.perf_counter() - t
    same = _bits(pooled.rows) == _bits(serial.rows)
    print(f"  {cores} local processes          {pool_s:7.2f} s   speed-up {serial_s / pool_s:4.2f}x"
          f"   rows identical: {same}")
    verdict = "within" if pool_s <= TARGET_SECONDS else "OVER"
    print(f"    -> {verdict} the {TARGET_SECONDS:g} s target for 100 cases on 2 cores")

    if not args.no_dask:
        try:
            from distributed import Client, LocalCluster
        except ImportError:
            print("  Dask: not installed (pip install 'dask[distributed]')")
        else:
            from .sweep import _prepare_cargo

            t = time.perf_counter()
            with LocalCluster(n_workers=cores, threads_per_worker=1, processes=True,
                              dashboard_address=None) as cluster, Client(cluster) as client:
                up_s = time.perf_counter() - t
                t = time.perf_counter()
                client.run(_prepare_cargo, "methane")
                warm_s = time.perf_counter() - t
                t = time.perf_counter()
                dasked = run_sweep(data, variations, scheduler=client)
                dask_s = time.perf_counter() - t
            same = _bits(dasked.rows) == _bits(serial.rows)
            print(f"  Dask LocalCluster, {cores} procs  {dask_s:7.2f} s   speed-up "
                  f"{serial_s / dask_s:4.2f}x   rows identical: {same}")
            print(f"    (cluster start {up_s:.1f} s and worker warm-up {warm_s:.1f} s "
                  "not included: paid once per cluster)")

    if not args.no_cli:
        with tempfile.TemporaryDirectory() as tmp:
            path = os.path.join(tmp, "bench.toml")
            with open(path, "w", encoding="utf-8") as fh:
                fh.write(scenario_to_toml(data))
            cmd = [sys.executable, "-m", "sim", "sweep", path, "--no-progress",
                   "--out", os.path.join(tmp, "out")]
            for v in variations:
                cmd += ["--vary", f"{v.key}=" + ",".join(f"{x:g}" for x in v.values)]
            t = time.perf_counter()
            done = subprocess.run(cmd, capture_output=True, text=True,
                                  cwd=os.path.dirname(os.path.dirname(__file__)))
            cli_s = time.perf_counter() - t
            ok = "ok" if done.returncode == 0 else f"exit {done.returncode}: {done.stderr[-300:]}"
            print(f"  command line, end to end    {cli_s:7.2f} s   ({ok}; includes Python start, "
                  "imports and writing the files)")
    print(f"  {CAUTION}")
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

"""Benchmark: ``python -m sim.bench``.

Measures, on this machine:

1. the cost of importing CoolProp and building one cargo's saturation table;
2. a 30-day single-tank equilibrium voyage (median of several runs), with
   the number of right-hand-side evaluations;
3. the same run with every property taken straight from CoolProp instead of
   the spline tables, same algorithm and tolerances (so equal accuracy): once
   with ``QT`` flashes for the saturated phases, once also replacing the
   temperature solve by a ``DmassUmass`` flash per state.
"""

from __future__ import annotations

import math
import statistics
import sys
import time


def _closed_tank(days=30.0):
    from .geometry import Sphere
    from .scenario import Insulation, Leg, Scenario, TankSpec
    from .units import SECONDS_PER_DAY, barg_to_pa, c_to_k

    tank = TankSpec(Sphere(15.0), 1, 0.9, barg_to_pa(0.1), barg_to_pa(2.0), barg_to_pa(-0.3))
    legs = (Leg("bench", days * SECONDS_PER_DAY, c_to_k(35.0), c_to_k(28.0), 0.0),)
    return Scenario(
        "bench: closed propane sphere",
        "equilibrium",
        "propane",
        tank,
        Insulation(0.6, 0.8),
        legs,
        None,
        None,
        barg_to_pa(0.1),
    )


class DirectSaturation:
    """:meth:`SaturationTable.raw` answered by CoolProp on every call (no table).

    Values from two ``QT`` flashes (saturated liquid and vapour), slopes from
    CoolProp's ``first_saturation_deriv`` along the saturation curve.
    """

    def __init__(self, table):
        from .cargo import abstract_state

        for key, value in vars(table).items():
            if not key.startswith("_"):
                setattr(self, key, value)
        self.state = abstract_state(table.cargo.coolprop_name)

    def raw(self, temperature):
        import CoolProp as cp

        a = self.state
        d = a.first_saturation_deriv
        a.update(cp.QT_INPUTS, 0.0, temperature)
        p, rl, hl, ul = a.p(), a.rhomass(), a.hmass(), a.umass()
        dp, drl = d(cp.iP, cp.iT), d(cp.iDmass, cp.iT)
        dhl, dul = d(cp.iHmass, cp.iT), d(cp.iUmass, cp.iT)
        a.update(cp.QT_INPUTS, 1.0, temperature)
        rv, hv, uv = a.rhomass(), a.hmass(), a.umass()
        drv, dhv, duv = d(cp.iDmass, cp.iT), d(cp.iHmass, cp.iT), d(cp.iUmass, cp.iT)
        return (
            [math.log(p), math.log(rv), rl, hl, hv, ul, uv],
            [dp / p, drv / rv, drl, dhl, dhv, dul, duv],
        )

    def raw_many(self, temperature):
        import numpy as np

        pairs = [self.raw(float(t)) for t in temperature]
        return (np.array([v for v, _ in pairs]).T, np.array([s for _, s in pairs]).T)

    def temperature(self, pressure):
        import CoolProp as cp

        self.state.update(cp.PQ_INPUTS, pressure, 0.0)
        return self.state.T()

    def at(self, temperature):
        from .cargo import SaturationPoint

        v, _ = self.raw(temperature)
        return SaturationPoint(temperature, math.exp(v[0]), v[2], math.exp(v[1]), *v[3:])


def _run_direct(scenario, flash_inversion: bool):
    """The engine with every property from CoolProp.

    ``flash_inversion=True`` also replaces the temperature solve by a
    ``DmassUmass`` flash per state, the textbook way to integrate a rigid
    two-phase tank on (M, U) with a property library.
    """
    from . import voyage as voyage_mod
    from .models.equilibrium import EquilibriumModel

    real_table = voyage_mod.cargo_table
    direct = DirectSaturation(real_table(scenario))
    original = EquilibriumModel._temperature

    def flash_temperature(self, mass, energy):
        import CoolProp as cp

        st = direct.state
        st.update(cp.DmassUmass_INPUTS, mass / self.volume, energy / mass)
        temp = st.T()
        v, s = direct.raw(temp)
        return temp, v, s

    voyage_mod.cargo_table = lambda scenario: direct
    if flash_inversion:
        EquilibriumModel._temperature = flash_temperature
    try:
        t0 = time.perf_counter()
        result = voyage_mod.simulate(scenario)
        return time.perf_counter() - t0, result
    finally:
        voyage_mod.cargo_table = real_table
        EquilibriumModel._temperature = original


def _mixture_voyage(days=20.0):
    """A 20-day single-tank LNG voyage, 7-component "typical LNG", engines holding
    0.10 barg on boil-off (the composition weathers all voyage)."""
    from .presets import MIXTURE_PRESETS
    from .scenario import loads_scenario

    lines = "\n".join(f"{k} = {v!r}" for k, v in MIXTURE_PRESETS["typical LNG"].items())
    return loads_scenario(f"""
title = "bench: typical LNG, membrane-size box, fuel holding"
[cargo]
[cargo.mole_fractions]
{lines}
[tank]
shape = "prismatic"
length_m = 44.0
width_m = 38.0
height_m = 24.0
fill_pct = 97.4
pressure_barg = 0.10
relief_set_barg = 0.25
[insulation]
rated_bor_pct_day = 0.10
air_exposed_pct = 60
[fuel]
floor_barg = 0.10
[[leg]]
days = {days}
air_c = 30.0
sea_c = 28.0
fuel_kg_h = 400.0
""", "bench")


def mixture_benchmark(repeats: int = 3) -> dict:
    """Cost of the mixture path: as-loaded tables (first use of a composition) and
    the 20-day voyage (median of ``repeats``), with RHS calls and table rebuilds."""
    from .mixture_table import loaded_mixture_tables
    from .voyage import simulate

    loaded_mixture_tables.cache_clear()
    t0 = time.perf_counter()
    scenario = _mixture_voyage()
    t_load = time.perf_counter() - t0
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        result = simulate(scenario)
        times.append(time.perf_counter() - t0)
    return {"load": t_load, "run": statistics.median(times), "min": min(times),
            "max": max(times), "result": result}


def main(argv: list[str] | None = None) -> int:
    import argparse

    parser = argparse.ArgumentParser(prog="python -m sim.bench",
                                     description=__doc__.split("\n\n")[0])
    parser.add_argument("--repeats", type=int, default=7,
                        help="runs of the voyage, the median is reported (default 7)")
    args = parser.parse_args(argv)
    if args.repeats < 1:
        parser.error(f"--repeats {args.repeats}: give 1 or more")
    repeats = args.repeats
    t0 = time.perf_counter()
    import CoolProp  # noqa: F401

    t_import = time.perf_counter() - t0
    from .cargo import saturation_table
    from .voyage import simulate

    t0 = time.perf_counter()
    saturation_table("propane")
    t_table = time.perf_counter() - t0

    scenario = _closed_tank()
    simulate(scenario)  # warm-up
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        result = simulate(scenario)
        times.append(time.perf_counter() - t0)
    run = statistics.median(times)
    engine_relief = result.time_to_relief_h

    # The same engine and tolerances with properties straight from CoolProp.
    t_qt, direct_qt = _run_direct(scenario, flash_inversion=False)
    t_du, direct_du = _run_direct(scenario, flash_inversion=True)

    print("Benchmark: 30-day single-tank closed propane sphere, equilibrium model")
    print(f"  python {sys.version.split()[0]}")
    print(f"  import CoolProp               {t_import:8.3f} s")
    print(f"  saturation table build        {t_table * 1e3:8.1f} ms")
    print(
        f"  voyage run (median of {repeats})     {run * 1e3:8.1f} ms   "
        f"(min {min(times) * 1e3:.1f}, max {max(times) * 1e3:.1f})"
    )
    print(f"  RHS evaluations               {result.stats['rhs_calls']:8d}")
    print(f"  time to relief                {engine_relief:10.3f} h (tables)")
    for label, secs, res in (
        ("direct CoolProp, QT flashes", t_qt, direct_qt),
        ("direct CoolProp, DmassUmass flash", t_du, direct_du),
    ):
        diff = 100 * abs(res.time_to_relief_h / engine_relief - 1)
        print(
            f"  {label:33s} {secs * 1e3:8.1f} ms   speed-up of tables {secs / run:5.1f} x; "
            f"time to relief differs by {diff:.2e} %"
        )

    mix = mixture_benchmark(repeats=max(1, min(repeats, 3)))
    res = mix["result"]
    print("Benchmark: 20-day single-tank LNG voyage, 7-component mixture, equilibrium model")
    print(f"  scenario load incl. as-loaded mixture tables  {mix['load']:8.3f} s")
    print(
        f"  voyage run (median)                           {mix['run']:8.3f} s   "
        f"(min {mix['min']:.3f}, max {mix['max']:.3f})"
    )
    print(f"  RHS evaluations {res.stats['rhs_calls']}, table rebuilds "
          f"{res.stats['table_refreshes']}, status {res.status}")
    print(f"  total (load + run)                            {mix['load'] + mix['run']:8.3f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())

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


def main(repeats: int = 7) -> int:
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
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""Voyage boil-off and pressure-rise simulation for liquefied-gas cargo tanks.

Physics lives in pure functions with SI units (K, Pa absolute, kg, m, s, W, J).
Trade units (barg, degC, t, %/day, kg/h, kW, days) appear only at the edges:
scenario files, the command line and the browser app (see :mod:`sim.units`).

Results are estimates for planning and training. Relief valves, filling limits
and cargo procedures follow the IGC Code, class rules, local regulations and
licensed practice.
"""

__version__ = "0.1.0"

CAUTION = (
    "Estimates for planning and training only. Relief-valve settings, filling "
    "limits and cargo procedures follow the IGC Code, class rules, local "
    "regulations and licensed practice."
)

"""Tank models, chosen by name.

Each model is a class built from ``(table, shape)`` that carries its own state
vector and right-hand side. The voyage orchestrator (:mod:`sim.voyage`) talks
to every model through the same small interface:

``initial_state(fill, pressure)``
    state vector for one tank [SI units per ``state_names``].
``evaluate(y, air_temperature, sea_temperature)``
    a :class:`~sim.models.equilibrium.TankState` (pressure, temperatures,
    fill, masses, heat in) for a state vector.
``pressure_rate_coefficients(state)``
    ``(a0, b_out, b_rl)`` with dp/dt = a0 - b_out*m_out - b_rl*m_rl [Pa/s]:
    the pressure rate is affine in the two withdrawal rates (vapour leaving,
    vapour reliquefied) [kg/s], which lets pressure control solve for the
    rate that holds a set pressure.
``derivatives(state, vapour_out, reliquefied)``
    d(state)/dt.
"""

from .equilibrium import EquilibriumModel
from .two_zone import TwoZoneModel

#: Registry of tank models by scenario-file name. The first is the default.
MODELS = {
    "equilibrium": EquilibriumModel,
    "two-zone": TwoZoneModel,
}

DEFAULT_MODEL = "equilibrium"

MODEL_DESCRIPTIONS = {
    "equilibrium": "Liquid and vapour saturated at one temperature (homogeneous).",
    "two-zone": "Superheated vapour over a liquid with a warm surface layer and a colder bulk "
                "(thermal stratification).",
}

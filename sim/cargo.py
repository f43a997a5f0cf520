"""Cargo catalogue and fast saturation properties.

Pure cargoes come from CoolProp's Helmholtz-energy equations of state (backend
``HEOS``). The integrator needs saturation properties thousands of times per
voyage, so each cargo gets a :class:`SaturationTable`: piecewise-cubic splines
of the saturated-liquid and saturated-vapour properties against temperature,
built once per process from CoolProp ``QT`` flashes and cached.

Spline nodes are spaced geometrically in the distance from the critical
temperature, so they crowd where the properties bend hardest. Pressure and
vapour density are splined as logarithms. Tests keep the table within 0.1 % of
direct CoolProp calls between the nodes.

References
----------
.. [1] I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and Pseudo-pure
   Fluid Thermophysical Property Evaluation and the Open-Source Thermophysical
   Property Library CoolProp", Ind. Eng. Chem. Res. 53 (2014) 2498-2508,
   doi:10.1021/ie4033999.
"""

from __future__ import annotations

import bisect
import functools
import math
from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicSpline

#: Lowest vapour pressure the tables reach [Pa]. Below about 2 kPa absolute no
#: cargo tank operates (it would be deep in vacuum), and the vapour density
#: spans too many decades to spline usefully.
TABLE_MIN_PRESSURE = 2_000.0

#: Number of spline nodes per cargo.
TABLE_NODES = 240


@dataclass(frozen=True)
class CargoInfo:
    """One catalogue entry.

    Attributes
    ----------
    name : str
        Name used in scenario files (lower case, hyphenated).
    coolprop_name : str
        Fluid name in CoolProp.
    label : str
        Human-readable name.
    formula : str
        Chemical formula.
    note : str
        What the cargo stands for in this tool.
    """

    name: str
    coolprop_name: str
    label: str
    formula: str
    note: str = ""


_ENTRIES = [
    CargoInfo("methane", "Methane", "Methane", "CH4", "stand-in for LNG as a pure cargo"),
    CargoInfo("ethane", "Ethane", "Ethane", "C2H6"),
    CargoInfo("ethylene", "Ethylene", "Ethylene", "C2H4"),
    CargoInfo("propane", "Propane", "Propane", "C3H8", "stand-in for commercial LPG"),
    CargoInfo("propylene", "Propylene", "Propylene", "C3H6"),
    CargoInfo("n-butane", "n-Butane", "n-Butane", "C4H10"),
    CargoInfo("isobutane", "IsoButane", "Isobutane", "C4H10"),
    CargoInfo("1-butene", "1-Butene", "1-Butene", "C4H8"),
    CargoInfo("n-pentane", "n-Pentane", "n-Pentane", "C5H12", "natural-gasoline component"),
    CargoInfo("isopentane", "Isopentane", "Isopentane", "C5H12", "natural-gasoline component"),
    CargoInfo("ammonia", "Ammonia", "Ammonia", "NH3"),
    CargoInfo(
        "carbon-dioxide",
        "CarbonDioxide",
        "Carbon dioxide",
        "CO2",
        "liquid only above its triple point (5.18 bar abs)",
    ),
    CargoInfo("nitrogen", "Nitrogen", "Nitrogen", "N2"),
    CargoInfo("hydrogen", "Hydrogen", "Hydrogen (normal)", "H2", "normal hydrogen, 75 % ortho"),
    CargoInfo(
        "parahydrogen",
        "ParaHydrogen",
        "Parahydrogen",
        "H2",
        "equilibrium hydrogen at cargo temperatures is nearly all para",
    ),
]

#: The catalogue, by scenario-file name.
CATALOGUE: dict[str, CargoInfo] = {entry.name: entry for entry in _ENTRIES}


def cargo_info(name: str) -> CargoInfo:
    """Catalogue entry for a cargo name, with a clear error for unknown names."""
    try:
        return CATALOGUE[name]
    except KeyError:
        allowed = ", ".join(CATALOGUE)
        raise ValueError(f"unknown cargo {name!r}; allowed: {allowed}") from None


@functools.cache
def abstract_state(coolprop_name: str):
    """A cached CoolProp ``AbstractState`` (HEOS) for one fluid.

    Creating the state parses the fluid definition; reuse it instead of
    calling ``PropsSI`` in loops. Not thread-safe: one per process.
    """
    from CoolProp.CoolProp import AbstractState

    return AbstractState("HEOS", coolprop_name)


#: Column order of the splined property vector.
_COLUMNS = ("ln_p", "ln_rho_vapour", "rho_liquid", "h_liquid", "h_vapour", "u_liquid", "u_vapour")


@dataclass(frozen=True)
class SaturationPoint:
    """Saturation properties at one temperature (all SI).

    Attributes
    ----------
    temperature : float  [K]
    pressure : float  [Pa]
    rho_liquid, rho_vapour : float  [kg/m^3]
    h_liquid, h_vapour : float  [J/kg]
    u_liquid, u_vapour : float  [J/kg]
    """

    temperature: float
    pressure: float
    rho_liquid: float
    rho_vapour: float
    h_liquid: float
    h_vapour: float
    u_liquid: float
    u_vapour: float

    @property
    def latent_heat(self) -> float:
        """Enthalpy of vaporisation h_v - h_l [J/kg]."""
        return self.h_vapour - self.h_liquid


class SaturationTable:
    """Spline table of saturation properties of one pure cargo.

    Build with :func:`saturation_table` (cached per cargo). The scalar methods
    are written for speed inside an ODE right-hand side: one ``bisect`` and a
    Horner evaluation of precomputed cubic coefficients.

    Attributes
    ----------
    cargo : CargoInfo
    temperature_min, temperature_max : float
        Temperature range covered [K].
    pressure_min, pressure_max : float
        Saturation pressures at those temperatures [Pa].
    temperature_triple, temperature_critical : float  [K]
    pressure_triple, pressure_critical : float  [Pa]
    molar_mass : float  [kg/mol]
    """

    def __init__(self, cargo: CargoInfo, nodes: int = TABLE_NODES):
        state = abstract_state(cargo.coolprop_name)
        import CoolProp

        self.cargo = cargo
        self.molar_mass = state.molar_mass()
        self.temperature_triple = state.Ttriple()
        self.temperature_critical = state.T_critical()
        self.pressure_critical = state.p_critical()
        state.update(CoolProp.QT_INPUTS, 0.0, self.temperature_triple)
        self.pressure_triple = state.p()

        t_low = self.temperature_triple
        if self.pressure_triple < TABLE_MIN_PRESSURE:
            state.update(CoolProp.PQ_INPUTS, TABLE_MIN_PRESSURE, 0.0)
            t_low = state.T()
        # Stop short of the critical point where saturation properties turn
        # singular (infinite slopes) and any spline loses accuracy.
        t_high = self.temperature_critical * (1.0 - 0.004)
        gap_low = self.temperature_critical - t_low
        gap_high = self.temperature_critical - t_high
        temps = self.temperature_critical - np.geomspace(gap_low, gap_high, nodes)
        temps[0], temps[-1] = t_low, t_high

        values = np.array([_coolprop_row(state, t) for t in temps])
        self._fit(temps, values)

    @classmethod
    def from_values(
        cls,
        cargo: CargoInfo,
        temperatures: np.ndarray,
        values: np.ndarray,
        *,
        molar_mass: float,
        temperature_critical: float,
        pressure_critical: float,
        temperature_triple: float,
        pressure_triple: float,
    ) -> SaturationTable:
        """A table from given rows (columns as :meth:`raw`), e.g. a mixture's bubble curve."""
        self = cls.__new__(cls)
        self.cargo = cargo
        self.molar_mass = molar_mass
        self.temperature_critical = temperature_critical
        self.pressure_critical = pressure_critical
        self.temperature_triple = temperature_triple
        self.pressure_triple = pressure_triple
        self._fit(np.asarray(temperatures, dtype=float), np.asarray(values, dtype=float))
        return self

    def _fit(self, temps: np.ndarray, values: np.ndarray) -> None:
        self.temperature_min = float(temps[0])
        self.temperature_max = float(temps[-1])
        self.pressure_min = float(math.exp(values[0, 0]))
        self.pressure_max = float(math.exp(values[-1, 0]))

        spline = CubicSpline(temps, values, axis=0, bc_type="not-a-knot")
        self._nodes = temps.tolist()
        self._node_array = temps
        # spline.c has shape (4, n-1, k); store per interval as (n-1, 4, k).
        coef = np.transpose(spline.c, (1, 0, 2))
        self._coef_array = np.ascontiguousarray(coef)
        # Plain Python lists: for one temperature at a time, list arithmetic
        # beats numpy's per-call overhead several times over.
        self._coef = [tuple(map(tuple, c.tolist())) for c in coef]
        self._spline = spline
        # Inverse: temperature against ln p (monotone, smooth).
        self._t_of_lnp = CubicSpline(values[:, 0], temps)

    # -- fast scalar access -------------------------------------------------
    def _interval(self, temperature: float) -> tuple[int, float]:
        i = bisect.bisect_right(self._nodes, temperature) - 1
        if i < 0:
            i = 0
        elif i > len(self._nodes) - 2:
            i = len(self._nodes) - 2
        return i, temperature - self._nodes[i]

    def raw(self, temperature: float) -> tuple[list[float], list[float]]:
        """Splined columns and their temperature derivatives at one temperature.

        Columns are ``ln p, ln rho_v, rho_l, h_l, h_v, u_l, u_v``; mainly for
        the tank models, which need both values and slopes.
        """
        i, dt = self._interval(temperature)
        c0, c1, c2, c3 = self._coef[i]
        value = [((a * dt + b) * dt + c) * dt + d for a, b, c, d in zip(c0, c1, c2, c3)]
        slope = [(3.0 * a * dt + 2.0 * b) * dt + c for a, b, c in zip(c0, c1, c2)]
        return value, slope

    def raw_many(self, temperature: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Vectorised :meth:`raw`: arrays of shape (columns, n) for n temperatures."""
        temperature = np.asarray(temperature, dtype=float)
        i = np.clip(
            np.searchsorted(self._node_array, temperature, side="right") - 1,
            0,
            len(self._nodes) - 2,
        )
        dt = (temperature - self._node_array[i])[:, None]
        c = self._coef_array[i]
        value = ((c[:, 0] * dt + c[:, 1]) * dt + c[:, 2]) * dt + c[:, 3]
        slope = (3.0 * c[:, 0] * dt + 2.0 * c[:, 1]) * dt + c[:, 2]
        return value.T, slope.T

    def at(self, temperature: float) -> SaturationPoint:
        """Saturation properties at a temperature [K]."""
        v, _ = self.raw(temperature)
        return SaturationPoint(
            temperature=float(temperature),
            pressure=math.exp(v[0]),
            rho_liquid=float(v[2]),
            rho_vapour=math.exp(v[1]),
            h_liquid=float(v[3]),
            h_vapour=float(v[4]),
            u_liquid=float(v[5]),
            u_vapour=float(v[6]),
        )

    def pressure(self, temperature: float) -> float:
        """Saturation (vapour) pressure at a temperature [Pa]."""
        i, dt = self._interval(temperature)
        c0, c1, c2, c3 = self._coef[i]
        return math.exp(((c0[0] * dt + c1[0]) * dt + c2[0]) * dt + c3[0])

    def temperature(self, pressure: float) -> float:
        """Saturation temperature at a pressure [Pa] -> [K].

        Starts from a spline of T against ln p and polishes with two Newton
        steps on the forward spline, so it is the exact inverse of
        :meth:`pressure` to round-off.
        """
        target = math.log(pressure)
        temp = float(self._t_of_lnp(target))
        for _ in range(2):
            i, dt = self._interval(temp)
            c0, c1, c2, c3 = (col[0] for col in self._coef[i])
            lnp = ((c0 * dt + c1) * dt + c2) * dt + c3
            dlnp = (3.0 * c0 * dt + 2.0 * c1) * dt + c2
            temp -= (lnp - target) / dlnp
        return temp

    # -- vectorised access (outputs, plotting) -----------------------------
    def columns(self, temperature) -> dict[str, np.ndarray]:
        """All saturation properties for an array of temperatures [K]."""
        v = self._spline(np.asarray(temperature, dtype=float))
        return {
            "pressure": np.exp(v[..., 0]),
            "rho_vapour": np.exp(v[..., 1]),
            "rho_liquid": v[..., 2],
            "h_liquid": v[..., 3],
            "h_vapour": v[..., 4],
            "u_liquid": v[..., 5],
            "u_vapour": v[..., 6],
        }

    def contains_temperature(self, temperature: float) -> bool:
        """True if the temperature lies within the table [K]."""
        return self.temperature_min <= temperature <= self.temperature_max

    def contains_pressure(self, pressure: float) -> bool:
        """True if the saturation pressure lies within the table [Pa]."""
        return self.pressure_min <= pressure <= self.pressure_max


def _coolprop_row(state, temperature: float) -> list[float]:
    """Direct CoolProp saturation properties, in the table's column order."""
    import CoolProp

    state.update(CoolProp.QT_INPUTS, 0.0, temperature)
    p = state.p()
    rho_l, h_l, u_l = state.rhomass(), state.hmass(), state.umass()
    state.update(CoolProp.QT_INPUTS, 1.0, temperature)
    rho_v, h_v, u_v = state.rhomass(), state.hmass(), state.umass()
    return [math.log(p), math.log(rho_v), rho_l, h_l, h_v, u_l, u_v]


def coolprop_saturation(name: str, temperature: float) -> SaturationPoint:
    """Saturation properties straight from CoolProp, no table [K] -> SI.

    Slow compared with :meth:`SaturationTable.at`; for checks and references.
    """
    row = _coolprop_row(abstract_state(cargo_info(name).coolprop_name), temperature)
    return SaturationPoint(temperature, math.exp(row[0]), row[2], math.exp(row[1]), *row[3:])


@functools.cache
def saturation_table(name: str) -> SaturationTable:
    """The (cached) saturation table of a catalogue cargo."""
    return SaturationTable(cargo_info(name))


def catalogue_rows() -> list[dict]:
    """One row per cargo: normal boiling, critical and triple points (SI).

    ``normal_boiling_point`` is None where the cargo has no liquid at one
    atmosphere (carbon dioxide sublimes).
    """
    import CoolProp

    from .units import P_ATM

    rows = []
    for info in CATALOGUE.values():
        state = abstract_state(info.coolprop_name)
        state.update(CoolProp.QT_INPUTS, 0.0, state.Ttriple())
        p_triple = state.p()
        nbp = None
        if p_triple < P_ATM:
            state.update(CoolProp.PQ_INPUTS, P_ATM, 0.0)
            nbp = state.T()
            rho_l = state.rhomass()
        rows.append(
            {
                "name": info.name,
                "label": info.label,
                "formula": info.formula,
                "molar_mass": state.molar_mass(),
                "normal_boiling_point": nbp,
                "liquid_density_at_nbp": rho_l if nbp is not None else None,
                "critical_temperature": state.T_critical(),
                "critical_pressure": state.p_critical(),
                "triple_temperature": state.Ttriple(),
                "triple_pressure": p_triple,
                "note": info.note,
            }
        )
    return rows

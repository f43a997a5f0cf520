"""Calorific value, relative density and Wobbe index of a gas from its composition.

This module follows the calculation method of ISO 6976 (natural gas --
calculation of calorific values, density, relative density and Wobbe indices
from composition), 2016 edition:

* molar gross calorific value of the mixture, :math:`H_s = \\sum_j x_j H_{s,j}(t_1)`;
* molar net calorific value, :math:`H_i = H_s - \\sum_j x_j (b_j/2) L^\\circ(t_1)`,
  where :math:`b_j` is the number of hydrogen atoms in a molecule of component j
  (so :math:`b_j/2` moles of water are formed) and :math:`L^\\circ(t_1)` is the
  standard enthalpy of vaporisation of water at the combustion reference
  temperature :math:`t_1`;
* mass basis, :math:`\\hat H = H / M` with :math:`M = \\sum_j x_j M_j`;
* ideal-gas volume basis at the metering reference conditions
  :math:`(t_2, p_2)`, :math:`\\tilde H^\\circ = H\\, p_2 / (R\\, T_2)`, and real-gas
  volume basis :math:`\\tilde H = \\tilde H^\\circ / Z`, with the compression factor
  from the summation-factor method :math:`Z = 1 - (p_2/p_0) (\\sum_j x_j s_j)^2`
  (:math:`p_0` = 101.325 kPa);
* relative density, ideal :math:`G^\\circ = M / M_{air}` and real
  :math:`G = G^\\circ Z_{air} / Z`;
* Wobbe index :math:`W = \\tilde H / \\sqrt{G}` (gross or net, ideal or real).

All inputs and outputs are SI (J/mol, J/kg, J/m^3, K, Pa). Trade units
(MJ/m^3, MMBtu) are converted at the edges; :func:`joules_to_mmbtu` and
:func:`mmbtu_per_tonne` help there.

Where the numbers come from
---------------------------
**The tables below were typed in from memory, not read from the standard**
(the standard cannot be reached from this workplace). They are the values the
author recalls from ISO 6976:2016, Tables 2 and 3; for ethane to isopentane the
2016 and 1995 editions agree at 25 degC to the author's recollection, and the
methane row is the 2016 one (the 1995 edition gave 890.63 kJ/mol at 25 degC).
The tests check every recalled number against an independent route:

* the temperature columns of the calorific values against Kirchhoff's law with
  CoolProp ideal-gas heat capacities and IAPWS-95 liquid water;
* the 25 degC column against CODATA formation enthalpies;
* the water latent heats against IAPWS-95 (CoolProp);
* the summation factors against CoolProp second virial coefficients;
* air's compression factor against CoolProp's pseudo-pure air.

Spot check (2026-12-02): a third-party transcription of the 2016 tables
found in public code (not the standard itself, so not a source) agrees with
every gross value here within 0.02 kJ/mol (2e-5 relative; e.g. ethane at
20 degC 1561.42 there, 1561.41 here) and with every summation factor to the
four decimals it carries, except nitrogen at 0 degC (0.0214 there, 0.0219
here) and 15.55 degC (0.0169 there, 0.0168 here). The values here are left
as recalled; at the 15 degC metering conditions the tool uses, nitrogen's
factor agrees.

Hydrogen and ammonia calorific values are also recalled (they were in the
1995 table). Their summation factors are **not** ISO values: they were computed
with CoolProp 8.0.0 (HEOS) second virial coefficients, :math:`s = \\mathrm{sign}(-B)
\\sqrt{|B| p_0 / (R T)}`, and are marked as such.

References
----------
.. [1] ISO 6976:2016, Natural gas -- Calculation of calorific values, density,
   relative density and Wobbe indices from composition. International
   Organization for Standardization, Geneva (third edition). Values recalled
   from memory, see above.
.. [2] ISO 6976:1995 (second edition), same title; the edition the hydrogen and
   ammonia calorific values are recalled from.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

#: Molar gas constant used by ISO 6976:2016 (CODATA 2010 value) [J/(mol K)].
#: From memory.
GAS_CONSTANT_ISO6976 = 8.3144621

#: Reference pressure of the summation-factor tables, p0 [Pa].
SUMMATION_REFERENCE_PRESSURE = 101_325.0

#: Joules in one million British thermal units (international table Btu,
#: 1 Btu = 1055.05585262 J, rounded as the trade rounds it: 1 MMBtu =
#: 1.055056 GJ). Definition; common practice, no source needed beyond it.
J_PER_MMBTU = 1.055056e9

#: IUPAC standard atomic weights as used for the ISO 6976:2016 molar masses
#: [g/mol]. From memory (IUPAC 2007 conventional values).
ATOMIC_WEIGHT = {"C": 12.0107, "H": 1.00794, "N": 14.0067, "O": 15.9994}

#: Molar mass of dry air used by ISO 6976:2016 [kg/mol]. From memory.
MOLAR_MASS_AIR = 28.96546e-3

#: Allowed combustion reference temperatures t1 [degC], in the column order
#: of the calorific-value table.
COMBUSTION_TEMPERATURES_C = (25.0, 20.0, 15.55, 15.0, 0.0)

#: Allowed metering reference temperatures t2 [degC], in the column order of
#: the summation-factor table.
METERING_TEMPERATURES_C = (0.0, 15.0, 15.55, 20.0)

# ISO 6976:2016, Table 3: molar gross calorific value of each ideal-gas
# component at the combustion reference temperatures [kJ/mol], together with
# the atoms in one molecule. RECALLED FROM MEMORY, not read from the standard.
# Notes per row:
# - methane: the 2016 values (1995: 890.63 at 25 degC).
# - propane at 0 degC: recollection wavers between 2224.01 and 2224.03;
#   2224.03 kept (Kirchhoff's law, see tests, gives 2224.031).
# - hydrogen, ammonia: recalled from the 1995 edition; the 15.55 degC column
#   for them is recalled less surely than the others.
ISO6976_2016_TABLE3_GROSS_MOLAR = """\
name,           C, H, N,  25,       20,       15.55,    15,       0
methane,        1, 4, 0,  890.58,   891.05,   891.46,   891.51,   892.92
ethane,         2, 6, 0,  1560.69,  1561.41,  1562.06,  1562.14,  1564.35
propane,        3, 8, 0,  2219.17,  2220.13,  2221.00,  2221.10,  2224.03
n-butane,       4, 10, 0, 2877.40,  2878.57,  2879.63,  2879.76,  2883.35
isobutane,      4, 10, 0, 2868.20,  2869.38,  2870.45,  2870.58,  2874.20
n-pentane,      5, 12, 0, 3535.77,  3537.17,  3538.44,  3538.60,  3542.89
isopentane,     5, 12, 0, 3528.83,  3530.24,  3531.52,  3531.68,  3536.01
nitrogen,       0, 0, 2,  0,        0,        0,        0,        0
carbon-dioxide, 1, 0, 0,  0,        0,        0,        0,        0
hydrogen,       0, 2, 0,  285.83,   285.99,   286.13,   286.15,   286.63
ammonia,        0, 3, 1,  382.81,   383.16,   383.47,   383.51,   384.57
"""

# Summation factors s_j at the metering reference temperatures and
# p0 = 101.325 kPa [-]. Rows methane..carbon-dioxide: ISO 6976:2016, Table 2,
# RECALLED FROM MEMORY (the nitrogen row is the one recalled least surely).
# Rows hydrogen and ammonia: NOT ISO VALUES -- computed with CoolProp 8.0.0
# (HEOS) second virial coefficients, s = sign(-B) sqrt(|B| p0 / (R T)); the
# negative sign for hydrogen (B > 0) lowers the mixture's (sum x s)^2 as a
# repulsive gas should.
ISO6976_2016_TABLE2_SUMMATION_FACTORS = """\
name,           0,        15,       15.55,    20
methane,        0.04886,  0.04452,  0.04437,  0.04317
ethane,         0.0997,   0.0919,   0.0916,   0.0895
propane,        0.1465,   0.1344,   0.1340,   0.1308
n-butane,       0.2022,   0.1840,   0.1834,   0.1785
isobutane,      0.1885,   0.1722,   0.1717,   0.1673
n-pentane,      0.2586,   0.2361,   0.2354,   0.2295
isopentane,     0.2458,   0.2251,   0.2244,   0.2189
nitrogen,       0.0219,   0.0170,   0.0168,   0.0155
carbon-dioxide, 0.0821,   0.0752,   0.0749,   0.0730
hydrogen,       -0.02497, -0.02462, -0.02461, -0.02450
ammonia,        0.12222,  0.10935,  0.10892,  0.10560
"""

#: Standard enthalpy of vaporisation of water L0(t1) [kJ/mol], ideal-gas
#: water minus liquid water, at the combustion reference temperatures.
#: ISO 6976 values recalled from memory, except 15.55 degC, which is linearly
#: interpolated between the recalled 15 and 20 degC values (not recalled).
WATER_VAPORISATION_ENTHALPY_KJ_MOL = {
    25.0: 44.013,
    20.0: 44.222,
    15.55: 44.431 + (15.55 - 15.0) / 5.0 * (44.222 - 44.431),
    15.0: 44.431,
    0.0: 45.064,
}

#: Compression factor of dry air at the metering reference temperatures and
#: 101.325 kPa [-]. ISO 6976:2016, recalled from memory.
AIR_COMPRESSION_FACTOR = {0.0: 0.999419, 15.0: 0.999595, 15.55: 0.999601, 20.0: 0.999645}


def _parse_table(text: str) -> tuple[list[str], dict[str, list[str]]]:
    lines = [line for line in text.strip().splitlines() if line.strip()]
    header = [cell.strip() for cell in lines[0].split(",")]
    rows = {}
    for line in lines[1:]:
        cells = [cell.strip() for cell in line.split(",")]
        rows[cells[0]] = cells[1:]
    return header[1:], rows


@dataclass(frozen=True)
class ComponentData:
    """One component's ISO 6976 data (SI).

    Attributes
    ----------
    name : str
        Component name, as in :data:`sim.cargo.CATALOGUE` where it is there.
    carbon, hydrogen, nitrogen : int
        Atoms of each element in one molecule [-].
    molar_mass : float
        From the atomic weights [kg/mol].
    gross_molar : dict[float, float]
        Molar gross calorific value by combustion reference temperature in
        degC [J/mol].
    summation_factor : dict[float, float]
        Summation factor by metering reference temperature in degC [-].
    """

    name: str
    carbon: int
    hydrogen: int
    nitrogen: int
    molar_mass: float
    gross_molar: dict
    summation_factor: dict

    @property
    def water_formed(self) -> float:
        """Moles of water formed by burning one mole of the component [-]."""
        return self.hydrogen / 2.0


def _build_components() -> dict[str, ComponentData]:
    gross_cols, gross_rows = _parse_table(ISO6976_2016_TABLE3_GROSS_MOLAR)
    temps_gross = [float(c) for c in gross_cols[3:]]
    sum_cols, sum_rows = _parse_table(ISO6976_2016_TABLE2_SUMMATION_FACTORS)
    temps_sum = [float(c) for c in sum_cols]
    out = {}
    for name, cells in gross_rows.items():
        c, h, n = (int(v) for v in cells[:3])
        # oxygen appears only in carbon dioxide among these components
        o = 2 if name == "carbon-dioxide" else 0
        molar_mass = 1e-3 * (
            c * ATOMIC_WEIGHT["C"]
            + h * ATOMIC_WEIGHT["H"]
            + n * ATOMIC_WEIGHT["N"]
            + o * ATOMIC_WEIGHT["O"]
        )
        gross = {t: 1e3 * float(v) for t, v in zip(temps_gross, cells[3:], strict=True)}
        sfac = {t: float(v) for t, v in zip(temps_sum, sum_rows[name], strict=True)}
        out[name] = ComponentData(name, c, h, n, molar_mass, gross, sfac)
    return out


#: Component data by name.
COMPONENTS: dict[str, ComponentData] = _build_components()


@dataclass(frozen=True)
class CalorificValues:
    """Calorific values and related properties of one gas mixture (all SI).

    Attributes
    ----------
    combustion_temperature : float
        Combustion reference temperature t1 [K].
    metering_temperature : float
        Metering reference temperature t2 [K].
    metering_pressure : float
        Metering reference pressure p2 [Pa].
    molar_mass : float
        Mixture molar mass [kg/mol].
    compression_factor : float
        Z of the mixture at (t2, p2), summation-factor method [-].
    gross_molar, net_molar : float
        Molar calorific values [J/mol].
    gross_mass, net_mass : float
        Mass-basis calorific values [J/kg].
    gross_volume_ideal, net_volume_ideal : float
        Ideal-gas volume basis at (t2, p2) [J/m^3].
    gross_volume, net_volume : float
        Real-gas volume basis at (t2, p2) [J/m^3].
    relative_density_ideal, relative_density : float
        Ideal and real relative density against dry air [-].
    density_ideal, density : float
        Ideal and real gas density at (t2, p2) [kg/m^3].
    wobbe_gross, wobbe_net : float
        Real-gas Wobbe indices [J/m^3].
    wobbe_gross_ideal, wobbe_net_ideal : float
        Ideal-gas Wobbe indices [J/m^3].
    """

    combustion_temperature: float
    metering_temperature: float
    metering_pressure: float
    molar_mass: float
    compression_factor: float
    gross_molar: float
    net_molar: float
    gross_mass: float
    net_mass: float
    gross_volume_ideal: float
    net_volume_ideal: float
    gross_volume: float
    net_volume: float
    relative_density_ideal: float
    relative_density: float
    density_ideal: float
    density: float
    wobbe_gross: float
    wobbe_net: float
    wobbe_gross_ideal: float
    wobbe_net_ideal: float


def _pick_column(temperature: float, allowed_c: tuple[float, ...], what: str) -> float:
    """Match a temperature [K] to one of the tabulated columns [degC]."""
    for t_c in allowed_c:
        if abs(temperature - (273.15 + t_c)) < 1e-6:
            return t_c
    allowed = ", ".join(f"{273.15 + t:.2f} K ({t:g} degC)" for t in allowed_c)
    raise ValueError(f"{what} {temperature!r} K is not tabulated; allowed: {allowed}")


def _check_fractions(mole_fractions: Mapping[str, float]) -> dict[str, float]:
    unknown = [name for name in mole_fractions if name not in COMPONENTS]
    if unknown:
        raise ValueError(
            f"unknown component(s) {', '.join(map(repr, unknown))}; "
            f"allowed: {', '.join(COMPONENTS)}"
        )
    bad = {k: v for k, v in mole_fractions.items() if not (v >= 0.0 and math.isfinite(v))}
    if bad:
        raise ValueError(f"mole fractions must be finite and >= 0; got {bad}")
    total = sum(mole_fractions.values())
    if abs(total - 1.0) > 1e-6:
        listed = ", ".join(f"{k}={v:g}" for k, v in mole_fractions.items())
        raise ValueError(f"mole fractions must sum to 1 within 1e-6; got {total:.9g} ({listed})")
    return {k: v / total for k, v in mole_fractions.items()}


def compression_factor(
    mole_fractions: Mapping[str, float],
    metering_temperature: float = 288.15,
    metering_pressure: float = 101_325.0,
) -> float:
    """Compression factor by the ISO 6976 summation-factor method [-].

    Parameters
    ----------
    mole_fractions : mapping of str to float
        Component name -> mole fraction [-]; must sum to 1 within 1e-6.
    metering_temperature : float
        Metering reference temperature, one of 273.15, 288.15, 288.70,
        293.15 [K].
    metering_pressure : float
        Metering reference pressure [Pa]. The method is meant for pressures
        near 101.325 kPa.

    Returns
    -------
    float
        :math:`Z = 1 - (p_2/p_0)(\\sum_j x_j s_j)^2` [-].
    """
    x = _check_fractions(mole_fractions)
    t_c = _pick_column(metering_temperature, METERING_TEMPERATURES_C, "metering temperature")
    s_mix = sum(xi * COMPONENTS[name].summation_factor[t_c] for name, xi in x.items())
    return 1.0 - metering_pressure / SUMMATION_REFERENCE_PRESSURE * s_mix * s_mix


def calorific_values(
    mole_fractions: Mapping[str, float],
    combustion_temperature: float = 288.15,
    metering_temperature: float = 288.15,
    metering_pressure: float = 101_325.0,
) -> CalorificValues:
    """Calorific values, relative density and Wobbe index of a gas (ISO 6976).

    Parameters
    ----------
    mole_fractions : mapping of str to float
        Component name -> mole fraction [-]; names from :data:`COMPONENTS`
        (methane, ethane, propane, n-butane, isobutane, n-pentane,
        isopentane, nitrogen, carbon-dioxide, hydrogen, ammonia). Must sum to
        1 within 1e-6 (then renormalised exactly).
    combustion_temperature : float
        Combustion reference temperature t1, one of 298.15, 293.15, 288.70,
        288.15, 273.15 [K].
    metering_temperature : float
        Metering reference temperature t2, one of 293.15, 288.70, 288.15,
        273.15 [K].
    metering_pressure : float
        Metering reference pressure p2 [Pa].

    Returns
    -------
    CalorificValues

    Raises
    ------
    ValueError
        Unknown component, bad fractions, or a reference temperature that
        the tables do not carry.

    Notes
    -----
    Common reference pairs t1/t2: 15/15 degC (Europe, ISO), 25/0 degC (the
    "normal cubic metre" of much LNG trade), 15.55/15.55 degC (60 degF).

    Examples
    --------
    Pure methane, 25 degC combustion: the molar value is the table entry and
    the mass value about 55.5 MJ/kg.

    >>> cv = calorific_values({"methane": 1.0}, 298.15, 273.15)
    >>> round(cv.gross_molar / 1e3, 2), round(cv.gross_mass / 1e6, 2)
    (890.58, 55.51)
    """
    x = _check_fractions(mole_fractions)
    t1 = _pick_column(combustion_temperature, COMBUSTION_TEMPERATURES_C, "combustion temperature")
    t2 = _pick_column(metering_temperature, METERING_TEMPERATURES_C, "metering temperature")
    latent = 1e3 * WATER_VAPORISATION_ENTHALPY_KJ_MOL[t1]

    gross = sum(xi * COMPONENTS[n].gross_molar[t1] for n, xi in x.items())
    water = sum(xi * COMPONENTS[n].water_formed for n, xi in x.items())
    net = gross - water * latent
    molar_mass = sum(xi * COMPONENTS[n].molar_mass for n, xi in x.items())
    z = compression_factor(x, metering_temperature, metering_pressure)

    molar_volume_ideal = GAS_CONSTANT_ISO6976 * metering_temperature / metering_pressure
    rel_ideal = molar_mass / MOLAR_MASS_AIR
    rel_real = rel_ideal * AIR_COMPRESSION_FACTOR[t2] / z
    gv_ideal = gross / molar_volume_ideal
    nv_ideal = net / molar_volume_ideal
    return CalorificValues(
        combustion_temperature=float(combustion_temperature),
        metering_temperature=float(metering_temperature),
        metering_pressure=float(metering_pressure),
        molar_mass=molar_mass,
        compression_factor=z,
        gross_molar=gross,
        net_molar=net,
        gross_mass=gross / molar_mass,
        net_mass=net / molar_mass,
        gross_volume_ideal=gv_ideal,
        net_volume_ideal=nv_ideal,
        gross_volume=gv_ideal / z,
        net_volume=nv_ideal / z,
        relative_density_ideal=rel_ideal,
        relative_density=rel_real,
        density_ideal=molar_mass / molar_volume_ideal,
        density=molar_mass / (molar_volume_ideal * z),
        wobbe_gross=gv_ideal / z / math.sqrt(rel_real),
        wobbe_net=nv_ideal / z / math.sqrt(rel_real),
        wobbe_gross_ideal=gv_ideal / math.sqrt(rel_ideal),
        wobbe_net_ideal=nv_ideal / math.sqrt(rel_ideal),
    )


def joules_to_mmbtu(energy: float) -> float:
    """Energy in joules to million British thermal units [J] -> [MMBtu].

    1 MMBtu = 1.055056 GJ (international table Btu; definition, common
    practice).
    """
    return energy / J_PER_MMBTU


def mmbtu_to_joules(energy: float) -> float:
    """Energy in MMBtu to joules [MMBtu] -> [J]."""
    return energy * J_PER_MMBTU


def mmbtu_per_tonne(mass_calorific_value: float) -> float:
    """A mass-basis calorific value as MMBtu per metric tonne [J/kg] -> [MMBtu/t].

    Examples
    --------
    >>> round(mmbtu_per_tonne(55.5e6), 2)
    52.6
    """
    return mass_calorific_value * 1000.0 / J_PER_MMBTU

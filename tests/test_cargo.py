"""Cargo properties: catalogue facts and the speed tables against CoolProp."""

import math

import numpy as np
import pytest

from sim.cargo import CATALOGUE, catalogue_rows, coolprop_saturation, saturation_table
from sim.units import P_ATM, T_ZERO_C

ROWS = {r["name"]: r for r in catalogue_rows()}


@pytest.mark.parametrize(
    "name, nbp_k, tol",
    [
        # NIST Chemistry WebBook values, from memory
        ("methane", 111.667, 0.01),
        ("propane", 231.036, 0.01),
        ("n-butane", 272.660, 0.01),
        ("ammonia", 239.834, 0.01),
        ("parahydrogen", 20.271, 0.01),
        ("nitrogen", 77.355, 0.01),
    ],
)
def test_normal_boiling_points(name, nbp_k, tol):
    assert ROWS[name]["normal_boiling_point"] == pytest.approx(nbp_k, abs=tol)


def test_trade_facts():
    # Common practice, no source: methane boils at about -161.5 degC and
    # n-butane at about -0.5 degC at atmospheric pressure.
    assert ROWS["methane"]["normal_boiling_point"] - T_ZERO_C == pytest.approx(-161.5, abs=0.1)
    assert ROWS["n-butane"]["normal_boiling_point"] - T_ZERO_C == pytest.approx(-0.5, abs=0.1)
    # Common practice, no source: methane's critical temperature about
    # -82.5 degC; n-butane's 152-153 degC.
    assert ROWS["methane"]["critical_temperature"] - T_ZERO_C == pytest.approx(-82.5, abs=0.2)
    assert 152.0 - 0.1 <= ROWS["n-butane"]["critical_temperature"] - T_ZERO_C <= 153.0
    # Common practice, no source: n-butane's vapour pressure at room
    # temperature (20 degC) is about 2 bar.
    assert saturation_table("n-butane").pressure(T_ZERO_C + 20.0) / 1e5 == pytest.approx(
        2.0, abs=0.15
    )
    # Common practice, no source: liquid LNG is roughly 600 times denser than
    # the gas at ambient conditions (methane gas at 15 degC, 1 atm, ideal gas).
    rho_gas = P_ATM * ROWS["methane"]["molar_mass"] / (8.314462618 * (T_ZERO_C + 15.0))
    assert ROWS["methane"]["liquid_density_at_nbp"] / rho_gas == pytest.approx(600, rel=0.1)


def test_critical_and_triple_points():
    # NIST values, from memory: methane Tc 190.564 K, pc 4.5992 MPa;
    # CO2 triple point 216.592 K / 0.51796 MPa.
    assert ROWS["methane"]["critical_temperature"] == pytest.approx(190.564, abs=0.01)
    assert ROWS["methane"]["critical_pressure"] == pytest.approx(4.5992e6, rel=1e-4)
    assert ROWS["carbon-dioxide"]["triple_temperature"] == pytest.approx(216.592, abs=0.01)
    assert ROWS["carbon-dioxide"]["triple_pressure"] == pytest.approx(0.51796e6, rel=1e-3)
    # CO2 has no liquid at one atmosphere: it sublimes.
    assert ROWS["carbon-dioxide"]["normal_boiling_point"] is None


@pytest.mark.parametrize("name", list(CATALOGUE))
def test_table_matches_coolprop_between_nodes(name):
    """Spline table within 0.1 % of direct CoolProp (HEOS) calls, midway between nodes."""
    table = saturation_table(name)
    nodes = np.array(table._nodes)
    # every 7th interval midpoint, plus the two hardest ends
    mids = list(0.5 * (nodes[1:] + nodes[:-1]))
    picks = mids[::7] + [mids[0], mids[-1]]
    for temp in picks:
        ref = coolprop_saturation(name, temp)
        got = table.at(temp)
        hfg = ref.latent_heat
        assert got.pressure == pytest.approx(ref.pressure, rel=1e-3)
        assert got.rho_liquid == pytest.approx(ref.rho_liquid, rel=1e-3)
        assert got.rho_vapour == pytest.approx(ref.rho_vapour, rel=1e-3)
        assert got.latent_heat == pytest.approx(hfg, rel=1e-3)
        # enthalpies/energies have an arbitrary zero: compare against h_fg
        for attr in ("h_liquid", "h_vapour", "u_liquid", "u_vapour"):
            assert abs(getattr(got, attr) - getattr(ref, attr)) <= 1e-3 * hfg


def test_saturation_temperature_inverts_pressure():
    table = saturation_table("propane")
    for p in (1.2e5, 5e5, 18e5):
        assert table.pressure(table.temperature(p)) == pytest.approx(p, rel=1e-12)


def test_vectorised_access_matches_scalar():
    table = saturation_table("ammonia")
    temps = np.linspace(table.temperature_min, table.temperature_max, 13)
    values, slopes = table.raw_many(temps)
    for j, temp in enumerate(temps):
        v, s = table.raw(temp)
        assert np.allclose(values[:, j], v, rtol=1e-12, atol=0)
        assert np.allclose(slopes[:, j], s, rtol=1e-9, atol=1e-12)
    cols = table.columns(temps)
    assert np.allclose(cols["pressure"], [math.exp(v) for v in values[0]], rtol=1e-12)

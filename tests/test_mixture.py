"""Mixture VLE: bubble/dew points, flash, K-value fast path, closed tank.

References used here:

* CoolProp 8.0.0 (HEOS) called directly in the tests, with states the tests
  build themselves, is the reference for bubble points and flashes.
* ``sim.cargo.saturation_table`` (pure-fluid HEOS) for one-component mixtures.
* ``shared/NOTES.md`` (measured with CoolProp HEOS on the project machines)
  for the incipient vapour of LNG with 2 % nitrogen (~47 % N2) and the
  ~11 % excess of Peng-Robinson's LNG liquid density.
* Published VLE data sets for these systems were identified through the
  search tool (propane + n-butane: Kayukawa, Fujii, Higashi, J. Chem. Eng.
  Data 50 (2005) 579-582; nitrogen + methane, 110-125 K: Han et al., J. Chem.
  Eng. Data 2012), but their data tables could not be read from here, so no
  published VLE point is asserted.

CoolProp mixture flashes cost milliseconds (a PT flash tens of ms), so every
test uses few points.
"""

import math

import numpy as np
import pytest

import sim.mixture as mx
from sim.cargo import saturation_table
from sim.mixture import (
    BubbleCurveKValues,
    EquilibriumError,
    Mixture,
    bubble_point_pressure,
    bubble_point_temperature,
    closed_tank_state,
    closed_tank_state_at_temperature,
    coolprop_flash,
    dew_point_pressure,
    dew_point_temperature,
    first_vapour,
    flash,
    rachford_rice,
)
from sim.units import P_ATM, T_ZERO_C

# A typical lean LNG, 90/6/2/1/1 % CH4/C2/C3/nC4/N2 (invented, typical).
LNG = {"methane": 0.90, "ethane": 0.06, "propane": 0.02, "n-butane": 0.01, "nitrogen": 0.01}
# An LNG with 2 % nitrogen (invented).
LNG_N2 = {
    "methane": 0.89,
    "ethane": 0.05,
    "propane": 0.02,
    "n-butane": 0.01,
    "isobutane": 0.01,
    "nitrogen": 0.02,
}
LPG_50_50 = {"propane": 0.5, "n-butane": 0.5}
COMMERCIAL_PROPANE = {"propane": 0.95, "ethane": 0.05}


def _direct(fractions, backend="HEOS"):
    """A CoolProp state built here, independently of sim.mixture."""
    from CoolProp.CoolProp import AbstractState

    state = AbstractState(backend, "&".join(mx.MIXTURE_COMPONENTS[n] for n in fractions))
    state.set_mole_fractions(list(fractions.values()))
    return state


# -- Mixture validation ---------------------------------------------------------
def test_mixture_validation_messages():
    with pytest.raises(ValueError, match="'butane'.*allowed"):
        Mixture.from_fractions({"methane": 0.5, "butane": 0.5})
    with pytest.raises(ValueError, match=r"sum 0\.98 .*methane=0\.9, ethane=0\.08"):
        Mixture.from_fractions({"methane": 0.9, "ethane": 0.08})
    with pytest.raises(ValueError, match="ethane=-0.1"):
        Mixture.from_fractions({"methane": 1.1, "ethane": -0.1})
    with pytest.raises(ValueError, match="twice"):
        Mixture(("methane", "methane"), (0.5, 0.5))
    with pytest.raises(ValueError, match="2 components but 1"):
        Mixture(("methane", "ethane"), (1.0,))


def test_mixture_accepts_sum_within_tolerance_and_renormalises():
    m = Mixture.from_fractions({"methane": 0.9 + 5e-7, "ethane": 0.1})
    assert math.fsum(m.mole_fractions) == pytest.approx(1.0, abs=1e-15)
    assert m.as_dict()["ethane"] == pytest.approx(0.1, rel=1e-6)
    # molar mass: mole-fraction weighted CoolProp pure molar masses
    assert Mixture.pure("methane").molar_mass == pytest.approx(
        _direct({"methane": 1.0}).molar_mass()
    )


# -- bubble and dew points against CoolProp called directly --------------------------
@pytest.mark.parametrize(
    "fractions, pressure",
    [(LNG, P_ATM), (LPG_50_50, P_ATM), (COMMERCIAL_PROPANE, P_ATM), (LPG_50_50, 5e5)],
)
def test_bubble_temperature_matches_direct_coolprop(fractions, pressure):
    import CoolProp

    got = bubble_point_temperature(fractions, pressure)
    ref = _direct(fractions)
    ref.update(CoolProp.PQ_INPUTS, pressure, 0.0)
    assert got.backend == "HEOS"
    # Same equations, same solver: only wiring (order, units) can differ.
    assert got.temperature == pytest.approx(ref.T(), abs=1e-9)
    assert got.vapour.mole_fractions == pytest.approx(ref.mole_fractions_vapor(), abs=1e-12)
    assert got.liquid.mole_fractions == pytest.approx(list(fractions.values()), abs=1e-12)
    assert got.liquid.molar_density == pytest.approx(ref.rhomolar(), rel=1e-12)


def test_bubble_pressure_matches_direct_coolprop():
    import CoolProp

    for fractions, temp in ((LNG, 115.0), (COMMERCIAL_PROPANE, 288.15)):
        got = bubble_point_pressure(fractions, temp)
        ref = _direct(fractions)
        ref.update(CoolProp.QT_INPUTS, 0.0, temp)
        assert got.pressure == pytest.approx(ref.p(), rel=1e-12)


def test_trade_bubble_points():
    # Common practice, no source: LNG boils at about -160 to -165 degC at one
    # atmosphere (lighter than methane's -161.5 with nitrogen, heavier without).
    lng = bubble_point_temperature(LNG, P_ATM)
    assert -165.0 <= lng.temperature - T_ZERO_C <= -160.0
    # Physical ordering (no source needed): a mixture boils between its
    # components' boiling points, nearer the volatile one's bubble side, and
    # its dew point lies above its bubble point.
    nbp = {n: saturation_table(n).temperature(P_ATM) for n in ("ethane", "propane", "n-butane")}
    lpg_b = bubble_point_temperature(LPG_50_50, P_ATM).temperature
    lpg_d = dew_point_temperature(LPG_50_50, P_ATM).temperature
    assert nbp["propane"] < lpg_b < lpg_d < nbp["n-butane"]
    prop_b = bubble_point_temperature(COMMERCIAL_PROPANE, P_ATM).temperature
    assert nbp["ethane"] < prop_b < nbp["propane"]
    # Common practice, no source: 5 % ethane pulls commercial propane's boiling
    # point a few kelvin below pure propane's -42 degC.
    assert 2.0 < nbp["propane"] - prop_b < 10.0


def test_dew_point_incipient_liquid_is_heavy():
    dew = dew_point_temperature(LPG_50_50, P_ATM)
    assert dew.vapour.mole_fractions == pytest.approx([0.5, 0.5], abs=1e-12)
    assert dew.liquid_fractions()["n-butane"] > 0.5
    # dew pressure at that temperature returns the pressure (inverse pair)
    assert dew_point_pressure(LPG_50_50, dew.temperature).pressure == pytest.approx(P_ATM, rel=1e-6)


@pytest.mark.parametrize("name", ["methane", "propane"])
def test_one_component_mixture_equals_pure_cargo_path(name):
    # sim.cargo tables are within 0.1 % of CoolProp; so must the mixture path be.
    table = saturation_table(name)
    for frac in (0.2, 0.6):
        temp = table.temperature_min + frac * (table.temperature_max - table.temperature_min)
        got = bubble_point_pressure(Mixture.pure(name), temp)
        ref = table.at(temp)
        assert got.pressure == pytest.approx(ref.pressure, rel=1e-3)
        assert got.liquid.density == pytest.approx(ref.rho_liquid, rel=1e-3)
        assert got.vapour.density == pytest.approx(ref.rho_vapour, rel=1e-3)
        hfg = ref.latent_heat
        assert abs(got.liquid.enthalpy - ref.h_liquid) <= 1e-3 * hfg
        assert abs(got.vapour.enthalpy - ref.h_vapour) <= 1e-3 * hfg
        assert abs(got.liquid.internal_energy - ref.u_liquid) <= 1e-3 * hfg
        assert abs(got.vapour.internal_energy - ref.u_vapour) <= 1e-3 * hfg
    nbp = bubble_point_temperature(Mixture.pure(name), P_ATM).temperature
    assert nbp == pytest.approx(table.temperature(P_ATM), rel=1e-3)


def test_first_vapour_of_lng_is_nitrogen_rich():
    y = first_vapour(LNG_N2, 1e5)
    # shared/NOTES.md, CoolProp HEOS: 2 % N2 LNG at 1 bar gives about 47 % N2
    # (53 % CH4) in the first vapour; their LNG's heavier fractions are not
    # stated, hence +-0.03.
    assert y["nitrogen"] == pytest.approx(0.47, abs=0.03)
    assert y["methane"] == pytest.approx(1.0 - y["nitrogen"], abs=1e-3)
    assert math.fsum(y.values()) == pytest.approx(1.0, abs=1e-12)
    # heavier hydrocarbons barely enter the first vapour
    assert y["propane"] < 1e-5 and y["n-butane"] < 1e-7


def test_liquid_density_is_heos_not_cubic():
    heos = bubble_point_temperature(LNG, P_ATM)
    pr = bubble_point_temperature(LNG, P_ATM, backends=("PR",))
    # Common practice, no source: LNG liquid 430-480 kg/m3.
    assert 430.0 < heos.liquid.density < 480.0
    # shared/NOTES.md: PR saturated-liquid density of LNG ~11 % high.
    assert 1.08 < pr.liquid.density / heos.liquid.density < 1.14
    assert pr.backend == "PR"


# -- fallback to Peng-Robinson ----------------------------------------------------------
def test_heos_missing_binary_pair_falls_back_to_pr():
    # CoolProp 8.0.0 HEOS has no propylene + n-butane departure pair.
    got = bubble_point_temperature({"propylene": 0.5, "n-butane": 0.5}, 3e5)
    assert got.backend == "PR"
    with pytest.raises(EquilibriumError, match="HEOS"):
        bubble_point_temperature({"propylene": 0.5, "n-butane": 0.5}, 3e5, backends=("HEOS",))


def test_forced_heos_failure_uses_pr_with_interaction_parameters(monkeypatch):
    heos = bubble_point_temperature(LNG_N2, 1e5)
    real_state = mx._state

    def failing(backend, names, role):
        if backend == "HEOS":
            raise ValueError("forced failure for the test")
        return real_state(backend, names, role)

    monkeypatch.setattr(mx, "_state", failing)
    pr = bubble_point_temperature(LNG_N2, 1e5)
    assert pr.backend == "PR"
    # PR without k_ij (CoolProp's default 0), built directly here:
    import CoolProp

    bare = _direct(LNG_N2, "PR")
    bare.update(CoolProp.PQ_INPUTS, 1e5, 0.0)
    # the from-memory k_ij must bring PR closer to HEOS than k_ij = 0 does
    assert abs(pr.temperature - heos.temperature) < abs(bare.T() - heos.temperature)
    assert abs(pr.temperature - heos.temperature) < 1.0


def test_all_backends_failing_raises_with_each_message():
    with pytest.raises(EquilibriumError, match="HEOS:.*PR:"):
        # far above the mixture's critical region: no bubble point exists
        bubble_point_temperature(LPG_50_50, 2e7)


# -- Rachford-Rice and the flash ------------------------------------------------------------
def test_rachford_rice_binary_closed_form():
    # Binary: beta = -(z1 (K1-1) + z2 (K2-1)) / ((K1-1)(K2-1)), exact algebra.
    z, k = [0.3, 0.7], [3.0, 0.4]
    beta, x, y = rachford_rice(z, k)
    expected = -(0.3 * 2.0 + 0.7 * -0.6) / (2.0 * -0.6)
    assert beta == pytest.approx(expected, abs=1e-14)
    assert np.allclose((1 - beta) * x + beta * y, z, atol=1e-15, rtol=0)
    assert x.sum() == pytest.approx(1.0, abs=1e-14) and y.sum() == pytest.approx(1.0, abs=1e-14)


def test_rachford_rice_single_phase_edges():
    beta, x, y = rachford_rice([0.5, 0.5], [1.2, 0.7])  # sum zK = 0.95 <= 1: liquid
    assert beta == 0.0 and list(x) == [0.5, 0.5] and y.sum() == pytest.approx(1.0)
    beta, x, y = rachford_rice([0.5, 0.5], [3.0, 1.5])  # sum z/K = 0.5 <= 1: vapour
    assert beta == 1.0 and list(y) == [0.5, 0.5] and x.sum() == pytest.approx(1.0)


def test_rachford_rice_tiny_vapour_fraction():
    # LNG-like K-values, vapour fraction of order 1e-3: mass balance to 1e-15.
    z = [0.9, 0.06, 0.02, 0.01, 0.01]
    k = [0.9, 2e-3, 1e-5, 1e-7, 20.0]
    beta, x, y = rachford_rice(z, k)
    assert 0 < beta < 0.01
    assert np.max(np.abs((1 - beta) * x + beta * y - np.array(z))) < 1e-15
    assert x.sum() == pytest.approx(1.0, abs=1e-13)


@pytest.mark.parametrize("temperature, fraction_of_bubble", [(113.0, 0.98), (120.0, 0.7)])
def test_flash_against_coolprop_pt_flash(temperature, fraction_of_bubble):
    pressure = fraction_of_bubble * bubble_point_pressure(LNG, temperature).pressure
    got = flash(LNG, temperature, pressure)
    ref = coolprop_flash(LNG, temperature, pressure)  # CoolProp HEOS PT flash
    assert got.phase == "two-phase" and got.method == "successive-substitution"
    # both iterate to ~1e-10 in ln K: 1e-7 leaves room for CoolProp's own stop
    assert got.vapour_fraction == pytest.approx(ref.vapour_fraction, abs=1e-7)
    assert got.vapour.mole_fractions == pytest.approx(ref.vapour.mole_fractions, abs=1e-7)
    assert got.liquid.mole_fractions == pytest.approx(ref.liquid.mole_fractions, abs=1e-7)
    assert got.liquid.molar_density == pytest.approx(ref.liquid.molar_density, rel=1e-6)
    # mass balance of the flash
    z = np.array(list(LNG.values()))
    x = np.array(got.liquid.mole_fractions)
    y = np.array(got.vapour.mole_fractions)
    beta = got.vapour_fraction
    assert np.max(np.abs((1 - beta) * x + beta * y - z)) < 1e-10
    assert abs(x.sum() - 1) < 1e-10 and abs(y.sum() - 1) < 1e-10


def test_flash_single_phase_sides():
    liquid = flash(LNG, 112.0, 3e5)  # above the bubble pressure (~1.26 bar)
    assert liquid.phase == "liquid" and liquid.vapour is None and liquid.vapour_fraction == 0
    assert liquid.liquid.density > 400.0
    dew = dew_point_pressure(LPG_50_50, 300.0).pressure
    vapour = flash(LPG_50_50, 300.0, 0.5 * dew)
    assert vapour.phase == "vapour" and vapour.liquid is None and vapour.vapour_fraction == 1
    # a nearly ideal gas at half its dew pressure: Z within a few percent of 1
    z = 0.5 * dew / (vapour.vapour.molar_density * 8.314462618 * 300.0)
    assert 0.9 < z < 1.0


def test_flash_above_the_bubble_curve_region_is_vapour():
    # LNG has no bubble point at 250 K (far above methane's critical 190.6 K,
    # NIST, from memory): CoolProp's own PT flash classifies it.
    got = flash(LNG, 250.0, 1e5)
    assert got.phase == "vapour" and got.method == "coolprop-PT"
    assert got.vapour.mole_fractions == pytest.approx(list(LNG.values()), abs=1e-12)


# -- the fast K-value path ----------------------------------------------------------------
@pytest.fixture(scope="module")
def lng_table():
    return BubbleCurveKValues(LNG, 108.0, 125.0, nodes=9)


def test_k_table_between_nodes_matches_coolprop(lng_table):
    x0 = np.array(list(LNG.values()))
    nodes = lng_table.temperatures
    for temp in (0.5 * (nodes[0] + nodes[1]), 0.5 * (nodes[5] + nodes[6])):
        ref = bubble_point_pressure(LNG, temp)
        p, y = lng_table.bubble_pressure(x0, temp)
        # cubic-spline interpolation error with 9 nodes over 17 K
        assert p == pytest.approx(ref.pressure, rel=1e-5)
        assert y == pytest.approx(ref.vapour.mole_fractions, abs=1e-6)
        props = lng_table.saturated_properties(temp)
        assert props["liquid_molar_density"] == pytest.approx(ref.liquid.molar_density, rel=1e-5)
        assert props["vapour_molar_internal_energy"] == pytest.approx(
            ref.vapour.molar_internal_energy,
            abs=1e-5 * 8000.0,  # ~1e-5 of latent heat
        )


def test_k_table_weathered_liquid_within_stated_tolerance(lng_table):
    """Liquid drifted by the refresh threshold (0.1 %-point of nitrogen lost).

    Stated tolerance: bubble pressure within 0.15 %, incipient vapour within
    0.001 mole fraction of CoolProp HEOS. The frozen K-values miss how
    nitrogen's and methane's activity changes with the liquid's composition,
    an error proportional to the drift.
    """
    x0 = np.array(list(LNG.values()))
    x = x0.copy()
    x[-1] -= 1e-3
    x[:-1] += 1e-3 * x0[:-1] / x0[:-1].sum()
    assert not lng_table.needs_refresh(x, 115.0)
    x_more = x0.copy()
    x_more[-1] -= 1.5e-3
    x_more[0] += 1.5e-3
    assert lng_table.needs_refresh(x_more, 115.0)
    assert lng_table.needs_refresh(x0, 130.0)  # outside the table
    weathered = Mixture(tuple(LNG), tuple(x))
    for temp in (110.0, 123.0):
        ref = bubble_point_pressure(weathered, temp)
        p, y = lng_table.bubble_pressure(x, temp)
        assert p == pytest.approx(ref.pressure, rel=1.5e-3)
        assert y == pytest.approx(ref.vapour.mole_fractions, abs=1e-3)
        # nitrogen lost from the liquid lowers the bubble pressure
        assert p < lng_table.reference_bubble_pressure(temp)


def test_k_table_bubble_temperature_inverts_pressure(lng_table):
    x0 = np.array(list(LNG.values()))
    p, _ = lng_table.bubble_pressure(x0, 116.3)
    temp, _ = lng_table.bubble_temperature(x0, p)
    assert temp == pytest.approx(116.3, abs=1e-8)
    with pytest.raises(ValueError, match="outside the table"):
        lng_table.bubble_temperature(x0, 1e7)


def test_k_table_flash_near_bubble_point(lng_table):
    """Flash 2 % below the bubble pressure against the full HEOS flash.

    Stated tolerance: vapour fraction within 3 % (relative), vapour
    composition within 0.001, liquid within 1e-4 mole fraction. The K-values
    stay those of the feed while the flash strips nitrogen from the liquid.
    """
    x0 = np.array(list(LNG.values()))
    temp = 113.0
    pressure = 0.98 * lng_table.reference_bubble_pressure(temp)
    ref = flash(LNG, temp, pressure)
    beta, x, y = lng_table.flash(x0, temp, pressure)
    assert beta == pytest.approx(ref.vapour_fraction, rel=0.03)
    assert y == pytest.approx(ref.vapour.mole_fractions, abs=1e-3)
    assert x == pytest.approx(ref.liquid.mole_fractions, abs=1e-4)
    assert np.max(np.abs((1 - beta) * x + beta * y - x0)) < 1e-12


# -- closed (rigid) tank -----------------------------------------------------------------------
def _check_tank_balances(state, moles):
    got = state.component_moles()
    for name, n in moles.items():
        assert got[name] == pytest.approx(n, rel=1e-10)
    volume = state.liquid_moles / state.liquid.molar_density + (
        state.vapour_moles / state.vapour.molar_density
    )
    assert volume == pytest.approx(state.volume, rel=1e-10)


@pytest.mark.parametrize("volume", [42.0, 2000.0])  # ~94 % full, and a ~1.5 % heel
def test_closed_tank_round_trip(volume):
    moles = {k: v * 1e6 for k, v in LNG.items()}
    built = closed_tank_state_at_temperature(moles, volume, 115.0)
    _check_tank_balances(built, moles)
    solved = closed_tank_state(moles, volume, built.internal_energy, temperature_guess=112.0)
    _check_tank_balances(solved, moles)
    assert solved.temperature == pytest.approx(115.0, abs=1e-6)
    assert solved.pressure == pytest.approx(built.pressure, rel=1e-8)
    assert solved.vapour_fraction == pytest.approx(built.vapour_fraction, rel=1e-6)
    assert solved.iterations <= 12
    # heat into a closed tank raises its temperature and pressure
    warmer = closed_tank_state(moles, volume, built.internal_energy + 1e8, 115.0)
    assert warmer.temperature > 115.0 and warmer.pressure > built.pressure
    # the nitrogen-rich vapour holds far more nitrogen share than the liquid
    assert built.vapour.mole_fractions[-1] > 10 * built.liquid.mole_fractions[-1]


def test_closed_tank_pure_methane_against_saturation_table():
    # One component: the split follows from the table's saturated volumes,
    # V = N((1 - beta) v_l + beta v_v), independently of the mixture code.
    table = saturation_table("methane")
    molar_mass = Mixture.pure("methane").molar_mass
    moles, volume, temp = {"methane": 1.0e6}, 100.0, 120.0
    state = closed_tank_state_at_temperature(moles, volume, temp)
    sat = table.at(temp)
    v_l, v_v = molar_mass / sat.rho_liquid, molar_mass / sat.rho_vapour
    beta = (volume / 1.0e6 - v_l) / (v_v - v_l)
    assert state.pressure == pytest.approx(sat.pressure, rel=1e-3)
    assert state.vapour_fraction == pytest.approx(beta, rel=2e-3)


def test_closed_tank_rejects_liquid_full_and_unknown():
    moles = {k: v * 1e6 for k, v in LNG.items()}
    with pytest.raises(ValueError, match="liquid-full"):
        closed_tank_state_at_temperature(moles, 30.0, 115.0)
    with pytest.raises(ValueError, match="unknown mixture component"):
        closed_tank_state_at_temperature({"methane": 1.0, "xenon": 1.0}, 1.0, 115.0)

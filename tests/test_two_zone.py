"""Two-zone tank model: correlations, conservation, controls, mixing, validation.

Independent references are CoolProp (HEOS) direct calls, closed-form balances,
numerical quadrature and the published self-pressurisation tests of Van
Dresar, Lin & Hasan (NASA TM-105411 / AIAA 92-0818, 1992, Table 1, as
transcribed in public notes: the report itself was not available to check).
"""

import copy
import dataclasses
import math

import numpy as np
import pytest
from cases import closed_tank
from scipy.integrate import quad, solve_ivp

from sim.cargo import coolprop_saturation, saturation_table
from sim.geometry import Bilobe, HorizontalCylinder, Prismatic, Sphere, VerticalCylinder
from sim.models import MODEL_DESCRIPTIONS, MODELS
from sim.models.two_zone import (
    TwoZoneModel,
    boundary_layer_heat_share,
    contact_line_length,
    horizontal_surface_nusselt,
    wall_excess_temperature,
    wall_line_heat,
)
from sim.scenario import (
    Insulation,
    Leg,
    Outage,
    Reliquefaction,
    Scenario,
    ScenarioError,
    TankSpec,
    default_scenario_dict,
    parse_scenario,
)
from sim.units import SECONDS_PER_DAY, barg_to_pa, c_to_k
from sim.voyage import simulate

ATM = 101325.0  # Pa, standard atmosphere (definition)


def two_zone(scenario):
    return dataclasses.replace(scenario, model="two-zone")


def with_mixing(scenario, times_s):
    """The scenario with mixing events at the given times [s].

    ``Scenario.mixing_times`` is being added to the scenario module; until it
    exists the attribute is attached to a copy (the orchestrator reads it with
    ``getattr``).
    """
    if "mixing_times" in {f.name for f in dataclasses.fields(scenario)}:
        return dataclasses.replace(scenario, mixing_times=tuple(times_s))
    scenario = copy.copy(scenario)
    object.__setattr__(scenario, "mixing_times", tuple(times_s))
    return scenario


def internal_energy_coolprop(model, cargo, y):
    """Tank internal energy from CoolProp (HEOS) for a two-zone state [J].

    Vapour: CoolProp at its density and temperature (gas phase). Liquid: the
    model's definition, saturated liquid at the bulk temperature plus the warm
    layer's excess energy, with the saturated-liquid properties from CoolProp.
    """
    import CoolProp
    from CoolProp.CoolProp import AbstractState

    vapour_mass, vapour_temp, liquid_mass, bulk_temp, scaled = y[:5]
    excess = scaled * model.excess_scale
    sat = coolprop_saturation(cargo, bulk_temp)
    kappa = model._kappa(bulk_temp)[0]
    liquid_volume = liquid_mass / sat.rho_liquid + kappa * excess
    gas = AbstractState("HEOS", model.table.cargo.coolprop_name)
    gas.specify_phase(CoolProp.iphase_gas)
    gas.update(CoolProp.DmassT_INPUTS, vapour_mass / (model.volume - liquid_volume), vapour_temp)
    return vapour_mass * gas.umass() + liquid_mass * sat.u_liquid + excess


# ---------------------------------------------------------------------------
# Registry and correlations


def test_registered_with_a_description():
    assert MODELS["two-zone"] is TwoZoneModel
    assert "two-zone" in MODEL_DESCRIPTIONS


def test_boundary_layer_heat_share_matches_quadrature_of_eckert_jackson_profiles():
    # Eckert & Jackson (NACA Report 1015): u ~ eta^(1/7) (1-eta)^4, dT ~ 1 - eta^(1/7);
    # reference by numerical quadrature, independent of the closed form.
    def flux(eta):
        return eta ** (1 / 7) * (1 - eta) ** 4 * (1 - eta ** (1 / 7))

    total = quad(flux, 0, 1, limit=200)[0]
    shares = []
    for ratio in (0.05, 0.2, 0.4, 0.6, 0.8):
        expected = quad(flux, 0, (1 - ratio) ** 7, limit=200)[0] / total
        shares.append(boundary_layer_heat_share(ratio))
        # tolerance: quad's accuracy on the eta^(1/7) singularity
        assert shares[-1] == pytest.approx(expected, rel=1e-5)
    assert boundary_layer_heat_share(-1.0) == 1.0 and boundary_layer_heat_share(1.0) == 0.0
    assert all(a > b for a, b in zip(shares, shares[1:]))


def test_horizontal_surface_correlations():
    # McAdams (1954) via Incropera et al. 6th ed. Eqs. 9.30-9.32 (from memory):
    # stable 0.27 Ra^1/4 (1e5-1e10); unstable 0.54 Ra^1/4 (1e4-1e7), 0.15 Ra^1/3 (1e7-1e11)
    assert horizontal_surface_nusselt(1e8, stable=True) == (pytest.approx(0.27 * 1e2), True)
    assert horizontal_surface_nusselt(1e6, stable=False) == (pytest.approx(0.54 * 10 ** 1.5), True)
    assert horizontal_surface_nusselt(1e9, stable=False) == (pytest.approx(0.15 * 1e3), True)
    assert horizontal_surface_nusselt(1e12, stable=True)[1] is False
    assert horizontal_surface_nusselt(1e12, stable=False)[1] is False
    assert horizontal_surface_nusselt(0.0, stable=True) == (0.0, True)


def test_wall_excess_satisfies_eckert_jackson_nusselt_with_coolprop_properties():
    # Liquid parahydrogen at 21.5 K from CoolProp (HEOS); 2 W/m^2 over a 1.5 m wall
    import CoolProp
    from CoolProp.CoolProp import AbstractState

    st = AbstractState("HEOS", "ParaHydrogen")
    st.update(CoolProp.QT_INPUTS, 0.0, 21.5)
    k, mu, cp, beta, rho = (st.conductivity(), st.viscosity(), st.cpmass(),
                            st.isobaric_expansion_coefficient(), st.rhomass())
    nu, pr = mu / rho, mu * cp / k
    excess, rayleigh = wall_excess_temperature(2.0, 1.5, k, 9.80665 * beta * pr / nu**2)
    gr_pr = 9.80665 * beta * excess * 1.5**3 / nu**2 * pr
    assert rayleigh == pytest.approx(gr_pr, rel=1e-12)
    # Eckert & Jackson wall Nusselt number Nu_x = 0.0210 (Gr Pr)^(2/5)
    assert 2.0 * 1.5 / (k * excess) == pytest.approx(0.0210 * gr_pr**0.4, rel=1e-12)
    # a tiny excess at 2 W/m^2, the scale of the buoyancy test (common practice, no source)
    assert 0.0 < excess < 0.1


def _wall_by_finite_differences(kt, q_d, h_d, length, dv, h_l, dtw, theta, delta,
                                deep=3.0, cells=30000):
    """Reference for wall_line_heat: the joined fin solved by finite volumes.

    One coordinate s along the wall, s < 0 dry (top adiabatic at s = -length),
    s > 0 wetted (wall at the far-field value T_b + dTw at s = deep), all
    temperatures from the surface temperature. Returns the conducted heat
    at s = 0 and at s = delta [W/m] (flowing toward +s).
    """
    from scipy.linalg import solve_banded

    s = np.linspace(-length, deep, cells + 1)  # cell faces
    ds = s[1] - s[0]
    mid = 0.5 * (s[:-1] + s[1:])  # cell centres
    n = mid.size
    liquid = np.full(n, -theta)  # the bulk, theta below the surface
    inside = (mid >= 0) & (mid < delta)
    liquid[inside] += theta * (1 - mid[inside] / delta) ** 2  # quadratic warm layer
    coeff = np.where(mid < 0, h_d, h_l)
    source = np.where(mid < 0, h_d * dv + q_d, h_l * (liquid + dtw))
    g = kt / ds**2
    bands = np.zeros((3, n))
    bands[0, 1:] = -g
    bands[1] = 2 * g + coeff
    bands[2, :-1] = -g
    bands[1, 0] -= g  # adiabatic top: ghost cell equal to the first cell
    bands[1, -1] += g  # far end held at -theta + dtw: ghost = 2 w_b - w_N
    rhs = source.copy()
    rhs[-1] += 2 * g * (-theta + dtw)
    w = solve_banded((1, 1), bands, rhs)

    def flux_at(x):
        i = int(np.searchsorted(mid, x)) - 1
        return -kt * (w[i + 1] - w[i]) / (mid[i + 1] - mid[i])

    return flux_at(0.0), flux_at(delta)


@pytest.mark.parametrize("case", [
    # kt [W/K], q_d [W/m^2], h_d, L [m], Tv-Ti [K], h_l [W/(m^2 K)], dTw [K], theta [K], delta [m]
    (0.04, 2.0, 15.0, 1.5, 0.8, 70.0, 0.03, 0.8, 0.22),   # the LH2 test tank, stratified
    (0.04, 2.0, 15.0, 1.5, 0.0, 70.0, 0.03, 0.0, 0.0),    # unstratified
    (0.12, 2.0, 15.0, 0.05, 0.5, 70.0, 0.03, 1.0, 0.01),  # short dry wall, layer thinner than 1/m_l
    (0.04, 2.0, 15.0, 1.0, -0.3, 200.0, 0.01, 0.5, 0.4),  # vapour colder than the surface
])
def test_wall_line_heat_matches_finite_difference_solution(case):
    # Parameters are test values of the size found in the LH2 validation
    # runs (common practice, no source); the reference is an independent
    # finite-volume solution of the same joined-fin problem.
    kt, q_d, h_d, length, dv, h_l, dtw, theta, delta = case
    across, below = wall_line_heat(kt, q_d, h_d, length, dv, h_l, dtw, theta, delta)
    ref_across, ref_below = _wall_by_finite_differences(kt, q_d, h_d, length, dv, h_l, dtw,
                                                        theta, delta)
    # tolerance: second-order finite volumes on 30 000 cells, relative to the
    # largest of the two heats (one may be near zero)
    scale = max(abs(ref_across), abs(ref_below))
    assert across == pytest.approx(ref_across, abs=2e-3 * scale)
    assert below == pytest.approx(ref_below, abs=2e-3 * scale)


def test_wall_line_heat_limits():
    # no wall, no conduction
    assert wall_line_heat(0.0, 2.0, 15.0, 1.0, 1.0, 70.0, 0.03, 1.0, 0.2) == (0.0, 0.0)
    # long dry fin into a liquid that takes all heat at the line: q''/m + sqrt(h k t) (Tv - Ti)
    # (Incropera et al. 2007, section 3.6, infinite fin; closed form)
    kt, q, h, dv = 0.04, 2.0, 15.0, 0.5
    across, below = wall_line_heat(kt, q, h, 50.0, dv, 1e12, 0.0, 0.0, 0.0)
    expected = q / math.sqrt(h / kt) + math.sqrt(h * kt) * dv
    assert across == pytest.approx(expected, rel=1e-4)  # 1e-4: the finite h_l
    assert below == pytest.approx(across, rel=1e-12)  # no layer: all of it below


def test_contact_line_length_of_a_sphere():
    sphere = Sphere(2.0)
    level = 0.6  # m; circle of radius sqrt(z (2r - z)) (closed form)
    expected = 2 * math.pi * math.sqrt(level * (2.0 - level))
    assert contact_line_length(sphere, level, sphere.free_surface_area(level)) == pytest.approx(
        expected, rel=1e-12)
    box = Prismatic(30.0, 25.0, 20.0)
    # vertical walls: dA/dz equals the perimeter 2 (30 + 25) m (closed form)
    assert contact_line_length(box, 7.0, box.free_surface_area(7.0)) == pytest.approx(
        110.0, rel=1e-6)


def test_wall_keys_parse_to_si_and_come_in_pairs():
    data = default_scenario_dict()
    tank = parse_scenario(data).tank
    assert (tank.wall_thickness, tank.wall_conductivity) == (0.0, 0.0)  # default: no wall
    data["tank"].update(wall_thickness_mm=2.0, wall_conductivity_w_mk=20.0)  # test values
    tank = parse_scenario(data).tank
    assert tank.wall_thickness == pytest.approx(0.002, rel=1e-12)
    assert tank.wall_conductivity == 20.0
    del data["tank"]["wall_conductivity_w_mk"]
    with pytest.raises(ScenarioError, match="needs tank.wall_conductivity_w_mk"):
        parse_scenario(data)


def test_wall_values_must_not_be_negative():
    with pytest.raises(ValueError, match="wall"):
        TwoZoneModel(saturation_table("propane"), 100.0, 10.0, 0.0, shape=Sphere(5.76),
                     wall_thickness=-0.01, wall_conductivity=40.0)


# ---------------------------------------------------------------------------
# Conservation and exactness of the rate relation


def sealed_propane_sphere(days, **wall):
    """A sealed 12 m propane sphere, 60 % full, heated for ``days`` at 30 degC (model only).

    Invented test case (sizes and U-value typical of refrigerated LPG, no source).

    Returns ``(model, ambient [K], initial state, final state, heat in [J])``.
    """
    shape = Sphere(12.0)
    model = TwoZoneModel(saturation_table("propane"), shape.volume(),
                         0.5 * shape.surface_area(), 0.0, shape=shape, **wall)
    ambient = c_to_k(30.0)
    y0 = model.initial_state(0.6, barg_to_pa(0.1))

    def rhs(t, y):
        state = model.evaluate(y[:5], ambient, ambient)
        return model.derivatives(state, 0.0, 0.0) + [state.heat_in]

    sol = solve_ivp(rhs, (0, days * SECONDS_PER_DAY), np.append(y0, 0.0), rtol=1e-9, atol=1e-9)
    return model, ambient, y0, sol.y[:5, -1], sol.y[5, -1]


@pytest.fixture(scope="module")
def propane_run():
    """The sealed propane sphere heated for 10 days."""
    return sealed_propane_sphere(10.0)


def test_closed_tank_first_law_and_mass_with_coolprop(propane_run):
    """Integrated heat equals the rise of internal energy; mass is constant."""
    model, ambient, y0, y1, heat = propane_run
    assert y1[0] + y1[2] == pytest.approx(y0[0] + y0[2], rel=1e-12)
    rise = internal_energy_coolprop(model, "propane", y1) - internal_energy_coolprop(
        model, "propane", y0)
    # tolerance: spline table vs CoolProp (~1e-6 of the latent heat per kg) over 3e5 kg
    assert rise == pytest.approx(heat, rel=1e-4)
    end = model.evaluate(y1, ambient, ambient)
    # stratified and superheated: vapour > surface > bulk
    assert end.vapour_temperature > end.surface_temperature > end.bulk_liquid_temperature


#: Wall of a refrigerated-propane test tank: low-temperature carbon steel, 20 mm,
#: about 40 W/(m K) near -40 degC (from memory; test values, not a real tank).
PROPANE_WALL = dict(wall_thickness=0.020, wall_conductivity=40.0)


def test_closed_tank_first_law_with_conduction_along_the_wall():
    """The wall moves heat between vapour and liquid; the tank total still closes."""
    model, ambient, y0, y1, heat = sealed_propane_sphere(3.0, **PROPANE_WALL)
    shape = model.shape
    assert y1[0] + y1[2] == pytest.approx(y0[0] + y0[2], rel=1e-12)
    rise = internal_energy_coolprop(model, "propane", y1) - internal_energy_coolprop(
        model, "propane", y0)
    # tolerance: spline table vs CoolProp, as in the run without a wall
    assert rise == pytest.approx(heat, rel=1e-4)
    # the wall path is active: heat is moved out of the vapour's share
    state = model.evaluate(y1, ambient, ambient)
    plain = TwoZoneModel(saturation_table("propane"), shape.volume(),
                         0.5 * shape.surface_area(), 0.0, shape=shape)
    assert state._extra.heat_dry < plain.evaluate(y1, ambient, ambient)._extra.heat_dry
    assert state.heat_in == pytest.approx(plain.evaluate(y1, ambient, ambient).heat_in,
                                          rel=1e-12)


def test_no_heat_nothing_moves_with_a_wall():
    shape = Sphere(12.0)
    model = TwoZoneModel(saturation_table("propane"), shape.volume(), 0.0, 0.0, shape=shape,
                         **PROPANE_WALL)
    plain = TwoZoneModel(saturation_table("propane"), shape.volume(), 0.0, 0.0, shape=shape)
    y0 = model.initial_state(0.6, barg_to_pa(0.1))
    rates = model.derivatives(model.evaluate(y0, 300.0, 300.0), 0.0, 0.0)
    # exactly the model without a wall (whose voyage stays put: test_no_heat_nothing_moves)
    assert rates == plain.derivatives(plain.evaluate(y0, 300.0, 300.0), 0.0, 0.0)
    # and only round-off: the initial vapour density is from the spline table,
    # its state from CoolProp (kg/s and K/s against 1e5 kg and 230 K)
    assert max(abs(r) for r in rates) < 1e-9


def test_pressure_rate_is_exactly_affine_in_withdrawals(propane_run):
    """dp/dt from the coefficients equals the pressure change along the derivatives."""
    model, ambient, _, y, _ = propane_run  # superheated vapour over a warm layer
    state = model.evaluate(y, ambient, ambient)
    a0, b_out, b_rl = model.pressure_rate_coefficients(state)
    assert b_out > 0 and b_rl > 0  # drawing vapour lowers the pressure
    for out, reliq in ((0.0, 0.0), (2.0, 0.0), (0.0, 3.0), (1.5, 2.5)):
        d = np.array(model.derivatives(state, out, reliq))
        h = 1.0  # s; central difference, error ~ h^2
        p_plus = model.evaluate(y + h * d, ambient, ambient).pressure
        p_minus = model.evaluate(y - h * d, ambient, ambient).pressure
        expected = (p_plus - p_minus) / (2 * h)
        # tolerance: finite-difference truncation, far below the rates themselves
        assert a0 - b_out * out - b_rl * reliq == pytest.approx(expected, rel=1e-5)


def test_mix_conserves_mass_and_energy_and_lands_on_saturation(propane_run):
    model, ambient, _, y, _ = propane_run
    before = model.evaluate(y, ambient, ambient)
    mixed = model.mix(y)
    after = model.evaluate(mixed, ambient, ambient)
    assert mixed[0] + mixed[2] == pytest.approx(y[0] + y[2], rel=1e-12)
    # tolerance: table vs CoolProp, ~1e-6 of u per kg
    assert internal_energy_coolprop(model, "propane", mixed) == pytest.approx(
        internal_energy_coolprop(model, "propane", y), rel=1e-6)
    assert mixed[4] == 0.0 and mixed[1] == mixed[3]
    # pressure is the CoolProp saturation pressure of the mixed temperature
    sat = coolprop_saturation("propane", mixed[3])
    assert after.pressure == pytest.approx(sat.pressure, rel=1e-5)  # table vs CoolProp
    assert after.pressure < before.pressure


# ---------------------------------------------------------------------------
# Voyages


def test_no_heat_nothing_moves():
    sc = two_zone(closed_tank(days=10))
    sc = dataclasses.replace(sc, insulation=Insulation(0.0, 1.0))
    res = simulate(sc)
    ts = res.timeseries
    # tolerance: the initial vapour density comes from the spline table, its
    # pressure from CoolProp; the two agree to ~1e-6
    assert np.ptp(ts["pressure_barg"]) < 1e-5
    assert np.ptp(ts["bulk_liquid_temp_c"]) < 1e-6
    assert np.ptp(ts["cargo_t"]) < 1e-9
    assert res.summary["boil_off_t"] == 0.0


def test_results_carry_the_three_temperatures():
    eq = simulate(closed_tank(days=2))
    for column in ("vapour_temp_c", "surface_temp_c", "bulk_liquid_temp_c"):
        assert np.array_equal(eq.timeseries[column], eq.timeseries["liquid_temp_c"])
    for key in ("final_vapour_temp_c", "final_surface_temp_c", "final_bulk_liquid_temp_c"):
        assert eq.summary[key] == pytest.approx(eq.summary["final_liquid_temp_c"], abs=1e-12)
    tz = simulate(two_zone(closed_tank(days=2)))
    s = tz.summary
    assert s["final_vapour_temp_c"] > s["final_surface_temp_c"] > s["final_bulk_liquid_temp_c"]
    assert s["final_surface_temp_c"] == pytest.approx(s["final_liquid_temp_c"], abs=1e-12)
    assert isinstance(s["model_warnings"], list)


def test_stratification_raises_pressure_faster_than_equilibrium():
    """Same tank, same heat: the surface warms faster than the mean (Van Dresar et al. 1992)."""
    sc = closed_tank(cargo="propane", fill=0.6, pressure_barg=0.1, relief_barg=2.0, days=20)
    eq, tz = simulate(sc), simulate(two_zone(sc))
    assert tz.time_to_relief_h < eq.time_to_relief_h
    # the bulk stays colder than in the homogeneous tank at the same time
    hour = tz.time_to_relief_h
    eq_temp = np.interp(hour, eq.timeseries["time_h"], eq.timeseries["liquid_temp_c"])
    tz_bulk = np.interp(hour, tz.timeseries["time_h"], tz.timeseries["bulk_liquid_temp_c"])
    assert tz_bulk < eq_temp


def test_mixing_event_is_recorded_and_drops_the_pressure():
    sc = two_zone(closed_tank(cargo="propane", fill=0.6, relief_barg=10.0, days=4))
    res = simulate(with_mixing(sc, [1.5 * SECONDS_PER_DAY, 3.0 * SECONDS_PER_DAY]))
    mixing = [e for e in res.events if e.kind == "mixing"]
    assert [e.time for e in mixing] == [1.5 * SECONDS_PER_DAY, 3.0 * SECONDS_PER_DAY]
    ts = res.timeseries
    for event in mixing:
        hour = event.time / 3600
        before = ts[ts["time_h"] <= hour]["pressure_barg"].iloc[-1]
        after = ts[ts["time_h"] > hour]["pressure_barg"].iloc[0]
        assert after < before
        assert "->" in event.detail
    assert res.status == "completed"


def test_mixing_event_leaves_the_equilibrium_model_alone():
    sc = closed_tank(days=2)
    plain = simulate(sc)
    mixed = simulate(with_mixing(sc, [SECONDS_PER_DAY]))
    assert [e.kind for e in mixed.events].count("mixing") == 1
    assert mixed.summary["final_pressure_barg"] == pytest.approx(
        plain.summary["final_pressure_barg"], rel=1e-9)


def test_frequent_mixing_approaches_the_equilibrium_model():
    """The more often the tank is stirred, the closer the pressure history to homogeneous."""
    sc = closed_tank(cargo="propane", fill=0.6, pressure_barg=0.1, relief_barg=15.0, days=5)
    eq = simulate(sc).timeseries

    def mean_deviation(every_h):
        run = two_zone(sc)
        if every_h:
            run = with_mixing(run, np.arange(every_h, 5 * 24, every_h) * 3600.0)
        ts = simulate(run).timeseries
        p_eq = np.interp(ts["time_h"], eq["time_h"], eq["pressure_barg"]) + ATM / 1e5
        deviation = np.abs((ts["pressure_barg"] + ATM / 1e5) / p_eq - 1)
        return np.trapezoid(deviation, ts["time_h"]) / ts["time_h"].iloc[-1]

    deviations = [mean_deviation(every) for every in (None, 24.0, 8.0, 4.0)]
    assert all(a > b for a, b in zip(deviations, deviations[1:]))
    # a clear-cut convergence, far outside integration noise: stirring every
    # 4 h removes most of the difference (common practice, no source)
    assert deviations[-1] < deviations[0] / 5


def test_reliquefaction_outage_and_relief_with_two_zone():
    """Plant holds, trips, relief lifts and vents, plant returns and pulls the pressure down."""
    day = SECONDS_PER_DAY
    tank = TankSpec(Sphere(12.0), 2, 0.9, barg_to_pa(0.2), barg_to_pa(0.6), barg_to_pa(-0.3))
    legs = (Leg("hot", 6 * day, c_to_k(35.0), c_to_k(30.0), 0.0),)
    plant = Reliquefaction(400 / 3600, barg_to_pa(0.3), 0.6 * 3.6e6, (Outage(1 * day, 2 * day),))
    sc = Scenario("reliq + relief", "two-zone", "propane", tank, Insulation(0.6, 0.8), legs,
                  plant, None, barg_to_pa(0.2))
    res = simulate(sc)
    s = res.summary
    kinds = [e.kind for e in res.events]
    assert res.status == "completed"
    for kind in ("plant-trip", "relief-lift", "plant-restore", "holding"):
        assert kind in kinds
    assert s["vented_t"] > 0 and s["reliquefied_t"] > 0
    # relief holds its set pressure while venting (affine pressure control); the
    # held pressure drifts only by the integration error, 1e-6 of ~1.6 bar abs
    ts = res.timeseries
    venting = ts[ts["vented_kg_h"] > 0]
    assert np.allclose(venting["pressure_barg"], 0.6, atol=1.6e-6)
    assert ts["pressure_barg"].max() <= 0.6 + 1.6e-6
    holding = ts[ts["control"] == "reliquefaction holding"]
    assert np.allclose(holding["pressure_barg"], 0.3, atol=1.3e-6)
    # mass balance: only vented and burned cargo leaves
    lost = s["initial_cargo_t"] - s["final_cargo_t"]
    assert lost == pytest.approx(s["vented_t"] + s["fuel_t"] + s["oxidised_t"], rel=1e-6)


@pytest.mark.parametrize("shape", [
    Sphere(10.0),
    HorizontalCylinder(5.0, 20.0),
    HorizontalCylinder(5.0, 20.0, heads="flat"),
    Bilobe(8.0, 30.0, 13.0),
    Prismatic(30.0, 25.0, 20.0),
    VerticalCylinder(8.0, 12.0),
], ids=lambda s: type(s).__name__ + "-" + getattr(s, "heads", ""))
def test_every_shape(shape):
    tank = TankSpec(shape, 1, 0.8, barg_to_pa(0.1), barg_to_pa(5.0), barg_to_pa(-0.5))
    legs = (Leg("leg", 3 * SECONDS_PER_DAY, c_to_k(30.0), c_to_k(25.0), 0.0),)
    sc = Scenario("shape", "equilibrium", "ammonia", tank, Insulation(0.4, 0.7), legs, None,
                  None, barg_to_pa(0.1))
    eq, tz = simulate(sc), simulate(two_zone(sc))
    assert tz.status == "completed"
    s = tz.summary
    assert s["final_pressure_barg"] > eq.summary["final_pressure_barg"]
    assert s["final_vapour_temp_c"] > s["final_surface_temp_c"] > s["final_bulk_liquid_temp_c"]
    assert np.isfinite(tz.timeseries.select_dtypes("number").to_numpy()).all()


def test_cargo_without_coolprop_transport_gets_a_warning():
    shape = Sphere(10.0)
    model = TwoZoneModel(saturation_table("ethylene"), shape.volume(), 100.0, 0.0, shape=shape)
    assert any("corresponding states" in w for w in model.warnings)
    y = model.initial_state(0.8, barg_to_pa(0.2))
    state = model.evaluate(y, 300.0, 300.0)
    assert np.isfinite(model.derivatives(state, 0.0, 0.0)).all()


def test_shape_is_required():
    with pytest.raises(ValueError, match="shape"):
        TwoZoneModel(saturation_table("propane"), 100.0, 10.0, 0.0)


def test_overfilled_tank_runs_cleanly_into_the_relief_valve():
    """97 % propane heated hard (the equilibrium model goes liquid-full at ~83 h).

    In the two-zone model the expanding liquid squeezes the small ullage
    faster than conduction-limited condensation relieves it, so the relief
    valve lifts first; the run must carry on venting without numerical trouble.
    """
    sc = closed_tank(cargo="propane", fill=0.97, pressure_barg=0.1, relief_barg=17.0,
                     u_value=2.0, days=10)
    res = simulate(two_zone(sc))
    kinds = [e.kind for e in res.events]
    assert res.status in ("completed", "stopped")
    assert "relief-lift" in kinds
    # holding is exact in the rates; the held pressure drifts only by the
    # integration error (RTOL 1e-8 per step over hundreds of steps): 1e-6 of 18 bar
    assert res.timeseries["pressure_barg"].max() <= 17.0 + 18.0 * 1e-6
    assert np.isfinite(res.timeseries.select_dtypes("number").to_numpy()).all()
    lost = res.summary["initial_cargo_t"] - res.summary["final_cargo_t"]
    assert lost == pytest.approx(res.summary["vented_t"], rel=1e-6)


def test_work_count_bounded_on_the_benchmark_voyage():
    """30-day closed propane sphere (sim.bench): right-hand-side calls stay bounded."""
    from sim.bench import _closed_tank

    res = simulate(two_zone(_closed_tank()))
    # 2434 calls measured on the development machine; about twice that flags a regression
    assert res.stats["rhs_calls"] < 5000


# ---------------------------------------------------------------------------
# Validation: NASA Lewis liquid-hydrogen tank (Van Dresar, Lin & Hasan 1992)

#: Tank of the tests: 4.89 m^3, 13.98 m^2, near-spherical (Table 1, transcribed).
LH2_VOLUME, LH2_AREA = 4.89, 13.98
#: Rows of Table 1 at 2.0 W/m^2: fill [-], pressure window [Pa], measured and
#: homogeneous-model pressure-rise rates [kPa/h] (transcribed, not checked).
VAN_DRESAR_2W = {
    0.29: ((159e3, 172e3), 3.82, 2.73),
    0.49: ((145e3, 159e3), 2.72, 1.86),
    0.83: ((159e3, 172e3), 3.47, 1.46),
}


def lh2_scenario(model, fill, start_pressure, stop_pressure, flux=2.0, **wall):
    """Sphere of the test tank's volume, parahydrogen, uniform heat flux.

    The U-value puts ``flux`` x 13.98 m^2 into the tank with the cargo at
    21.5 K (mid-window) and a 300 K surrounding, so the heat stays within
    0.3 % of it over a window. The relief valve is set at ``stop_pressure``:
    its first lift is the time the tank reaches it.
    """
    shape = Sphere((6 * LH2_VOLUME / math.pi) ** (1 / 3))
    u_value = flux * LH2_AREA / (shape.surface_area() * (300.0 - 21.5))
    tank = TankSpec(shape, 1, fill, start_pressure, stop_pressure, 1000.0, **wall)
    legs = (Leg("test", 10 * SECONDS_PER_DAY, 300.0, 300.0, 0.0),)
    return Scenario("K-site LH2", model, "parahydrogen", tank, Insulation(u_value, 1.0), legs,
                    None, None, start_pressure)


def lh2_rate(model, fill, window, start_pressure, **wall):
    """Mean pressure-rise rate over a pressure window [kPa/h]."""
    low, high = window
    hours = [0.0 if p <= start_pressure else
             simulate(lh2_scenario(model, fill, start_pressure, p, **wall)).time_to_relief_h
             for p in (low, high)]
    return (high - low) / 1e3 / (hours[1] - hours[0])


@pytest.fixture(scope="module")
def lh2_rates():
    """Two-zone rates from a tank locked up saturated at one atmosphere.

    Assumption (not in the transcribed table): before each test the tank was
    vented to the atmosphere, so it starts saturated at 101.325 kPa with the
    tabulated fill, and the rate is taken over the tabulated window.
    """
    return {fill: lh2_rate("two-zone", fill, window, ATM)
            for fill, (window, _, _) in VAN_DRESAR_2W.items()}


@pytest.mark.parametrize("fill", sorted(VAN_DRESAR_2W))
def test_van_dresar_equilibrium_model_matches_homogeneous_column(fill):
    window, _, homogeneous = VAN_DRESAR_2W[fill]
    rate = lh2_rate("equilibrium", fill, window, window[0])
    # within 6 %: the report's homogeneous model used other property data
    # and the real tank shape (the lead's check found -5.7 %, +1.5 %, -3.8 %)
    assert rate == pytest.approx(homogeneous, rel=0.06)


@pytest.mark.parametrize("fill", sorted(VAN_DRESAR_2W))
def test_van_dresar_two_zone_within_25_percent_of_measured(lh2_rates, fill):
    _, measured, homogeneous = VAN_DRESAR_2W[fill]
    assert lh2_rates[fill] == pytest.approx(measured, rel=0.25)
    # and above the homogeneous model, as every measured rate is (Table 1)
    assert lh2_rates[fill] > homogeneous


#: Wall of the test tank for conduction along it: 2219 aluminium alloy about
#: 2 mm thick (from memory, not checked against the report), conductivity of
#: aluminium alloys of that family near 20 K about 20 W/(m K) (from memory,
#: NIST cryogenic property data; uncertain by a factor of about 1.5). Nominal
#: k t = 0.04 W/K; docs/two-zone.md reports k t from 0.013 to 0.12 W/K.
LH2_WALL = dict(wall_thickness=0.002, wall_conductivity=20.0)


@pytest.fixture(scope="module")
def lh2_rates_wall():
    """Two-zone rates as :func:`lh2_rates`, with conduction along the nominal wall
    (given on the tank, as the scenario keys ``wall_thickness_mm`` and
    ``wall_conductivity_w_mk`` do)."""
    rates = {fill: lh2_rate("two-zone", fill, window, ATM, **LH2_WALL)
             for fill, (window, _, _) in VAN_DRESAR_2W.items()}
    return rates


@pytest.mark.parametrize("fill", sorted(VAN_DRESAR_2W))
def test_van_dresar_two_zone_with_wall_within_25_percent_of_measured(lh2_rates_wall, lh2_rates,
                                                                     fill):
    _, measured, homogeneous = VAN_DRESAR_2W[fill]
    # the wall is really in these runs: it carries dry-wall heat into the layer
    # and heat down the layer, so every rate falls (an earlier fixture lost it)
    assert lh2_rates_wall[fill] < 0.97 * lh2_rates[fill]
    # at the nominal wall (29 % is 22 % low there and leaves the 25 % band at
    # k t above about 0.08 W/K: docs/two-zone.md, "Conduction along the tank wall")
    assert lh2_rates_wall[fill] == pytest.approx(measured, rel=0.25)
    assert lh2_rates_wall[fill] > homogeneous


@pytest.mark.xfail(strict=True, reason=(
    "known limitation, also with conduction along the tank wall (nominal 2 mm aluminium "
    "alloy, and k t from 0.013 to 0.12 W/K): the model ranks 83 % first, then 29 %, then "
    "49 %; the tests rank 29 % > 83 % > 49 % (docs/two-zone.md, Validation)."))
def test_van_dresar_fill_ranking_with_wall(lh2_rates_wall):
    assert lh2_rates_wall[0.29] > lh2_rates_wall[0.83] > lh2_rates_wall[0.49]


@pytest.mark.xfail(strict=True, reason=(
    "known limitation: the model ranks 83 % (3.9 kPa/h) above 29 % (3.3) and 49 % (3.3); "
    "the tests rank 29 % (3.82) > 83 % (3.47) > 49 % (2.72). Weakening the vapour-to-"
    "surface heat (a stratified ullage) raises the 49 % rate with the 29 % one and, at the "
    "size a conduction-limited ullage gives, puts all three 50-210 % above the tests "
    "(docs/two-zone.md, Validation); the missing physics is not on the vapour side alone."))
def test_van_dresar_fill_ranking(lh2_rates):
    assert lh2_rates[0.29] > lh2_rates[0.83] > lh2_rates[0.49]


def test_wall_keys_reach_the_two_zone_model():
    """Wiring: [tank] wall keys -> the orchestrator builds the model with that wall."""
    from sim.scenario import demo_scenarios, load_scenario
    from sim.voyage import _Voyage

    sc = load_scenario(demo_scenarios()["propane-type-c-stratified-mixing"])
    tank = dataclasses.replace(sc.tank, wall_thickness=0.012, wall_conductivity=40.0)
    model = _Voyage(dataclasses.replace(sc, tank=tank)).model
    assert model.wall_conductance == pytest.approx(0.012 * 40.0, rel=1e-12)


def test_a_brim_full_two_zone_tank_stops_liquid_full_without_crawling():
    """99 % propane heated hard: the relief valve lifts, the liquid keeps expanding and
    the tank goes liquid-full (vapour space below 0.01 % of the volume). The squeezed
    vapour of the two-zone model must not make the integrator crawl towards exactly
    100 % (it took minutes before the liquid-full line was drawn at 99.99 %)."""
    from sim.scenario import LIQUID_FULL_FILL

    sc = closed_tank(cargo="propane", fill=0.99, pressure_barg=0.1, relief_barg=17.0,
                     u_value=2.0, days=30)
    res = simulate(two_zone(sc))
    kinds = [e.kind for e in res.events]
    assert kinds[-1] == "liquid-full" and "relief-lift" in kinds
    assert res.status == "stopped"
    assert res.timeseries["fill_pct"].iloc[-1] == pytest.approx(100.0 * LIQUID_FULL_FILL,
                                                                abs=1e-6)
    assert res.stats["rhs_calls"] < 10_000

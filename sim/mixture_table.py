"""Fast mixture properties along one liquid's bubble curve, for the voyage integrator.

A :class:`MixtureTable` is built from CoolProp for one reference liquid
composition :math:`x^0` at a few temperatures and splined in temperature. At
each node it stores

* the reference bubble pressure :math:`p^0(T)` and K-values
  :math:`K_i^0(T) = y_i^0/x_i^0` (``QT`` bubble-point call);
* the **partial molar** volumes and internal energies of every component in
  the saturated liquid, :math:`\\bar v^L_i, \\bar u^L_i`, and in the incipient
  vapour, :math:`\\bar v^V_i, \\bar u^V_i` (central differences of phase-imposed
  ``PT`` evaluations in the mole numbers).

Why partial molar quantities: a phase's volume and energy are homogeneous of
degree one in its mole numbers, :math:`U = \\sum_i n_i \\bar u_i` (Euler), so
for a liquid that weathers away from :math:`x^0` they give the energy and
volume to first order in the drift, and exactly at :math:`x^0`. With mixture
molar properties of the reference instead, every boiled-off mole of nitrogen
would be booked at the wrong energy and the tank temperature would drift.

K-values of a drifted liquid follow Raoult's/Henry's law scaling,
:math:`K_i(T, p) = K_i^0(T)\\, p^0(T)/p`, so the bubble pressure of a liquid x
is :math:`p_b = p^0 \\sum_i K_i^0 x_i`: losing nitrogen lowers it at once.
The vapour's partial molar volumes scale with :math:`p^0/p` (ideal-gas
pressure dependence). The tank model refreshes the table (new :math:`x^0`)
once the liquid drifts past a tolerance, so these first-order corrections
never reach far.

Everything is SI: K, Pa, mol, m^3/mol, J/mol.

References
----------
.. [1] I. H. Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498-2508,
   doi:10.1021/ie4033999 (CoolProp).
.. [2] O. Kunz, W. Wagner, J. Chem. Eng. Data 57 (2012) 3032-3091,
   doi:10.1021/je300655b (GERG-2008 mixture model behind CoolProp's HEOS
   mixtures).
.. [3] M. L. Michelsen, J. M. Mollerup, *Thermodynamic Models: Fundamentals
   and Computational Aspects*, 2nd ed., Tie-Line Publications, 2007, ch. 2
   (partial molar properties, Euler's theorem for homogeneous functions).
"""

from __future__ import annotations

import bisect
import functools
import math
import time
from collections.abc import Sequence

import numpy as np
from scipy.interpolate import CubicSpline

from .mixture import (
    DEFAULT_BACKENDS,
    MIXTURE_COMPONENTS,
    EquilibriumError,
    Mixture,
    _as_mixture,
    _pure_molar_mass,
    _saturation,
    _state,
    rachford_rice,
)

#: Relative perturbation of one mole number for the partial-molar differences [-].
#: With CoolProp's density solve converged to ~1e-12 this leaves ~1e-6 J/mol
#: of round-off (checked by Euler's theorem in the tests).
PARTIAL_STEP = 1e-6


def partial_molar(
    backend: str, components: Sequence[str], role: str, fractions, temperature: float,
    pressure: float,
) -> tuple[np.ndarray, np.ndarray]:
    """Partial molar volumes [m^3/mol] and internal energies [J/mol] of one phase.

    Central differences in the mole number of each component at fixed T and
    p, with the phase imposed (``role`` "liquid" or "vapour"). For a
    component at a fraction below twice the step, a forward difference.
    """
    import CoolProp

    names = tuple(MIXTURE_COMPONENTS[c] for c in components)
    state = _state(backend, names, role)

    def molar(f):
        state.set_mole_fractions(list(f))
        state.update(CoolProp.PT_INPUTS, pressure, temperature)
        return 1.0 / state.rhomolar(), state.umolar()

    z = np.asarray(fractions, dtype=float)
    v0, u0 = molar(z)
    size = len(z)
    if size == 1:
        return np.array([v0]), np.array([u0])
    vbar, ubar = np.empty(size), np.empty(size)
    eps = PARTIAL_STEP
    for i in range(size):
        up = z.copy()
        up[i] += eps
        v_up, u_up = molar(up / (1.0 + eps))
        if z[i] > 2.0 * eps:
            down = z.copy()
            down[i] -= eps
            v_dn, u_dn = molar(down / (1.0 - eps))
            # d(N u)/dn_i with N = 1 +- eps moles
            vbar[i] = ((1.0 + eps) * v_up - (1.0 - eps) * v_dn) / (2.0 * eps)
            ubar[i] = ((1.0 + eps) * u_up - (1.0 - eps) * u_dn) / (2.0 * eps)
        else:
            vbar[i] = ((1.0 + eps) * v_up - v0) / eps
            ubar[i] = ((1.0 + eps) * u_up - u0) / eps
    return vbar, ubar


class MixtureTable:
    """Bubble-curve K-values and partial molar properties of one liquid, splined in T.

    Parameters
    ----------
    components : sequence of str
        Component names (:data:`sim.mixture.MIXTURE_COMPONENTS`).
    liquid : sequence of float
        Reference liquid mole fractions :math:`x^0`, all > 0 [-].
    temperatures : sequence of float
        Spline nodes, increasing, at least 4 [K].
    backends : sequence of str
        CoolProp backends to try in order; the whole table uses the first that
        answers at every node (energies of different backends must not mix).

    Attributes
    ----------
    components : tuple of str
    reference : ndarray  x^0 [-]
    backend : str
    temperature_min, temperature_max : float  [K]
    molar_masses : ndarray  [kg/mol]
    build_seconds : float  [s]

    Notes
    -----
    Columns of :meth:`raw` (c components): ``ln p0`` (1), ``ln K0`` (c),
    liquid ``vbar`` (c), liquid ``ubar`` (c), vapour ``vbar`` (c), vapour
    ``ubar`` (c).
    """

    def __init__(
        self,
        components: Sequence[str],
        liquid: Sequence[float],
        temperatures: Sequence[float],
        backends: Sequence[str] = DEFAULT_BACKENDS,
    ):
        start = time.perf_counter()
        self.components = tuple(components)
        x0 = np.asarray(liquid, dtype=float)
        if x0.shape != (len(self.components),) or np.any(x0 <= 0.0):
            raise ValueError("every component of the reference liquid must be present (> 0)")
        self.reference = x0 / x0.sum()
        temps = np.asarray(temperatures, dtype=float)
        if temps.size < 4 or np.any(np.diff(temps) <= 0.0):
            raise ValueError("need at least 4 increasing temperatures")
        errors = []
        for backend in backends:
            try:
                # top first: a backend that fails, fails near the critical region
                rows = [self._row(backend, float(t)) for t in temps[::-1]][::-1]
            except (EquilibriumError, ValueError) as exc:
                errors.append(f"{backend}: {exc}")
                continue
            self.backend = backend
            break
        else:
            raise EquilibriumError(
                "could not tabulate the mixture's bubble curve: " + " | ".join(errors)
            )
        values = np.array(rows)
        self.temperatures = temps
        self.temperature_min = float(temps[0])
        self.temperature_max = float(temps[-1])
        self.molar_masses = np.array([_pure_molar_mass(c) for c in self.components])
        spline = CubicSpline(temps, values, axis=0, bc_type="not-a-knot")
        self._nodes = temps.tolist()
        self._coef = np.ascontiguousarray(np.transpose(spline.c, (1, 0, 2)))
        self._spline = spline
        self.size = len(self.components)
        self.build_seconds = time.perf_counter() - start

    def _row(self, backend: str, temperature: float) -> np.ndarray:
        x0 = self.reference
        eq = _saturation(self.components, x0, "bubble", "T", temperature, (backend,))
        y0 = np.asarray(eq.vapour.mole_fractions)
        x = np.asarray(eq.liquid.mole_fractions)
        p = eq.pressure
        vl, ul = partial_molar(backend, self.components, "liquid", x0, temperature, p)
        vv, uv = partial_molar(backend, self.components, "vapour", y0, temperature, p)
        ln_k = np.log(np.maximum(y0, 1e-300) / x)
        return np.concatenate([[math.log(p)], ln_k, vl, ul, vv, uv])

    # -- evaluation --------------------------------------------------------------
    def raw(self, temperature: float) -> tuple[np.ndarray, np.ndarray]:
        """All columns and their temperature derivatives at one temperature."""
        i = bisect.bisect_right(self._nodes, temperature) - 1
        i = min(max(i, 0), len(self._nodes) - 2)
        dt = temperature - self._nodes[i]
        c0, c1, c2, c3 = self._coef[i]
        value = ((c0 * dt + c1) * dt + c2) * dt + c3
        slope = (3.0 * c0 * dt + 2.0 * c1) * dt + c2
        return value, slope

    def split(self, columns: np.ndarray):
        """``(ln p0, ln K0, vL, uL, vV, uV)`` views of a column vector."""
        c = self.size
        return (columns[0], columns[1 : 1 + c], columns[1 + c : 1 + 2 * c],
                columns[1 + 2 * c : 1 + 3 * c], columns[1 + 3 * c : 1 + 4 * c],
                columns[1 + 4 * c : 1 + 5 * c])

    def contains(self, temperature: float) -> bool:
        return self.temperature_min <= temperature <= self.temperature_max

    def bubble_temperature(self, pressure: float, liquid=None) -> float:
        """Bubble temperature of a liquid (default the reference) at a pressure [Pa] -> [K]."""
        x = self.reference if liquid is None else np.asarray(liquid, dtype=float)
        target = math.log(pressure)
        lo, hi = self.temperature_min, self.temperature_max
        temp = 0.5 * (lo + hi)
        for _ in range(60):
            v, s = self.raw(temp)
            lnp, lnk, *_ = self.split(v)
            dlnp, dlnk, *_ = self.split(s)
            k = np.exp(lnk)
            total = float(np.dot(k, x))
            f = lnp + math.log(total) - target
            df = dlnp + float(np.dot(k * dlnk, x)) / total
            if f > 0.0:
                hi = temp
            else:
                lo = temp
            new = temp - f / df if df > 0 else 0.5 * (lo + hi)
            if not lo <= new <= hi:
                new = 0.5 * (lo + hi)
            if abs(new - temp) < 1e-11 * temp:
                return new
            temp = new
        return temp


class BubbleCurveKValues(MixtureTable):
    """A :class:`MixtureTable` with a convenience interface for flash work.

    ``nodes`` evenly spaced bubble points between ``temperature_min`` and
    ``temperature_max`` [K] for the reference liquid; K-values of a drifted
    liquid scale as :math:`K_i(T, p) = K_i^0(T)\\, p^0(T)/p` (Raoult/Henry),
    so its bubble pressure is :math:`p^0 \\sum_i K_i^0 x_i`. The error grows
    with the drift: refresh when :meth:`needs_refresh` says so.

    Parameters
    ----------
    liquid : Mixture or mapping
        Reference liquid composition [-]; every component present.
    temperature_min, temperature_max : float  [K]
    nodes : int  bubble-point calls, at least 4
    backends : sequence of str
    composition_tolerance : float
        :meth:`needs_refresh` is True once any mole fraction moved more than
        this from the reference [-].
    """

    def __init__(self, liquid, temperature_min: float, temperature_max: float, nodes: int = 9,
                 backends: Sequence[str] = DEFAULT_BACKENDS,
                 composition_tolerance: float = 1e-3):
        if nodes < 4:
            raise ValueError("need at least 4 nodes for cubic splines")
        if not temperature_max > temperature_min:
            raise ValueError("temperature_max must exceed temperature_min")
        mixture = _as_mixture(liquid)
        super().__init__(mixture.components, mixture.as_array(),
                         np.linspace(temperature_min, temperature_max, nodes), backends)
        self.composition_tolerance = float(composition_tolerance)

    def reference_k_values(self, temperature: float) -> np.ndarray:
        """K_i^0 on the reference liquid's bubble curve [-]."""
        return np.exp(self.split(self.raw(temperature)[0])[1])

    def reference_bubble_pressure(self, temperature: float) -> float:
        """Bubble pressure of the reference liquid [K] -> [Pa]."""
        return math.exp(float(self.raw(temperature)[0][0]))

    def k_values(self, temperature: float, pressure: float) -> np.ndarray:
        """K_i(T, p) = K_i^0(T) p^0(T) / p [-]."""
        return self.reference_k_values(temperature) * (
            self.reference_bubble_pressure(temperature) / pressure)

    def bubble_pressure(self, liquid, temperature: float) -> tuple[float, np.ndarray]:
        """Bubble pressure [Pa] and incipient vapour [-] of a liquid near the reference."""
        partial = (self.k_values(temperature, 1.0) * np.asarray(liquid, dtype=float))
        pressure = float(partial.sum())
        return pressure, partial / pressure

    def bubble_temperature(self, liquid, pressure: float) -> tuple[float, np.ndarray]:
        """Bubble temperature [K] and incipient vapour of a liquid at a pressure [Pa].

        Raises ValueError if the answer lies outside the table.
        """
        temp = MixtureTable.bubble_temperature(self, pressure, liquid)
        p, y = self.bubble_pressure(liquid, temp)
        if abs(math.log(p / pressure)) > 1e-6:
            raise ValueError(
                f"bubble temperature at {pressure:g} Pa lies outside the table "
                f"({self.temperature_min:.2f}-{self.temperature_max:.2f} K)")
        return temp, y

    def flash(self, feed, temperature: float, pressure: float):
        """Fast flash of a feed near the reference liquid: (beta, x, y) [-]."""
        return rachford_rice(feed, self.k_values(temperature, pressure))

    def saturated_properties(self, temperature: float) -> dict[str, float]:
        """Reference liquid at its bubble point and its incipient vapour (molar, SI).

        From the partial molar properties (Euler): v = sum x_i vbar_i, u = sum x_i ubar_i.
        """
        lnp, lnk, vl, ul, vv, uv = self.split(self.raw(temperature)[0])
        p = math.exp(lnp)
        x = self.reference
        y = np.exp(lnk) * x
        y /= y.sum()
        v_l, v_v = float(x @ vl), float(y @ vv)
        u_l, u_v = float(x @ ul), float(y @ uv)
        return {
            "pressure": p,
            "liquid_molar_density": 1.0 / v_l,
            "vapour_molar_density": 1.0 / v_v,
            "liquid_molar_enthalpy": u_l + p * v_l,
            "vapour_molar_enthalpy": u_v + p * v_v,
            "liquid_molar_internal_energy": u_l,
            "vapour_molar_internal_energy": u_v,
        }

    def needs_refresh(self, liquid, temperature: float) -> bool:
        """True if the liquid drifted past the tolerance or T left the table."""
        drift = float(np.max(np.abs(np.asarray(liquid, dtype=float) - self.reference)))
        return drift > self.composition_tolerance or not self.contains(temperature)


def node_temperatures(t_low: float, t_high: float, spacing: float = 2.0, minimum: int = 5):
    """Evenly spaced spline nodes over [t_low, t_high] at most ``spacing`` apart [K]."""
    count = max(minimum, int(math.ceil((t_high - t_low) / spacing)) + 1)
    return np.linspace(t_low, t_high, count)


# ---------------------------------------------------------------------------
# A pure-cargo-like saturation table for a mixture as loaded
# ---------------------------------------------------------------------------
#: Pressure range of the as-loaded bubble-curve table [Pa].
BUBBLE_TABLE_PRESSURES = (20e3, 3.0e6)
#: Spline nodes of the as-loaded table.
BUBBLE_TABLE_NODES = 28
#: Where a backend has no bubble point at the top of the range (near the
#: mixture's critical region), the range's span is cut to this share, at most
#: this many times, before the next backend is tried.
BUBBLE_TABLE_SHRINK, BUBBLE_TABLE_SHRINKS = 0.85, 8


@functools.lru_cache(maxsize=32)
def loaded_mixture_tables(fractions: tuple[tuple[str, float], ...]):
    """``(MixtureTable, SaturationTable)`` of a cargo mixture as loaded (cached).

    The :class:`~sim.cargo.SaturationTable` treats the loaded liquid as a
    pseudo-pure cargo on its bubble curve, so everything written for pure
    cargoes (facts, rated-boil-off calibration, IGC loading limit, pressure
    range checks) works for a mixture: liquid density of the loaded liquid,
    vapour density of the incipient vapour, and as "latent heat" the heat
    that boils off one kilogram of that vapour at fixed T and p,
    :math:`\\sum_i y_i (\\bar h^V_i - \\bar h^L_i) / M_y` (partial molar
    enthalpies), which is what the mixture tank model spends per kilogram of
    boil-off.

    Parameters
    ----------
    fractions : tuple of (name, mole fraction)
        The loaded liquid [-].
    """
    from .cargo import CargoInfo, SaturationTable

    mixture = Mixture.from_fractions(dict(fractions))
    comps, x0 = mixture.components, mixture.as_array()
    p_lo, p_hi = BUBBLE_TABLE_PRESSURES
    # Range from Wilson's K-value estimate (cheap, no flash); the table itself
    # is built on exact CoolProp bubble points (QT), shrinking the top end where
    # the mixture has no bubble point (near its critical region).
    t_lo = wilson_bubble_temperature(comps, x0, p_lo)
    t_hi = wilson_bubble_temperature(comps, x0, p_hi)
    # HEOS over a shorter range before Peng-Robinson over the whole: HEOS often
    # fails only near the mixture's critical region, where no cargo is carried,
    # and a cubic equation's liquid density is several per cent high
    table, errors = None, []
    others = tuple(b for b in DEFAULT_BACKENDS if b != "HEOS")
    for backends in (("HEOS",), others):
        top = t_hi
        for _ in range(BUBBLE_TABLE_SHRINKS):
            temps = np.linspace(t_lo, top, BUBBLE_TABLE_NODES)
            try:
                table = MixtureTable(comps, x0, temps, backends)
                break
            except EquilibriumError as exc:
                errors.append(str(exc))
                top = t_lo + BUBBLE_TABLE_SHRINK * (top - t_lo)
        if table is not None:
            break
    if table is None:
        raise EquilibriumError("could not tabulate the mixture's bubble curve: " + errors[-1])
    rows = []
    masses = table.molar_masses
    m_x = float(np.dot(x0, masses))
    for t in temps:
        v, _ = table.raw(float(t))
        lnp, lnk, vl, ul, vv, uv = table.split(v)
        p = math.exp(lnp)
        y = np.exp(lnk) * x0
        y /= y.sum()
        m_y = float(np.dot(y, masses))
        v_l = float(np.dot(x0, vl))
        v_v = float(np.dot(y, vv))
        h_v = float(np.dot(y, uv + p * vv)) / m_y
        h_l = float(np.dot(y, ul + p * vl)) / m_y  # the liquid that the vapour came from
        rows.append([
            lnp,
            math.log(m_y / v_v),
            m_x / v_l,
            h_l,
            h_v,
            float(np.dot(x0, ul)) / m_x,
            float(np.dot(y, uv)) / m_y,
        ])
    label = "Mixture " + ", ".join(f"{c} {100 * f:.4g} %" for c, f in fractions)
    info = CargoInfo("mixture", "", label, "mixture", "multicomponent cargo as loaded")
    sat = SaturationTable.from_values(
        info, temps, np.array(rows), molar_mass=m_x,
        temperature_critical=math.inf, pressure_critical=math.inf,
        temperature_triple=0.0, pressure_triple=0.0,
    )
    return table, sat


def wilson_bubble_temperature(components, liquid, pressure: float) -> float:
    """Bubble temperature estimated with Wilson's K-values [K].

    :math:`\\ln K_i = \\ln(p_{c,i}/p) + 5.373 (1 + \\omega_i)(1 - T_{c,i}/T)`, solved
    for :math:`\\sum_i x_i K_i = 1` by bisection. Critical constants and acentric
    factors from CoolProp. Used only to choose a table's temperature range.

    References
    ----------
    G. M. Wilson, "A modified Redlich-Kwong equation of state, application to
    general physical data calculations", AIChE 65th National Meeting, Cleveland,
    1968, paper 15C (the K-value estimate as reproduced in most flash texts).
    """
    tc, pc, omega = [], [], []
    for name in components:
        st = _state("HEOS", (MIXTURE_COMPONENTS[name],), "any")
        tc.append(st.T_critical())
        pc.append(st.p_critical())
        omega.append(st.acentric_factor())
    tc, pc, omega = np.array(tc), np.array(pc), np.array(omega)
    x = np.asarray(liquid, dtype=float)

    def excess(temp):
        k = pc / pressure * np.exp(5.373 * (1.0 + omega) * (1.0 - tc / temp))
        return float(np.dot(x, k)) - 1.0

    lo, hi = 20.0, 1000.0
    for _ in range(100):
        mid = 0.5 * (lo + hi)
        if excess(mid) > 0.0:
            hi = mid
        else:
            lo = mid
    return 0.5 * (lo + hi)

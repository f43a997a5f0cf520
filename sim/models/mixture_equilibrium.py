"""Equilibrium tank model for a multicomponent cargo (LNG, LPG blends).

Liquid and vapour share one temperature and are in phase equilibrium; the
vapour is the one in equilibrium with the (weathering) liquid. The state of
one tank is the conserved quantities only: moles of every component
:math:`n_i` and the internal energy U, so every component and the energy
balance close by construction:

.. math::

    \\dot n_i = -\\dot n_{out}\\, y_i, \\qquad
    \\dot U = \\dot Q - \\dot n_{out} h^V - \\dot n_{rl} (h^V - h^{ret})

Vapour leaving (fuel, oxidiser, relief) carries the equilibrium vapour
composition y; the reliquefaction plant draws vapour and returns it
condensed, as liquid of the same composition at tank temperature and
pressure (partial molar liquid enthalpies, :math:`h^{ret} = \\sum_i y_i \\bar
h^L_i`), so it removes :math:`h^V - h^{ret}` per mole.

Algebraic state
---------------
At (n, U, V) the temperature T, vapour mole fraction beta and pressure p
solve three equations, with :math:`K_i = K^0_i(T) p^0(T)/p`,
:math:`m_i = n_i / (1 + \\beta (K_i - 1))` (= moles of i per mole of liquid
times the total moles, i.e. :math:`N x_i`):

* phase equilibrium (Rachford-Rice): :math:`\\sum_i m_i = N`;
* volume: :math:`\\sum_i m_i [(1-\\beta) \\bar v^L_i + \\beta K_i \\bar v^V_i p^0/p] = V`;
* energy: :math:`\\sum_i m_i [(1-\\beta) \\bar u^L_i + \\beta K_i \\bar u^V_i] = U`.

Properties come from :class:`sim.mixture_table.MixtureTable` (K-values and
partial molar properties along the bubble curve of a reference liquid,
splined in T). Newton's method on (T, beta, ln p) with the analytic
Jacobian, warm-started from the last answer, converges in 1-3 steps. The
same Jacobian gives the pressure rate by the implicit-function theorem, so
the orchestrator's affine relation dp/dt = a0 - b_out m_out - b_rl m_rl is
exact for this state.

When the liquid drifts more than :data:`DRIFT_TOLERANCE` from the table's
reference, or the temperature leaves the table, :meth:`refresh` rebuilds the
table around the current liquid (the orchestrator calls it from a terminal
event); the state vector is unchanged, so nothing is lost or created.
"""

from __future__ import annotations

import math

import numpy as np

from ..mixture_table import MixtureTable, node_temperatures
from .equilibrium import TankState

#: First allowed change of any liquid mole fraction from the table's reference
#: before the table is rebuilt [-]. Afterwards the allowance adapts (see
#: :meth:`MixtureEquilibriumModel.refresh`).
DRIFT_TOLERANCE = 1e-3
#: Rebuilding the table moves the computed pressure by the table's error at
#: that drift; the drift allowance is scaled so this jump stays near this
#: relative size [-] (5e-4: about 55 Pa at 1.1 bar abs).
PRESSURE_JUMP_TARGET = 5e-4
#: Bounds of the adaptive drift allowance [-].
DRIFT_TOLERANCE_RANGE = (2.5e-4, 1e-2)
#: A rebuild that moves the pressure by more than this [-] says the old table
#: was poor (ten times the target); the run carries a warning with the size.
JUMP_WARNING = 5e-3
#: A rebuilt table spans this far below / above the current temperature [K].
REFRESH_SPAN = (3.0, 9.0)
#: Spline node spacing of rebuilt tables [K] (the as-loaded table's 3.3 K
#: spacing reproduces CoolProp to 1e-6; tests check 0.1 %).
REFRESH_SPACING = 3.0


class MixtureStateError(ValueError):
    """The mixture state could not be solved (left the two-phase region or the tables)."""


class MixtureEquilibriumModel:
    """Homogeneous saturated tank of a mixture: state ``[n_1 .. n_c, U]`` per tank.

    Parameters
    ----------
    table : MixtureTable
        Properties of the liquid as loaded (the first reference).
    volume : float  tank volume [m^3]
    ua_air, ua_sea : float  conductances toward air and sea [W/K]
    gross_molar : sequence of float or None
        Gross calorific value of each component [J/mol] (ISO 6976), for
        the energy carried by boil-off; None if a component has none.
    limits : tuple of float
        Temperatures a rebuilt table may span [K] (the as-loaded table's
        range).
    """

    name = "equilibrium"

    def __init__(self, table: MixtureTable, volume: float, ua_air: float, ua_sea: float,
                 shape=None, gross_molar=None, limits=None):
        self.table = table
        self.components = table.components
        self.size = len(self.components)
        self.volume = volume
        self.ua_air = ua_air
        self.ua_sea = ua_sea
        self.shape = shape
        self.masses = table.molar_masses
        self.gross_molar = None if gross_molar is None else np.asarray(gross_molar, dtype=float)
        self.limits = limits or (table.temperature_min, table.temperature_max)
        self.state_names = tuple(f"moles_{c}" for c in self.components) + ("internal_energy",)
        self.refreshes = 0
        self.drift_tolerance = DRIFT_TOLERANCE
        self.largest_jump = 0.0
        self.warnings: list[str] = []
        if table.backend != "HEOS":
            self.warnings.append(
                f"mixture properties from {table.backend} (Peng-Robinson): CoolProp's HEOS "
                "mixture model has no parameters for this composition; liquid densities of a "
                "cubic equation of state can be ~10 % high")
        self._guess = None

    # -- set-up ------------------------------------------------------------------
    def initial_state(self, fill: float, pressure: float, liquid=None) -> np.ndarray:
        """Tank filled to ``fill`` [-] with liquid ``liquid`` (default: the table's
        reference) at its bubble point at ``pressure`` [Pa], vapour in equilibrium."""
        x = self.table.reference if liquid is None else np.asarray(liquid, dtype=float)
        x = x / x.sum()
        temp = self.table.bubble_temperature(pressure, x)
        if np.any(np.diff(self.table.temperatures) > 1.01 * REFRESH_SPACING):
            # the as-loaded table spans the whole pressure range on coarse nodes; the
            # run starts on a table as fine as its rebuilds, so the first rebuild does
            # not step the pressure by the coarse table's interpolation error
            self.table = self._local_table(self.table.reference, temp)
            temp = self.table.bubble_temperature(pressure, x)
        v, _ = self.table.raw(temp)
        lnp, lnk, vl, ul, vv, uv = self.table.split(v)
        k = np.exp(lnk)
        p = math.exp(lnp) * float(np.dot(k, x))
        y = k * x / float(np.dot(k, x))
        ratio = math.exp(lnp) / p
        v_l = float(np.dot(x, vl))
        v_v = float(np.dot(y, vv)) * ratio
        n_l = fill * self.volume / v_l
        n_v = (1.0 - fill) * self.volume / v_v
        moles = n_l * x + n_v * y
        energy = n_l * float(np.dot(x, ul)) + n_v * float(np.dot(y, uv))
        total = n_l + n_v
        self._guess = (temp, n_v / total, math.log(p))
        self._warn_solids(x, temp)
        return np.concatenate([moles, [energy]])

    def _warn_solids(self, liquid, temperature: float) -> None:
        """Warn where carbon dioxide in a cold liquid may freeze out (not modelled)."""
        if "carbon-dioxide" not in self.components:
            return
        from ..mixture import _state

        co2 = float(liquid[self.components.index("carbon-dioxide")])
        t_triple = _state("HEOS", ("CarbonDioxide",), "any").Ttriple()
        text = (f"carbon dioxide at {1e6 * co2:.0f} ppm in a liquid at "
                f"{temperature - 273.15:.1f} degC, below CO2's triple point "
                f"({t_triple - 273.15:.1f} degC): it may freeze out (LNG specifications "
                "commonly hold CO2 to about 50 ppm - common practice, no source); solids are "
                "not modelled")
        if co2 > 0.0 and temperature < t_triple and text not in self.warnings:
            self.warnings.append(text)

    def state_scale(self, y) -> np.ndarray:
        """Magnitudes for absolute tolerances: total moles, and N times 20 kJ/mol."""
        total = float(np.sum(y[: self.size]))
        return np.concatenate([np.full(self.size, total), [total * 2e4]])

    # -- the algebraic solve ------------------------------------------------------
    def _residual(self, n, energy, total, temp, beta, q, want_jacobian=True):
        table = self.table
        v, s = table.raw(temp)
        lnp0, lnk, vl, ul, vv, uv = table.split(v)
        dlnp0, dlnk, dvl, dul, dvv, duv = table.split(s)
        k = np.exp(lnk + (lnp0 - q))
        r = math.exp(lnp0 - q)
        d = 1.0 + beta * (k - 1.0)
        m = n / d
        w = (1.0 - beta) * vl + beta * k * vv * r
        e = (1.0 - beta) * ul + beta * k * uv
        scale = total * 2e4
        res = np.array([
            m.sum() / total - 1.0,
            float(np.dot(m, w)) / self.volume - 1.0,
            (float(np.dot(m, e)) - energy) / scale,
        ])
        parts = (v, k, r, d, m, w, e, scale)
        if not want_jacobian:
            return res, parts, None
        g = dlnk + dlnp0  # d ln K / dT
        dm_dbeta = -m * (k - 1.0) / d
        dm_dk = -m * beta / d
        dm_dt = dm_dk * k * g
        dm_dq = -dm_dk * k
        dw_dbeta = -vl + k * vv * r
        dw_dt = (1.0 - beta) * dvl + beta * k * r * (vv * (g + dlnp0) + dvv)
        dw_dq = -2.0 * beta * k * vv * r
        de_dbeta = -ul + k * uv
        de_dt = (1.0 - beta) * dul + beta * k * (uv * g + duv)
        de_dq = -beta * k * uv
        jac = np.array([
            [dm_dt.sum() / total, dm_dbeta.sum() / total, dm_dq.sum() / total],
            [
                (float(np.dot(dm_dt, w)) + float(np.dot(m, dw_dt))) / self.volume,
                (float(np.dot(dm_dbeta, w)) + float(np.dot(m, dw_dbeta))) / self.volume,
                (float(np.dot(dm_dq, w)) + float(np.dot(m, dw_dq))) / self.volume,
            ],
            [
                (float(np.dot(dm_dt, e)) + float(np.dot(m, de_dt))) / scale,
                (float(np.dot(dm_dbeta, e)) + float(np.dot(m, de_dbeta))) / scale,
                (float(np.dot(dm_dq, e)) + float(np.dot(m, de_dq))) / scale,
            ],
        ])
        return res, parts, jac

    def _first_guess(self, n, energy, total):
        """Start for Newton without a previous answer: liquid ~ feed, volume split."""
        z = n / total
        table = self.table
        # pick the temperature whose saturated liquid+vapour energy matches, roughly
        best = None
        for temp in np.linspace(table.temperature_min, table.temperature_max, 25):
            v, _ = table.raw(float(temp))
            lnp0, lnk, vl, ul, vv, uv = table.split(v)
            k = np.exp(lnk)
            p = math.exp(lnp0) * float(np.dot(k, z))
            y = k * z / float(np.dot(k, z))
            v_l, v_v = float(np.dot(z, vl)), float(np.dot(y, vv)) * math.exp(lnp0) / p
            beta = (self.volume / total - v_l) / (v_v - v_l)
            if not 0.0 < beta < 1.0:
                continue
            u = (1 - beta) * float(np.dot(z, ul)) + beta * float(np.dot(y, uv))
            miss = abs(u * total - energy)
            if best is None or miss < best[0]:
                best = (miss, float(temp), beta, math.log(p))
        if best is None:
            raise MixtureStateError("no two-phase state fits the tank contents")
        return best[1:]

    def _newton(self, n, energy, total, temp, beta, q):
        """Newton's method on (T, beta, ln p) from a start; None if it does not converge."""
        for _ in range(40):
            res, parts, jac = self._residual(n, energy, total, temp, beta, q)
            if max(abs(res[0]), abs(res[1]), abs(res[2])) < 1e-13:
                return total, temp, beta, q, parts, jac
            try:
                step = np.linalg.solve(jac, res)
            except np.linalg.LinAlgError:
                return None
            dt, db, dq = (float(s) for s in step)
            # Damp: a sensible temperature move, and keep every 1 + beta (K_i - 1)
            # positive. beta may go slightly negative (past liquid-full) so the
            # orchestrator's liquid-full event can find the crossing,
            lam = 1.0
            lam = min(lam, 2.0 / abs(dt)) if dt else lam
            lam = min(lam, 0.3 / abs(dq)) if dq else lam
            k_max, k_min = float(parts[1].max()), float(parts[1].min())
            beta_min = -0.5 / (k_max - 1.0) if k_max > 1.0 else -0.5
            # and slightly above 1 (past the heel's end, liquid moles negative) so
            # the heel-exhausted event can find that crossing too
            beta_max = 0.5 * (1.0 + 1.0 / (1.0 - k_min)) if k_min < 1.0 else 1.0
            while not (beta_min < beta - lam * db < beta_max) and lam > 1e-6:
                lam *= 0.5
            temp, beta, q = temp - lam * dt, beta - lam * db, q - lam * dq
            if abs(lam * dt) < 1e-12 * temp and abs(lam * dq) < 1e-13 and lam == 1.0:
                res, parts, jac = self._residual(n, energy, total, temp, beta, q)
                return total, temp, beta, q, parts, jac
        return None

    def _solve(self, n, energy):
        total = float(n.sum())
        out = None
        if self._guess is not None:
            out = self._newton(n, energy, total, *self._guess)
        if out is None:
            out = self._newton(n, energy, total, *self._first_guess(n, energy, total))
        if out is None:
            raise MixtureStateError("mixture tank state did not converge (the contents lie "
                                    "outside the two-phase states the tables describe)")
        self._guess = out[1:4]
        return out

    # -- interface for the orchestrator --------------------------------------------
    def evaluate(self, y, air_temperature: float, sea_temperature: float) -> TankState:
        """Tank state for ``[n_1 .. n_c, U]`` and the ambient temperatures [K]."""
        n = np.asarray(y[: self.size], dtype=float)
        energy = float(y[self.size])
        total, temp, beta, q, parts, jac = self._solve(n, energy)
        v, k, r, d, m, w, e, _ = parts
        _, _, vl, ul, vv, uv = self.table.split(v)
        x = m / total
        yv = k * x
        p = math.exp(q)
        n_l, n_v = (1.0 - beta) * total, beta * total
        v_liquid = n_l * float(np.dot(x, vl))
        heat = self.ua_air * (air_temperature - temp) + self.ua_sea * (sea_temperature - temp)
        return TankState(
            p, temp, temp, v_liquid / self.volume,
            n_l * float(np.dot(x, self.masses)), n_v * float(np.dot(yv, self.masses)), heat,
            {"n": n, "total": total, "x": x, "y": yv, "jac": jac, "p": p, "r": r,
             "k": k, "d": d, "w": w, "e": e, "vl": vl, "ul": ul, "vv": vv, "uv": uv,
             "coefficients": None},
            liquid_fractions=x, vapour_fractions=yv,
        )

    def evaluate_many(self, y, air_temperature: float, sea_temperature: float) -> TankState:
        """:meth:`evaluate` for a 2-D array of states (one column each); fields are arrays."""
        y = np.asarray(y, dtype=float)
        states = [self.evaluate(y[:, j], air_temperature, sea_temperature)
                  for j in range(y.shape[1])]
        col = lambda name: np.array([getattr(s, name) for s in states])  # noqa: E731
        coefficients = np.array([self.pressure_rate_coefficients(s) for s in states]).T
        return TankState(
            col("pressure"), col("liquid_temperature"), col("vapour_temperature"), col("fill"),
            col("liquid_mass"), col("vapour_mass"), col("heat_in"),
            {"coefficients": tuple(coefficients)},
            liquid_fractions=np.array([s.liquid_fractions for s in states]).T,
            vapour_fractions=np.array([s.vapour_fractions for s in states]).T,
        )

    def _vapour_terms(self, state):
        ex = state._extra
        yv, p = ex["y"], ex["p"]
        m_y = float(np.dot(yv, self.masses))
        # h^V = u^V + p v^V with v^V_i scaled by p0/p
        h_vapour = float(np.dot(yv, ex["uv"] + p * ex["vv"] * ex["r"]))
        h_return = float(np.dot(yv, ex["ul"] + p * ex["vl"]))
        return yv, m_y, h_vapour, h_return

    def pressure_rate_coefficients(self, state: TankState) -> tuple[float, float, float]:
        """``(a0 [Pa/s], b_out [Pa/kg], b_rl [Pa/kg])`` of dp/dt = a0 - b_out m_out - b_rl m_rl.

        Implicit-function theorem on the three state equations: for a change
        ds of the state, J dw = -dR/ds ds with w = (T, beta, ln p).
        """
        ex = state._extra
        if ex["coefficients"] is not None:
            return ex["coefficients"]
        yv, m_y, h_v, h_ret = self._vapour_terms(state)
        total, d, w, e = ex["total"], ex["d"], ex["w"], ex["e"]
        scale = total * 2e4
        sum_x = float(np.sum(ex["n"] / d)) / total

        def d_res(dn, du):
            return np.array([
                float(np.dot(1.0 / d - sum_x, dn)) / total,
                float(np.dot(w / d, dn)) / self.volume,
                (float(np.dot(e / d, dn)) - du) / scale,
            ])

        rhs = np.column_stack([
            d_res(np.zeros(self.size), state.heat_in),
            d_res(-yv / m_y, -h_v / m_y),
            d_res(np.zeros(self.size), -(h_v - h_ret) / m_y),
        ])
        dq = -np.linalg.solve(ex["jac"], rhs)[2] * ex["p"]
        if state.heat_in > 0.0 and dq[0] <= 0.0:
            # heat into a closed rigid two-phase tank raises its pressure; a state
            # whose pressure would fall has left the region the tables describe
            # (seen when a long-vented LNG heel has lost most of its methane)
            raise MixtureStateError(
                "the mixture state is no longer physical in the model (heat in would "
                "lower the pressure): the liquid has weathered beyond what its property "
                "tables describe; results up to here stand")
        ex["coefficients"] = (float(dq[0]), -float(dq[1]), -float(dq[2]))
        return ex["coefficients"]

    def derivatives(self, state: TankState, vapour_out: float, reliquefied: float) -> np.ndarray:
        """d[n_1 .. n_c, U]/dt for vapour leaving and vapour reliquefied [kg/s]."""
        yv, m_y, h_v, h_ret = self._vapour_terms(state)
        n_out, n_rl = vapour_out / m_y, reliquefied / m_y
        out = np.empty(self.size + 1)
        out[: self.size] = -n_out * yv
        out[self.size] = state.heat_in - n_out * h_v - n_rl * (h_v - h_ret)
        return out

    def vapour_heating_value(self, state: TankState) -> float:
        """Gross calorific value of the boil-off [J/kg] (NaN without component values)."""
        if self.gross_molar is None:
            return math.nan
        yv = state._extra["y"]
        return float(np.dot(yv, self.gross_molar)) / float(np.dot(yv, self.masses))

    # -- table upkeep ---------------------------------------------------------------
    def refresh_margin(self, state: TankState) -> float:
        """Negative while the table serves the state; crosses 0 when it must be rebuilt."""
        drift = float(np.max(np.abs(state._extra["x"] - self.table.reference)))
        t = state.liquid_temperature
        # Near the as-loaded range's ends there is no wider table to move to.
        lo = self.table.temperature_min if self.table.temperature_min > self.limits[0] else -1e9
        hi = self.table.temperature_max if self.table.temperature_max < self.limits[1] else 1e9
        return max(drift / self.drift_tolerance - 1.0, (t - hi) / 0.5, (lo - t) / 0.5)

    def _local_table(self, liquid, temperature: float) -> MixtureTable:
        """A table around ``liquid`` from REFRESH_SPAN below to above ``temperature``."""
        lo = max(temperature - REFRESH_SPAN[0], self.limits[0])
        hi = min(temperature + REFRESH_SPAN[1], self.limits[1])
        return MixtureTable(self.components, liquid, node_temperatures(lo, hi, REFRESH_SPACING),
                            backends=(self.table.backend,))

    def refresh(self, y) -> None:
        """Rebuild the table around the current liquid and temperature.

        The pressure computed for the same state before and after the rebuild
        differs by the old table's error at the drift reached. That error is
        first order in the drift, so the drift allowance is scaled by
        ``PRESSURE_JUMP_TARGET / jump`` (at most halved or doubled per rebuild,
        within ``DRIFT_TOLERANCE_RANGE``): few rebuilds where the tables stay
        good (methane and ethane), more where they do not (nitrogen).
        """
        state = self.evaluate(y, 300.0, 300.0)
        x = np.maximum(state._extra["x"], 1e-15)
        t = state.liquid_temperature
        drifted = float(np.max(np.abs(state._extra["x"] - self.table.reference)))
        self.table = self._local_table(x, t)
        self.refreshes += 1
        jump = abs(math.log(self.evaluate(y, 300.0, 300.0).pressure / state.pressure))
        self.largest_jump = max(self.largest_jump, jump)
        if jump > JUMP_WARNING:
            words = ("the mixture property table was inaccurate here: rebuilding it around the "
                     "current liquid moved the computed pressure by")
            self.warnings[:] = [w for w in self.warnings if not w.startswith(words)]
            self.warnings.append(
                f"{words} up to {100.0 * self.largest_jump:.1f} % (at {t - 273.15:.1f} degC, "
                f"{self.table.backend}); pressures and times near such a step are uncertain by "
                "about that much")
        if drifted >= 0.5 * self.drift_tolerance:  # a drift rebuild, not a range one
            factor = min(max(PRESSURE_JUMP_TARGET / max(jump, 1e-12), 0.5), 2.0)
            low, high = DRIFT_TOLERANCE_RANGE
            self.drift_tolerance = min(max(self.drift_tolerance * factor, low), high)

    def context(self):
        """What :meth:`use` needs to evaluate states of the current segment later."""
        return self.table

    def use(self, context) -> None:
        self.table = context

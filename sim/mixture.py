"""Vapour-liquid equilibrium of multicomponent cargoes (LNG, LPG).

Building blocks for mixture cargoes, in SI (K, Pa absolute, mol, m^3, J):

* :class:`Mixture` -- component names and mole fractions, validated.
* Bubble and dew points (:func:`bubble_point_temperature`,
  :func:`bubble_point_pressure`, :func:`dew_point_temperature`,
  :func:`dew_point_pressure`) straight from CoolProp's ``PQ``/``QT`` mixture
  flashes, HEOS (GERG-2008-type multi-fluid model) first and Peng-Robinson
  only where HEOS fails; each result says which backend answered.
  :func:`first_vapour` is the incipient boil-off: the vapour in equilibrium
  with the liquid at its bubble point.
* :func:`flash` -- isothermal (T, p) flash by our own successive substitution
  on K-values with HEOS fugacity coefficients and :func:`rachford_rice`;
  CoolProp's own ``PT`` flash is kept as a slower fallback and reference
  (:func:`coolprop_flash`).
* ``BubbleCurveKValues`` -- the fast path for an integrator: ln K_i and
  saturated-phase properties splined against temperature along the bubble
  curve of one liquid composition, refreshed when the liquid drifts. It is a
  :class:`sim.mixture_table.MixtureTable` (the one spline-table mechanism for
  mixtures) and is importable from here for convenience.
* :func:`closed_tank_state` -- a rigid tank holding given moles of each
  component with a given internal energy: temperature, pressure, phase
  split and phase compositions by our own outer iteration on temperature
  over bubble-point calls (never CoolProp's mixture ``DmassUmass`` flash,
  which is slow and unreliable in two-phase mixtures).

Why these choices
-----------------
Measured on the project machines (see ``shared/NOTES.md`` and
:func:`benchmark`): CoolProp mixture ``PQ``/``QT`` flashes cost about 1-11 ms,
its ``PT`` flash 10-100 ms in two-phase and up to ~400 ms for a subcooled
liquid (stability analysis), while a phase-imposed ``PT`` density solve costs
0.1-0.3 ms and a ``DmolarT`` evaluation ~25 us. So the flash here uses
phase-imposed evaluations, and the voyage integrator should use the splined
K-values.

Liquid densities come from HEOS. Cubic Peng-Robinson without volume
translation overestimates saturated LNG liquid density by about 11 %, so a
result with ``backend == "PR"`` carries a cubic density: use it for phase
split and compositions, be wary of its volumes.

Enthalpies and internal energies are on CoolProp's reference states of the
pure components (the same as :mod:`sim.cargo` uses), so a one-component
mixture agrees with the pure-cargo path. Do not mix energies from different
backends: their reference states differ.

References
----------
.. [1] I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and Pseudo-pure
   Fluid Thermophysical Property Evaluation and the Open-Source Thermophysical
   Property Library CoolProp", Ind. Eng. Chem. Res. 53 (2014) 2498-2508,
   doi:10.1021/ie4033999.
.. [2] O. Kunz, W. Wagner, "The GERG-2008 Wide-Range Equation of State for
   Natural Gases and Other Mixtures", J. Chem. Eng. Data 57 (2012) 3032-3091,
   doi:10.1021/je300655b.
.. [3] H. H. Rachford, J. D. Rice, "Procedure for Use of Electronic Digital
   Computers in Calculating Flash Vaporization Hydrocarbon Equilibrium",
   J. Petrol. Technol. 4 (1952) 19-3.
.. [4] D.-Y. Peng, D. B. Robinson, "A New Two-Constant Equation of State",
   Ind. Eng. Chem. Fundam. 15 (1976) 59-64, doi:10.1021/i160057a011.
.. [5] M. L. Michelsen, "The isothermal flash problem. Part II. Phase-split
   calculation", Fluid Phase Equilib. 9 (1982) 21-40 (successive substitution
   on K-values from fugacity coefficients).
"""

from __future__ import annotations

import functools
import math
import time
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from .cargo import CATALOGUE

#: Components a mixture may contain: name -> CoolProp fluid name. Names follow
#: :data:`sim.cargo.CATALOGUE`; the pentanes are not (yet) cargoes there and are
#: added here. HEOS lacks some binary pairs (e.g. propylene + n-butane); such
#: mixtures are answered by the Peng-Robinson fallback.
MIXTURE_COMPONENTS: dict[str, str] = {
    **{
        name: CATALOGUE[name].coolprop_name
        for name in (
            "methane",
            "ethane",
            "propane",
            "n-butane",
            "isobutane",
            "nitrogen",
            "carbon-dioxide",
            "ethylene",
            "propylene",
        )
    },
    # Defer to the catalogue once it lists the pentanes.
    "n-pentane": CATALOGUE["n-pentane"].coolprop_name if "n-pentane" in CATALOGUE else "n-Pentane",
    "isopentane": (
        CATALOGUE["isopentane"].coolprop_name if "isopentane" in CATALOGUE else "Isopentane"
    ),
}

#: Backends tried in order by the bubble/dew/flash functions.
DEFAULT_BACKENDS: tuple[str, ...] = ("HEOS", "PR")

#: Mole fractions must sum to one within this [-].
FRACTION_SUM_TOLERANCE = 1e-6

# Peng-Robinson binary interaction parameters k_ij [-], used only on the PR
# fallback (CoolProp's cubic backends default every k_ij to 0). FROM MEMORY:
# values of the size commonly tabulated for PR with natural-gas components
# (e.g. in the compilation of Knapp et al., 1982); no single source checked.
# With them PR's LNG bubble point moves from ~2.5 K to ~0.5 K off HEOS
# (tests/test_mixture.py checks that they help).
PR_KIJ_FROM_MEMORY: dict[frozenset, float] = {
    frozenset(("methane", "nitrogen")): 0.0311,
    frozenset(("ethane", "nitrogen")): 0.0515,
    frozenset(("propane", "nitrogen")): 0.0852,
    frozenset(("n-butane", "nitrogen")): 0.0800,
    frozenset(("carbon-dioxide", "methane")): 0.0919,
    frozenset(("carbon-dioxide", "ethane")): 0.1322,
    frozenset(("carbon-dioxide", "propane")): 0.1241,
    frozenset(("carbon-dioxide", "n-butane")): 0.1333,
    frozenset(("carbon-dioxide", "nitrogen")): -0.0170,
    frozenset(("methane", "ethane")): -0.0026,
    frozenset(("methane", "propane")): 0.0140,
    frozenset(("methane", "n-butane")): 0.0133,
}


class EquilibriumError(ValueError):
    """No backend could compute the requested phase equilibrium."""


# --------------------------------------------------------------------------
# Mixture description
# --------------------------------------------------------------------------
@dataclass(frozen=True)
class Mixture:
    """Component names and mole fractions of a cargo mixture.

    Parameters
    ----------
    components : sequence of str
        Names from :data:`MIXTURE_COMPONENTS`, each at most once.
    mole_fractions : sequence of float
        One per component, each >= 0, summing to 1 within
        :data:`FRACTION_SUM_TOLERANCE` [-]. Stored renormalised so that they
        sum to 1 to round-off.

    Raises
    ------
    ValueError
        Unknown or repeated component, wrong lengths, negative or non-finite
        fractions, or a sum away from 1; the message names the components and
        the sum.

    Examples
    --------
    >>> lng = Mixture.from_fractions({"methane": 0.95, "ethane": 0.05})
    >>> lng.components
    ('methane', 'ethane')
    """

    components: tuple[str, ...]
    mole_fractions: tuple[float, ...]

    def __post_init__(self):
        names = tuple(self.components)
        fracs = tuple(float(v) for v in self.mole_fractions)
        if not names:
            raise ValueError("a mixture needs at least one component")
        if len(names) != len(fracs):
            raise ValueError(f"{len(names)} components but {len(fracs)} mole fractions: {names}")
        unknown = [n for n in names if n not in MIXTURE_COMPONENTS]
        if unknown:
            raise ValueError(
                f"unknown mixture component(s) {', '.join(map(repr, unknown))}; "
                f"allowed: {', '.join(MIXTURE_COMPONENTS)}"
            )
        repeated = sorted({n for n in names if names.count(n) > 1})
        if repeated:
            raise ValueError(f"component(s) listed twice: {', '.join(repeated)}")
        bad = [
            f"{n}={v!r}"
            for n, v in zip(names, fracs, strict=True)
            if not (math.isfinite(v) and v >= 0.0)
        ]
        if bad:
            raise ValueError(f"mole fractions must be finite and >= 0; got {', '.join(bad)}")
        total = math.fsum(fracs)
        if abs(total - 1.0) > FRACTION_SUM_TOLERANCE:
            listed = ", ".join(f"{n}={v:g}" for n, v in zip(names, fracs, strict=True))
            raise ValueError(
                f"mole fractions must sum to 1 within {FRACTION_SUM_TOLERANCE:g}; "
                f"got sum {total:.9g} for {listed}"
            )
        object.__setattr__(self, "components", names)
        object.__setattr__(self, "mole_fractions", tuple(v / total for v in fracs))

    @classmethod
    def from_fractions(cls, fractions: Mapping[str, float]) -> Mixture:
        """Build from a mapping name -> mole fraction [-]."""
        return cls(tuple(fractions), tuple(fractions.values()))

    @classmethod
    def pure(cls, name: str) -> Mixture:
        """A one-component 'mixture'."""
        return cls((name,), (1.0,))

    def as_dict(self) -> dict[str, float]:
        """Mapping name -> mole fraction [-]."""
        return dict(zip(self.components, self.mole_fractions, strict=True))

    def as_array(self) -> np.ndarray:
        """Mole fractions as an array in component order [-]."""
        return np.array(self.mole_fractions)

    @property
    def coolprop_names(self) -> tuple[str, ...]:
        """CoolProp fluid names in component order."""
        return tuple(MIXTURE_COMPONENTS[n] for n in self.components)

    @property
    def molar_mass(self) -> float:
        """Mixture molar mass [kg/mol] (CoolProp pure-fluid molar masses)."""
        return sum(
            x * _pure_molar_mass(n)
            for n, x in zip(self.components, self.mole_fractions, strict=True)
        )


@functools.cache
def _pure_molar_mass(name: str) -> float:
    return _state("HEOS", (MIXTURE_COMPONENTS[name],), "any").molar_mass()


# --------------------------------------------------------------------------
# Results
# --------------------------------------------------------------------------
@dataclass(frozen=True)
class PhaseState:
    """One phase of an equilibrium (all SI).

    Attributes
    ----------
    mole_fractions : tuple of float
        Composition, in the order of the owning result's ``components`` [-].
    molar_density : float  [mol/m^3]
    molar_mass : float  [kg/mol]
    molar_enthalpy : float  [J/mol]
    molar_internal_energy : float  [J/mol]
    """

    mole_fractions: tuple[float, ...]
    molar_density: float
    molar_mass: float
    molar_enthalpy: float
    molar_internal_energy: float

    @property
    def density(self) -> float:
        """Mass density [kg/m^3]."""
        return self.molar_density * self.molar_mass

    @property
    def enthalpy(self) -> float:
        """Specific enthalpy [J/kg]."""
        return self.molar_enthalpy / self.molar_mass

    @property
    def internal_energy(self) -> float:
        """Specific internal energy [J/kg]."""
        return self.molar_internal_energy / self.molar_mass


@dataclass(frozen=True)
class Equilibrium:
    """A phase-equilibrium result (bubble, dew or flash point).

    Attributes
    ----------
    components : tuple of str
        Component names, the order of every composition here.
    temperature : float  [K]
    pressure : float  [Pa]
    vapour_fraction : float
        Moles of vapour per mole of feed [-]: 0 at a bubble point or for a
        single-phase liquid, 1 at a dew point or for a single-phase vapour.
    liquid, vapour : PhaseState or None
        The phases; at a bubble point ``vapour`` is the incipient vapour, at a
        dew point ``liquid`` the incipient liquid. None where the phase does
        not exist (single-phase flash results).
    phase : str
        ``"two-phase"`` (includes bubble and dew points), ``"liquid"`` or
        ``"vapour"``.
    backend : str
        CoolProp backend that answered: ``"HEOS"`` or ``"PR"``.
    method : str
        How: ``"coolprop-PQ"``, ``"coolprop-QT"``, ``"successive-substitution"``,
        ``"coolprop-PT"``, ``"single-phase"``.
    """

    components: tuple[str, ...]
    temperature: float
    pressure: float
    vapour_fraction: float
    liquid: PhaseState | None
    vapour: PhaseState | None
    phase: str
    backend: str
    method: str

    @property
    def k_values(self) -> dict[str, float]:
        """Equilibrium ratios y_i/x_i [-] (two-phase results only; NaN where x_i = 0)."""
        if self.liquid is None or self.vapour is None:
            raise ValueError("K-values need both phases")
        return {
            n: (yi / xi if xi > 0 else math.nan)
            for n, xi, yi in zip(
                self.components, self.liquid.mole_fractions, self.vapour.mole_fractions, strict=True
            )
        }

    def liquid_fractions(self) -> dict[str, float]:
        """Liquid composition as a mapping [-]."""
        if self.liquid is None:
            raise ValueError("no liquid phase")
        return dict(zip(self.components, self.liquid.mole_fractions, strict=True))

    def vapour_fractions(self) -> dict[str, float]:
        """Vapour composition as a mapping [-]."""
        if self.vapour is None:
            raise ValueError("no vapour phase")
        return dict(zip(self.components, self.vapour.mole_fractions, strict=True))


# --------------------------------------------------------------------------
# CoolProp access
# --------------------------------------------------------------------------
@functools.lru_cache(maxsize=128)
def _state(backend: str, coolprop_names: tuple[str, ...], role: str):
    """A cached CoolProp AbstractState.

    ``role`` keeps states with different imposed phases apart: ``"flash"``
    and ``"any"`` free, ``"liquid"`` / ``"vapour"`` imposed. Not thread-safe.
    """
    import CoolProp
    from CoolProp.CoolProp import AbstractState

    state = AbstractState(backend, "&".join(coolprop_names))
    if backend == "PR" and len(coolprop_names) > 1:
        back = {v: k for k, v in MIXTURE_COMPONENTS.items()}
        for i in range(len(coolprop_names)):
            for j in range(i + 1, len(coolprop_names)):
                key = frozenset((back[coolprop_names[i]], back[coolprop_names[j]]))
                if key in PR_KIJ_FROM_MEMORY:
                    state.set_binary_interaction_double(i, j, "kij", PR_KIJ_FROM_MEMORY[key])
    if role == "liquid":
        state.specify_phase(CoolProp.iphase_liquid)
    elif role == "vapour":
        state.specify_phase(CoolProp.iphase_gas)
    return state


def _active(fractions: np.ndarray) -> np.ndarray:
    """Indices of the components present (CoolProp dislikes zero fractions)."""
    return np.flatnonzero(np.asarray(fractions) > 0.0)


def _expand(values: Sequence[float], active: np.ndarray, size: int) -> tuple[float, ...]:
    out = np.zeros(size)
    out[active] = values
    return tuple(out.tolist())


def _phase_from_saturation(state, which: str, pressure: float, fractions, active, size, names):
    import CoolProp

    getter = (
        state.saturated_liquid_keyed_output
        if which == "liquid"
        else state.saturated_vapor_keyed_output
    )
    rho = getter(CoolProp.iDmolar)
    h = getter(CoolProp.iHmolar)
    molar_mass = float(np.dot(fractions, [_pure_molar_mass_cp(n) for n in names]))
    return PhaseState(
        mole_fractions=_expand(fractions, active, size),
        molar_density=rho,
        molar_mass=molar_mass,
        molar_enthalpy=h,
        # u = h - p v: exact, and saves a call
        molar_internal_energy=h - pressure / rho,
    )


@functools.cache
def _pure_molar_mass_cp(coolprop_name: str) -> float:
    return _state("HEOS", (coolprop_name,), "any").molar_mass()


def _saturation(
    components: tuple[str, ...],
    fractions: np.ndarray,
    kind: str,
    given: str,
    value: float,
    backends: Sequence[str],
) -> Equilibrium:
    """Bubble (kind='bubble') or dew ('dew') point at given 'T' or 'P'."""
    import CoolProp

    size = len(components)
    active = _active(fractions)
    names = tuple(MIXTURE_COMPONENTS[components[i]] for i in active)
    z = fractions[active] / fractions[active].sum()
    quality = 0.0 if kind == "bubble" else 1.0
    errors = []
    for backend in backends:
        try:
            state = _state(backend, names, "flash")
            state.set_mole_fractions(z.tolist())
            if given == "P":
                state.update(CoolProp.PQ_INPUTS, value, quality)
            else:
                state.update(CoolProp.QT_INPUTS, quality, value)
            temperature, pressure = state.T(), state.p()
            x = np.array(state.mole_fractions_liquid())
            y = np.array(state.mole_fractions_vapor())
            liquid = _phase_from_saturation(state, "liquid", pressure, x, active, size, names)
            vapour = _phase_from_saturation(state, "vapour", pressure, y, active, size, names)
            _check_saturation(names, temperature, pressure, x, y, liquid, vapour)
        except ValueError as exc:  # CoolProp raises ValueError on failure
            errors.append(f"{backend}: {exc}")
            continue
        return Equilibrium(
            components=components,
            temperature=temperature,
            pressure=pressure,
            vapour_fraction=quality,
            liquid=liquid,
            vapour=vapour,
            phase="two-phase",
            backend=backend,
            method="coolprop-PQ" if given == "P" else "coolprop-QT",
        )
    given_text = f"p = {value:g} Pa" if given == "P" else f"T = {value:g} K"
    what = f"{kind} point at {given_text}"
    raise EquilibriumError(
        f"no backend could compute the {what} of "
        + ", ".join(f"{components[i]}={fractions[i]:g}" for i in active)
        + "; "
        + " | ".join(errors)
    )


def _check_saturation(names, temperature, pressure, x, y, liquid, vapour):
    """Reject answers that are not phase equilibria (raise ValueError)."""
    numbers = [
        temperature,
        pressure,
        liquid.molar_density,
        vapour.molar_density,
        liquid.molar_enthalpy,
        vapour.molar_enthalpy,
        *x,
        *y,
    ]
    if not all(math.isfinite(v) for v in numbers) or temperature <= 0 or pressure <= 0:
        raise ValueError("non-finite or non-positive result")
    if len(names) > 1 and float(np.max(np.abs(x - y))) < 1e-9:
        # A cubic solver can 'converge' to the trivial solution y = x.
        raise ValueError("trivial solution (vapour composition equals liquid)")
    if liquid.molar_density <= vapour.molar_density:
        raise ValueError("liquid not denser than vapour")


def _as_mixture(mixture: Mixture | Mapping[str, float]) -> Mixture:
    return mixture if isinstance(mixture, Mixture) else Mixture.from_fractions(mixture)


# --------------------------------------------------------------------------
# Public bubble / dew points
# --------------------------------------------------------------------------
def bubble_point_temperature(
    mixture: Mixture | Mapping[str, float],
    pressure: float,
    backends: Sequence[str] = DEFAULT_BACKENDS,
) -> Equilibrium:
    """Bubble-point temperature of a liquid at a pressure.

    Parameters
    ----------
    mixture : Mixture or mapping name -> mole fraction
        Liquid composition [-].
    pressure : float
        Absolute pressure [Pa].
    backends : sequence of str
        CoolProp backends to try in order (default HEOS, then PR).

    Returns
    -------
    Equilibrium
        ``temperature`` [K]; ``vapour`` is the incipient vapour (first
        boil-off); ``backend`` says which backend answered.

    Raises
    ------
    EquilibriumError
        No backend converged; the message carries each backend's error.
    """
    m = _as_mixture(mixture)
    return _saturation(m.components, m.as_array(), "bubble", "P", float(pressure), backends)


def bubble_point_pressure(
    mixture: Mixture | Mapping[str, float],
    temperature: float,
    backends: Sequence[str] = DEFAULT_BACKENDS,
) -> Equilibrium:
    """Bubble-point pressure of a liquid at a temperature [K] -> result in SI.

    Also the saturated-liquid and incipient-vapour properties (density,
    enthalpy, internal energy) of the mixture at that temperature. See
    :func:`bubble_point_temperature` for parameters and errors.
    """
    m = _as_mixture(mixture)
    return _saturation(m.components, m.as_array(), "bubble", "T", float(temperature), backends)


def dew_point_temperature(
    mixture: Mixture | Mapping[str, float],
    pressure: float,
    backends: Sequence[str] = DEFAULT_BACKENDS,
) -> Equilibrium:
    """Dew-point temperature of a vapour at a pressure [Pa] -> result in SI.

    ``liquid`` of the result is the incipient liquid (first condensate).
    See :func:`bubble_point_temperature` for parameters and errors.
    """
    m = _as_mixture(mixture)
    return _saturation(m.components, m.as_array(), "dew", "P", float(pressure), backends)


def dew_point_pressure(
    mixture: Mixture | Mapping[str, float],
    temperature: float,
    backends: Sequence[str] = DEFAULT_BACKENDS,
) -> Equilibrium:
    """Dew-point pressure of a vapour at a temperature [K] -> result in SI."""
    m = _as_mixture(mixture)
    return _saturation(m.components, m.as_array(), "dew", "T", float(temperature), backends)


def first_vapour(mixture: Mixture | Mapping[str, float], pressure: float) -> dict[str, float]:
    """Composition of the first vapour a liquid boils off at a pressure [Pa] -> [-].

    The incipient vapour in equilibrium with the liquid at its bubble point
    (what a tank's boil-off is made of at the moment it starts). With
    nitrogen in LNG it is strongly nitrogen-rich.
    """
    return bubble_point_temperature(mixture, pressure).vapour_fractions()


# --------------------------------------------------------------------------
# Rachford-Rice and the isothermal flash
# --------------------------------------------------------------------------
def rachford_rice(
    feed: Sequence[float], k_values: Sequence[float], tolerance: float = 1e-14
) -> tuple[float, np.ndarray, np.ndarray]:
    """Vapour fraction and phase compositions for given K-values.

    Solves :math:`\\sum_i z_i (K_i - 1) / (1 + \\beta (K_i - 1)) = 0` for the
    molar vapour fraction :math:`\\beta` by Newton's method safeguarded with
    bisection on [0, 1]; then :math:`x_i = z_i / (1 + \\beta (K_i - 1))`,
    :math:`y_i = K_i x_i`.

    Parameters
    ----------
    feed : sequence of float
        Overall mole fractions z [-].
    k_values : sequence of float
        Equilibrium ratios K = y/x, all > 0 [-].
    tolerance : float
        Absolute tolerance on beta [-].

    Returns
    -------
    beta : float
        Vapour fraction [-]; 0 if :math:`\\sum z K \\le 1` (liquid at or below
        its bubble point), 1 if :math:`\\sum z/K \\le 1` (vapour at or above its
        dew point).
    x, y : ndarray
        Liquid and vapour mole fractions [-]. For beta = 0, x = z and y is the
        incipient vapour; for beta = 1, y = z and x the incipient liquid.

    Notes
    -----
    The mass balance :math:`(1-\\beta) x + \\beta y = z` holds to round-off by
    construction; the compositions sum to one to within the residual of the
    Rachford-Rice equation.
    """
    # Plain Python floats: for the 2-11 components of a cargo this beats
    # numpy's per-call overhead several times over (the fast path calls it in
    # an ODE right-hand side).
    z = [float(v) for v in feed]
    k = [float(v) for v in k_values]
    if len(z) != len(k):
        raise ValueError(f"{len(z)} feed fractions but {len(k)} K-values")
    if min(k) <= 0.0:
        raise ValueError("K-values must be positive")
    km1 = [ki - 1.0 for ki in k]
    f_low = math.fsum(zi * ki for zi, ki in zip(z, k, strict=True)) - 1.0  # f(0)
    if f_low <= 0.0:
        y = np.array([zi * ki for zi, ki in zip(z, k, strict=True)])
        return 0.0, np.array(z), y / y.sum()
    f_high = 1.0 - math.fsum(zi / ki for zi, ki in zip(z, k, strict=True))  # f(1)
    if f_high >= 0.0:
        x = np.array([zi / ki for zi, ki in zip(z, k, strict=True)])
        return 1.0, x / x.sum(), np.array(z)
    # f is decreasing on [0, 1] with f(0) > 0 > f(1): start from the secant
    # root, then Newton steps kept inside the shrinking bracket.
    low, high = 0.0, 1.0
    beta = f_low / (f_low - f_high)
    for _ in range(100):
        f = 0.0
        df = 0.0
        for zi, ci in zip(z, km1, strict=True):
            t = ci / (1.0 + beta * ci)
            f += zi * t
            df -= zi * t * t
        if f > 0.0:
            low = beta
        else:
            high = beta
        new = beta - f / df
        if not (low < new < high):
            new = 0.5 * (low + high)
        done = abs(new - beta) <= tolerance
        beta = new
        if done or high - low <= tolerance:
            break
    x = np.array([zi / (1.0 + beta * ci) for zi, ci in zip(z, km1, strict=True)])
    return beta, x, np.array(k) * x


def _phase_eval(backend, names, role, fractions, temperature, pressure):
    """ln(fugacity coefficients), molar density, molar enthalpy of one phase."""
    import CoolProp

    state = _state(backend, names, role)
    state.set_mole_fractions(list(fractions))
    state.update(CoolProp.PT_INPUTS, pressure, temperature)
    ln_phi = np.log([state.fugacity_coefficient(i) for i in range(len(names))])
    return ln_phi, state.rhomolar(), state.hmolar()


def _phase_state(fractions, rho, h, pressure, active, size, names):
    masses = np.array([_pure_molar_mass_cp(n) for n in names])
    return PhaseState(
        mole_fractions=_expand(fractions, active, size),
        molar_density=rho,
        molar_mass=float(np.dot(fractions, masses)),
        molar_enthalpy=h,
        molar_internal_energy=h - pressure / rho,
    )


def flash(
    mixture: Mixture | Mapping[str, float],
    temperature: float,
    pressure: float,
    backends: Sequence[str] = DEFAULT_BACKENDS,
    tolerance: float = 1e-10,
    max_iterations: int = 100,
) -> Equilibrium:
    """Isothermal flash: phase split of a feed at a temperature and pressure.

    Parameters
    ----------
    mixture : Mixture or mapping
        Overall (feed) composition z [-].
    temperature : float  [K]
    pressure : float  [Pa]
    backends : sequence of str
        Backends to try in order.
    tolerance : float
        Convergence on max |change of ln K| between iterations [-].
    max_iterations : int
        Successive-substitution iterations before giving up on a backend.

    Returns
    -------
    Equilibrium
        ``phase`` is "two-phase", "liquid" or "vapour"; single-phase results
        carry the one phase and ``vapour_fraction`` 0 or 1.

    Notes
    -----
    1. Bubble point of the feed at T (CoolProp ``QT``). If p is at or above
       it, the feed is a (compressed) liquid: one phase-imposed evaluation.
    2. Otherwise successive substitution: K from the bubble point scaled by
       p_bubble/p; Rachford-Rice for beta, x, y; then
       :math:`\\ln K_i = \\ln\\varphi_i^L(T, p, x) - \\ln\\varphi_i^V(T, p, y)` from
       phase-imposed HEOS evaluations, until ln K stops changing. If RR puts
       the feed beyond its dew point, the result is a single vapour.
    3. If that fails (no convergence, a phase root missing), CoolProp's own
       ``PT`` flash on the same backend; then the next backend.

    Successive substitution converges linearly, quickly far from the critical
    point (cargo tanks), slowly near it; there the CoolProp fallback takes
    over.
    """
    m = _as_mixture(mixture)
    z_full = m.as_array()
    size = len(m.components)
    active = _active(z_full)
    names = tuple(MIXTURE_COMPONENTS[m.components[i]] for i in active)
    z = z_full[active] / z_full[active].sum()
    temperature, pressure = float(temperature), float(pressure)
    errors = []
    for backend in backends:
        try:
            bubble = _saturation(m.components, z_full, "bubble", "T", temperature, (backend,))
        except EquilibriumError as exc:
            # No bubble point at this T (e.g. above the mixture's critical
            # region): let CoolProp's own flash classify the phase.
            errors.append(str(exc))
            try:
                return coolprop_flash(m, temperature, pressure, backend)
            except ValueError as exc2:
                errors.append(f"{backend} PT flash: {exc2}")
            continue
        try:
            return _flash_ss(
                m.components,
                names,
                active,
                size,
                z,
                temperature,
                pressure,
                bubble,
                backend,
                tolerance,
                max_iterations,
            )
        except (ValueError, ArithmeticError) as exc:
            errors.append(f"{backend} successive substitution: {exc}")
        try:
            return coolprop_flash(m, temperature, pressure, backend)
        except ValueError as exc:
            errors.append(f"{backend} PT flash: {exc}")
    raise EquilibriumError(
        f"no backend could flash {m.as_dict()} at T = {temperature:g} K, p = {pressure:g} Pa; "
        + " | ".join(errors)
    )


def _flash_ss(
    components,
    names,
    active,
    size,
    z,
    temperature,
    pressure,
    bubble,
    backend,
    tolerance,
    max_iterations,
) -> Equilibrium:
    if pressure >= bubble.pressure:
        _, rho, h = _phase_eval(backend, names, "liquid", z, temperature, pressure)
        liquid = _phase_state(z, rho, h, pressure, active, size, names)
        return Equilibrium(
            components, temperature, pressure, 0.0, liquid, None, "liquid", backend, "single-phase"
        )
    if len(names) == 1:
        _, rho, h = _phase_eval(backend, names, "vapour", z, temperature, pressure)
        vapour = _phase_state(z, rho, h, pressure, active, size, names)
        return Equilibrium(
            components, temperature, pressure, 1.0, None, vapour, "vapour", backend, "single-phase"
        )
    x_b = np.array(bubble.liquid.mole_fractions)[active]
    y_b = np.array(bubble.vapour.mole_fractions)[active]
    ln_k = np.log(y_b / x_b) + math.log(bubble.pressure / pressure)
    for _ in range(max_iterations):
        beta, x, y = rachford_rice(z, np.exp(ln_k))
        if beta >= 1.0:
            # Beyond the dew point with these K: check with the vapour alone.
            _, rho, h = _phase_eval(backend, names, "vapour", z, temperature, pressure)
            vapour = _phase_state(z, rho, h, pressure, active, size, names)
            return Equilibrium(
                components,
                temperature,
                pressure,
                1.0,
                None,
                vapour,
                "vapour",
                backend,
                "successive-substitution",
            )
        x = x / x.sum()
        y = y / y.sum()
        ln_phi_l, rho_l, h_l = _phase_eval(backend, names, "liquid", x, temperature, pressure)
        ln_phi_v, rho_v, h_v = _phase_eval(backend, names, "vapour", y, temperature, pressure)
        new = ln_phi_l - ln_phi_v
        if not np.all(np.isfinite(new)):
            raise ArithmeticError("non-finite fugacity coefficients")
        change = float(np.max(np.abs(new - ln_k)))
        ln_k = new
        if change < tolerance:
            break
    else:
        raise ArithmeticError(f"no convergence in {max_iterations} iterations")
    beta, x, y = rachford_rice(z, np.exp(ln_k))
    if beta <= 0.0:
        _, rho, h = _phase_eval(backend, names, "liquid", z, temperature, pressure)
        liquid = _phase_state(z, rho, h, pressure, active, size, names)
        return Equilibrium(
            components,
            temperature,
            pressure,
            0.0,
            liquid,
            None,
            "liquid",
            backend,
            "successive-substitution",
        )
    if rho_l <= rho_v * (1.0 + 1e-6):
        raise ArithmeticError("liquid and vapour roots coincide (near-critical)")
    return Equilibrium(
        components,
        temperature,
        pressure,
        beta,
        _phase_state(x, rho_l, h_l, pressure, active, size, names),
        _phase_state(y, rho_v, h_v, pressure, active, size, names),
        "two-phase",
        backend,
        "successive-substitution",
    )


def coolprop_flash(
    mixture: Mixture | Mapping[str, float],
    temperature: float,
    pressure: float,
    backend: str = "HEOS",
) -> Equilibrium:
    """CoolProp's own (T, p) flash -- slow; a reference and a fallback.

    HEOS takes 10-100 ms in two-phase and several hundred ms for a subcooled
    liquid. Raises ValueError where CoolProp fails.
    """
    import CoolProp

    m = _as_mixture(mixture)
    z_full = m.as_array()
    size = len(m.components)
    active = _active(z_full)
    names = tuple(MIXTURE_COMPONENTS[m.components[i]] for i in active)
    z = z_full[active] / z_full[active].sum()
    state = _state(backend, names, "flash")
    state.set_mole_fractions(z.tolist())
    state.update(CoolProp.PT_INPUTS, float(pressure), float(temperature))
    quality = state.Q()
    if 0.0 <= quality <= 1.0 and len(names) > 1:
        x = np.array(state.mole_fractions_liquid())
        y = np.array(state.mole_fractions_vapor())
        liquid = _phase_from_saturation(state, "liquid", pressure, x, active, size, names)
        vapour = _phase_from_saturation(state, "vapour", pressure, y, active, size, names)
        return Equilibrium(
            m.components,
            float(temperature),
            float(pressure),
            quality,
            liquid,
            vapour,
            "two-phase",
            backend,
            "coolprop-PT",
        )
    rho, h = state.rhomolar(), state.hmolar()
    one = _phase_state(z, rho, h, float(pressure), active, size, names)
    # CoolProp's phase label; cubic backends can mislabel a vapour, which is
    # why this function is the last resort of :func:`flash`.
    if state.phase() in (CoolProp.iphase_liquid, CoolProp.iphase_supercritical_liquid):
        return Equilibrium(
            m.components,
            float(temperature),
            float(pressure),
            0.0,
            one,
            None,
            "liquid",
            backend,
            "coolprop-PT",
        )
    return Equilibrium(
        m.components,
        float(temperature),
        float(pressure),
        1.0,
        None,
        one,
        "vapour",
        backend,
        "coolprop-PT",
    )


def __getattr__(name):
    # The fast K-value table lives with the other spline tables in
    # sim.mixture_table (it imports this module, so it is fetched lazily).
    if name == "BubbleCurveKValues":
        from .mixture_table import BubbleCurveKValues

        return BubbleCurveKValues
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


# --------------------------------------------------------------------------
# Closed (rigid) tank
# --------------------------------------------------------------------------
@dataclass(frozen=True)
class TankState:
    """Equilibrium state of a rigid tank holding a mixture (all SI).

    Attributes
    ----------
    components : tuple of str
    temperature : float  [K]
    pressure : float  [Pa]
    vapour_fraction : float
        Moles of vapour / total moles [-].
    liquid, vapour : PhaseState
        Saturated liquid and equilibrium vapour.
    liquid_moles, vapour_moles : float  [mol]
    liquid_volume : float  [m^3]
    volume : float  [m^3]
    internal_energy : float  [J]
    backend : str
    iterations : int
        Temperatures tried by the outer solve (1 for a state at a given T).
    coolprop_calls : int
        Bubble-point calls used.
    """

    components: tuple[str, ...]
    temperature: float
    pressure: float
    vapour_fraction: float
    liquid: PhaseState
    vapour: PhaseState
    liquid_moles: float
    vapour_moles: float
    liquid_volume: float
    volume: float
    internal_energy: float
    backend: str
    iterations: int
    coolprop_calls: int

    @property
    def fill(self) -> float:
        """Liquid volume / tank volume [-]."""
        return self.liquid_volume / self.volume

    def component_moles(self) -> dict[str, float]:
        """Moles of each component in the tank, liquid plus vapour [mol]."""
        return {
            n: self.liquid_moles * xi + self.vapour_moles * yi
            for n, xi, yi in zip(
                self.components, self.liquid.mole_fractions, self.vapour.mole_fractions, strict=True
            )
        }


def _tank_split(
    components, moles, volume, temperature, backend, x_start, tolerance=1e-13, max_iterations=60
):
    """Phase split of a rigid tank at a temperature. Returns (TankState parts, calls).

    At fixed T the unknowns are the liquid composition x and the vapour
    fraction beta. For a trial x the bubble point at T gives p, the incipient
    vapour y (so K = y/x) and the saturated molar volumes v_L, v_V; the volume
    balance fixes beta = (V/N - v_L)/(v_V - v_L) and the component balances
    give the next x_i = z_i / (1 + beta (K_i - 1)) (renormalised). The update
    never subtracts, so it stays stable even with a large vapour share of a
    volatile component (nitrogen). Converges in a few calls because K and
    the molar volumes depend only weakly on x.
    """
    total = float(moles.sum())
    z = moles / total
    x = z.copy() if x_start is None else x_start.copy()
    calls = 0
    for _ in range(max_iterations):
        eq = _saturation(components, x, "bubble", "T", temperature, (backend,))
        calls += 1
        active = _active(x)
        xa = np.array(eq.liquid.mole_fractions)[active]
        ya = np.array(eq.vapour.mole_fractions)[active]
        k = np.ones(len(components))
        k[active] = ya / xa
        v_l = 1.0 / eq.liquid.molar_density
        v_v = 1.0 / eq.vapour.molar_density
        beta = (volume / total - v_l) / (v_v - v_l)
        if beta <= 0.0:
            raise ValueError(
                f"tank is liquid-full at T = {temperature:.3f} K (no vapour space): "
                f"saturated liquid alone needs {total * v_l:.6g} m^3 of {volume:.6g} m^3"
            )
        if beta >= 1.0:
            raise ValueError(
                f"no liquid left at T = {temperature:.3f} K: the tank holds only vapour"
            )
        new = z / (1.0 + beta * (k - 1.0))
        new /= new.sum()
        if float(np.max(np.abs(new - x))) < tolerance:
            x = new
            break
        x = new
    else:
        raise ArithmeticError(f"tank phase split did not converge at T = {temperature:.3f} K")
    n_v = beta * total
    n_l = total - n_v
    u = n_l * eq.liquid.molar_internal_energy + n_v * eq.vapour.molar_internal_energy
    return eq, beta, n_l, n_v, u, x, calls


def _tank_state(components, moles, volume, temperature, backend, x_start, iterations, calls):
    eq, beta, n_l, n_v, u, x, more = _tank_split(
        components, moles, volume, temperature, backend, x_start
    )
    return TankState(
        components=components,
        temperature=eq.temperature,
        pressure=eq.pressure,
        vapour_fraction=beta,
        liquid=eq.liquid,
        vapour=eq.vapour,
        liquid_moles=n_l,
        vapour_moles=n_v,
        liquid_volume=n_l / eq.liquid.molar_density,
        volume=float(volume),
        internal_energy=u,
        backend=eq.backend,
        iterations=iterations,
        coolprop_calls=calls + more,
    ), x


def _moles_array(moles: Mapping[str, float]) -> tuple[tuple[str, ...], np.ndarray]:
    components = tuple(moles)
    values = np.array([float(v) for v in moles.values()])
    unknown = [n for n in components if n not in MIXTURE_COMPONENTS]
    if unknown:
        raise ValueError(
            f"unknown mixture component(s) {', '.join(map(repr, unknown))}; "
            f"allowed: {', '.join(MIXTURE_COMPONENTS)}"
        )
    if not np.all(np.isfinite(values)) or np.any(values < 0) or values.sum() <= 0:
        raise ValueError(f"moles must be finite, >= 0 and not all zero; got {dict(moles)}")
    return components, values


def closed_tank_state_at_temperature(
    moles: Mapping[str, float],
    volume: float,
    temperature: float,
    backend: str = "HEOS",
) -> TankState:
    """Equilibrium state of a rigid tank at a given temperature.

    Parameters
    ----------
    moles : mapping name -> float
        Moles of each component in the tank, liquid plus vapour [mol].
    volume : float
        Tank volume [m^3].
    temperature : float  [K]
    backend : str
        One backend, used throughout (no silent fallback: energies of
        different backends are on different reference states).

    Returns
    -------
    TankState

    Raises
    ------
    ValueError
        The tank would be liquid-full or hold no liquid at that temperature,
        or the backend fails.
    """
    components, n = _moles_array(moles)
    state, _ = _tank_state(components, n, float(volume), float(temperature), backend, None, 1, 0)
    return state


def closed_tank_state(
    moles: Mapping[str, float],
    volume: float,
    internal_energy: float,
    temperature_guess: float,
    backend: str = "HEOS",
    temperature_tolerance: float = 1e-7,
    max_iterations: int = 40,
) -> TankState:
    """Equilibrium state of a rigid tank from its contents and internal energy.

    The (V, U, n) flash done our way: a safeguarded secant iteration on
    temperature, each trial solving the phase split at that temperature with
    bubble-point calls (see ``_tank_split``) and comparing the tank's internal
    energy :math:`U(T) = n_L u_L + n_V u_V` with the target. U rises
    monotonically with T in a closed two-phase tank (its heat capacity is
    positive), so a bracket, once found, holds the one root.

    Parameters
    ----------
    moles : mapping name -> float
        Moles of each component, liquid plus vapour [mol].
    volume : float
        Tank volume [m^3].
    internal_energy : float
        Total internal energy of the contents, on ``backend``'s reference
        state [J].
    temperature_guess : float
        Starting temperature, e.g. the previous state's [K].
    backend : str
        One CoolProp backend used throughout.
    temperature_tolerance : float
        Stop when the temperature step is below this [K].
    max_iterations : int
        Temperatures to try before giving up.

    Returns
    -------
    TankState
        ``iterations`` counts the temperatures tried, ``coolprop_calls`` the
        bubble-point calls.

    Raises
    ------
    ValueError
        No convergence, or the state leaves the two-phase region (tank
        liquid-full or dry).
    """
    components, n = _moles_array(moles)
    volume = float(volume)
    target = float(internal_energy)
    scale = max(abs(target), float(n.sum()) * 1e3)
    calls = 0
    x_warm = None

    def residual(temp):
        nonlocal calls, x_warm
        state, x = _tank_state(components, n, volume, temp, backend, x_warm, 0, 0)
        calls += state.coolprop_calls
        x_warm = x
        return state.internal_energy - target, state

    t0 = float(temperature_guess)
    f0, s0 = residual(t0)
    t1 = t0 + (0.5 if f0 < 0 else -0.5)
    f1, s1 = residual(t1)
    lo = hi = None  # bracket (temperature, residual)
    for t, f in ((t0, f0), (t1, f1)):
        if f < 0:
            lo = (t, f) if lo is None or t > lo[0] else lo
        else:
            hi = (t, f) if hi is None or t < hi[0] else hi
    best = s1
    for iteration in range(2, max_iterations + 1):
        if abs(f1 - f0) > 0:
            t2 = t1 - f1 * (t1 - t0) / (f1 - f0)
        else:
            t2 = t1 + 0.5
        if lo is not None and hi is not None:
            a, b = sorted((lo[0], hi[0]))
            if not (a < t2 < b):
                t2 = 0.5 * (a + b)
        else:
            # Without a bracket, cap the step: beyond a few kelvin the tank may
            # leave the two-phase region.
            t2 = t1 + max(min(t2 - t1, 5.0), -5.0)
        f2, s2 = residual(t2)
        if f2 < 0:
            lo = (t2, f2) if lo is None or t2 > lo[0] else lo
        else:
            hi = (t2, f2) if hi is None or t2 < hi[0] else hi
        t0, f0, t1, f1, best = t1, f1, t2, f2, s2
        if abs(t1 - t0) < temperature_tolerance or abs(f2) < 1e-13 * scale:
            return TankState(**{**best.__dict__, "iterations": iteration, "coolprop_calls": calls})
    raise ValueError(
        f"closed-tank solve did not converge in {max_iterations} temperatures "
        f"(last T = {t1:.6f} K, energy residual {f1:.3g} J)"
    )


# --------------------------------------------------------------------------
# Timings
# --------------------------------------------------------------------------
#: A typical lean LNG used by :func:`benchmark` and the docs (invented).
EXAMPLE_LNG = {
    "methane": 0.90,
    "ethane": 0.06,
    "propane": 0.02,
    "n-butane": 0.01,
    "nitrogen": 0.01,
}


def benchmark(repeats: int = 5) -> dict[str, float]:
    """Wall time per call of the main functions on :data:`EXAMPLE_LNG` [s].

    Run ``python -m sim.mixture`` to print the figures.
    """
    lng = Mixture.from_fractions(EXAMPLE_LNG)
    bubble_point_temperature(lng, 101_325.0)  # build and warm the states
    out = {}

    def timed(key, fn, n=repeats):
        start = time.perf_counter()
        for _ in range(n):
            fn()
        out[key] = (time.perf_counter() - start) / n

    timed("bubble_point_temperature", lambda: bubble_point_temperature(lng, 101_325.0))
    timed("bubble_point_pressure", lambda: bubble_point_pressure(lng, 115.0))
    timed("flash_two_phase", lambda: flash(lng, 115.0, 1.5e5))
    timed("flash_subcooled", lambda: flash(lng, 112.0, 3.0e5))
    timed("coolprop_flash_two_phase", lambda: coolprop_flash(lng, 115.0, 1.5e5), n=2)
    from .mixture_table import BubbleCurveKValues

    table = BubbleCurveKValues(EXAMPLE_LNG, 108.0, 125.0)  # a dict: safe under -m
    out["k_table_build"] = table.build_seconds
    x = lng.as_array()
    timed("k_table_bubble_pressure", lambda: table.bubble_pressure(x, 115.0), n=2000)
    timed("k_table_flash", lambda: table.flash(x, 115.0, 1.5e5), n=2000)
    moles = {k: v * 1e6 for k, v in EXAMPLE_LNG.items()}
    ref = closed_tank_state_at_temperature(moles, 42.0, 115.0)
    out["closed_tank_at_temperature"] = 0.0
    timed(
        "closed_tank_at_temperature",
        lambda: closed_tank_state_at_temperature(moles, 42.0, 115.0),
        n=2,
    )
    start = time.perf_counter()
    solved = closed_tank_state(moles, 42.0, ref.internal_energy, 113.0)
    out["closed_tank_state"] = time.perf_counter() - start
    out["closed_tank_state_calls"] = float(solved.coolprop_calls)
    return out


if __name__ == "__main__":  # pragma: no cover
    for key, value in benchmark().items():
        unit = "" if key.endswith("calls") else " ms"
        shown = value if key.endswith("calls") else value * 1e3
        print(f"{key:32s} {shown:10.3f}{unit}")

"""Two-zone tank model: superheated vapour over a thermally stratified liquid.

The equilibrium model (:mod:`sim.models.equilibrium`) keeps liquid and vapour
saturated at one temperature. In a quiet tank neither holds: the vapour, warmed
by the dry wall, is superheated, and the liquid under the free surface warms
faster than the liquid below it, so the pressure, which follows the surface,
rises faster than the homogeneous model says. This model keeps those effects
and nothing more:

* **vapour**: one lumped, well-mixed real-gas volume with its own temperature
  :math:`T_v`, heated by the dry wall; properties from CoolProp's Helmholtz
  equation of state evaluated at (density, temperature) directly, so no flash
  is needed inside the right-hand side;
* **interface**: massless, at the saturation temperature :math:`T_i` of the
  tank pressure; evaporation or condensation follows from its energy balance;
* **warm surface layer**: a stably stratified, conduction-dominated layer under
  the interface whose temperature falls from :math:`T_i` at the surface to the
  bulk temperature at depth :math:`\\delta` (a quadratic profile, the heat
  balance integral of Goodman 1958);
* **bulk liquid**: well mixed at :math:`T_b`, stirred by the wall boundary
  layer below the warm layer.

State
-----
Per tank ``[M_v, T_v, M_l, T_b, E/E_1]``: vapour mass [kg], vapour
temperature [K], liquid mass [kg], bulk liquid temperature [K] and the
*excess energy* E of the warm layer [J], the internal energy the liquid holds
above a liquid uniformly at :math:`T_b`, carried divided by the heat
:math:`E_1` that warms a tankful of liquid by 1 K (so it reads in kelvin and
gets a sensible integration tolerance). The liquid internal energy is exactly

.. math::

    U_l = M_l\\,u_l(T_b) + E

and the liquid volume, to first order in the excess,
:math:`V_l = M_l v_l(T_b) + \\kappa E` with
:math:`\\kappa = (dv_l/dT)/(du_l/dT)` on the saturated-liquid line. Liquid
properties are those of saturated liquid at the local temperature (the
compressed-liquid correction is about 0.01 K for the cases here). The vapour
fills the rest, :math:`\\rho_v = M_v / (V - V_l)`, and its equation of state
gives the pressure :math:`p(\\rho_v, T_v)`.

Warm layer
----------
With surface excess :math:`\\theta = T_i - T_b` and the quadratic profile
:math:`T - T_b = \\theta (1 - y/\\delta)^2` (y the depth), the layer holds
:math:`E = \\rho c S \\theta \\delta / 3` (S the free-surface area) and
conducts :math:`q_c = 2 k S \\theta / \\delta` into the liquid at the surface
(Goodman 1958). So :math:`\\delta = 3E/(\\rho c S \\theta)` is a function of
the state (with :math:`\\theta` taken no smaller than the wall excess
:math:`\\Delta T_w` below, under which no stable layer exists), and the layer
thickens as it stores heat. Heat reaches the layer

* by conduction from the surface, :math:`q_c`;
* from the wall band next to it: a stably stratified liquid turns heat
  entering the side wall into local warming (the wall boundary layer cannot
  climb through warmer liquid above it).

The wall band next to the layer sees the layer's mean temperature; once the
layer fills the tank (:data:`MAX_LAYER_SHARE` of the depth) it can store no
more and the band's heat goes to the surface instead.

The wall *below* the layer heats the bulk. The wall boundary layer reaches
the surface only with the part of its fluid warmer than the layer: with the
turbulent profiles of Eckert & Jackson (1950),
:math:`u \\propto \\eta^{1/7}(1-\\eta)^4` and
:math:`\\Delta T = \\Delta T_w (1 - \\eta^{1/7})`, the share of boundary-layer
heat carried by fluid warmer than :math:`\\theta` is
:func:`boundary_layer_heat_share` (1 for an unstratified liquid, 0 once
:math:`\\theta \\ge \\Delta T_w`, the wall-to-bulk excess from the Eckert &
Jackson wall Nusselt number). That heat is delivered to the interface, as in
the classic stratification analyses in which the wall boundary layer feeds the
surface region (Tellep & Harper 1963; Bailey et al. 1963), and the same share
of the boundary layer's mass flow (:func:`boundary_layer_mass_share`, Eckert &
Jackson's mass flow) stirs the layer into the bulk: the excess decays on the
time that flow takes to turn the liquid over. In a freshly mixed or vented
tank (:math:`\\theta \\approx 0`) all wall heat therefore reaches the surface
and the model boils off like the equilibrium model; once a warm layer forms
(:math:`\\theta > \\Delta T_w`, within minutes in a sealed tank), the wall
heat below it is trapped in the bulk; when a vented tank's bulk catches up with
its surface, the layer is stirred away again.

When the surface is *colder* than the bulk (:math:`\\theta < 0`, e.g. the
pressure pulled down by venting or reliquefaction) the top is cooled from
above and convects: the bulk gives heat to the interface with the
natural-convection coefficient of a horizontal surface cooling the fluid below
it, and any warm layer left is mixed into the bulk at the same coefficient.

Balances
--------
With evaporation :math:`\\dot m_e`, vapour leaving :math:`\\dot m_{out}` (fuel,
oxidiser, relief; taken at the vapour state) and vapour reliquefied
:math:`\\dot m_{rl}` (drawn at the vapour state, returned as saturated liquid
at tank pressure onto the surface, i.e. into the warm layer):

.. math::

    \\dot m_e\\,(h_{g,i} - h_{l,i}) &= Q_{vi} + Q_{top} - q_c \\\\
    \\dot M_v &= \\dot m_e - \\dot m_{out} - \\dot m_{rl} \\\\
    \\dot U_v &= Q_{dry} - Q_{vi} + \\dot m_e h_{g,i}
               - (\\dot m_{out} + \\dot m_{rl}) h_v - p \\dot V_v \\\\
    \\dot M_l &= -\\dot m_e + \\dot m_{rl} \\\\
    \\dot U_l &= Q_{wet} + Q_{vi} - \\dot m_e h_{g,i} + \\dot m_{rl} h_{l,i}
               - p \\dot V_l \\\\
    \\dot E &= q_c + Q_{band} - (u_{l,i} - u_b)(\\dot m_e - \\dot m_{rl})
              - M_s c_b \\dot T_b - \\dot E_{mix}

where :math:`Q_{vi}` is vapour-to-interface heat, :math:`Q_{top}` wall heat the
boundary layer carries to the surface, :math:`Q_{band}` wall heat deposited in
the layer, :math:`M_s = \\rho S \\delta` the layer mass. The last term of
:math:`\\dot E` says the excess shrinks when the bulk under the layer warms.
The sum :math:`\\dot U_v + \\dot U_l` is the first law of the whole tank
exactly. For fixed state every rate is affine in the two withdrawal rates, so
:math:`dp/dt = a_0 - b_{out}\\dot m_{out} - b_{rl}\\dot m_{rl}` holds exactly,
as the orchestrator's pressure control needs.

Heat transfer
-------------
* Walls: the insulation heat of :mod:`sim.heat`, :math:`U\\,A\\,\\Delta T`,
  split by area at the current level: the dry wall heats the vapour (at
  :math:`T_v`), the wetted wall the liquid (at :math:`T_b`).
* Vapour to interface: horizontal-surface natural convection, the fluid above
  a colder surface (stable): :math:`Nu = 0.27\\,Ra^{1/4}`, valid
  :math:`10^5 < Ra < 10^{10}`; above a warmer surface (unstable):
  :math:`Nu = 0.54\\,Ra^{1/4}` (:math:`10^4`-:math:`10^7`) and
  :math:`Nu = 0.15\\,Ra^{1/3}` (:math:`10^7`-:math:`10^{11}`) (McAdams 1954,
  as tabulated by Incropera et al.). Length scale: area over perimeter of a
  circle of the free-surface area. Film properties: saturated vapour at
  :math:`T_i`.
* Liquid cooled at the surface (:math:`\\theta < 0`): the unstable pair above,
  liquid properties at :math:`T_b`.
* Conduction along the tank wall (optional, ``wall_thickness`` and
  ``wall_conductivity``; off by default): the dry and the wetted wall are fins
  joined at the liquid line (:func:`wall_line_heat`, Incropera et al. 2007).
  The heat crossing the line is taken from the vapour's share of the wall
  heat and enters the liquid by the rules above for wall heat next to and
  below the warm layer.
* Wall excess :math:`\\Delta T_w`: Eckert & Jackson (1950) turbulent wall,
  :math:`Nu_x = 0.0210 (Gr_x Pr)^{2/5}`, with the wall heat flux and the liquid
  depth as running length.

Outside a correlation's stated range the model keeps using it (the nearest
form) and records a plain-words warning in :attr:`TwoZoneModel.warnings`
(large LNG tanks exceed :math:`Ra = 10^{10}` at the free surface routinely).
Cargoes for which CoolProp has no transport properties get corresponding-state
estimates from a similar fluid, also with a warning.

Mixing
------
:meth:`TwoZoneModel.mix` stands for an event that stirs the whole tank (heavy
weather sloshing, a cargo pump recirculating): the warm layer is mixed into
the bulk and the vapour, sprayed against the liquid, is brought to saturation;
the tank ends in the equilibrium state with the same mass, internal energy and
volume. The pressure falls to the saturation pressure of the mixed liquid.

References
----------
.. [1] E. R. G. Eckert, T. W. Jackson, "Analysis of turbulent free-convection
   boundary layer on flat plate", NACA Report 1015 (1951); NACA TN 2207 (1950).
.. [2] D. M. Tellep, E. Y. Harper, "Approximate analysis of propellant
   stratification", AIAA Journal 1(8) (1963) 1954-1956, doi:10.2514/3.1977.
.. [3] T. Bailey, R. VandeKoppel, G. Skartvedt, T. Jefferson, "Cryogenic
   propellant stratification analysis and test data correlation", AIAA Journal
   1(7) (1963) 1657-1659, doi:10.2514/3.1873.
.. [4] T. R. Goodman, "The heat-balance integral and its application to
   problems involving a change of phase", Trans. ASME 80 (1958) 335-342.
.. [5] W. H. McAdams, Heat Transmission, 3rd ed., McGraw-Hill (1954), ch. 7;
   F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, Fundamentals of
   Heat and Mass Transfer, 6th ed., Wiley (2007), section 9.6.2.
.. [6] B. E. Poling, J. M. Prausnitz, J. P. O'Connell, The Properties of
   Gases and Liquids, 5th ed., McGraw-Hill (2001), chs. 9-10 (corresponding
   states for transport properties).
.. [7] N. T. Van Dresar, C. S. Lin, M. M. Hasan, "Self-pressurization of a
   flightweight liquid hydrogen tank: effects of fill level at low wall heat
   flux", AIAA 92-0818 / NASA TM-105411 (1992) (validation data).
.. [8] F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine,
   Fundamentals of Heat and Mass Transfer, 6th ed., Wiley (2007), section 3.6
   (extended surfaces; conduction along the wall).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from ..cargo import SaturationTable
from .equilibrium import TankState

#: Standard gravity [m/s^2].
GRAVITY = 9.80665

#: Smallest conduction thickness of the warm layer [m]. A freshly formed
#: layer starts from zero thickness, where the conduction flux 2 k theta / delta
#: is unbounded; 0.1 mm bounds it without affecting anything measurable (the
#: layer passes that thickness within seconds of forming).
MIN_LAYER_THICKNESS = 1e-4

#: Largest share of the liquid depth (and mass) the warm layer may take [-].
#: Beyond it the two-zone picture (a layer over a mixed bulk) no longer holds;
#: the model caps the layer there and records a warning.
MAX_LAYER_SHARE = 0.95

#: Reference fluids for cargoes CoolProp has no transport models for
#: (corresponding states, Poling et al. 2001): a chemically similar fluid.
TRANSPORT_STAND_INS = {"Ethylene": "Ethane", "1-Butene": "n-Butane"}

#: Nodes of the transport-property table along the saturation line.
TRANSPORT_NODES = 121

#: Mass flow of the Eckert & Jackson turbulent wall boundary layer per unit
#: perimeter, :math:`\dot m' = C \mu Gr^{0.4} Pr^{-8/15} (1 + 0.494 Pr^{2/3})^{-0.4}`:
#: C = B(8/7, 5) * 1.185 * 0.565, the velocity profile integrated across the
#: boundary layer thickness and maximum velocity of Eckert & Jackson (1951).
EJ_MASS_FLOW = math.gamma(8 / 7) * math.gamma(5) / math.gamma(8 / 7 + 5) * 1.185 * 0.565


# ---------------------------------------------------------------------------
# Correlations (pure functions)


def _eta_integral(power: float, upper: float) -> float:
    """Integral of eta**power * (1 - eta)**4 from 0 to ``upper`` (closed form)."""
    total = 0.0
    for k, binom in enumerate((1.0, -4.0, 6.0, -4.0, 1.0)):
        n = k + power + 1.0
        total += binom * upper**n / n
    return total


_HEAT_FULL = _eta_integral(1.0 / 7.0, 1.0) - _eta_integral(2.0 / 7.0, 1.0)


def boundary_layer_heat_share(excess_ratio: float) -> float:
    """Share of wall boundary-layer heat carried by fluid warmer than the layer.

    Parameters
    ----------
    excess_ratio : float
        Surface-layer excess over the bulk divided by the wall excess,
        :math:`\\theta / \\Delta T_w` [-].

    Returns
    -------
    float
        Share of the boundary layer's heat flux (relative to the bulk) in
        fluid warmer than the layer [-]: 1 for ``excess_ratio <= 0``, 0 for
        ``excess_ratio >= 1``.

    Notes
    -----
    Eckert & Jackson's turbulent profiles across the boundary layer
    (:math:`\\eta = y/\\delta`): velocity
    :math:`u/u_1 = \\eta^{1/7} (1-\\eta)^4`, excess temperature
    :math:`\\Delta T / \\Delta T_w = 1 - \\eta^{1/7}`. Fluid with
    :math:`\\Delta T > \\theta` lies at :math:`\\eta < \\eta^* = (1 - r)^7`;
    the share is
    :math:`\\int_0^{\\eta^*} u \\Delta T\\, d\\eta / \\int_0^1 u \\Delta T\\, d\\eta`.

    References
    ----------
    .. [1] Eckert & Jackson, NACA Report 1015 (1951).

    Examples
    --------
    >>> boundary_layer_heat_share(0.0), boundary_layer_heat_share(1.0)
    (1.0, 0.0)
    >>> round(boundary_layer_heat_share(0.5), 4)
    0.051
    """
    if excess_ratio <= 0.0:
        return 1.0
    if excess_ratio >= 1.0:
        return 0.0
    upper = (1.0 - excess_ratio) ** 7
    return (_eta_integral(1.0 / 7.0, upper) - _eta_integral(2.0 / 7.0, upper)) / _HEAT_FULL


_MASS_FULL = _eta_integral(1.0 / 7.0, 1.0)


def boundary_layer_mass_share(excess_ratio: float) -> float:
    """Share of wall boundary-layer mass flow in fluid warmer than the layer.

    Parameters
    ----------
    excess_ratio : float
        :math:`\\theta / \\Delta T_w` as in :func:`boundary_layer_heat_share` [-].

    Returns
    -------
    float
        :math:`\\int_0^{\\eta^*} u\\, d\\eta / \\int_0^1 u\\, d\\eta` with the
        Eckert & Jackson velocity profile [-].

    Examples
    --------
    >>> boundary_layer_mass_share(0.0), boundary_layer_mass_share(1.0)
    (1.0, 0.0)
    """
    if excess_ratio <= 0.0:
        return 1.0
    if excess_ratio >= 1.0:
        return 0.0
    return _eta_integral(1.0 / 7.0, (1.0 - excess_ratio) ** 7) / _MASS_FULL


def horizontal_surface_nusselt(rayleigh: float, stable: bool) -> tuple[float, bool]:
    """Natural convection at a horizontal surface (McAdams 1954).

    Parameters
    ----------
    rayleigh : float
        Rayleigh number on the length scale area/perimeter [-].
    stable : bool
        True when the fluid is warmer above a cold surface or colder below a
        warm one (heat flows against gravity's mixing: stable layer); False for
        the convecting case.

    Returns
    -------
    tuple
        ``(Nusselt number [-], inside the correlation's range [bool])``.

    Notes
    -----
    Stable: :math:`Nu = 0.27 Ra^{1/4}` (:math:`10^5 \\le Ra \\le 10^{10}`).
    Unstable: :math:`Nu = 0.54 Ra^{1/4}` (:math:`10^4 \\le Ra \\le 10^7`),
    :math:`Nu = 0.15 Ra^{1/3}` (:math:`10^7 \\le Ra \\le 10^{11}`). Below the
    lower limits the forms are kept (the flux then vanishes smoothly with the
    temperature difference, which is all that matters there); only an
    extrapolation *above* the upper limit is reported as out of range.

    References
    ----------
    .. [1] W. H. McAdams, Heat Transmission, 3rd ed. (1954); Incropera et al.,
       Fundamentals of Heat and Mass Transfer, 6th ed. (2007), Eqs. 9.30-9.32.

    Examples
    --------
    >>> round(horizontal_surface_nusselt(1e8, stable=True)[0], 2)
    27.0
    >>> round(horizontal_surface_nusselt(1e9, stable=False)[0], 1)
    150.0
    """
    if rayleigh <= 0.0:
        return 0.0, True
    if stable:
        return 0.27 * rayleigh**0.25, rayleigh <= 1e10
    if rayleigh < 1e7:
        return 0.54 * rayleigh**0.25, True
    return 0.15 * rayleigh ** (1.0 / 3.0), rayleigh <= 1e11


def wall_excess_temperature(heat_flux: float, run_length: float, conductivity: float,
                            buoyancy_group: float) -> tuple[float, float]:
    """Wall-to-bulk temperature excess of a turbulent natural-convection wall.

    Parameters
    ----------
    heat_flux : float
        Heat flux into the liquid through the wall [W/m^2]; must be positive.
    run_length : float
        Height of wall the boundary layer has climbed [m].
    conductivity : float
        Liquid thermal conductivity [W/(m K)].
    buoyancy_group : float
        :math:`g \\beta Pr / \\nu^2` of the liquid [1/(K m^3)].

    Returns
    -------
    tuple of float
        ``(excess [K], Rayleigh number Gr_x Pr at that excess [-])``.

    Notes
    -----
    Eckert & Jackson (1950): :math:`Nu_x = q x/(k \\Delta T_w) = 0.0210
    (Gr_x Pr)^{2/5}`, :math:`Gr_x Pr = (g\\beta Pr/\\nu^2) \\Delta T_w x^3`,
    solved for :math:`\\Delta T_w`. Turbulent: intended for
    :math:`Gr_x Pr > 10^{10}`.

    References
    ----------
    .. [1] Eckert & Jackson, NACA Report 1015 (1951).
    """
    x = max(run_length, 1e-3)
    group = buoyancy_group * x**3
    excess = (heat_flux * x / (0.0210 * conductivity * group**0.4)) ** (1.0 / 1.4)
    return excess, group * excess


def wall_line_heat(wall_conductance: float, dry_flux: float, dry_coefficient: float,
                   dry_length: float, vapour_excess: float, wet_coefficient: float,
                   wet_excess: float, layer_excess: float, layer_thickness: float
                   ) -> tuple[float, float]:
    """Heat the tank wall conducts across the liquid line, and where it enters the liquid.

    Parameters
    ----------
    wall_conductance : float
        Wall conductivity times thickness, :math:`k t` [W/K].
    dry_flux : float
        Heat flux from the insulation into the dry wall, uniform [W/m^2].
    dry_coefficient : float
        Dry-wall-to-vapour heat-transfer coefficient :math:`h_d` [W/(m^2 K)].
    dry_length : float
        Dry wall from the liquid line to the top, along the wall [m]; its end
        is adiabatic (the top of the tank, a symmetry line).
    vapour_excess : float
        Vapour temperature minus surface temperature, :math:`T_v - T_i` [K].
    wet_coefficient : float
        Wetted-wall-to-liquid heat-transfer coefficient :math:`h_l` [W/(m^2 K)].
    wet_excess : float
        Wetted wall above the liquid next to it, :math:`\\Delta T_w = q''_w/h_l`
        (the insulation heat of the wetted wall) [K].
    layer_excess : float
        Surface above bulk, :math:`\\theta` (0 when there is no stable layer) [K].
    layer_thickness : float
        Warm-layer thickness :math:`\\delta`, measured along the wall [m].

    Returns
    -------
    tuple of float
        ``(across, below)`` per unit length of the liquid line [W/m]:
        ``across`` is the heat the dry wall hands to the wetted wall (taken
        from the dry wall's insulation heat and from the vapour), all of which
        the wetted wall gives to the liquid; ``below`` is the part of it given
        to the liquid below the warm layer, the rest enters the layer.

    Notes
    -----
    Both sides of the liquid line are fins of uniform cross-section (Incropera
    et al. 2007, section 3.6), joined at the line where the wall has one
    temperature :math:`w_0`. Temperatures here are measured from the surface
    temperature :math:`T_i`.

    *Dry side* (:math:`x` up the wall from the line): uniform heat input
    :math:`q''_d` and convection to the vapour,
    :math:`k t\\, w'' - h_d (w - T_v) + q''_d = 0` with an adiabatic end at
    :math:`L`. Measured from :math:`T_\\infty = T_v + q''_d/h_d` this is the
    adiabatic-tip fin, so with :math:`m_d = \\sqrt{h_d/(k t)}` the line
    receives :math:`k t\\, m_d \\tanh(m_d L) (T_\\infty - w_0)`: about the
    insulation heat falling within :math:`1/m_d` of the line,
    :math:`q''_d/m_d`, plus what the wall picks up from the vapour there.

    *Wetted side* (:math:`y` down the wall): the wall exchanges heat with
    the liquid next to it, whose temperature is the warm layer's quadratic
    profile :math:`T(y) = T_b + \\theta (1 - y/\\delta)^2` above
    :math:`y = \\delta` and :math:`T_b` below:
    :math:`k t\\, w'' - h_l (w - T(y)) + q''_w = 0`, :math:`w` bounded far
    down. With :math:`m_l = \\sqrt{h_l/(k t)}`, :math:`X = m_l \\delta` and
    :math:`f(X) = (1 - e^{-X})/X`, the piecewise solution (particular part
    :math:`T + \\Delta T_w + T''/m_l^2`, exponentials matched in value and
    slope at :math:`\\delta`) gives the heat entering the wetted wall at the
    line

    .. math::

        Q'_{wet} = k t \\left[ \\frac{2 \\theta}{\\delta} (1 - f(X))
                  + m_l (w_0 - \\Delta T_w) \\right]

    and the heat it carries below the layer,
    :math:`k t\\, m_l [e^{-X} (w_0 - \\Delta T_w) + \\theta f(X)^2]`.
    The first term of :math:`Q'_{wet}` is the wall conducting heat down the
    layer's temperature gradient in parallel with the liquid
    (:math:`k t \\cdot 2\\theta/\\delta` once the layer is much thicker
    than :math:`1/m_l`); for a layer thinner than :math:`1/m_l` the wall
    sees the bulk. Setting the two sides equal fixes :math:`w_0`.

    References
    ----------
    .. [1] F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine,
       Fundamentals of Heat and Mass Transfer, 6th ed., Wiley (2007),
       section 3.6 (extended surfaces: fin of uniform cross-section,
       adiabatic tip and infinite fin). The uniform heat input and the
       stratified surroundings enter through a particular solution (a shift
       of the reference temperature).

    Examples
    --------
    A long dry fin over an unstratified liquid, the wall well coupled to the
    liquid (:math:`h_l \\gg h_d`): the line takes about :math:`q''_d/m_d`,
    :math:`m_d = \\sqrt{10/0.04} = 15.8` 1/m.

    >>> across, below = wall_line_heat(0.04, 2.0, 10.0, 5.0, 0.0, 1e8, 0.0, 0.0, 0.0)
    >>> round(across, 4), round(below / across, 6)
    (0.1265, 1.0)
    """
    if wall_conductance <= 0.0 or wet_coefficient <= 0.0 or dry_length <= 0.0:
        return 0.0, 0.0
    kt = wall_conductance
    # dry side: Q' = a_d - b_d w0
    m_d = math.sqrt(max(dry_coefficient, 0.0) / kt)
    x_d = m_d * dry_length
    reach = math.tanh(x_d) / m_d if x_d > 1e-8 else dry_length  # tanh(mL)/m -> L
    b_d = kt * m_d * m_d * reach  # = h_d tanh(mL)/m
    a_d = dry_flux * reach + b_d * vapour_excess
    # wetted side: Q' = kt (G + m_l (w0 - dTw))
    m_l = math.sqrt(wet_coefficient / kt)
    theta = max(layer_excess, 0.0)
    x = m_l * max(layer_thickness, 0.0)
    if x < 1e-3:  # series of f(X) and (1 - f(X))/X about 0
        f = 1.0 - x / 2.0 + x * x / 6.0
        r = 0.5 - x / 6.0 + x * x / 24.0
    else:
        f = -math.expm1(-x) / x
        r = (1.0 - f) / x
    gradient = 2.0 * theta * m_l * r  # = 2 theta/delta (1 - f)
    w0 = (a_d - kt * gradient + kt * m_l * wet_excess) / (b_d + kt * m_l)
    across = a_d - b_d * w0
    below = kt * m_l * (math.exp(-x) * (w0 - wet_excess) + theta * f * f)
    return across, below


def contact_line_length(shape, level: float, free_surface: float) -> float:
    """Length of the line where the liquid surface meets the wall [m].

    Parameters
    ----------
    shape : TankShape
        Tank shape (:mod:`sim.geometry`).
    level : float
        Liquid level [m].
    free_surface : float
        Free-surface area at that level [m^2].

    Returns
    -------
    float
        The circumference of the (circular) free surface of a sphere or a
        vertical cylinder, :math:`2\\sqrt{\\pi S}`; for other shapes the rate of
        change of wetted area with level, :math:`dA_w/dz`, which equals the
        contact-line length where the wall is vertical and exceeds it where
        the wall slopes (an upper bound).
    """
    if getattr(shape, "name", "") in ("sphere", "vertical-cylinder"):
        return 2.0 * math.sqrt(math.pi * free_surface)
    top = float(shape.height())
    step = 1e-4 * top
    lo, hi = max(level - step, 0.0), min(level + step, top)
    if hi <= lo:
        return 0.0
    return float(shape.wetted_area(hi) - shape.wetted_area(lo)) / (hi - lo)


# ---------------------------------------------------------------------------
# Transport properties along the saturation line


@dataclass(frozen=True)
class _TransportTable:
    """Correlation groups of saturated liquid and vapour on a uniform T grid.

    Columns (each a list over the grid): liquid conductivity, liquid
    g*beta/(nu*alpha), liquid g*beta*Pr/nu^2, vapour conductivity, vapour
    g*beta/(nu*alpha), liquid boundary-layer mass-flow prefactor, liquid Prandtl
    number.
    """

    t0: float
    step: float
    columns: tuple
    note: str


def _saturated_transport(state, temperature: float, quality: float, stand_in=None):
    """(k, mu, cp, beta, rho) of saturated liquid (quality 0) or vapour (1)."""
    import CoolProp

    state.update(CoolProp.QT_INPUTS, quality, temperature)
    cp, beta, rho = state.cpmass(), state.isobaric_expansion_coefficient(), state.rhomass()
    if stand_in is None:
        return state.conductivity(), state.viscosity(), cp, beta, rho
    ref, ratio_mu, ratio_k = stand_in
    t_ref = temperature * ref.T_critical() / state.T_critical()
    ref.update(CoolProp.QT_INPUTS, quality, t_ref)
    return ref.conductivity() * ratio_k, ref.viscosity() * ratio_mu, cp, beta, rho


@functools.cache
def _transport_table(coolprop_name: str, t_min: float, t_max: float) -> _TransportTable:
    """Build (once per cargo) the correlation groups between ``t_min`` and ``t_max`` [K]."""
    from CoolProp.CoolProp import AbstractState

    state = AbstractState("HEOS", coolprop_name)
    stand_in = None
    note = ""
    if coolprop_name in TRANSPORT_STAND_INS:
        ref_name = TRANSPORT_STAND_INS[coolprop_name]
        ref = AbstractState("HEOS", ref_name)
        # Reducing parameters (Poling et al. 2001): mu ~ M^1/2 Pc^2/3 / Tc^1/6,
        # k ~ Pc^2/3 / (Tc^1/6 M^1/2).
        def scale(s):
            return s.molar_mass() * 1e3, s.p_critical() / 1e5, s.T_critical()

        m, pc, tc = scale(state)
        m_r, pc_r, tc_r = scale(ref)
        ratio_mu = (m / m_r) ** 0.5 * (pc / pc_r) ** (2 / 3) * (tc_r / tc) ** (1 / 6)
        ratio_k = (m_r / m) ** 0.5 * (pc / pc_r) ** (2 / 3) * (tc_r / tc) ** (1 / 6)
        stand_in = (ref, ratio_mu, ratio_k)
        note = (f"CoolProp has no transport properties for {coolprop_name}: viscosity and "
                f"thermal conductivity estimated from {ref_name} by corresponding states")
    temps = np.linspace(t_min, t_max, TRANSPORT_NODES)
    cols = [[], [], [], [], [], [], []]
    for t in temps:
        k, mu, cp, beta, rho = _saturated_transport(state, float(t), 0.0, stand_in)
        nu, alpha, pr = mu / rho, k / (rho * cp), mu * cp / k
        cols[0].append(k)
        cols[1].append(GRAVITY * beta / (nu * alpha))
        cols[2].append(GRAVITY * beta * pr / nu**2)
        # boundary-layer mass flow = this * Gr^0.4 per unit perimeter (Eckert & Jackson)
        cols[5].append(EJ_MASS_FLOW * mu * pr ** (-8 / 15) * (1 + 0.494 * pr ** (2 / 3)) ** -0.4)
        cols[6].append(pr)
        k, mu, cp, beta, rho = _saturated_transport(state, float(t), 1.0, stand_in)
        nu, alpha = mu / rho, k / (rho * cp)
        cols[3].append(k)
        cols[4].append(GRAVITY * abs(beta) / (nu * alpha))
    return _TransportTable(float(temps[0]), float(temps[1] - temps[0]),
                           tuple(tuple(c) for c in cols), note)


#: Nodes of the model's own uniform-grid helper tables (kappa, d ln p / dT).
HELPER_NODES = 801


@dataclass(frozen=True)
class _HelperTable:
    """Uniform-grid samples of saturation properties the model needs often.

    Columns: kappa = (dv_l/dT)/(du_l/dT), d(ln p_sat)/dT, h_l, h_g, u_l.
    Linear interpolation between nodes: kappa only scales the (small) thermal
    expansion of the warm layer; the slope of ln p only steers a Newton
    iteration whose answer is set by the saturation table itself; the
    enthalpies at the interface are good to about 1e-7 of the latent heat
    (node spacing about 0.1 K), and the first law of the tank holds exactly
    whatever values they take (each appears once as a gain and once as a loss).
    """

    t0: float
    step: float
    kappa: tuple
    dlnp: tuple
    h_liquid: tuple
    h_vapour: tuple
    u_liquid: tuple


@functools.cache
def _helper_table(table: SaturationTable) -> _HelperTable:
    temps = np.linspace(table.temperature_min, table.temperature_max, HELPER_NODES)
    cols = ([], [], [], [], [])
    for t in temps:
        v, s = table.raw(float(t))
        for col, value in zip(cols, (-s[2] / (v[2] * v[2]) / s[5], s[0], v[3], v[4], v[5])):
            col.append(value)
    return _HelperTable(float(temps[0]), float(temps[1] - temps[0]),
                        *(tuple(c) for c in cols))


@functools.cache
def _gas_state(coolprop_name: str):
    """A private CoolProp state for the vapour, forced to the gas phase.

    With the phase imposed, (density, temperature) inputs evaluate the
    equation of state directly (about 5 us with derivatives) and slightly
    subcooled (metastable) vapour stays single-phase instead of being split.
    """
    import CoolProp
    from CoolProp.CoolProp import AbstractState

    state = AbstractState("HEOS", coolprop_name)
    state.specify_phase(CoolProp.iphase_gas)
    return state


# ---------------------------------------------------------------------------


@dataclass(slots=True)
class _Point:
    """Everything one state vector implies (SI); the rates are linear in it."""

    vapour_mass: float
    vapour_density: float
    vapour_volume: float
    pressure: float
    u_v: float
    h_v: float
    cv_v: float
    dp_dt_v: float
    dp_drho_v: float
    du_drho_v: float
    liquid_mass: float
    u_b: float
    c_b: float
    v_b: float
    dv_b: float
    kappa: float
    dkappa: float
    excess: float
    layer_mass: float
    bulk_mass: float
    h_gi: float
    h_li: float
    u_li: float
    evaporation: float
    heat_dry: float
    heat_wet: float
    heat_vi: float
    heat_layer: float
    mix_rate: float
    stable: bool


class TwoZoneModel:
    """Superheated vapour over a stratified liquid: state ``[M_v, T_v, M_l, T_b, E/E_1]``.

    Parameters
    ----------
    table : SaturationTable
        Saturation properties of the cargo.
    volume : float
        Internal volume of one tank [m^3].
    ua_air, ua_sea : float
        Thermal conductance of the insulation toward the air and the sea [W/K].
    shape : TankShape
        Tank shape (:mod:`sim.geometry`); required, the model splits the heat
        by wetted and dry area and needs the free-surface area.
    wall_thickness : float, optional
        Metal wall thickness [m]; with ``wall_conductivity`` it enables
        conduction along the wall across the liquid line. Default 0: none.
    wall_conductivity : float, optional
        Wall thermal conductivity at cargo temperature [W/(m K)]. Default 0.

    Attributes
    ----------
    warnings : list of str
        Plain-words notes on correlations used outside their range or property
        estimates, in order of first occurrence.

    Notes
    -----
    See the module documentation for the equations. The model has no
    adjustable parameters: every closure is a published correlation or a
    conservation law; the two numerical guards are :data:`MIN_LAYER_THICKNESS`
    and :data:`MAX_LAYER_SHARE`.
    """

    name = "two-zone"
    state_names = ("vapour_mass", "vapour_temperature", "liquid_mass",
                   "bulk_liquid_temperature", "layer_excess")

    def __init__(self, table: SaturationTable, volume: float, ua_air: float, ua_sea: float,
                 shape=None, wall_thickness: float = 0.0, wall_conductivity: float = 0.0):
        if shape is None:
            raise ValueError("the two-zone model needs the tank shape (wetted, dry and "
                             "free-surface areas); none was given")
        if not (wall_thickness >= 0.0 and wall_conductivity >= 0.0):
            raise ValueError("wall thickness and conductivity must be zero or positive, got "
                             f"{wall_thickness!r} m and {wall_conductivity!r} W/(m K)")
        #: Conductance of the tank wall along itself, conductivity x thickness
        #: [W/K]; 0 (the default) leaves conduction along the wall out.
        self.wall_conductance = float(wall_thickness) * float(wall_conductivity)
        self.table = table
        self.volume = float(volume)
        self.ua_air = float(ua_air)
        self.ua_sea = float(ua_sea)
        self.shape = shape
        self.area = float(shape.surface_area())
        self.height = float(shape.height())
        ua = self.ua_air + self.ua_sea
        self.u_value = ua / self.area
        self.warnings: list[str] = []
        self._warned: set[str] = set()
        self._gas = _gas_state(table.cargo.coolprop_name)
        self._gas_t_max = float(self._gas.Tmax())
        self._transport = _transport_table(table.cargo.coolprop_name, table.temperature_min,
                                           table.temperature_max)
        self._helper = _helper_table(table)
        if self._transport.note:
            self._warn("transport", self._transport.note)
        self._last_interface = 0.5 * (table.temperature_min + table.temperature_max)
        # The warm layer's excess energy is carried in the state divided by the
        # heat that warms a tankful of liquid by 1 K, so it reads as a
        # temperature and gets the same absolute tolerance as the others.
        mid = table.at(self._last_interface)
        self.excess_scale = self.volume * mid.rho_liquid * self._liquid(mid.temperature)[3]

    # -- small helpers ------------------------------------------------------
    def _warn(self, key: str, text: str) -> None:
        """Record a warning once per kind (the first occurrence's text is kept)."""
        if key not in self._warned:
            self._warned.add(key)
            self.warnings.append(text)

    def _groups(self, temperature: float) -> list[float]:
        """Transport correlation groups at a temperature (linear interpolation)."""
        tr = self._transport
        x = (temperature - tr.t0) / tr.step
        i = int(x)
        if i < 0:
            i, x = 0, 0.0
        elif i > TRANSPORT_NODES - 2:
            i, x = TRANSPORT_NODES - 2, float(TRANSPORT_NODES - 1)
        f = x - i
        return [c[i] + f * (c[i + 1] - c[i]) for c in tr.columns]

    def _kappa(self, temperature: float) -> tuple[float, float]:
        """(kappa [m^3/J], d kappa/dT [m^3/(J K)]) from the helper table."""
        hp = self._helper
        x = (temperature - hp.t0) / hp.step
        i = min(max(int(x), 0), HELPER_NODES - 2)
        k0, k1 = hp.kappa[i], hp.kappa[i + 1]
        return k0 + (x - i) * (k1 - k0), (k1 - k0) / hp.step

    def _saturation_temperature(self, pressure: float) -> float:
        """Inverse of the table's vapour-pressure spline by Newton from the last answer [K].

        Kept inside the table's range: beyond it the orchestrator's
        triple-point and near-critical events stop the run.
        """
        table = self.table
        t_lo, t_hi = table.temperature_min, table.temperature_max
        if not pressure > 0.0:  # an integrator trial state far outside the physical range
            pressure = table.pressure_min
        target = math.log(pressure)
        temp = min(max(self._last_interface, t_lo), t_hi)
        for _ in range(12):
            step = (math.log(table.pressure(temp)) - target) / self._helper_slope(temp)
            new = min(max(temp - step, t_lo), t_hi)
            done = abs(new - temp) < 1e-11 * temp
            temp = new
            if done:
                break
        self._last_interface = temp
        return temp

    def _interface_enthalpies(self, temperature: float) -> tuple[float, float, float]:
        """(h_l, h_g, u_l) of the saturated phases from the helper table [J/kg]."""
        hp = self._helper
        x = (temperature - hp.t0) / hp.step
        i = min(max(int(x), 0), HELPER_NODES - 2)
        f = x - i
        return tuple(c[i] + f * (c[i + 1] - c[i])
                     for c in (hp.h_liquid, hp.h_vapour, hp.u_liquid))

    def _helper_slope(self, temperature: float) -> float:
        hp = self._helper
        x = (temperature - hp.t0) / hp.step
        i = min(max(int(x), 0), HELPER_NODES - 2)
        return hp.dlnp[i] + (x - i) * (hp.dlnp[i + 1] - hp.dlnp[i])

    def _liquid(self, temperature: float):
        """Saturated liquid (v, u, dv/dT, du/dT) at a temperature."""
        v, s = self.table.raw(temperature)
        rho = v[2]
        return 1.0 / rho, v[5], -s[2] / (rho * rho), s[5]

    def _ambient(self, air_temperature: float, sea_temperature: float) -> float:
        ua = self.ua_air + self.ua_sea
        if ua <= 0.0:
            return 0.0
        return (self.ua_air * air_temperature + self.ua_sea * sea_temperature) / ua

    # -- set-up ---------------------------------------------------------------
    def initial_state(self, fill: float, pressure: float) -> np.ndarray:
        """State of a tank filled to ``fill`` [-] with cargo saturated at ``pressure`` [Pa].

        Liquid and vapour start saturated and the liquid unstratified
        (``E = 0``), as after loading or a long spell at constant pressure.
        """
        temp = self.table.temperature(pressure)
        sat = self.table.at(temp)
        self._last_interface = temp
        return np.array([(1.0 - fill) * self.volume * sat.rho_vapour, temp,
                         fill * self.volume * sat.rho_liquid, temp, 0.0])

    # -- thermodynamics and heat transfer --------------------------------------
    def _vapour(self, density: float, temperature: float):
        import CoolProp

        gas = self._gas
        # Keep trial states of the integrator inside the equation of state's
        # range; a state this far out is rejected by the step-size control.
        temperature = min(max(temperature, self.table.temperature_min), self._gas_t_max)
        gas.update(CoolProp.DmassT_INPUTS, density, temperature)
        d = gas.first_partial_deriv
        return (gas.p(), gas.umass(), gas.hmass(), gas.cvmass(),
                d(CoolProp.iP, CoolProp.iT, CoolProp.iDmass),
                d(CoolProp.iP, CoolProp.iDmass, CoolProp.iT),
                d(CoolProp.iUmass, CoolProp.iDmass, CoolProp.iT))

    def _point(self, y, air_temperature: float, sea_temperature: float):
        """Evaluate one state vector: (TankState fields, _Point)."""
        vapour_mass, vapour_temp, liquid_mass, bulk_temp, scaled = (float(v) for v in y[:5])
        excess = scaled * self.excess_scale
        shape = self.shape
        v_b, u_b, dv_b, c_b = self._liquid(bulk_temp)
        kappa, dkappa = self._kappa(bulk_temp)
        liquid_volume = liquid_mass * v_b + kappa * excess
        vapour_volume = self.volume - liquid_volume
        # Trial steps of the integrator can overshoot past a vanishing vapour
        # space (liquid-full) or vapour mass (venting a nearly full tank); keep
        # the numbers finite so the step is rejected or the orchestrator's
        # liquid-full event fires.
        vapour_volume = max(vapour_volume, 1e-9 * self.volume)
        vapour_mass = max(vapour_mass, 1e-12 * self.volume)
        density = vapour_mass / vapour_volume
        p, u_v, h_v, cv_v, dp_dt, dp_drho, du_drho = self._vapour(density, vapour_temp)
        t_i = self._saturation_temperature(p)
        h_li, h_gi, u_li = self._interface_enthalpies(t_i)
        theta = t_i - bulk_temp

        level = shape.level(liquid_volume)
        wetted = shape.wetted_area(level)
        surface = max(shape.free_surface_area(level), 1e-6 * self.area)
        t_amb = self._ambient(air_temperature, sea_temperature)
        heat_dry = self.u_value * (self.area - wetted) * (t_amb - vapour_temp)
        heat_wet_bulk = self.u_value * wetted * (t_amb - bulk_temp)

        k_l, ra_l, bl_group, _, _, bl_mass, prandtl = self._groups(bulk_temp)
        k_v, ra_v = self._groups(t_i)[3:5]
        length = 0.5 * math.sqrt(surface / math.pi)  # area / perimeter of an equal circle

        # Wall boundary layer: excess at the wall and share reaching the surface.
        if heat_wet_bulk > 0.0 and wetted > 0.0:
            wall_excess, ra_wall = wall_excess_temperature(heat_wet_bulk / wetted, level, k_l,
                                                           bl_group)
            # Eckert & Jackson boundary-layer mass flow at the top of the wetted
            # wall, over the mean wetted perimeter (side wall area / level)
            perimeter = (wetted - shape.wetted_area(0.0)) / max(level, 1e-9)
            wall_mass_flow = perimeter * bl_mass * (ra_wall / prandtl) ** 0.4
            if ra_wall < 1e10 and level > 0.0:
                self._warn("wall-laminar",
                           "wall boundary layer below the turbulent range of Eckert & Jackson "
                           f"(Gr Pr = {ra_wall:.1e} < 1e10): its profiles are used anyway to "
                           "decide how much wall heat reaches the surface")
            share = boundary_layer_heat_share(theta / wall_excess)
        else:
            wall_excess, share, wall_mass_flow = 1e-6, 0.0, 0.0

        # Warm layer geometry from its excess energy (Goodman quadratic profile).
        rho_c = c_b / v_b
        depth = max(level, 1e-9)
        delta = 3.0 * max(excess, 0.0) / (rho_c * surface * max(theta, wall_excess))
        delta_max = MAX_LAYER_SHARE * depth
        # Once the layer fills the tank it cannot store the band's wall heat
        # any more; that heat then reaches the surface. Ramp over the last
        # tenth so the right-hand side stays continuous.
        deposit = min(max((delta_max - delta) / (0.1 * delta_max), 0.0), 1.0)
        if delta > delta_max:
            if excess > 0.0 and theta > 0.0:
                self._warn("layer-bottom",
                           "the warm surface layer reached the tank bottom: the two-zone "
                           "picture (warm layer over a mixed bulk) no longer holds there")
            delta = delta_max
        layer_mass = min(surface * delta / v_b, MAX_LAYER_SHARE * liquid_mass)
        bulk_mass = liquid_mass - layer_mass
        band = wetted - shape.wetted_area(max(level - delta, 0.0))

        stable = theta > 0.0
        if stable:
            conduction = 2.0 * k_l * theta * surface / max(delta, MIN_LAYER_THICKNESS)
            # Boundary-layer fluid warmer than the layer climbs into it (the
            # feeding of the stratified region in Tellep & Harper's analysis)
            # and stirs it into the bulk: the excess decays on the time that
            # flow takes to turn the liquid over.
            entering = wall_mass_flow * boundary_layer_mass_share(theta / wall_excess)
            mix_rate = entering / liquid_mass * excess
        else:
            nusselt, ok = horizontal_surface_nusselt(ra_l * (-theta) * length**3, stable=False)
            if not ok:
                self._warn("liquid-surface-range",
                           "liquid cooled at the surface beyond the range of the horizontal-"
                           "surface correlation (Ra > 1e11): extrapolated")
            coeff = nusselt * k_l / length
            conduction = coeff * surface * theta  # negative: heat from the bulk to the surface
            mix_rate = coeff * surface * excess / (liquid_mass * c_b)

        # Wall heat: the band next to the layer sees the layer's mean
        # temperature, the rest the bulk. Boundary-layer fluid warmer than the
        # layer carries its share to the surface; the band's remainder warms
        # the layer (as far as it can still store heat), the rest the bulk.
        layer_excess_mean = max(excess, 0.0) / (layer_mass * c_b) if layer_mass > 0.0 else 0.0
        heat_band = self.u_value * band * (t_amb - bulk_temp - layer_excess_mean)
        heat_below = self.u_value * (wetted - band) * (t_amb - bulk_temp)
        heat_wet = heat_below + heat_band
        heat_top = share * heat_below if heat_below > 0.0 else 0.0
        if heat_band > 0.0:
            stays = (1.0 - share) * heat_band
            heat_layer = deposit * stays
            heat_top += heat_band - heat_layer
        else:  # the layer is warmer than the surroundings and loses heat through the band
            heat_layer = heat_band

        dt_v = vapour_temp - t_i
        nusselt, ok = horizontal_surface_nusselt(ra_v * abs(dt_v) * length**3, stable=dt_v > 0)
        if not ok:
            self._warn("vapour-surface-range",
                       "vapour-to-surface natural convection beyond the range of the "
                       "horizontal-surface correlation (Ra above 1e10 stable / 1e11 "
                       "unstable): extrapolated")
        heat_vi = nusselt * k_v / length * surface * dt_v

        if self.wall_conductance > 0.0:
            heat_dry, heat_wet, heat_top, heat_layer = self._wall_conduction(
                heat_dry, heat_wet, heat_wet_bulk, heat_top, heat_layer, wetted, level, surface,
                vapour_temp - t_i, k_v, ra_v, wall_excess, theta if stable else 0.0,
                delta if stable else 0.0, share, deposit)

        # Interface energy balance; when the surface is colder than the bulk,
        # ``conduction`` is negative and is heat the bulk gives up.
        evaporation = (heat_vi + heat_top - conduction) / (h_gi - h_li)
        # heat entering the excess energy directly (state-only part)
        layer_heat = (conduction if stable else 0.0) + heat_layer

        point = _Point(vapour_mass, density, vapour_volume, p, u_v, h_v, cv_v, dp_dt, dp_drho,
                       du_drho, liquid_mass, u_b, c_b, v_b, dv_b, kappa, dkappa, excess,
                       layer_mass, bulk_mass, h_gi, h_li, u_li, evaporation, heat_dry,
                       heat_wet, heat_vi, layer_heat, mix_rate, stable)
        mean_temp = bulk_temp + excess / (liquid_mass * c_b)
        fields = (p, t_i, vapour_temp, liquid_volume / self.volume, liquid_mass, vapour_mass,
                  heat_dry + heat_wet, t_i, bulk_temp, mean_temp, delta)
        return fields, point

    def _wall_conduction(self, heat_dry, heat_wet, heat_wet_bulk, heat_top, heat_layer, wetted,
                         level, surface, vapour_excess, k_v, ra_v, wall_excess, theta, delta, share,
                         deposit):
        """Move the heat the wall conducts across the liquid line (:func:`wall_line_heat`).

        Returns ``(heat_dry, heat_wet, heat_top, heat_layer)`` [W]: the vapour's
        share of the wall heat less what the dry wall hands across the line;
        the liquid's share plus it. The part entering the liquid below the
        warm layer follows the rule for wall heat below the layer (the share
        of fluid warmer than the layer reaches the surface, the rest heats the
        bulk); the part entering the layer follows the rule for the band next
        to it (that share to the surface, the rest warms the layer while it
        can still store heat).
        """
        dry_area = self.area - wetted
        dry_length = self.height - level  # along the wall >= this; only tanh(m L) sees it
        if dry_area <= 0.0 or dry_length <= 0.0 or heat_wet_bulk <= 0.0 or wetted <= 0.0:
            return heat_dry, heat_wet, heat_top, heat_layer
        dry_flux = heat_dry / dry_area
        dry_coefficient = 0.0
        if dry_flux != 0.0:
            # Eckert & Jackson's turbulent wall with vapour properties, the dry
            # height as running length (g beta Pr / nu^2 = g beta / (nu alpha))
            gas_excess, _ = wall_excess_temperature(abs(dry_flux), dry_length, k_v, ra_v)
            dry_coefficient = abs(dry_flux) / gas_excess
        wet_coefficient = heat_wet_bulk / wetted / wall_excess
        across, below = wall_line_heat(self.wall_conductance, dry_flux, dry_coefficient,
                                       dry_length, vapour_excess, wet_coefficient, wall_excess,
                                       theta, delta)
        line = contact_line_length(self.shape, level, surface)
        across, below = line * across, line * below
        into_layer = across - below
        if below > 0.0:
            heat_top += share * below
        if into_layer > 0.0:
            kept = deposit * (1.0 - share) * into_layer
            heat_layer += kept
            heat_top += into_layer - kept
        else:
            heat_layer += into_layer
        return heat_dry - across, heat_wet + across, heat_top, heat_layer

    def evaluate(self, y, air_temperature: float, sea_temperature: float) -> TankState:
        """Tank state for a state vector and the ambient temperatures [K].

        ``liquid_temperature`` and ``surface_temperature`` are the temperature
        of the liquid at the interface, the saturation temperature of the
        tank pressure (as in the equilibrium model); ``bulk_liquid_temperature``
        is the mixed liquid below the warm layer.
        """
        fields, point = self._point(y, air_temperature, sea_temperature)
        p, t_i, t_v, fill, m_l, m_v, heat, t_s, t_b, _, _ = fields
        return TankState(p, t_i, t_v, fill, m_l, m_v, heat, point,
                         surface_temperature=t_s, bulk_liquid_temperature=t_b)

    def evaluate_many(self, y, air_temperature: float, sea_temperature: float) -> TankState:
        """Like :meth:`evaluate` for a 2-D array of states (one column each); fields are arrays."""
        y = np.asarray(y, dtype=float)
        rows = [self._point(y[:, j], air_temperature, sea_temperature)
                for j in range(y.shape[1])]
        cols = np.array([r[0] for r in rows]).T
        p, t_i, t_v, fill, m_l, m_v, heat, t_s, t_b, _, _ = cols
        points = [r[1] for r in rows]
        return TankState(p, t_i, t_v, fill, m_l, m_v, heat, points,
                         surface_temperature=t_s, bulk_liquid_temperature=t_b)

    def layer_profile(self, y, air_temperature: float, sea_temperature: float) -> dict:
        """Warm-layer diagnostics: mean liquid temperature [K] and layer thickness [m]."""
        fields, _ = self._point(y, air_temperature, sea_temperature)
        return {"mean_liquid_temperature": fields[9], "layer_thickness": fields[10]}

    # -- rates ----------------------------------------------------------------
    def _rates(self, point: _Point, vapour_out: float, reliquefied: float,
               sources: bool = True):
        """d(state)/dt and dp/dt; exactly affine in the two withdrawal rates.

        With ``sources=False`` every term that does not depend on the
        withdrawals is dropped, leaving the linear part alone (used for the
        pressure-control coefficients without cancellation).
        """
        pt = point
        on = 1.0 if sources else 0.0
        m_e = pt.evaporation * on
        d_mv = m_e - vapour_out - reliquefied
        d_ml = -m_e + reliquefied
        # heat to the excess energy, apart from the bulk-warming term
        a_e = (pt.heat_layer - pt.mix_rate) * on
        if pt.stable:
            a_e -= (pt.u_li - pt.u_b) * (m_e - reliquefied)
        b_l = (pt.heat_wet + pt.heat_vi) * on - m_e * pt.h_gi + reliquefied * pt.h_li
        # liquid volume rate = w0 + w1 * dT_b
        w0 = d_ml * pt.v_b + pt.kappa * a_e
        w1 = (pt.liquid_mass * pt.dv_b + pt.excess * pt.dkappa
              - pt.kappa * pt.layer_mass * pt.c_b)
        p = pt.pressure
        d_tb = (b_l - d_ml * pt.u_b - a_e - p * w0) / (pt.bulk_mass * pt.c_b + p * w1)
        d_e = a_e - pt.layer_mass * pt.c_b * d_tb
        d_vl = w0 + w1 * d_tb
        d_rho = (d_mv + pt.vapour_density * d_vl) / pt.vapour_volume
        b_v = ((pt.heat_dry - pt.heat_vi) * on + m_e * pt.h_gi
               - (vapour_out + reliquefied) * pt.h_v)
        d_tv = ((b_v + p * d_vl - pt.u_v * d_mv - pt.vapour_mass * pt.du_drho_v * d_rho)
                / (pt.vapour_mass * pt.cv_v))
        d_p = pt.dp_dt_v * d_tv + pt.dp_drho_v * d_rho
        return [d_mv, d_tv, d_ml, d_tb, d_e / self.excess_scale], d_p

    def pressure_rate_coefficients(self, state: TankState) -> tuple[float, float, float]:
        """Coefficients of dp/dt = a0 - b_out*m_out - b_rl*m_rl.

        Returns ``(a0 [Pa/s], b_out [Pa/kg], b_rl [Pa/kg])``. The rates are
        affine in the withdrawals for a fixed state, so three evaluations give
        the coefficients exactly (to round-off).
        """
        points = state._extra
        if isinstance(points, list):  # from evaluate_many: one point per column
            rows = np.array([self._coefficients(pt) for pt in points])
            return rows[:, 0], rows[:, 1], rows[:, 2]
        return self._coefficients(points)

    def _coefficients(self, pt: _Point) -> tuple[float, float, float]:
        return (self._rates(pt, 0.0, 0.0)[1], -self._rates(pt, 1.0, 0.0, sources=False)[1],
                -self._rates(pt, 0.0, 1.0, sources=False)[1])

    def derivatives(self, state: TankState, vapour_out: float, reliquefied: float) -> list[float]:
        """d[M_v, T_v, M_l, T_b, E/E_1]/dt for vapour leaving and vapour reliquefied [kg/s]."""
        return self._rates(state._extra, vapour_out, reliquefied)[0]

    # -- mixing -----------------------------------------------------------------
    def internal_energy(self, y) -> float:
        """Internal energy of the tank contents for a state vector [J]."""
        vapour_mass, vapour_temp, liquid_mass, bulk_temp, scaled = (float(v) for v in y[:5])
        excess = scaled * self.excess_scale
        v_b, u_b, dv_b, c_b = self._liquid(bulk_temp)
        vapour_volume = self.volume - liquid_mass * v_b - dv_b / c_b * excess
        u_v = self._vapour(vapour_mass / vapour_volume, vapour_temp)[1]
        return vapour_mass * u_v + liquid_mass * u_b + excess

    def mix(self, y) -> np.ndarray:
        """Stir the tank: the state at equilibrium with the same mass, energy and volume.

        Parameters
        ----------
        y : array_like
            State vector ``[M_v, T_v, M_l, T_b, E/E_1]``.

        Returns
        -------
        ndarray
            Saturated liquid and vapour at one temperature, no warm layer.

        Notes
        -----
        Solves :math:`U = M u_l + (V - M v_l)(u_v - u_l)/(v_v - v_l)` for the
        saturation temperature (bisection and secant on the spline table),
        then splits the mass between the phases. Internal energy is conserved
        to the accuracy of the table against CoolProp (about 1e-6 of the
        latent heat per kg).
        """
        mass = float(y[0]) + float(y[2])
        energy = self.internal_energy(y)
        volume = self.volume
        table = self.table

        def residual(temp):
            v, _ = table.raw(temp)
            v_l, v_v = 1.0 / v[2], math.exp(-v[1])
            vap = (volume - mass * v_l) / (v_v - v_l)
            return (mass - vap) * v[5] + vap * v[6] - energy, vap

        lo, hi = table.temperature_min, table.temperature_max
        f_lo, f_hi = residual(lo)[0], residual(hi)[0]
        if f_lo > 0.0 or f_hi < 0.0:
            raise ValueError("mixing: the stirred tank would lie outside the saturation "
                             "table (below the triple point or near the critical point)")
        temp = float(y[3])
        for _ in range(100):
            f, _ = residual(temp)
            if f > 0.0:
                hi, f_hi = temp, f
            else:
                lo, f_lo = temp, f
            if hi - lo < 1e-12 * hi:
                break
            # secant inside the bracket, bisection if it falls outside
            trial = hi - f_hi * (hi - lo) / (f_hi - f_lo)
            temp = trial if lo < trial < hi else 0.5 * (lo + hi)
        vapour = residual(temp)[1]
        self._last_interface = temp
        return np.array([vapour, temp, mass - vapour, temp, 0.0])


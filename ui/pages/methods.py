"""Methods page: what the model assumes, its equations in words, its limits, references."""

from __future__ import annotations

import streamlit as st

from sim.energy import REFERENCE_TEXT
from sim.models import MODEL_DESCRIPTIONS

TEXT = r"""
### Tank model: equilibrium

Every cargo tank is rigid and holds liquid and vapour **saturated at one
temperature**, the boiling point at the tank pressure. The state of one tank is
its cargo mass $M$ and internal energy $U$; volume $V$ is fixed, so pressure,
temperature, fill and the split between liquid and vapour all follow from $M/V$
and $U/M$ through the cargo's saturation properties. Identical tanks behave the
same, so one is computed and the results are multiplied by the number of tanks.

**Mass balance.** Cargo leaves the tank only as vapour taken by the engines, the
oxidiser or the relief valves: $\dot M = -\dot m_{out}$. Vapour drawn by the
reliquefaction plant comes back as liquid and stays on board.

**Energy balance.** Heat flowing in raises the energy; vapour leaving carries
away its enthalpy; reliquefied vapour returns as saturated liquid, taking away
its latent heat:

$$\dot U = \dot Q - \dot m_{out}\,h_v - \dot m_{rl}\,(h_v - h_l)$$

**Boil-off at constant pressure.** Holding the pressure with vapour leaving the
tank takes

$$\dot m = \frac{\dot Q}{h_{fg}}\left(1 - \frac{\rho_v}{\rho_l}\right)$$

The heat boils liquid ($\dot Q/h_{fg}$), and part of the new vapour stays to
fill the space the evaporated liquid left.

### Tank model: two-zone (stratified)

Real tanks are not at one temperature. Heat through the **dry walls** warms
the vapour above the saturation temperature (superheat). Heat through the
**wetted walls** warms a thin layer of liquid next to the wall; being lighter,
it rises along the wall and spreads under the surface, so a **warm surface
layer** grows on top of a colder bulk. The pressure follows the temperature
at the liquid surface, not the average, so it climbs faster than the
equilibrium model says — in published tank tests 1.4 to 3 times faster, most
at high fill and high heat flux.

The two-zone model keeps the vapour and the liquid as separate volumes with
their own temperatures; the interface sits at the saturation temperature of
the tank pressure; heat crosses from vapour and from the warm layer to the
interface by natural convection, and the balance at the interface decides how
much liquid evaporates or vapour condenses. The wall boundary layer feeds the
warm layer (a turbulent free-convection boundary layer on the wetted wall).
A **mixing** time in the scenario (heavy weather, a cargo pump started) stirs
the warm layer into the bulk and the pressure drops back towards the bulk's
saturation pressure. Details, parameters and the comparison with published
tests: `docs/two-zone.md`.

On the Results page, **Tank model comparison** runs the same voyage under the
other model and overlays both pressure curves with both relief-lift times.

### Mixture cargoes (LNG, LPG blends)

A mixture is given by the mole fractions of its liquid as loaded. The tank
starts with the liquid at its **bubble point** at the departure pressure and
the vapour in equilibrium with it. The equilibrium model then keeps the moles
of every component and the energy of the tank: liquid and vapour share one
temperature and are in phase equilibrium, and vapour leaving the tank carries
the composition of that equilibrium vapour.

The lightest components boil off first. In LNG the boil-off is far richer in
**nitrogen** and **methane** than the liquid (a liquid with under 1 % nitrogen
can give off vapour with well over 10 % nitrogen); in LPG blends, propane
leaves ahead of the butanes. The liquid left behind slowly **weathers**: it
loses its light ends, so its bubble temperature at a given pressure rises,
and its **heating value per cubic metre of gas and its Wobbe index rise**. Per
kilogram the heating value rises while nitrogen is leaving (nitrogen does not
burn), but falls slightly once the boil-off is mostly methane, because the
heavier hydrocarbons that stay behind carry less energy per kilogram. The
liquid density follows both the composition and the temperature: losing
methane makes the liquid denser, while losing (dense) liquid nitrogen and
warming to a higher bubble point make it lighter. The Results page shows the
liquid and boil-off composition over the voyage and the cargo quality as
loaded and on arrival.

Energy figures (loaded, lost, delivered; calorific values and Wobbe index)
use the ISO 6976 method at one set of reference conditions: __REFERENCE__.
Cargoes without an ISO 6976 value (ethylene, propylene, 1-butene,
parahydrogen) and carbon dioxide, which does not burn, have no energy figures;
the value of cargo lost then uses the price per tonne. Ammonia and normal
hydrogen do carry energy figures (values recalled from the standard's 1995
edition; see the source).

A mixture runs with the equilibrium model only. A mixture of one component
is exactly the pure cargo, which follows the single-component path:
saturation properties of the pure fluid, with the vapour the same as the
liquid.

### Heat in

$$\dot Q = U A\,[\,f_{air}(T_{air} - T) + (1 - f_{air})(T_{sea} - T)\,]$$

One U-value over the whole tank surface $A$; a share $f_{air}$ of the surface sees
the air temperature of the current leg, the rest the sea temperature; $T$ is the
cargo temperature.

**Rated BOR.** When a rated boil-off rate is given instead of a U-value, $U$ is
chosen so that a tank held at its departure pressure, at the rating fill and the
rating air and sea temperatures (45 °C and 32 °C unless given), boils off at
the rated rate by the formula above.

### Pressure control

Each way of taking vapour off starts at its own set pressure and has a capacity;
they act in order of set pressure: **engines** (fuel gas demand of the leg,
above the fuel floor pressure) → **reliquefaction plant** (holds its hold
pressure, up to its capacity) → **oxidiser** (starts at its set pressure) →
**relief valves** (lift at MARVS, unlimited). At any moment one of them may be
*holding* the pressure exactly; those below it run at capacity. A plant in an
outage window takes nothing, and the pressure rises until the next one in line
acts. Every switch is found as the moment a continuous quantity (pressure minus a
set pressure, or a holding rate reaching zero or capacity) crosses zero, and
logged as an event.

### Loading limit

The IGC loading limit is $LL = FL \cdot \rho_R / \rho_L$: the filling limit
$FL$ (98 %) times the liquid density at the reference temperature (where the
cargo's vapour pressure equals the relief set pressure) over the density at
loading. A fill above it is logged at the start of the run.

### Limits

* The equilibrium model **under-predicts the early pressure rise when the liquid
  stratifies**: a warm layer at the surface sets the pressure long before the
  bulk warms. Treat its time to relief-valve lift as an upper estimate for a
  tank left undisturbed, and compare with the two-zone model.
* The two-zone model lumps the vapour into one volume (no stratification in
  the vapour) and is checked against one published series of liquid-hydrogen
  tests only (see `docs/two-zone.md`).
* No sloshing, no spray, no cool-down or loading operations; the tank walls and
  insulation store no heat.
* Identical tanks share the plant equally; one tank behaving differently is not
  represented.
* Mixtures run with the equilibrium model only (no stratification for a
  mixture); the two-zone model and plant sizing take pure cargoes, where
  methane stands in for LNG and propane for LPG.
* Heating values are gross, at the reference conditions above; contracts
  that use other conditions (for example 25 °C combustion, 0 °C metering)
  differ by a fraction of a percent.
* The run stops when a tank becomes liquid-full, the pressure reaches the
  cargo's triple point, or the cargo approaches its critical point.

### References

* I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and pseudo-pure fluid
  thermophysical property evaluation and the open-source thermophysical property
  library CoolProp", *Ind. Eng. Chem. Res.* 53 (2014) 2498–2508,
  doi:10.1021/ie4033999. All cargo properties come from CoolProp's reference
  equations of state.
* IMO, *International Code for the Construction and Equipment of Ships Carrying
  Liquefied Gases in Bulk* (IGC Code), 2016 edition: chapter 7 (cargo pressure
  and temperature control) and chapter 15 (filling limits). Recalled, not
  quoted; check the edition that applies to your ship.
"""


def render() -> None:
    st.title("Methods")
    st.caption("How the numbers are made, and where they stop being trustworthy.")
    models = ", ".join(f"**{name}** ({text[0].lower() + text[1:].rstrip('.')})"
                       for name, text in MODEL_DESCRIPTIONS.items())
    text, _ = st.columns([5, 2])
    text.markdown(f"Tank models available: {models}.")
    text.markdown(TEXT.replace("__REFERENCE__", REFERENCE_TEXT.replace("degC", "°C")))


if __name__ == "__main__":
    render()

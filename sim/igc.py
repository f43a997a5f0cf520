"""IGC Code loading limit.

The IGC Code (International Code for the Construction and Equipment of Ships
Carrying Liquefied Gases in Bulk, 2016 edition, chapter 15) limits the volume
to which a cargo tank may be loaded so that the tank cannot become liquid-full
when the cargo has warmed to the temperature at which its vapour pressure
equals the relief-valve set pressure.  The formula below is recalled from the
Code, not quoted; check the edition that applies to a real ship.
"""

from __future__ import annotations

#: The Code's filling limit FL: 98 % of tank volume at the reference temperature.
FILLING_LIMIT = 0.98


def loading_limit(
    rho_reference: float, rho_loading: float, filling_limit: float = FILLING_LIMIT
) -> float:
    """Loading limit LL = FL * rho_R / rho_L as a fraction of tank volume.

    Parameters
    ----------
    rho_reference : float
        Liquid density at the reference temperature, the temperature at which
        the cargo's vapour pressure equals the relief-valve set pressure
        (MARVS for most tanks) [kg/m^3].
    rho_loading : float
        Liquid density at the loading temperature [kg/m^3].
    filling_limit : float, optional
        FL, the highest liquid fraction allowed at the reference temperature
        [-]; 0.98 by default.

    Returns
    -------
    float
        Highest initial liquid fraction of tank volume [-].

    Examples
    --------
    A cargo loaded at 500 kg/m^3 whose density falls to 450 kg/m^3 at the
    reference temperature may be loaded to 0.98 * 450 / 500 = 88.2 %.

    >>> round(loading_limit(450.0, 500.0), 4)
    0.882
    """
    return filling_limit * rho_reference / rho_loading

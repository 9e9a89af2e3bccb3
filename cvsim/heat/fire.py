"""Fire exposure of a vessel: the API 521 pool-fire heat input, its wetted area, and a
radiant flame model.

Both are heat rates into the vessel's outer wall (or, without a wall, into its
contents), SI in and out.
"""
from __future__ import annotations

import math

SIGMA = 5.670374419e-8  # [W/(m2 K4)] Stefan-Boltzmann constant (CODATA 2018, exact in the 2019 SI)

#: API 521 wetted-surface fire heat input, US customary units: Q [Btu/h] = C1 F A^0.82,
#: A [ft2]; prompt fire-fighting and adequate drainage, and without them
POOL_FIRE_C1_US = {True: 21000.0, False: 34500.0}
#: the same in SI, Q [W] = C1 F A^0.82, A [m2], as API 521 / ISO 23251 print them
POOL_FIRE_C1_SI = {True: 43200.0, False: 70900.0}
#: height above the base of the fire within which surfaces count as exposed [m] (25 ft)
FIRE_HEIGHT = 7.6

BTU_PER_HOUR = 1055.05585262 / 3600.0  # [W] International Table Btu per hour
SQUARE_FOOT = 0.09290304               # [m2] exact by definition


def api521_pool_fire_heat(A: float, F: float = 1.0, drainage: bool = True) -> float:
    """Heat input to a vessel's wetted surface from an open pool fire [W].

    Q = C1 F A^0.82

    with C1 = 43 200 W/m^1.64 where prompt fire-fighting and adequate drainage of
    flammable liquid away from the vessel exist, and C1 = 70 900 W/m^1.64 where they do
    not (the US-customary forms are 21 000 and 34 500 Btu/h with A in ft2).

    Parameters
    ----------
    A : float
        [m2] wetted surface within 7.6 m (:data:`FIRE_HEIGHT`) above the base of the fire.
    F : float
        [-] environment factor: 1 for a bare vessel; smaller for insulation, water
        application or burial as tabulated in the standard.
    drainage : bool
        prompt fire-fighting and adequate drainage present.

    Validity: an empirical total heat input to liquid-wetted surfaces for relief
    sizing; it does not depend on the wall temperature. Applying it to a gas-filled
    vessel (whose walls heat up instead of boiling liquid) is a screening choice.

    Source: API Standard 521 (ISO 23251), *Pressure-relieving and Depressuring
    Systems*, fire-exposure section: heat-absorption equations for wetted surfaces
    (US and SI forms), wetted area up to 7.6 m above the base of the fire.

    >>> round(api521_pool_fire_heat(10.0) / 1e3, 1)
    285.4
    """
    return POOL_FIRE_C1_SI[drainage] * F * A**0.82


def pool_fire_area(fire, liquid_fraction: float) -> tuple[float, float]:
    """The area A [m2] of API 521's pool-fire heat input for a vessel whose contents take
    the share ``liquid_fraction`` [-] of its volume as liquid, and the liquid level [m]
    (NaN when none is computed).

    * two phases (0 < share < 1): the wetted area - the outside surface below the
      liquid level and within 7.6 m above the base of the fire:
      A = A_out(min(h_out, reach)), with h the liquid's height that holds share x V
      (:meth:`cvsim.heat.level.Tank.level`, warm-started from the last level), h_out
      that level on the outside surface (:func:`cvsim.heat.level.outside_level`) and
      A_out(z) the outside area below the height z (:func:`cvsim.heat.level.area_below`);
    * no liquid level (gas or supercritical contents, share 0) or liquid-full (share 1):
      the whole outside area within 7.6 m, ``fire.area`` (the level of a liquid-full
      vessel is at its top, so the two agree there);
    * a stated area (``fire.wetted is None``): ``fire.area`` throughout.

    Parameters
    ----------
    fire : :class:`cvsim.heat.definitions.PoolFire`
    liquid_fraction : [-] share of the vessel's volume taken by liquid

    Source: API Standard 521 (ISO 23251), fire-exposure section: the wetted surface is
    the area wetted by the vessel's internal liquid up to 7.6 m (25 ft) above the base of
    the fire (grade, or the surface where a pool can form).
    """
    w = fire.wetted
    if w is None or not 0.0 < liquid_fraction < 1.0:
        return fire.area, math.nan
    from .level import outside_level, tank
    inside = tank(w.kind, w.inner_diameter, w.length, w.heads, w.orientation)
    h = inside.level(liquid_fraction * inside.volume)
    h_out = outside_level(h, w.kind, w.inner_diameter, w.length, w.heads, w.orientation,
                          w.offset)
    outside = tank(w.kind, w.inner_diameter, w.length, w.heads, w.orientation, w.offset)
    return outside.area_below(min(h_out, w.reach)), h


def api521_pool_fire_heat_us(A_ft2: float, F: float = 1.0, drainage: bool = True) -> float:
    """The same heat input in US customary units: Q [Btu/h] = C1 F A^0.82, A [ft2]."""
    return POOL_FIRE_C1_US[drainage] * F * A_ft2**0.82


def flame_heat_flux(T_s: float, T_f: float, eps_f: float, eps_s: float, h_f: float) -> float:
    """Heat flux from an engulfing flame into a surface [W/m2].

    q = eps_s sigma (eps_f T_f^4 - T_s^4) + h_f (T_f - T_s)

    The surface absorbs the flame's radiation with absorptivity equal to its
    emissivity (grey surface) and radiates as a grey body; the hot gases add
    convection.

    Parameters
    ----------
    T_s : surface temperature [K]
    T_f : flame temperature [K]
    eps_f : flame emissivity [-]
    eps_s : surface emissivity (and absorptivity) [-]
    h_f : convective coefficient between flame gases and surface [W/(m2 K)]

    Validity: the flame's temperature, emissivity and convective coefficient are
    inputs; API 521 describes a model of this form for wall-temperature studies of
    fire-exposed vessels, but its default values are not confirmed in our sources,
    so cvsim gives no defaults.

    Source: Stefan-Boltzmann law with grey surfaces (Incropera et al., *Fundamentals of
    Heat and Mass Transfer*, 7th ed., eqs. 1.5 and 1.6) plus Newton's law of cooling
    (eq. 1.3a); the form of API Standard 521, Annex A, eq. A.1.

    >>> round(flame_heat_flux(300.0, 1100.0, 1.0, 1.0, 0.0))
    82561
    """
    return eps_s * SIGMA * (eps_f * T_f**4 - T_s**4) + h_f * (T_f - T_s)


__all__ = ["BTU_PER_HOUR", "FIRE_HEIGHT", "POOL_FIRE_C1_SI", "POOL_FIRE_C1_US", "SIGMA",
           "SQUARE_FOOT", "api521_pool_fire_heat", "api521_pool_fire_heat_us",
           "flame_heat_flux", "pool_fire_area"]

"""Wall materials: density, specific heat capacity and thermal conductivity, with sources.

A :class:`Material` holds its heat capacity c(T) and conductivity k(T) as
piecewise-linear tables in temperature (one point: a constant) and the
temperature range its source covers. Outside that range the end values are held
(the wall model reports the excursion as a validity warning). Users may give
their own constant values in the scenario instead of a name from :data:`MATERIALS`.

Sources
-------
* ``carbon-steel``: EN 1993-1-2:2005 (Eurocode 3, structural fire design), 3.2.2 (unit
  mass 7850 kg/m3), 3.4.1.2 (specific heat) and 3.4.1.3 (conductivity), stated for
  20 to 1200 degC. The functions were checked against a
  published summary of the standard (Dlubal Software knowledge-base article 001496,
  "Structural fire design according to DIN EN 1993-1-2 (thermal material
  properties)"). The specific-heat function peaks near 735 degC (the magnetic
  transformation); the table samples it densely there.
* ``steel``, ``stainless-steel``, ``aluminium-alloy``, ``hdpe``, ``epoxy``,
  ``polyamide``: constant design values of EN 12524:2000 (building materials,
  hygrothermal properties, Table 1), as tabulated in the ``ht`` library
  (``ht.insulation.building_materials``). The standard gives them for use near room
  temperature without a stated range; cvsim takes -40 to 60 degC as their range and
  warns outside it (a choice, not from the standard).

* Below 20 degC (cold blowdowns, brittle-fracture studies), so that a wall cooled to
  -100 degC is not an extrapolation:

  - ``carbon-steel``: the specific heat follows the Debye model of iron's lattice,
    Debye temperature 470 K (Kittel, *Introduction to Solid State Physics*, 8th ed.,
    ch. 5, Table 1), scaled to EN 1993-1-2's value at 20 degC (:func:`debye_ratio`);
    at 200 K it gives 384 J/(kg K), the value for pure iron (from memory, CRC tables).
    The conductivity continues EN 1993-1-2's linear law (57 W/(m K) at -100 degC:
    plain carbon steels vary more than that between heats; common practice, no
    source). Range -150 to 1200 degC.
  - ``stainless-steel``: the temperature dependence of 304 stainless steel from the
    NIST cryogenic material property fits (log10 y = sum a_i (log10 T)^i, 4 to 300 K;
    conductivity coefficients as reproduced in a published engineering summary of the
    NIST fits, specific heat from memory), scaled to EN 12524's design values at 20
    degC, which hold above. Range -200 to 60 degC.

Carbon-fibre composites are not in these sources: give their values in the scenario
(``material: {density: ..., heat_capacity: ..., conductivity: ...}``) from the
maker's data.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

ZERO_CELSIUS = 273.15


@dataclass(frozen=True)
class Material:
    """A wall material.

    name           label shown in outputs
    density        [kg/m3]
    cp_T, cp       [K], [J/(kg K)] specific heat capacity table (piecewise linear)
    k_T, k         [K], [W/(m K)] thermal conductivity table (piecewise linear)
    T_min, T_max   [K] range covered by the source
    source         where the values come from
    beyond         what is used outside [T_min, T_max], in words
    """

    name: str
    density: float
    cp_T: tuple[float, ...]
    cp: tuple[float, ...]
    k_T: tuple[float, ...]
    k: tuple[float, ...]
    T_min: float
    T_max: float
    source: str
    beyond: str = "values held constant"

    def heat_capacity(self, T: float) -> float:
        """Specific heat capacity c [J/(kg K)] at T [K] (end values held outside the table)."""
        return interpolate(self.cp_T, self.cp, T)

    def conductivity(self, T: float) -> float:
        """Thermal conductivity k [W/(m K)] at T [K] (end values held outside the table)."""
        return interpolate(self.k_T, self.k, T)

    @property
    def constant(self) -> bool:
        return len(self.cp) == 1 and len(self.k) == 1


def interpolate(xs: tuple[float, ...], ys: tuple[float, ...], x: float) -> float:
    """Piecewise-linear interpolation holding the end values outside the table."""
    if len(xs) == 1 or x <= xs[0]:
        return ys[0]
    if x >= xs[-1]:
        return ys[-1]
    lo, hi = 0, len(xs) - 1
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if xs[mid] <= x:
            lo = mid
        else:
            hi = mid
    f = (x - xs[lo]) / (xs[hi] - xs[lo])
    return ys[lo] + f * (ys[hi] - ys[lo])


# ------------------------------------------------------------- EN 1993-1-2 carbon steel

def en1993_specific_heat(T: float) -> float:
    """Specific heat of carbon steel c_a [J/(kg K)] at T [K], EN 1993-1-2:2005, 3.4.1.2.

    With theta = T - 273.15 [degC]:

    * 20 <= theta < 600:   c = 425 + 0.773 theta - 1.69e-3 theta^2 + 2.22e-6 theta^3
    * 600 <= theta < 735:  c = 666 + 13002 / (738 - theta)
    * 735 <= theta < 900:  c = 545 + 17820 / (theta - 731)
    * 900 <= theta <= 1200: c = 650

    Validity: 20 to 1200 degC (the standard's range); below 20 degC the cubic is
    continued here (no source; reported as a validity warning by the wall model).

    >>> round(en1993_specific_heat(20 + 273.15), 1)
    439.8
    """
    th = T - ZERO_CELSIUS
    if th < 600.0:
        return 425.0 + 0.773 * th - 1.69e-3 * th**2 + 2.22e-6 * th**3
    if th < 735.0:
        return 666.0 + 13002.0 / (738.0 - th)
    if th < 900.0:
        return 545.0 + 17820.0 / (th - 731.0)
    return 650.0


def en1993_conductivity(T: float) -> float:
    """Thermal conductivity of carbon steel lambda_a [W/(m K)] at T [K], EN 1993-1-2:2005, 3.4.1.3.

    lambda = 54 - 3.33e-2 theta for 20 <= theta < 800 degC, 27.3 for 800 to 1200 degC
    (the two pieces meet at 800 degC, which fixes the slope 3.33e-2).

    >>> round(en1993_conductivity(500 + 273.15), 2)
    37.35
    """
    th = T - ZERO_CELSIUS
    return 54.0 - 3.33e-2 * th if th < 800.0 else 27.3


def debye_ratio(x: float, n: int = 200) -> float:
    """Debye heat capacity of a solid as a fraction of its high-temperature (Dulong-Petit)
    value 3R, at x = theta_D / T.

        C_v / 3R = (3 / x^3) integral_0^x t^4 e^t / (e^t - 1)^2 dt

    (Simpson's rule on ``n`` intervals; error below 1e-8 for x <= 10). Limits: 1 as
    x -> 0; (4 pi^4 / 5) / x^3 as x -> infinity (Debye T^3 law). Source: Kittel,
    *Introduction to Solid State Physics*, 8th ed., ch. 5, eq. (5.35).

    >>> round(debye_ratio(470.0 / 293.15), 4)
    0.8824
    """
    if x < 1e-9:
        return 1.0
    h = x / n
    total = 0.0
    for i in range(n + 1):
        t = i * h
        f = 0.0 if t == 0.0 else t**4 * math.exp(t) / math.expm1(t) ** 2
        total += f * (1.0 if i in (0, n) else 4.0 if i % 2 else 2.0)
    return 3.0 / x**3 * total * h / 3.0


#: Debye temperature of iron [K] (Kittel, 8th ed., ch. 5, Table 1)
THETA_IRON = 470.0
#: lowest temperature of the carbon-steel table [degC]
CARBON_STEEL_LOWEST = -150.0


def carbon_steel_cold_heat_capacity(T: float) -> float:
    """Specific heat of carbon steel [J/(kg K)] below 20 degC: the Debye model of
    iron (theta_D = 470 K) scaled to EN 1993-1-2's value at 20 degC,
    c(T) = c_EN(20 degC) C_D(470/T) / C_D(470/293.15).

    >>> round(carbon_steel_cold_heat_capacity(200.0))   # pure iron: 384 (from memory)
    384
    """
    T20 = 20.0 + ZERO_CELSIUS
    return en1993_specific_heat(T20) * debye_ratio(THETA_IRON / T) / debye_ratio(
        THETA_IRON / T20)


def _en1993_table():
    # dense near the 735 degC peak, where the heat capacity is not smooth; linear
    # interpolation in this table is exact at its points, within 0.1 % of the function
    # from 20 to 600 degC and within 1 % elsewhere
    cold = [CARBON_STEEL_LOWEST + 10.0 * i for i in range(17)]  # -150 to 10 degC
    celsius = (cold + [20.0 + 20.0 * i for i in range(30)]
               + [600.0, 620.0, 640.0, 655.0, 670.0, 680.0, 690.0, 698.0, 705.0, 710.0,
                  715.0, 719.0, 722.0, 725.0, 727.0, 729.0, 730.0, 731.0, 732.0, 733.0,
                  733.5, 734.0, 734.5, 735.0, 735.5, 736.0, 737.0, 738.0, 739.5, 741.0,
                  743.0, 745.0, 748.0, 752.0, 756.0, 760.0, 766.0, 775.0, 785.0, 800.0,
                  820.0, 845.0, 870.0, 900.0, 1200.0])
    celsius = sorted(set(celsius))
    T = tuple(c + ZERO_CELSIUS for c in celsius)
    cp = tuple(en1993_specific_heat(t) if t >= 20.0 + ZERO_CELSIUS
               else carbon_steel_cold_heat_capacity(t) for t in T)
    # linear to 800 degC, where it steps from 27.36 to the plateau 27.3 (taken over 1 K)
    kT = tuple(c + ZERO_CELSIUS for c in (CARBON_STEEL_LOWEST, 800.0, 801.0, 1200.0))
    k = (en1993_conductivity(kT[0]), 54.0 - 3.33e-2 * 800.0, 27.3, 27.3)
    return T, cp, kT, k


def _carbon_steel() -> Material:
    T, cp, kT, k = _en1993_table()
    return Material("carbon steel (EN 1993-1-2)", 7850.0, T, cp, kT, k,
                    CARBON_STEEL_LOWEST + ZERO_CELSIUS, 1200.0 + ZERO_CELSIUS,
                    "EN 1993-1-2:2005, 3.2.2, 3.4.1.2 and 3.4.1.3; below 20 degC the "
                    "specific heat by the Debye model of iron (Kittel, ch. 5) scaled to "
                    "the standard at 20 degC, the conductivity its linear law continued",
                    f"below {CARBON_STEEL_LOWEST:g} degC and above 1200 degC held")


def constant(name: str, density: float, heat_capacity: float, conductivity: float,
             T_min: float = -math.inf, T_max: float = math.inf,
             source: str = "given in the scenario") -> Material:
    """A material with constant properties: density [kg/m3], c [J/(kg K)], k [W/(m K)]."""
    return Material(name, density, (293.15,), (heat_capacity,), (293.15,), (conductivity,),
                    T_min, T_max, source)


_EN12524 = "EN 12524:2000 Table 1 (as tabulated in the ht library)"

#: NIST cryogenic material property fits for 304 stainless steel, 4 to 300 K:
#: log10 y = sum a_i (log10 T)^i; conductivity [W/(m K)], specific heat [J/(kg K)]
NIST_304_CONDUCTIVITY = (-1.4087, 1.3982, 0.2543, -0.6260, 0.2334, 0.4256, -0.4658,
                         0.1650, -0.0199)
NIST_304_SPECIFIC_HEAT = (22.0061, -127.5528, 303.6470, -381.0098, 274.0328, -112.9212,
                          24.7593, -2.239153, 0.0)


def nist_fit(coefficients, T: float) -> float:
    """A NIST cryogenic property fit, y = 10^(sum a_i (log10 T)^i), at T [K]."""
    x = math.log10(T)
    return 10.0 ** sum(a * x**i for i, a in enumerate(coefficients))


def _stainless_steel() -> Material:
    """EN 12524's constant values from 20 degC up; below, the NIST 304 curves scaled to
    them at 20 degC (continuous)."""
    T20 = 20.0 + ZERO_CELSIUS
    rho, c20, k20 = 7900.0, 460.0, 17.0
    T = tuple(c + ZERO_CELSIUS for c in range(-200, 20, 10)) + (T20, 60.0 + ZERO_CELSIUS)
    cp = tuple(c20 * nist_fit(NIST_304_SPECIFIC_HEAT, t) / nist_fit(NIST_304_SPECIFIC_HEAT,
                                                                     T20)
               if t < T20 else c20 for t in T)
    k = tuple(k20 * nist_fit(NIST_304_CONDUCTIVITY, t) / nist_fit(NIST_304_CONDUCTIVITY, T20)
              if t < T20 else k20 for t in T)
    return Material("stainless steel (EN 12524; NIST 304 below 20 degC)", rho, T, cp, T, k,
                    -200.0 + ZERO_CELSIUS, 60.0 + ZERO_CELSIUS,
                    _EN12524 + "; below 20 degC the NIST cryogenic fits of 304 stainless "
                    "steel scaled to it")
_ROOM = (-40.0 + ZERO_CELSIUS, 60.0 + ZERO_CELSIUS)

#: the named materials a scenario can use
MATERIALS: dict[str, Material] = {
    "carbon-steel": _carbon_steel(),
    "steel": constant("steel (EN 12524)", 7800.0, 450.0, 50.0, *_ROOM, source=_EN12524),
    "stainless-steel": _stainless_steel(),
    "aluminium-alloy": constant("aluminium alloy (EN 12524)", 2800.0, 880.0, 160.0, *_ROOM,
                                source=_EN12524),
    "hdpe": constant("high-density polyethylene (EN 12524)", 980.0, 1800.0, 0.5, *_ROOM,
                     source=_EN12524),
    "polyamide": constant("polyamide (EN 12524)", 1150.0, 1600.0, 0.25, *_ROOM,
                          source=_EN12524),
    "epoxy": constant("epoxy resin (EN 12524)", 1200.0, 1400.0, 0.2, *_ROOM,
                      source=_EN12524),
}


__all__ = ["MATERIALS", "Material", "carbon_steel_cold_heat_capacity", "constant",
           "debye_ratio", "en1993_conductivity", "en1993_specific_heat", "interpolate",
           "nist_fit"]

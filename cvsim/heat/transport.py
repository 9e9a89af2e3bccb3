"""Transport and thermal properties for convection: the gas in a vessel and the air outside.

* :class:`GasProperties` reads density, heat capacity, viscosity, conductivity and
  expansion coefficient of a vessel's gas from CoolProp, with its own AbstractState
  (the fluid layer's is busy with the vessel and nozzle states): at the gas's own
  (density, temperature) (:meth:`GasProperties.at`, for the jet of a fill) or at the
  film temperature (T_gas + T_wall)/2 and the gas's pressure
  (:meth:`GasProperties.film`, for natural convection: Incropera et al., 7th ed.,
  sec. 9.6, evaluate the fluid's properties at the film temperature). A two-phase
  vessel gives its saturated vapour's properties (the gas space). The last state of
  each is kept. Cost measured on the 2-core machine with CoolProp 7.2: 6 us
  (hydrogen) to 28 us (carbon dioxide) per new (density, temperature) state; the film
  state is a (pressure, temperature) flash, 5 to 45 us more, paid again whenever the
  wall's inside temperature changes (the Jacobian columns of the inside node).
* :class:`AirTable` tabulates air at the local atmospheric pressure once per run
  (CoolProp's pseudo-pure Air) and interpolates linearly in temperature: a film
  temperature costs about a microsecond instead of a CoolProp call.
"""
from __future__ import annotations

import bisect


class GasProperties:
    """(rho [kg/m3], cp [J/(kg K)], mu [Pa s], k [W/(m K)], beta [1/K]) of a vessel's gas.

    Parameters
    ----------
    fluid : the run's fluid object (:mod:`cvsim.fluid`); for the ideal-gas model the
        viscosity and conductivity come from CoolProp's equation of state of the same
        fluid at the gas's pressure and temperature, the rest from the ideal gas.
    """

    def __init__(self, fluid):
        import CoolProp.CoolProp as CP

        self.fluid = fluid
        self._as = CP.AbstractState("HEOS", fluid.name)
        self._DT = CP.DmassT_INPUTS
        self._PT = CP.PT_INPUTS
        self._PQ = CP.PQ_INPUTS
        self._liquid = CP.iphase_liquid
        self._key = None
        self._value = None
        self._film_key = None
        self._film_value = None
        self.evaluations = 0

    def at(self, gas) -> tuple[float, float, float, float, float]:
        """Properties for the gas state ``gas`` (a :class:`cvsim.fluid.State`)."""
        key = (gas.rho, gas.T)
        if key == self._key:
            return self._value
        self.evaluations += 1
        a = self._as
        if self.fluid.model == "ideal-gas":
            a.update(self._PT, gas.p, gas.T)
            value = (gas.rho, gas.cp, a.viscosity(), a.conductivity(), 1.0 / gas.T)
        else:
            if gas.two_phase:
                a.update(self._PQ, gas.p, 1.0)
            else:
                a.update(self._DT, gas.rho, gas.T)
            value = (a.rhomass(), a.cpmass(), a.viscosity(), a.conductivity(),
                     a.isobaric_expansion_coefficient())
        self._key, self._value = key, value
        return value

    def film(self, gas, T_wall: float) -> tuple[float, float, float, float, float]:
        """Properties at the film temperature T_f = (T_gas + T_wall)/2 [K] and the
        gas's pressure, the state natural-convection correlations are evaluated at
        (Incropera et al., *Fundamentals of Heat and Mass Transfer*, 7th ed., sec. 9.6
        and eq. 9.26 ff.: properties at the film temperature).

        Two-phase gas space: the saturated vapour at the gas's pressure, as
        :meth:`at`. Below the critical pressure a film colder than the dew point
        (where the (p, T_f) state would be liquid: condensation on the wall, which
        cvsim does not model) also takes the saturated vapour. Ideal-gas model:
        rho = p/(R T_f), beta = 1/T_f, constant cp; viscosity and conductivity from
        CoolProp at (p, T_f).
        """
        T_f = 0.5 * (gas.T + T_wall)
        key = (gas.p, T_f, gas.two_phase)
        if key == self._film_key:
            return self._film_value
        if gas.two_phase:
            value = self.at(gas)
        else:
            self.evaluations += 1
            a = self._as
            try:
                a.update(self._PT, gas.p, T_f)
                if self.fluid.model == "ideal-gas":
                    value = (gas.p / (self.fluid.R * T_f), gas.cp, a.viscosity(),
                             a.conductivity(), 1.0 / T_f)
                else:
                    if a.phase() == self._liquid:  # film below the dew point
                        a.update(self._PQ, gas.p, 1.0)
                    value = (a.rhomass(), a.cpmass(), a.viscosity(), a.conductivity(),
                             a.isobaric_expansion_coefficient())
            except ValueError:  # beyond the equation of state's range: the gas's own state
                value = self.at(gas)
        self._film_key, self._film_value = key, value
        return value


class AirTable:
    """Air at a fixed pressure, tabulated in temperature every ``step`` kelvin.

    :meth:`at` returns (rho, cp, mu, k, beta) at T [K] by linear interpolation,
    holding the end values outside [T_lo, T_hi]. With 5 K steps the interpolation
    error is below 0.05 % for every property between 150 and 2000 K (checked in the
    tests against CoolProp directly).
    """

    _cache: dict = {}

    def __init__(self, pressure: float, T_lo: float = 150.0, T_hi: float = 1995.0,
                 step: float = 5.0):
        key = (pressure, T_lo, T_hi, step)
        table = AirTable._cache.get(key)
        if table is None:
            import CoolProp.CoolProp as CP

            a = CP.AbstractState("HEOS", "Air")
            n = int(round((T_hi - T_lo) / step)) + 1
            Ts = [T_lo + i * step for i in range(n)]
            rows = []
            for T in Ts:
                a.update(CP.PT_INPUTS, pressure, T)
                rows.append((a.rhomass(), a.cpmass(), a.viscosity(), a.conductivity(),
                             a.isobaric_expansion_coefficient()))
            table = (tuple(Ts), tuple(rows))
            if len(AirTable._cache) > 16:
                AirTable._cache.clear()
            AirTable._cache[key] = table
        self.T, self.rows = table
        self.pressure = pressure

    def at(self, T: float) -> tuple[float, float, float, float, float]:
        Ts = self.T
        if not T > Ts[0]:  # also NaN
            return self.rows[0]
        if T >= Ts[-1]:
            return self.rows[-1]
        i = bisect.bisect_right(Ts, T) - 1
        f = (T - Ts[i]) / (Ts[i + 1] - Ts[i])
        a, b = self.rows[i], self.rows[i + 1]
        return tuple(x + f * (y - x) for x, y in zip(a, b))


__all__ = ["AirTable", "GasProperties"]

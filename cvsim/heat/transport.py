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
* :class:`MixtureGasProperties` does the same for a mixture (its vapour phase), with
  viscosity and conductivity by corresponding states (:mod:`cvsim.heat.mixture_transport`).
* :class:`AirTable` tabulates air at the local atmospheric pressure once per run
  (CoolProp's pseudo-pure Air) and interpolates linearly in temperature: a film
  temperature costs about a microsecond instead of a CoolProp call.
"""
from __future__ import annotations

import bisect
import math

import numpy as np


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


#: [K] and [-] node spacing of the mixture transport table: temperature, ln(molar density)
MIX_TABLE_DT = 4.0
MIX_TABLE_DLNRHO = 0.1
#: a mixture's transport table is rebuilt when the gas composition moves by more than
#: this (max |dz|); the effect on mu and k of 1e-3 for natural gas is below 0.2 %
MIX_TABLE_DZ = 1e-3
#: [mol/m3] molar density floor of the table (dilute gas)
MIX_TABLE_RHO_MIN = 1e-2


class MixtureGasProperties:
    """(rho, cp, mu, k, beta) of a mixture's gas (the vapour phase when two phases are
    present), for convection; the interface of :class:`GasProperties`.

    rho, cp and beta = -(1/v)(dv/dT)_p come from the run's equation of state (the
    state itself, or the vapour root at the film temperature and the gas's pressure).
    Viscosity and conductivity by corresponding states
    (:class:`cvsim.heat.mixture_transport.MixtureTransport`), tabulated lazily for the
    current composition on nodes every MIX_TABLE_DT in temperature and MIX_TABLE_DLNRHO
    in ln(molar density) and interpolated bilinearly (a node costs 0.1-0.5 ms; the
    interpolation error, measured against the method itself for natural gas at
    150-350 K and 1-200 bar, is below 0.1 %).
    """

    def __init__(self, fluid):
        from .mixture_transport import MixtureTransport

        self.fluid = fluid
        self.engine = fluid.engine
        self._method = MixtureTransport(fluid.names, fluid.engine.M)
        self._z = None
        self._nodes: dict[tuple[int, int], tuple[float, float]] = {}
        self._key = self._value = self._film_key = self._film_value = None
        self.evaluations = 0
        self.transport_calls = 0

    def _transport(self, z: np.ndarray, T: float, rho_molar: float) -> tuple[float, float]:
        self.transport_calls += 1
        return self._method(z, T, rho_molar)

    def _mu_k(self, z: np.ndarray, T: float, rho_molar: float) -> tuple[float, float]:
        if self._z is None or float(np.max(np.abs(z - self._z))) > MIX_TABLE_DZ:
            self._z = np.array(z)
            self._nodes.clear()
        x = T / MIX_TABLE_DT
        y = math.log(max(rho_molar, MIX_TABLE_RHO_MIN)) / MIX_TABLE_DLNRHO
        i, j = math.floor(x), math.floor(y)
        fx, fy = x - i, y - j
        out = [0.0, 0.0]
        for di, dj, w in ((0, 0, (1 - fx) * (1 - fy)), (1, 0, fx * (1 - fy)),
                          (0, 1, (1 - fx) * fy), (1, 1, fx * fy)):
            node = self._nodes.get((i + di, j + dj))
            if node is None:
                node = self._transport(self._z, (i + di) * MIX_TABLE_DT,
                                       math.exp((j + dj) * MIX_TABLE_DLNRHO))
                self._nodes[(i + di, j + dj)] = node
            out[0] += w * node[0]
            out[1] += w * node[1]
        return out[0], out[1]

    @staticmethod
    def _gas_of(gas):
        """The gas a wall sees: the vapour phase of a two-phase state (its composition y)."""
        if gas.two_phase and gas.vapour is not None:
            return gas.vapour, gas.y
        return gas, gas.z

    def at(self, gas) -> tuple[float, float, float, float, float]:
        """Properties for the gas state ``gas`` (a :class:`cvsim.mixture.MixtureState`)."""
        key = (gas.rho, gas.T, gas.p)
        if key == self._key:
            return self._value
        self.evaluations += 1
        g, w = self._gas_of(gas)
        M = float(w @ self.engine.M)
        mu, k = self._mu_k(w, g.T, g.rho / M)
        beta = _expansion(g.cp, g.cv, g.c, g.T)
        self._key, self._value = key, (g.rho, g.cp, mu, k, beta)
        return self._value

    def film(self, gas, T_wall: float) -> tuple[float, float, float, float, float]:
        """Properties at the film temperature (T_gas + T_wall)/2 and the gas's pressure:
        the vapour root of the gas's composition there (as :meth:`GasProperties.film`;
        a film below the dew point keeps the vapour root, condensation on the wall is
        not modelled)."""
        T_f = 0.5 * (gas.T + T_wall)
        key = (gas.p, T_f, gas.rho)
        if key == self._film_key:
            return self._film_value
        self.evaluations += 1
        g, w = self._gas_of(gas)
        e = self.engine
        try:
            ph = e._phase_tp(T_f, gas.p, w, e._VAP)
            st = e._state_of(ph, "gas")
            mu, k = self._mu_k(w, T_f, 1.0 / ph.v)
            value = (st.rho, st.cp, mu, k, _expansion(st.cp, st.cv, st.c, T_f))
        except (ValueError, ZeroDivisionError, OverflowError):
            value = self.at(gas)
        if not all(math.isfinite(v) for v in value):
            value = self.at(gas)
        self._film_key, self._film_value = key, value
        return value


def _expansion(cp: float, cv: float, c: float, T: float) -> float:
    """Isobaric expansion coefficient beta [1/K] from cp, cv [J/(kg K)], the speed of
    sound c [m/s] and T [K]: cp - cv = T v beta^2 / kappa_T and c^2 = cp/(cv rho kappa_T)
    give beta = sqrt(cp (cp - cv) / (cv c^2 T)) (1/T for an ideal gas)."""
    val = cp * (cp - cv) / (cv * c * c * T)
    return math.sqrt(val) if val > 0.0 else 1.0 / T


def gas_properties(fluid):
    """The convection properties object for the run's fluid (pure or mixture)."""
    if getattr(fluid, "model", "") == "mixture":
        return MixtureGasProperties(fluid)
    return GasProperties(fluid)


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


__all__ = ["AirTable", "GasProperties", "MixtureGasProperties", "gas_properties"]

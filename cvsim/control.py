"""Controllers that move a valve to hold a measured quantity, and fuelling fills.

A controller reads one measured quantity - the pressure or the temperature of a node,
the mass flow through a link, or the rise rate of a node's pressure - compares it with
its set point (constant or a table in time) and sets the travel of the valve of one link
(a control valve, or a line with a valve). Two modes:

* **PI** (proportional-integral), a continuous controller whose integral is a state of
  the model's ODE (docs/decisions.md, "Lines and control"):

      e = s (set point - measured),   s = +1 (``opens_when: below``) or -1 (``above``)
      u_raw = Kc e + z,   u = clip(u_raw, u_min, u_max)
      dz/dt = Kc e / Ti + (u - u_raw) / Tt,   Tt = Ti

  the second term is back-calculation anti-windup (Astrom & Hagglund, *PID
  Controllers: Theory, Design, and Tuning*, 2nd ed., 1995, sec. 3.5; the tracking time
  Tt = Ti is our choice): while the output is at a limit the integral is pulled back
  so that u_raw stays within Kc e of it, and the controller leaves the limit as soon as
  the error turns. Within the limits it is the textbook PI law. At the start
  z = u0 - Kc e(0), so that the output starts at the stated opening (bumpless).
* **on-off** with a deadband db centred on the set point: the valve is at u_max from
  the moment the error e rises to +db/2 and at u_min from the moment it falls to -db/2,
  a discrete state switched by solver events.

A mass flow and a pressure-rise rate are measured through a first-order filter with
time constant tau (a transmitter lag; for the rate, the filtered derivative
r = (p - p_f)/tau with dp_f/dt = (p - p_f)/tau), which keeps the valve's own flow out of
an algebraic loop with its opening.

A **fill** (:class:`cvsim.network.Fill`) is a PI controller of the receiver's pressure
whose set point ramps from the receiver's initial pressure at the stated average rate,
and which ends - the valve shut for the rest of the run - when the receiver reaches the
final pressure, the gas temperature limit or the state of charge (its density over the
density at the nominal working pressure and 15 degC), whichever comes first. Its review
reports the state of charge, the peak gas temperature against the limit and the peak
pressure against 125 % of the nominal working pressure.
"""
from __future__ import annotations

import math

from .flow.base import Switch

#: maximum operating pressure of a vehicle's hydrogen system as a share of its nominal
#: working pressure (SAE J2601 and UN GTR No. 13 use 125 % of NWP; from memory)
MOP_SHARE = 1.25
#: gas temperature limit of vehicle cylinders [K]: 85 degC (SAE J2601, UN GTR No. 13,
#: ISO 19880-1; from memory)
GAS_TEMPERATURE_LIMIT = 358.15

UNITS = {"pressure": "Pa", "temperature": "K", "mass-flow": "kg/s",
         "pressure-rise-rate": "Pa/s"}

FILLING, FINISHED = "filling", "finished"


class ValveController:
    """Run-time object of one :class:`cvsim.network.Controller` (module docstring).

    ``index`` is the controller's position among the network's controllers; ``model``
    the :class:`cvsim.model.Model` (for node and link positions). The model sets
    :attr:`offset`, the position of the controller's own states in the state vector.
    """

    kind = "controller"

    def __init__(self, definition, index: int, model):
        d = definition
        self.d = d
        self.name = d.name
        self.link = model.link_index[d.valve]
        self.key = f"controller{index}.switch"
        self.pi = d.mode == "pi"
        self.sign = 1.0 if d.opens_when == "below" else -1.0
        self.filtered = d.measures in ("mass-flow", "pressure-rise-rate")
        if d.measures == "mass-flow":
            self.measured_link = model.link_index[d.of]
            self.node = None
        else:
            self.node = model.node_index[d.of]
        self.n_states = int(self.pi) + int(self.filtered)
        self.offset = 0
        self.fill = d.fill
        if self.fill is not None:
            self.receiver = model.node_index[self.fill.receiver]
            self.receiver_volume = model.vessels[self.receiver].volume
            self.mass_target = (self.fill.state_of_charge * self.fill.reference_density
                                * self.receiver_volume)

    # ------------------------------------------------------------ states
    @property
    def i_z(self) -> int:
        return self.offset

    @property
    def i_f(self) -> int:
        return self.offset + int(self.pi)

    def breakpoints(self) -> tuple[float, ...]:
        return tuple(self.d.set_point.breakpoints)

    def measured(self, t: float, y, snap) -> float:
        """The measured value [SI] at (t, y)."""
        m = self.d.measures
        if m == "pressure":
            return snap.states[self.node].p
        if m == "temperature":
            return snap.states[self.node].T
        if m == "mass-flow":
            return y[self.i_f]
        return (snap.states[self.node].p - y[self.i_f]) / self.d.measurement_lag

    def error(self, t: float, y, snap, set_point: float) -> float:
        return self.sign * (set_point - self.measured(t, y, snap))

    def initial_states(self, snap, y) -> None:
        """Set the controller's own states in ``y`` at the start, given the node states
        ``snap`` at t = 0: the filter at the flow 0 or the pressure (the rate starts at
        0), then z = u0 - Kc e(0) (bumpless: the output starts at the stated opening)."""
        d = self.d
        if self.filtered:
            y[self.i_f] = 0.0 if d.measures == "mass-flow" else snap.states[self.node].p
        if self.pi:
            e0 = self.error(0.0, y, snap, d.set_point(0.0))
            y[self.i_z] = d.initial_opening - d.gain * e0

    def scales(self, p_ref: float) -> list[float]:
        out = [1.0] if self.pi else []
        if self.filtered:
            out.append(max(abs(v) for v in self.d.set_point.extremes()) or 1.0
                       if self.d.measures == "mass-flow" else p_ref)
        return out

    # ------------------------------------------------------------ output
    def finished(self, discrete) -> bool:
        return self.fill is not None and discrete[self.key + ".fill"] == FINISHED

    def output(self, t: float, y, snap, segment) -> float:
        """Valve travel [-] the controller sets at (t, y)."""
        d = self.d
        if self.fill is not None and self.finished(segment.discrete):
            return 0.0
        if not self.pi:
            return d.maximum_opening if segment.discrete[self.key] else d.minimum_opening
        e = self.error(t, y, snap, segment.signal(d.set_point, t))
        u = d.gain * e + y[self.i_z]
        return min(max(u, d.minimum_opening), d.maximum_opening)

    def derivatives(self, t, y, snap, flows, segment, dydt) -> None:
        d = self.d
        if self.filtered:
            x = flows[self.measured_link].mdot if d.measures == "mass-flow" else \
                snap.states[self.node].p
            dydt[self.i_f] = (x - y[self.i_f]) / d.measurement_lag
        if self.pi and not (self.fill is not None and self.finished(segment.discrete)):
            e = self.error(t, y, snap, segment.signal(d.set_point, t))
            z = y[self.i_z]
            u_raw = d.gain * e + z
            u = min(max(u_raw, d.minimum_opening), d.maximum_opening)
            dydt[self.i_z] = (d.gain * e + u - u_raw) / d.integral_time

    # ------------------------------------------------------------ events
    def initial_discrete(self, segment, snap) -> tuple[dict, str]:
        d = self.d
        out = {}
        words = []
        if not self.pi:
            y = snap.y
            e0 = self.error(0.0, y, snap, d.set_point(0.0))
            out[self.key] = e0 > 0.0
            words.append("on-off valve starts " + ("open" if e0 > 0.0 else "shut"))
        else:
            words.append(f"PI control starts at {100 * d.initial_opening:.4g} % open")
        if self.fill is not None:
            out[self.key + ".fill"] = FILLING
            f = self.fill
            words.append(f"fill starts at {f.start_pressure / 1e5:.6g} bar a, ramp "
                         f"{f.pressure_ramp * 60 / 1e6:.4g} MPa/min")
        return out, "; ".join(words)

    def switches(self, segment) -> list[Switch]:
        d = self.d
        out = []
        if self.fill is not None:
            key = self.key + ".fill"
            if segment.discrete[key] == FINISHED:
                return []
            f, i, V, m_t = self.fill, self.receiver, self.receiver_volume, self.mass_target
            out += [
                Switch(key, lambda t, s: s.states[i].p - f.final_pressure, +1, FINISHED,
                       f"fill ends: receiver at the final pressure "
                       f"{f.final_pressure / 1e5:.6g} bar a"),
                Switch(key, lambda t, s: s.states[i].T - f.temperature_limit, +1, FINISHED,
                       f"fill ends: gas at the temperature limit "
                       f"{f.temperature_limit - 273.15:.4g} degC"),
                Switch(key, lambda t, s: s.states[i].rho * V - m_t, +1, FINISHED,
                       f"fill ends: state of charge {100 * f.state_of_charge:.4g} % reached"),
            ]
        if not self.pi:
            key = self.key
            half = 0.5 * d.deadband
            sp = d.set_point

            def e(t, s):
                return self.error(t, s.y, s, sp(t))
            if segment.discrete[key]:
                out.append(Switch(key, lambda t, s: e(t, s) + half, -1, False,
                                  "on-off valve shuts"))
            else:
                out.append(Switch(key, lambda t, s: e(t, s) - half, +1, True,
                                  "on-off valve opens"))
        return out

    # ------------------------------------------------------------ outputs
    def columns(self) -> list[tuple[str, str, str]]:
        unit = UNITS[self.d.measures]
        cols = [(f"{self.name}.output", "-", "controller"),
                (f"{self.name}.set_point", unit, "controller"),
                (f"{self.name}.measured", unit, "controller")]
        if self.fill is not None:
            cols.append((f"{self.name}.state_of_charge", "-", "controller"))
        return cols

    def values(self, t, y, snap, segment) -> list[float]:
        done = self.fill is not None and self.finished(segment.discrete)
        row = [self.output(t, y, snap, segment),
               math.nan if done else segment.signal(self.d.set_point, t),
               self.measured(t, y, snap)]
        if self.fill is not None:
            row.append(snap.states[self.receiver].rho / self.fill.reference_density)
        return row

    def review(self, result) -> tuple[str, dict, list[str]]:
        """(link name, figures, warnings) of the run: for a fill, its end, state of
        charge, peak temperature and pressure against the trade's limits."""
        if self.fill is None:
            return self.d.valve, {}, []
        return self.d.valve, *fill_review(self, result)

    @staticmethod
    def assumptions(definitions) -> list[str]:
        out = []
        if any(d.mode == "pi" for d in definitions):
            out.append("PI controllers: continuous, the integral a state of the model, "
                       "back-calculation anti-windup with tracking time equal to the "
                       "integral time; the valve follows the controller's output at once "
                       "(no actuator lag).")
        if any(d.mode == "on-off" for d in definitions):
            out.append("On-off controllers: the valve steps between its limits when the "
                       "error crosses half the deadband either side of the set point.")
        if any(d.measurement_lag is not None for d in definitions):
            out.append("Mass flows and pressure-rise rates are measured through a "
                       "first-order lag (the rate as the filtered derivative of the pressure).")
        if any(d.fill is not None for d in definitions):
            out.append("Fills: the receiver's pressure follows a set point ramping from its "
                       "initial pressure at the stated average rate; the fill ends at the "
                       "final pressure, the gas temperature limit or the state of charge "
                       "(density over that at the nominal working pressure and 15 degC), "
                       "and its valve stays shut after.")
        return out


def fill_review(c: ValveController, result) -> tuple[dict, list[str]]:
    """Figures and warnings of a fill over a run (see :class:`ValveController.review`)."""
    import numpy as np
    f = c.fill
    name = f.receiver
    t = result.fine("time")
    p = result.fine(f"{name}.pressure")
    T = result.fine(f"{name}.temperature")
    rho = result.fine(f"{name}.density")
    end = None
    reason = "not ended within the run"
    for te, text in result.events:
        if text.startswith(f"{c.name}: fill ends"):
            end, reason = te, text.split("fill ends: ", 1)[1]
            break
    t_end = end if end is not None else float(t[-1])
    during = t <= t_end + 1e-9
    i_end = int(np.searchsorted(t, t_end, side="right")) - 1
    soc_end = float(rho[i_end]) / f.reference_density
    soc_run = float(rho[-1]) / f.reference_density
    iT = int(np.nanargmax(np.where(during, T, -np.inf)))
    ip = int(np.nanargmax(np.where(during, p, -np.inf)))
    T_peak, p_peak = float(T[iT]), float(p[ip])
    mop = f.maximum_operating_pressure
    duration = t_end
    ramp = (float(p[i_end]) - f.start_pressure) / duration if duration > 0 else math.nan
    figures = {
        "fill_end_s": end, "fill_end_reason": reason,
        "state_of_charge_at_fill_end": soc_end, "state_of_charge_at_run_end": soc_run,
        "reference_density_kg_m3": f.reference_density,
        "peak_gas_temperature_K": T_peak, "peak_gas_temperature_time_s": float(t[iT]),
        "gas_temperature_limit_K": f.temperature_limit,
        "peak_pressure_Pa": p_peak, "peak_pressure_time_s": float(t[ip]),
        "maximum_operating_pressure_Pa": mop,
        "average_pressure_ramp_Pa_s": ramp, "stated_pressure_ramp_Pa_s": f.pressure_ramp,
    }
    notes = [
        f"fill {'ended at ' + format(t_end, '.4g') + ' s: ' + reason if end is not None else reason}",
        f"state of charge {100 * soc_end:.4g} % at the end of the fill ({float(rho[i_end]):.4g} "
        f"kg/m3 against {f.reference_density:.4g} kg/m3 at "
        f"{f.nominal_working_pressure / 1e6:.4g} MPa and 15 degC), {100 * soc_run:.4g} % at "
        "the end of the run",
        f"peak gas temperature {T_peak - 273.15:.4g} degC at {float(t[iT]):.4g} s (limit "
        f"{f.temperature_limit - 273.15:.4g} degC: "
        f"{'CROSSED' if T_peak > f.temperature_limit + 1e-6 else 'met'})",
        f"peak pressure {p_peak / 1e6:.4g} MPa a at {float(t[ip]):.4g} s (125 % of the "
        f"nominal working pressure, {mop / 1e6:.4g} MPa: "
        f"{'CROSSED' if p_peak > mop else 'met'})",
        f"average pressure ramp {ramp * 60 / 1e6:.4g} MPa/min (stated "
        f"{f.pressure_ramp * 60 / 1e6:.4g} MPa/min)",
    ]
    figures["notes"] = notes
    warnings = []
    if T_peak > f.temperature_limit + 1e-6:
        warnings.append(f"fill '{c.name}': the gas in '{name}' reached {T_peak - 273.15:.4g} "
                        f"degC, above the {f.temperature_limit - 273.15:.4g} degC limit")
    if p_peak > mop:
        warnings.append(f"fill '{c.name}': the pressure in '{name}' reached "
                        f"{p_peak / 1e6:.4g} MPa, above 125 % of the nominal working pressure "
                        f"({mop / 1e6:.4g} MPa)")
    if end is None:
        warnings.append(f"fill '{c.name}' did not end within the run (state of charge "
                        f"{100 * soc_run:.4g} %): lengthen the run or check the supply")
    return figures, warnings


__all__ = ["GAS_TEMPERATURE_LIMIT", "MOP_SHARE", "ValveController", "fill_review"]

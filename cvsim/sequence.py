"""Sequences: links opened one after another (cascade charging from storage banks).

A sequence is a controller with one discrete state, the active step and the
time it became active. Only the link of the active step passes flow; the
model shuts the others (:attr:`cvsim.model.Model.gates`). The step moves on
when the first of the sequence's rules is met for the active link - its mass
flow falls to a value, the pressure difference across it falls to a value, or
the step has lasted a stated time - found exactly by a solver event. Flow and
pressure difference count in the link's forward direction (``from`` -> ``to``),
so a bank below the receiver's pressure meets either rule at once.

A step whose rule is already met when it comes up is skipped (a bank that is
already down to the receiver's pressure adds nothing); after the last step all
links of the sequence are shut. With a shortest step time the flow and
pressure-difference rules are watched only once the step has lasted that long
(a downstream valve that opens slowly, an intermediate volume filling first);
a step is then skipped on coming up only if it has no forward pressure
difference, and at the end of its shortest time it moves on at once if a rule
is met by then.

The controller only reads node states and link flows; it is built from the
frozen :class:`cvsim.network.Sequence` by the model, like the devices.
"""
from __future__ import annotations

from .flow.base import Switch

#: a step is taken as having lasted its shortest time this close to it [s]
_ARMED_SLACK = 1e-9


class SequenceController:
    """Run-time object of one :class:`cvsim.network.Sequence`.

    ``index`` is the sequence's position in the network; ``link_index`` maps
    link names to their positions; ``devices`` are the run-time devices of
    all links (by position).
    """

    kind = "sequence"

    def __init__(self, definition, index: int, link_index: dict, devices: list):
        self.d = definition
        self.name = definition.name
        self.key = f"sequence{index}.step"
        self.links = [link_index[n] for n in definition.steps]
        self.devices = [devices[k] for k in self.links]
        self.n = len(self.links)

    # ----------------------------------------------------------------- rules
    def _met(self, j: int, t: float, t_active: float, snap, segment,
             watched: bool = True) -> str | None:
        """Why the rule of step ``j`` is met at ``t`` (text), or ``None``.
        ``watched``: the flow and pressure-difference rules count."""
        d = self.d
        dev = self.devices[j]
        name = d.steps[j]
        dp = snap.states[dev.source].p - snap.states[dev.target].p
        if not watched:
            if dp <= 0.0 and dev.kind != "fixed-flow":  # a forced flow needs no difference
                return f"no forward pressure difference across '{name}' ({dp / 1e5:.4g} bar)"
            return None
        if d.flow_below is not None:
            f = dev.flow(t, snap.outflow[dev.source], snap.outflow[dev.target], segment)
            if f.mdot <= d.flow_below:
                return (f"flow through '{name}' {f.mdot:.4g} kg/s, at or below "
                        f"{d.flow_below:.4g} kg/s")
        if d.pressure_difference_below is not None and dp <= d.pressure_difference_below:
            return (f"pressure difference across '{name}' {dp / 1e5:.4g} bar, at or below "
                    f"{d.pressure_difference_below / 1e5:.4g} bar")
        if d.longest_step is not None and t - t_active >= d.longest_step:
            return f"'{name}' has been open {d.longest_step:.4g} s"
        return None

    def _next_open(self, j: int, t: float, snap, segment) -> tuple[int, str]:
        """First step from ``j`` on that is not skipped at ``t``, and the log text."""
        notes = []
        watched = not self.d.shortest_step
        while j < self.n:
            why = self._met(j, t, t, snap, segment, watched)
            if why is None:
                notes.append(f"step {j + 1} of {self.n} ('{self.d.steps[j]}') opens")
                break
            notes.append(f"step {j + 1} ('{self.d.steps[j]}') skipped: {why}")
            j += 1
        if j >= self.n:
            notes.append("sequence finished, all its links shut")
        return j, "; ".join(notes)

    # -------------------------------------------------------- discrete state
    def initial_discrete(self, segment, snap) -> tuple[dict, str]:
        """Initial state ``{key: (active step, time it became active)}`` and the log text."""
        j, text = self._next_open(0, 0.0, snap, segment)
        return {self.key: (j, 0.0)}, text

    def active(self, discrete) -> int:
        """Index of the active step (``n``: finished)."""
        return discrete[self.key][0]

    def switches(self, segment) -> list[Switch]:
        j, t_active = segment.discrete[self.key]
        if j >= self.n:
            return []
        d = self.d
        dev = self.devices[j]
        name = d.steps[j]
        i_src, i_tgt = dev.source, dev.target

        def advance(t, y, seg):
            snap = seg.states(t, y)
            j_new, text = self._next_open(j + 1, t, snap, seg)
            return (j_new, t), "; " + text

        if d.shortest_step and segment.t0 < t_active + d.shortest_step - _ARMED_SLACK:
            t_armed = t_active + d.shortest_step

            def armed(t, y, seg):
                why = self._met(j, t, t_active, seg.states(t, y), seg)
                if why is None:
                    return (j, t_active), "; its rules are watched from now"
                new, text = advance(t, y, seg)
                return new, f"; {why}" + text
            return [Switch(self.key, lambda t, s: t - t_armed, +1, armed,
                           f"'{name}' has been open its shortest time, "
                           f"{d.shortest_step:.4g} s")]

        out = []
        if d.flow_below is not None:
            thr = d.flow_below

            def g_flow(t, snap):
                f = dev.flow(t, snap.outflow[i_src], snap.outflow[i_tgt], segment)
                return f.mdot - thr
            out.append(Switch(self.key, g_flow, -1, advance,
                              f"flow through '{name}' fell to {thr:.4g} kg/s"))
        if d.pressure_difference_below is not None:
            dp = d.pressure_difference_below
            out.append(Switch(self.key,
                              lambda t, s: s.states[i_src].p - s.states[i_tgt].p - dp,
                              -1, advance,
                              f"pressure difference across '{name}' fell to "
                              f"{dp / 1e5:.4g} bar"))
        if d.longest_step is not None:
            t_next = t_active + d.longest_step
            out.append(Switch(self.key, lambda t, s: t - t_next, +1, advance,
                              f"'{name}' has been open {d.longest_step:.4g} s"))
        return out

    def observe(self, discrete) -> float:
        """Active step, 1-based; 0 once the sequence has finished."""
        j = self.active(discrete)
        return float(j + 1) if j < self.n else 0.0

    def columns(self) -> list[tuple[str, str, str]]:
        """The sequence's history column: its active step."""
        return [(f"{self.name}.step", "-", "sequence")]

    def values(self, t, y, snap, segment) -> list[float]:
        return [self.observe(segment.discrete)]

    @staticmethod
    def assumptions() -> list[str]:
        return ["Sequences open their links one at a time; a link waiting for its step, or "
                "past it, is shut tight (an ideal isolation valve in series)."]


__all__ = ["SequenceController"]

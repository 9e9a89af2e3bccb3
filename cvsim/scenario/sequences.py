"""The ``sequences`` section: links opened one after another (cascade charging).

Read into :class:`cvsim.network.Sequence` objects; the model turns each into a
controller (:mod:`cvsim.sequence`).
"""
from __future__ import annotations

from dataclasses import dataclass

from ..network import Sequence
from .spec import BAD, Field, Kind, Node, Quantity, Section, Sub, as_text
from .valves import PressureDifference

#: devices a sequence may open and shut
SEQUENCED_DEVICES = ("orifice", "control-valve", "check-valve", "fixed-flow")


@dataclass(frozen=True)
class LinkNames(Kind):
    """A list of link names, each once."""

    def read(self, raw, at, ctx):
        if not isinstance(raw, list) or not raw:
            ctx.problem(at, f"expected a list of link names, e.g. [bank_1, bank_2, bank_3]; "
                        f"got {as_text(raw)!r}")
            return BAD
        lines = getattr(raw, "item_lines", [])
        names, ok = [], True
        for i, item in enumerate(raw):
            here = at.item(i, lines[i] if i < len(lines) else None)
            name = Node(("link",)).read(item, here, ctx)
            if name is BAD:
                ok = False
            elif name in names:
                ctx.problem(here, f"link '{name}' is listed twice; each link is one step")
                ok = False
            else:
                names.append(name)
        return tuple(names) if ok else BAD

    def describe(self) -> str:
        return "list of link names"


def _check_rules(values, ctx) -> None:
    if all(values.get(k) is None for k in ("mass_flow_below", "pressure_difference_below",
                                           "longest_step")):
        ctx.problem(values.at, "give at least one rule: 'mass_flow_below', "
                    "'pressure_difference_below' or 'longest_step'")
    short, long_ = values.get("shortest_step"), values.get("longest_step")
    if isinstance(short, float) and isinstance(long_, float) and not long_ > short:
        ctx.problem(values.where["longest_step"], f"longest_step ({long_:g} s) must be longer "
                    f"than shortest_step ({short:g} s)")
    if isinstance(short, float) and values.get("mass_flow_below") is None and \
            values.get("pressure_difference_below") is None:
        ctx.problem(values.where["shortest_step"], "'shortest_step' delays the "
                    "'mass_flow_below' and 'pressure_difference_below' rules; give one of them")


NEXT_WHEN = Section(
    "next_when",
    "When a sequence moves on from the link of its active step: the first rule met wins, "
    "e.g. `next_when: {mass_flow_below: 5 g/s, longest_step: 3 min}`.",
    fields=(
        Field("mass_flow_below", Quantity("mass_flow", above=0.0),
              "The mass flow through the active link, from its `from` to its `to`, has "
              "fallen to this."),
        Field("pressure_difference_below", PressureDifference(above=0.0),
              "The pressure difference across the active link, p(from) - p(to), has "
              "fallen to this."),
        Field("longest_step", Quantity("time", above=0.0),
              "The active step has lasted this long."),
        Field("shortest_step", Quantity("time", above=0.0),
              "The flow and pressure-difference rules are watched only once the step has "
              "lasted this long (a valve downstream still opening, a volume filling first); "
              "a step is then skipped on coming up only if it has no forward pressure "
              "difference."),
    ),
    checks=(_check_rules,),
)

SEQUENCE = Section(
    "sequences",
    "Each sequence opens its links one after another (cascade charging from storage banks): "
    "only the link of the active step passes flow, the others are shut. It starts with the "
    "first step at time 0 and moves on by `next_when`; a step whose rule is already met when "
    "it comes up is skipped, and after the last step all its links are shut. The histories "
    "hold the active step as `<sequence>.step` (0 when finished) and each link's state as "
    "`<link>.opening`.",
    fields=(
        Field("steps", LinkNames(), "Links in the order they open (orifices, control valves, "
              "check valves or fixed flows).", required=True),
        Field("next_when", Sub(NEXT_WHEN), "Rules for moving on.", required=True),
    ),
)


def check_sequences(values, ctx) -> None:
    """Top-level checks: each link in at most one sequence, of a kind that can be sequenced."""
    sequences, links = values.get("sequences"), values.get("links")
    if not isinstance(sequences, dict):
        return
    owner: dict[str, str] = {}
    for name, seq in sequences.items():
        if seq is BAD or not isinstance(seq.get("steps"), tuple):
            continue
        for i, link in enumerate(seq["steps"]):
            at = seq.where["steps"]
            if link in owner:
                ctx.problem(at, f"link '{link}' is already a step of sequence '{owner[link]}'; "
                            "a link belongs to one sequence at most")
                continue
            owner[link] = name
            entry = links.get(link) if isinstance(links, dict) else None
            device = entry.get("device") if entry not in (None, BAD) else None
            if isinstance(device, str) and device not in SEQUENCED_DEVICES:
                ctx.problem(at, f"link '{link}' is a {device}, which a sequence cannot open "
                            f"and shut; sequences hold {', '.join(SEQUENCED_DEVICES)}")


def build_sequence(name: str, values) -> Sequence:
    rules = values["next_when"]
    return Sequence(name=name, steps=values["steps"], flow_below=rules["mass_flow_below"],
                    pressure_difference_below=rules["pressure_difference_below"],
                    longest_step=rules["longest_step"], shortest_step=rules["shortest_step"])

"""Tables of the things a scenario can name: flow devices, vessel shapes, heat terms.

A new device (control valve, relief valve, bursting disc, check valve) or a
new heat term (a wall model, fire) is added by registering one entry here
from its own module; the reader, the validator and the reference docs pick it
up from these tables.

* ``DEVICES[name]``: a :class:`~cvsim.scenario.spec.Variant` whose section
  lists the device's keys and whose ``build(values, ctx)`` returns a device
  of :mod:`cvsim.network`.
* ``SHAPES[name]``: a Variant whose ``build(values, ctx)`` returns a
  :class:`~cvsim.network.Geometry`.
* ``HEAT_TERMS[key]``: a :class:`HeatTermKind` read from the key of that
  name under a vessel's ``heat``.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from .spec import Field, Variant

DEVICES: dict[str, Variant] = {}
SHAPES: dict[str, Variant] = {}


@dataclass(frozen=True)
class HeatTermKind:
    """One key under a vessel's ``heat``.

    field  the key, its kind of value and its meaning
    build  ``build(value, geometry, at, ctx)`` -> a heat term of :mod:`cvsim.network`
           (``geometry``: the vessel's :class:`~cvsim.network.Geometry`)
    check  ``check(value, vessel_values, at, ctx)``: checks that need the vessel
           (e.g. an area that only a shape can supply); ``None``: none
    """

    field: Field
    build: Callable
    check: Callable | None = None

    @property
    def name(self) -> str:
        return self.field.name


HEAT_TERMS: dict[str, HeatTermKind] = {}

#: ``LIQUID_SERVICE[device class]``: ``fn(device) -> (problem, model)`` for a device of
#: :mod:`cvsim.network` that will pass liquid: ``problem`` says what to change when the
#: device cannot model liquid ("" when it can), ``model`` names the equations it uses.
#: Device kinds not listed pass liquid as they pass anything (a forced flow).
LIQUID_SERVICE: dict[type, Callable] = {}


def register_device(variant: Variant) -> Variant:
    """Add a flow device kind (``device: <name>`` in a link)."""
    DEVICES[variant.name] = variant
    return variant


def register_shape(variant: Variant) -> Variant:
    """Add a vessel shape kind (``shape: {kind: <name>, ...}``)."""
    SHAPES[variant.name] = variant
    return variant


def register_heat_term(kind: HeatTermKind) -> HeatTermKind:
    """Add a heat term (a key under a vessel's ``heat``)."""
    HEAT_TERMS[kind.name] = kind
    return kind


def register_liquid_service(device_type: type, check: Callable) -> Callable:
    """Say how a device kind passes liquid (see :data:`LIQUID_SERVICE`)."""
    LIQUID_SERVICE[device_type] = check
    return check

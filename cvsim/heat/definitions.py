"""Frozen definitions (SI) of walls and fire exposure, as the scenario reader builds them.

They complete the heat terms of :mod:`cvsim.network` (a vessel's ``heat`` holds
them beside loads and exchange with surroundings); the run-time objects are in
:mod:`cvsim.heat.walls`. Nothing here parses text or checks values: the scenario
reader has done that.
"""
from __future__ import annotations

from dataclasses import dataclass

from ..signals import Signal
from .geometry import Surface
from .materials import Material


@dataclass(frozen=True)
class WallLayer:
    """One layer of a wall, inside to outside.

    material   its properties
    thickness  [m]
    divisions  number of equal slices it is cut into for conduction (temperatures
               are computed at the slice faces)
    """

    material: Material
    thickness: float
    divisions: int = 1


@dataclass(frozen=True)
class InsideTransfer:
    """Heat transfer between the gas and the inside surface of the wall.

    model           ``natural`` (correlation in the Rayleigh number), ``natural+jet``
                    (natural convection combined with the forced convection of
                    filling jets) or ``fixed``
    coefficient     [W/(m2 K)] ``fixed``: the coefficient
    while_filling   [W/(m2 K)] ``fixed``: the coefficient while a stream enters the
                    vessel; ``None``: ``coefficient`` throughout
    inlet_diameter  [m] ``natural+jet``: diameter of the jets entering the vessel;
                    ``None``: each inlet orifice's bore
    """

    model: str
    coefficient: float | None = None
    while_filling: float | None = None
    inlet_diameter: float | None = None


@dataclass(frozen=True)
class OutsideTransfer:
    """Heat transfer between the outside surface and the surroundings.

    model        ``natural`` (natural convection in air), ``fixed`` or ``insulated``
                 (no exchange)
    ambient      [K] temperature of the surroundings, constant or a table in time
    coefficient  [W/(m2 K)] ``fixed``: the convective coefficient
    emissivity   [-] of the outside surface for radiation to surroundings at the
                 ambient temperature; 0: no radiation
    """

    model: str
    ambient: Signal
    coefficient: float | None = None
    emissivity: float = 0.0


@dataclass(frozen=True)
class WettedSurface:
    """What a pool fire needs to follow the liquid level (API 521 wetted area).

    kind, inner_diameter, length, heads, orientation
                 the vessel's inside shape (as :class:`cvsim.network.Geometry`)
    offset       [m] depth into the wall of the surface counted: the wall's thickness
                 (the outside surface), 0 without a wall (inside dimensions)
    elevation    [m] height of that surface's lowest point above the base of the fire
    reach        [m] height above that lowest point within which surfaces count:
                 7.6 m (:data:`cvsim.heat.fire.FIRE_HEIGHT`) less the elevation
    """

    kind: str
    inner_diameter: float
    length: float
    heads: str
    orientation: str
    offset: float
    elevation: float
    reach: float


@dataclass(frozen=True)
class PoolFire:
    """API 521 pool-fire heat input Q = C1 F A^0.82 (see :mod:`cvsim.heat.fire`).

    area                [m2] exposed area within 7.6 m of the fire's base (stated, or the
                        whole outside area within that height)
    environment_factor  [-] F
    drainage            prompt fire-fighting and adequate drainage present
    starts_at           [s] time the fire starts
    wetted              how the wetted area follows the liquid level
                        (:func:`cvsim.heat.fire.pool_fire_area`); ``None``: ``area``
                        throughout (it was stated)
    """

    area: float
    environment_factor: float = 1.0
    drainage: bool = True
    starts_at: float = 0.0
    wetted: WettedSurface | None = None


@dataclass(frozen=True)
class FlameExposure:
    """A flame engulfing part of the outside surface (radiant and convective).

    area                    [m2] exposed outside area
    flame_temperature       [K]
    flame_emissivity        [-]
    surface_emissivity      [-] of the outside surface
    convective_coefficient  [W/(m2 K)] flame gases to surface
    starts_at               [s] time the fire starts
    """

    area: float
    flame_temperature: float
    flame_emissivity: float
    surface_emissivity: float
    convective_coefficient: float
    starts_at: float = 0.0


Fire = PoolFire | FlameExposure


@dataclass(frozen=True)
class Wall:
    """The wall of a vessel as a heat term with temperatures of its own.

    name                 label of the heat term (``wall``)
    model                ``lumped`` (one temperature) or ``layered`` (1-D conduction)
    layers               inside to outside
    surface              area at depth x into the wall, A(x) = a0 + a1 x + a2 x^2
    convection_shape     ``vertical``, ``horizontal`` or ``sphere``: which natural
                         convection correlation applies inside and outside
    inside_length        [m] characteristic length inside (height of a vertical
                         vessel, inside diameter otherwise)
    outside_length       [m] the same outside
    inside_diameter      [m] (length of the fill-jet correlation)
    inside               gas-to-wall heat transfer
    outside              wall-to-surroundings heat transfer
    fire                 fire on the outside, or ``None``
    initial_temperature  [K] uniform at the start; ``None``: the gas's initial temperature
    key                  key path in the scenario, for messages
    """

    name: str
    model: str
    layers: tuple[WallLayer, ...]
    surface: Surface
    convection_shape: str
    inside_length: float
    outside_length: float
    inside_diameter: float
    inside: InsideTransfer
    outside: OutsideTransfer
    fire: Fire | None
    initial_temperature: float | None
    key: str = ""

    @property
    def thickness(self) -> float:
        return sum(layer.thickness for layer in self.layers)


@dataclass(frozen=True)
class GasFire:
    """A pool fire heating a vessel's contents directly (no wall modelled)."""

    name: str
    fire: PoolFire


__all__ = ["FlameExposure", "Fire", "GasFire", "InsideTransfer", "OutsideTransfer",
           "PoolFire", "Wall", "WallLayer", "WettedSurface"]

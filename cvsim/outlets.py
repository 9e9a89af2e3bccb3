"""What an outlet draws from a vessel whose contents are in two phases.

A top outlet draws saturated vapour and a bottom outlet saturated liquid while
there is a level between them. When the liquid share of the volume nears one
(the level reaches the top outlet) a top outlet draws the mixture itself; when
it nears zero (the last liquid leaves the bottom) a bottom outlet does. Between,
the vapour mass fraction of the drawn stream goes linearly in the liquid share:

    top outlet:    x_out = 1                               for f <= F_TOP
                   x_out = 1 + (x - 1) (f - F_TOP)/(1 - F_TOP)   for f > F_TOP
    bottom outlet: x_out = 0                               for f >= F_BOTTOM
                   x_out = x (F_BOTTOM - f)/F_BOTTOM       for f < F_BOTTOM

with x the contents' quality and f their liquid share of the volume. At f = 1
(f = 0) the contents are saturated liquid (vapour), so the drawn stream, its
enthalpy and the vessel's balances stay continuous when a vessel becomes
liquid-full or boils dry. Without it the stream would jump from vapour to
liquid there, and the solver would chatter on the boundary (a liquid-full drum
relieving through a top outlet took 34 000 steps).

F_TOP and F_BOTTOM are a stated regularisation (common practice, no source): the
level within a few per cent of the volume of the outlet, where a real outlet
entrains the other phase.

An outlet at a stated height (``outlet_height``, vessels given by their shape)
leaves a share f_o of the volume below it. It draws vapour while the level is
below it and liquid while the level is above it; within a band of levels around
it that holds BAND (2 %) of the volume, the same width as the top and bottom
bands (f_o - BAND/2 <= f <= f_o + BAND/2), the liquid share w of the drawn mass
rises linearly in the liquid share of the volume:

    side outlet:   w = (f - f_o + BAND/2) / BAND, clipped to 0..1;   x_out = 1 - w

An outlet whose band would reach past the top (f_o >= 1 - BAND/2) or the bottom
(f_o <= BAND/2) is the top or the bottom outlet above, band and all
(:func:`drawn_by`), so an outlet at the inside height is exactly ``draws:
vapour`` and one at 0 exactly ``draws: liquid``. The ``draws`` argument of the
functions here is ``vapour``, ``liquid`` or, for a side outlet, f_o itself.
"""
from __future__ import annotations

#: liquid share of the volume above which a top outlet starts to draw liquid
F_TOP = 0.98
#: liquid share of the volume below which a bottom outlet starts to draw vapour
F_BOTTOM = 0.02
#: share of the volume taken by the band of levels around a side outlet in which it
#: draws both phases (the width of the top and bottom bands)
BAND = F_BOTTOM


def drawn_by(link):
    """What ``link`` draws from its ``from`` vessel, as the ``draws`` argument of the
    functions here: its ``draws`` (``vapour`` or ``liquid``) without an outlet height,
    else the share f_o [-] of the volume below the outlet, or ``vapour`` (``liquid``)
    when the outlet's band reaches the top (bottom) of the vessel."""
    share = link.outlet_share
    if share is None:
        return link.draws
    if share >= 1.0 - 0.5 * BAND:
        return "vapour"
    if share <= 0.5 * BAND:
        return "liquid"
    return share


def side_liquid_share(outlet_share: float, liquid_fraction: float) -> float:
    """Mass share [-] of liquid in what a side outlet with a share ``outlet_share`` [-]
    of the volume below it draws when liquid fills ``liquid_fraction`` [-] of the
    volume: 0 below its band, 1 above it, linear across it (width BAND)."""
    w = (liquid_fraction - outlet_share + 0.5 * BAND) / BAND
    return 0.0 if w <= 0.0 else 1.0 if w >= 1.0 else w


def drawn_quality(draws: str, quality: float, liquid_fraction: float) -> float:
    """Vapour mass fraction [-] of the stream an outlet draws from two-phase contents
    of vapour quality ``quality`` [-] filling ``liquid_fraction`` [-] of the volume
    with liquid; ``draws`` is ``vapour`` (top outlet), ``liquid`` (bottom) or the
    share of the volume below a side outlet (:func:`drawn_by`)."""
    f = liquid_fraction
    if draws == "liquid":
        if f >= F_BOTTOM:
            return 0.0
        return min(max(quality * (F_BOTTOM - f) / F_BOTTOM, 0.0), 1.0)
    if draws != "vapour":
        return 1.0 - side_liquid_share(draws, f)
    if f <= F_TOP:
        return 1.0
    return min(max(1.0 + (quality - 1.0) * (f - F_TOP) / (1.0 - F_TOP), 0.0), 1.0)


def drawn_state(fluid, st, draws: str):
    """The state an outlet that draws ``draws`` takes from contents ``st``: the contents
    themselves while single phase, else the two-phase stream of :func:`drawn_quality`
    at the contents' pressure."""
    if not st.two_phase:
        return st
    x = drawn_quality(draws, st.quality, st.liquid_fraction)
    if x == 1.0:
        return fluid.saturated_vapour_at_p(st.p)
    if x == 0.0:
        return fluid.saturated_liquid_at_p(st.p)
    return fluid.two_phase_at_p(st.p, x)


__all__ = ["BAND", "F_BOTTOM", "F_TOP", "drawn_by", "drawn_quality", "drawn_state",
           "side_liquid_share"]

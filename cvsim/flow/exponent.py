"""The one exponent of cvsim's perfect-gas flow equations.

The perfect-gas forms in cvsim - the orifice's ``ideal-gas`` flow model, the
IEC 60534-2-1 control-valve equation (its Fg = k/1.40) and the API 520 Part I
relief-valve capacity - are the perfect-gas nozzle with the real density of the
upstream gas (which carries the compressibility factor Z). All take the same
exponent:

    k = cp0 / (cp0 - R)     ideal-gas heat-capacity ratio at the upstream temperature

with cp0 the ideal-gas (zero-density) isobaric heat capacity and R = R_u/M. This is
the k of API 520 Part I's gas-sizing equations (sec. 5.6: the ideal-gas ratio of
specific heats at the relieving temperature; wording from memory, as docs/theory.md
notes) and the gamma that IEC 60534-2-1 practice pairs with the Z-corrected density. The real cp/cv is not used: near the critical point it grows without
bound (8.3 for carbon dioxide at 80 bar, 310 K; 11 for ethylene at 60 bar, 290 K), and
put in a perfect-gas formula it gives flows 85-99 % above the real-gas nozzle and a
control valve that never chokes (docs/decisions.md, "One exponent").

A two-phase or saturated source (a vessel's saturated vapour, where cp is not defined)
gets the same definition: the ideal-gas k of the vapour at its temperature. The
assumption register says so (:data:`EXPONENT_ASSUMPTION`).
"""
from __future__ import annotations

from ..fluid import fluid_of

#: the exponent in words, for the assumption register
EXPONENT_ASSUMPTION = (
    "exponent k = ideal-gas heat-capacity ratio cp0/(cp0 - R) at the upstream temperature, "
    "with the real upstream density (which holds Z), as API 520 Part I and IEC 60534-2-1 "
    "practice do; from a saturated or two-phase source (vapour drawn from a two-phase "
    "vessel, or liquid) the ideal-gas k of the fluid at that temperature, a perfect-gas "
    "stand-in only: the real-gas nozzle is the model for such flow")


def perfect_gas_exponent(fluid, up) -> float:
    """Exponent k [-] of the perfect-gas flow equations for the upstream state ``up``.

        k = cp0(T) / (cp0(T) - R),   R = R_u / M

    Parameters
    ----------
    fluid : the run's fluid object (:mod:`cvsim.fluid`), offering ``ideal_gas_gamma``
        (a mixture state brings its own composition's, :func:`cvsim.fluid.fluid_of`)
    up : upstream stagnation state (:class:`cvsim.fluid.State`); single phase,
        saturated or two-phase alike (cp0 depends on the temperature only)

    Validity: the perfect-gas nozzle with the real density; far from the critical
    point it agrees with the real-gas nozzle within a few per cent, near it within
    about 15 % (carbon dioxide at 80 bar, 310 K: +13 %; methane at 100 bar, 240 K:
    -7 %), which is why the real-gas nozzle is the orifice default.

    Source: API 520 Part I, sec. 5.6 (k of the ideal gas at relieving temperature);
    IEC 60534-2-1:2011, eq. 20 (Fg = gamma/1.40).
    """
    return fluid_of(up, fluid).ideal_gas_gamma(up.rho, up.T)


__all__ = ["EXPONENT_ASSUMPTION", "perfect_gas_exponent"]

"""Darcy friction factor of a round pipe: laminar, transition and the Colebrook equation.

* laminar, Re <= 2000: f = 64 / Re (Hagen-Poiseuille);
* turbulent, Re >= 4000: the Colebrook (Colebrook-White) equation,

      1/sqrt(f) = -2 log10( (e/D)/3.7 + 2.51 / (Re sqrt(f)) ),

  solved by Newton's method on x = 1/sqrt(f), converged on the residual;
* between (the "critical zone" of the Moody chart, where the flow is neither),
  f is interpolated linearly in Re between the laminar value at 2000 and the
  Colebrook value at 4000, so that f is continuous in the flow (the solver needs a
  flow without jumps; common practice, no source for the interpolation itself).

The friction factor is the Darcy (Moody) one: four times the Fanning factor.
References: C. F. Colebrook, "Turbulent flow in pipes, with particular reference to
the transition region between the smooth and rough pipe laws", J. Inst. Civil Eng.
11 (1939) 133; L. F. Moody, "Friction factors for pipe flow", Trans. ASME 66 (1944)
671 (the chart, the critical zone 2000-4000).
"""
from __future__ import annotations

import math

#: Reynolds number up to which the flow is taken laminar
RE_LAMINAR = 2000.0
#: Reynolds number from which the Colebrook equation holds
RE_TURBULENT = 4000.0
#: residual tolerance of the Colebrook solve, relative to 1/sqrt(f)
COLEBROOK_RTOL = 1e-14
_LN10 = math.log(10.0)


def colebrook(Re: float, eD: float) -> float:
    """Darcy friction factor f [-] by the Colebrook equation (turbulent flow).

        1/sqrt(f) = -2 log10( eD/3.7 + 2.51/(Re sqrt(f)) )

    Parameters
    ----------
    Re : Reynolds number rho V D / mu [-], turbulent (above about 4000)
    eD : relative roughness e/D [-] (0 for a smooth pipe)

    Solved by Newton's method on x = 1/sqrt(f) from the Swamee-Jain estimate,
    stopped when the residual is below 1e-14 x (three or four steps).

    Source: Colebrook, J. Inst. Civil Eng. 11 (1939) 133, eq. 10 in the Darcy form.

    >>> round(colebrook(1e5, 1e-4), 6)   # Moody chart region; fluids.Colebrook agrees
    0.018514
    """
    a = eD / 3.7
    b = 2.51 / Re
    # Swamee & Jain (1976) explicit estimate as the start
    x = -2.0 * math.log10(a + 5.74 / Re ** 0.9)
    for _ in range(50):
        arg = a + b * x
        g = x + 2.0 * math.log10(arg)
        if abs(g) <= COLEBROOK_RTOL * x:
            break
        x -= g / (1.0 + 2.0 * b / (arg * _LN10))
    return 1.0 / (x * x)


def friction_factor(Re: float, eD: float) -> float:
    """Darcy friction factor f [-] for any Reynolds number (see the module docstring).

    Parameters
    ----------
    Re : Reynolds number [-] (> 0)
    eD : relative roughness e/D [-]
    """
    if Re <= RE_LAMINAR:
        return 64.0 / Re
    if Re >= RE_TURBULENT:
        return colebrook(Re, eD)
    w = (Re - RE_LAMINAR) / (RE_TURBULENT - RE_LAMINAR)
    return (1.0 - w) * 64.0 / RE_LAMINAR + w * colebrook(RE_TURBULENT, eD)


def fully_rough_friction_factor(eD: float) -> float:
    """Darcy friction factor of fully rough flow (Re -> infinity) [-]:
    1/sqrt(f) = -2 log10(eD/3.7), the Colebrook equation's limit (eD > 0)."""
    x = -2.0 * math.log10(eD / 3.7)
    return 1.0 / (x * x)


__all__ = ["RE_LAMINAR", "RE_TURBULENT", "colebrook", "friction_factor",
           "fully_rough_friction_factor"]

"""Convection correlations between a wall and the gas inside or the air outside.

Each correlation is a small function of dimensionless groups (SI in, SI out) with
its validity range stored as data beside it (:class:`Validity`); the wall model
watches the groups it meets during a run (:class:`RangeWatch`) and reports every
excursion as a warning in the summary.

Natural convection uses the Churchill & Chu correlations of an isothermal surface
in an extensive quiescent fluid: a vertical plate (used for a vertical cylinder,
characteristic length its height), a horizontal cylinder (length: its diameter) and
a sphere (length: its diameter). Inside a closed vessel the gas is not extensive
and not quiescent; applying these forms to the inside surface, with the well-mixed
gas as the far field, is the usual engineering approximation and is stated in the
run's assumptions.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

G = 9.80665  # [m/s2] standard acceleration of gravity (CGPM 1901, exact)


@dataclass(frozen=True)
class Validity:
    """Where a correlation holds.

    name    the correlation, as shown in warnings
    source  where the form and the range come from
    limits  group name -> (low, high); ``None`` for an open end
    """

    name: str
    source: str
    limits: dict = field(default_factory=dict)

    def describe(self, group: str) -> str:
        lo, hi = self.limits[group]
        if lo is None:
            return f"up to {hi:.3g}"
        if hi is None:
            return f"from {lo:.3g}"
        return f"{lo:.3g} to {hi:.3g}"


class RangeWatch:
    """Smallest and largest value of each (correlation, group) met during a run.

    :meth:`see` is called at every recorded point and accepted solver step (not at
    trial states); :meth:`warnings` lists each group that left its range, once, with
    the extreme reached.
    """

    def __init__(self):
        self._seen: dict[tuple[str, str], list] = {}

    def see(self, validity: Validity, group: str, value: float, t: float) -> None:
        if value != value:
            return
        key = (validity.name, group)
        entry = self._seen.get(key)
        if entry is None:
            self._seen[key] = [validity, value, t, value, t]
            return
        if value < entry[1]:
            entry[1], entry[2] = value, t
        if value > entry[3]:
            entry[3], entry[4] = value, t

    def warnings(self, where: str) -> list[str]:
        out = []
        for (name, group), (validity, lo, t_lo, hi, t_hi) in self._seen.items():
            low, high = validity.limits[group]
            if low is not None and lo < low:
                out.append(f"{where}: {name}: {group} {lo:.3g} at t = {t_lo:.4g} s is below "
                           f"the range of the correlation ({validity.describe(group)}; "
                           f"{validity.source}); the result there is an extrapolation")
            if high is not None and hi > high:
                out.append(f"{where}: {name}: {group} {hi:.3g} at t = {t_hi:.4g} s is above "
                           f"the range of the correlation ({validity.describe(group)}; "
                           f"{validity.source}); the result there is an extrapolation")
        return out


# ------------------------------------------------------------- dimensionless groups

def rayleigh(beta: float, dT: float, L: float, rho: float, mu: float, k: float,
             cp: float, g: float = G) -> float:
    """Rayleigh number Ra = g beta |dT| L^3 / (nu alpha) [-].

    nu = mu/rho, alpha = k/(rho cp) (the definition of Incropera et al., *Fundamentals
    of Heat and Mass Transfer*, 7th ed., ch. 9).

    Parameters
    ----------
    beta : isobaric expansion coefficient [1/K] (1/T for an ideal gas)
    dT : surface minus fluid temperature [K] (its magnitude is used)
    L : characteristic length [m]
    rho : density [kg/m3];  mu : dynamic viscosity [Pa s]
    k : thermal conductivity [W/(m K)];  cp : isobaric heat capacity [J/(kg K)]
    g : acceleration of gravity [m/s2]
    """
    return g * beta * abs(dT) * L**3 * rho * rho * cp / (mu * k)


def prandtl(mu: float, k: float, cp: float) -> float:
    """Prandtl number Pr = cp mu / k [-]."""
    return cp * mu / k


# ---------------------------------------------------------------- natural convection

VERTICAL_PLATE = Validity(
    "natural convection, vertical surface (Churchill & Chu 1975)",
    "Churchill & Chu, Int. J. Heat Mass Transfer 18 (1975) 1323; Incropera 7th ed. eq. 9.26",
    {"Rayleigh number": (1e-1, 1e12)})


def nu_vertical_plate(Ra: float, Pr: float) -> float:
    """Mean Nusselt number of an isothermal vertical plate, laminar to turbulent.

    Nu_L = {0.825 + 0.387 Ra_L^(1/6) / [1 + (0.492/Pr)^(9/16)]^(8/27)}^2

    Parameters
    ----------
    Ra : Rayleigh number on the height L [-]
    Pr : Prandtl number [-]

    Validity: 1e-1 <= Ra_L <= 1e12, any Pr (:data:`VERTICAL_PLATE`). A vertical
    cylinder behaves as a plate when D/L >= 35/Gr_L^(1/4) (Incropera 7th ed.,
    sec. 9.6.1; also in the ``ht`` library's documentation of this correlation).

    Source: Churchill & Chu, "Correlating equations for laminar and turbulent free
    convection from a vertical plate", Int. J. Heat Mass Transfer 18 (1975) 1323-1329;
    Incropera et al., *Fundamentals of Heat and Mass Transfer*, 7th ed., eq. 9.26.

    >>> round(nu_vertical_plate(0.69 * 2.63e9, 0.69), 2)   # Incropera Example 9.2
    147.16
    """
    return (0.825 + 0.387 * Ra ** (1.0 / 6.0)
            / (1.0 + (0.492 / Pr) ** (9.0 / 16.0)) ** (8.0 / 27.0)) ** 2


HORIZONTAL_CYLINDER = Validity(
    "natural convection, horizontal cylinder (Churchill & Chu 1975)",
    "Churchill & Chu, Int. J. Heat Mass Transfer 18 (1975) 1049; Incropera 7th ed. eq. 9.34",
    {"Rayleigh number": (1e-5, 1e12)})


def nu_horizontal_cylinder(Ra: float, Pr: float) -> float:
    """Mean Nusselt number of an isothermal horizontal cylinder.

    Nu_D = {0.60 + 0.387 Ra_D^(1/6) / [1 + (0.559/Pr)^(9/16)]^(8/27)}^2

    Parameters
    ----------
    Ra : Rayleigh number on the diameter D [-]
    Pr : Prandtl number [-]

    Validity: 1e-5 <= Ra_D <= 1e12 (:data:`HORIZONTAL_CYLINDER`; the lower end from
    the original paper, the upper from the textbook).

    Source: Churchill & Chu, "Correlating equations for laminar and turbulent free
    convection from a horizontal cylinder", Int. J. Heat Mass Transfer 18 (1975)
    1049-1053; Incropera et al., 7th ed., eq. 9.34.
    """
    return (0.60 + 0.387 * Ra ** (1.0 / 6.0)
            / (1.0 + (0.559 / Pr) ** (9.0 / 16.0)) ** (8.0 / 27.0)) ** 2


SPHERE = Validity(
    "natural convection, sphere (Churchill 1983)",
    "Churchill, Heat Exchanger Design Handbook (1983); Incropera 7th ed. eq. 9.35",
    {"Rayleigh number": (None, 1e11), "Prandtl number": (0.7, None)})


def nu_sphere(Ra: float, Pr: float) -> float:
    """Mean Nusselt number of an isothermal sphere.

    Nu_D = 2 + 0.589 Ra_D^(1/4) / [1 + (0.469/Pr)^(9/16)]^(4/9)

    Parameters
    ----------
    Ra : Rayleigh number on the diameter D [-]
    Pr : Prandtl number [-]

    Validity: Ra_D <= 1e11, Pr >= 0.7 (:data:`SPHERE`).

    Source: Churchill (1983), as given by Incropera et al., 7th ed., eq. 9.35.
    """
    return 2.0 + 0.589 * Ra**0.25 / (1.0 + (0.469 / Pr) ** (9.0 / 16.0)) ** (4.0 / 9.0)


#: correlation and validity by the shape a convection surface has
NATURAL = {
    "vertical": (nu_vertical_plate, VERTICAL_PLATE),
    "horizontal": (nu_horizontal_cylinder, HORIZONTAL_CYLINDER),
    "sphere": (nu_sphere, SPHERE),
}


# ----------------------------------------------------------------- forced: fill jet

FILL_JET = Validity(
    "forced convection of the filling jet (Woodfield et al. 2007 form)",
    "Woodfield, Monde & Mitsutake, J. Thermal Sci. Tech. 2 (2007) 180, coefficients "
    "from memory, range not confirmed",
    {})

#: coefficients of Nu_D = JET_C Re_d^JET_N (from memory of the paper below; verify)
JET_C = 0.56
JET_N = 0.67

#: what every run that uses the fill-jet correlation says (its warnings)
JET_CAUTION = (
    "inside coefficient while filling from the fill-jet correlation Nu_D = 0.56 Re_d^0.67 "
    "(Woodfield, Monde & Mitsutake 2007 form), whose coefficients are quoted from memory "
    "and whose range is not confirmed. A higher inside coefficient moves heat from the gas "
    "into the wall, so the peak gas temperature of this run may be optimistic: for a "
    "limit on the peak gas temperature use 'inside: {model: natural}' (jets not counted, "
    "the conservative choice) or a fixed coefficient with a 'while_filling' value from a "
    "measurement of the vessel type (e.g. 500 W/(m2 K) fitted for 39-205 L hydrogen "
    "cylinders filled to 35-70 MPa in 5-20 min, Woodfield, Monde & Takano, J. Thermal "
    "Science and Technology 3(2) (2008) 241)")


def nu_fill_jet(Re_d: float) -> float:
    """Nusselt number on the vessel's inside diameter from the jet of a filling stream.

    Nu_D = 0.56 Re_d^0.67,   Re_d = 4 mdot / (pi d mu)

    Re_d is the Reynolds number of the inlet jet on its diameter d: with the jet's
    velocity w = 4 mdot / (pi d^2 rho) it is rho w d / mu, so the density drops out.

    Parameters
    ----------
    Re_d : inlet jet Reynolds number [-]

    Validity: not confirmed. The form and its coefficients are the forced-convection
    part of the correlation fitted by Woodfield, Monde & Mitsutake to measured
    coefficients in a vessel charged with hydrogen, nitrogen and argon ("Measurement
    of averaged heat transfer coefficients in high-pressure vessel during charging
    with hydrogen, nitrogen or argon gas", J. Thermal Science and Technology 2(2)
    (2007) 180-191). The coefficients here are from memory of later papers that quote
    it; the original with its range of Re_d was not available, and a search of the
    fast-filling literature at hand did not turn up a source that prints it: verify
    before relying on it. Every run that uses it says so in its assumptions and
    warnings (:data:`JET_CAUTION`); the conservative choice for a fill's peak gas
    temperature is natural convection alone (the jet can only add to the
    coefficient), which is what ``inside: {model: natural}`` gives.
    """
    return JET_C * Re_d**JET_N


def jet_reynolds(mdot: float, d: float, mu: float) -> float:
    """Reynolds number of a round jet Re_d = 4 mdot / (pi d mu) [-].

    Parameters
    ----------
    mdot : mass flow [kg/s];  d : jet (inlet) diameter [m];  mu : dynamic viscosity [Pa s]
    """
    return 4.0 * abs(mdot) / (math.pi * d * mu)


# --------------------------------------------------------------------- combination

MIXED_EXPONENT = 3.0


def mixed(h_forced: float, h_natural: float, n: float = MIXED_EXPONENT) -> float:
    """Coefficient of combined forced and natural convection [W/(m2 K)].

    h^n = h_F^n + h_N^n, n = 3

    The form of Incropera et al., *Fundamentals of Heat and Mass Transfer*, 7th ed.,
    sec. 9.9 (mixed convection), Nu^n = Nu_F^n + Nu_N^n for assisting and transverse
    flows, where n = 3 generally correlates data best; applied to the coefficients
    (each on its own length) it weighs the larger one most and tends to it when the
    other fades.

    >>> round(mixed(400.0, 300.0), 1)
    449.8
    """
    return (h_forced**n + h_natural**n) ** (1.0 / n)


__all__ = [
    "FILL_JET", "G", "HORIZONTAL_CYLINDER", "JET_C", "JET_CAUTION", "JET_N", "MIXED_EXPONENT",
    "NATURAL",
    "RangeWatch", "SPHERE", "VERTICAL_PLATE", "Validity", "jet_reynolds", "mixed",
    "nu_fill_jet", "nu_horizontal_cylinder", "nu_sphere", "nu_vertical_plate", "prandtl",
    "rayleigh",
]

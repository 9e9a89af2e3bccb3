"""Stress in a pressurised shell and the strength of its metal at temperature.

Pure functions, SI in and out, for the rupture screening of a vessel in a fire
(:mod:`cvsim.rupture` applies them to a run's histories):

* membrane stresses of a cylindrical shell (hoop and longitudinal) and of a
  spherical shell from the pressure difference across the wall, the inside radius
  and the load-bearing thickness, in the forms of ASME BPVC Section VIII Div. 1:
  UG-27 (thin shells) and Appendix 1-2 / 1-3 (thick shells, which are the Lame
  solution at the inside surface: Young & Budynas, *Roark's Formulas for Stress and
  Strain*, 7th ed., 2002, Table 13.5 (thick-walled vessels), cases 1c and 6a;
  Timoshenko & Goodier, *Theory of Elasticity*, 3rd ed., 1970, the thick cylinder
  (art. 33) and the hollow sphere (art. 136); table and article numbers from memory);
* the strength of the metal at temperature as a fraction of its room-temperature
  strength: carbon steel from EN 1993-1-2:2005 Table 3.1 (effective yield strength
  k_y,theta, proportional limit k_p,theta, elastic modulus k_E,theta) and Annex A
  (ultimate strength with strain hardening); austenitic stainless steels from
  EN 1993-1-2:2005 Annex C, Table C.1 (values from memory, see
  :data:`STAINLESS_SOURCE`).

The stresses are those that ASME VIII-1 sizes walls against (the largest membrane
stress of the shell, at the inside surface for thick walls); heads are taken to be
no weaker than the shell (each part is designed for the same pressure).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

ZERO_CELSIUS = 273.15

# ---------------------------------------------------------------- stresses

#: thin-shell forms hold for a cylinder up to t = R/2 (UG-27(c)(1), (2)), for a
#: sphere up to t = 0.356 R (UG-27(d)); beyond, ASME VIII-1 Appendix 1-2 / 1-3 apply
CYLINDER_THIN_LIMIT = 0.5
SPHERE_THIN_LIMIT = 0.356
STRESS_SOURCE = ("ASME BPVC Section VIII Div. 1, UG-27(c), (d) (thin shells) and "
                 "Appendix 1-2, 1-3 (thick shells, the Lame solution at the inside surface)")


def hoop_stress_thin(dp: float, R: float, t: float) -> float:
    """Circumferential (hoop) membrane stress of a cylindrical shell [Pa], thin form.

        S = dp (R + 0.6 t) / t

    the thickness equation t = P R / (S E - 0.6 P) of ASME VIII-1 UG-27(c)(1) solved
    for the stress (joint efficiency E = 1).

    Parameters
    ----------
    dp : pressure difference across the wall, inside minus outside [Pa]
    R : inside radius (corroded) [m]
    t : load-bearing thickness (less corrosion allowance) [m]

    Validity: t <= R/2 (and P <= 0.385 S E, which holds with it); beyond, use
    :func:`hoop_stress_thick`. Reference: ASME BPVC VIII-1 (2019), UG-27(c)(1).

    >>> round(hoop_stress_thin(1e6, 1.0, 0.01) / 1e6, 2)   # 10 bar, R = 1 m, 10 mm
    100.6
    """
    return dp * (R + 0.6 * t) / t


def longitudinal_stress_thin(dp: float, R: float, t: float) -> float:
    """Longitudinal membrane stress of a closed cylindrical shell [Pa], thin form.

        S = dp (R - 0.4 t) / (2 t)

    from t = P R / (2 S E + 0.4 P), ASME VIII-1 UG-27(c)(2), with E = 1.
    Parameters as :func:`hoop_stress_thin`. Validity: t <= R/2.
    """
    return dp * (R - 0.4 * t) / (2.0 * t)


def sphere_stress_thin(dp: float, R: float, t: float) -> float:
    """Membrane stress of a spherical shell [Pa] (equal in every direction), thin form.

        S = dp (R + 0.2 t) / (2 t)

    from t = P R / (2 S E - 0.2 P), ASME VIII-1 UG-27(d), with E = 1.
    Parameters as :func:`hoop_stress_thin`. Validity: t <= 0.356 R.
    """
    return dp * (R + 0.2 * t) / (2.0 * t)


def hoop_stress_thick(dp: float, R: float, t: float) -> float:
    """Hoop stress at the inside surface of a thick cylinder [Pa].

        S = dp (Z + 1) / (Z - 1),   Z = ((R + t) / R)^2

    ASME VIII-1 Appendix 1-2(a)(1) solved for the stress; the same as the Lame
    solution sigma_theta(a) = p (a^2 + b^2) / (b^2 - a^2) (Roark, 7th ed., Table 13.5
    case 1c; Timoshenko & Goodier, 3rd ed., art. 33). Parameters as
    :func:`hoop_stress_thin`.
    """
    Z = ((R + t) / R) ** 2
    return dp * (Z + 1.0) / (Z - 1.0)


def longitudinal_stress_thick(dp: float, R: float, t: float) -> float:
    """Longitudinal stress of a thick closed cylinder [Pa], uniform over the section.

        S = dp / (Z - 1),   Z = ((R + t) / R)^2

    ASME VIII-1 Appendix 1-2(a)(2) solved for the stress; the end force p pi a^2
    over the wall's section pi (b^2 - a^2) (Roark, 7th ed., Table 13.5 case 1c).
    """
    Z = ((R + t) / R) ** 2
    return dp / (Z - 1.0)


def sphere_stress_thick(dp: float, R: float, t: float) -> float:
    """Tangential stress at the inside surface of a thick sphere [Pa].

        S = dp (Y + 2) / (2 (Y - 1)),   Y = ((R + t) / R)^3

    ASME VIII-1 Appendix 1-3 solved for the stress; the Lame solution
    sigma_t(a) = p (b^3 + 2 a^3) / (2 (b^3 - a^3)) (Roark, 7th ed., Table 13.5 case 6a;
    Timoshenko & Goodier, 3rd ed., art. 136).
    """
    Y = ((R + t) / R) ** 3
    return dp * (Y + 2.0) / (2.0 * (Y - 1.0))


def shell_stresses(kind: str, dp, R: float, t: float):
    """(hoop, longitudinal) membrane stresses [Pa] of a shell, thin or thick form.

    ``kind`` is ``cylinder`` or ``sphere`` (a sphere's two stresses are equal). The
    thin forms of UG-27 apply up to t = R/2 (cylinder) or 0.356 R (sphere), the thick
    forms of Appendix 1-2 / 1-3 beyond: the two agree where they meet (to 1e-4),
    so the choice leaves no step. ``dp`` may be an array (a history).

    >>> h, l = shell_stresses("cylinder", 2e6, 1.0, 0.02)
    >>> round(float(h) / 1e6, 1), round(float(l) / 1e6, 1)
    (101.2, 49.6)
    """
    dp = np.asarray(dp, dtype=float)
    if kind == "sphere":
        s = (sphere_stress_thin(dp, R, t) if t <= SPHERE_THIN_LIMIT * R
             else sphere_stress_thick(dp, R, t))
        return s, s
    if t <= CYLINDER_THIN_LIMIT * R:
        return hoop_stress_thin(dp, R, t), longitudinal_stress_thin(dp, R, t)
    return hoop_stress_thick(dp, R, t), longitudinal_stress_thick(dp, R, t)


def equivalent_stress(hoop, longitudinal):
    """Von Mises equivalent of two membrane stresses [Pa] (the radial stress left out).

        S_e = sqrt(S_h^2 - S_h S_l + S_l^2)

    For a closed thin cylinder (S_l = S_h / 2) S_e = 0.866 S_h; for a sphere
    S_e = S_h. Reference: the distortion-energy (von Mises) criterion of any
    strength-of-materials text, e.g. Roark, 7th ed., ch. 3 (theories of strength).

    >>> round(float(equivalent_stress(100.0, 50.0)), 2)
    86.6
    """
    h = np.asarray(hoop, dtype=float)
    lo = np.asarray(longitudinal, dtype=float)
    return np.sqrt(h * h - h * lo + lo * lo)


# ------------------------------------------------------- strength at temperature

#: EN 1993-1-2:2005 Table 3.1 (carbon steel): steel temperature [degC] and the
#: reduction factors for the effective yield strength (k_y = f_y,theta / f_y), the
#: proportional limit (k_p = f_p,theta / f_y) and the slope of the linear elastic
#: range (k_E = E_a,theta / E_a); linear interpolation between the printed points
#: (the table's note)
EN1993_TEMPERATURES = (20, 100, 200, 300, 400, 500, 600, 700, 800, 900, 1000, 1100, 1200)
EN1993_K_Y = (1.000, 1.000, 1.000, 1.000, 1.000, 0.780, 0.470, 0.230, 0.110, 0.060, 0.040,
              0.020, 0.000)
EN1993_K_P = (1.000, 1.000, 0.807, 0.613, 0.420, 0.360, 0.180, 0.075, 0.050, 0.0375, 0.0250,
              0.0125, 0.000)
EN1993_K_E = (1.000, 1.000, 0.900, 0.800, 0.700, 0.600, 0.310, 0.130, 0.090, 0.0675, 0.0450,
              0.0225, 0.000)
CARBON_SOURCE = ("EN 1993-1-2:2005 Table 3.1 (k_y,theta, effective yield strength at 2 % "
                 "strain) and Annex A (ultimate strength with strain hardening: 1.25 f_y,theta "
                 "below 300 degC, f_y,theta (2 - 0.0025 theta) from 300 to 400 degC, "
                 "f_y,theta above)")

#: EN 1993-1-2:2005 Annex C, Table C.1 (stainless steels): temperature [degC] and
#: k_0.2p,theta = f_0.2p,theta / f_y and k_u,theta = f_u,theta / f_u of two grades.
#: FROM MEMORY: not checked against the printed table - verify before relying on it.
STAINLESS_TEMPERATURES = EN1993_TEMPERATURES
STAINLESS = {
    "stainless-1.4301": ((1.00, 0.82, 0.68, 0.64, 0.60, 0.54, 0.49, 0.40, 0.27, 0.14, 0.06,
                          0.03, 0.00),
                         (1.00, 0.87, 0.77, 0.73, 0.72, 0.67, 0.58, 0.43, 0.27, 0.15, 0.07,
                          0.03, 0.00)),
    "stainless-1.4401": ((1.00, 0.88, 0.76, 0.71, 0.66, 0.63, 0.61, 0.51, 0.40, 0.19, 0.10,
                          0.05, 0.00),
                         (1.00, 0.93, 0.87, 0.84, 0.83, 0.79, 0.72, 0.55, 0.34, 0.18, 0.09,
                          0.04, 0.00)),
}
STAINLESS_SOURCE = ("EN 1993-1-2:2005 Annex C, Table C.1 (k_0.2p,theta, k_u,theta); values "
                    "from memory, not checked against the printed table: verify them")


def _interp(T: float | np.ndarray, temperatures_c, factors):
    """Linear interpolation in a table in degC; end values held outside it."""
    return np.interp(np.asarray(T, dtype=float) - ZERO_CELSIUS, temperatures_c, factors)


def k_y_carbon(T):
    """Reduction factor of the effective yield strength of carbon steel [-],
    k_y,theta = f_y,theta / f_y, at steel temperature T [K] (scalar or array).

    EN 1993-1-2:2005 Table 3.1, linear between the printed points (20 to 1200 degC);
    1 below 20 degC, 0 above 1200 degC. The effective yield strength is the stress
    at 2 % total strain of the standard's stress-strain relation (sec. 3.2.1).

    >>> float(k_y_carbon(600.0 + 273.15)), round(float(k_y_carbon(650.0 + 273.15)), 3)
    (0.47, 0.35)
    """
    return _interp(T, EN1993_TEMPERATURES, EN1993_K_Y)


def k_p_carbon(T):
    """Reduction factor of the proportional limit of carbon steel [-],
    k_p,theta = f_p,theta / f_y (EN 1993-1-2:2005 Table 3.1), at T [K]."""
    return _interp(T, EN1993_TEMPERATURES, EN1993_K_P)


def k_E_carbon(T):
    """Reduction factor of the elastic modulus of carbon steel [-],
    k_E,theta = E_a,theta / E_a (EN 1993-1-2:2005 Table 3.1), at T [K]."""
    return _interp(T, EN1993_TEMPERATURES, EN1993_K_E)


def ultimate_over_yield_carbon(T):
    """Ultimate strength of carbon steel at temperature over its room-temperature
    yield strength [-], f_u,theta / f_y, allowing for strain hardening.

        f_u,theta = 1.25 f_y,theta                     theta < 300 degC
        f_u,theta = f_y,theta (2 - 0.0025 theta)       300 <= theta < 400 degC
        f_u,theta = f_y,theta                          theta >= 400 degC

    with f_y,theta = k_y,theta f_y (:func:`k_y_carbon`) and theta in degC.

    Parameters
    ----------
    T : steel temperature [K] (scalar or array)

    Reference: EN 1993-1-2:2005 Annex A (informative), strain hardening of carbon
    steel at elevated temperatures, eqs. (A.1c)-(A.1e) as printed there (equation
    numbers from memory).

    >>> float(ultimate_over_yield_carbon(20.0 + 273.15))
    1.25
    >>> round(float(ultimate_over_yield_carbon(350.0 + 273.15)), 3)
    1.125
    """
    theta = np.asarray(T, dtype=float) - ZERO_CELSIUS
    ky = k_y_carbon(T)
    hardening = np.where(theta < 300.0, 1.25,
                         np.where(theta < 400.0, 2.0 - 0.0025 * theta, 1.0))
    return ky * hardening


def k_u_carbon(T):
    """Retained fraction of the room-temperature ultimate strength of carbon steel
    [-], k_u = f_u,theta / f_u,20, at T [K].

        k_u = (f_u,theta / f_y) / 1.25

    EN 1993-1-2 Annex A (:func:`ultimate_over_yield_carbon`) divided by its own
    room-temperature value 1.25: 1 below 300 degC, falling to 0.8 at 400 degC and to
    k_y,theta / 1.25 above. cvsim applies it to the stated room-temperature tensile
    strength (a derived use of the standard, conservative for steels whose ultimate
    strength is more than 1.25 times their yield: see docs/decisions.md).

    >>> round(float(k_u_carbon(600.0 + 273.15)), 3)
    0.376
    """
    return ultimate_over_yield_carbon(T) / 1.25


@dataclass(frozen=True)
class StrengthData:
    """How a metal's strength falls with temperature.

    name        ``carbon-steel``, ``stainless-1.4301``, ``stainless-1.4401`` or
                ``stated`` (a table given in the scenario)
    tensile     (temperatures [K], retained fraction of the room-temperature
                ultimate tensile strength [-])
    yield_      (temperatures [K], retained fraction of the room-temperature yield
                strength [-]); ``None``: not known (the yield criterion cannot be used)
    source      where the factors come from
    checked     the factors were checked against their source (False: from memory)
    """

    name: str
    tensile: tuple
    yield_: tuple | None
    source: str
    checked: bool = True

    def factor(self, basis: str, T):
        """Retained fraction [-] of the room-temperature strength (``basis``
        ``tensile`` or ``yield``) at T [K]; the table's end values held outside it."""
        table = self.tensile if basis == "tensile" else self.yield_
        temps, factors = table
        return np.interp(np.asarray(T, dtype=float), temps, factors)

    @property
    def top(self) -> float:
        """[K] highest temperature the tables cover."""
        return float(self.tensile[0][-1])


def _kelvin(temps_c) -> tuple:
    return tuple(t + ZERO_CELSIUS for t in temps_c)


def _carbon_tables():
    # Annex A's bends (300, 400 degC) fall on table points; sampled every 10 degC
    temps = tuple(range(20, 1201, 10))
    T = np.array(_kelvin(temps))
    return ((tuple(T), tuple(float(v) for v in k_u_carbon(T))),
            (_kelvin(EN1993_TEMPERATURES), EN1993_K_Y))


def strength_data(name: str) -> StrengthData:
    """The named strength-at-temperature data (:data:`STRENGTH_NAMES`)."""
    if name == "carbon-steel":
        tensile, yield_ = _carbon_tables()
        return StrengthData(name, tensile, yield_, CARBON_SOURCE)
    ky, ku = STAINLESS[name]
    T = _kelvin(STAINLESS_TEMPERATURES)
    return StrengthData(name, (T, ku), (T, ky), STAINLESS_SOURCE, checked=False)


#: the names a scenario may give for the strength at temperature
STRENGTH_NAMES = ("carbon-steel", *STAINLESS)


def stated_strength(temperatures, factors) -> StrengthData:
    """Strength data from a table given in the scenario (temperatures [K], retained
    fractions [-] of the strength the criterion names, tensile or yield alike)."""
    table = (tuple(float(t) for t in temperatures), tuple(float(f) for f in factors))
    return StrengthData("stated", table, table, "table given in the scenario")


# ------------------------------------------------------------------- creep

CREEP_SOURCE = ("Larson & Miller, A time-temperature relationship for rupture and creep "
                "stresses, Trans. ASME 74 (1952) 765 (P = T (C + log10 t_r), T in K, t_r "
                "in h); Robinson, Effect of temperature variation on the long-time rupture "
                "strength of steels, Trans. ASME 74 (1952) 777 (life fractions add up)")


def larson_miller_rupture_time(stress, T, C: float, curve_P, curve_stress):
    """Time to creep rupture [s] at a stress and temperature, from a Larson-Miller
    master curve.

        P = T (C + log10 t_r)   ->   t_r = 10^(P(S)/T - C)   [h]

    P(S) is the material's master curve, linear in log10 S between its points (end
    values held).

    Parameters
    ----------
    stress : stress [Pa] (scalar or array; not positive: no rupture, t_r = inf)
    T : metal temperature [K]
    C : Larson-Miller constant [-] (with t_r in hours; often about 20)
    curve_P : the curve's parameters P [K] (T in kelvin, log10 of hours)
    curve_stress : the rupture stresses [Pa] at those P

    Reference: Larson & Miller, Trans. ASME 74 (1952) 765. No material constants are
    built in: they are the user's, from a published master curve of the steel.

    >>> round(float(larson_miller_rupture_time(100e6, 900.0, 20.0, [20000.0], [100e6])) / 3600, 1)
    166.8
    """
    s = np.asarray(stress, dtype=float)
    T = np.asarray(T, dtype=float)
    order = np.argsort(curve_stress)
    logS = np.log10(np.asarray(curve_stress, dtype=float)[order])
    P = np.interp(np.log10(np.where(s > 0.0, s, 1.0)), logS,
                  np.asarray(curve_P, dtype=float)[order])
    with np.errstate(over="ignore"):
        hours = 10.0 ** (P / T - C)
    return np.where(s > 0.0, 3600.0 * hours, np.inf)


def creep_damage(t, stress, T, C: float, curve_P, curve_stress):
    """Creep damage [-] accumulated along a history: the life fractions of Robinson's
    rule, D(t) = integral of dt / t_r(S(t), T(t)), trapezoidal between the points.

        D = 1: creep rupture

    Parameters: ``t`` [s] increasing (repeated times allowed), ``stress`` [Pa], ``T``
    [K] at those times; C and the curve as :func:`larson_miller_rupture_time`.

    Reference: Robinson, Trans. ASME 74 (1952) 777 (linear life-fraction rule).
    """
    t = np.asarray(t, dtype=float)
    if t.size == 0:
        return np.zeros(0)
    tr = larson_miller_rupture_time(stress, T, C, curve_P, curve_stress)
    rate = np.where(np.isfinite(tr), 1.0 / np.where(np.isfinite(tr), tr, 1.0), 0.0)
    steps = 0.5 * (rate[1:] + rate[:-1]) * np.diff(t)
    return np.concatenate([[0.0], np.cumsum(steps)])


def utilisation(stress, allowed, cap: float = 1e3):
    """Stress over the allowed stress [-] (0 where the stress is not tensile; ``cap``
    where nothing is allowed any more: the metal has lost its strength).

    >>> [float(u) for u in utilisation(np.array([50.0, -5.0, 10.0]), np.array([100.0, 100.0, 0.0]))]
    [0.5, 0.0, 1000.0]
    """
    s = np.asarray(stress, dtype=float)
    a = np.asarray(allowed, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        u = np.where(s <= 0.0, 0.0, np.where(a > 0.0, s / np.where(a > 0.0, a, 1.0), cap))
    return np.minimum(u, cap)


__all__ = ["CARBON_SOURCE", "CREEP_SOURCE", "creep_damage", "larson_miller_rupture_time",
           "EN1993_K_E", "EN1993_K_P", "EN1993_K_Y", "EN1993_TEMPERATURES",
           "STAINLESS", "STAINLESS_SOURCE", "STRENGTH_NAMES", "STRESS_SOURCE", "StrengthData",
           "equivalent_stress", "hoop_stress_thick", "hoop_stress_thin", "k_E_carbon",
           "k_p_carbon", "k_u_carbon", "k_y_carbon", "longitudinal_stress_thick",
           "longitudinal_stress_thin", "shell_stresses", "sphere_stress_thick",
           "sphere_stress_thin", "stated_strength", "strength_data", "ultimate_over_yield_carbon",
           "utilisation"]

"""Stresses of pressurised shells and the strength of steel at temperature
(cvsim.mechanics), against the printed standards and independent closed forms."""
import math

import numpy as np
import pytest

from cvsim import mechanics as mech

C = 273.15

# source: EN 1993-1-2:2005 (Eurocode 3, structural fire design), Table 3.1
# "Reduction factors for stress-strain relationship of carbon steel at elevated
# temperatures": steel temperature [degC], k_y,theta, k_p,theta, k_E,theta (as
# printed; the same numbers appear in the public fsetools implementation of the table)
TABLE_3_1 = [
    (20, 1.000, 1.000, 1.000),
    (100, 1.000, 1.000, 1.000),
    (200, 1.000, 0.807, 0.900),
    (300, 1.000, 0.613, 0.800),
    (400, 1.000, 0.420, 0.700),
    (500, 0.780, 0.360, 0.600),
    (600, 0.470, 0.180, 0.310),
    (700, 0.230, 0.075, 0.130),
    (800, 0.110, 0.050, 0.090),
    (900, 0.060, 0.0375, 0.0675),
    (1000, 0.040, 0.0250, 0.0450),
    (1100, 0.020, 0.0125, 0.0225),
    (1200, 0.000, 0.0000, 0.0000),
]


@pytest.mark.parametrize("theta, ky, kp, kE", TABLE_3_1)
def test_carbon_steel_reduction_factors_at_the_tabulated_temperatures(theta, ky, kp, kE):
    T = theta + C
    # source: EN 1993-1-2:2005 Table 3.1 (above), at the printed precision
    assert float(mech.k_y_carbon(T)) == pytest.approx(ky, abs=5e-4)
    assert float(mech.k_p_carbon(T)) == pytest.approx(kp, abs=5e-5)
    assert float(mech.k_E_carbon(T)) == pytest.approx(kE, abs=5e-5)


def test_carbon_steel_factors_between_the_points_are_linear():
    # source: EN 1993-1-2:2005 Table 3.1, note: linear interpolation between the
    # printed temperatures; (0.78 + 0.47) / 2 at 550 degC, 0.47 + 0.3 (0.23 - 0.47) at 630
    assert float(mech.k_y_carbon(550 + C)) == pytest.approx(0.625, abs=1e-12)
    assert float(mech.k_y_carbon(630 + C)) == pytest.approx(0.398, abs=1e-12)
    # outside the table the end values hold: full strength when cold, none past 1200 degC
    assert float(mech.k_y_carbon(-40 + C)) == 1.0
    assert float(mech.k_y_carbon(1300 + C)) == 0.0


@pytest.mark.parametrize("theta, expected", [
    (20, 1.25), (250, 1.25), (299.9, 1.25),     # 1.25 f_y,theta below 300 degC
    (300, 1.25), (350, 1.125), (399.9, 1.00025),  # f_y,theta (2 - 0.0025 theta)
    (400, 1.0), (500, 0.78), (600, 0.47), (800, 0.11),  # f_y,theta from 400 degC
])
def test_carbon_steel_ultimate_strength_with_strain_hardening(theta, expected):
    # source: EN 1993-1-2:2005 Annex A (strain hardening of carbon steel): f_u,theta =
    # 1.25 f_y,theta (theta < 300 degC), f_y,theta (2 - 0.0025 theta) (300-400 degC),
    # f_y,theta (theta >= 400 degC), with k_y,theta of Table 3.1 - evaluated by hand
    assert float(mech.ultimate_over_yield_carbon(theta + C)) == pytest.approx(expected,
                                                                             rel=1e-9)
    # the retained fraction of the room-temperature ultimate strength is that over 1.25
    assert float(mech.k_u_carbon(theta + C)) == pytest.approx(expected / 1.25, rel=1e-9)


def test_carbon_steel_strength_tables_follow_the_functions():
    data = mech.strength_data("carbon-steel")
    T = np.linspace(0.0 + C, 1250.0 + C, 251)
    # the tabulated tensile factors (every 10 degC, Annex A's bends on table points)
    # reproduce the function; the yield factors are Table 3.1's k_y
    assert np.allclose(data.factor("tensile", T), mech.k_u_carbon(T), atol=1e-12)
    assert np.allclose(data.factor("yield", T), mech.k_y_carbon(T), atol=1e-12)
    assert data.checked and data.top == pytest.approx(1200 + C)


@pytest.mark.parametrize("grade, theta, k02, ku", [
    ("stainless-1.4301", 20, 1.00, 1.00), ("stainless-1.4301", 600, 0.49, 0.58),
    ("stainless-1.4301", 800, 0.27, 0.27), ("stainless-1.4401", 600, 0.61, 0.72),
    ("stainless-1.4401", 1200, 0.00, 0.00),
])
def test_stainless_steel_factors_as_recalled(grade, theta, k02, ku):
    # source: EN 1993-1-2:2005 Annex C, Table C.1 (k_0.2p,theta, k_u,theta) - from
    # memory, not checked against the printed table; the data say so (checked=False)
    data = mech.strength_data(grade)
    assert float(data.factor("yield", theta + C)) == pytest.approx(k02, abs=5e-3)
    assert float(data.factor("tensile", theta + C)) == pytest.approx(ku, abs=5e-3)
    assert not data.checked and "from memory" in data.source


# ---------------------------------------------------------------- stresses


@pytest.mark.parametrize("P, R, S", [(2.0e6, 0.603, 138e6), (15e6, 1.0, 138e6),
                                     (0.5e6, 0.25, 90e6)])
def test_thin_shell_stresses_invert_the_ug27_thickness_equations(P, R, S):
    # source: ASME BPVC Section VIII Div. 1, UG-27(c)(1) t = P R / (S E - 0.6 P),
    # UG-27(c)(2) t = P R / (2 S E + 0.4 P), UG-27(d) t = P R / (2 S E - 0.2 P), E = 1:
    # the thickness the standard requires for the stress S carries exactly S
    t_hoop = P * R / (S - 0.6 * P)
    t_long = P * R / (2 * S + 0.4 * P)
    t_sphere = P * R / (2 * S - 0.2 * P)
    assert mech.hoop_stress_thin(P, R, t_hoop) == pytest.approx(S, rel=1e-12)
    assert mech.longitudinal_stress_thin(P, R, t_long) == pytest.approx(S, rel=1e-12)
    assert mech.sphere_stress_thin(P, R, t_sphere) == pytest.approx(S, rel=1e-12)


def _lame_cylinder(p, a, b):
    """Hoop stress at r = a of a thick cylinder, from the general solution
    sigma_r = A - B/r^2, sigma_theta = A + B/r^2 with sigma_r(a) = -p, sigma_r(b) = 0,
    solved numerically. source: Timoshenko & Goodier, Theory of Elasticity, 3rd ed.,
    the thick-walled cylinder (Lame); article number from memory"""
    A, B = np.linalg.solve([[1.0, -1.0 / a**2], [1.0, -1.0 / b**2]], [-p, 0.0])
    return A + B / a**2, A  # hoop at the bore, axial of a closed cylinder (= A)


def _lame_sphere(p, a, b):
    """Tangential stress at r = a of a thick sphere: sigma_r = A - 2B/r^3,
    sigma_t = A + B/r^3, sigma_r(a) = -p, sigma_r(b) = 0. source: Timoshenko &
    Goodier, Theory of Elasticity, 3rd ed., the hollow sphere; from memory"""
    A, B = np.linalg.solve([[1.0, -2.0 / a**3], [1.0, -2.0 / b**3]], [-p, 0.0])
    return A + B / a**3


@pytest.mark.parametrize("t_over_R", [0.05, 0.3, 0.6, 1.0, 2.0])
def test_thick_shell_stresses_are_the_lame_solution(t_over_R):
    p, a = 30e6, 0.2
    b = a * (1 + t_over_R)
    hoop, axial = _lame_cylinder(p, a, b)
    # source: Lame solution solved above (Timoshenko & Goodier); ASME VIII-1 Appendix
    # 1-2(a)(1), (2) and 1-3 are the same formulas
    assert mech.hoop_stress_thick(p, a, b - a) == pytest.approx(hoop, rel=1e-10)
    assert mech.longitudinal_stress_thick(p, a, b - a) == pytest.approx(axial, rel=1e-10)
    assert mech.sphere_stress_thick(p, a, b - a) == pytest.approx(_lame_sphere(p, a, b),
                                                                  rel=1e-10)


def test_thin_and_thick_forms_meet_where_the_standard_switches():
    # UG-27 (thin) holds to t = R/2 for cylinders, 0.356 R for spheres; at those
    # thicknesses Appendix 1-2 / 1-3 (thick) gives the same stress (to 1e-4)
    R = 1.0
    assert mech.hoop_stress_thin(1.0, R, 0.5) == pytest.approx(mech.hoop_stress_thick(1.0, R, 0.5),
                                                              rel=1e-4)
    assert mech.longitudinal_stress_thin(1.0, R, 0.5) == pytest.approx(
        mech.longitudinal_stress_thick(1.0, R, 0.5), rel=1e-4)
    assert mech.sphere_stress_thin(1.0, R, 0.356) == pytest.approx(
        mech.sphere_stress_thick(1.0, R, 0.356), rel=1e-4)
    # shell_stresses picks the thin form up to the limit and the thick one past it
    h, _ = mech.shell_stresses("cylinder", 1.0, R, 0.5)
    assert float(h) == mech.hoop_stress_thin(1.0, R, 0.5)
    h, _ = mech.shell_stresses("cylinder", 1.0, R, 0.51)
    assert float(h) == mech.hoop_stress_thick(1.0, R, 0.51)


def test_thin_cylinder_tends_to_the_membrane_formulas():
    # source: Roark's Formulas for Stress and Strain, 7th ed., Table 13.1 (thin shells),
    # cylinder under internal pressure with closed ends: sigma_hoop = q R / t,
    # sigma_long = q R / (2 t) with R the mean radius (table number from memory); the
    # UG-27 forms differ from them by the order of t/R
    q, R, t = 1e6, 1.0, 1e-4
    Rm = R + t / 2
    h, lo = mech.shell_stresses("cylinder", q, R, t)
    assert float(h) == pytest.approx(q * Rm / t, rel=2 * t / R)
    assert float(lo) == pytest.approx(q * Rm / (2 * t), rel=2 * t / R)
    s, _ = mech.shell_stresses("sphere", q, R, t)
    assert float(s) == pytest.approx(q * Rm / (2 * t), rel=2 * t / R)


def test_equivalent_stress_is_von_mises_of_the_principal_stresses():
    # source: distortion-energy criterion, sigma_e = sqrt(((s1-s2)^2 + (s2-s3)^2 +
    # (s3-s1)^2) / 2), here with s3 = 0 (e.g. Roark 7th ed., ch. 3)
    for s1, s2 in ((100.0, 50.0), (100.0, 100.0), (80.0, -20.0)):
        expected = math.sqrt(((s1 - s2) ** 2 + s2**2 + s1**2) / 2)
        assert float(mech.equivalent_stress(s1, s2)) == pytest.approx(expected, rel=1e-12)


def test_utilisation_handles_no_stress_and_no_strength():
    u = mech.utilisation(np.array([50.0, 0.0, -3.0, 10.0]), np.array([100.0, 0.0, 5.0, 0.0]))
    assert list(u) == [0.5, 0.0, 0.0, 1e3]


def test_docstring_examples():
    import doctest
    assert doctest.testmod(mech).failed == 0


# ------------------------------------------------------------------- creep


def test_larson_miller_rupture_time_by_hand():
    # source: Larson & Miller, Trans. ASME 74 (1952) 765: P = T (C + log10 t_r), T in K,
    # t_r in h; with P = 20 000, C = 20, T = 900 K: t_r = 10^(20000/900 - 20) = 166.81 h
    curve_P, curve_S = [15000.0, 20000.0, 25000.0], [300e6, 100e6, 20e6]
    tr = mech.larson_miller_rupture_time(100e6, 900.0, 20.0, curve_P, curve_S)
    assert float(tr) / 3600 == pytest.approx(10 ** (20000 / 900 - 20), rel=1e-12)
    # between the curve's points P is linear in log10 of the stress: at the geometric
    # mean of 300 and 100 MPa, P is the mean of 15 000 and 20 000
    tr = mech.larson_miller_rupture_time(math.sqrt(300e6 * 100e6), 1000.0, 20.0, curve_P,
                                         curve_S)
    assert float(tr) / 3600 == pytest.approx(10 ** (17500 / 1000 - 20), rel=1e-9)
    # no tensile stress: no creep rupture
    assert math.isinf(float(mech.larson_miller_rupture_time(-1e6, 1000.0, 20.0, curve_P,
                                                            curve_S)))


def test_creep_damage_adds_life_fractions():
    # source: Robinson, Trans. ASME 74 (1952) 777, life-fraction rule D = sum dt_i / t_r,i,
    # summed by hand here for two constant spells (a step is two points at one time)
    curve_P, curve_S = [15000.0, 25000.0], [300e6, 20e6]
    t = np.array([0.0, 100.0, 100.0, 300.0])
    T = np.array([800.0, 800.0, 900.0, 900.0])
    S = np.full(4, 120e6)
    tr = mech.larson_miller_rupture_time(120e6, np.array([800.0, 900.0]), 20.0, curve_P,
                                         curve_S)
    expected = 100.0 / tr[0] + 200.0 / tr[1]
    D = mech.creep_damage(t, S, T, 20.0, curve_P, curve_S)
    assert D[-1] == pytest.approx(expected, rel=1e-12)
    assert D[0] == 0.0 and np.all(np.diff(D) >= 0.0)

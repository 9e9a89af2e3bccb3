"""Wall materials against their sources."""
import pytest

from cvsim.heat.materials import MATERIALS, en1993_conductivity, en1993_specific_heat

C = 273.15


def test_carbon_steel_en1993_functions():
    # source: EN 1993-1-2:2005, 3.4.1.2 and 3.4.1.3 (checked against the Dlubal knowledge-base
    # article 001496 summary): c = 425 + 0.773 th - 1.69e-3 th^2 + 2.22e-6 th^3 below 600 degC,
    # 666 + 13002/(738 - th) to 735, 545 + 17820/(th - 731) to 900, then 650 J/(kg K);
    # lambda = 54 - 3.33e-2 th to 800 degC, then 27.3 W/(m K)
    assert en1993_specific_heat(100 + C) == pytest.approx(425 + 77.3 - 16.9 + 2.22, rel=1e-12)
    assert en1993_specific_heat(700 + C) == pytest.approx(666 + 13002 / 38, rel=1e-12)
    assert en1993_specific_heat(800 + C) == pytest.approx(545 + 17820 / 69, rel=1e-12)
    assert en1993_specific_heat(1000 + C) == 650.0
    # the pieces meet at 735 degC (5000 J/(kg K)), and nearly at 600 degC
    assert en1993_specific_heat(735 + C - 1e-9) == pytest.approx(5000.0, rel=1e-6)
    assert en1993_specific_heat(735 + C) == pytest.approx(5000.0, rel=1e-9)
    assert en1993_conductivity(20 + C) == pytest.approx(54 - 0.666)
    assert en1993_conductivity(800 + C - 1e-9) == pytest.approx(27.36, abs=1e-6)
    assert en1993_conductivity(900 + C) == 27.3


def test_carbon_steel_table_follows_the_functions():
    steel = MATERIALS["carbon-steel"]
    assert steel.density == 7850.0  # source: EN 1993-1-2:2005, 3.2.2
    for th in range(20, 1200, 7):
        T = th + C
        tol = 1e-3 if th < 600 else 1e-2
        assert steel.heat_capacity(T) == pytest.approx(en1993_specific_heat(T), rel=tol)
        if not 800 <= th <= 801:
            assert steel.conductivity(T) == pytest.approx(en1993_conductivity(T), rel=1e-12)
    assert (steel.T_min, steel.T_max) == (-150 + C, 1200 + C)


@pytest.mark.parametrize("name, ht_name", [
    ("steel", "Metals, steel"), ("stainless-steel", "Metals, stainless steel"),
    ("aluminium-alloy", "Metals, aluminium alloys"),
    ("hdpe", "Plastics, polyethylene / polythene, high density"),
    ("polyamide", "Plastics, polyamide (nylon)"), ("epoxy", "Plastics, epoxy resin")])
def test_constant_materials_are_the_en12524_values(name, ht_name):
    import ht.insulation as ins

    # source: EN 12524:2000 Table 1 as tabulated in the ht library (ht.insulation)
    m = MATERIALS[name]
    assert m.density == ins.rho_material(ht_name)
    assert m.heat_capacity(300.0) == ins.Cp_material(ht_name)
    assert m.conductivity(300.0) == ins.k_material(ht_name)



# ------------------------------------------------------------- below 20 degC

def test_debye_function_has_its_classical_and_t_cubed_limits():
    import math
    from cvsim.heat.materials import debye_ratio
    # source: Kittel, Introduction to Solid State Physics, 8th ed., ch. 5: C -> 3R at high
    # temperature (Dulong-Petit), C = (12 pi^4 / 5) R (T/theta)^3 at low temperature
    assert debye_ratio(1e-3) == pytest.approx(1.0, abs=1e-6)
    x = 50.0
    assert debye_ratio(x) == pytest.approx(4 * math.pi**4 / 5 / x**3, rel=1e-6)
    # brute force: a fine midpoint sum of the same integral
    x, n = 2.0, 200000
    h = x / n
    ref = 3 / x**3 * sum((t := (i + 0.5) * h) ** 4 * math.exp(t) / math.expm1(t) ** 2 * h
                         for i in range(n))
    assert debye_ratio(x) == pytest.approx(ref, rel=1e-8)


def test_cold_carbon_steel_is_continuous_and_near_iron():
    from cvsim.heat.materials import carbon_steel_cold_heat_capacity
    steel = MATERIALS["carbon-steel"]
    T20 = 20 + C
    assert carbon_steel_cold_heat_capacity(T20) == pytest.approx(en1993_specific_heat(T20))
    # pure iron at 200 K: 384 J/(kg K) (21.4 J/(mol K); from memory, CRC Handbook tables)
    assert steel.heat_capacity(200.0) == pytest.approx(384.0, rel=0.03)
    values = [steel.heat_capacity(th + C) for th in range(-150, 21, 10)]
    assert values == sorted(values)  # rises with temperature towards the standard's
    assert steel.T_min == -150 + C


def test_cold_stainless_steel_follows_the_nist_304_curve():
    from cvsim.heat.materials import NIST_304_CONDUCTIVITY, nist_fit
    # source: NIST cryogenic material properties, 304 stainless steel, thermal conductivity
    # fit (1-300 K) as reproduced in a published engineering summary: 10.22 W/(m K) at
    # -150 degC
    assert nist_fit(NIST_304_CONDUCTIVITY, 123.15) == pytest.approx(10.22, abs=0.01)
    ss = MATERIALS["stainless-steel"]
    T20 = 20 + C
    # EN 12524 (ht library) at 20 degC and above; the NIST shape below, continuous
    assert ss.conductivity(T20) == 17.0 and ss.heat_capacity(T20) == 460.0
    ratio = nist_fit(NIST_304_CONDUCTIVITY, 123.15) / nist_fit(NIST_304_CONDUCTIVITY, T20)
    assert ss.conductivity(123.15) == pytest.approx(17.0 * ratio, rel=5e-3)
    assert ss.heat_capacity(-200 + C) < 0.5 * 460.0  # about 200 J/(kg K) at 77 K
    assert ss.T_min == -200 + C

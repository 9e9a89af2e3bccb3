"""Reading quantities written as text: gauge and absolute pressures, temperatures,
dimension checks, standard-volume flows and the standard atmosphere."""
import subprocess
import sys

import pytest

from cvsim import units
from cvsim.errors import CvsimError
from cvsim.units import (STANDARD_BASES, UnitsError, parse_quantity, parse_standard_flow,
                         read_quantity, standard_atmosphere)

PSI = 6894.757293168361  # [Pa] 1 lbf/in2 = 0.45359237 kg * 9.80665 m/s2 / (0.0254 m)^2, exact
KGF_CM2 = 98066.5  # [Pa] 1 kgf/cm2 = 9.80665 N / 1e-4 m2, exact


def test_import_does_not_load_pint():
    code = "import sys, cvsim.units; print('pint' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.strip()
    assert out == "False"


def test_units_error_is_cvsim_and_value_error():
    assert issubclass(UnitsError, CvsimError) and issubclass(UnitsError, ValueError)


# Sources of the unit definitions in these tests: NIST SP 811 (2008), Guide for the Use of
# the International System of Units, Appendix B (conversion factors: 1 bar = 1e5 Pa,
# 1 atm = 101 325 Pa, 1 lbf/in2 and 1 kgf/cm2 from the exact pound, inch and standard
# gravity 9.80665 m/s2, degF and degR, 1 ft = 0.3048 m, 1 L = 1e-3 m3, 1 kWh = 3.6e6 J,
# 1 Btu_IT/(lb degF) = 4186.8 J/(kg K)); BIPM SI Brochure, 9th ed. (2019), Tables 6 and 8.

@pytest.mark.parametrize("text", ["150 barg", "150 bar(g)", "150 bar g", "150 BARG",
                                  "150 bar (gauge)", "15 MPag", "15000 kPag"])
def test_gauge_pressure_adds_standard_atmosphere(text):
    # source: NIST SP 811 (2008), App. B: 1 bar = 1e5 Pa; standard atmosphere 101 325 Pa
    assert parse_quantity(text, "pressure") == pytest.approx(15_101_325.0, rel=1e-12)


@pytest.mark.parametrize("text,expected", [
    ("150 bara", 150e5), ("150 bar(a)", 150e5), ("15 MPa", 15e6), ("101.325 kPa", 101325.0),
    ("1 atm", 101325.0), ("2000 Pa", 2000.0), ("100 psia", 100 * PSI),
    ("10 kg/cm2", 10 * KGF_CM2), ("10 kg/cm2 a", 10 * KGF_CM2),
])
def test_absolute_pressures(text, expected):
    # source: NIST SP 811 (2008), App. B (bar, atm, psi, kgf/cm2; see the module note)
    assert parse_quantity(text, "pressure") == pytest.approx(expected, rel=1e-12)


def test_psig_and_kg_per_cm2_gauge():
    # source: NIST SP 811 (2008), App. B: psi and kgf/cm2 (exact, see PSI and KGF_CM2)
    assert parse_quantity("100 psig", "pressure") == pytest.approx(100 * PSI + 101325.0, rel=1e-12)
    for text in ("10 kg/cm2g", "10 kg/cm2 g", "10 kgf/cm2g", "10 kgf/cm2 (g)", "10 kg/cm²g"):
        assert parse_quantity(text, "pressure") == pytest.approx(10 * KGF_CM2 + 101325.0,
                                                                  rel=1e-12), text


def test_gauge_uses_the_given_atmosphere():
    assert parse_quantity("1 barg", "pressure", atmosphere=84556.0) == pytest.approx(184556.0)


def test_plain_bar_and_psi_are_absolute_with_a_note():
    r = read_quantity("10 bar", "pressure")
    assert r.value == pytest.approx(1e6) and r.reference is None
    assert "'bar' read as absolute" in r.note and "bara or barg" in r.note
    assert "read as absolute" in read_quantity("50 psi", "pressure").note
    assert read_quantity("10 bara", "pressure").note == ""
    assert read_quantity("10 kPa", "pressure").note == ""


@pytest.mark.parametrize("text,expected", [
    ("15 degC", 288.15), ("15 °C", 288.15), ("15 deg C", 288.15), ("-40 degC", 233.15),
    ("59 degF", 288.15), ("59 °F", 288.15), ("518.67 degR", 288.15), ("300 K", 300.0),
])
def test_temperatures(text, expected):
    # source: NIST SP 811 (2008), App. B: T/K = t/degC + 273.15 = (t/degF + 459.67)/1.8
    # = (T/degR)/1.8
    assert parse_quantity(text, "temperature") == pytest.approx(expected, abs=1e-9)


def test_degrees_in_compound_units_are_differences():
    # source: NIST SP 811 (2008), App. B: a temperature interval of 1 degC is 1 K;
    # 1 Btu_IT/(lb degF) = 4186.8 J/(kg K) exactly
    assert parse_quantity("10 degC", "temperature_difference") == pytest.approx(10.0)
    assert parse_quantity("5 W/(m2 degC)", "heat_transfer_coefficient") == pytest.approx(5.0)
    assert parse_quantity("1 BTU/lb/degF", "specific_heat") == pytest.approx(4186.8, rel=1e-4)


@pytest.mark.parametrize("text,dimension,expected", [
    ("10 mm", "length", 0.01), ("78.5 mm2", "area", 78.5e-6), ("1.5 m3", "volume", 1.5),
    ("1.5 m³", "volume", 1.5), ("50 L", "volume", 0.05), ("100 kg/h", "mass_flow", 100 / 3600),
    ("15 min", "time", 900.0), ("2 kW", "power", 2000.0), ("5 W/m2/K",
                                                           "heat_transfer_coefficient", 5.0),
    ("50 W/K", "thermal_conductance", 50.0), ("1040 J/kg/K", "specific_heat", 1040.0),
    ("28.0134 g/mol", "molar_mass", 0.0280134), ("1.25 kg/m3", "density", 1.25),
    ("1 kWh", "energy", 3.6e6), ("3 m/s", "velocity", 3.0), ("7 %", "fraction", 0.07),
    (0.07, "fraction", 0.07), ("1e-6", "dimensionless", 1e-6), (0.84, "dimensionless", 0.84),
])
def test_dimensions(text, dimension, expected):
    # source: SI prefixes and accepted units (BIPM SI Brochure, 9th ed., 2019, Tables 7-8:
    # L, h, min, kWh) and NIST SP 811 (2008), App. B
    assert parse_quantity(text, dimension) == pytest.approx(expected, rel=1e-12)


def test_wrong_dimension_names_both():
    with pytest.raises(UnitsError, match=r'"10 kg" is a mass, expected a length \(e.g. "10 mm"\)'):
        parse_quantity("10 kg", "length")


def test_missing_unit_says_how_to_write_it():
    with pytest.raises(UnitsError, match=r'missing unit in "150": write e.g. "150 barg"'):
        parse_quantity("150", "pressure")
    with pytest.raises(UnitsError, match="missing unit"):
        parse_quantity(150, "temperature")


def test_unknown_unit_suggests_close_ones():
    with pytest.raises(UnitsError, match=r"unknown unit 'bargg'.*did you mean 'barg'"):
        parse_quantity("150 bargg", "pressure")


def test_lone_celsius_letter_gets_a_hint():
    with pytest.raises(UnitsError, match='write "15 degC"'):
        parse_quantity("15 C", "temperature")


def test_not_a_number():
    with pytest.raises(UnitsError, match="write a number and a unit"):
        parse_quantity("ten mm", "length")
    with pytest.raises(UnitsError):
        parse_quantity(True, "length")


def test_standard_flow_unit_is_not_a_mass_flow():
    with pytest.raises(UnitsError, match="standard-volume flow, expected a mass flow"):
        parse_quantity("500 Nm3/h", "mass_flow")


# ------------------------------------------------------- standard-volume flows


def test_scfm_is_a_cubic_foot_per_minute_at_us_standard():
    # 1 ft3/min = 0.3048^3 m3 / 60 s = 4.71947443e-4 m3/s, exact by the definitions of ft and min
    # source of the basis: US standard conditions of the gas trade, 14.696 psia and 60 degF
    # (e.g. API MPMS ch. 14; from memory)
    q, basis, p, T = parse_standard_flow("1 SCFM")
    assert q == pytest.approx(4.71947443e-4, rel=1e-9)
    assert basis == "us-standard"
    assert p == pytest.approx(14.696 * PSI) and T == pytest.approx(288.7055556, abs=1e-6)


def test_named_metric_bases():
    # source: normal conditions 0 degC, 101.325 kPa (DIN 1343) and the ISO standard
    # reference conditions 15 degC, 101.325 kPa (ISO 13443:1996); MMSCFD = 1e6 ft3/d
    # with 1 ft = 0.3048 m (NIST SP 811, App. B); basis names from memory
    assert parse_standard_flow("3600 Nm3/h") == pytest.approx((1.0, "normal", 101325.0, 273.15))
    q, basis, p, T = parse_standard_flow("86400 Sm3/d")
    assert (q, basis, p, T) == pytest.approx((1.0, "iso-standard", 101325.0, 288.15))
    assert parse_standard_flow("1 MMSCFD")[0] == pytest.approx(1e6 * 0.3048**3 / 86400)


def test_plain_volume_flow_needs_a_basis():
    with pytest.raises(UnitsError, match="has no basis"):
        parse_standard_flow("500 m3/h")
    q, basis, p, T = parse_standard_flow("500 m3/h", STANDARD_BASES["iso-standard"])
    assert (q, basis, T) == pytest.approx((500 / 3600, "iso-standard", 288.15))
    with pytest.raises(UnitsError, match="names the normal basis"):
        parse_standard_flow("500 Nm3/h", STANDARD_BASES["us-standard"])


def test_normal_density_of_nitrogen():
    CP = pytest.importorskip("CoolProp.CoolProp")
    _, _, p, T = parse_standard_flow("1 Nm3/h")
    rho = CP.PropsSI("D", "P", p, "T", T, "Nitrogen")
    # source: handbook normal density of nitrogen, 1.2506 kg/m3 at 0 degC, 101.325 kPa
    # (from memory); CoolProp gives 1.2504, within the spread of tabulated values
    assert rho == pytest.approx(1.2506, rel=3e-4)


# ------------------------------------------------------------------ atmosphere


def test_standard_atmosphere():
    assert standard_atmosphere(0.0) == pytest.approx(101325.0)
    # source: U.S. Standard Atmosphere 1976 (NOAA-S/T 76-1562), Part 4 tables in SI units,
    # geopotential altitude 1500 m: 8.4556E+04 Pa
    assert standard_atmosphere(1500.0) == pytest.approx(84556.0, abs=1.0)
    with pytest.raises(UnitsError, match="outside"):
        standard_atmosphere(20000.0)


def test_registry_is_created_once():
    assert units.registry() is units.registry()


def test_docstring_examples():
    import doctest

    assert doctest.testmod(units).failed == 0


def test_every_unit_read_without_pint_agrees_with_pint():
    """The units read by the fast table (no pint loaded) convert exactly as pint does:
    pint is the general-purpose reference here."""
    from cvsim.units import DIMENSIONS, FAST_UNITS, registry
    ureg = registry()
    for (dimension, expression), (factor, offset) in FAST_UNITS.items():
        si = DIMENSIONS[dimension].si
        for number in (0.0, 1.0, 37.5):
            q = ureg.Quantity(number, ureg.parse_units(expression))
            target = ureg.parse_units(si) if si else ureg.dimensionless
            assert q.dimensionality == target.dimensionality, (dimension, expression)
            expected = float(q.to(target).magnitude)
            assert number * factor + offset == pytest.approx(expected, rel=1e-12, abs=1e-12), \
                (dimension, expression, number)


def test_a_scenario_in_common_units_does_not_load_pint():
    import subprocess
    import sys
    from pathlib import Path
    demo = Path(__file__).resolve().parents[1] / "scenarios" / "nitrogen-blowdown.yaml"
    code = ("import sys; from cvsim.scenario import load_scenario; "
            f"load_scenario({str(demo)!r}); print('pint' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True)
    assert out.stdout.strip() == "False"


def test_a_plain_bar_pressure_is_a_warning_in_check_and_run(tmp_path, capsys):
    """'60 bar' (no a or g) is read as absolute and said so as a warning: in check, when a
    run starts, and in the run's summary."""
    from cvsim.cli import main
    path = tmp_path / "plain.yaml"
    path.write_text("""
title: Plain bar
fluid: Nitrogen
properties: ideal-gas
ideal_gas: {molar_mass: 28.0134 g/mol, heat_capacity: 1040 J/kg/K}
vessels:
  v: {volume: 1 m3, initial: {pressure: 60 bar, temperature: 15 degC}}
run: {end: 2 s}
""")
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "warning" in out and "'bar' read as absolute" in out
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "--no-plots"]) == 0
    captured = capsys.readouterr()
    assert "warning: vessels.v.initial.pressure: 'bar' read as absolute" in captured.err
    assert "'bar' read as absolute" in (tmp_path / "out" / "summary.txt").read_text()

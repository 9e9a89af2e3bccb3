"""Fluid layer: states against CoolProp's own flashes, two-phase, ranges, names."""
import math

import pytest

from cvsim.errors import FluidError, StateError
from cvsim.fluid import IdealGas, RealFluid, make_fluid


@pytest.mark.parametrize("fluid,rho,T", [
    ("Nitrogen", 173.97, 288.15),
    ("Hydrogen", 40.0, 350.0),
    ("Methane", 0.5, 200.0),
    ("Water", 3.0, 600.0),
])
def test_state_from_density_and_energy_matches_coolprop_flash(fluid, rho, T):
    # reference: CoolProp's direct (density, internal energy) flash (general-purpose library)
    import CoolProp.CoolProp as CP
    u = CP.PropsSI("Umass", "Dmass", rho, "T", T, fluid)
    f = RealFluid(fluid)
    st = f.state_du(rho, u, T_guess=T * 1.3)
    assert st.T == pytest.approx(CP.PropsSI("T", "Dmass", rho, "Umass", u, fluid), rel=1e-9)
    assert st.p == pytest.approx(CP.PropsSI("P", "Dmass", rho, "Umass", u, fluid), rel=1e-8)
    assert not st.two_phase


def test_two_phase_state_reports_quality():
    # reference: CoolProp (density, internal energy) flash in the dome of nitrogen
    import CoolProp.CoolProp as CP
    rho, T = 50.0, 90.0
    u = CP.PropsSI("Umass", "Dmass", rho, "T", T, "Nitrogen")
    st = RealFluid("Nitrogen").state_du(rho, u, T_guess=120.0)
    assert st.two_phase
    assert st.quality == pytest.approx(CP.PropsSI("Q", "Dmass", rho, "Umass", u, "Nitrogen"),
                                       abs=1e-8)
    assert st.T == pytest.approx(T, rel=1e-9)
    assert math.isnan(st.c)


def test_isentrope_point_has_the_entropy_asked():
    f = RealFluid("Nitrogen")
    up = f.state_pt(150e5, 288.15)
    st = f.isentrope_at(up.rho * 0.3, up.s, 200.0)
    assert st.s == pytest.approx(up.s, rel=1e-12)


def test_unknown_fluid_suggests_names():
    with pytest.raises(FluidError, match="Nitrogen"):
        RealFluid("Nitrogn")


def test_mixture_is_refused_with_reason():
    with pytest.raises(FluidError, match="mixture"):
        RealFluid("Methane&Ethane")


def test_state_below_equation_of_state_range_is_a_clear_error():
    f = RealFluid("Nitrogen")
    with pytest.raises(StateError, match="lowest temperature"):
        f.state_dt(10.0, 40.0)
    with pytest.raises(StateError, match="not a physical state"):
        f.state_du(-1.0, 1e5)


def test_ideal_gas_defaults_from_coolprop():
    g = make_fluid("Nitrogen", "ideal-gas")
    # cp0 of nitrogen at 298.15 K = 1.040 kJ/(kg K): NIST-JANAF Thermochemical Tables
    # (Chase 1998), N2 Cp = 29.124 J/(mol K) at 298.15 K -> 1.0397 kJ/(kg K)
    assert g.cp == pytest.approx(1039.7, rel=2e-3)
    assert g.gamma == pytest.approx(1.40, abs=2e-3)
    st = g.state_du(10.0, g.cv * 300.0)
    assert st.T == pytest.approx(300.0)
    assert st.p == pytest.approx(10.0 * g.R * 300.0)


def test_ideal_gas_refuses_impossible_heat_capacity():
    with pytest.raises(FluidError):
        IdealGas("x", 0.028, 100.0)

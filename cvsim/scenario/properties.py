"""The few fluid properties the scenario reader needs, in one place.

The reader checks fluid names, and turns standard-volume flows into mass flows
with the gas density at the flow's basis. These calls go to CoolProp directly
for now; they are kept here so that they can be pointed at the fluid layer
without touching the rest of the reader. CoolProp is imported on first use.
"""
from __future__ import annotations

import difflib

from ..errors import FluidError
from ..network import FluidSpec

R = 8.314462618  # [J/(mol K)] molar gas constant (CODATA 2018, exact)


def _coolprop():
    import CoolProp.CoolProp as CP

    return CP


def fluid_names() -> list[str]:
    """Names of the pure and pseudo-pure fluids CoolProp knows."""
    return sorted(_coolprop().get_global_param_string("FluidsList").split(","))


def canonical_fluid(name: str) -> str:
    """CoolProp's own name for ``name`` (``N2`` -> ``Nitrogen``).

    Raises :class:`FluidError` listing close matches for an unknown name.
    """
    CP = _coolprop()
    if "&" in name or "::" in name:
        raise FluidError(f"'{name}': mixtures and back-end prefixes are not supported yet; "
                         "give one CoolProp fluid name (pseudo-pure 'Air' is accepted)")
    try:
        return CP.get_fluid_param_string(name, "name")
    except (ValueError, RuntimeError):
        names = fluid_names()
        by_lower = {n.lower(): n for n in names}
        close = difflib.get_close_matches(name.lower(), list(by_lower), n=3, cutoff=0.6)
        hint = (f"; did you mean {' or '.join(repr(by_lower[c]) for c in close)}?"
                if close else "; `cvsim fluids` lists the names")
        raise FluidError(f"unknown fluid '{name}'{hint}") from None


def molar_mass(name: str) -> float:
    """[kg/mol] CoolProp's molar mass of the fluid."""
    return _coolprop().PropsSI("M", name)


def ideal_gas_cp(name: str, temperature: float) -> float:
    """[J/(kg K)] CoolProp's ideal-gas isobaric heat capacity at ``temperature`` [K]."""
    return _coolprop().PropsSI("Cp0mass", "T", temperature, "P", 101325.0, name)


def basis_density(fluid: FluidSpec, pressure: float, temperature: float,
                  composition: tuple[float, ...] | None = None) -> float:
    """Density [kg/m3] of the gas at a standard-volume basis (``pressure`` [Pa], ``temperature`` [K]).

    real model: CoolProp HEOS density; ideal-gas model: rho = p M / (R T); mixture:
    the mixture's equation of state at the basis for its composition (``composition``:
    mole fractions of a supply that differs from the fluid's), so the molar mass of
    the mixture and its compressibility there enter.
    Raises :class:`FluidError` when the fluid is not a gas at the basis (a
    standard volume of a liquid has no meaning).
    """
    if fluid.model == "mixture":
        return _mixture_basis_density(fluid, pressure, temperature, composition)
    CP = _coolprop()
    if fluid.model == "ideal-gas":
        M = fluid.molar_mass if fluid.molar_mass is not None else molar_mass(fluid.name)
        return pressure * M / (R * temperature)
    try:
        phase = CP.PhaseSI("P", pressure, "T", temperature, fluid.name)
        rho = CP.PropsSI("D", "P", pressure, "T", temperature, fluid.name)
    except ValueError as exc:
        raise FluidError(f"no density for {fluid.name} at {pressure:g} Pa, {temperature:g} K: "
                         f"{exc}") from None
    if "gas" not in phase:
        raise FluidError(f"{fluid.name} is {phase} at the basis ({pressure:g} Pa, "
                         f"{temperature:g} K); give the flow as a mass flow")
    return rho


def density(fluid: FluidSpec, pressure: float, temperature: float) -> float:
    """Density [kg/m3] of the fluid at (``pressure`` [Pa], ``temperature`` [K]), any phase:
    CoolProp HEOS, or p M / (R T) for the ideal-gas model. Raises :class:`FluidError`
    where CoolProp has no state."""
    if fluid.model == "ideal-gas":
        M = fluid.molar_mass if fluid.molar_mass is not None else molar_mass(fluid.name)
        return pressure * M / (R * temperature)
    try:
        return _coolprop().PropsSI("D", "P", pressure, "T", temperature, fluid.name)
    except ValueError as exc:
        raise FluidError(f"no density for {fluid.name} at {pressure:g} Pa, {temperature:g} K: "
                         f"{exc}") from None


def saturation(fluid: FluidSpec, pressure: float | None = None,
               temperature: float | None = None) -> tuple[float, float]:
    """(pressure [Pa], temperature [K]) on the saturation line of a real fluid, from one
    of them. Raises :class:`FluidError` outside the two-phase range (above the critical
    point, below the triple point) or for the ideal-gas model, which has no saturation."""
    if fluid.model != "real":
        raise FluidError("two-phase contents need properties: real (an ideal gas has no "
                         "liquid)")
    CP = _coolprop()
    try:
        if pressure is not None:
            return pressure, CP.PropsSI("T", "P", pressure, "Q", 0, fluid.name)
        return CP.PropsSI("P", "T", temperature, "Q", 0, fluid.name), temperature
    except ValueError:
        Tc = CP.PropsSI("Tcrit", fluid.name)
        pc = CP.PropsSI("pcrit", fluid.name)
        Tt = CP.PropsSI("Ttriple", fluid.name)
        raise FluidError(f"{fluid.name} has two phases only between its triple point "
                         f"({Tt:.6g} K) and its critical point ({Tc:.6g} K, {pc / 1e5:.6g} "
                         "bar a); give a pressure or temperature in that range") from None


def _mixture_basis_density(fluid: FluidSpec, pressure: float, temperature: float,
                           composition) -> float:
    from ..errors import CvsimError
    from ..engines import fluid_for
    f = fluid_for(fluid)
    if composition is not None:
        f = f.engine.fluid(composition)
    try:
        st = f.state_pt(pressure, temperature)
    except CvsimError as exc:
        raise FluidError(f"no density for the {fluid.name} at {pressure:g} Pa, "
                         f"{temperature:g} K: {exc}") from None
    if st.two_phase or st.phase == "liquid":
        raise FluidError(f"the {fluid.name} is not all gas at the basis ({pressure:g} Pa, "
                         f"{temperature:g} K: {st.phase}); give the flow as a mass flow")
    return st.rho

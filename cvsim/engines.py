"""Which property engine serves a run: the one choice between the pure-fluid engine
(CoolProp, or an ideal gas; :mod:`cvsim.fluid`) and the mixture engine
(thermopack; :mod:`cvsim.mixture`), kept apart from both so that neither imports the
other's module for it."""
from __future__ import annotations


def fluid_for(spec):
    """A new fluid object for a :class:`cvsim.network.FluidSpec`: CoolProp, ideal gas,
    or a mixture on its own new engine (:class:`cvsim.mixture.MixtureEngine`)."""
    if spec.model == "mixture":
        from .mixture import MixtureEngine
        engine = MixtureEngine(spec.components, spec.equation)
        return engine.fluid(spec.mole_fractions, spec.name)
    from .fluid import make_fluid
    return make_fluid(spec.name, spec.model, spec.molar_mass, spec.cp, spec.cp_temperature)


__all__ = ["fluid_for"]

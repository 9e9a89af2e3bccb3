"""Lean calls into thermopack's library for the mixture hot path.

thermopack's Python wrapper builds its ctypes argument lists anew on every call
(argument types, result objects, a property container), which costs 13-18 us per
(T, v) property call for a 5-component gas; the library itself needs 3-5 us. This
module sets each exported routine's argument types once and keeps the ctypes
buffers, so that the equation of state costs what the library costs. Only the
routines the flashes of :mod:`cvsim.mixture` call thousands of times per run go
through here: (T, v) pressure, internal energy and entropy with their derivatives,
the (T, p) volume root, the (T, p) flash and the equilibrium speed of sound; the
rare calls (saturation points, critical point, phase envelope) keep the wrapper.

Measured on the 2-core machine (PR, 5-component natural gas,
``python benchmarks/bench_mixture.py``): pressure 18 -> 3.5 us, internal energy
13 -> 4.5 us, (T, p) flash 52 -> 50 us (its cost is the flash itself).

Every call activates the engine's own thermopack model first (several engines may
live in one process; the library holds one active model at a time).
"""
from __future__ import annotations

from ctypes import POINTER, byref, c_double, c_int

import numpy as np

_D = POINTER(c_double)
_I = POINTER(c_int)


class LeanCalls:
    """The hot-path routines of one thermopack model instance ``tp`` with ``nc`` components.

    Compositions are numpy arrays of ``nc`` mole fractions (or mole numbers); all
    quantities molar and SI as thermopack returns them (m3/mol, J/mol, J/(mol K)).
    """

    def __init__(self, tp, nc: int):
        self.nc = nc
        self._tp = tp   # keeps the model (and its Fortran memory) alive
        self._idx = tp.model_index_c
        act = tp.s_activate_model
        act.argtypes = [_I]
        act.restype = None
        self._act = act
        p_tv = tp.s_pressure_tv
        p_tv.argtypes = [_D, _D, _D, _D, _D, _D, _D, _I]
        p_tv.restype = c_double
        self._p_tv = p_tv
        for name in ("s_internal_energy_tv", "s_entropy_tv"):
            f = getattr(tp, name)
            f.argtypes = [_D, _D, _D, _D, _D, _D, _D, _I]
            f.restype = None
        self._u_tv = tp.s_internal_energy_tv
        self._s_tv = tp.s_entropy_tv
        v_tp = tp.s_eos_specificvolume
        v_tp.argtypes = [_D, _D, _D, _I, _D, _D, _D, _D]
        v_tp.restype = None
        self._v_tp = v_tp
        flash = tp.s_twophasetpflash
        flash.argtypes = [_D, _D, _D, _D, _D, _I, _D, _D]
        flash.restype = None
        self._flash = flash
        sos = tp.s_sos_sound_velocity_2ph
        sos.argtypes = [_D, _D, _D, _D, _D, _D, _D, _I, _I]
        sos.restype = c_double
        self._sos = sos
        arr = c_double * nc
        self._w, self._x, self._y, self._z = arr(), arr(), arr(), arr()
        self._T, self._V, self._P = c_double(), c_double(), c_double()
        self._a, self._b, self._c = c_double(), c_double(), c_double()
        self._bl = c_double()
        self._phase = c_int()
        self._null = _D()
        self._flags = {"IR": c_int(0), "R": c_int(1), "I": c_int(2)}

    def _load(self, buf, w) -> None:
        for i in range(self.nc):
            buf[i] = w[i]

    # ------------------------------------------------------------ (T, v)
    def tv(self, T: float, v: float, w):
        """(p [Pa], dp/dT, dp/dv, u [J/mol], cv = du/dT, s [J/(mol K)]) at (T, v, w)."""
        self._act(self._idx)
        Tc, Vc, a, b, null, flag = self._T, self._V, self._a, self._b, self._null, self._flags["IR"]
        Tc.value, Vc.value = T, v
        self._load(self._w, w)
        p = self._p_tv(byref(Tc), byref(Vc), self._w, byref(b), byref(a), null, null,
                       byref(flag))
        dpdt, dpdv = a.value, b.value
        self._u_tv(byref(Tc), byref(Vc), self._w, byref(a), byref(b), null, null, byref(flag))
        u, cv = a.value, b.value
        self._s_tv(byref(Tc), byref(Vc), self._w, byref(a), null, null, null, byref(flag))
        return p, dpdt, dpdv, u, cv, a.value

    def ideal_cv(self, T: float, w) -> float:
        """Ideal-gas isochoric heat capacity [J/(mol K)] of composition w at T [K]."""
        self._act(self._idx)
        Tc, Vc, a, b = self._T, self._V, self._a, self._b
        Tc.value, Vc.value = T, 1.0
        self._load(self._w, w)
        self._u_tv(byref(Tc), byref(Vc), self._w, byref(a), byref(b), self._null, self._null,
                   byref(self._flags["I"]))
        return b.value

    # ------------------------------------------------------------ (T, p)
    def volume(self, T: float, p: float, w, phase: int) -> float:
        """Molar volume [m3/mol] of the ``phase`` root at (T, p, w)."""
        self._act(self._idx)
        Tc, Pc, a, null = self._T, self._P, self._a, self._null
        Tc.value, Pc.value = T, p
        self._load(self._w, w)
        self._phase.value = phase
        self._v_tp(byref(Tc), byref(Pc), self._w, byref(self._phase), byref(a), null, null,
                   null)
        return a.value

    def flash(self, T: float, p: float, z):
        """(phase flag, betaV, x, y) of the (T, p) flash of overall composition z."""
        self._act(self._idx)
        Tc, Pc = self._T, self._P
        Tc.value, Pc.value = T, p
        self._load(self._z, z)
        self._flash(byref(Tc), byref(Pc), self._z, byref(self._a), byref(self._bl),
                    byref(self._phase), self._x, self._y)
        return (self._phase.value, self._a.value, np.array(self._x[:]), np.array(self._y[:]))

    def sound_speed(self, T: float, p: float, x, y, z, beta: float, phase: int) -> float:
        """Equilibrium speed of sound [m/s] (mechanical, thermal and chemical
        equilibrium between the phases; the phase's own in one phase)."""
        self._act(self._idx)
        Tc, Pc = self._T, self._P
        Tc.value, Pc.value = T, p
        self._load(self._x, x)
        self._load(self._y, y)
        self._load(self._z, z)
        self._a.value, self._bl.value = beta, 1.0 - beta
        self._phase.value = phase
        return self._sos(byref(Tc), byref(Pc), self._x, self._y, self._z, byref(self._a),
                         byref(self._bl), byref(self._phase), _I())

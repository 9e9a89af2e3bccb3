"""Viscosity and thermal conductivity of a gas mixture, for the wall's inside convection.

CoolProp's own mixture transport (extended corresponding states) costs 2-3 ms per
property and fails (NaN) over much of the dense, cold vapour a blowdown passes through
(natural gas below about 290 K above about 1000 mol/m3), so cvsim estimates them by
corresponding states, each part from a published method with CoolProp's pure fluids:

* dilute gas (zero density): each component's dilute viscosity and conductivity from
  CoolProp (its pure-fluid correlations at vanishing density, gas phase imposed),
  mixed by Wilke's rule for viscosity and Wassiljewa's equation with the
  Mason-Saxena coefficients for conductivity (Poling, Prausnitz & O'Connell, *The
  Properties of Gases and Liquids*, 5th ed., 2001, eqs. 9-5.13/9-5.14 and
  10-6.1/10-6.2 (epsilon = 1); Wilke, J. Chem. Phys. 18 (1950) 517; Mason & Saxena,
  Phys. Fluids 1 (1958) 361):

      mu0 = sum_i z_i mu_i / sum_j z_j Phi_ij,   k0 = sum_i z_i k_i / sum_j z_j Phi_ij
      Phi_ij = [1 + (mu_i/mu_j)^(1/2) (M_j/M_i)^(1/4)]^2 / [8 (1 + M_i/M_j)]^(1/2)

  A component without a CoolProp dilute viscosity takes methane's at the same reduced
  temperature scaled by xi (mu0 xi is a function of T/Tc alone, the basis of the
  Stiel-Thodos dilute-gas correlation); one without a conductivity the modified
  Eucken relation k = mu cv0 (1.32 + 1.77 R/cv0) / M (Poling et al., 5th ed., eq.
  10-3.3; from memory);
* dense gas: the excess over the dilute value is a universal function of the reduced
  density rho_r = rho / rho_c once scaled (Jossi, Stiel & Thodos, AIChE J. 8 (1962) 59
  for viscosity, (mu - mu0) xi = f(rho_r); Stiel & Thodos, AIChE J. 10 (1964) 26 for
  conductivity, (k - k0) Gamma Zc^5 = g(rho_r)); cvsim takes f and g from methane's
  reference correlations in CoolProp instead of the printed polynomials:

      mu - mu0 = [mu_CH4 - mu0_CH4](T_r Tc_CH4, rho_r rhoc_CH4) xi_CH4 / xi_m
      k - k0  = [k_CH4 - k0_CH4](T_r Tc_CH4, rho_r rhoc_CH4) (Gamma Zc^5)_CH4 / (Gamma Zc^5)_m
      xi = Tc^(1/6) M^(-1/2) pc^(-2/3),   Gamma = Tc^(1/6) M^(1/2) pc^(-2/3)

  with Kay's pseudo-critical point of the mixture (Tc = sum z Tc_i, pc = sum z pc_i,
  Vc = sum z Vc_i, Zc = pc Vc / (R Tc), M = sum z M_i).

Validity: gas and dense vapour of light hydrocarbons and permanent gases. Checked in
tests/test_mixture_run.py against CoolProp's pure fluids and its mixture model where
that converges (within 10 % for natural gas). Inside-convection correlations
themselves carry +-20 % or more, so this is ample for the wall's heat transfer.
"""
from __future__ import annotations

import math

import numpy as np

R = 8.314462618

#: modified Eucken relation for a component without a CoolProp conductivity
EUCKEN = (1.32, 1.77)


class MixtureTransport:
    """mu [Pa s] and k [W/(m K)] of a gas mixture of the components ``names`` (CoolProp
    names) with molar masses ``M`` [kg/mol], at (T [K], molar density [mol/m3], z)."""

    def __init__(self, names, M):
        import CoolProp.CoolProp as CP
        self._CP = CP
        self.names = tuple(names)
        self.M = np.asarray(M, dtype=float)
        self._pure = []
        tc, pc, vc = [], [], []
        for n in self.names:
            a = CP.AbstractState("HEOS", n)
            a.specify_phase(CP.iphase_gas)
            self._pure.append(a)
            tc.append(a.T_critical())
            pc.append(a.p_critical())
            vc.append(1.0 / a.rhomolar_critical())
        self.tc, self.pc, self.vc = np.array(tc), np.array(pc), np.array(vc)
        ref = CP.AbstractState("HEOS", "Methane")
        ref.specify_phase(CP.iphase_gas)
        self._ref = ref
        self._ref_c = (ref.T_critical(), ref.p_critical(), 1.0 / ref.rhomolar_critical(),
                       ref.molar_mass())
        self._dilute_cache: dict[float, tuple[np.ndarray, np.ndarray]] = {}

    # ----------------------------------------------------------- dilute gas
    def _ref_props(self, T: float, rho: float) -> tuple[float, float]:
        a = self._ref
        a.update(self._CP.DmolarT_INPUTS, rho, T)
        return a.viscosity(), a.conductivity()

    @staticmethod
    def _xi(tc, pc, M):
        return tc ** (1.0 / 6.0) / (math.sqrt(M) * pc ** (2.0 / 3.0))

    def dilute(self, T: float) -> tuple[np.ndarray, np.ndarray]:
        """Each component's dilute-gas viscosity and conductivity at T [K]."""
        got = self._dilute_cache.get(T)
        if got is not None:
            return got
        CP = self._CP
        mus, ks = [], []
        tc_r, pc_r, _, M_r = self._ref_c
        for a, tc, pc, M in zip(self._pure, self.tc, self.pc, self.M):
            mu = k = math.nan
            try:
                a.update(CP.DmolarT_INPUTS, 1e-6, T)
                mu = a.viscosity()
                k = a.conductivity()
            except ValueError:
                pass
            if not (mu > 0.0 and math.isfinite(mu)):
                # corresponding states with methane: mu0 xi = f(T/Tc)
                mu_r, _ = self._ref_props(T * tc_r / tc, 1e-6)
                mu = mu_r * self._xi(tc_r, pc_r, M_r) / self._xi(tc, pc, M)
            if not (k > 0.0 and math.isfinite(k)):
                try:
                    a.update(CP.DmolarT_INPUTS, 1e-6, T)
                    cv0 = a.cvmolar()
                except ValueError:
                    cv0 = 2.5 * R
                k = mu * cv0 * (EUCKEN[0] + EUCKEN[1] * R / cv0) / M
            mus.append(mu)
            ks.append(k)
        got = (np.array(mus), np.array(ks))
        if len(self._dilute_cache) > 512:
            self._dilute_cache.clear()
        self._dilute_cache[T] = got
        return got

    def __call__(self, z: np.ndarray, T: float, rho: float) -> tuple[float, float]:
        """(mu [Pa s], k [W/(m K)]) of composition z at T [K] and molar density rho [mol/m3]."""
        z = np.asarray(z, dtype=float)
        mu_i, k_i = self.dilute(T)
        M = self.M
        ratio = np.sqrt(mu_i[:, None] / mu_i[None, :]) * (M[None, :] / M[:, None]) ** 0.25
        phi = (1.0 + ratio) ** 2 / np.sqrt(8.0 * (1.0 + M[:, None] / M[None, :]))
        den = phi @ z
        mu0 = float(np.sum(z * mu_i / den))
        k0 = float(np.sum(z * k_i / den))
        # dense-gas excess by corresponding states with methane
        tc, pc, vc, Mm = float(z @ self.tc), float(z @ self.pc), float(z @ self.vc), float(z @ M)
        tc_r, pc_r, vc_r, M_r = self._ref_c
        T0, rho0 = T * tc_r / tc, rho * vc / vc_r
        mu_d, k_d = self._ref_props(T0, rho0)
        mu_z, k_z = self._ref_props(T0, 1e-6)
        zc, zc_r = pc * vc / (R * tc), pc_r * vc_r / (R * tc_r)
        xi, xi_r = self._xi(tc, pc, Mm), self._xi(tc_r, pc_r, M_r)
        gam = tc ** (1.0 / 6.0) * math.sqrt(Mm) / pc ** (2.0 / 3.0) * zc ** 5
        gam_r = tc_r ** (1.0 / 6.0) * math.sqrt(M_r) / pc_r ** (2.0 / 3.0) * zc_r ** 5
        return mu0 + (mu_d - mu_z) * xi_r / xi, k0 + (k_d - k_z) * gam_r / gam


__all__ = ["MixtureTransport"]

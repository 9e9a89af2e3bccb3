"""The frozen-composition nozzle of a mixture (cvsim/flow/frozen_nozzle.py, `expansion:
frozen` on an orifice): against a brute-force maximum over the frozen isentrope computed
here with thermopack's own one-phase calls, against the perfect-gas critical flux where
the mixture is ideal, and against the equilibrium nozzle where physics orders them."""
import math

import numpy as np
import pytest

from cvsim.components import COMPONENTS
from cvsim.errors import ScenarioError
from cvsim.flow.frozen_nozzle import FrozenNozzleHint, frozen_mass_flux
from cvsim.flow.mixture_nozzle import mixture_mass_flux
from cvsim.mixture import make_mixture
from cvsim.scenario import load_scenario_text

#: issue 11's benchmark gas, with a retrograde region
RICH = {"Methane": 0.80, "Ethane": 0.08, "Propane": 0.06, "n-Butane": 0.04, "Nitrogen": 0.02}


@pytest.fixture(scope="module")
def rich():
    f = make_mixture(RICH)
    f.envelope()
    return f


def _brute_force_frozen(T0, p0, pb, n=150):
    """Frozen isentropic flux maximised over the throat pressure by brute force, with
    thermopack's own one-phase calls at fixed compositions (not cvsim's solves): the
    vapour on its vapour root, T from s(T, p) = s_V0 by Brent's method at each p; the
    liquid incompressible at its inlet volume. A grid, then golden section."""
    from scipy.optimize import brentq
    from thermopack.cubic import cubic
    names = list(RICH)
    tp = cubic(",".join(COMPONENTS[c][0] for c in names), "PR")
    Mi = np.array([COMPONENTS[c][1] for c in names])
    z = np.array(list(RICH.values()))
    z = z / z.sum()
    fl = tp.two_phase_tpflash(T0, p0, z)
    two = fl.phase == tp.TWOPH and 0.0 < fl.betaV < 1.0
    y = np.asarray(fl.y) if two else z
    My = float(y @ Mi)
    if two:
        Mx = float(np.asarray(fl.x) @ Mi)
        X = fl.betaV * My / (fl.betaV * My + (1 - fl.betaV) * Mx)
        vL = tp.specific_volume(T0, p0, fl.x, tp.LIQPH)[0] / Mx
    else:
        X, vL = 1.0, 0.0
    sV0 = tp.entropy(T0, p0, y, tp.VAPPH)[0]
    hV0 = tp.enthalpy(T0, p0, y, tp.VAPPH)[0] / My

    def G(p):
        T = brentq(lambda T: tp.entropy(T, p, y, tp.VAPPH)[0] - sV0, 90.0, T0 + 1.0,
                   xtol=1e-13, rtol=1e-15)
        hV = tp.enthalpy(T, p, y, tp.VAPPH)[0] / My
        vV = tp.specific_volume(T, p, y, tp.VAPPH)[0] / My
        dh = X * (hV0 - hV) + (1 - X) * vL * (p0 - p)
        return math.sqrt(2.0 * dh) / (X * vV + (1 - X) * vL) if dh > 0 else 0.0

    ps = np.linspace(max(pb, 0.25 * p0), p0 * 0.999, n)   # the throat lies well inside
    gs = [G(p) for p in ps]
    k = int(np.argmax(gs))
    a, b = ps[max(k - 1, 0)], ps[min(k + 1, n - 1)]
    r = (math.sqrt(5) - 1) / 2
    c, d = b - r * (b - a), a + r * (b - a)
    gc, gd = G(c), G(d)
    while b - a > 1e-9 * p0:
        if gc > gd:
            b, d, gd = d, c, gc
            c = b - r * (b - a)
            gc = G(c)
        else:
            a, c, gc = c, d, gd
            d = a + r * (b - a)
            gd = G(d)
    return max(gc, gd, max(gs))


@pytest.mark.parametrize("p0,T0", [
    (100e5, 288.15),   # one phase; the equilibrium isentrope enters the envelope
    (30e5, 215.0),     # two phases in, quality 0.66
    (50e5, 250.0),     # two phases in, quality 0.79
])
def test_frozen_throat_against_a_brute_force_nozzle(rich, p0, T0):
    up = rich.state_pt(p0, T0)
    G, choked, p_t = frozen_mass_flux(rich, up, 1.01325e5)
    # source: brute-force maximum of the frozen flux over the throat pressure, computed
    # in this test with thermopack's own one-phase (T, p) calls on the vapour root
    # (Wilhelmsen et al., Ind. Eng. Chem. Res. 56 (2017) 3503), Brent's method for T
    assert choked and 1.01325e5 < p_t < p0
    assert G == pytest.approx(_brute_force_frozen(T0, p0, 1.01325e5), rel=1e-10)  # measured 2e-14


def test_frozen_vapour_stays_vapour_inside_the_envelope(rich):
    up = rich.state_pt(100e5, 288.15)
    _, _, p_t = frozen_mass_flux(rich, up, 1.01325e5)
    eq = rich.isentrope_at_p(p_t, up.s)
    met = rich.metastable_isentrope_at_p(p_t, up.s, up.T)
    # at the frozen throat the equilibrium state has condensed, the frozen one has not
    # (a supersaturated vapour: colder than equilibrium, as no latent heat is released;
    # the phase rule and the first law, no source needed)
    assert eq.two_phase and not met.two_phase and met.T < eq.T


def test_frozen_equals_equilibrium_where_nothing_condenses(rich):
    up = rich.state_pt(60e5, 330.0)
    Gf, _, pf = frozen_mass_flux(rich, up, 1.01325e5)
    Ge, _, pe = mixture_mass_flux(rich, up, 1.01325e5)
    # the isentrope from 60 bar a, 330 K stays one phase down to the throat: the two
    # models are the same expansion (definition; both converge |M^2 - 1| <= 1e-7)
    assert Gf == pytest.approx(Ge, rel=1e-8) and pf == pytest.approx(pe, rel=1e-5)


def test_frozen_critical_flux_of_an_ideal_mixture():
    air = make_mixture({"Nitrogen": 0.79, "Oxygen": 0.21})
    up = air.state_pt(0.2e5, 300.0)
    G, choked, p_t = frozen_mass_flux(air, up, 0.02e5)
    k0 = air.ideal_gas_gamma(up.rho, 300.0)
    k = 0.5 * (k0 + air.ideal_gas_gamma(up.rho, 300.0 * 2.0 / (k0 + 1.0)))
    G_ideal = math.sqrt(k * up.p * up.rho) * (2.0 / (k + 1.0)) ** ((k + 1.0) / (2.0 * (k - 1.0)))
    # source: perfect-gas critical flux G* = sqrt(k p0 rho0) (2/(k+1))^((k+1)/(2(k-1)))
    # and ratio (2/(k+1))^(k/(k-1)) (Anderson, Modern Compressible Flow, 3rd ed., sec.
    # 5.4; ISO 9300:2022), k the ideal-gas ratio of the mixture averaged over inlet and
    # throat temperatures; at 0.2 bar a, Z = 0.9999 and cp of N2/O2 varies by 0.1 %
    # over the expansion: measured 1e-4 in G
    assert choked
    assert G == pytest.approx(G_ideal, rel=3e-4)
    assert p_t / up.p == pytest.approx((2.0 / (k + 1.0)) ** (k / (k - 1.0)), rel=1e-3)


@pytest.mark.parametrize("p0,T0", [(30e5, 215.0), (50e5, 250.0)])
def test_frozen_flux_exceeds_equilibrium_for_a_two_phase_stream(rich, p0, T0):
    up = rich.state_pt(p0, T0)
    assert up.two_phase
    Gf = frozen_mass_flux(rich, up, 1.01325e5)[0]
    Ge = mixture_mass_flux(rich, up, 1.01325e5)[0]
    # source: Henry & Fauske, J. Heat Transfer 93 (1971) 179 (from memory): for a
    # flashing two-phase flow the homogeneous equilibrium model gives the lowest
    # critical flux and the frozen (no interphase transfer) model a higher one; here the
    # equilibrium sound speed is lower than the frozen one, and the throat pressure too
    assert Gf > 1.03 * Ge     # measured: 8.7 % and 9.0 % higher


def test_frozen_liquid_is_bernoulli(rich):
    liq = rich.phase_state(rich.state_pt(30e5, 215.0), "liquid")
    G, choked, _ = frozen_mass_flux(rich, liq, 10e5)
    # source: Bernoulli for an incompressible liquid, G = sqrt(2 rho (p0 - pb)) (the
    # homogeneous frozen model's liquid; any fluid-mechanics text)
    assert not choked and G == pytest.approx(math.sqrt(2 * liq.rho * 20e5), rel=1e-12)


def test_frozen_warm_start_gives_the_cold_answer(rich):
    hint = FrozenNozzleHint()
    frozen_mass_flux(rich, rich.state_pt(60e5, 260.0), 1e5, hint)
    up2 = rich.state_pt(59e5, 259.0)
    warm = frozen_mass_flux(rich, up2, 1e5, hint)[0]
    cold = frozen_mass_flux(rich, up2, 1e5, FrozenNozzleHint())[0]
    # the one-phase (p, s) solves stop at a residual of 1e-11 (|s| + R), from other
    # first guesses when warm: measured 1.6e-10 apart
    assert warm == pytest.approx(cold, rel=1e-9)


def test_frozen_subcritical_flux_at_the_back_pressure(rich):
    up = rich.state_pt(20e5, 300.0)
    G, choked, p_t = frozen_mass_flux(rich, up, 17e5)
    st = rich.metastable_isentrope_at_p(17e5, up.s, 290.0)
    # source: the isentropic nozzle, G = rho sqrt(2 (h0 - h)) at the back pressure
    # (Thompson, Compressible Fluid Dynamics, 1972, ch. 5), evaluated directly here
    assert not choked and p_t == 17e5
    assert G == pytest.approx(st.rho * math.sqrt(2 * (up.h - st.h)), rel=1e-10)


# ----------------------------------------------------------- scenario key and runs
SCENARIO = """
fluid:
  components: {Methane: 0.80, Ethane: 0.08, Propane: 0.06, n-Butane: 0.04, Nitrogen: 0.02}
vessels:
  v: {volume: 1 m3, initial: {pressure: 100 bara, temperature: 15 degC}}
reservoirs:
  air: {pressure: 1 atm, temperature: 15 degC}
links:
  vent: {from: v, to: air, device: orifice, diameter: 10 mm, discharge_coefficient: 0.84}
run: {end: 20 s, record_every: 1 s}
"""


def test_a_frozen_orifice_runs_faster_out_than_the_equilibrium_one():
    from cvsim.api import run_network
    eq = run_network(load_scenario_text(SCENARIO).network)
    sc = load_scenario_text(SCENARIO.replace("discharge_coefficient: 0.84",
                                             "discharge_coefficient: 0.84, expansion: frozen"))
    assert sc.network.links[0].device.expansion == "frozen"
    fr = run_network(sc.network)
    assert eq.ok and fr.ok and not fr.checks_failed, [c.text() for c in fr.checks_failed]
    # from 100 bar a, 15 degC the equilibrium isentrope condenses before the throat and
    # chokes at a lower flux (test above): the frozen vent empties the vessel faster
    assert fr["v.pressure"][-1] < eq["v.pressure"][-1]
    assert fr["vent.mass_flow"][0] == pytest.approx(
        eq["vent.mass_flow"][0] * 25418.6 / 22970.7, rel=1e-4)


@pytest.mark.parametrize("change,words", [
    ("fluid:\n  components: {Methane: 0.80, Ethane: 0.08, Propane: 0.06, n-Butane: 0.04, "
     "Nitrogen: 0.02}", "fluid: Methane"),
    ("discharge_coefficient: 0.84", "discharge_coefficient: 0.84, flow_model: ideal-gas"),
])
def test_frozen_expansion_needs_a_mixture_and_the_real_gas_nozzle(change, words):
    text = SCENARIO.replace("discharge_coefficient: 0.84",
                            "discharge_coefficient: 0.84, expansion: frozen")
    with pytest.raises(ScenarioError, match="links.vent.expansion"):
        load_scenario_text(text.replace(change, words))

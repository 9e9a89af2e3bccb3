"""Uncertainty studies: distributions read with units, designs, percentiles and their
intervals, probabilities, rank correlations and Sobol' indices against outside
references, and whole studies on the sweep machinery (closed-form blowdown time,
reproducibility, failed cases kept, the command line)."""
import math
from pathlib import Path

import numpy as np
import pytest

import cvsim
from cvsim.cli import main
from cvsim.distributions import Distribution, UncertainInput, UncertaintySpec
from cvsim.errors import ScenarioError, StudyError
from cvsim.scenario import load_scenario_text
from cvsim.study.sampling import correlate, make_design
from cvsim.study.sensitivity import partial_rank_correlations, sobol_indices, spearman
from cvsim.study.statistics import (order_ranks, percentile, percentile_interval,
                                    proportion_interval)

# Perfect-gas air (k = 1.4) vented from an adiabatic 0.2 m3 vessel through a 5 mm
# orifice on the perfect-gas nozzle: choked all the way down to the stop at 5 bar a
K = 1.4
M_AIR = 0.0289647          # [kg/mol] dry air, CRC Handbook (from memory)
R = 8.314462618 / M_AIR
CP = K / (K - 1.0) * R
LIMIT_S = 130.6   # [s] a time no case of seed 11 comes within 0.5 % of (closed form below)
BLOWDOWN = f"""
title: Perfect-gas blowdown, uncertain discharge coefficient
fluid: Air
properties: ideal-gas
ideal_gas: {{molar_mass: {M_AIR * 1000} g/mol, heat_capacity: {CP!r} J/kg/K}}
vessels:
  tank:
    volume: 0.2 m3
    initial: {{pressure: 50 bara, temperature: 300 K}}
    limits: {{depressure: {{to: 5 bara, within: {LIMIT_S} s}}}}
reservoirs:
  outside: {{pressure: 1 bara, temperature: 300 K}}
links:
  vent: {{from: tank, to: outside, device: orifice, diameter: 5 mm,
          discharge_coefficient: 0.8, flow_model: ideal-gas}}
run:
  end: 20 min
  record_every: 10 s
  stop_when: [{{vessel: tank, pressure_below: 5 bara}}]
uncertainty:
  inputs:
    links.vent.discharge_coefficient: {{distribution: normal, standard_deviation: 0.04}}
  cases: 20
  seed: 11
"""


@pytest.fixture
def blowdown(tmp_path):
    path = tmp_path / "blowdown.yaml"
    path.write_text(BLOWDOWN)
    return path


def blowdown_time(cd: float) -> float:
    """Time for the adiabatic perfect-gas vessel to fall from 50 to 5 bar a through a
    choked orifice: P/P0 = [1 + (k-1)/2 t/tau]^(-2k/(k-1)), tau = V/(Cd A C* sqrt(R T0))."""
    # source: Bar-Meir, Fundamentals of Compressible Fluid Mechanics, ch. "Evacuating and
    # filling a semi-rigid chamber" (isentropic residual gas); ISO 9300 for C*
    c_star = math.sqrt(K) * (2.0 / (K + 1.0)) ** ((K + 1.0) / (2.0 * (K - 1.0)))
    area = math.pi * 0.005 ** 2 / 4.0
    tau = 0.2 / (cd * area * c_star * math.sqrt(R * 300.0))
    return 2.0 * tau / (K - 1.0) * ((5.0 / 50.0) ** (-(K - 1.0) / (2.0 * K)) - 1.0)


# ------------------------------------------------------------ reading

def test_distributions_read_in_the_units_of_their_key():
    text = BLOWDOWN.replace(
        "    links.vent.discharge_coefficient: {distribution: normal, standard_deviation: 0.04}",
        "    links.vent.discharge_coefficient: {distribution: normal, standard_deviation: 0.04,"
        " highest: 1}\n"
        "    vessels.tank.initial.temperature: {distribution: normal, mean: 15 degC,"
        " standard_deviation: 5 K}\n"
        "    vessels.tank.initial.pressure: {distribution: uniform, lowest: 40 barg,"
        " highest: 600 psia}\n"
        "    links.vent.diameter: {distribution: log-normal, factor: 2}")
    spec = load_scenario_text(text).uncertainty
    by = {i.key: i for i in spec.inputs}
    t = by["vessels.tank.initial.temperature"].distribution
    # source: SI brochure (BIPM, 9th ed. 2019): 0 degC = 273.15 K; a difference of 1 degC = 1 K
    assert (t.centre, t.spread) == (pytest.approx(288.15), pytest.approx(5.0))
    p = by["vessels.tank.initial.pressure"].distribution
    # source: 1 psi = 6894.757 Pa (NIST SP 811, 2008, B.8); gauge + standard atmosphere
    assert p.lowest == pytest.approx(40e5 + 101325.0)
    assert p.highest == pytest.approx(600 * 6894.757293168361)
    cd = by["links.vent.discharge_coefficient"].distribution
    assert cd.centre == 0.8 and cd.highest == 1.0  # the centre not given: the file's value
    # a log-normal's factor: 97.5 % of values below median x factor (its definition here)
    d = by["links.vent.diameter"].distribution
    assert float(d.ppf(0.975)) == pytest.approx(0.010, rel=1e-9)
    assert float(d.ppf(0.025)) == pytest.approx(0.0025, rel=1e-9)


def test_triangular_quantiles_follow_the_closed_form():
    a, c, b = -15.0, 10.0, 35.0
    dist = Distribution("triangular", c, math.nan, a, b)
    u = np.linspace(0.01, 0.99, 25)
    # source: inverse CDF of the triangular distribution, Johnson, Kotz & Balakrishnan,
    # Continuous Univariate Distributions vol. 2, 2nd ed. 1995, ch. 26 sec. 9
    fc = (c - a) / (b - a)
    exact = np.where(u < fc, a + np.sqrt(u * (b - a) * (c - a)),
                     b - np.sqrt((1 - u) * (b - a) * (b - c)))
    assert np.allclose(dist.ppf(u), exact, rtol=0, atol=1e-9)


@pytest.mark.parametrize("entry, words", [
    ("links.vent.discharge_coeficient: {distribution: normal, standard_deviation: 0.04}",
     "Did you mean 'links.vent.discharge_coefficient'"),
    ("links.vent.discharge_coefficient: {distribution: uniform, lowest: 0.9, highest: 0.7}",
     "'highest' must be above 'lowest'"),
    ("links.vent.discharge_coefficient: {distribution: normal, factor: 2}",
     "takes no 'factor'"),
    ("vessels.tank.initial.pressure: {distribution: normal, standard_deviation: 2 barg}",
     "without the gauge mark"),
    ("vessels.tank.shape.volume: {distribution: uniform, lowest: 1 m3, highest: 2 m3}",
     "no value at"),
])
def test_wrong_uncertain_inputs_name_the_key(entry, words):
    text = BLOWDOWN.replace(
        "    links.vent.discharge_coefficient: {distribution: normal, standard_deviation: 0.04}",
        "    " + entry)
    with pytest.raises(ScenarioError) as err:
        load_scenario_text(text)
    assert words in str(err.value) and "uncertainty.inputs." in str(err.value)


def test_correlations_that_cannot_hold_together_are_refused():
    inputs = ("    vessels.tank.initial.temperature: {distribution: uniform, lowest: 280 K,"
              " highest: 320 K}\n"
              "    reservoirs.outside.temperature: {distribution: uniform, lowest: 280 K,"
              " highest: 320 K}\n"
              "    links.vent.discharge_coefficient: {distribution: normal, "
              "standard_deviation: 0.04}\n")
    pairs = ("  rank_correlations:\n"
             "    - {inputs: [vessels.tank.initial.temperature, reservoirs.outside.temperature],"
             " value: 0.9}\n"
             "    - {inputs: [vessels.tank.initial.temperature, "
             "links.vent.discharge_coefficient], value: 0.9}\n"
             "    - {inputs: [reservoirs.outside.temperature, links.vent.discharge_coefficient],"
             " value: -0.9}\n")
    text = BLOWDOWN.replace(
        "    links.vent.discharge_coefficient: {distribution: normal, standard_deviation: 0.04}\n",
        inputs + pairs)
    with pytest.raises(ScenarioError, match="not positive definite"):
        load_scenario_text(text)
    with pytest.raises(ScenarioError, match="assume independent inputs"):
        load_scenario_text(text.replace("value: -0.9", "value: 0.9")
                           + "  sensitivity: variance\n")


# --------------------------------------------------------- statistics

def test_percentile_is_the_linear_definition():
    x = np.sort(np.random.default_rng(3).lognormal(size=37))
    for p in (1, 5, 37.5, 50, 95, 99):
        # source: numpy.percentile, method 'linear' (Hyndman & Fan 1996, definition 7)
        assert percentile(x, p) == pytest.approx(np.percentile(x, p, method="linear"),
                                                 rel=1e-13)
    assert percentile(np.array([1.0, 2.0, np.inf]), 50) == 2.0
    assert percentile(np.array([1.0, 2.0, np.inf]), 90) == np.inf


def test_median_interval_of_twenty_values():
    r, s, coverage = order_ranks(20, 50, 0.95)
    # source: Conover, Practical Nonparametric Statistics, 3rd ed. 1999, sec. 3.2 with the
    # binomial table A3: for n = 20 the 95 % interval of the median is [X(6), X(15)]
    # (from memory), recomputed here from the binomial sums
    assert (r, s) == (6, 15)
    exact = sum(math.comb(20, k) for k in range(6, 15)) / 2 ** 20
    assert coverage == pytest.approx(exact, rel=1e-12)
    assert exact == pytest.approx(0.9586, abs=1e-4)


def test_percentile_intervals_cover_the_true_value_as_often_as_stated():
    # brute force: 4000 samples of 40 exponential values; the true P90 is ln 10
    rng = np.random.default_rng(1)
    true = math.log(10.0)
    hits = 0
    trials = 4000
    for _ in range(trials):
        x = np.sort(rng.exponential(size=40))
        lo, hi, cov = percentile_interval(x, 90, 0.90)
        hits += (lo is None or lo <= true) and (hi is None or true <= hi)
    # the order-statistic interval is exact for any continuous distribution:
    # coverage >= the binomial sum it reports (3 standard errors of slack)
    assert hits / trials >= cov - 3 * math.sqrt(cov * (1 - cov) / trials)
    assert cov >= 0.90


def test_probability_intervals_are_exact_binomial():
    from scipy.stats import binomtest
    for k, n in ((0, 100), (3, 50), (27, 200), (200, 200)):
        lo, hi = proportion_interval(k, n, 0.95)
        # source: Clopper & Pearson, Biometrika 26 (1934) 404; scipy.stats.binomtest
        # (method 'exact') as the reference implementation
        ref = binomtest(k, n).proportion_ci(confidence_level=0.95, method="exact")
        assert (lo, hi) == (pytest.approx(ref.low, abs=1e-12), pytest.approx(ref.high, abs=1e-12))
    # no crossing in 100 cases: upper end 1 - (alpha/2)^(1/n) = 3.62 %
    assert proportion_interval(0, 100, 0.95)[1] == pytest.approx(1 - 0.025 ** 0.01, rel=1e-9)


# -------------------------------------------------------- sensitivity

def test_spearman_of_a_bivariate_normal():
    rho = 0.7
    rng = np.random.default_rng(7)
    z = rng.standard_normal((20000, 2))
    x, y = z[:, 0], rho * z[:, 0] + math.sqrt(1 - rho ** 2) * z[:, 1]
    # source: Pearson (1907) / Kruskal, JASA 53 (1958) 814: rho_S = (6/pi) asin(rho/2)
    expected = 6 / math.pi * math.asin(rho / 2)
    assert spearman(x, y) == pytest.approx(expected, abs=0.01)


def test_partial_rank_correlations_match_the_precision_matrix():
    rng = np.random.default_rng(2)
    x = rng.standard_normal((500, 3))
    x[:, 1] += 0.6 * x[:, 0]
    y = 2 * x[:, 0] - x[:, 1] + 0.3 * x[:, 2] ** 3 + rng.standard_normal(500)
    got = partial_rank_correlations(x, y)
    # an independent route: the partial correlation of ranks i and y given the others is
    # -P_iy / sqrt(P_ii P_yy), P the inverse of the rank correlation matrix
    # source: T. W. Anderson, An Introduction to Multivariate Statistical Analysis,
    # 3rd ed. 2003, sec. 2.5.2 (partial correlation from the inverse covariance)
    from scipy.stats import rankdata
    ranks = np.column_stack([rankdata(x[:, i]) for i in range(3)] + [rankdata(y)])
    p = np.linalg.inv(np.corrcoef(ranks, rowvar=False))
    expected = [-p[i, 3] / math.sqrt(p[i, i] * p[3, 3]) for i in range(3)]
    assert got == pytest.approx(expected, abs=1e-10)


def test_sobol_indices_of_the_ishigami_function():
    a, b = 7.0, 0.1
    # analytic indices, source: Ishigami & Homma, Proc. ISUMA 1990, 398-403; Sobol' &
    # Levitan, Comput. Phys. Commun. 117 (1999) 52 (the variances below); Saltelli et al.,
    # Global Sensitivity Analysis: The Primer, Wiley 2008, sec. 4.4 (the same values)
    v1 = 0.5 * (1 + b * math.pi ** 4 / 5) ** 2
    v2 = a ** 2 / 8
    v13 = b ** 2 * math.pi ** 8 * (1 / 18 - 1 / 50)
    v = v1 + v2 + v13
    s_exact = [v1 / v, v2 / v, 0.0]
    st_exact = [(v1 + v13) / v, v2 / v, v13 / v]
    assert s_exact[0] == pytest.approx(0.3139, abs=1e-4)  # as printed in the Primer
    u = Distribution("uniform", lowest=-math.pi, highest=math.pi)
    spec = UncertaintySpec(tuple(UncertainInput(f"x{i}", u, "dimensionless", 0.0)
                                 for i in range(3)), cases=2 ** 12 * 5, sampling="sobol",
                           seed=5, sensitivity="variance")
    design = make_design(spec)
    x = design.values
    f = np.sin(x[:, 0]) + a * np.sin(x[:, 1]) ** 2 + b * x[:, 2] ** 4 * np.sin(x[:, 0])
    g = np.array(design.groups)
    fa, fb = f[g == "A"], f[g == "B"]
    fab = np.array([f[g == f"AB{i}"] for i in range(3)])
    s = sobol_indices(fa, fb, fab)
    assert s.first == pytest.approx(s_exact, abs=0.03)
    assert s.total == pytest.approx(st_exact, abs=0.03)
    for i in range(3):
        assert s.total_low[i] - 0.01 <= st_exact[i] <= s.total_high[i] + 0.01
    # the same estimators as scipy's (reference implementation of Saltelli 2010 / Jansen)
    from scipy.stats import sobol_indices as scipy_sobol
    ref = scipy_sobol(func={"f_A": fa[None, :], "f_B": fb[None, :], "f_AB": fab[:, None, :]},
                      n=design.base)
    assert s.first == pytest.approx(ref.first_order, abs=1e-12)
    assert s.total == pytest.approx(ref.total_order, abs=1e-12)


def test_the_copula_gives_the_rank_correlation_asked():
    u = np.random.default_rng(4).random((5000, 3))
    out = correlate(u, ("a", "b", "c"), [("a", "b", 0.6)])
    # source: Kruskal (1958): a Gaussian copula with normal correlation 2 sin(pi rho_S/6)
    # has rank correlation rho_S; the margins stay uniform
    assert spearman(out[:, 0], out[:, 1]) == pytest.approx(0.6, abs=0.03)
    assert np.array_equal(out[:, 2], u[:, 2])
    from scipy.stats import kstest
    assert kstest(out[:, 1], "uniform").pvalue > 0.001


# --------------------------------------------------------- whole studies

def test_blowdown_time_percentiles_follow_the_closed_form(blowdown):
    study = cvsim.uncertainty(blowdown, workers=2, progress=False)
    assert study.counts["stopped"] == 20 and len(study.used) == 20
    for row in study.table.rows:  # every case: t = c / Cd
        cd = row["links.vent.discharge_coefficient.si"]
        assert row["end_time"] == pytest.approx(blowdown_time(cd), rel=2e-3)
    # the depressuring limit is crossed where the closed-form time exceeds it
    times = [blowdown_time(r["links.vent.discharge_coefficient.si"]) for r in study.table.rows]
    assert all(abs(t / LIMIT_S - 1) > 2e-3 for t in times)  # no case too close to call
    chance = study.chance_of("tank.limit.depressure")
    assert chance.crossed == sum(t > LIMIT_S for t in times) and chance.cases == 20
    assert (chance.low, chance.high) == pytest.approx(
        proportion_interval(chance.crossed, 20, 0.95), rel=1e-12)
    df = study.to_dataframe()
    assert df.loc["end_time", "P50"] == study.percentile("end_time", 50)
    assert "only as good as the distributions" in df.attrs["caution"]
    # t is decreasing in Cd: its p-th percentile is c / Cd at the (1 - p)-th
    from scipy.stats import norm
    for p in (5, 50, 95):
        exact = blowdown_time(0.8 + 0.04 * norm.ppf(1 - p / 100))
        value, low, high, _ = study.spreads["end_time"].at(p)
        assert value == pytest.approx(exact, rel=0.02)   # a Latin hypercube of 20
        assert (low is None or low <= exact) and (high is None or exact <= high)


def test_same_seed_same_study_and_failed_cases_kept(blowdown):
    # run.end drawn from 5 s to 15 s against record_every 10 s: every case below
    # 10 s is refused by the reader and must stay a failed row
    args = dict(inputs={"run.end": "{distribution: uniform, lowest: 5 s, highest: 15 s}"},
                cases=6, seed=42, progress=False)
    one = cvsim.uncertainty(blowdown, workers=1, **args)
    two = cvsim.uncertainty(blowdown, workers=2, **args)
    assert np.array_equal(one.design.values, two.design.values)
    assert same_rows(one.table.rows, two.table.rows)
    other = cvsim.uncertainty(blowdown, workers=1, **{**args, "seed": 43})
    assert not np.array_equal(one.design.values, other.design.values)
    ends = one.design.values[:, one.design.keys.index("run.end")]
    short = ends < 10.0
    assert 0 < short.sum() < 6  # some of each
    failed = [r for r in one.table.rows if r["status"] == "failed"]
    assert len(failed) == short.sum()
    assert all("record_every" in r["error"] for r in failed)
    assert len(one.used) == 6 - short.sum()


@pytest.mark.slow
def test_an_uncertainty_study_on_a_dask_cluster_gives_the_local_table(blowdown):
    """The same seed on a Dask cluster (processes on this machine) gives the same
    design, the same rows and the same percentiles as local worker processes."""
    distributed = pytest.importorskip("distributed")
    args = dict(inputs={"links.vent.discharge_coefficient":
                        "{distribution: normal, standard_deviation: 0.04, highest: 1}"},
                cases=6, seed=7, progress=False)
    local = cvsim.uncertainty(blowdown, workers=2, **args)
    with distributed.LocalCluster(processes=True, n_workers=2, threads_per_worker=1,
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        remote = cvsim.uncertainty(blowdown, cluster=cluster.scheduler_address, **args)
    assert remote.table.ran_on.startswith("Dask cluster at tcp://127.0.0.1:")
    assert np.array_equal(local.design.values, remote.design.values)
    assert same_rows(local.table.rows, remote.table.rows)
    assert all(r["status"] != "failed" for r in remote.table.rows)
    for p in (5, 50, 95):
        assert remote.percentile("end_time", p) == local.percentile("end_time", p)


def same_rows(a, b) -> bool:
    """Rows equal value for value (NaN equal to NaN)."""
    def same(x, y):
        return x == y or (isinstance(x, float) and isinstance(y, float)
                          and math.isnan(x) and math.isnan(y))
    return len(a) == len(b) and all(r.keys() == q.keys() and all(same(r[k], q[k]) for k in r)
                                    for r, q in zip(a, b))


def test_a_distribution_the_key_refuses_must_be_truncated(blowdown):
    with pytest.raises(StudyError, match="truncate it with 'lowest' or 'highest'"):
        cvsim.uncertainty(blowdown, inputs={"links.vent.discharge_coefficient":
                                            "{distribution: normal, standard_deviation: 0.1}"},
                          progress=False)


def test_variance_indices_through_whole_runs(blowdown):
    # choked flow: the outside temperature cannot change the time; Cd does it all
    study = cvsim.uncertainty(
        blowdown, inputs={"reservoirs.outside.temperature":
                          "{distribution: uniform, lowest: 250 K, highest: 350 K}"},
        sensitivity="variance", cases=140, sampling="sobol", workers=2, progress=False)
    assert study.design.base == 32 and study.design.cases == 128  # N (d + 2), N = 2^5
    s = study.sobol["end_time"]
    i = study.design.keys.index("links.vent.discharge_coefficient")
    assert s.first[i] == pytest.approx(1.0, abs=0.15)   # sampling error of N = 32
    assert s.total[i] == pytest.approx(1.0, abs=0.15)
    assert abs(s.total[1 - i]) < 1e-4 and abs(s.first[1 - i]) < 1e-3


def test_command_line_writes_the_study_and_its_report(blowdown, tmp_path, capsys):
    out = tmp_path / "study"
    code = main(["uncertainty", str(blowdown), "--cases", "6", "--seed", "3", "--workers", "2",
                 "--percentile", "10", "--set", "run.record_every=20 s", "--out", str(out),
                 "--report", "--quiet",
                 "--uncertain", "vessels.tank.initial.temperature={distribution: triangular, "
                 "lowest: 280 K, highest: 320 K}"])
    assert code == 0
    for name in ("cases.csv", "percentiles.csv", "limits.csv", "sensitivity.csv",
                 "uncertainty.txt", "uncertainty.json", "convergence.png", "sensitivity.png",
                 "spread.png", "report.html"):
        assert (out / name).is_file(), name
    text = (out / "uncertainty.txt").read_text()
    assert "seed 3" in text and "P10" in text and "only as good as the distributions" in text
    html = (out / "report.html").read_text()
    for section in ('id="parameters"', 'id="uncertainty-percentiles"',
                    'id="uncertainty-limits"', 'id="uncertainty-sensitivity"'):
        assert section in html
    assert "only as good as the distributions" in html
    head = (out / "percentiles.csv").read_text().splitlines()
    assert any("Screening estimate" in line for line in head if line.startswith("#"))


def test_a_study_whose_every_case_fails_still_writes_its_tables(blowdown, tmp_path):
    out = tmp_path / "failed"
    code = main(["uncertainty", str(blowdown), "--cases", "4", "--seed", "1", "--workers", "1",
                 "--quiet", "--out", str(out), "--uncertain",
                 "run.end={distribution: uniform, lowest: 1 s, highest: 5 s}"])
    assert code == 1  # every case failed (record_every 10 s is longer than each run)
    text = (out / "uncertainty.txt").read_text()
    assert "4 failed" in text and "0 of 0 cases" in text and "100 % if they all crossed" in text
    assert (out / "cases.csv").read_text().count("failed") >= 4
    assert not (out / "convergence.png").exists()


# ------------------------------------------------- correlated inputs in whole studies

T0 = "vessels.tank.initial.temperature"
T_OUT = "reservoirs.outside.temperature"
TWO_TEMPERATURES = {T0: "{distribution: triangular, lowest: 280 K, most_likely: 300 K, "
                        "highest: 320 K}",
                    T_OUT: "{distribution: uniform, lowest: 250 K, highest: 350 K}"}


def spearman_bound(rho: float, n: int) -> tuple[float, float]:
    """Where a sample rank correlation of n pairs falls (3 standard errors) when the
    population's is rho: Fisher's z = atanh(r) with variance 1.06 / (n - 3)."""
    # source: Fieller, Hartley & Pearson, "Tests for rank correlation coefficients. I",
    # Biometrika 44 (1957), the variance 1.06/(n-3) of z for Spearman's r (from memory).
    # Random sampling; a Latin hypercube spreads less, so the bound is generous.
    half = 3.0 * math.sqrt(1.06 / (n - 3))
    return math.tanh(math.atanh(rho) - half), math.tanh(math.atanh(rho) + half)


def rank_correlation_of(x, y) -> float:
    from scipy.stats import spearmanr  # independent of cvsim.study.sensitivity
    return float(spearmanr(x, y).statistic)


def test_rank_correlations_of_the_scenario_reach_the_cases(tmp_path):
    # the pair correlated in the file's uncertainty section: the values each case ran
    # with keep the rank correlation asked, and each case really ran with its value
    text = BLOWDOWN.replace(
        "    links.vent.discharge_coefficient: {distribution: normal, standard_deviation: 0.04}",
        f"    {T0}: {TWO_TEMPERATURES[T0]}\n    {T_OUT}: {TWO_TEMPERATURES[T_OUT]}\n"
        f"  rank_correlations:\n    - {{inputs: [{T0}, {T_OUT}], value: 0.8}}"
    ).replace("cases: 20", "cases: 40")
    path = tmp_path / "correlated.yaml"
    path.write_text(text)
    study = cvsim.uncertainty(path, workers=1, progress=False)
    rows = [r for r in study.table.rows if r["status"] != "failed"]
    assert len(rows) == 40
    t0 = np.array([r[f"{T0}.si"] for r in rows])
    t_out = np.array([r[f"{T_OUT}.si"] for r in rows])
    low, high = spearman_bound(0.8, 40)
    assert low < rank_correlation_of(t0, t_out) < high
    assert low > 0.45   # an uncorrelated pair (about 0) could not pass
    # each case ran from its own initial temperature: the adiabatic perfect-gas vessel
    # expands isentropically, T = T0 (p/p0)^((k-1)/k), to the stop at 5 bar a
    # source: isentropic relation of a perfect gas (e.g. Anderson, Modern Compressible
    # Flow, 3rd ed., eq. 3.28)
    for r, start in zip(rows, t0):
        assert r["tank.min_temperature"] == pytest.approx(
            start * (5.0 / 50.0) ** ((K - 1.0) / K), rel=1e-4)
    assert study.spec.correlations and study.as_dict()["rank_correlations"]


def test_correlate_on_the_command_line_reaches_the_cases(blowdown, tmp_path):
    import csv
    out = tmp_path / "correlated"
    code = main(["uncertainty", str(blowdown), "--cases", "40", "--seed", "5", "--workers", "1",
                 "--quiet", "--out", str(out),
                 "--uncertain", f"{T0}={TWO_TEMPERATURES[T0]}",
                 "--uncertain", f"{T_OUT}={TWO_TEMPERATURES[T_OUT]}",
                 "--correlate", f"{T0},{T_OUT}=-0.7"])
    assert code == 0
    lines = [ln for ln in (out / "cases.csv").read_text().splitlines()
             if not ln.startswith("#")]
    rows = list(csv.DictReader(lines))
    assert len(rows) == 40
    t0 = [float(r[f"{T0}.si [K]"]) for r in rows]
    t_out = [float(r[f"{T_OUT}.si [K]"]) for r in rows]
    low, high = spearman_bound(-0.7, 40)
    assert low < rank_correlation_of(t0, t_out) < high < -0.3
    assert "rank correlation -0.7" in (out / "uncertainty.txt").read_text()


# ------------------------------------------------------ what the plots draw

def drawn_axes(monkeypatch, draw, *args):
    """Run a plot function of cvsim.study.uncertainty_plot and return, per visible
    panel, what it drew (read from the matplotlib Axes before the figure is cleared)."""
    from contextlib import contextmanager

    import cvsim.study.uncertainty_plot as up
    real, panels = up.figure, []

    @contextmanager
    def keep(*a, **k):
        with real(*a, **k) as fig:
            yield fig
            for ax in fig.axes:
                if not ax.get_visible():
                    continue
                panels.append({
                    "title": ax.get_title(loc="left"), "xlabel": ax.get_xlabel(),
                    "ylabel": ax.get_ylabel(), "xscale": ax.get_xscale(),
                    "xlim": ax.get_xlim(),
                    "lines": {ln.get_label(): (np.asarray(ln.get_xdata(), float),
                                               np.asarray(ln.get_ydata(), float))
                              for ln in ax.get_lines()},
                    "bands": len(ax.collections),
                    "bars": [(p.get_y() + p.get_height() / 2, p.get_width(),
                              p.get_facecolor()[3]) for p in ax.patches],
                    "yticks": [(t, lab.get_text()) for t, lab in
                               zip(ax.get_yticks(), ax.get_yticklabels())]})
    monkeypatch.setattr(up, "figure", keep)
    draw(*args)
    return panels


@pytest.fixture(scope="module")
def two_input_study(tmp_path_factory):
    # t = c / (Cd sqrt(T0)) for the choked perfect-gas vessel: both inputs drive the time
    path = tmp_path_factory.mktemp("plots") / "blowdown.yaml"
    path.write_text(BLOWDOWN)
    return cvsim.uncertainty(path, inputs={T0: TWO_TEMPERATURES[T0]}, cases=24, seed=8,
                             workers=1, progress=False)


def test_convergence_plot_draws_the_running_percentiles(two_input_study, monkeypatch,
                                                        tmp_path):
    from cvsim.study.uncertainty_plot import plot_convergence
    study = two_input_study
    panels = drawn_axes(monkeypatch, plot_convergence, study, tmp_path / "c.png")
    assert len(panels) == len(study.main) >= 1
    name = "tank.limit.depressure.actual"
    panel = panels[study.main.index(name)]
    assert panel["xlabel"] == "cases" and panel["xscale"] == "log" and panel["ylabel"] == "s"
    assert set(panel["lines"]) == {"P5", "P50", "P95"} and panel["bands"] == 3
    times = [study.table.rows[i][name] for i in study.used]
    for p in (5, 50, 95):
        xs, ys = panel["lines"][f"P{p:g}"]
        assert xs[-1] == 24 and ys[-1] == pytest.approx(study.percentile(name, p), rel=1e-12)
        # each point: the percentile of the first n cases (linear definition)
        # source: Hyndman & Fan (1996) definition 7, numpy's default
        for n, y in zip(xs, ys):
            assert y == pytest.approx(np.percentile(times[:int(n)], p), rel=1e-12)
        assert np.all(np.diff(xs) > 0)


def test_sensitivity_plot_draws_the_rank_correlations_largest_on_top(two_input_study,
                                                                     monkeypatch, tmp_path):
    from scipy.stats import rankdata

    from cvsim.study.uncertainty_plot import plot_sensitivity
    study = two_input_study
    panels = drawn_axes(monkeypatch, plot_sensitivity, study, tmp_path / "s.png")
    name = "tank.limit.depressure.actual"
    panel = next(p for p in panels if p["title"] == panels[study.main.index(name)]["title"])
    assert panel["xlabel"] == "correlation" and panel["xlim"] == (-1.05, 1.05)
    rows = [study.table.rows[i] for i in study.used]
    y = np.array([r[name] for r in rows])
    keys = study.design.keys
    x = np.array([[r[f"{k}.si"] for k in keys] for r in rows])
    rank = [rank_correlation_of(x[:, j], y) for j in range(2)]
    # partial rank correlation of two inputs from the three rank correlations
    # source: Kendall & Stuart, The Advanced Theory of Statistics, vol. 2, partial
    # correlation r_y1.2 = (r_y1 - r_y2 r_12) / sqrt((1 - r_y2^2)(1 - r_12^2)), on ranks
    # (PRCC: Saltelli et al., Sensitivity Analysis in Practice, 2004, sec. 1.2.4)
    r12 = float(np.corrcoef(rankdata(x[:, 0]), rankdata(x[:, 1]))[0, 1])
    partial = [(rank[j] - rank[1 - j] * r12) / math.sqrt((1 - rank[1 - j] ** 2) * (1 - r12 ** 2))
               for j in range(2)]
    filled = sorted((b for b in panel["bars"] if b[2] > 0), key=lambda b: b[0])
    outlined = sorted((b for b in panel["bars"] if b[2] == 0), key=lambda b: b[0])
    assert len(filled) == len(outlined) == 2
    labels = [lab for _, lab in sorted(panel["yticks"])]
    # bottom to top; a long key is shown by its last three parts
    order = [next(i for i, k in enumerate(keys) if k.endswith(lab)) for lab in labels]
    assert sorted(order) == [0, 1]
    assert abs(partial[order[-1]]) >= abs(partial[order[0]])   # largest on top
    for k, j in enumerate(order):
        assert filled[k][1] == pytest.approx(rank[j], abs=1e-12)
        assert outlined[k][1] == pytest.approx(partial[j], abs=1e-9)
    # both faster flow (Cd up) and a warmer gas (T0 up) shorten the time
    assert all(r < 0 for r in rank)


# --------------------------------------------------------- the demo study

DEMO = Path(__file__).resolve().parents[1] / "scenarios" / "nitrogen-receiver-uncertain.yaml"
DOCS = Path(__file__).resolve().parents[1] / "docs" / "studies.md"


def test_the_demo_study_runs_end_to_end_and_its_nominal_figure_is_the_documented_one(tmp_path):
    # the docs quote the nominal run's lowest metal temperature: it must be today's
    import re
    nominal = cvsim.run(DEMO)
    check = next(c for c in nominal.limits if c.key == "min_metal_temperature")
    metal = check.actual - 273.15
    quoted = re.search(r"the metal\s+reaches (−?[\d.]+) °C against", DOCS.read_text())
    assert quoted, "docs/studies.md no longer quotes the nominal metal temperature"
    assert metal == pytest.approx(float(quoted.group(1).replace("−", "-")), abs=0.05)
    # a few cases of the file as it stands, every output written
    out = tmp_path / "demo"
    code = main(["uncertainty", str(DEMO), "--cases", "12", "--workers", "2", "--quiet",
                 "--report", "--out", str(out)])
    assert code == 0
    for name in ("cases.csv", "percentiles.csv", "limits.csv", "sensitivity.csv",
                 "convergence.png", "sensitivity.png", "spread.png", "report.html"):
        assert (out / name).is_file(), name
    text = (out / "uncertainty.txt").read_text()
    assert "seed 20240611" in text and "0 failed" in text and "12 stopped" in text
    assert "rank correlation +0.9 between vessels.receiver.initial.temperature" in text

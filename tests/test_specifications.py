"""Uncertain-input specifications -> distributions of the deviation, and [correlations].

Every conversion is checked against the formula of the clause named beside it
(JCGM 100:2008 "GUM", JCGM 101:2008 "Supplement 1") and against scipy.stats'
own ``std()``/``mean()`` of the frozen distribution simunc builds; where it
matters, also against an independent calculation written in the test
(quadrature of the density, a hand-derived eigenvalue).  Neither JCGM document
was at hand: every clause number and table value is recalled and marked
"(from memory of ...)".  The demo study (invented data) only supplies a set
point; no check value comes from it.  The correlation and bad-input checks are
on simunc's own contract (README, "[correlations]" and "[[uncertain]]").
"""

from __future__ import annotations

import copy
import math

import numpy as np
import pytest
from scipy import integrate, stats

from simunc.errors import StudyError
from simunc.similitude.inputs import build_inputs
from simunc.similitude.setpoint import solve
from simunc.study.readers import parse_study
from simunc.uncertainty.distributions import make_distribution, truncated_normal_std
from simunc.uncertainty.sampling import map_to_inputs, unit_samples

P0 = "stagnation_pressure_indication"
PS = "static_pressure_indication"
T0 = "stagnation_temperature_indication"


@pytest.fixture(scope="module")
def base():
    import tomllib

    from .conftest import DEMO

    return tomllib.loads(DEMO.read_text())


@pytest.fixture(scope="module")
def setpoint(base):
    # The set point does not depend on the [[uncertain]] tables: solve it once.
    return solve(parse_study(copy.deepcopy(base)))


def study_with(base, inputs, correlations=None):
    data = copy.deepcopy(base)
    data["uncertain"] = [dict({"name": f"in{i}"}, **d) for i, d in enumerate(inputs)]
    for key in ("correlations", "requirement", "sweep", "sensitivity"):
        data.pop(key, None)  # the demo's own tables name its own inputs
    if correlations is not None:
        data["correlations"] = correlations
    return parse_study(data)


def one(base, setpoint, **spec):
    (inp,) = build_inputs(study_with(base, [spec]).inputs, setpoint)
    u = inp.standard_uncertainty
    assert float(inp.distribution.mean()) == pytest.approx(0.0, abs=1e-12 * u)
    # scipy.stats' own standard deviation of the frozen distribution agrees with simunc's u.
    assert float(inp.distribution.std()) == pytest.approx(inp.standard_uncertainty, rel=1e-12)
    return inp


# --- Type B: standard and expanded uncertainties --------------------------------------------

def test_standard_uncertainty_is_the_standard_deviation(base, setpoint):
    # u is the standard deviation of the assigned distribution (from memory of JCGM 100:2008
    # 2.3.1 and 3.3.5).
    inp = one(base, setpoint, perturbs=PS, standard_uncertainty="30 Pa")
    assert inp.kind == "normal" and inp.standard_uncertainty == 30.0
    assert inp.dof == math.inf and inp.component == "systematic"


def test_expanded_with_coverage_factor(base, setpoint):
    # u = U / k (from memory of JCGM 100:2008 4.3.3).  U in % of the reading (p0 at the set point).
    inp = one(base, setpoint, perturbs=P0, expanded_uncertainty="0.1 %", coverage_factor=2)
    p0 = setpoint.outputs["stagnation_pressure"]
    assert inp.standard_uncertainty == pytest.approx(0.001 * p0 / 2.0, rel=1e-14)


def _t_quantile_by_integration(p: float, nu: float) -> float:
    # Independent calculation: the Student t density written out, integrated by quadrature and
    # inverted by bisection (no scipy t-distribution code involved).
    c = math.exp(math.lgamma((nu + 1) / 2) - math.lgamma(nu / 2)) / math.sqrt(nu * math.pi)

    def central(x):
        return 2.0 * integrate.quad(lambda t: c * (1 + t * t / nu) ** (-(nu + 1) / 2), 0.0, x)[0]

    lo, hi = 0.0, 50.0
    for _ in range(100):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if central(mid) < p else (lo, mid)
    return 0.5 * (lo + hi)


def test_expanded_with_coverage_probability_and_dof(base, setpoint):
    # k = t_{(1+p)/2, nu} (from memory of JCGM 100:2008 G.3.4); t_95(10) = 2.23 (from memory
    # of JCGM 100:2008 Table G.2).  The distribution is the scaled and shifted t_nu(0, (U/k)^2)
    # (from memory of JCGM 101:2008 6.4.9.7, certificate with U_p and nu_eff), whose variance
    # is (U/k)^2 nu / (nu - 2) (from memory of JCGM 101:2008 6.4.9.4).
    inp = one(base, setpoint, perturbs=PS, expanded_uncertainty="100 Pa",
              coverage_probability="95 %", degrees_of_freedom=10)
    k = inp.spec.coverage_factor
    assert round(k, 2) == 2.23
    assert k == pytest.approx(_t_quantile_by_integration(0.95, 10.0), abs=1e-9)
    assert inp.kind == "t" and inp.dof == 10.0
    assert inp.gum_standard_uncertainty == pytest.approx(100.0 / k, rel=1e-14)
    assert inp.standard_uncertainty == pytest.approx(100.0 / k * math.sqrt(10.0 / 8.0), rel=1e-14)
    # The stated coverage interval is the distribution's own: P(|e| <= U) = 95 %.
    d = inp.distribution
    assert float(d.cdf(100.0) - d.cdf(-100.0)) == pytest.approx(0.95, abs=1e-12)


@pytest.mark.parametrize("p,k", [("95.45 %", 2.00), ("99 %", 2.576), (0.6827, 1.00)])
def test_expanded_with_infinite_dof_is_normal(base, setpoint, p, k):
    # nu = inf: k = 2.000 for p = 95.45 %, 2.576 for 99 %, 1 for 68.27 % (from memory of
    # JCGM 100:2008 Tables G.1 and G.2).
    inp = one(base, setpoint, perturbs=PS, expanded_uncertainty="100 Pa",
              coverage_probability=p, degrees_of_freedom="inf")
    assert inp.kind == "normal" and inp.dof == math.inf
    assert inp.spec.coverage_factor == pytest.approx(k, abs=5e-4 if k == 2.576 else 2e-4)
    assert inp.standard_uncertainty == pytest.approx(100.0 / inp.spec.coverage_factor, rel=1e-14)


def test_expanded_with_coverage_factor_and_dof_is_t(base, setpoint):
    # A certificate stating k and nu_eff: t_nu(0, (U/k)^2) as above (from memory of
    # JCGM 101:2008 6.4.9).
    inp = one(base, setpoint, perturbs=PS, expanded_uncertainty="100 Pa", coverage_factor=2.28,
              degrees_of_freedom=10)
    assert inp.standard_uncertainty == pytest.approx(100.0 / 2.28 * math.sqrt(1.25), rel=1e-14)


def test_expanded_rectangular_with_probability(base, setpoint):
    # Rectangular +-a: P(|e| <= x) = x / a, so the 100 % interval is the limits: U = a and
    # u = a / sqrt(3) (from memory of JCGM 100:2008 4.3.7); for p = 90 %, U = 0.9 a.
    inp = one(base, setpoint, perturbs=PS, distribution="rectangular",
              expanded_uncertainty="90 Pa", coverage_probability="90 %")
    assert inp.half_width == pytest.approx(100.0, rel=1e-12)
    assert inp.standard_uncertainty == pytest.approx(100.0 / math.sqrt(3.0), rel=1e-12)


# --- Limits ------------------------------------------------------------------------------------

def test_rectangular(base, setpoint):
    # Limits +-a, u = a / sqrt(3) (from memory of JCGM 100:2008 4.3.7).
    inp = one(base, setpoint, perturbs=PS, distribution="rectangular", half_width="12 Pa")
    assert inp.standard_uncertainty == pytest.approx(12.0 / math.sqrt(3.0), rel=1e-15)
    assert inp.distribution.support() == (-12.0, 12.0) and inp.half_width == 12.0


def test_half_width_defaults_to_rectangular(base, setpoint):
    inp = one(base, setpoint, perturbs=PS, half_width="12 Pa")
    assert inp.kind == "rectangular"


def test_triangular(base, setpoint):
    # Symmetric triangular on +-a, u = a / sqrt(6) (from memory of JCGM 100:2008 4.3.9).
    inp = one(base, setpoint, perturbs=T0, distribution="triangular", half_width="0.6 K")
    assert inp.standard_uncertainty == pytest.approx(0.6 / math.sqrt(6.0), rel=1e-15)


@pytest.mark.parametrize("beta", [0.0, 0.3, 0.5, 1.0])
def test_trapezoidal(base, setpoint, beta):
    # From memory of JCGM 101:2008 6.4.4 and JCGM 100:2008 4.3.9: bottom half-width a, top beta a,
    # u^2 = a^2 (1 + beta^2) / 6; beta = 0 is triangular (a/sqrt 6), beta = 1 rectangular
    # (a/sqrt 3).
    a = 2.0
    inp = one(base, setpoint, perturbs=T0, distribution="trapezoidal", half_width="2 K", beta=beta)
    assert inp.kind == "trapezoidal" and inp.half_width == pytest.approx(a)
    assert inp.standard_uncertainty == pytest.approx(a * math.sqrt((1 + beta**2) / 6.0), rel=1e-14)
    # Shape (independent): the density is flat at height 1 / (a (1 + beta)) on the top |x| <= beta a
    # (unit area of a trapezoid with parallel sides 2a and 2 beta a) and zero beyond +-a.
    d = inp.distribution
    top = 1.0 / (a * (1.0 + beta))
    assert float(d.pdf(0.0)) == pytest.approx(top, rel=1e-12)
    if beta > 0:
        assert float(d.pdf(0.999 * beta * a)) == pytest.approx(top, rel=1e-12)
    assert float(d.pdf(1.001 * a)) == 0.0
    if beta == 0.0:
        assert inp.standard_uncertainty == pytest.approx(a / math.sqrt(6.0), rel=1e-14)
    if beta == 1.0:
        assert inp.standard_uncertainty == pytest.approx(a / math.sqrt(3.0), rel=1e-14)


def test_arcsine(base, setpoint):
    # U-shaped on [-a, a], variance a^2 / 2, so u = a / sqrt(2) (from memory of JCGM 101:2008
    # 6.4.6);
    # e.g. a controller cycling sinusoidally about its set point: e = a sin(phase).
    inp = one(base, setpoint, perturbs="stagnation_temperature_control", distribution="arcsine",
              half_width="0.8 K", component="random")
    assert inp.standard_uncertainty == pytest.approx(0.8 / math.sqrt(2.0), rel=1e-14)
    assert inp.component == "random" and inp.half_width == pytest.approx(0.8)
    # Independent: a sine of uniformly distributed phase has this distribution (mean square a^2/2).
    phase = np.linspace(0.0, 2.0 * np.pi, 200_001)[:-1]
    assert float(np.sqrt(np.mean((0.8 * np.sin(phase)) ** 2))) == pytest.approx(
        inp.standard_uncertainty, rel=1e-12)


def test_resolution_half_digit(base, setpoint):
    # From memory of JCGM 100:2008 F.2.2.1: a digital resolution delta gives limits +-delta/2,
    # rectangular distribution, u = delta / sqrt(12) = 0.29 delta.
    inp = one(base, setpoint, perturbs=PS, resolution="1 Pa")
    assert inp.kind == "rectangular" and inp.half_width == pytest.approx(0.5)
    assert inp.standard_uncertainty == pytest.approx(1.0 / math.sqrt(12.0), rel=1e-14)
    assert round(inp.standard_uncertainty, 2) == 0.29


def test_accuracy_of_reading_and_full_scale(base, setpoint):
    # Datasheet limits +-(0.05 % of reading + 0.02 % of the 10 bar range), rectangular
    # (from memory of JCGM 100:2008 4.3.7): a = 0.0005 p0 + 0.0002 * 1e6 Pa, u = a / sqrt(3).
    inp = one(base, setpoint, perturbs=P0,
              accuracy={"reading": "0.05 %", "full_scale": "0.02 %", "range": "10 bar"})
    a = 0.0005 * setpoint.outputs["stagnation_pressure"] + 0.0002 * 1.0e6
    assert inp.half_width == pytest.approx(a, rel=1e-13)
    assert inp.standard_uncertainty == pytest.approx(a / math.sqrt(3.0), rel=1e-13)
    assert "0.05 % of reading" in inp.spec.text and "10 bar" in inp.spec.text


def test_accuracy_range_pair_absolute_term_and_distribution(base, setpoint):
    # Range [-1 bar, 1 bar] is a 2 bar span; an absolute term adds; triangular u = a / sqrt(6)
    # (from memory of JCGM 100:2008 4.3.9).
    inp = one(base, setpoint, perturbs=PS, distribution="triangular",
              accuracy={"full_scale": "0.1 %", "range": ["-1 bar", "1 bar"], "absolute": "5 Pa"})
    a = 0.001 * 2.0e5 + 5.0
    assert inp.standard_uncertainty == pytest.approx(a / math.sqrt(6.0), rel=1e-13)


def test_truncated_normal(base, setpoint):
    # N(0, sigma^2) truncated to +-a: u^2 = sigma^2 (1 - 2 c phi(c) / (2 Phi(c) - 1)), c = a/sigma
    # (from memory of Johnson, Kotz & Balakrishnan, Continuous Univariate Distributions 1, 2nd
    # ed. 1994, 13.10.1), checked here by quadrature of x^2 phi(x) over [-a, a].
    sigma, a = 0.2, 0.3
    inp = one(base, setpoint, perturbs=T0, distribution="truncated_normal",
              standard_uncertainty="0.2 K", half_width="0.3 K")
    phi = stats.norm(0.0, sigma).pdf
    mass = integrate.quad(phi, -a, a)[0]
    var = integrate.quad(lambda x: x * x * phi(x), -a, a, epsabs=1e-15)[0] / mass
    assert inp.standard_uncertainty == pytest.approx(math.sqrt(var), rel=1e-10)
    assert inp.half_width == pytest.approx(a) and inp.standard_uncertainty < sigma
    assert truncated_normal_std(1.0, 40.0) == pytest.approx(1.0, rel=1e-15)  # no truncation


def test_lognormal_mean_zero(base, setpoint):
    # Multiplicative factor F with E[F] = 1, u(F) = u_r, ln F normal; deviation e = R (F - 1).
    # Lognormal moments (from memory of the standard result): E[F] = exp(mu + s^2/2),
    # Var F = (exp(s^2) - 1) exp(2 mu + s^2); checked by quadrature of the density below.
    inp = one(base, setpoint, perturbs=P0, distribution="lognormal", standard_uncertainty="1 %")
    r = setpoint.outputs["stagnation_pressure"]
    assert inp.standard_uncertainty == pytest.approx(0.01 * r, rel=1e-14)
    s2 = math.log(1.0 + 0.01**2)
    mu = -0.5 * s2

    def dens(f):
        return math.exp(-(math.log(f) - mu) ** 2 / (2 * s2)) / (f * math.sqrt(2 * math.pi * s2))

    m1 = integrate.quad(lambda f: f * dens(f), 0.8, 1.25, epsabs=1e-14)[0]
    m2 = integrate.quad(lambda f: (f - 1.0) ** 2 * dens(f), 0.8, 1.25, epsabs=1e-16)[0]
    assert m1 == pytest.approx(1.0, abs=1e-12) and math.sqrt(m2) == pytest.approx(0.01, rel=1e-9)
    assert inp.distribution.support()[0] == pytest.approx(-r)  # the true value stays positive


def test_lognormal_of_a_fraction_target(base, setpoint):
    # viscosity_model's size is itself a fraction: e = F - 1 with u(F) = 2 %.
    inp = one(base, setpoint, perturbs="viscosity_model", distribution="lognormal",
              standard_uncertainty="2 %")
    assert inp.standard_uncertainty == pytest.approx(0.02, rel=1e-14)


# --- Type A --------------------------------------------------------------------------------

READINGS_C = ["36.92 degC", "37.05 degC", "36.98 degC", "37.11 degC", "36.87 degC", "37.02 degC"]


def test_type_a_readings(base, setpoint):
    # s of the readings (n - 1 in the denominator), s(q_bar) = s/sqrt(n) (from memory of JCGM
    # 100:2008 4.2.2-4.2.3); t_{n-1}(x_bar, s^2/n) with variance (n - 1)/(n - 3) s^2/n (from
    # memory of JCGM 101:2008 6.4.9.2, 6.4.9.4).  Readings in degC: s is the same in K.
    inp = one(base, setpoint, perturbs=T0, readings=READINGS_C)
    x = np.array([float(v.split()[0]) for v in READINGS_C])
    n, s = len(x), float(np.std(x, ddof=1))
    assert inp.kind == "t" and inp.dof == n - 1 and inp.spec.count == n
    assert inp.gum_standard_uncertainty == pytest.approx(s / math.sqrt(n), rel=1e-10)
    assert inp.standard_uncertainty == pytest.approx(
        s / math.sqrt(n) * math.sqrt((n - 1) / (n - 3)), rel=1e-10)


def test_type_a_readings_plain_numbers(base, setpoint):
    # Plain numbers are SI (Pa here); same formulas as above.
    vals = [499390.0, 499395.0, 499393.0, 499388.0, 499391.0]
    inp = one(base, setpoint, perturbs=PS, readings=vals)
    s = float(np.std(vals, ddof=1))
    assert inp.standard_uncertainty == pytest.approx(s / math.sqrt(5) * math.sqrt(4 / 2), rel=1e-12)


def test_type_a_summary(base, setpoint):
    inp = one(base, setpoint, perturbs=PS, component="random",
              type_a={"mean": "4.99 bar", "standard_deviation": "3 Pa", "count": 10})
    assert inp.dof == 9 and inp.component == "random"
    assert inp.standard_uncertainty == pytest.approx(3.0 / math.sqrt(10) * math.sqrt(9 / 7),
                                                     rel=1e-14)


# --- Shared error on several quantities ------------------------------------------------------

def test_list_perturbs_relative(base, setpoint):
    # 0.02 % of each reading: the factor of the second target is the ratio of the readings.
    inp = one(base, setpoint, perturbs=[P0, PS], standard_uncertainty="0.02 %")
    p0, ps = setpoint.outputs["stagnation_pressure"], setpoint.outputs["static_pressure"]
    assert inp.target == P0 and inp.targets == (P0, PS)
    (t1, f1), (t2, f2) = inp.effects
    assert (t1, f1) == (P0, 1.0) and t2 == PS and f2 == pytest.approx(ps / p0, rel=1e-14)
    assert inp.standard_uncertainty == pytest.approx(0.0002 * p0, rel=1e-14)
    assert f2 * inp.standard_uncertainty == pytest.approx(0.0002 * ps, rel=1e-14)
    # Drawn values: the second target's deviation is f2 times the first's, fully correlated.
    z = map_to_inputs(unit_samples(1000, 1, 3), [inp.distribution])[:, 0]
    assert np.corrcoef(z, f2 * z)[0, 1] == pytest.approx(1.0)


def test_list_perturbs_absolute_common_dimension(base, setpoint):
    inp = one(base, setpoint, perturbs=[P0, PS], half_width="20 Pa")
    assert [f for _, f in inp.effects] == [1.0, 1.0] and inp.half_width == pytest.approx(20.0)


def test_list_perturbs_mixed_dimensions_in_percent(base, setpoint):
    inp = one(base, setpoint, perturbs=[PS, "density_model"], standard_uncertainty="0.1 %")
    ps = setpoint.outputs["static_pressure"]
    assert inp.effects[1][0] == "density_model"
    assert inp.effects[1][1] * inp.standard_uncertainty == pytest.approx(0.001, rel=1e-13)
    assert inp.standard_uncertainty == pytest.approx(0.001 * ps, rel=1e-14)


# --- Sampling the new families: sample moments within Monte Carlo error ------------------------

def test_sampled_moments(base, setpoint):
    specs = [dict(perturbs=T0, distribution="trapezoidal", half_width="1 K", beta=0.4),
             dict(perturbs=T0, distribution="arcsine", half_width="1 K"),
             dict(perturbs=T0, distribution="truncated_normal", standard_uncertainty="1 K",
                  half_width="1.5 K"),
             dict(perturbs=P0, distribution="lognormal", standard_uncertainty="5 %"),
             dict(perturbs=T0, type_a={"standard_deviation": "1 K", "count": 8})]
    inputs = build_inputs(study_with(base, specs).inputs, setpoint)
    n = 400_000
    x = map_to_inputs(unit_samples(n, len(inputs), 11), [i.distribution for i in inputs])
    for j, inp in enumerate(inputs):
        u = inp.standard_uncertainty
        # Standard error of the mean u/sqrt(n); of the variance sqrt((m4 - u^4) / n), with m4 the
        # distribution's fourth central moment (scipy's kurtosis): 5 standard errors allowed.
        m4 = (float(inp.distribution.stats(moments="k")) + 3.0) * u**4
        assert abs(x[:, j].mean()) < 5 * u / math.sqrt(n), inp.name
        assert abs(x[:, j].var() - u * u) < 5 * math.sqrt((m4 - u**4) / n), inp.name


# --- make_distribution ---------------------------------------------------------------------

@pytest.mark.parametrize("kind,kw", [("normal", {}), ("rectangular", {}), ("triangular", {}),
                                     ("trapezoidal", {"beta": 0.25}), ("arcsine", {}),
                                     ("t", {"dof": 4.5}), ("lognormal", {})])
def test_make_distribution_mean_zero_std_u(kind, kw):
    d = make_distribution(kind, 0.7 if kind != "lognormal" else 0.07, **kw)
    assert float(d.mean()) == pytest.approx(0.0, abs=1e-14)
    assert float(d.std()) == pytest.approx(0.7 if kind != "lognormal" else 0.07, rel=1e-12)


# --- Correlations ----------------------------------------------------------------------------

THREE = [dict(perturbs=P0, standard_uncertainty="10 Pa"),
         dict(perturbs=PS, standard_uncertainty="10 Pa"),
         dict(perturbs=T0, standard_uncertainty="0.1 K")]


def test_no_correlations_is_none(base):
    assert study_with(base, THREE).correlation is None


def test_correlation_matrix(base):
    st = study_with(base, THREE, {"pairs": [["in2", "in0", 0.3], ["in0", "in1", -0.5]]})
    names, r = st.correlation.names, st.correlation.matrix
    assert names == ("in0", "in1", "in2")
    np.testing.assert_array_equal(r, [[1.0, -0.5, 0.3], [-0.5, 1.0, 0.0], [0.3, 0.0, 1.0]])
    assert not r.flags.writeable


def _error(base, inputs, correlations=None) -> StudyError:
    with pytest.raises(StudyError) as info:
        study_with(base, inputs, correlations)
    msg = str(info.value)
    assert "\n" not in msg and "expected" in msg
    return info.value


def test_non_positive_definite_rejected(base):
    # r01 = r02 = 0.9, r12 = -0.9: by hand, eigenvector (0, 1, -1) gives 1.9 and the block on
    # (1, 0, 0), (0, 1, 1) [[1, 1.8], [0.9, 0.1]] gives (1.1 +- 2.7) / 2 = 1.9 and -0.8.
    err = _error(base, THREE, {"pairs": [["in0", "in1", 0.9], ["in0", "in2", 0.9],
                                         ["in1", "in2", -0.9]]})
    assert err.key == "correlations" and "-0.8" in str(err) and "positive-definite" in str(err)


@pytest.mark.parametrize("pairs,words", [
    ([["inO", "in1", 0.5]], ["correlations.pairs[0]", "'inO'", "did you mean"]),
    ([["in0", "in1", 1.2]], ["correlations.pairs[0]", "-1 to 1"]),
    ([["in0", "in1", 0.2], ["in1", "in0", 0.3]], ["correlations.pairs[1]", "each pair once"]),
    ([["in0", "in0", 0.2]], ["correlations.pairs[0]", "two different inputs"]),
    ([["in0", "in1"]], ["correlations.pairs[0]", "correlation coefficient"]),
    ([["in0", "in1", "0.5"]], ["correlations.pairs[0]", "plain number"]),
    ([["in0", "in1", 1.0]], ["correlations", "positive-definite", "perturbs"]),
], ids=["unknown name", "|r| > 1", "pair twice", "self", "two entries", "string r", "r = 1"])
def test_correlation_rejections(base, pairs, words):
    msg = str(_error(base, THREE, {"pairs": pairs}))
    for w in words:
        assert w in msg, msg


def test_correlations_unknown_key(base):
    assert "correlations.pair" in str(_error(base, THREE, {"pair": []}))


# --- Bad specifications: one line, naming the key ----------------------------------------------

BAD = [
    ("two sizes", dict(perturbs=PS, standard_uncertainty="1 Pa", half_width="2 Pa"),
     "uncertain[0].half_width", "only one of"),
    ("no size", dict(perturbs=PS), "uncertain[0].standard_uncertainty", "one of"),
    ("negative size", dict(perturbs=PS, standard_uncertainty="-1 Pa"),
     "uncertain[0].standard_uncertainty", "greater than zero"),
    ("unknown distribution", dict(perturbs=PS, distribution="cauchy", standard_uncertainty="1 Pa"),
     "uncertain[0].distribution", "one of"),
    ("normal with limits", dict(perturbs=PS, distribution="normal", half_width="1 Pa"),
     "uncertain[0].distribution", "'rectangular'"),
    ("beta outside [0, 1]", dict(perturbs=PS, distribution="trapezoidal", half_width="1 Pa",
                                 beta=1.5), "uncertain[0].beta", "from 0"),
    ("trapezoid without beta", dict(perturbs=PS, distribution="trapezoidal", half_width="1 Pa"),
     "uncertain[0].beta", "missing"),
    ("beta with rectangular", dict(perturbs=PS, half_width="1 Pa", beta=0.5),
     "uncertain[0].beta", "trapezoidal"),
    ("count < 4", dict(perturbs=PS, type_a={"standard_deviation": "1 Pa", "count": 3}),
     "uncertain[0].type_a.count", "at least 4"),
    ("count not whole", dict(perturbs=PS, type_a={"standard_deviation": "1 Pa", "count": 4.5}),
     "uncertain[0].type_a.count", "whole number"),
    ("three readings", dict(perturbs=PS, readings=[1.0, 2.0, 3.0]), "uncertain[0].readings",
     "at least 4"),
    ("equal readings", dict(perturbs=PS, readings=[1.0, 1.0, 1.0, 1.0]), "uncertain[0].readings",
     "not all equal"),
    ("reading of wrong unit", dict(perturbs=PS, readings=["1 Pa", "2 Pa", "3 K", "4 Pa"]),
     "uncertain[0].readings[2]", "pressure"),
    ("readings with rectangular", dict(perturbs=PS, distribution="rectangular",
                                       readings=[1.0, 2.0, 3.0, 4.0]),
     "uncertain[0].distribution", "t-distribution"),
    ("accuracy without range", dict(perturbs=P0, accuracy={"reading": "0.05 %",
                                                           "full_scale": "0.02 %"}),
     "uncertain[0].accuracy.range", "missing"),
    ("range without full_scale", dict(perturbs=P0, accuracy={"reading": "0.05 %",
                                                             "range": "10 bar"}),
     "uncertain[0].accuracy.range", "only with full_scale"),
    ("accuracy all zero", dict(perturbs=P0, accuracy={"reading": "0 %"}),
     "uncertain[0].accuracy.reading", "at least one term"),
    ("accuracy negative", dict(perturbs=P0, accuracy={"reading": "-0.05 %"}),
     "uncertain[0].accuracy.reading", "zero or more"),
    ("accuracy unknown key", dict(perturbs=P0, accuracy={"readings": "0.05 %"}),
     "uncertain[0].accuracy.readings", "did you mean"),
    ("accuracy of a fraction", dict(perturbs="viscosity_model", accuracy={"reading": "1 %"}),
     "uncertain[0].accuracy", "with a reading"),
    ("resolution in %", dict(perturbs=PS, resolution="0.01 %"), "uncertain[0].resolution",
     "pressure"),
    ("resolution triangular", dict(perturbs=PS, distribution="triangular", resolution="1 Pa"),
     "uncertain[0].distribution", "F.2.2.1"),
    ("coverage factor with half-width", dict(perturbs=PS, half_width="1 Pa", coverage_factor=2),
     "uncertain[0].coverage_factor", "only with expanded_uncertainty"),
    ("k and p together", dict(perturbs=PS, expanded_uncertainty="1 Pa", coverage_factor=2,
                              coverage_probability=0.95), "uncertain[0].coverage_probability",
     "only one of"),
    ("expanded without k or p", dict(perturbs=PS, expanded_uncertainty="1 Pa"),
     "uncertain[0].coverage_factor", "one of"),
    ("p without dof", dict(perturbs=PS, expanded_uncertainty="1 Pa", coverage_probability=0.95),
     "uncertain[0].degrees_of_freedom", "missing"),
    ("dof <= 2", dict(perturbs=PS, expanded_uncertainty="1 Pa", coverage_probability=0.95,
                      degrees_of_freedom=2), "uncertain[0].degrees_of_freedom", "above 2"),
    ("dof with rectangular", dict(perturbs=PS, distribution="rectangular",
                                  expanded_uncertainty="1 Pa", coverage_factor=1.65,
                                  degrees_of_freedom=9), "uncertain[0].degrees_of_freedom",
     "only with a normal"),
    ("p = 1 for a normal", dict(perturbs=PS, expanded_uncertainty="1 Pa", coverage_probability=1,
                                degrees_of_freedom="inf"), "uncertain[0].coverage_probability",
     "below 1"),
    ("lognormal absolute", dict(perturbs=PS, distribution="lognormal",
                                standard_uncertainty="10 Pa"), "uncertain[0].standard_uncertainty",
     "relative"),
    ("lognormal with limits", dict(perturbs=PS, distribution="lognormal", half_width="1 %"),
     "uncertain[0].distribution", "with half_width"),
    ("truncated normal without limit", dict(perturbs=PS, distribution="truncated_normal",
                                            standard_uncertainty="1 Pa"),
     "uncertain[0].half_width", "missing"),
    ("truncated normal with k", dict(perturbs=PS, distribution="truncated_normal",
                                     standard_uncertainty="1 Pa", half_width="2 Pa",
                                     expanded_uncertainty="2 Pa"),
     "uncertain[0].expanded_uncertainty", "truncated normal"),
    ("unknown component", dict(perturbs=PS, standard_uncertainty="1 Pa", component="drift"),
     "uncertain[0].component", "'systematic'"),
    ("unknown target in list", dict(perturbs=[P0, "static_presure_indication"],
                                    standard_uncertainty="1 %"), "uncertain[0].perturbs[1]",
     "did you mean"),
    ("target twice", dict(perturbs=[P0, P0], standard_uncertainty="1 %"),
     "uncertain[0].perturbs[1]", "each quantity once"),
    ("empty list", dict(perturbs=[], standard_uncertainty="1 %"), "uncertain[0].perturbs",
     "non-empty"),
    ("liquid target in a gas facility", dict(perturbs=[P0, "speed_control"],
                                             standard_uncertainty="1 %"),
     "uncertain[0].perturbs[1]", "gas facility"),
    ("absolute size, two dimensions", dict(perturbs=[P0, T0], standard_uncertainty="1 Pa"),
     "uncertain[0].standard_uncertainty", "different dimensions"),
    ("stated with a list", dict(perturbs=["viscosity_model", "density_model"],
                                standard_uncertainty="stated"),
     "uncertain[0].standard_uncertainty", "one property"),
]


@pytest.mark.parametrize("desc,spec,key,words", BAD, ids=[b[0] for b in BAD])
def test_bad_specification(base, desc, spec, key, words):
    err = _error(base, [spec])
    assert err.key == key, str(err)
    assert words in str(err), str(err)


def test_bad_specification_through_cli(demo_text, write_study, capsys):
    # The command line prints the same one-line message and exits 2.
    from simunc.cli import main

    text = demo_text + '\n[[uncertain]]\nname = "x"\nperturbs = "static_pressure_indication"\n' \
        'distribution = "trapezoidal"\nhalf_width = "1 Pa"\nbeta = -0.1\n'
    assert main(["check", str(write_study(text))]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "uncertain[9].beta" in err

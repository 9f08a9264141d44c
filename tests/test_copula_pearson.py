"""The written correlation coefficient is a Pearson coefficient of the inputs (JCGM 100:2008
5.2.2): the Gaussian copula must reproduce it for any pair of marginals, not apply it to the
normal scores.

Checks: the realised Pearson r of the sampled trials against the written r, within the Monte
Carlo standard error of a sample correlation, for normal, rectangular, triangular, arcsine and
lognormal pairs; u of a difference against the law of propagation (JCGM 100:2008 eq. 13); the
closed form for two rectangular inputs; and the refusal of an r two lognormal marginals cannot
reach (the bound from lognormal moments).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from simunc.uncertainty.correlation import Correlation
from simunc.uncertainty.sampling import InputSampler, normal_score_correlation

N = 400_000

MARGINALS = {
    "normal": stats.norm(0.0, 1.0),
    "rectangular": stats.uniform(-1.0, 2.0),
    "triangular": stats.triang(0.5, loc=-1.0, scale=2.0),
    "arcsine": stats.arcsine(loc=-1.0, scale=2.0),
    "lognormal": stats.lognorm(0.5, loc=-1.0, scale=math.exp(-0.125)),   # mean 0, like simunc's
}


def _realised(a, b, r: float, seed: int = 5) -> tuple[float, np.ndarray]:
    pearson = np.array([[1.0, r], [r, 1.0]])
    rho = normal_score_correlation(pearson, [a, b])
    x = InputSampler([a, b], seed, "random", rho, block_size=N).draw(0, [N])
    return float(np.corrcoef(x[:, 0], x[:, 1])[0, 1]), x


@pytest.mark.parametrize("first", sorted(MARGINALS))
@pytest.mark.parametrize("second", sorted(MARGINALS))
@pytest.mark.parametrize("r", [0.8, -0.5])
def test_realised_pearson_equals_the_written_r(first, second, r):
    a, b = MARGINALS[first], MARGINALS[second]
    lo = -1.0 if first != "lognormal" or second != "lognormal" else -0.5
    if r < lo:
        pytest.skip("out of reach")
    got, _ = _realised(a, b, r)
    # standard error of a sample correlation, (1 - r^2) / sqrt(n) for normal pairs (Fisher,
    # 1915, from memory of the large-sample formula); 6 times it covers the heavier-tailed
    # marginals' larger error
    assert got == pytest.approx(r, abs=6.0 * (1.0 - r * r) / math.sqrt(N) + 2e-4)


def test_written_r_on_normal_scores_would_miss_it():
    # The defect this guards against: r = 0.8 applied to the normal scores of two arcsine
    # inputs gives Pearson 0.764 (measured in review), a 4.5 % error.
    a = MARGINALS["arcsine"]
    x = InputSampler([a, a], 5, "random", np.array([[1.0, 0.8], [0.8, 1.0]]),
                     block_size=N).draw(0, [N])
    assert float(np.corrcoef(x[:, 0], x[:, 1])[0, 1]) == pytest.approx(0.764, abs=0.004)
    assert _realised(a, a, 0.8)[0] == pytest.approx(0.8, abs=0.003)


def test_rectangular_pair_closed_form():
    # Pearson = Spearman for uniform marginals, (6 / pi) arcsin(rho / 2) under a Gaussian
    # copula, so rho = 2 sin(pi r / 6)
    u = MARGINALS["rectangular"]
    rho = normal_score_correlation(np.array([[1.0, 0.8], [0.8, 1.0]]), [u, u])[0, 1]
    assert rho == pytest.approx(2.0 * math.sin(math.pi * 0.8 / 6.0), rel=1e-15)
    # the quadrature used for every other pair of families gives the same r at that rho
    from scipy import special

    from simunc.uncertainty.sampling import _GH_NODES, _copula_pearson, inverse_cdf
    g = inverse_cdf(u, special.ndtr(_GH_NODES))
    assert _copula_pearson(g, u, rho) == pytest.approx(0.8, abs=1e-12)


def test_difference_of_correlated_rectangular_inputs_matches_the_lpu():
    # u^2(a - b) = u_a^2 + u_b^2 - 2 r u_a u_b (JCGM 100:2008 eq. 13), u = 1 / sqrt 3
    r = 0.8
    _, x = _realised(MARGINALS["rectangular"], MARGINALS["rectangular"], r)
    u2 = 1.0 / 3.0
    expected = math.sqrt(2.0 * u2 - 2.0 * r * u2)
    got = float(np.std(x[:, 0] - x[:, 1], ddof=1))
    # relative standard error of a sample standard deviation ~ 1 / sqrt(2 n)
    assert got == pytest.approx(expected, rel=6.0 / math.sqrt(2 * N))


def test_unreachable_r_is_refused():
    # Two lognormals of shape sigma: the most negative Pearson r (comonotone opposite scores)
    # is (exp(-sigma^2) - 1) / (exp(sigma^2) - 1) (lognormal moments: E[e^{sZ} e^{-sZ}] = 1)
    s = math.sqrt(math.log(2.0))                       # relative u = 100 %
    a = stats.lognorm(s, loc=-1.0, scale=math.exp(-0.5 * s * s))
    bound = (math.exp(-s * s) - 1.0) / (math.exp(s * s) - 1.0)
    assert bound == pytest.approx(-0.5)
    with pytest.raises(ValueError, match="out of reach"):
        normal_score_correlation(np.array([[1.0, -0.8], [-0.8, 1.0]]), [a, a])
    rho = normal_score_correlation(np.array([[1.0, -0.45], [-0.45, 1.0]]), [a, a])
    assert Correlation(("a", "b"), rho).definite


def test_a_study_with_an_unreachable_r_is_bad_input(demo_dict):
    import simunc
    from simunc.errors import StudyError
    from simunc.study.readers import parse_study

    data = dict(demo_dict)
    data["uncertain"] = [dict(u) for u in data["uncertain"]] + [
        {"name": "density A", "perturbs": "density_model", "distribution": "lognormal",
         "standard_uncertainty": "100 %"},
        {"name": "density B", "perturbs": "density_model", "distribution": "lognormal",
         "standard_uncertainty": "100 %"}]
    data["correlations"] = {"pairs": [["density A", "density B", -0.8]]}
    with pytest.raises(StudyError) as exc:
        simunc.prepare(parse_study(data))
    assert exc.value.key == "correlations" and "out of reach" in str(exc.value)
